"""Server-rendered pages, one module per page family."""

"""Web layer: HTML pages, the JSON API, chart builders and security middleware."""

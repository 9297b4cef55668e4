"""The JSON API under /api: twins of the pages, uploads, jobs, accounts and settings."""

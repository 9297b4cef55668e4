"""Uploads: parse, validate every row (a dry run), then commit all or nothing."""

"""Pydantic schemas of the JSON API (stored units in every name)."""

"""Rerunnable performance scripts (see README.md)."""

"""Read models of the portfolio and of a field's data pages (plain dataclasses)."""

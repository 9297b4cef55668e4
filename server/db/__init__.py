"""Database layer: SQLAlchemy models and session handling."""

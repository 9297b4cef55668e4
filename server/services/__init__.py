"""Services: the only layer that turns database rows into engine arrays and back."""

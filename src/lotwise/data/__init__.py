"""lotwise.data."""

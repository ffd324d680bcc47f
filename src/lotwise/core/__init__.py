"""lotwise.core."""

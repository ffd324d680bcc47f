"""lotwise.validation."""

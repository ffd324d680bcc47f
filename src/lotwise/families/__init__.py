"""lotwise.families."""

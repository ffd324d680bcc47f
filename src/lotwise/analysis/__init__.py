"""lotwise.analysis."""

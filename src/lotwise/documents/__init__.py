"""lotwise.documents."""

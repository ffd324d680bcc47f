"""lotwise.documents.plots."""

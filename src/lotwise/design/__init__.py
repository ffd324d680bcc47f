"""Plan designers, one module per plan family."""

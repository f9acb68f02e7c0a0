"""The fluid library pages: list, view, create, edit and delete fluids (compositions, EOS, kij choice)."""

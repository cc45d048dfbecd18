"""simsurface."""

"""parse stage."""

"""generate stage."""

"""constrain stage."""

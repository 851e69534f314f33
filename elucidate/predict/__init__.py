"""predict stage."""

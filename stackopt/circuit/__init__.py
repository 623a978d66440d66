"""circuit."""

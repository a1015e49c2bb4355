"""Figures drawn from result objects (matplotlib); physics modules return data, these draw it."""

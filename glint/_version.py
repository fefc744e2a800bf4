"""The version of glint, in one place (layer 0: imports nothing of glint)."""

__version__ = "0.1.0"

"""The package version (one place, read by the packaging metadata too)."""

__version__ = "0.1.0"

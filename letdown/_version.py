"""The package version (one place, importable from every layer)."""
__version__ = "0.1.0"

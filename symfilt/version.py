"""The package version, kept apart so that every layer can read it without importing the top package."""

__version__ = "0.1.0"

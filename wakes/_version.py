"""The package version, in one place (read by the package and by every run summary)."""

__version__ = "0.1.0"

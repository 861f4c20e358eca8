"""The package version, read in one place (by the package and by every run summary)."""

from importlib import metadata as _metadata

try:   # the installed distribution's version, written once in pyproject.toml
    __version__ = _metadata.version("wakes")
except _metadata.PackageNotFoundError:   # a source tree on sys.path, not installed
    __version__ = "0+unknown"

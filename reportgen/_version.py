"""The installed reportgen's version (``0.0.0+source`` when run from a source tree)."""

from importlib import metadata as _metadata

try:
    __version__ = _metadata.version("reportgen")
except _metadata.PackageNotFoundError:  # running from a source tree
    __version__ = "0.0.0+source"

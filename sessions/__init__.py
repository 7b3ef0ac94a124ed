"""floatlift core package: GPX surf tracks to per-wave records and board load physics.

Layers (bottom to top): units and physics functions, thin data classes, the
analysis pipeline (read -> condition -> label -> rides -> onset -> metrics), the
session library (store) and the command line. This package never imports streamlit.
"""

from importlib.metadata import PackageNotFoundError, version as _version

try:
    __version__ = _version("floatlift")
except PackageNotFoundError:  # running from a source tree without installation
    __version__ = "0.0.0+source"

__all__ = ["__version__"]

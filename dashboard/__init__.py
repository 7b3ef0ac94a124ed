"""The floatlift dashboard: a Streamlit app over the session library.

``dashboard/app.py`` is the Streamlit entry (pages in :mod:`dashboard.views`);
:mod:`dashboard.data` holds the cached loading, :mod:`dashboard.units` the display
units, :mod:`dashboard.figures` the matplotlib figures. This package module stays light:
the command line imports :func:`serve` and :func:`serve_demo` from it without loading
streamlit.
"""

from __future__ import annotations


def serve(url: str | None = None, *, host: str = "127.0.0.1", port: int | None = None) -> int:
    """Run the dashboard until Ctrl-C (see :func:`dashboard.server.serve`)."""
    from dashboard.server import serve as _serve

    return _serve(url, host=host, port=port)


def serve_demo(url: str) -> int:
    """Show the freshly built demo library (called by ``floatlift demo``)."""
    return serve(url)

"""One module per ``floatlift`` sub-command; see :mod:`sessions.cli`."""

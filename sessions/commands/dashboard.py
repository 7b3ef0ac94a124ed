"""``floatlift dashboard``: start the Streamlit dashboard over a session library.

The server runs as a child process bound to one address (127.0.0.1 by default), prints
its address and serves until Ctrl-C. The library URL is passed to the app in
``$FLOATLIFT_DB``.
"""

from __future__ import annotations

import argparse


def _port(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a port number: {text!r}") from None
    if not 1 <= value <= 65535:
        raise argparse.ArgumentTypeError(f"port {value} is outside 1-65535")
    return value


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "dashboard", help="show the session library in a web dashboard",
        description="Start the dashboard (a local web page) over the session library: session review, "
        "adding tracks, boards and load figures, board comparison and test-ride feedback. It listens "
        "on 127.0.0.1 only unless --host says otherwise, prints its address and runs until Ctrl-C.")
    p.add_argument("--db", metavar="URL", default=None,
                   help="library database URL (default: $FLOATLIFT_DB or the library file in your data folder)")
    p.add_argument("--host", metavar="ADDRESS", default="127.0.0.1",
                   help="IP address to listen on (default 127.0.0.1: this machine only)")
    p.add_argument("--port", metavar="N", type=_port, default=None,
                   help="TCP port (default 8520, or a free one when 8520 is taken)")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from dashboard import serve

    return serve(args.db, host=args.host, port=args.port)

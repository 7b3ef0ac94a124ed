"""The ``floatlift`` command line: a thin shell that parses, calls the package, formats.

Each sub-command lives in its own module under :mod:`sessions.commands` and exposes
``register(subparsers)``, which adds its parser and sets ``func`` (a callable taking the
parsed ``argparse.Namespace`` and returning an exit status). Heavy imports belong
inside ``func`` so that ``floatlift --help`` stays quick.

Exit status: 0 success, 2 bad input or usage (one-line reason on stderr),
1 internal error, 130 interrupted.
"""

from __future__ import annotations

import argparse
import importlib
import logging
import os
import sys
import traceback
import warnings

from sessions import __version__
from sessions.errors import FloatliftError

#: Sub-command modules, in the order ``--help`` lists them.
COMMAND_MODULES: tuple[str, ...] = (
    "sessions.commands.inspect",
    "sessions.commands.analyse",
    "sessions.commands.simulate",
    "sessions.commands.load",
    "sessions.commands.library",
    "sessions.commands.compare",
    "sessions.commands.dashboard",
)

EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_BAD_INPUT = 2


class _Parser(argparse.ArgumentParser):
    """ArgumentParser whose usage errors are one line plus a hint, exit status 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.exit(EXIT_BAD_INPUT, f"{self.prog}: error: {message}\n(see '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="floatlift",
        description="Per-wave records from GPX surf tracks: paddling, waiting, riding, "
        "planing onset and what the board's size and load have to do with it.",
    )
    parser.add_argument("--version", action="version", version=f"floatlift {__version__}")
    parser.add_argument("-v", "--verbose", action="store_true", help="log progress details to stderr")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMAND_MODULES:
        try:
            module = importlib.import_module(name)
        except ModuleNotFoundError as exc:
            if exc.name == name:  # command not built yet in this checkout
                continue
            raise
        module.register(sub)
    return parser


def _show_warning(message, category, filename, lineno, file=None, line=None):  # noqa: ARG001
    print(f"floatlift: warning: {message}", file=sys.stderr)


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    logging.basicConfig(
        level=logging.INFO if args.verbose else logging.WARNING,
        format="floatlift: %(levelname)s: %(message)s",
    )
    if not args.verbose:
        # the database driver logs its own notes when a server goes away mid-command; the
        # user gets our one-line error instead (with -v they are shown)
        logging.getLogger("psycopg").setLevel(logging.ERROR)
    warnings.showwarning = _show_warning
    func = getattr(args, "func", None)
    if func is None:
        parser.print_help()
        return EXIT_BAD_INPUT
    try:
        status = func(args)
    except FloatliftError as exc:
        print(f"floatlift: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("floatlift: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return EXIT_OK
    except Exception as exc:  # noqa: BLE001 - last line of defence: no raw traceback
        if os.environ.get("FLOATLIFT_DEBUG"):
            traceback.print_exc()
        print(
            f"floatlift: internal error: {type(exc).__name__}: {exc} "
            "(set FLOATLIFT_DEBUG=1 for details; please report it)",
            file=sys.stderr,
        )
        return EXIT_INTERNAL
    return EXIT_OK if status is None else int(status)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

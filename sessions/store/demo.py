"""The demo library: the invented sample scenario (``sample_tracks/``) imported into a fresh library.

:func:`build_demo_library` is the hook the ``floatlift demo`` command (and the dashboard)
call. By default the demo lives in its own SQLite file in the user's data folder
(``demo.sqlite``), which is replaced on every build; a database given explicitly must be
empty (the demo never deletes someone's sessions).
"""

from __future__ import annotations

import os
import time
from pathlib import Path

from sessions.errors import StoreError
from sessions.store import db

PROJECT_ROOT = Path(__file__).resolve().parent.parent.parent
SAMPLE_TRACKS_DIR = PROJECT_ROOT / "sample_tracks"
DEMO_MANIFEST = SAMPLE_TRACKS_DIR / "manifest.toml"
CAUTION = ("Demo data from an invented beach, riders and boards; every figure is an estimate. "
           "Surf within your ability and follow local rules and lifeguards.")


def _remove_sqlite_file(path: Path) -> None:
    for p in (path, *(path.with_name(path.name + s) for s in ("-wal", "-shm", "-journal", ".migrate-lock"))):
        try:
            p.unlink()
        except FileNotFoundError:
            pass
        except OSError as exc:
            raise StoreError(f"cannot replace the old demo library {p.name}: {exc.strerror}") from exc


def build_demo_library(url: str | None = None, *, manifest: str | os.PathLike | None = None,
                       workers: int | None = None) -> dict:
    """Build a fresh demo library and return a summary (JSON-ready).

    Parameters
    ----------
    url : str, optional
        Database URL. Default: ``demo.sqlite`` in the user's data folder, replaced.
        Another URL must point at an empty library.
    manifest : path, optional
        Manifest to import (default: the shipped ``sample_tracks/manifest.toml``).
    workers : int, optional
        Worker processes for the analysis (default: the number of cores).

    Returns
    -------
    dict
        ``url`` (password masked), ``manifest``, ``seconds``, counts of ``riders``,
        ``boards``, ``sessions`` and ``rides``, ``imported``, ``already_present``,
        ``refused``, ``example`` (the detail of one session) and ``caution``.
    """
    from sessions.store.importer import import_manifest
    from sessions.store.library import Library

    t0 = time.perf_counter()
    manifest = Path(manifest) if manifest is not None else _scenario_manifest()
    if not manifest.is_file():
        raise StoreError(f"the demo scenario is missing ({manifest} not found)")
    if url is None:
        url = db.demo_url()
        _remove_sqlite_file(db.sqlite_path(url))
    with Library.open(url) as lib:
        if lib.counts()["sessions"] or lib.counts()["riders"] or lib.counts()["boards"]:
            raise StoreError(f"{lib.url} is not empty; the demo is built only into an empty library "
                             "(or, without --db, into its own file)")
        summary = import_manifest(lib, manifest, workers=workers)
        counts = lib.counts()
        example_id = _example_session(lib)
        example = lib.session(example_id) if example_id is not None else None
        masked = lib.url
    out = {"url": masked, "manifest": manifest.name, "seconds": round(time.perf_counter() - t0, 2), **counts}
    out.update(summary.to_json())
    out["example"] = example
    out["caution"] = CAUTION
    return out


def _scenario_manifest() -> Path:
    """The sample scenario's manifest: the shipped ``sample_tracks/``, else a fresh copy.

    An installed package (a wheel) carries the code but not the top-level
    ``sample_tracks/`` folder. The scenario is deterministic, so it is then written
    (about four seconds, byte for byte the shipped files) into ``sample_tracks`` in the
    user's data folder, replacing an older copy that an earlier version may have made.
    """
    if DEMO_MANIFEST.is_file():
        return DEMO_MANIFEST
    import shutil

    from sessions.demo_scenario import build

    folder = db.data_dir() / "sample_tracks"
    partial = folder.with_name("sample_tracks.partial")
    try:
        shutil.rmtree(partial, ignore_errors=True)
        build(partial, quiet=True)
        shutil.rmtree(folder, ignore_errors=True)
        partial.rename(folder)
    except OSError as exc:
        raise StoreError(f"cannot write the demo scenario into {folder}: {exc.strerror or exc}") from exc
    return folder / "manifest.toml"


def _example_session(lib) -> int | None:
    """The session with the most rides that has feedback (ties: the earliest)."""
    frame = lib.sessions_frame()
    if frame.empty:
        return None
    ranked = frame.assign(has_fb=frame["score_paddling"].notna()).sort_values(
        ["has_fb", "rides", "start"], ascending=[False, False, True], kind="stable")
    return int(ranked["session_id"].iloc[0])


def describe_demo(summary: dict) -> str:
    """Text report of :func:`build_demo_library`'s summary."""
    from sessions.commands.library import format_session

    lines = [f"demo library: {summary['url']}",
             f"  built in {summary['seconds']:.1f} s from {summary['manifest']}: {summary['riders']} riders, "
             f"{summary['boards']} boards, {summary['sessions']} sessions, {summary['rides']} rides"]
    if summary["refused"]:
        lines.append(f"  {len(summary['refused'])} track(s) refused:")
        lines += [f"    {r['file']}: {r['reason']}" for r in summary["refused"]]
    lines.append("")
    if summary["example"]:
        lines.append("one of the sessions:")
        lines.append(format_session(summary["example"]).rstrip())
        lines.append("")
    lines.append(f"try: floatlift list --db {summary['url']}")
    lines.append(summary["caution"])
    return "\n".join(lines) + "\n"

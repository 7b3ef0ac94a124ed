"""Import GPX tracks into the library: files, folders and zip archives, analysed in parallel.

Pipeline: :func:`collect_sources` turns the paths given by the user into track sources
(refusing unsafe or unreadable ones with a reason); :func:`run_import` hashes each source
(SHA-256 of the file's bytes), skips those already stored, analyses the rest in worker
processes (:class:`concurrent.futures.ProcessPoolExecutor`) and stores each result in
its own transaction as soon as it arrives, so an interrupted import keeps every session
finished so far and a re-run completes it. :func:`reanalyse` re-runs the analysis of
stored sessions from their stored tracks.

Zip archives are read member by member in memory and never extracted. Members whose
names climb out of the archive (``..``, absolute paths), symbolic links, encrypted or
nested archives and members larger than :data:`MAX_TRACK_BYTES` are refused.
"""

from __future__ import annotations

import hashlib
import logging
import os
import stat
import zipfile
from collections.abc import Callable, Iterable, Mapping
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath
from typing import Any

from sessions.errors import FloatliftError, NotFoundError, StoreError, TrackReadError

log = logging.getLogger(__name__)

#: Largest track file (or zip member, uncompressed) that is read [bytes].
MAX_TRACK_BYTES = 64 * 1024 * 1024
#: Largest zip archive that is opened [bytes].
MAX_ARCHIVE_BYTES = 2 * 1024 * 1024 * 1024
TRACK_SUFFIXES = (".gpx", ".gpx.gz")
ARCHIVE_SUFFIXES = (".zip",)

Progress = Callable[[int], None]


# --- sources -------------------------------------------------------------------------------
@dataclass(frozen=True)
class Source:
    """One track to import: a file, or a member of a zip archive (read in memory)."""

    path: str  # the file, or the zip archive holding the member
    member: str | None = None  # name inside the archive

    @property
    def label(self) -> str:
        """How the source is named in messages and stored as the session's file name."""
        return f"{self.path}:{self.member}" if self.member else self.path

    @property
    def name(self) -> str:
        """File name without folders (the GPX reader's ``source``)."""
        return PurePosixPath(self.member).name if self.member else Path(self.path).name

    def read(self, max_bytes: int = MAX_TRACK_BYTES) -> bytes:
        """The source's bytes (at most *max_bytes*, else :class:`TrackReadError`)."""
        try:
            if self.member is None:
                size = os.path.getsize(self.path)
                if size > max_bytes:
                    raise TrackReadError(f"file of {size} bytes is larger than the limit of {max_bytes} bytes")
                with open(self.path, "rb") as fh:
                    data = fh.read(max_bytes + 1)
            else:
                with zipfile.ZipFile(self.path) as zf, zf.open(self.member) as fh:
                    data = fh.read(max_bytes + 1)
        except TrackReadError:
            raise
        except (OSError, zipfile.BadZipFile, RuntimeError, EOFError) as exc:
            raise TrackReadError(f"cannot read: {_os_reason(exc)}") from exc
        if len(data) > max_bytes:
            raise TrackReadError(f"larger than the limit of {max_bytes} bytes")
        return data


@dataclass(frozen=True)
class Refusal:
    file: str
    reason: str

    def to_json(self) -> dict:
        return {"file": self.file, "reason": self.reason}


def _is_track_name(name: str) -> bool:
    low = name.lower()
    return low.endswith(TRACK_SUFFIXES)


def _is_archive_name(name: str) -> bool:
    return name.lower().endswith(ARCHIVE_SUFFIXES)


def _os_reason(exc: BaseException) -> str:
    if isinstance(exc, OSError) and exc.strerror:
        return exc.strerror
    return str(exc) or type(exc).__name__


def unsafe_member_reason(info: zipfile.ZipInfo, max_bytes: int = MAX_TRACK_BYTES) -> str | None:
    """Why a zip member must not be read (None: it is safe to read in memory)."""
    name = info.filename
    parts = PurePosixPath(name.replace("\\", "/")).parts
    if name.startswith(("/", "\\")) or (len(name) > 1 and name[1] == ":"):
        return "absolute path inside the archive"
    if ".." in parts:
        return "name climbs out of the archive ('..')"
    mode = info.external_attr >> 16
    if mode and stat.S_ISLNK(mode):
        return "symbolic link inside the archive"
    if info.flag_bits & 0x1:
        return "encrypted archive member"
    if _is_archive_name(name):
        return "archive inside an archive is not read"
    if info.file_size > max_bytes:
        return f"member of {info.file_size} bytes is larger than the limit of {max_bytes} bytes"
    return None


def _archive_sources(path: Path, max_bytes: int) -> tuple[list[Source], list[Refusal]]:
    sources: list[Source] = []
    refused: list[Refusal] = []
    try:
        if path.stat().st_size > MAX_ARCHIVE_BYTES:
            return [], [Refusal(str(path), f"archive larger than {MAX_ARCHIVE_BYTES} bytes")]
        with zipfile.ZipFile(path) as zf:
            infos = zf.infolist()
    except (OSError, zipfile.BadZipFile) as exc:
        return [], [Refusal(str(path), f"not a readable zip archive: {_os_reason(exc)}")]
    seen: set[str] = set()
    for info in infos:
        if info.is_dir():
            continue
        label = f"{path}:{info.filename}"
        reason = unsafe_member_reason(info, max_bytes)
        if reason is None and not _is_track_name(info.filename):
            continue  # other files (notes, pictures) are not tracks
        if reason is None and info.filename in seen:
            reason = "duplicate member name in the archive"
        if reason is not None:
            refused.append(Refusal(label, reason))
            continue
        seen.add(info.filename)
        sources.append(Source(str(path), info.filename))
    return sources, refused


def collect_sources(paths: Iterable[str | os.PathLike], *, max_bytes: int = MAX_TRACK_BYTES
                    ) -> tuple[list[Source], list[Refusal]]:
    """Expand files, folders (recursively, in name order) and zip archives into sources.

    Folders contribute their ``.gpx``, ``.gpx.gz`` and ``.zip`` files; other files are
    ignored. A path given explicitly that is none of these is refused with a reason.
    """
    sources: list[Source] = []
    refused: list[Refusal] = []
    for raw in paths:
        path = Path(raw)
        if path.is_dir():
            for sub in sorted(p for p in path.rglob("*") if p.is_file()):
                if _is_track_name(sub.name):
                    sources.append(Source(str(sub)))
                elif _is_archive_name(sub.name):
                    s, r = _archive_sources(sub, max_bytes)
                    sources += s
                    refused += r
        elif path.is_file():
            if _is_archive_name(path.name):
                s, r = _archive_sources(path, max_bytes)
                sources += s
                refused += r
            elif _is_track_name(path.name):
                sources.append(Source(str(path)))
            else:
                refused.append(Refusal(str(path), "not a .gpx, .gpx.gz or .zip file"))
        elif path.exists():
            refused.append(Refusal(str(path), "not a regular file or folder"))
        else:
            refused.append(Refusal(str(path), "no such file or folder"))
    return sources, refused


# --- analysis in worker processes -------------------------------------------------------------
def analyse_track_bytes(raw: bytes, name: str) -> tuple[dict, str]:
    """Read and analyse one track file's bytes; returns ``(analysis JSON, ANALYSIS_VERSION)``."""
    from sessions.analysis import ANALYSIS_VERSION, analyse
    from sessions.gpx import read_gpx

    doc = analyse(read_gpx(raw)).to_json()
    doc["source"]["file"] = name
    return doc, ANALYSIS_VERSION


@dataclass
class _Outcome:
    key: Any
    ok: bool
    track: Any = None  # sessions.store.library.EncodedTrack (compressed in the worker)
    analysis: dict | None = None
    version: str = ""
    reason: str = ""
    worker_pid: int = field(default_factory=os.getpid)  # the process that did the work


def _analyse_source(key: Any, source: Source | None, raw: bytes | None, name: str) -> _Outcome:
    """Worker: read (if needed), analyse and compress one track; never raises.

    The writer process gets back the analysis and the compressed file (about a sixth of
    the bytes), so compression and hashing run in parallel and little is pickled.
    """
    from sessions.store.library import EncodedTrack

    try:
        if raw is None:
            raw = source.read()
        analysis, version = analyse_track_bytes(raw, name)
        return _Outcome(key, True, EncodedTrack.from_bytes(raw), analysis, version)
    except FloatliftError as exc:
        return _Outcome(key, False, reason=str(exc))
    except MemoryError:
        return _Outcome(key, False, reason="not enough memory to analyse this track")
    except Exception as exc:  # noqa: BLE001 - one bad file must not stop the import
        return _Outcome(key, False, reason=f"internal error while analysing: {type(exc).__name__}: {exc}")


def default_workers() -> int:
    """Worker processes by default: the cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not Linux
        return max(1, os.cpu_count() or 1)


def _run_parallel(tasks: Iterable[tuple], workers: int, on_result: Callable[[_Outcome], None],
                  n_tasks: int | None = None) -> None:
    """Run :func:`_analyse_source` over *tasks*, calling *on_result* in this process as each ends.

    *tasks* is consumed lazily (at most two per worker in flight), so a long re-analysis
    never holds every track in memory.
    """
    tasks = iter(tasks)
    if workers <= 1 or (n_tasks is not None and n_tasks <= 1):
        for task in tasks:
            on_result(_analyse_source(*task))
        return
    if n_tasks is not None:
        workers = min(workers, n_tasks)
    with ProcessPoolExecutor(max_workers=workers) as pool:
        pending: set[Future] = set()
        exhausted = False
        try:
            while not exhausted or pending:
                while not exhausted and len(pending) < 2 * workers:
                    task = next(tasks, None)
                    if task is None:
                        exhausted = True
                    else:
                        pending.add(pool.submit(_analyse_source, *task))
                if not pending:
                    break
                done, pending = wait(pending, return_when=FIRST_COMPLETED)
                for fut in done:
                    on_result(fut.result())
        except BaseException:
            for fut in pending:
                fut.cancel()
            pool.shutdown(wait=False, cancel_futures=True)
            raise


# --- import ----------------------------------------------------------------------------------
@dataclass
class Assignment:
    """Who rode what, in which conditions: applied to the sessions an import creates."""

    rider: str | None = None
    board: str | None = None
    conditions: Mapping[str, Any] = field(default_factory=dict)
    feedback: Mapping[str, Any] = field(default_factory=dict)


@dataclass
class ImportSummary:
    """What an import did. ``to_json()`` gives the ``--json`` document of ``floatlift import``."""

    imported: list[int] = field(default_factory=list)
    already_present: list[int] = field(default_factory=list)
    refused: list[Refusal] = field(default_factory=list)

    def to_json(self) -> dict:
        return {"imported": list(self.imported), "already_present": list(self.already_present),
                "refused": [r.to_json() for r in self.refused]}

    def describe(self) -> str:
        lines = [f"imported {len(self.imported)}, already present {len(self.already_present)}, "
                 f"refused {len(self.refused)}"]
        lines += [f"  refused {r.file}: {r.reason}" for r in self.refused]
        return "\n".join(lines)


def run_import(
    library,
    items: list[tuple[Source, Assignment]],
    *,
    workers: int | None = None,
    progress: Progress | None = None,
    refused: list[Refusal] | None = None,
) -> ImportSummary:
    """Import *items* (source + assignment) into *library*; see the module docstring.

    Riders and boards named in the assignments must exist (checked before any work).
    """
    summary = ImportSummary(refused=list(refused or []))
    _check_assignments(library, [a for _, a in items])
    step = progress or (lambda n: None)
    known = library.known_sha256()
    first_of: dict[str, int] = {}  # sha -> index of the item that will be analysed
    results: dict[int, tuple[str, int | None]] = {}  # item index -> (kind, id)
    tasks = []
    for i, (source, _) in enumerate(items):
        try:
            raw = source.read()
        except TrackReadError as exc:
            results[i] = ("refused", None)
            summary.refused.append(Refusal(source.label, str(exc)))
            step(1)
            continue
        sha = hashlib.sha256(raw).hexdigest()
        if sha in known:
            results[i] = ("present", known[sha])
            step(1)
        elif sha in first_of:
            results[i] = ("same-as", first_of[sha])
            step(1)
        else:
            first_of[sha] = i
            tasks.append((i, source, None, source.name))
        del raw

    def on_result(out: _Outcome) -> None:
        source, assignment = items[out.key]
        if not out.ok:
            results[out.key] = ("refused", None)
            summary.refused.append(Refusal(source.label, out.reason))
        else:
            try:
                sid, created = library.store_session(
                    out.analysis, out.track, analysis_version=out.version, source_file=source.label,
                    rider=assignment.rider, board=assignment.board,
                    conditions=assignment.conditions, feedback=assignment.feedback)
            except StoreError:
                raise  # the library cannot be written (disk full, server gone): stop, keep what is stored
            except FloatliftError as exc:
                results[out.key] = ("refused", None)
                summary.refused.append(Refusal(source.label, str(exc)))
            else:
                results[out.key] = ("imported" if created else "present", sid)
        step(1)

    _run_parallel(tasks, workers or default_workers(), on_result, len(tasks))

    for i in range(len(items)):
        kind, sid = results[i]
        if kind == "same-as":
            kind, sid = results[sid]
            kind = "present" if kind != "refused" else "refused-dup"
        if kind == "imported":
            summary.imported.append(sid)
        elif kind == "present" and sid not in summary.already_present:
            summary.already_present.append(sid)
        elif kind == "refused-dup":
            summary.refused.append(Refusal(items[i][0].label, "same content as a refused file"))
    return summary


def _check_assignments(library, assignments: list[Assignment]) -> None:
    riders = {r["name"] for r in library.riders()}
    boards = {b["name"] for b in library.boards()}
    for a in assignments:
        if a.rider and a.rider not in riders:
            raise NotFoundError(f"no rider named {a.rider!r} in the library (add one with 'floatlift rider add')")
        if a.board and a.board not in boards:
            raise NotFoundError(f"no board named {a.board!r} in the library (add one with 'floatlift board add')")


def import_paths(library, paths: Iterable[str | os.PathLike], assignment: Assignment | None = None, *,
                 workers: int | None = None, progress: Progress | None = None,
                 on_total: Callable[[int], None] | None = None) -> ImportSummary:
    """Import files, folders and zip archives with one assignment for all of them."""
    sources, refused = collect_sources(paths)
    if on_total:
        on_total(len(sources))
    assignment = assignment or Assignment()
    return run_import(library, [(s, assignment) for s in sources], workers=workers, progress=progress,
                      refused=refused)


# --- re-analysis --------------------------------------------------------------------------------
@dataclass
class ReanalyseSummary:
    reanalysed: list[int] = field(default_factory=list)
    failed: list[dict] = field(default_factory=list)
    up_to_date: int = 0

    def to_json(self) -> dict:
        return {"reanalysed": list(self.reanalysed), "failed": list(self.failed), "up_to_date": self.up_to_date}


def reanalyse(library, *, everything: bool = False, session_ids: Iterable[int] | None = None,
              workers: int | None = None, progress: Progress | None = None,
              on_total: Callable[[int], None] | None = None) -> ReanalyseSummary:
    """Re-run the analysis of stored sessions from their stored tracks.

    By default only sessions analysed by another version than the installed
    ``sessions.analysis.ANALYSIS_VERSION``; *everything* or explicit *session_ids* choose
    others. Each session is updated in its own transaction.
    """
    from sessions.analysis import ANALYSIS_VERSION

    all_ids = library.stale_sessions(None)
    if session_ids is not None:
        ids = [int(i) for i in session_ids]
        missing = sorted(set(ids) - set(all_ids))
        if missing:
            raise NotFoundError(f"no session {', '.join(map(str, missing))} in the library")
    elif everything:
        ids = all_ids
    else:
        ids = library.stale_sessions(ANALYSIS_VERSION)
    summary = ReanalyseSummary(up_to_date=len(all_ids) - len(ids) if session_ids is None else 0)
    if on_total:
        on_total(len(ids))
    step = progress or (lambda n: None)

    def tasks():
        for sid in ids:
            name, raw = library.track_bytes(sid)
            yield (sid, None, raw, PurePosixPath(name.replace("\\", "/")).name)

    def on_result(out: _Outcome) -> None:
        if out.ok:
            library.replace_analysis(out.key, out.analysis, analysis_version=out.version)
            summary.reanalysed.append(out.key)
        else:
            summary.failed.append({"id": out.key, "reason": out.reason})
        step(1)

    _run_parallel(tasks(), workers or default_workers(), on_result, len(ids))
    summary.reanalysed.sort()
    return summary


# --- manifests -------------------------------------------------------------------------------------
_TIDE_PHASE_WORDS = {"low": "low", "rising": "rising", "flooding": "rising", "high": "high",
                     "falling": "falling", "dropping": "falling", "ebbing": "falling"}


def manifest_conditions(c) -> dict:
    """Library conditions from a manifest's conditions entry (words kept in ``note``)."""
    import re

    out: dict[str, Any] = {}
    if c.wave_face_m is not None:
        out["wave_face_m"] = c.wave_face_m
    if c.wave_period_s is not None:
        out["period_s"] = c.wave_period_s
    if c.water is not None:
        out["water_preset"] = c.water
    if c.water_temp_c is not None:
        out["water_temp_c"] = c.water_temp_c
    if c.salinity_g_kg is not None:
        out["salinity_g_kg"] = c.salinity_g_kg
    words = []
    if c.wind:
        words.append(f"wind {c.wind}")
    if c.tide:
        words.append(f"tide {c.tide}")
        for token in re.findall(r"[a-z]+", c.tide.lower()):
            if token in _TIDE_PHASE_WORDS:
                out["tide_phase"] = _TIDE_PHASE_WORDS[token]
                break
    if words:
        out["note"] = "; ".join(words)
    return out


def import_manifest(library, manifest_path: str | os.PathLike, *, workers: int | None = None,
                    progress: Progress | None = None, on_total: Callable[[int], None] | None = None
                    ) -> ImportSummary:
    """Import the sessions of a manifest (``sessions.manifest`` format).

    Riders and boards of the manifest that the library lacks are added first (existing
    ones, matched by name, are left as they are); each session gets its rider, board,
    conditions and feedback. Track files missing on disk are refused with a reason.
    """
    from sessions.manifest import read_manifest

    manifest = read_manifest(manifest_path)
    boards = manifest.board_objects()
    have_riders = {r["name"] for r in library.riders()}
    for entry in manifest.riders.values():
        if entry.name not in have_riders:
            library.add_rider(entry.name, body_mass_kg=entry.body_mass_kg, gear_mass_kg=entry.gear_mass_kg,
                              stance=entry.stance, ability=entry.ability, note=entry.note)
    have_boards = {b["name"] for b in library.boards()}
    for bid, board in boards.items():
        if board.name not in have_boards:
            library.add_board_spec(board, note=manifest.boards[bid].note)
    items = []
    refused = []
    for s in manifest.sessions:
        if not s.file.is_file():
            refused.append(Refusal(str(s.file), f"track of manifest session {s.id!r} not found"))
            continue
        fb = {}
        if s.feedback is not None:
            fb = {k: getattr(s.feedback, k) for k in ("paddling", "catching", "speed", "control", "note")
                  if getattr(s.feedback, k) is not None}
        items.append((Source(str(s.file)), Assignment(
            rider=manifest.riders[s.rider].name, board=manifest.boards[s.board].name,
            conditions=manifest_conditions(s.conditions), feedback=fb)))
    if on_total:
        on_total(len(items))
    return run_import(library, items, workers=workers, progress=progress, refused=refused)

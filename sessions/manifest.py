"""The manifest: a TOML file linking tracks to riders, boards, conditions and feedback.

A manifest names its riders, its boards (inline or in a separate board catalogue) and
its sessions; each session points at a track file (path relative to the manifest) and
says who rode which board in which conditions, optionally with a test rider's scores.
Board figures stay as the trade writes them (``5'10" x 19 1/4" x 2 7/16"``, ``28.6 L``);
:meth:`Manifest.board_objects` hands them to :mod:`sessions.boards` for parsing.

Layout (``docs/simulator.md`` has the full key list)::

    format = "floatlift.manifest/1"
    title = "..."
    board_catalogue = "boards.toml"      # optional, relative to the manifest

    [place]                              # optional
    name = "..."; lat = 44.13; lon = -1.31; seaward_bearing_deg = 277

    [riders.<id>]
    name = "..."; body_mass_kg = 72; gear_mass_kg = 3; stance = "goofy"; ability = "intermediate"

    [boards.<id>]                        # or in the catalogue, same keys
    name = "..."; dimensions = "6'0\\" x 19 1/2\\" x 2 1/2\\""; volume = "31.0 L"; mass_kg = 2.8
    outline = [[0.0, 0.0], [0.3048, 0.33], ...]   # stations: from nose [m], full width [m]

    [[sessions]]
    id = "..."; file = "tracks/x.gpx.gz"; rider = "<id>"; board = "<id>"
    conditions = { wave_face_m = 1.2, wave_period_s = 11, water = "sea", water_temp_c = 14.5 }
    feedback = { paddling = 4, catching = 3, speed = 4, control = 3, note = "..." }

Every problem raises :class:`sessions.errors.ManifestError` naming the file and the entry.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from sessions.errors import FloatliftError, ManifestError

MANIFEST_FORMAT = "floatlift.manifest/1"
CATALOGUE_FORMAT = "floatlift.boards/1"

STANCES = ("regular", "goofy")
#: Ability levels (the same names as :mod:`sessions.riders`).
ABILITIES = ("beginner", "improver", "intermediate", "advanced", "expert")
#: Water presets (the same names as :mod:`sessions.physics.water`).
WATER_PRESETS = ("sea", "fresh")
FEEDBACK_SCORES = ("paddling", "catching", "speed", "control")

_TOP_KEYS = {"format", "title", "note", "board_catalogue", "place", "riders", "boards", "sessions"}
_CATALOGUE_KEYS = {"format", "title", "note", "boards"}
_PLACE_KEYS = {"name", "lat", "lon", "seaward_bearing_deg", "note"}
_RIDER_KEYS = {"name", "body_mass_kg", "gear_mass_kg", "stance", "ability", "note"}
_BOARD_KEYS = {
    "name", "dimensions", "volume", "mass_kg", "construction", "fins", "model", "version",
    "shaper", "outline", "nose_width", "tail_width", "wide_point", "note",
}  # fmt: skip
_SESSION_KEYS = {"id", "file", "truth", "rider", "board", "series", "note", "conditions", "feedback"}
_CONDITION_KEYS = {"wave_face_m", "wave_period_s", "wind", "water", "water_temp_c", "salinity_g_kg", "tide"}
_FEEDBACK_KEYS = {*FEEDBACK_SCORES, "note"}


# ======================================================================================
# Records
# ======================================================================================
@dataclass(frozen=True)
class Place:
    name: str | None = None
    lat: float | None = None
    lon: float | None = None
    seaward_bearing_deg: float | None = None
    note: str | None = None


@dataclass(frozen=True)
class RiderEntry:
    id: str
    name: str
    body_mass_kg: float
    gear_mass_kg: float = 0.0
    stance: str | None = None
    ability: str | None = None
    note: str | None = None

    @property
    def total_mass_kg(self) -> float:
        return self.body_mass_kg + self.gear_mass_kg


@dataclass(frozen=True)
class BoardEntry:
    """A board as written: trade-notation strings plus numbers, unparsed."""

    id: str
    name: str
    dimensions: str | None = None
    volume: str | None = None
    mass_kg: float | None = None
    construction: str | None = None
    fins: str | None = None
    model: str | None = None
    version: str | None = None
    shaper: str | None = None
    outline_m: tuple[tuple[float, float], ...] | None = None  # (from nose, full width)
    nose_width: str | None = None
    tail_width: str | None = None
    wide_point: str | None = None
    note: str | None = None
    source: str = ""  # file the entry came from


@dataclass(frozen=True)
class Conditions:
    wave_face_m: float | None = None
    wave_period_s: float | None = None
    wind: str | None = None
    water: str | None = None
    water_temp_c: float | None = None
    salinity_g_kg: float | None = None
    tide: str | None = None


@dataclass(frozen=True)
class Feedback:
    """A test rider's scores, 1 (poor) to 5 (excellent), and a note."""

    paddling: int | None = None
    catching: int | None = None
    speed: int | None = None
    control: int | None = None
    note: str | None = None


@dataclass(frozen=True)
class SessionEntry:
    id: str
    file: Path  # resolved, absolute
    rider: str
    board: str
    truth: Path | None = None
    series: str | None = None
    note: str | None = None
    conditions: Conditions = field(default_factory=Conditions)
    feedback: Feedback | None = None


@dataclass(frozen=True)
class Manifest:
    path: Path
    title: str | None
    place: Place
    riders: dict[str, RiderEntry]
    boards: dict[str, BoardEntry]
    sessions: tuple[SessionEntry, ...]
    note: str | None = None

    def session(self, session_id: str) -> SessionEntry:
        for s in self.sessions:
            if s.id == session_id:
                return s
        raise ManifestError(f"{self.path.name}: no session with id {session_id!r}")

    def board_objects(self) -> dict:
        """Parsed boards (:class:`sessions.boards.Board`) by board id.

        Raises
        ------
        ManifestError
            When a board's figures cannot be understood (names the file and the board).
        """
        from sessions.boards import Board, Outline

        out = {}
        for bid, b in self.boards.items():
            where = f"{Path(b.source).name or self.path.name}: board {bid!r}"
            try:
                outline = None
                if b.outline_m is not None:
                    outline = Outline.from_stations(b.outline_m)
                board = Board.from_spec(
                    name=b.name,
                    dims=b.dimensions,
                    volume=b.volume,
                    mass_kg=b.mass_kg,
                    outline=outline,
                    construction=b.construction,
                    fins=b.fins,
                    model=b.model,
                    version=b.version,
                )
                if outline is None and b.nose_width and b.tail_width and board.length_m and board.width_m:
                    offset_m = _wide_point_offset_m(b.wide_point)
                    three = Outline.from_three_widths(
                        board.length_m,
                        _inches_m(b.nose_width),
                        board.width_m,
                        0.5 * board.length_m - offset_m,
                        _inches_m(b.tail_width),
                    )
                    board = Board.from_spec(
                        name=b.name, dims=b.dimensions, volume=b.volume, mass_kg=b.mass_kg, outline=three,
                        construction=b.construction, fins=b.fins, model=b.model, version=b.version,
                    )  # fmt: skip
            except FloatliftError as exc:
                raise ManifestError(f"{where}: {exc}") from exc
            out[bid] = board
        return out

    def rider_objects(self) -> dict:
        """Riders as :class:`sessions.riders.Rider` by rider id."""
        from sessions.riders import Rider

        out = {}
        for rid, r in self.riders.items():
            try:
                out[rid] = Rider(
                    name=r.name,
                    body_mass_kg=r.body_mass_kg,
                    gear_mass_kg=r.gear_mass_kg,
                    ability=r.ability or "intermediate",
                )
            except FloatliftError as exc:
                raise ManifestError(f"{self.path.name}: rider {rid!r}: {exc}") from exc
        return out


# ======================================================================================
# Reading
# ======================================================================================
def read_manifest(path) -> Manifest:
    """Read and check a manifest (and its board catalogue, when it names one).

    Parameters
    ----------
    path : str or Path
        The manifest's TOML file. Track, truth and catalogue paths inside it are
        relative to its folder.

    Returns
    -------
    Manifest

    Raises
    ------
    ManifestError
        Unreadable TOML, unknown keys, wrong types or out-of-range numbers, a duplicate
        id or file, a session naming an unknown rider or board, or a missing file. The
        message names the file and the entry.
    """
    path = Path(path)
    doc = _load(path)
    name = path.name
    _check_keys(doc, _TOP_KEYS, name, "top level")
    fmt = doc.get("format", MANIFEST_FORMAT)
    if fmt != MANIFEST_FORMAT:
        raise ManifestError(f"{name}: format {fmt!r} is not {MANIFEST_FORMAT!r}")
    base = path.parent

    place_doc = _table(doc.get("place", {}), name, "[place]")
    _check_keys(place_doc, _PLACE_KEYS, name, "[place]")
    place = Place(
        name=_opt_str(place_doc, "name", name, "[place]"),
        lat=_opt_num(place_doc, "lat", name, "[place]", -90, 90),
        lon=_opt_num(place_doc, "lon", name, "[place]", -180, 180),
        seaward_bearing_deg=_opt_num(place_doc, "seaward_bearing_deg", name, "[place]", 0, 360),
        note=_opt_str(place_doc, "note", name, "[place]"),
    )

    riders: dict[str, RiderEntry] = {}
    for rid, r in _table(doc.get("riders", {}), name, "[riders]").items():
        where = f"rider {rid!r}"
        r = _table(r, name, where)
        _check_keys(r, _RIDER_KEYS, name, where)
        stance = _opt_str(r, "stance", name, where)
        if stance is not None and stance not in STANCES:
            raise ManifestError(f"{name}: {where}: stance {stance!r} is not one of {', '.join(STANCES)}")
        ability = _opt_str(r, "ability", name, where)
        if ability is not None and ability not in ABILITIES:
            raise ManifestError(f"{name}: {where}: ability {ability!r} is not one of {', '.join(ABILITIES)}")
        body = _opt_num(r, "body_mass_kg", name, where, 20, 250)
        if body is None:
            raise ManifestError(f"{name}: {where}: body_mass_kg is missing")
        riders[rid] = RiderEntry(
            id=rid,
            name=_opt_str(r, "name", name, where) or rid,
            body_mass_kg=body,
            gear_mass_kg=_opt_num(r, "gear_mass_kg", name, where, 0, 30) or 0.0,
            stance=stance,
            ability=ability,
            note=_opt_str(r, "note", name, where),
        )

    boards: dict[str, BoardEntry] = {}
    catalogue = _opt_str(doc, "board_catalogue", name, "top level")
    if catalogue is not None:
        cat_path = base / catalogue
        if not cat_path.is_file():
            raise ManifestError(f"{name}: board_catalogue {catalogue!r} does not exist")
        cat = _load(cat_path)
        _check_keys(cat, _CATALOGUE_KEYS, cat_path.name, "top level")
        cfmt = cat.get("format", CATALOGUE_FORMAT)
        if cfmt != CATALOGUE_FORMAT:
            raise ManifestError(f"{cat_path.name}: format {cfmt!r} is not {CATALOGUE_FORMAT!r}")
        for bid, b in _table(cat.get("boards", {}), cat_path.name, "[boards]").items():
            boards[bid] = _board(bid, b, cat_path.name)
    for bid, b in _table(doc.get("boards", {}), name, "[boards]").items():
        if bid in boards:
            raise ManifestError(f"{name}: board {bid!r} is defined both here and in {catalogue}")
        boards[bid] = _board(bid, b, name)

    sessions: list[SessionEntry] = []
    seen_ids: set[str] = set()
    seen_files: dict[Path, str] = {}
    raw_sessions = doc.get("sessions", [])
    if not isinstance(raw_sessions, list):
        raise ManifestError(f"{name}: 'sessions' must be an array of tables ([[sessions]])")
    for k, s in enumerate(raw_sessions, start=1):
        where = f"session {k}"
        s = _table(s, name, where)
        sid = _opt_str(s, "id", name, where)
        if sid is None:
            raise ManifestError(f"{name}: {where}: id is missing")
        where = f"session {k} ({sid!r})"
        _check_keys(s, _SESSION_KEYS, name, where)
        if sid in seen_ids:
            raise ManifestError(f"{name}: {where}: duplicate session id")
        seen_ids.add(sid)
        for ref, known in (("rider", riders), ("board", boards)):
            value = _opt_str(s, ref, name, where)
            if value is None:
                raise ManifestError(f"{name}: {where}: {ref} is missing")
            if value not in known:
                listing = ", ".join(sorted(known)) or "none defined"
                raise ManifestError(f"{name}: {where}: unknown {ref} {value!r} (known: {listing})")
        file_text = _opt_str(s, "file", name, where)
        if file_text is None:
            raise ManifestError(f"{name}: {where}: file is missing")
        file_path = (base / file_text).resolve()
        if not file_path.is_file():
            raise ManifestError(f"{name}: {where}: track file {file_text!r} does not exist")
        if file_path in seen_files:
            raise ManifestError(f"{name}: {where}: track file {file_text!r} is already used by {seen_files[file_path]!r}")
        seen_files[file_path] = sid
        truth_text = _opt_str(s, "truth", name, where)
        truth_path = None
        if truth_text is not None:
            truth_path = (base / truth_text).resolve()
            if not truth_path.is_file():
                raise ManifestError(f"{name}: {where}: truth file {truth_text!r} does not exist")
        sessions.append(
            SessionEntry(
                id=sid,
                file=file_path,
                rider=s["rider"],
                board=s["board"],
                truth=truth_path,
                series=_opt_str(s, "series", name, where),
                note=_opt_str(s, "note", name, where),
                conditions=_conditions(s.get("conditions", {}), name, where),
                feedback=_feedback(s["feedback"], name, where) if "feedback" in s else None,
            )
        )

    return Manifest(
        path=path.resolve(),
        title=_opt_str(doc, "title", name, "top level"),
        place=place,
        riders=riders,
        boards=boards,
        sessions=tuple(sessions),
        note=_opt_str(doc, "note", name, "top level"),
    )


def _board(bid: str, b: Any, file_name: str) -> BoardEntry:
    where = f"board {bid!r}"
    b = _table(b, file_name, where)
    _check_keys(b, _BOARD_KEYS, file_name, where)
    volume = b.get("volume")
    if volume is not None and (not isinstance(volume, (str, int, float)) or isinstance(volume, bool)):
        raise ManifestError(f"{file_name}: {where}: volume must be text like '28.6 L' or a number of litres")
    outline = None
    if "outline" in b:
        raw = b["outline"]
        ok = isinstance(raw, list) and len(raw) >= 3
        pairs = []
        if ok:
            for item in raw:
                if not (isinstance(item, list) and len(item) == 2 and all(_is_num(v) for v in item)):
                    ok = False
                    break
                x, w = float(item[0]), float(item[1])
                if not (math.isfinite(x) and math.isfinite(w) and 0 <= x <= 6 and 0 <= w <= 1.2):
                    ok = False
                    break
                pairs.append((x, w))
        if not ok:
            raise ManifestError(
                f"{file_name}: {where}: outline must be at least 3 stations "
                "[distance from nose m, full width m] with 0-6 m and 0-1.2 m"
            )
        outline = tuple(pairs)
    return BoardEntry(
        id=bid,
        name=_opt_str(b, "name", file_name, where) or bid,
        dimensions=_opt_str(b, "dimensions", file_name, where),
        volume=None if volume is None else str(volume),
        mass_kg=_opt_num(b, "mass_kg", file_name, where, 0.3, 60),
        construction=_opt_str(b, "construction", file_name, where),
        fins=_opt_str(b, "fins", file_name, where),
        model=_opt_str(b, "model", file_name, where),
        version=_opt_str(b, "version", file_name, where),
        shaper=_opt_str(b, "shaper", file_name, where),
        outline_m=outline,
        nose_width=_opt_str(b, "nose_width", file_name, where),
        tail_width=_opt_str(b, "tail_width", file_name, where),
        wide_point=_opt_str(b, "wide_point", file_name, where),
        note=_opt_str(b, "note", file_name, where),
        source=file_name,
    )


def _conditions(raw: Any, file_name: str, where: str) -> Conditions:
    where = f"{where} conditions"
    c = _table(raw, file_name, where)
    _check_keys(c, _CONDITION_KEYS, file_name, where)
    water = _opt_str(c, "water", file_name, where)
    if water is not None and water not in WATER_PRESETS:
        raise ManifestError(f"{file_name}: {where}: water {water!r} is not one of {', '.join(WATER_PRESETS)}")
    return Conditions(
        wave_face_m=_opt_num(c, "wave_face_m", file_name, where, 0.0, 20.0),
        wave_period_s=_opt_num(c, "wave_period_s", file_name, where, 1.0, 30.0),
        wind=_opt_str(c, "wind", file_name, where),
        water=water,
        water_temp_c=_opt_num(c, "water_temp_c", file_name, where, -2.5, 40.0),
        salinity_g_kg=_opt_num(c, "salinity_g_kg", file_name, where, 0.0, 42.0),
        tide=_opt_str(c, "tide", file_name, where),
    )


def _feedback(raw: Any, file_name: str, where: str) -> Feedback:
    where = f"{where} feedback"
    f = _table(raw, file_name, where)
    _check_keys(f, _FEEDBACK_KEYS, file_name, where)
    scores = {}
    for key in FEEDBACK_SCORES:
        if key in f:
            v = f[key]
            if isinstance(v, bool) or not isinstance(v, int) or not 1 <= v <= 5:
                raise ManifestError(f"{file_name}: {where}: {key} must be a whole score from 1 to 5, not {v!r}")
            scores[key] = v
    return Feedback(**scores, note=_opt_str(f, "note", file_name, where))


# ======================================================================================
# Small helpers
# ======================================================================================
#: Largest manifest or board catalogue that is read [bytes]; real ones are a few kB.
MAX_MANIFEST_BYTES = 8 * 1024 * 1024


def _load(path: Path) -> dict:
    try:
        with open(path, "rb") as fh:
            data = fh.read(MAX_MANIFEST_BYTES + 1)
        if len(data) > MAX_MANIFEST_BYTES:
            raise ManifestError(f"{path.name}: larger than the limit of {MAX_MANIFEST_BYTES} bytes")
        return tomllib.loads(data.decode("utf-8"))
    except RecursionError as exc:  # tomllib recurses once per level of nested arrays/tables
        raise ManifestError(f"{path.name}: not valid TOML: nested too deeply") from exc
    except FileNotFoundError as exc:
        raise ManifestError(f"{path.name}: file does not exist") from exc
    except OSError as exc:
        raise ManifestError(f"{path.name}: cannot read: {exc.strerror or exc}") from exc
    except tomllib.TOMLDecodeError as exc:  # includes keys defined twice
        raise ManifestError(f"{path.name}: not valid TOML: {exc}") from exc
    except UnicodeDecodeError as exc:
        raise ManifestError(f"{path.name}: not UTF-8 text") from exc
    except ManifestError:
        raise
    except ValueError as exc:  # e.g. an integer of more digits than Python converts
        raise ManifestError(f"{path.name}: not valid TOML: {str(exc)[:120]}") from exc


def _table(value: Any, file_name: str, where: str) -> dict:
    if not isinstance(value, dict):
        raise ManifestError(f"{file_name}: {where} must be a table")
    return value


def _check_keys(table: dict, allowed: set[str], file_name: str, where: str) -> None:
    unknown = sorted(set(table) - allowed)
    if unknown:
        raise ManifestError(
            f"{file_name}: {where}: unknown key {unknown[0]!r} (allowed: {', '.join(sorted(allowed))})"
        )


def _is_num(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _opt_num(table: dict, key: str, file_name: str, where: str, lo: float, hi: float) -> float | None:
    if key not in table:
        return None
    v = table[key]
    if not _is_num(v) or not math.isfinite(float(v)):
        raise ManifestError(f"{file_name}: {where}: {key} must be a number, not {v!r}")
    if not lo <= float(v) <= hi:
        raise ManifestError(f"{file_name}: {where}: {key} = {v!r} is outside {lo:g} to {hi:g}")
    return float(v)


def _opt_str(table: dict, key: str, file_name: str, where: str) -> str | None:
    if key not in table:
        return None
    v = table[key]
    if not isinstance(v, str) or not v.strip():
        raise ManifestError(f"{file_name}: {where}: {key} must be non-empty text, not {v!r}")
    return v.strip()


def _inches_m(text: str, lo: float = 1.0, hi: float = 40.0) -> float:
    """Width in inches as the trade writes it (``14 3/4"``, ``14.75``) to metres."""
    from sessions.errors import BoardSpecError
    from sessions.units import IN_M

    t = text.strip().rstrip('"').replace("in", "").strip()
    total = 0.0
    try:
        for part in t.split():
            if "/" in part:
                num, den = part.split("/")
                total += float(num) / float(den)
            else:
                total += float(part)
    except (ValueError, ZeroDivisionError) as exc:
        raise BoardSpecError(f"width {text!r} is not inches like 14 3/4\"") from exc
    if not lo <= total <= hi:
        raise BoardSpecError(f"{text!r} is outside {lo:g}-{hi:g} inches")
    return total * IN_M


def _wide_point_offset_m(text: str | None) -> float:
    """Wide point relative to the centre: ``1" back``, ``2" forward``, ``centre`` [m]."""
    from sessions.errors import BoardSpecError

    if text is None or text.strip().lower() in ("centre", "center", "0"):
        return 0.0
    words = text.strip().lower().split()
    if len(words) < 2 or words[-1] not in ("back", "forward", "behind", "ahead"):
        raise BoardSpecError(f"wide point {text!r} is not like '1\" back' or '2\" forward' of centre")
    offset = _inches_m(" ".join(words[:-1]), 0.0, 20.0)
    return -offset if words[-1] in ("back", "behind") else offset

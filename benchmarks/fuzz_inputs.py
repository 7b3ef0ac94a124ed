"""Fuzzing every parser of outside data with hypothesis: long runs here, short ones in CI.

Each target takes generated input and must either succeed or raise the entry point's own
error class (a :class:`sessions.errors.FloatliftError` subclass) -- never another
exception, never a numerical warning (only floatlift's own data-quality and validity
warnings are allowed), and never take longer than :data:`TIME_LIMIT_S` for one input.

Targets (name: what is generated):

- ``gpx_mutations``: a valid GPX document with bytes flipped, inserted, deleted or
  duplicated, sometimes gzip-compressed;
- ``gpx_fields``: well-formed GPX whose lat, lon, time, ele and speed texts are drawn
  from hostile values (NaN, inf, huge, empty, far years, odd ISO forms, markup);
- ``dimensions``: any text to :func:`sessions.boards.parse_dimensions`, plus text built
  from the notation's own tokens;
- ``volume`` and ``mass``: any text to the volume and mass parsers;
- ``outline_csv``: random CSV files to :func:`sessions.boards.read_outline_csv`;
- ``manifest``: the sample manifest with its bytes mutated, and random TOML-like text,
  to :func:`sessions.manifest.read_manifest`;
- ``zip_names``: random member names to the zip safety check (a name that climbs out of
  the archive or is absolute is never accepted);
- ``conditions``: random values to the library's conditions check;
- ``analysis``: short random tracks (positions and times drawn at random) through the
  whole analysis.

Run::

    .venv/bin/python benchmarks/fuzz_inputs.py [--examples 2000] [--only NAME ...] [--seed N]

It prints, per target, the examples run, how many were accepted and refused, the
slowest example and the wall time, and exits 1 if any target found a failure (the
failing example is printed by hypothesis). ``tests/test_hostile_fuzz.py`` runs every target
with a few dozen examples and a fixed seed.
"""

from __future__ import annotations

import argparse
import contextlib
import gzip
import io
import math
import sys
import tempfile
import time
import warnings
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

from hypothesis import HealthCheck, given, seed, settings
from hypothesis import strategies as st

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from sessions.errors import (  # noqa: E402
    BoardSpecError,
    DataQualityWarning,
    FloatliftError,
    LibraryInputError,
    ManifestError,
    ModelValidityWarning,
    RiderSpecError,
    TrackReadError,
)

#: Longest one input may take [s] (the slowest seen in long runs is far below).
TIME_LIMIT_S = 10.0
ALLOWED_WARNINGS = (DataQualityWarning, ModelValidityWarning)

HEAD = ('<?xml version="1.0" encoding="UTF-8"?>\n<gpx version="1.1" creator="fuzz" '
        'xmlns="http://www.topografix.com/GPX/1/1"><trk><trkseg>\n')
TAIL = "</trkseg></trk></gpx>\n"


def _point(lat: str, lon: str, when: str, ele: str | None = None, speed: str | None = None) -> str:
    inner = f"<time>{when}</time>"
    if ele is not None:
        inner = f"<ele>{ele}</ele>" + inner
    if speed is not None:
        inner += f"<extensions><speed>{speed}</speed></extensions>"
    return f'<trkpt lat="{lat}" lon="{lon}">{inner}</trkpt>\n'


def seed_document(n: int = 40) -> bytes:
    """A small valid track off an invented beach (1 Hz, elevation and speed)."""
    pts = [_point(f"{-33.9 + i * 1e-5:.6f}", f"{151.28 + i * 2e-5:.6f}", f"2026-03-14T06:{i // 60:02d}:{i % 60:02d}Z",
                  "0.0", f"{0.5 + (i % 7) * 0.3:.1f}") for i in range(n)]
    return (HEAD + "".join(pts) + TAIL).encode()


SEED_GPX = seed_document()


# --- outcome bookkeeping ---------------------------------------------------------------------------
@dataclass
class Tally:
    accepted: int = 0
    refused: int = 0
    slowest_s: float = 0.0
    refusal_kinds: dict[str, int] = field(default_factory=dict)


TALLIES: dict[str, Tally] = {}


@contextlib.contextmanager
def expect(name: str, *errors: type[BaseException]):
    """Run one input: the listed errors count as a refusal; anything else propagates."""
    tally = TALLIES.setdefault(name, Tally())
    t0 = time.perf_counter()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            yield
        except errors as exc:
            tally.refused += 1
            kind = type(exc).__name__
            tally.refusal_kinds[kind] = tally.refusal_kinds.get(kind, 0) + 1
            message = str(exc)
            assert message.strip() and "\n" not in message.strip(), f"not a one-line message: {message!r}"
        else:
            tally.accepted += 1
    elapsed = time.perf_counter() - t0
    tally.slowest_s = max(tally.slowest_s, elapsed)
    assert elapsed < TIME_LIMIT_S, f"{name}: one input took {elapsed:.1f} s"
    stray = [w for w in caught if not issubclass(w.category, ALLOWED_WARNINGS)]
    assert not stray, f"{name}: unexpected warning {stray[0].category.__name__}: {stray[0].message}"


# --- strategies ------------------------------------------------------------------------------------
@st.composite
def mutated_gpx(draw) -> bytes:
    data = bytearray(SEED_GPX)
    for _ in range(draw(st.integers(1, 4))):
        op = draw(st.sampled_from(["digit", "digit", "digit", "flip", "insert", "delete", "dup", "cut"]))
        at = draw(st.integers(0, max(0, len(data) - 1)))
        if op == "digit":  # a value changes but the document stays well-formed
            digits = [i for i in range(len(data)) if 48 <= data[i] <= 57]
            if digits:
                data[digits[at % len(digits)]] = draw(st.sampled_from(b"0123456789-+.eE"))
        elif op == "flip" and data:
            data[at] = draw(st.integers(0, 255))
        elif op == "insert":
            data[at:at] = draw(st.sampled_from([b"<", b">", b"&", b'"', b"\x00", b"\xff", b"<!DOCTYPE x>",
                                                b"<trkpt>", b"</trkseg>", b"]]>", b"<![CDATA[", b"&amp;",
                                                b"<?pi x?>", b"<!--", b"-->", b"NaN", b"1e999"]))
        elif op == "delete":
            del data[at:at + draw(st.integers(1, 40))]
        elif op == "dup":
            span = bytes(data[at:at + draw(st.integers(1, 200))])
            data[at:at] = span
        elif op == "cut":
            del data[at:]
    raw = bytes(data)
    if draw(st.booleans()) and draw(st.booleans()):
        raw = gzip.compress(raw, mtime=0)
    return raw


NUMBER_TEXTS = st.one_of(
    st.sampled_from(["NaN", "nan", "inf", "-inf", "Infinity", "1e308", "-1e308", "1e-320", "", " ", "91", "-91",
                     "180.0000001", "-180", "0", "-0", "+1", "1_0", "0x10", "１２", "1,5", "&#49;", "<b>1</b>"]),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-10**30, 10**30).map(str),
    st.text(st.characters(blacklist_categories=("Cs", "Cc")), max_size=12),
)
TIME_TEXTS = st.one_of(
    st.sampled_from(["2026-03-14T06:00:00Z", "2026-03-14T06:00:00", "2026-03-14T06:00:00.1234567+05:30",
                     "1200-01-01T00:00:00Z", "9999-12-31T23:59:59Z", "0000-00-00T00:00:00Z", "2026-02-30T00:00:00Z",
                     "2026-03-14T25:61:61Z", "2026-03-14 06:00:00Z", "today", "now", "", "NaT", "-2026-01-01T00:00:00Z",
                     "+12026-01-01T00:00:00Z", "2026-03-14T06:00:00Z2026-03-14T06:00:01Z", "1e9"]),
    st.datetimes().map(lambda d: d.isoformat() + "Z"),
    st.text(st.characters(blacklist_categories=("Cs", "Cc")), max_size=25),
)


def _xml_safe(text: str) -> str:
    return (text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;").replace('"', "&quot;")
            .encode("utf-8", "replace").decode("utf-8"))


@st.composite
def field_gpx(draw) -> bytes:
    n = draw(st.integers(0, 12))
    bad_in_20 = draw(st.sampled_from([0, 1, 5]))  # share of hostile points: none, a few, many
    pts = []
    for i in range(n):
        valid = draw(st.integers(0, 19)) >= bad_in_20
        lat = f"{-33.9 + i * 1e-5:.6f}" if valid else draw(NUMBER_TEXTS)
        lon = f"{151.28 + i * 1e-5:.6f}" if valid else draw(NUMBER_TEXTS)
        when = f"2026-03-14T06:00:{i:02d}Z" if valid else draw(TIME_TEXTS)
        ele = draw(st.one_of(st.none(), st.just("1.5"), NUMBER_TEXTS))
        speed = draw(st.one_of(st.none(), st.just("2.5"), NUMBER_TEXTS))
        pts.append(_point(*(_xml_safe(x) if x is not None else None for x in (lat, lon, when, ele, speed))))
    return (HEAD + "".join(pts) + TAIL).encode("utf-8", "surrogatepass")


DIMENSION_TOKENS = st.sampled_from(["5'10\"", "5'10", "6'", "19 1/4\"", "19.25", "2 7/16\"", "2.44", "x", "X", "×",
                                    "*", "by", "cm", "mm", "m", "in", "\"", "'", "1/0", "0", "-1", "1e9", "nan", "inf",
                                    "178", "49", "6.2", " ", "  ", "/", "7/16", "½", "′", "″"])


@st.composite
def dimension_texts(draw) -> str:
    kind = draw(st.integers(0, 3))
    if kind == 0:
        return draw(st.text(max_size=60))
    if kind == 1:
        return " ".join(draw(st.lists(DIMENSION_TOKENS, min_size=1, max_size=12)))
    small = st.integers(0, 15)
    if kind == 2:  # the trade's feet-inches form with drawn figures
        feet, inches = draw(st.integers(0, 12)), draw(st.integers(0, 14))
        width, num, den = draw(st.integers(0, 30)), draw(small), draw(st.sampled_from([2, 4, 8, 16, 0, 3]))
        thick = draw(st.integers(0, 5))
        return f"{feet}'{inches}\" x {width} {num}/{den}\" x {thick} {draw(small)}/16\""
    values = draw(st.lists(st.floats(-10, 400, allow_nan=False), min_size=3, max_size=3))
    unit = draw(st.sampled_from(["cm", "mm", "m", ""]))
    return " x ".join(f"{v:g}" for v in values) + f" {unit}"


@st.composite
def outline_csvs(draw) -> bytes:
    header = draw(st.sampled_from(["x_from_nose_m,width_m\n", "x_from_nose_cm,width_cm\n", "x_in,w_in\n",
                                   "x,width\n", "", "# comment\n", "a,b,c\n", "\ufeffx_from_nose_m,width_m\n"]))
    if draw(st.booleans()):  # a plausible board in metres, then perhaps one station spoiled
        length = draw(st.floats(0.9, 5.5))
        n = draw(st.integers(2, 25))
        xs = sorted({round(length * i / (n - 1), 4) for i in range(n)})
        widths = [round(draw(st.floats(0.05, 0.6)), 4) for _ in xs]
        rows = [(f"{x:g}", f"{w:g}") for x, w in zip(xs, widths)]
        header = "x_from_nose_m,width_m\n"
        if draw(st.booleans()):
            rows[draw(st.integers(0, len(rows) - 1))] = (draw(NUMBER_TEXTS), draw(NUMBER_TEXTS))
    else:
        rows = draw(st.lists(st.tuples(NUMBER_TEXTS, NUMBER_TEXTS), max_size=30))
    text = header + "".join(f"{a},{b}\n" for a, b in rows)
    raw = text.encode("utf-8", "surrogatepass")
    if draw(st.booleans()) and raw:
        data = bytearray(raw)
        data[draw(st.integers(0, len(data) - 1))] = draw(st.integers(0, 255))
        raw = bytes(data)
    return raw


def _sample_manifest() -> bytes:
    path = ROOT / "sample_tracks" / "manifest.toml"
    if path.is_file():
        return path.read_bytes()[:20_000]
    return (b'format = "floatlift.manifest/1"\n[riders.r]\nname = "Ysolde Marr"\nbody_mass_kg = 70\n'
            b'[boards.b]\nname = "Tern 6-0"\nvolume = "30 L"\n')


SAMPLE_MANIFEST = _sample_manifest()


@st.composite
def manifest_bytes(draw) -> bytes:
    if draw(st.booleans()):
        fragments = st.sampled_from(['format = "floatlift.manifest/1"\n', "[riders.a]\n", "[boards.b]\n",
                                     "[[sessions]]\n", 'name = "Q"\n', "body_mass_kg = 70\n", "body_mass_kg = nan\n",
                                     "body_mass_kg = -inf\n", 'volume = "30 L"\n', 'dimensions = "6\'0 x 20 x 2.5"\n',
                                     'file = "../../x.gpx"\n', 'id = "s"\n', 'rider = "a"\n', 'board = "b"\n',
                                     "outline = [[0, 0], [1, 0.5], [2, 0]]\n", "conditions = { wave_face_m = 1e9 }\n",
                                     "feedback = { paddling = 0 }\n", "x = [[[[[[[[[[]]]]]]]]]]\n", "[place]\n",
                                     "lat = 91\n", 'board_catalogue = "/dev/null"\n', "= broken\n"])
        return "".join(draw(st.lists(fragments, max_size=20))).encode()
    data = bytearray(SAMPLE_MANIFEST)
    for _ in range(draw(st.integers(1, 6))):
        at = draw(st.integers(0, len(data) - 1))
        if draw(st.booleans()):
            data[at] = draw(st.integers(0, 255))
        else:
            del data[at:at + draw(st.integers(1, 30))]
    return bytes(data)


ZIP_NAMES = st.one_of(
    st.text(min_size=1, max_size=40),
    st.lists(st.sampled_from(["..", ".", "a", "b.gpx", "", "/", "\\", "C:", "c:\\x", "x.gpx.gz", "y.zip", "~"]),
             min_size=1, max_size=6).map(lambda parts: "/".join(parts)),
)


@st.composite
def random_tracks(draw):
    import numpy as np

    n = draw(st.integers(2, 400))
    rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
    step_s = draw(st.sampled_from([0.2, 1.0, 5.0, 30.0, 90.0]))
    jitter = draw(st.sampled_from([0.0, 0.5, 1.0]))
    times = np.cumsum(np.maximum(0.0, step_s + jitter * rng.standard_normal(n) * step_s))
    spread_m = draw(st.sampled_from([0.0, 5.0, 200.0, 5000.0, 200_000.0]))
    east = np.cumsum(rng.standard_normal(n)) * spread_m / max(1.0, math.sqrt(n))
    north = np.cumsum(rng.standard_normal(n)) * spread_m / max(1.0, math.sqrt(n))
    lat0 = draw(st.sampled_from([-33.9, 0.0, 64.1, 89.99, -89.99]))
    lon0 = draw(st.sampled_from([151.28, 179.999, -179.999, 0.0]))
    lat = np.clip(lat0 + north / 111_000.0, -90, 90)
    lon = (lon0 + east / (111_000.0 * max(0.01, math.cos(math.radians(lat0)))) + 180.0) % 360.0 - 180.0
    pts = [_point(f"{a:.7f}", f"{o:.7f}",
                  (np.datetime64("2026-03-14T06:00:00") + np.timedelta64(int(t * 1e3), "ms")).astype(str) + "Z")
           for a, o, t in zip(lat, lon, times)]
    return (HEAD + "".join(pts) + TAIL).encode()


# --- the checks --------------------------------------------------------------------------------------
def check_gpx(name: str, raw: bytes) -> None:
    from sessions.gpx import read_gpx

    with expect(name, TrackReadError):
        track = read_gpx(raw)
        points = track.points
        assert len(points) >= 2 and points["time"].is_monotonic_increasing and points["time"].is_unique
        assert points["lat"].between(-90, 90).all() and points["lon"].between(-180, 180).all()


def check_dimensions(text: str) -> None:
    from sessions.boards import parse_dimensions

    with expect("dimensions", BoardSpecError):
        d = parse_dimensions(text)
        assert 0 < d.thickness_m < d.width_m < d.length_m < 10 and all(map(math.isfinite, (d.length_m, d.width_m)))


def check_volume(text: str) -> None:
    from sessions.boards import parse_volume_l

    with expect("volume", BoardSpecError):
        v = parse_volume_l(text)
        assert math.isfinite(v) and v > 0


def check_mass(text: str) -> None:
    from sessions.riders import parse_mass_kg

    with expect("mass", RiderSpecError, BoardSpecError):
        m = parse_mass_kg(text)
        assert math.isfinite(m) and m > 0


def check_outline(raw: bytes, folder: Path) -> None:
    from sessions.boards import read_outline_csv

    path = folder / "outline.csv"
    path.write_bytes(raw)
    with expect("outline_csv", BoardSpecError):
        o = read_outline_csv(path)
        assert math.isfinite(o.planform_area_m2) and o.planform_area_m2 > 0


def check_manifest(raw: bytes, folder: Path) -> None:
    from sessions.manifest import read_manifest

    path = folder / "manifest.toml"
    path.write_bytes(raw)
    with expect("manifest", ManifestError):
        read_manifest(path)


def check_zip_name(name: str) -> None:
    from pathlib import PurePosixPath

    from sessions.store.importer import unsafe_member_reason

    with expect("zip_names"):
        info = zipfile.ZipInfo("x")
        info.filename = name  # as a hostile archive's directory would carry it
        reason = unsafe_member_reason(info)
        parts = PurePosixPath(name.replace("\\", "/")).parts
        if ".." in parts or name.startswith(("/", "\\")):
            assert reason is not None, name


def check_conditions(fields: dict) -> None:
    from sessions.store.library import _check_conditions

    with expect("conditions", LibraryInputError):
        out = _check_conditions(fields)
        for key, value in out.items():
            if isinstance(value, float):
                assert math.isfinite(value), (key, value)


def check_analysis(raw: bytes) -> None:
    from sessions.analysis import analyse
    from sessions.gpx import read_gpx

    with expect("analysis", FloatliftError):
        result = analyse(read_gpx(raw))
        doc = result.to_json()
        import json

        json.dumps(doc, allow_nan=False)  # NaN never leaks into the document


CONDITION_VALUES = st.one_of(st.none(), st.floats(allow_nan=True, allow_infinity=True), st.integers(-10**20, 10**20),
                             st.text(max_size=8), st.booleans())
CONDITION_KEYS = st.sampled_from(["wave_face_m", "period_s", "wind_speed_mps", "wind_from_deg", "water_temp_c",
                                  "salinity_g_kg", "water_preset", "tide_m", "tide_phase", "note", "bogus"])


# --- running -------------------------------------------------------------------------------------------
def targets(folder: Path) -> dict:
    """name -> (strategy, check taking one example)."""
    return {
        "gpx_mutations": (mutated_gpx(), lambda raw: check_gpx("gpx_mutations", raw)),
        "gpx_fields": (field_gpx(), lambda raw: check_gpx("gpx_fields", raw)),
        "dimensions": (dimension_texts(), check_dimensions),
        "volume": (st.one_of(st.text(max_size=30), NUMBER_TEXTS.map(lambda t: t + " L")), check_volume),
        "mass": (st.one_of(st.text(max_size=20), NUMBER_TEXTS.map(lambda t: t + "kg"),
                           NUMBER_TEXTS.map(lambda t: t + " lb")), check_mass),
        "outline_csv": (outline_csvs(), lambda raw: check_outline(raw, folder)),
        "manifest": (manifest_bytes(), lambda raw: check_manifest(raw, folder)),
        "zip_names": (ZIP_NAMES, check_zip_name),
        "conditions": (st.dictionaries(CONDITION_KEYS, CONDITION_VALUES, max_size=5), check_conditions),
        "analysis": (random_tracks(), check_analysis),
    }


#: The analysis target is much slower per example than the parsers.
SLOW_TARGETS = {"analysis": 0.1}


def run_target(name: str, strategy, check, examples: int, seed_value: int) -> None:
    """Run *check* over *examples* generated inputs (raises on the first failure, after shrinking)."""

    @seed(seed_value)
    @settings(max_examples=examples, deadline=None, database=None, derandomize=False,
              suppress_health_check=list(HealthCheck), print_blob=True)
    @given(strategy)
    def fuzz(example):
        check(example)

    fuzz()


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--examples", type=int, default=2000, help="examples per parser target (default 2000)")
    parser.add_argument("--only", nargs="*", metavar="NAME", help="run only these targets")
    parser.add_argument("--seed", type=int, default=20260314, help="hypothesis seed (default 20260314)")
    args = parser.parse_args(argv)
    failures = 0
    with tempfile.TemporaryDirectory() as tmp:
        all_targets = targets(Path(tmp))
        names = args.only or list(all_targets)
        print(f"{'target':14s} {'examples':>8s} {'accepted':>8s} {'refused':>8s} {'slowest':>9s} {'wall':>8s}  refusals")
        for name in names:
            strategy, check = all_targets[name]
            n = max(10, int(args.examples * SLOW_TARGETS.get(name, 1.0)))
            TALLIES.pop(name, None)
            t0 = time.perf_counter()
            try:
                run_target(name, strategy, check, n, args.seed)
                status = ""
            except Exception as exc:  # noqa: BLE001 - report and go on with the other targets
                failures += 1
                status = f"  FAILED: {type(exc).__name__}: {str(exc)[:200]}"
            wall = time.perf_counter() - t0
            t = TALLIES.get(name, Tally())
            kinds = ", ".join(f"{k} {v}" for k, v in sorted(t.refusal_kinds.items(), key=lambda kv: -kv[1])[:4])
            print(f"{name:14s} {t.accepted + t.refused:8d} {t.accepted:8d} {t.refused:8d} {t.slowest_s:8.3f}s "
                  f"{wall:7.1f}s  {kinds}{status}", flush=True)
    return 1 if failures else 0


if __name__ == "__main__":
    with contextlib.suppress(KeyboardInterrupt):
        sys.exit(main())

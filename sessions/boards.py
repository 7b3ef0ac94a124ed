"""Boards: dimensions in the trade's notation, outlines, planform area and volume.

Notation accepted by :func:`parse_dimensions` (length x width x thickness):

* feet and inches with fractions: ``5'10" x 19 1/4" x 2 7/16"`` (also ``5' 10"``,
  ``5'10 1/2"``, the typographic primes and the ``×`` sign);
* feet and decimal inches, inch marks optional: ``5'10 x 19.25 x 2.44``;
* metric with one unit at the end or on each figure: ``178 x 49 x 6.2 cm``,
  ``1780 x 490 x 62 mm``, ``1.78m x 49cm x 62mm``.

A figure without a unit takes the unit written at the end; when the length is in feet
and inches, width and thickness without a unit are inches. Three bare numbers are
refused (the unit would be a guess). Volumes are litres: ``32.5 L``, ``32.5L``,
``32.5 litres`` or a bare number.

Outline conventions (common practice in the trade; no published standard): the nose and
tail widths are measured 12 in (0.3048 m) from the nose tip and from the tail end, the
width is the widest point, quoted with its distance from the nose here. A full outline is
a list of stations ``(distance from the nose tip [m], full width [m])``; the planform
area is the integral of a shape-preserving monotone cubic (PCHIP; Fritsch and Carlson
1980) through them.

References
----------
Fritsch, F. N. and Carlson, R. E., 1980: Monotone piecewise cubic interpolation.
*SIAM J. Numer. Anal.* 17(2), 238-246 (the PCHIP interpolant, ``scipy``'s
``PchipInterpolator``).
"""

from __future__ import annotations

import csv
import math
import re
import warnings
from dataclasses import dataclass, field
from fractions import Fraction
from pathlib import Path
from typing import Iterable, Sequence

import numpy as np

from sessions.errors import BoardSpecError, DataQualityWarning
from sessions.units import FT_M, IN_M, L_M3

#: Distance from each end at which the trade measures nose and tail widths [m] (12 in).
END_WIDTH_STATION_M = 12 * IN_M

#: Accepted ranges (SI). Outside them a figure is almost surely a typing or unit error.
LENGTH_RANGE_M = (0.8, 6.0)
WIDTH_RANGE_M = (0.2, 1.2)
THICKNESS_RANGE_M = (0.015, 0.4)
VOLUME_RANGE_L = (5.0, 600.0)
BOARD_MASS_RANGE_KG = (0.3, 60.0)

#: Volume of a board as a share of its box volume L x W x T. Common practice, no
#: published source: shortboards, fish and longboards of known volume give about
#: 0.55-0.60 (e.g. 5'10" x 19 1/4" x 2 7/16" at about 29.5 L is 0.55; values from memory).
BOX_VOLUME_RATIO = 0.56
#: Ratios outside this range make a stated volume implausible for the dimensions.
BOX_VOLUME_RATIO_PLAUSIBLE = (0.40, 0.75)

#: Default outline from length and width only (common practice, no published source):
#: nose width at 12 in = 0.65 x width, tail width at 12 in = 0.75 x width, widest point
#: at mid-length.
DEFAULT_NOSE_RATIO = 0.65
DEFAULT_TAIL_RATIO = 0.75
#: Width of the tail end itself as a share of the tail width at 12 in, for outlines built
#: from three widths (a squash-like tail; common practice, no published source).
DEFAULT_TAIL_END_RATIO = 0.6

# --- dimension parsing --------------------------------------------------------------

_SEP_RE = re.compile(r"\s*[x×X*]\s*")
_NUM = r"(?:\d+(?:\.\d*)?|\.\d+)"
# a number of inches: "19", "19.25", "19 1/4", "19-1/4", "7/8"
_INCHES = rf"(?:(?P<{{p}}w>{_NUM})(?:[\s-]+(?P<{{p}}n>\d+)\s*/\s*(?P<{{p}}d>\d+))?|(?P<{{p}}fn>\d+)\s*/\s*(?P<{{p}}fd>\d+))"
_INCH_MARK = r"(?:\"|″|''|’’|”|in\b|inch(?:es)?\b)"
_FT_MARK = r"(?:'|′|’|ft\b|feet\b|foot\b)"
_FEET_RE = re.compile(
    rf"^(?P<feet>\d+)\s*{_FT_MARK}\s*(?:{_INCHES.format(p='i')})?\s*{_INCH_MARK}?$", re.IGNORECASE
)
_INCH_RE = re.compile(rf"^{_INCHES.format(p='i')}\s*(?P<mark>{_INCH_MARK})?$", re.IGNORECASE)
_METRIC_RE = re.compile(rf"^(?P<num>{_NUM})\s*(?P<unit>mm|cm|m)?$", re.IGNORECASE)
_TRAILING_UNIT_RE = re.compile(r"^(?P<body>.*?\d)\s*(?P<unit>mm|cm|m)$", re.IGNORECASE)
_METRIC_FACTOR = {"mm": 1e-3, "cm": 1e-2, "m": 1.0}


@dataclass(frozen=True)
class Dimensions:
    """Length, width and thickness of a board [m]."""

    length_m: float
    width_m: float
    thickness_m: float

    @property
    def box_volume_l(self) -> float:
        """``L x W x T`` in litres (the volume of the enclosing box)."""
        return self.length_m * self.width_m * self.thickness_m / L_M3


def _inches_from_match(match: re.Match, prefix: str = "i") -> float | None:
    if match[f"{prefix}fn"] is not None:
        return _fraction(match[f"{prefix}fn"], match[f"{prefix}fd"])
    if match[f"{prefix}w"] is None:
        return None
    value = float(match[f"{prefix}w"])
    if match[f"{prefix}n"] is not None:
        value += _fraction(match[f"{prefix}n"], match[f"{prefix}d"])
    return value


def _fraction(num: str, den: str) -> float:
    n, d = int(num), int(den)
    if d == 0 or n >= d:
        raise BoardSpecError(f"{num}/{den} is not a proper fraction of an inch")
    return n / d


def _parse_imperial_length(part: str) -> float | None:
    """Feet-and-inches length [m], or None when the part has no feet mark."""
    match = _FEET_RE.match(part)
    if match is None:
        return None
    inches = _inches_from_match(match) or 0.0
    if inches >= 12.0:
        raise BoardSpecError(f"board length {part!r}: inches must be below 12 after the feet")
    return int(match["feet"]) * FT_M + inches * IN_M


def _parse_inches(part: str) -> tuple[float, bool] | None:
    """(metres, had an inch mark) or None."""
    match = _INCH_RE.match(part)
    if match is None:
        return None
    inches = _inches_from_match(match)
    if inches is None:
        return None
    return inches * IN_M, match["mark"] is not None


def parse_dimensions(text: str) -> Dimensions:
    """Board dimensions from the trade's notation (see the module docstring).

    Raises
    ------
    BoardSpecError
        When the text is not three figures in a known notation, or a figure is out of
        range, or thickness, width and length are not in that order of size.

    Examples
    --------
    >>> d = parse_dimensions('5\\'10" x 19 1/4" x 2 7/16"')
    >>> round(d.length_m, 4), round(d.width_m, 5), round(d.thickness_m, 7)
    (1.778, 0.48895, 0.0619125)
    >>> parse_dimensions("178 x 49 x 6.2 cm").width_m
    0.49
    """
    if not isinstance(text, str) or not text.strip():
        raise BoardSpecError("board dimensions are empty; write e.g. 5'10\" x 19 1/4\" x 2 7/16\" or 178 x 49 x 6.2 cm")
    cleaned = " ".join(text.strip().split())
    parts = [p.strip() for p in _SEP_RE.split(cleaned)]
    if len(parts) != 3 or not all(parts):
        raise BoardSpecError(
            f"board dimensions {text!r} must be three figures, length x width x thickness "
            "(e.g. 5'10\" x 19 1/4\" x 2 7/16\" or 178 x 49 x 6.2 cm)"
        )
    values = _parse_parts(parts, text)
    dims = Dimensions(*values)
    check_dimensions(dims, text)
    return dims


def _parse_parts(parts: list[str], text: str) -> list[float]:
    trailing = _TRAILING_UNIT_RE.match(parts[-1])
    last_unit = trailing["unit"].lower() if trailing else None
    length_imperial = _parse_imperial_length(parts[0])
    if length_imperial is not None or last_unit is None:
        # imperial: feet-inches length, widths in inches (marks optional)
        values: list[float] = []
        any_mark = length_imperial is not None
        for index, part in enumerate(parts):
            if index == 0 and length_imperial is not None:
                values.append(length_imperial)
                continue
            parsed = _parse_inches(part)
            if parsed is None:
                raise BoardSpecError(f"board dimensions {text!r}: cannot read {part!r} as inches")
            any_mark = any_mark or parsed[1]
            values.append(parsed[0])
        if not any_mark:
            raise BoardSpecError(
                f"board dimensions {text!r} have no units; write feet and inches (5'10 x 19.25 x 2.44) "
                "or add cm/mm/m (178 x 49 x 6.2 cm)"
            )
        return values
    values = []
    for part in parts:
        match = _METRIC_RE.match(part)
        if match is None:
            raise BoardSpecError(f"board dimensions {text!r}: cannot read {part!r} as a metric figure")
        unit = (match["unit"] or last_unit).lower()
        values.append(float(match["num"]) * _METRIC_FACTOR[unit])
    return values


def check_dimensions(dims: Dimensions, text: str | None = None) -> None:
    """Raise BoardSpecError when a dimension is out of range or out of order."""
    label = f"board dimensions {text!r}" if text else "board dimensions"
    for what, value, (low, high) in (
        ("length", dims.length_m, LENGTH_RANGE_M),
        ("width", dims.width_m, WIDTH_RANGE_M),
        ("thickness", dims.thickness_m, THICKNESS_RANGE_M),
    ):
        if not math.isfinite(value) or not low <= value <= high:
            raise BoardSpecError(
                f"{label}: {what} {value * 100:.1f} cm is outside {low * 100:g}-{high * 100:g} cm"
            )
    if not dims.thickness_m < dims.width_m < dims.length_m:
        raise BoardSpecError(f"{label}: expected length > width > thickness")


# --- dimension formatting -----------------------------------------------------------

#: Resolution of the trade notation: sixteenths of an inch.
TRADE_RESOLUTION_IN = 16


def _inches_text(inches: float, mark: bool = True, keep_zero: bool = False) -> str:
    sixteenths = round(inches * TRADE_RESOLUTION_IN)
    whole, rest = divmod(sixteenths, TRADE_RESOLUTION_IN)
    frac = Fraction(rest, TRADE_RESOLUTION_IN)
    if rest and (whole or keep_zero):
        body = f"{whole} {frac.numerator}/{frac.denominator}"
    elif rest:
        body = f"{frac.numerator}/{frac.denominator}"
    else:
        body = f"{whole}"
    return body + ('"' if mark else "")


def _feet_inches(length_m: float, resolution: int) -> tuple[int, int]:
    """(feet, inches x resolution) rounded, with the carry into feet done."""
    units = round(length_m / IN_M * resolution)
    feet, rest = divmod(units, 12 * resolution)
    return int(feet), int(rest)


def _decimal(value: float, places: int) -> str:
    text = f"{value:.{places}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def format_dimensions(dims: Dimensions, style: str = "trade") -> str:
    """Dimensions as text that :func:`parse_dimensions` reads back.

    Parameters
    ----------
    dims : Dimensions
    style : {"trade", "decimal", "metric"}
        ``"trade"``: ``5'10" x 19 1/4" x 2 7/16"`` (sixteenths of an inch);
        ``"decimal"``: ``5'10 x 19.25 x 2.44`` (hundredths of an inch);
        ``"metric"``: ``178 x 49 x 6.2 cm`` (millimetres).

    Examples
    --------
    >>> format_dimensions(parse_dimensions("5'10 x 19.25 x 2.4375"))
    '5\\'10" x 19 1/4" x 2 7/16"'
    """
    if style == "trade":
        feet, rest = _feet_inches(dims.length_m, TRADE_RESOLUTION_IN)
        length = f"{feet}'{_inches_text(rest / TRADE_RESOLUTION_IN, keep_zero=True)}"
        return f"{length} x {_inches_text(dims.width_m / IN_M)} x {_inches_text(dims.thickness_m / IN_M)}"
    if style == "decimal":
        feet, rest = _feet_inches(dims.length_m, 100)
        return (
            f"{feet}'{_decimal(rest / 100, 2)} x {_decimal(dims.width_m / IN_M, 2)} x "
            f"{_decimal(dims.thickness_m / IN_M, 2)}"
        )
    if style == "metric":
        return (
            f"{_decimal(dims.length_m * 100, 1)} x {_decimal(dims.width_m * 100, 1)} x "
            f"{_decimal(dims.thickness_m * 100, 1)} cm"
        )
    raise ValueError(f"unknown dimension style {style!r}; valid names: trade, decimal, metric")


# --- volume -------------------------------------------------------------------------

_VOLUME_RE = re.compile(
    rf"^\s*(?P<num>{_NUM})\s*(?P<unit>l|lt|ltr|litres?|liters?)?\s*$", re.IGNORECASE
)


def parse_volume_l(text: str | float | int) -> float:
    """Volume in litres from ``32.5 L``, ``32.5L``, ``30 litres`` or a bare number.

    Raises
    ------
    BoardSpecError
        Not a volume in litres, or outside 5-600 L.

    Examples
    --------
    >>> parse_volume_l("32.5 L")
    32.5
    """
    if isinstance(text, bool):
        raise BoardSpecError(f"volume {text!r} is not a number of litres")
    if isinstance(text, (int, float)):
        value = float(text)
    else:
        match = _VOLUME_RE.match(str(text))
        if match is None:
            raise BoardSpecError(f"volume {text!r} is not a number of litres; write e.g. 32.5 L")
        value = float(match["num"])
    low, high = VOLUME_RANGE_L
    if not math.isfinite(value) or not low <= value <= high:
        raise BoardSpecError(f"volume {text!r} is outside {low:g}-{high:g} L")
    return value


def format_volume_l(volume_l: float) -> str:
    """``"32.5 L"`` (one decimal, trailing zero dropped); :func:`parse_volume_l` reads it."""
    return f"{_decimal(volume_l, 1)} L"


def estimate_volume_l(dims: Dimensions, ratio: float = BOX_VOLUME_RATIO) -> float:
    """Volume estimated from dimensions [L]: ``ratio x L x W x T``.

    The ratio (default 0.56) is common practice, no published source; the estimate is
    good to perhaps +-10 % and is always marked as an estimate.
    """
    return ratio * dims.box_volume_l


def volume_plausibility(volume_l: float, dims: Dimensions) -> str | None:
    """A sentence when a stated volume is implausible for the dimensions, else None."""
    ratio = volume_l / dims.box_volume_l
    low, high = BOX_VOLUME_RATIO_PLAUSIBLE
    if low <= ratio <= high:
        return None
    return (
        f"stated volume {format_volume_l(volume_l)} is {ratio:.2f} of the box volume "
        f"{format_volume_l(dims.box_volume_l)} for {format_dimensions(dims)}; boards are usually "
        f"{low:.2f}-{high:.2f} (about {format_volume_l(estimate_volume_l(dims))} expected) - check the figures"
    )


# --- outline ------------------------------------------------------------------------


@dataclass(frozen=True)
class Outline:
    """A board's outline as stations (distance from the nose tip, full width) [m].

    Build it with :meth:`from_stations` or :meth:`from_three_widths`. Widths between
    stations come from a PCHIP interpolant (monotone between stations, no overshoot).
    """

    x_m: tuple[float, ...]
    width_m: tuple[float, ...]
    source: str = "stations"  # "stations", "three widths" or "default"
    _pchip: object = field(default=None, repr=False, compare=False)

    def __post_init__(self) -> None:
        from scipy.interpolate import PchipInterpolator

        object.__setattr__(self, "_pchip", PchipInterpolator(np.asarray(self.x_m), np.asarray(self.width_m)))

    # constructors
    @classmethod
    def from_stations(cls, stations_m: Iterable[Sequence[float]], *, source: str = "stations") -> "Outline":
        """Outline through stations ``(x_from_nose_m, width_m)``.

        Stations are sorted by distance; the last one is the tail end (its distance is
        the board's length). When the first station is not at the nose tip (x = 0), a
        nose tip of zero width is added.

        Raises
        ------
        BoardSpecError
            Fewer than three stations, repeated or negative distances, negative or
            non-finite widths, or a length or width out of range.
        """
        try:
            pairs = [(float(x), float(w)) for x, w in stations_m]
        except (TypeError, ValueError) as exc:
            raise BoardSpecError(f"outline stations must be pairs of numbers (distance, width): {exc}") from exc
        if len(pairs) < 3:
            raise BoardSpecError(f"an outline needs at least 3 stations, got {len(pairs)}")
        for x, w in pairs:
            if not (math.isfinite(x) and math.isfinite(w)) or x < 0.0 or w < 0.0:
                raise BoardSpecError(f"outline station ({x:g}, {w:g}) m: distance and width must be >= 0")
        pairs.sort()
        xs = [x for x, _ in pairs]
        if any(b <= a for a, b in zip(xs, xs[1:])):
            raise BoardSpecError("outline stations repeat a distance from the nose")
        if xs[0] > 0.0:
            pairs.insert(0, (0.0, 0.0))
        x_m = tuple(x for x, _ in pairs)
        width_m = tuple(w for _, w in pairs)
        if any(b - a < MIN_STATION_SPACING_M for a, b in zip(x_m, x_m[1:])):
            # near-coincident stations make the interpolant's slopes overflow
            raise BoardSpecError(f"outline stations closer than {MIN_STATION_SPACING_M * 1000:g} mm "
                                 "to each other (or to the nose tip)")
        # ranges checked before the interpolant is built: absurd magnitudes would overflow in it
        low, high = LENGTH_RANGE_M
        if not low <= x_m[-1] <= high:
            raise BoardSpecError(f"outline length {x_m[-1]:.4g} m is outside {low:g}-{high:g} m")
        wl, wh = WIDTH_RANGE_M
        if not wl <= max(width_m) <= wh:
            raise BoardSpecError(f"outline width {max(width_m):.4g} m is outside {wl:g}-{wh:g} m")
        outline = cls(x_m=x_m, width_m=width_m, source=source)
        if not wl <= outline.max_width_m <= wh:
            raise BoardSpecError(f"outline width {outline.max_width_m:.3f} m is outside {wl:g}-{wh:g} m")
        return outline

    @classmethod
    def from_three_widths(
        cls,
        length_m: float,
        nose_width_m: float,
        wide_width_m: float,
        wide_point_from_nose_m: float,
        tail_width_m: float,
        *,
        tail_end_width_m: float | None = None,
    ) -> "Outline":
        """Default outline from the trade's three widths.

        Stations: nose tip (0, 0); nose width at 12 in; the wide point; tail width at
        12 in from the tail; the tail end, ``tail_end_width_m`` wide (default 0.6 x the
        tail width, :data:`DEFAULT_TAIL_END_RATIO`). PCHIP through them gives a smooth
        outline whose widest point is the given one.
        """
        values = (length_m, nose_width_m, wide_width_m, wide_point_from_nose_m, tail_width_m)
        if not all(math.isfinite(float(v)) and float(v) > 0.0 for v in values):
            raise BoardSpecError("outline: length, widths and wide-point position must be positive numbers")
        if not 2.0 * END_WIDTH_STATION_M + 0.05 < length_m:
            raise BoardSpecError(f"outline: length {length_m:.3f} m is too short for widths at 12 in from each end")
        if not END_WIDTH_STATION_M < wide_point_from_nose_m < length_m - END_WIDTH_STATION_M:
            raise BoardSpecError("outline: the wide point must lie between the nose and tail width stations")
        if not (nose_width_m <= wide_width_m and tail_width_m <= wide_width_m):
            raise BoardSpecError("outline: nose and tail widths cannot exceed the widest width")
        tail_end = DEFAULT_TAIL_END_RATIO * tail_width_m if tail_end_width_m is None else float(tail_end_width_m)
        if not 0.0 <= tail_end <= tail_width_m:
            raise BoardSpecError("outline: the tail end cannot be wider than the tail width at 12 in")
        stations = [
            (0.0, 0.0),
            (END_WIDTH_STATION_M, nose_width_m),
            (wide_point_from_nose_m, wide_width_m),
            (length_m - END_WIDTH_STATION_M, tail_width_m),
            (length_m, tail_end),
        ]
        return cls.from_stations(stations, source="three widths")

    @classmethod
    def default_for(cls, length_m: float, width_m: float) -> "Outline":
        """Documented default outline from length and width only (an estimate).

        Nose width 0.65 W, tail width 0.75 W, widest at mid-length (common practice, no
        published source); then as :meth:`from_three_widths`.
        """
        outline = cls.from_three_widths(
            length_m, DEFAULT_NOSE_RATIO * width_m, width_m, 0.5 * length_m, DEFAULT_TAIL_RATIO * width_m
        )
        return cls(x_m=outline.x_m, width_m=outline.width_m, source="default")

    # geometry
    @property
    def length_m(self) -> float:
        return self.x_m[-1]

    def widths_at(self, x_m):
        """Full width [m] at distance(s) ``x_m`` from the nose; 0 outside the board."""
        x = np.asarray(x_m, dtype=float)
        inside = (x >= 0.0) & (x <= self.length_m)
        widths = np.where(inside, self._pchip(np.clip(x, 0.0, self.length_m)), 0.0)
        widths = np.maximum(widths, 0.0)
        return float(widths) if widths.ndim == 0 else widths

    @property
    def planform_area_m2(self) -> float:
        """Planform area [m^2]: the exact integral of the PCHIP outline."""
        return float(self._pchip.integrate(0.0, self.length_m))

    def area_between_m2(self, x0_m: float, x1_m: float) -> float:
        """Planform area [m^2] between two distances from the nose."""
        a, b = max(0.0, x0_m), min(self.length_m, x1_m)
        return float(self._pchip.integrate(a, b)) if b > a else 0.0

    def mean_width_m(self, x0_m: float, x1_m: float) -> float:
        """Mean width [m] between two distances from the nose."""
        if not x1_m > x0_m:
            raise ValueError("mean_width_m needs x1_m > x0_m")
        return self.area_between_m2(x0_m, x1_m) / (min(self.length_m, x1_m) - max(0.0, x0_m))

    def _dense(self) -> tuple[np.ndarray, np.ndarray]:
        x = np.linspace(0.0, self.length_m, 2001)
        return x, self.widths_at(x)

    @property
    def max_width_m(self) -> float:
        return float(np.max(self._dense()[1]))

    @property
    def wide_point_from_nose_m(self) -> float:
        x, w = self._dense()
        return float(x[int(np.argmax(w))])

    @property
    def nose_width_m(self) -> float:
        """Width 12 in from the nose tip [m]."""
        return self.widths_at(END_WIDTH_STATION_M)

    @property
    def tail_width_m(self) -> float:
        """Width 12 in from the tail end [m]."""
        return self.widths_at(self.length_m - END_WIDTH_STATION_M)


_CSV_UNITS = {"m": 1.0, "cm": 1e-2, "mm": 1e-3, "in": IN_M}
#: Closest two outline stations may be [m] (common practice, no published source: a
#: shaper measures every inch or two; 0.1 mm only guards the interpolant against overflow).
MIN_STATION_SPACING_M = 1e-4
#: Largest outline CSV that is read [bytes]; a measured outline has a few dozen stations.
MAX_OUTLINE_BYTES = 1024 * 1024


def read_outline_csv(path: str | Path) -> Outline:
    """Outline from a CSV file of stations: distance from the nose, full width.

    The file has two columns. An optional header names the unit of each column by its
    suffix: ``x_from_nose_m,width_m`` (also ``_cm``, ``_mm``, ``_in``); without a header
    the figures are metres. Lines starting with ``#`` are comments.

    Raises
    ------
    BoardSpecError
        Unreadable file, a row that is not two numbers, or a bad outline.
    """
    path = Path(path)
    try:
        with open(path, "rb") as fh:
            data = fh.read(MAX_OUTLINE_BYTES + 1)
        if len(data) > MAX_OUTLINE_BYTES:
            raise BoardSpecError(f"outline file {path.name} is larger than the limit of {MAX_OUTLINE_BYTES} bytes")
        text = data.decode("utf-8-sig")
    except (OSError, UnicodeDecodeError) as exc:
        reason = exc.strerror if isinstance(exc, OSError) and exc.strerror else exc
        raise BoardSpecError(f"cannot read outline file {path.name}: {reason}") from exc
    if "\x00" in text:
        raise BoardSpecError(f"outline file {path.name} is not a text file (it holds NUL bytes)")
    try:
        rows = [row for row in csv.reader(line for line in text.splitlines() if line.strip() and not line.lstrip().startswith("#"))]
    except csv.Error as exc:  # e.g. a field over the csv module's size limit
        raise BoardSpecError(f"outline file {path.name} is not a two-column CSV: {exc}") from exc
    if not rows:
        raise BoardSpecError(f"outline file {path.name} holds no stations")
    factors = (1.0, 1.0)
    if rows and not _is_number(rows[0][0] if rows[0] else ""):
        header = [h.strip().lower() for h in rows[0]]
        if len(header) != 2:
            # the file's text is never echoed: a mistyped path may name a private file
            raise BoardSpecError(f"outline file {path.name}: the first row must be two numbers or a header "
                                 f"naming two columns; it has {len(header)} field(s)")
        factors = tuple(_unit_of_column(h, path.name, i) for i, h in enumerate(header, 1))  # type: ignore[assignment]
        rows = rows[1:]
    stations = []
    for number, row in enumerate(rows, start=1):
        if len(row) != 2 or not all(_is_number(c) for c in row):
            raise BoardSpecError(f"outline file {path.name}: station {number} is not two numbers "
                                 f"({len(row)} field(s))")
        stations.append((float(row[0]) * factors[0], float(row[1]) * factors[1]))
    return Outline.from_stations(stations)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def _unit_of_column(name: str, file_name: str, number: int) -> float:
    for suffix, factor in sorted(_CSV_UNITS.items(), key=lambda kv: -len(kv[0])):
        if name.endswith("_" + suffix):
            return factor
    raise BoardSpecError(  # the header is not echoed (the file may not be an outline at all)
        f"outline file {file_name}: the name of column {number} does not end in a unit (_m, _cm, _mm or _in)"
    )


# --- board --------------------------------------------------------------------------


@dataclass(frozen=True)
class Board:
    """A board: dimensions [m], volume [L], mass [kg], build details and outline.

    ``volume_is_estimate`` is True when the volume was estimated from the dimensions;
    ``outline.source`` says whether the outline was measured (``"stations"``), built from
    three widths or is the ``"default"`` shape for the length and width.
    Missing figures are None.
    """

    name: str
    length_m: float | None = None
    width_m: float | None = None
    thickness_m: float | None = None
    volume_l: float | None = None
    volume_is_estimate: bool = False
    mass_kg: float | None = None
    construction: str | None = None
    fins: str | None = None
    model: str | None = None
    version: str | None = None
    outline: Outline | None = None

    @property
    def planform_area_m2(self) -> float | None:
        return None if self.outline is None else self.outline.planform_area_m2

    @property
    def dimensions(self) -> Dimensions | None:
        if None in (self.length_m, self.width_m, self.thickness_m):
            return None
        return Dimensions(self.length_m, self.width_m, self.thickness_m)  # type: ignore[arg-type]

    @property
    def volume_m3(self) -> float | None:
        return None if self.volume_l is None else self.volume_l * L_M3

    @classmethod
    def from_spec(
        cls,
        name: str = "board",
        dims: str | Dimensions | None = None,
        volume: str | float | None = None,
        mass_kg: str | float | None = None,
        outline: Outline | Iterable[Sequence[float]] | str | Path | None = None,
        construction: str | None = None,
        fins: str | None = None,
        model: str | None = None,
        version: str | None = None,
    ) -> "Board":
        """Board from user input.

        Parameters
        ----------
        dims : str or Dimensions, optional
            Trade notation (see :func:`parse_dimensions`).
        volume : str or float, optional
            Litres (``"32.5 L"`` or a number). When missing and ``dims`` is given, the
            volume is estimated (``volume_is_estimate=True``); when given, it is checked
            against the dimensions (a DataQualityWarning when implausible).
        mass_kg : str or float, optional
            Board mass: kilograms, or with ``lb``.
        outline : Outline, stations, or a CSV path, optional
            Without it, a default outline is built from length and width.

        Raises
        ------
        BoardSpecError
            Unreadable figures, or a board with neither dimensions, outline nor volume.
        """
        from sessions.riders import parse_mass_kg

        dimensions = dims if isinstance(dims, Dimensions) or dims is None else parse_dimensions(dims)
        if isinstance(dimensions, Dimensions):
            check_dimensions(dimensions)
        if isinstance(outline, (str, Path)):
            outline = read_outline_csv(outline)
        elif outline is not None and not isinstance(outline, Outline):
            outline = Outline.from_stations(outline)
        volume_l = None if volume is None or volume == "" else parse_volume_l(volume)
        mass = None
        if mass_kg is not None and mass_kg != "":
            mass = parse_mass_kg(mass_kg, what="board mass", error_cls=BoardSpecError)
            low, high = BOARD_MASS_RANGE_KG
            if not low <= mass <= high:
                raise BoardSpecError(f"board mass {mass:g} kg is outside {low:g}-{high:g} kg")
        if dimensions is None and outline is None and volume_l is None:
            raise BoardSpecError(f"board {name!r} needs dimensions, an outline or a volume")
        estimate = False
        if dimensions is not None:
            if volume_l is None:
                volume_l, estimate = estimate_volume_l(dimensions), True
            else:
                problem = volume_plausibility(volume_l, dimensions)
                if problem:
                    warnings.warn(problem, DataQualityWarning, stacklevel=2)
            if outline is None:
                outline = Outline.default_for(dimensions.length_m, dimensions.width_m)
            else:
                _check_outline_matches(outline, dimensions)
        length = dimensions.length_m if dimensions else (outline.length_m if outline else None)
        width = dimensions.width_m if dimensions else (outline.max_width_m if outline else None)
        return cls(
            name=name,
            length_m=length,
            width_m=width,
            thickness_m=dimensions.thickness_m if dimensions else None,
            volume_l=volume_l,
            volume_is_estimate=estimate,
            mass_kg=mass,
            construction=construction,
            fins=fins,
            model=model,
            version=version,
            outline=outline,
        )


def _check_outline_matches(outline: Outline, dims: Dimensions, tolerance: float = 0.03) -> None:
    for what, a, b in (("length", outline.length_m, dims.length_m), ("width", outline.max_width_m, dims.width_m)):
        if abs(a - b) > tolerance * b:
            warnings.warn(
                f"outline {what} {a * 100:.1f} cm differs from the stated {what} {b * 100:.1f} cm "
                f"by more than {tolerance:.0%}; the outline is used for area",
                DataQualityWarning,
                stacklevel=3,
            )

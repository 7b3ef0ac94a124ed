"""Board notation parsers and formatters, outlines and planform area, volume, Board."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from sessions.boards import (
    Board,
    Dimensions,
    Outline,
    estimate_volume_l,
    format_dimensions,
    format_volume_l,
    parse_dimensions,
    parse_volume_l,
    read_outline_csv,
    volume_plausibility,
)
from sessions.errors import BoardSpecError, DataQualityWarning
from sessions.units import FT_M, IN_M

# --- parsing the trade's notation -----------------------------------------------------
# Unit factors are exact by definition (international yard and pound agreement, 1959).


@pytest.mark.parametrize(
    ("text", "length_in", "width_in", "thickness_in"),
    [
        ('5\'10" x 19 1/4" x 2 7/16"', 70.0, 19.25, 2.4375),
        ("5'10 x 19.25 x 2.44", 70.0, 19.25, 2.44),
        ("5' 10\" × 19-1/4 × 2 7/16", 70.0, 19.25, 2.4375),
        ("5′10″ x 19¼″ x 2 7/16″".replace("¼", " 1/4"), 70.0, 19.25, 2.4375),
        ("6'0 1/2\" x 20\" x 2.5\"", 72.5, 20.0, 2.5),
        ("9'0\" X 22 1/2\" X 3\"", 108.0, 22.5, 3.0),
        ("6' x 20.5 x 2 5/8", 72.0, 20.5, 2.625),
        ("7'2\" x 21\" x 2 3/4\"", 86.0, 21.0, 2.75),
        ("70 in x 19.25 in x 2.44 in", 70.0, 19.25, 2.44),
    ],
)
def test_parse_imperial(text, length_in, width_in, thickness_in):
    dims = parse_dimensions(text)
    assert dims.length_m == pytest.approx(length_in * IN_M, abs=1e-12)
    assert dims.width_m == pytest.approx(width_in * IN_M, abs=1e-12)
    assert dims.thickness_m == pytest.approx(thickness_in * IN_M, abs=1e-12)


def test_trade_example_in_metres():
    # 5'10" = 1.778 m, 19 1/4" = 0.48895 m, 2 7/16" = 0.0619125 m (exact inch = 0.0254 m).
    dims = parse_dimensions('5\'10" x 19 1/4" x 2 7/16"')
    assert (dims.length_m, dims.width_m, dims.thickness_m) == pytest.approx((1.778, 0.48895, 0.0619125), abs=1e-12)
    assert 5 * FT_M + 10 * IN_M == pytest.approx(1.778, abs=1e-12)


@pytest.mark.parametrize(
    ("text", "expected_m"),
    [
        ("178 x 49 x 6.2 cm", (1.78, 0.49, 0.062)),
        ("178x49x6.2cm", (1.78, 0.49, 0.062)),
        ("1780 x 490 x 62 mm", (1.78, 0.49, 0.062)),
        ("1.78m x 49cm x 62mm", (1.78, 0.49, 0.062)),
        ("274 X 57 X 7.5 CM", (2.74, 0.57, 0.075)),
    ],
)
def test_parse_metric(text, expected_m):
    dims = parse_dimensions(text)
    assert (dims.length_m, dims.width_m, dims.thickness_m) == pytest.approx(expected_m, abs=1e-12)


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("", "empty"),
        ("178 x 49 x 6.2", "no units"),
        ("5'10 x 19.25", "three figures"),
        ("5'10 x 19.25 x 2.44 x 3", "three figures"),
        ("5'13\" x 19\" x 2\"", "below 12"),
        ("5'10 x 19 5/4 x 2.44", "proper fraction"),
        ("5'10 x 19 1/0 x 2.44", "proper fraction"),
        ("five ten x 19 x 2", "cannot read"),
        ("178 x 49 x 6.2 kg", "cannot read"),
        ("5'10 x 10 x 12", "length > width > thickness"),
        ("25'0 x 19 x 2.5", "outside"),
        ("178 x 49 x 0.6 cm", "outside"),
        ("5'10 x 19.25 x 2.44 cm", "cannot read"),
    ],
)
def test_parse_errors_are_specific(text, message):
    with pytest.raises(BoardSpecError, match=message):
        parse_dimensions(text)


def test_formatting_examples():
    dims = parse_dimensions('5\'10" x 19 1/4" x 2 7/16"')
    assert format_dimensions(dims) == '5\'10" x 19 1/4" x 2 7/16"'
    assert format_dimensions(dims, "decimal") == "5'10 x 19.25 x 2.44"
    assert format_dimensions(parse_dimensions("178 x 49 x 6.2 cm"), "metric") == "178 x 49 x 6.2 cm"
    assert format_dimensions(parse_dimensions("6'0 1/2 x 20 x 2 1/2")) == '6\'0 1/2" x 20" x 2 1/2"'
    # 11 31/32" rounds up into the next foot
    assert format_dimensions(Dimensions(5 * FT_M + 11.99 * IN_M, 0.5, 0.06)).startswith("6'0\"")
    with pytest.raises(ValueError, match="trade, decimal, metric"):
        format_dimensions(dims, "cubits")


# Property tests: every notation the formatter prints parses back to the same text, and the
# parsed values lie within the printed resolution of the original.
_RESOLUTION_M = {"trade": IN_M / 32 + 1e-12, "decimal": 0.005 * IN_M + 1e-12, "metric": 0.0005 + 1e-12}


@st.composite
def dimensions(draw):
    length = draw(st.floats(0.85, 5.95))
    width = draw(st.floats(0.21, min(1.19, 0.9 * length)))
    thickness = draw(st.floats(0.017, min(0.39, 0.8 * width)))
    return Dimensions(length, width, thickness)


@settings(max_examples=150, deadline=None)
@given(dims=dimensions(), style=st.sampled_from(["trade", "decimal", "metric"]))
def test_dimensions_round_trip(dims, style):
    text = format_dimensions(dims, style)
    parsed = parse_dimensions(text)
    assert format_dimensions(parsed, style) == text
    for a, b in zip(
        (parsed.length_m, parsed.width_m, parsed.thickness_m), (dims.length_m, dims.width_m, dims.thickness_m)
    ):
        assert abs(a - b) <= _RESOLUTION_M[style]


@settings(max_examples=100, deadline=None)
@given(volume=st.floats(5.0, 600.0))
def test_volume_round_trip(volume):
    text = format_volume_l(volume)
    assert text.endswith(" L")
    parsed = parse_volume_l(text)
    assert format_volume_l(parsed) == text
    assert abs(parsed - volume) <= 0.05 + 1e-9


@pytest.mark.parametrize(("text", "litres"), [("32.5 L", 32.5), ("32.5L", 32.5), ("30", 30.0), ("30 l", 30.0),
                                              ("28.75 litres", 28.75), (" 45 liters ", 45.0), (30, 30.0)])
def test_parse_volume(text, litres):
    assert parse_volume_l(text) == litres


@pytest.mark.parametrize("text", ["", "thirty", "30 kg", "-30", "2 L", "900 L", "nan", "30 L L", True])
def test_parse_volume_errors(text):
    with pytest.raises(BoardSpecError):
        parse_volume_l(text)


# --- outlines and planform area -------------------------------------------------------

def _ellipse_stations(n: int, length: float = 1.8, width: float = 0.5):
    x = np.linspace(0.0, length, n)
    w = width * np.sqrt(np.clip(1.0 - (2.0 * x / length - 1.0) ** 2, 0.0, None))
    return list(zip(x, w))


def test_ellipse_area_and_convergence():
    # Ellipse area pi a b (any geometry handbook): 1.8 m x 0.5 m -> pi * 0.9 * 0.25 = 0.70686 m^2.
    exact = math.pi * 0.9 * 0.25
    assert exact == pytest.approx(0.70686, abs=1e-5)
    errors = [abs(Outline.from_stations(_ellipse_stations(n)).planform_area_m2 - exact) for n in (9, 17, 33, 65, 129)]
    assert all(b < a for a, b in zip(errors, errors[1:]))  # converges as stations are added
    assert errors[-1] / exact < 1e-3
    assert errors[2] / exact < 5e-3


def _tapered_rectangle(n_per_metre: int):
    # rectangle 0.5 m wide, ends tapering linearly over 0.3 m to a point at nose and tail
    x = np.linspace(0.0, 1.8, int(1.8 * n_per_metre) + 1)
    w = 0.5 * np.minimum(1.0, np.minimum(x, 1.8 - x) / 0.3)
    return list(zip(x, w))


def test_tapered_rectangle_area_and_convergence():
    # exact area: 1.2 m x 0.5 m + two triangles 0.3 m x 0.5 m / 2 = 0.75 m^2 (geometry)
    exact = 1.2 * 0.5 + 2 * 0.5 * 0.3 * 0.5
    errors = [abs(Outline.from_stations(_tapered_rectangle(k)).planform_area_m2 - exact) for k in (10, 20, 40, 80)]
    assert all(b < a for a, b in zip(errors, errors[1:]))
    assert errors[-1] / exact < 2e-3


def test_pchip_is_exact_for_straight_outlines():
    # PCHIP reproduces data on one straight line exactly (Fritsch and Carlson 1980).
    rect = Outline.from_stations([(0.0, 0.5), (0.6, 0.5), (1.2, 0.5), (1.8, 0.5)])
    assert rect.planform_area_m2 == pytest.approx(0.9, abs=1e-12)
    wedge = Outline.from_stations([(0.0, 0.0), (0.9, 0.25), (1.8, 0.5)])
    assert wedge.planform_area_m2 == pytest.approx(0.45, abs=1e-12)
    assert wedge.widths_at(0.45) == pytest.approx(0.125)


def test_outline_is_shape_preserving():
    stations = [(0.0, 0.0), (0.3, 0.3), (0.9, 0.5), (1.5, 0.36), (1.8, 0.2)]
    outline = Outline.from_stations(stations)
    x = np.linspace(0.0, 1.8, 1001)
    w = outline.widths_at(x)
    assert w.max() == pytest.approx(0.5, abs=1e-12)  # no overshoot above the widest station
    assert np.all(np.diff(w[x <= 0.9]) >= -1e-12) and np.all(np.diff(w[x >= 0.9]) <= 1e-12)
    assert outline.widths_at(-0.1) == 0.0 and outline.widths_at(2.0) == 0.0
    for xs, ws in stations:
        assert outline.widths_at(xs) == pytest.approx(ws, abs=1e-12)


def test_three_widths_default_outline():
    outline = Outline.from_three_widths(1.778, 0.30, 0.489, 0.85, 0.37)
    assert outline.source == "three widths"
    assert outline.nose_width_m == pytest.approx(0.30, abs=1e-12)  # measured 12 in from the nose
    assert outline.tail_width_m == pytest.approx(0.37, abs=1e-12)  # 12 in from the tail
    assert outline.max_width_m == pytest.approx(0.489, abs=1e-6)
    assert outline.wide_point_from_nose_m == pytest.approx(0.85, abs=2e-3)
    assert outline.widths_at(1.778) == pytest.approx(0.6 * 0.37)
    # area between the inscribed diamond-ish polygon and the bounding box
    ratio = outline.planform_area_m2 / (1.778 * 0.489)
    assert 0.6 < ratio < 0.85
    wider = Outline.from_three_widths(1.778, 0.33, 0.52, 0.85, 0.40)
    assert wider.planform_area_m2 > outline.planform_area_m2


@pytest.mark.parametrize(
    "args",
    [
        (1.778, 0.30, 0.489, 0.20, 0.37),  # wide point ahead of the nose station
        (1.778, 0.50, 0.489, 0.85, 0.37),  # nose wider than the wide point
        (0.60, 0.30, 0.489, 0.30, 0.37),  # too short
        (1.778, -0.3, 0.489, 0.85, 0.37),
    ],
)
def test_three_widths_errors(args):
    with pytest.raises(BoardSpecError):
        Outline.from_three_widths(*args)


@pytest.mark.parametrize(
    "stations",
    [
        [(0.0, 0.0), (0.9, 0.5)],
        [(0.0, 0.0), (0.9, 0.5), (0.9, 0.4), (1.8, 0.3)],
        [(0.0, 0.0), (0.9, -0.5), (1.8, 0.3)],
        [(0.0, 0.0), (0.9, float("nan")), (1.8, 0.3)],
        [(0.0, 0.0), (0.5, 0.5), (0.6, 0.3)],  # too short for a board
        [("a", 0.0), (0.9, 0.5), (1.8, 0.3)],
    ],
)
def test_bad_stations(stations):
    with pytest.raises(BoardSpecError):
        Outline.from_stations(stations)


def test_missing_nose_tip_is_added():
    outline = Outline.from_stations([(0.3, 0.3), (0.9, 0.5), (1.8, 0.3)])
    assert outline.x_m[0] == 0.0 and outline.width_m[0] == 0.0


def test_read_outline_csv(tmp_path):
    path = tmp_path / "outline.csv"
    path.write_text("# invented test board\nx_from_nose_cm,width_in\n0,0\n30.48,12\n90,19.25\n147.32,14.5\n178,9\n")
    outline = read_outline_csv(path)
    assert outline.length_m == pytest.approx(1.78)
    assert outline.nose_width_m == pytest.approx(12 * IN_M)
    bare = tmp_path / "bare.csv"
    bare.write_text("0,0\n0.3,0.3\n0.9,0.49\n1.8,0.22\n")
    assert read_outline_csv(bare).length_m == pytest.approx(1.8)


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("", "no stations"),
        ("x,width\n0,0\n0.9,0.5\n1.8,0.3\n", "unit"),
        ("x_m,width_m\n0,0\n0.9,wide\n1.8,0.3\n", "not two numbers"),
        ("x_m,width_m,thickness_m\n0,0,0\n", "two columns"),
    ],
)
def test_read_outline_csv_errors(tmp_path, content, message):
    path = tmp_path / "bad.csv"
    path.write_text(content)
    with pytest.raises(BoardSpecError, match=message):
        read_outline_csv(path)
    with pytest.raises(BoardSpecError, match="cannot read"):
        read_outline_csv(tmp_path / "absent.csv")


# --- volume estimate and the Board ---------------------------------------------------

def test_volume_estimate_and_plausibility():
    # Common practice, no published source: boards are about 0.55-0.6 of their box volume
    # (5'10" x 19 1/4" x 2 7/16" boards are sold at about 29-31 L; from memory).
    dims = parse_dimensions('5\'10" x 19 1/4" x 2 7/16"')
    assert dims.box_volume_l == pytest.approx(53.82, abs=0.01)
    assert 28.0 < estimate_volume_l(dims) < 32.0
    assert volume_plausibility(30.0, dims) is None
    assert "1.11 of the box volume" in volume_plausibility(60.0, dims)
    assert "0.28 of the box volume" in volume_plausibility(15.0, dims)


def test_board_from_spec_estimates_volume_and_outline():
    board = Board.from_spec(name="test board", dims="5'10 x 19.25 x 2.44", mass_kg="3kg", construction="PU",
                            fins="thruster", model="Test model", version="2")
    assert board.volume_is_estimate and 28.0 < board.volume_l < 32.0
    assert board.outline.source == "default"
    assert board.planform_area_m2 == pytest.approx(board.outline.planform_area_m2)
    assert board.mass_kg == 3.0 and board.fins == "thruster"
    stated = Board.from_spec(name="b", dims="5'10 x 19.25 x 2.44", volume="30.5 L", mass_kg="6.6lb")
    assert not stated.volume_is_estimate and stated.volume_l == 30.5
    assert stated.mass_kg == pytest.approx(6.6 * 0.45359237)


def test_board_warns_on_implausible_volume():
    with pytest.warns(DataQualityWarning, match="box volume"):
        Board.from_spec(name="b", dims="5'10 x 19.25 x 2.44", volume=55)


def test_board_with_outline_checks_consistency():
    stations = [(0.0, 0.0), (0.3048, 0.30), (0.85, 0.489), (1.4732, 0.37), (1.778, 0.22)]
    board = Board.from_spec(name="b", dims="5'10 x 19.25 x 2.44", volume=30, outline=stations)
    assert board.outline.source == "stations"
    with pytest.warns(DataQualityWarning, match="outline length"):
        Board.from_spec(name="b", dims="6'6 x 19.25 x 2.44", volume=34, outline=stations)
    only_outline = Board.from_spec(name="b", volume=30, outline=stations)
    assert only_outline.length_m == pytest.approx(1.778) and only_outline.thickness_m is None


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({}, "needs dimensions"),
        ({"volume": 30, "mass_kg": "heavy"}, "board mass"),
        ({"volume": 30, "mass_kg": 200}, "outside"),
        ({"dims": "178 x 49 x 6.2"}, "no units"),
    ],
)
def test_board_errors(kwargs, message):
    with pytest.raises(BoardSpecError, match=message):
        Board.from_spec(name="b", **kwargs)


def test_no_warning_for_plausible_board():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        Board.from_spec(name="b", dims="9'0 x 22.5 x 3", volume=70)

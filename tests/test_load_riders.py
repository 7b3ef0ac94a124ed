"""Rider model and mass parsing."""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from sessions.errors import BoardSpecError, RiderSpecError
from sessions.riders import ABILITY_LEVELS, Rider, format_mass, parse_mass_kg


@pytest.mark.parametrize(
    ("text", "kg"),
    [
        ("80", 80.0),
        ("80kg", 80.0),
        ("80 kg", 80.0),
        ("80.5 KG", 80.5),
        (80, 80.0),
        # 1 lb = 0.45359237 kg exactly (international yard and pound agreement, 1959)
        ("176lb", 176 * 0.45359237),
        ("176 lbs", 176 * 0.45359237),
        ("176 pounds", 176 * 0.45359237),
    ],
)
def test_parse_mass(text, kg):
    assert parse_mass_kg(text) == pytest.approx(kg, rel=1e-12)


@pytest.mark.parametrize("text", ["", "eighty", "80 st", "-80", "0", "nan", "inf kg", "80 kg kg", True])
def test_parse_mass_errors(text):
    with pytest.raises(RiderSpecError):
        parse_mass_kg(text)


def test_parse_mass_error_class_is_selectable():
    with pytest.raises(BoardSpecError, match="board mass"):
        parse_mass_kg("light", what="board mass", error_cls=BoardSpecError)


@settings(max_examples=100, deadline=None)
@given(mass=st.floats(1.0, 300.0), unit=st.sampled_from(["kg", "lb"]))
def test_mass_round_trip(mass, unit):
    text = format_mass(mass, unit)
    assert format_mass(parse_mass_kg(text), unit) == text
    assert abs(parse_mass_kg(text) - mass) <= 0.05 * (0.45359237 if unit == "lb" else 1.0) + 1e-9


def test_rider_model():
    rider = Rider.from_spec("Ana", "176lb", gear_mass="2.5kg", ability="Advanced")
    assert rider.body_mass_kg == pytest.approx(79.832, abs=1e-3)
    assert rider.total_mass_kg == pytest.approx(79.832 + 2.5, abs=1e-3)
    assert rider.ability == "advanced"
    assert Rider("Bo", 70.0).gear_mass_kg == 0.0
    assert ABILITY_LEVELS[0] == "beginner"


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"body_mass_kg": 5.0}, "body mass"),
        ({"body_mass_kg": 80.0, "gear_mass_kg": 40.0}, "gear mass"),
        ({"body_mass_kg": 80.0, "ability": "pro"}, "valid names"),
        ({"body_mass_kg": "heavy"}, "not a number"),
    ],
)
def test_rider_errors(kwargs, message):
    with pytest.raises(RiderSpecError, match=message):
        Rider(name="x", **kwargs)

"""Buoyancy and load sharing (Archimedes) and facts of the trade."""

from __future__ import annotations

import gsw
import pytest

from sessions.physics import buoyancy
from sessions.physics.water import density_kg_m3
from sessions.units import G_N

RHO_SEA_CT15 = float(gsw.rho(35.0, 15.0, 0.0))  # TEOS-10, 1025.8476 kg/m^3
RHO_FRESH_15 = 999.1026  # IAPWS-95 at 15 degC (Wagner and Pruss 2002)


@pytest.mark.parametrize(
    ("volume_l", "rho", "expected_n"),
    [
        (30.0, RHO_SEA_CT15, 301.804),  # Archimedes F = rho g V, g_n = 9.80665 (CGPM 1901)
        (30.0, RHO_FRESH_15, 293.935),
        (45.0, RHO_SEA_CT15, 452.706),
        (70.0, RHO_SEA_CT15, 704.209),
    ],
)
def test_buoyant_force_archimedes(volume_l, rho, expected_n):
    # Archimedes, On Floating Bodies I.7; values recomputed independently with g_n exact.
    assert buoyancy.buoyant_force_n(volume_l / 1000.0, rho) == pytest.approx(expected_n, abs=0.01)


def test_flotation_mass_does_not_depend_on_gravity():
    # F_B / g = rho V (Archimedes): the "kilograms of lift" are the same on any planet.
    assert buoyancy.buoyant_force_n(0.03, 1000.0, g_mps2=3.7) / 3.7 == pytest.approx(30.0)
    assert buoyancy.flotation_mass_kg(0.03, RHO_FRESH_15) == pytest.approx(29.973, abs=1e-3)


def test_displaced_volume():
    # vol = m / rho: 75 + 3 kg in sea water (CT 15) displaces 76.03 L; fresh 20 degC 78.14 L.
    assert buoyancy.displaced_volume_m3(78.0, RHO_SEA_CT15) * 1000 == pytest.approx(76.03, abs=0.01)
    assert buoyancy.displaced_volume_m3(78.0, 998.2072) * 1000 == pytest.approx(78.14, abs=0.01)


# --- facts of the trade (common practice, no published source) -----------------------

def test_thirty_litres_gives_about_thirty_kg_of_lift():
    # Common practice, no published source: "a litre floats a kilogram", so 30 L ~ 300 N.
    force = buoyancy.buoyant_force_n(0.030, density_kg_m3("fresh"))
    assert force == pytest.approx(300.0, rel=0.03)
    assert force / G_N == pytest.approx(30.0, rel=0.01)


def test_three_kg_board_floats_about_ten_percent_submerged():
    # Common practice, no published source: a 3 kg, 30 L board sits about 10 % under.
    assert buoyancy.submerged_fraction(3.0, 0.030, density_kg_m3("fresh")) == pytest.approx(0.100, abs=0.005)


def test_lifted_share_for_80_kg_rider():
    # Common practice, no published source: 80 kg rider, fully submerged 30 L board in fresh
    # water lifts about 36.1 % of the total load with a 3 kg board, 36.5-36.6 % with 2 kg.
    rho = density_kg_m3("fresh")
    heavy = buoyancy.lifted_share(0.030, rho, 80.0 + 3.0)
    light = buoyancy.lifted_share(0.030, rho, 80.0 + 2.0)
    assert heavy == pytest.approx(0.361, abs=0.0015)
    assert 0.365 <= light <= 0.3665
    assert 0.0 < light - heavy < 0.01  # well under one percentage point


def test_sinking_board_is_reported_not_hidden():
    assert buoyancy.submerged_fraction(40.0, 0.030, 1000.0) > 1.0


def test_ratios_and_loading():
    assert buoyancy.litres_per_kg(30.0, 80.0) == pytest.approx(0.375)
    # loading = m g / A
    assert buoyancy.planform_loading_n_m2(83.0, 0.65) == pytest.approx(83.0 * G_N / 0.65)


@pytest.mark.parametrize(
    "call",
    [
        lambda: buoyancy.buoyant_force_n(-0.01, 1000.0),
        lambda: buoyancy.flotation_mass_kg(0.03, 0.0),
        lambda: buoyancy.lifted_share(0.03, 1000.0, 0.0),
        lambda: buoyancy.submerged_fraction(3.0, 0.0, 1000.0),
        lambda: buoyancy.litres_per_kg(30.0, float("nan")),
    ],
)
def test_bad_arguments_raise(call):
    with pytest.raises(ValueError):
        call()

"""Savitsky (1964) planing lift and floatlift's planing-onset band."""

from __future__ import annotations

import math

import numpy as np
import pytest

from sessions.errors import ConditionsError, ModelValidityWarning
from sessions.physics import planing, regimes
from sessions.physics.buoyancy import displaced_volume_m3
from sessions.units import G_N

# --- the lift equation (pure formula values) ---------------------------------------
# Savitsky, D., 1964, Hydrodynamic design of planing hulls, Marine Technology 1(1), 71-95:
# eq. 15 (C_L0), eq. 16 (deadrise), centre of pressure. Expected values recomputed
# independently from the printed formulas.


@pytest.mark.parametrize(
    ("tau", "lam", "cv", "beta", "c_l0", "c_lb"),
    [
        (4.0, 2.0, 3.0, 5.0, 0.093860, 0.086001),
        (4.0, 2.0, 3.0, 10.0, 0.093860, 0.078142),
        (2.0, 4.0, 1.0, 0.0, 0.428709, 0.428709),
        (6.0, 1.5, 5.0, 10.0, 0.109837, 0.092564),
        (15.0, 1.0, 13.0, 30.0, 0.236623, 0.154500),
    ],
)
def test_lift_coefficients(tau, lam, cv, beta, c_l0, c_lb):
    got = planing.lift_coefficient_flat(tau, lam, cv)  # eq. 15
    assert got == pytest.approx(c_l0, abs=1e-6)
    assert planing.lift_coefficient_deadrise(got, beta) == pytest.approx(c_lb, abs=1e-6)  # eq. 16


@pytest.mark.parametrize(("cv", "lam", "cp"), [(3.0, 2.0, 0.67914), (1.0, 4.0, 0.38176), (5.0, 1.5, 0.73341)])
def test_center_of_pressure(cv, lam, cp):
    # Savitsky 1964: C_P = 0.75 - 1 / (5.21 Cv^2 / lam^2 + 2.39) (recomputed).
    assert planing.center_of_pressure_fraction(cv, lam) == pytest.approx(cp, abs=1e-5)


def test_surfboard_scale_lift():
    # rho = 1025, b = 0.5 m, V = 6 m/s, tau = 4 deg, lam = 2, beta = 0 -> Cv = 2.70960,
    # C_L0 = 0.097447, L = 449.48 N (eq. 15, recomputed independently).
    lift = planing.lift_n(6.0, 0.5, 4.0, 2.0, 1025.0)
    assert 6.0 / math.sqrt(G_N * 0.5) == pytest.approx(2.70960, abs=1e-5)
    assert lift == pytest.approx(449.48, abs=0.01)


def test_yacht_design_worked_example():
    # Larsson, L. and Eliasson, R. E., Principles of Yacht Design, p. 204 planing example,
    # as reproduced by the assertions of ydeos/ydeos_hydrodynamics tests/test_savitsky.py
    # (the book's printed table not seen): V = 20.6 m/s, m = 9750 kg, b = 2.74 m,
    # beta = 17.9 deg, rho = 1025; at the equilibrium trim 4.168707 deg:
    # Cv = 3.974034, C_Lbeta = 0.058559, C_L0 = 0.085086, lam = 1.812418, L_cp = 3.543532 m.
    speed, mass, beam, beta, tau = 20.6, 9750.0, 2.74, 17.9, 4.168706856548404
    lam = planing.wetted_length_ratio(mass * G_N, speed, beam, tau, 1025.0, beta)
    cv = regimes.froude_beam(speed, beam)
    assert cv == pytest.approx(3.9740342082443276, rel=1e-6)
    assert lam == pytest.approx(1.8124177483423276, rel=1e-5)
    c_l0 = planing.lift_coefficient_flat(tau, lam, cv)
    assert c_l0 == pytest.approx(0.08508584811026254, rel=1e-5)
    assert planing.lift_coefficient_deadrise(c_l0, beta) == pytest.approx(0.05855929710250599, rel=1e-5)
    lcp = planing.center_of_pressure_fraction(cv, lam) * lam * beam
    assert lcp == pytest.approx(3.5435319901894853, rel=1e-4)


def test_savitsky_table1_wetted_length():
    # Savitsky 1964, Table 1 worked example (inputs as transcribed in an open reproduction,
    # knix2000/Savitsky): displacement 60,000 lb, beam 14 ft, 40 kn = 67.5 ft/s,
    # beta = 10 deg, rho = 1.9905 slug/ft^3, g = 32.174 ft/s^2, trim 2 deg; the paper lists
    # lam = 3.85 (read from a chart). Eqs. 15-16 solved exactly give 3.766: within 3 %.
    lam = planing.wetted_length_ratio(60000.0, 67.5, 14.0, 2.0, 1.9905, 10.0, g_mps2=32.174)
    assert lam == pytest.approx(3.766, abs=2e-3)
    assert lam == pytest.approx(3.85, rel=0.03)


def test_wetted_length_ratio_inverts_lift():
    for tau, beta in ((3.0, 0.0), (8.0, 5.0), (12.0, 20.0)):
        lam = planing.wetted_length_ratio(800.0, 5.0, 0.45, tau, 1025.0, beta)
        assert planing.lift_n(5.0, 0.45, tau, lam, 1025.0, beta, validity="ignore") == pytest.approx(800.0, rel=1e-9)


# --- validity ranges ----------------------------------------------------------------
# Savitsky 1964: eq. 15 for 0.60 <= Cv <= 13, 2 <= tau <= 15 deg, lam <= 4; eq. 16 beta <= 30.

@pytest.mark.parametrize(
    "kwargs",
    [
        {"trim_deg": 4.0, "lam": 2.0, "cv": 0.5},
        {"trim_deg": 4.0, "lam": 2.0, "cv": 13.5},
        {"trim_deg": 1.5, "lam": 2.0, "cv": 3.0},
        {"trim_deg": 16.0, "lam": 2.0, "cv": 3.0},
        {"trim_deg": 4.0, "lam": 4.5, "cv": 3.0},
    ],
)
def test_outside_validity_is_flagged(kwargs):
    with pytest.warns(ModelValidityWarning):
        planing.lift_coefficient_flat(kwargs["trim_deg"], kwargs["lam"], kwargs["cv"])
    with pytest.raises(ConditionsError):
        planing.lift_coefficient_flat(kwargs["trim_deg"], kwargs["lam"], kwargs["cv"], validity="raise")
    assert planing.check_validity(cv=kwargs["cv"], trim_deg=kwargs["trim_deg"], lam=kwargs["lam"], mode="ignore")


def test_edges_of_validity_are_accepted():
    assert planing.check_validity(cv=0.6, trim_deg=2.0, lam=4.0, deadrise_deg=30.0, mode="raise") == []
    assert planing.check_validity(cv=13.0, trim_deg=15.0, lam=0.1, deadrise_deg=0.0, mode="raise") == []
    with pytest.warns(ModelValidityWarning, match="deadrise"):
        planing.lift_coefficient_deadrise(0.1, 31.0)


def test_onset_rejects_trim_outside_range():
    with pytest.raises(ConditionsError, match="trim"):
        planing.predicted_onset_band_mps(800.0, 0.45, 1.3, density_kg_m3=1025.0, trim_range_deg=(1.0, 8.0))
    with pytest.raises(ConditionsError, match="low to high"):
        planing.predicted_onset_band_mps(800.0, 0.45, 1.3, density_kg_m3=1025.0, trim_range_deg=(10.0, 6.0))


# --- the onset criterion --------------------------------------------------------------

LOAD_N = 83.0 * G_N
RHO = 1025.0


def test_derived_dynamic_share_criterion():
    # Derived here from eq. 15 (not a published criterion): the dynamic and hydrostatic terms
    # are equal when Cv = sqrt(0.0055 / 0.0120) lam = 0.6770 lam; at lam = 2, Cv = 3 the
    # hydrostatic share is 16.9 %.
    assert planing.dynamic_share(2.0, 0.6770 * 2.0) == pytest.approx(0.5, abs=1e-4)
    assert 1.0 - planing.dynamic_share(2.0, 3.0) == pytest.approx(0.169, abs=1e-3)


@pytest.mark.parametrize("trim", [6.0, 9.0, 12.0])
@pytest.mark.parametrize(("beam", "available"), [(0.42, 1.25), (0.50, 1.60), (0.52, 2.0)])
def test_onset_point_meets_criterion_and_nothing_slower_does(trim, beam, available):
    point = planing.onset_point(LOAD_N, beam, available, trim, RHO)
    # at onset: lift = load, wetted length fits, dynamic lift carries at least half
    lam = planing.wetted_length_ratio(LOAD_N, point.speed_mps, beam, trim, RHO)
    assert lam == pytest.approx(point.wetted_length_ratio, rel=1e-9)
    assert point.wetted_length_m <= min(available, 4.0 * beam) * (1 + 1e-6)
    assert point.dynamic_share >= 0.5 - 1e-6
    assert planing.CV_RANGE[0] <= point.speed_coefficient <= planing.CV_RANGE[1]
    # 2 % slower, one condition fails
    slower = 0.98 * point.speed_mps
    lam_s = planing.wetted_length_ratio(LOAD_N, slower, beam, trim, RHO)
    cv_s = slower / math.sqrt(G_N * beam)
    fails = lam_s * beam > min(available, 4.0 * beam) or planing.dynamic_share(lam_s, cv_s) < 0.5
    assert fails


def test_more_area_or_less_load_plans_sooner():
    base = planing.predicted_onset_band_mps(LOAD_N, 0.45, 1.3, density_kg_m3=RHO)
    wider = planing.predicted_onset_band_mps(LOAD_N, 0.50, 1.3, density_kg_m3=RHO)
    longer = planing.predicted_onset_band_mps(LOAD_N, 0.45, 1.7, density_kg_m3=RHO)
    lighter = planing.predicted_onset_band_mps(0.8 * LOAD_N, 0.45, 1.3, density_kg_m3=RHO)
    for other in (wider, lighter):
        assert other[0] < base[0] and other[1] < base[1]
    assert longer[0] <= base[0] and longer[1] < base[1]
    assert base[0] < base[1]


def test_onset_falls_steadily_with_load_and_beam():
    loads = np.linspace(500.0, 1200.0, 8)
    speeds = [planing.onset_point(w, 0.47, 1.3, 8.0, RHO).speed_mps for w in loads]
    assert np.all(np.diff(speeds) > 0)
    beams = np.linspace(0.40, 0.60, 6)
    speeds = [planing.onset_point(LOAD_N, b, 1.3, 8.0, RHO).speed_mps for b in beams]
    assert np.all(np.diff(speeds) < 0)


@pytest.mark.parametrize(
    ("total_kg", "beam", "available"),
    [
        (83.0, 0.414, 1.245),  # 5'10" shortboard, 80 kg rider
        (63.0, 0.40, 1.20),  # light rider, short board
        (100.0, 0.46, 1.45),  # heavy rider, 6'10" board
        (85.0, 0.50, 1.30),  # wide short board
        (90.0, 0.50, 1.92),  # 9'0" longboard
    ],
)
def test_onset_in_pre_planing_froude_band(total_kg, beam, available):
    # Radojcic et al. 2014 (Polish Maritime Research 21(2), 9-26): planing hulls beat
    # displacement hulls above Fn_vol ~ 1 and are fully planing from Fn_vol ~ 3-3.5; the
    # pre-planing band is about 1-3 (Savitsky 2003, from memory). The onset band must lie
    # above the displacement regime and below full planing, its middle within 1-3.
    low, high = planing.predicted_onset_band_mps(total_kg * G_N, beam, available, density_kg_m3=RHO)
    vol = displaced_volume_m3(total_kg, RHO)
    f_low, f_high = regimes.froude_volume(low, vol), regimes.froude_volume(high, vol)
    assert 1.0 <= f_low < f_high <= 3.5
    assert 1.0 <= regimes.froude_volume(0.5 * (low + high), vol) <= 3.0


def test_no_onset_inside_validity_gives_nan_and_warning():
    with pytest.warns(ModelValidityWarning, match="no planing onset"):
        point = planing.onset_point(200000.0, 0.3, 0.5, 6.0, RHO)
    assert math.isnan(point.speed_mps) and point.limited_by == "none"


def test_deadrise_delays_onset():
    # eq. 16: deadrise lowers lift at given lam, so a vee bottom needs more speed.
    flat = planing.onset_point(LOAD_N, 0.47, 1.3, 8.0, RHO, 0.0).speed_mps
    vee = planing.onset_point(LOAD_N, 0.47, 1.3, 8.0, RHO, 10.0).speed_mps
    assert vee > flat

"""Wave celerity and breaking (linear theory, McCowan 1894) and speed regimes."""

from __future__ import annotations

import math

import pytest

from sessions.physics import regimes, waves
from sessions.units import FT_M, KN_MPS


# --- waves ------------------------------------------------------------------------

def test_shallow_water_celerity():
    # Linear long-wave theory, c = sqrt(g d) (Dean and Dalrymple 1991, eq. 4.34 limit):
    # d = 1.2821 m -> 3.5458 m/s (recomputed independently).
    assert waves.shallow_water_celerity_mps(1.2821) == pytest.approx(3.5458, abs=1e-4)
    assert waves.shallow_water_celerity_mps(0.0) == 0.0


@pytest.mark.parametrize(
    ("height_m", "depth_m", "celerity_mps", "solitary_mps"),
    [(0.5, 0.6410, 2.5073, 3.3451), (1.0, 1.2821, 3.5458, 4.7307), (2.0, 2.5641, 5.0145, 6.6902)],
)
def test_mccowan_breaking(height_m, depth_m, celerity_mps, solitary_mps):
    # McCowan, J., 1894, Phil. Mag. (5) 38, 351: breaking at H/d = 0.78. Celerity at breaking
    # from c = sqrt(g d) and the solitary-wave c = sqrt(g (d + H)) (values recomputed).
    assert waves.breaker_index("mccowan") == 0.78
    assert waves.breaking_depth_m(height_m) == pytest.approx(depth_m, abs=1e-4)
    assert waves.breaking_wave_celerity_mps(height_m) == pytest.approx(celerity_mps, abs=1e-4)
    assert waves.breaking_wave_celerity_mps(height_m, model="solitary") == pytest.approx(solitary_mps, abs=1e-4)
    # the inverse: the smallest breaking wave whose celerity reaches that speed
    assert waves.min_breaking_wave_height_m(celerity_mps) == pytest.approx(height_m, rel=1e-4)
    assert waves.min_breaking_wave_height_m(solitary_mps, model="solitary") == pytest.approx(height_m, rel=1e-4)


def test_miche_shallow_limit():
    # Miche 1944: H/L = 0.142 tanh(kd) -> shallow limit H/d = 0.142 * 2 pi = 0.8922.
    assert waves.breaker_index("miche") == pytest.approx(0.8922, abs=1e-4)


def test_min_wave_grows_with_speed_squared():
    h1 = waves.min_breaking_wave_height_m(3.0)
    h2 = waves.min_breaking_wave_height_m(6.0)
    assert h2 == pytest.approx(4.0 * h1)


def test_unknown_names_list_valid_ones():
    with pytest.raises(ValueError, match="mccowan"):
        waves.breaker_index("steep")
    with pytest.raises(ValueError, match="shallow, solitary"):
        waves.min_breaking_wave_height_m(3.0, model="deep")
    with pytest.raises(ValueError):
        waves.shallow_water_celerity_mps(-1.0)


# --- regimes ------------------------------------------------------------------------

def test_hull_speed_froude_equivalent():
    # Traditional hull-speed rule V[kn] = 1.34 sqrt(LWL[ft]) equals Fn_L = 0.39873
    # (1 kn = 1852/3600 m/s, 1 ft = 0.3048 m, exact; conversion recomputed).
    assert regimes.HULL_SPEED_FROUDE == pytest.approx(0.39873, abs=1e-5)


@pytest.mark.parametrize(("lwl_ft", "expected_kn"), [(6.0, 3.2823), (7.0, 3.5453), (9.0, 4.0200)])
def test_hull_speed_rule(lwl_ft, expected_kn):
    # V = 1.34 sqrt(LWL_ft) knots (traditional rule; values recomputed): 6 ft -> 1.6886 m/s.
    speed = regimes.hull_speed_mps(lwl_ft * FT_M)
    assert speed / KN_MPS == pytest.approx(expected_kn, abs=1e-4)
    assert speed / KN_MPS == pytest.approx(1.34 * math.sqrt(lwl_ft), rel=1e-12)


@pytest.mark.parametrize(
    ("displaced_l", "v1", "v3"),
    [(76.03, 2.038, 6.115), (61.41, 1.967, 5.901), (90.66, 2.099, 6.297)],
)
def test_volumetric_froude_speeds(displaced_l, v1, v3):
    # Fn_vol = V / sqrt(g vol^(1/3)); 75+3, 60+3 and 90+3 kg in sea water (recomputed).
    vol = displaced_l / 1000.0
    assert regimes.speed_for_froude_volume(1.0, vol) == pytest.approx(v1, abs=1e-3)
    assert regimes.speed_for_froude_volume(3.0, vol) == pytest.approx(v3, abs=1e-3)
    assert regimes.froude_volume(v3, vol) == pytest.approx(3.0, abs=1e-3)


def test_regime_bands():
    # Savitsky 2003 / Radojcic et al. 2014: < 1 displacement, 1-3 pre-planing, > 3 planing.
    assert regimes.regime_from_froude_vol(0.5) == "displacement"
    assert regimes.regime_from_froude_vol(2.0) == "pre-planing"
    assert regimes.regime_from_froude_vol(3.5) == "planing"


def test_beam_froude():
    # Cv = V / sqrt(g b): b = 0.45 / 0.50 / 0.55 m -> sqrt(g b) = 2.1007 / 2.2143 / 2.3224 m/s.
    for beam, unit_speed in ((0.45, 2.1007), (0.50, 2.2143), (0.55, 2.3224)):
        assert regimes.froude_beam(unit_speed, beam) == pytest.approx(1.0, abs=1e-4)

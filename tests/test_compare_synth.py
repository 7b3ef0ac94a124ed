"""Synthetic session libraries with a known, built-in board effect (no tests here).

Invented scenario: riders of a made-up beach ("Gullrock Point") test boards named after
local birds. Onset speed of a ride = base + slope * (planform loading - 1300 N/m^2) +
board effect + session effect (day-to-day) + ride noise, so the true difference in
median onset between two boards with equal loading is exactly the difference of their
board effects (the distributions are shifted copies of each other).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from sessions.compare import RIDE_COLUMNS, SESSION_COLUMNS
from sessions.units import G_N

#: Invented boards: volume [L], planform area [m^2], board mass [kg], model, version.
BOARDS = {
    "Tern 6'0": (30.0, 0.62, 2.8, "Tern", "v1"),
    "Tern 6'0 v2": (30.5, 0.64, 2.8, "Tern", "v2"),
    "Petrel 6'4": (36.0, 0.70, 3.1, "Petrel", "v1"),
    "Skua 5'10": (27.0, 0.58, 2.6, "Skua", "v1"),
    "Gannet 7'2": (48.0, 0.86, 3.6, "Gannet", "v1"),
}
#: Invented riders: body mass [kg], gear mass [kg].
RIDERS = {"Ines": (62.0, 2.0), "Marlo": (78.0, 3.0), "Ottilie": (70.0, 2.5), "Bram": (88.0, 3.5)}


@dataclass
class Truth:
    base_mps: float = 3.8
    slope_mps_per_npm2: float = 0.0012
    wave_mps_per_m: float = -0.15
    session_sd_mps: float = 0.15
    ride_sd_mps: float = 0.25


def make_library(
    plan: dict[tuple[str, str], int],
    *,
    rides_per_session: int = 6,
    board_effect_mps: dict[str, float] | None = None,
    truth: Truth | None = None,
    seed: int = 0,
    wave_face_m: tuple[float, float] = (0.6, 2.4),
    missed_rate: dict[str, float] | None = None,
    fixed_rides: bool = False,
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Rides and sessions frames. ``plan`` maps (board, rider) -> number of sessions."""
    truth = truth or Truth()
    rng = np.random.default_rng(seed)
    board_effect_mps = board_effect_mps or {}
    missed_rate = missed_rate or {}
    rides, sessions = [], []
    day0 = pd.Timestamp("2026-03-01 07:00", tz="UTC")
    sid = 0
    for (board, rider), n_sessions in plan.items():
        vol, area, bmass, model, version = BOARDS[board]
        body, gear = RIDERS[rider]
        loading = (body + gear + bmass) * G_N / area
        for _ in range(n_sessions):
            sid += 1
            start = day0 + pd.Timedelta(days=sid, hours=int(rng.integers(0, 8)))
            wave = float(rng.uniform(*wave_face_m))
            sess_eff = rng.normal(0.0, truth.session_sd_mps)
            n = int(rides_per_session) if fixed_rides else max(2, int(rng.poisson(rides_per_session)))
            onset = (
                truth.base_mps + truth.slope_mps_per_npm2 * (loading - 1300.0)
                + truth.wave_mps_per_m * (wave - 1.5) + board_effect_mps.get(board, 0.0)
                + sess_eff + rng.normal(0.0, truth.ride_sd_mps, n)
            )
            duration = rng.gamma(4.0, 3.0, n)
            missed = int(rng.poisson(missed_rate.get(board, 2.0)))
            dur_s = 5400.0
            sessions.append({
                "session_id": f"s{sid:04d}", "sha256": f"{sid:064x}", "rider": rider, "board": board,
                "board_model": model, "board_version": version, "start": start, "duration_s": dur_s,
                "time_paddle_s": 2400.0, "time_wait_s": 2700.0, "time_ride_s": float(duration.sum()),
                "rides": n, "missed_waves": missed, "rides_per_hour": n / (dur_s / 3600.0),
                "wave_face_m": wave, "period_s": 10.0, "rider_body_mass_kg": body,
                "rider_gear_mass_kg": gear, "board_mass_kg": bmass, "board_volume_l": vol,
                "planform_area_m2": area, "score_paddling": int(rng.integers(2, 6)),
                "score_catching": int(rng.integers(2, 6)), "score_speed": int(rng.integers(2, 6)),
                "score_control": int(rng.integers(2, 6)),
                "feedback_note": f"{rider} on {board}, day {sid}",
            })
            for i in range(n):
                rides.append({
                    "session_id": f"s{sid:04d}", "ride_index": i, "rider": rider, "board": board,
                    "board_model": model, "board_version": version, "session_start": start,
                    "start": start + pd.Timedelta(minutes=5 * i), "onset_speed_mps": float(onset[i]),
                    "onset_ci_lo_mps": float(onset[i]) - 0.2, "onset_ci_hi_mps": float(onset[i]) + 0.2,
                    "duration_s": float(duration[i]), "distance_m": float(duration[i] * 5.0),
                    "peak_speed_mps": float(onset[i] + 2.0), "mean_speed_mps": float(onset[i] + 0.8),
                    "wave_face_m": wave, "period_s": 10.0, "rider_body_mass_kg": body,
                    "rider_gear_mass_kg": gear, "board_mass_kg": bmass, "board_volume_l": vol,
                    "planform_area_m2": area,
                })
    return (
        pd.DataFrame(rides, columns=list(RIDE_COLUMNS)),
        pd.DataFrame(sessions, columns=list(SESSION_COLUMNS)),
    )

"""Shared test helper: simulate a session, analyse it, pair true and detected rides."""

from __future__ import annotations

from collections.abc import Iterator

import pandas as pd

from sessions.analysis import analyse
from sessions.simulate import SimConfig, simulate_session
from sessions.track import Track, TrackMeta


def matched_rides(config: SimConfig) -> Iterator[tuple[dict, object, float]]:
    """Yield ``(true ride, detected ride, true onset instant [s])`` for one simulated session.

    A detected ride matches the first unused true ride it overlaps in time; the instant is
    in seconds since the track's first fix, the time base of the analysis.
    """
    sim = simulate_session(config)
    track = Track(sim.points.reset_index(drop=True), TrackMeta(source=f"sim-{config.seed}.gpx", sha256="0" * 64))
    start = track.points["time"].iloc[0]
    rides = analyse(track).rides
    used: set[int] = set()
    for r in sim.truth["rides"]:
        ts = (pd.Timestamp(r["start"]) - start).total_seconds()
        te = (pd.Timestamp(r["end"]) - start).total_seconds()
        for k, d in enumerate(rides):
            if k in used or not (d.first_ride_s <= te and d.end_s >= ts):
                continue
            used.add(k)
            yield r, d, ts
            break

"""Small page helpers shared by the dashboard's pages: units, labels, safe text."""

from __future__ import annotations

import re

import pandas as pd
import streamlit as st

from dashboard.units import SPEED_UNITS, SYSTEM_LABELS, SYSTEMS, DisplayUnits

CAUTION = ("Every figure here is an estimate from GPS tracks and models, not safety advice. "
           "Surf within your ability and follow local rules and lifeguards.")
NONE_LABEL = "(none)"

_MD_SPECIAL = re.compile(r"([\\`*_{}\[\]()#+\-.!|>~<$:])")


def md(text) -> str:
    """User text made safe for Markdown (every special character escaped; no HTML)."""
    return _MD_SPECIAL.sub(r"\\\1", str(text))


def units_sidebar() -> DisplayUnits:
    """The unit choice in the sidebar (kept across pages in the session state)."""
    st.sidebar.subheader("Units")
    system = st.sidebar.radio("Unit system", SYSTEMS, format_func=SYSTEM_LABELS.get, key="unit_system")
    speeds = SPEED_UNITS[system]
    if st.session_state.get("speed_unit") not in speeds:
        st.session_state["speed_unit"] = speeds[0]
    speed = st.sidebar.selectbox("Speed", speeds, key="speed_unit")
    return DisplayUnits(system, speed)


def current_units() -> DisplayUnits:
    system = st.session_state.get("unit_system", "metric")
    speed = st.session_state.get("speed_unit", SPEED_UNITS[system][0])
    if speed not in SPEED_UNITS[system]:
        speed = SPEED_UNITS[system][0]
    return DisplayUnits(system, speed)


def session_label(row) -> str:
    """One line naming a session: day and time (UTC), rider, board, rides, id."""
    start = pd.Timestamp(row["start"]).tz_convert("UTC")
    rider = row["rider"] if isinstance(row["rider"], str) else "no rider"
    board = row["board"] if isinstance(row["board"], str) else "no board"
    return f"{start:%Y-%m-%d %H:%M} · {rider} · {board} · {int(row['rides'])} rides (#{int(row['session_id'])})"


def empty_library_note() -> None:
    st.info("The library has no sessions yet. Add GPX tracks on the 'Add tracks' page, "
            "or build the demo library with `floatlift demo`.")


def count(n: int, noun: str) -> str:
    """``1 session``, ``2 sessions``."""
    return f"{n} {noun}" if n == 1 else f"{n} {noun}s"

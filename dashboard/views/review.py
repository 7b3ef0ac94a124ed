"""Session review: one session's path by state, speed with planing onsets, rides and metrics."""

from __future__ import annotations

from pathlib import PurePosixPath

import pandas as pd
import streamlit as st

from dashboard import data, ui
from dashboard import units as du
from sessions.analysis import CAUTION as ANALYSIS_CAUTION
from sessions.errors import FloatliftError

ALL = "all"

units = ui.current_units()
url = data.db_url()
gen = data.generation(url)
st.title("Session review")

frame = data.sessions_frame(url, gen)
if frame.empty:
    ui.empty_library_note()
    st.stop()

c1, c2 = st.columns(2)
riders = [ALL, *sorted(frame["rider"].dropna().unique())]
boards = [ALL, *sorted(frame["board"].dropna().unique())]
rider = c1.selectbox("Rider", riders, key="review_rider", format_func=lambda r: "all riders" if r == ALL else r)
board = c2.selectbox("Board", boards, key="review_board", format_func=lambda b: "all boards" if b == ALL else b)
shown = frame
if rider != ALL:
    shown = shown[shown["rider"] == rider]
if board != ALL:
    shown = shown[shown["board"] == board]
shown = shown.sort_values(["start", "session_id"], ascending=False)
if shown.empty:
    st.info("No session of this rider on this board.")
    st.stop()
labels = {int(r["session_id"]): ui.session_label(r) for _, r in shown.iterrows()}
ids = list(labels)
wanted = st.session_state.pop("open_session", None)
if wanted is not None and int(wanted) in labels:
    st.session_state["review_session"] = int(wanted)
if st.session_state.get("review_session") not in labels:
    st.session_state["review_session"] = ids[0]
sid = st.selectbox("Session", ids, format_func=labels.get, key="review_session")

detail = data.session_detail(url, sid, gen)
doc = data.analysis_doc(url, sid, gen)
ses = doc["session"]
rides = doc["rides"]

st.subheader(ui.md(labels[sid].rsplit(" (#", 1)[0]))
m = st.columns(6)
m[0].metric("Time in the water", du.duration(ses.get("water_s") or detail["duration_s"]))
m[1].metric("Rides", str(detail["rides"]))
m[2].metric("Rides per hour", du.number(detail["rides_per_hour"], 1))
m[3].metric("Missed waves", str(detail["missed_waves"]))
m[4].metric("Peak speed", units.speed(detail["peak_speed_mps"]))
m[5].metric("Median planing onset", units.speed(ses.get("median_onset_speed_mps"), 2))
tis = detail["time_in_state_s"]
st.caption(" · ".join(f"{word} {du.duration(tis.get(state))}" for state, word in
                      (("paddle", "paddling"), ("wait", "waiting"), ("ride", "riding"), ("shore", "on shore"))))
cond = detail.get("conditions") or {}
parts = []
if cond.get("wave_face_m") is not None:
    parts.append(f"wave face {units.height(cond['wave_face_m'])}")
if cond.get("period_s") is not None:
    parts.append(f"period {cond['period_s']:.0f} s")
if cond.get("water_preset"):
    parts.append(f"{cond['water_preset']} water")
if cond.get("water_temp_c") is not None:
    parts.append(f"{cond['water_temp_c']:.1f} °C")
if cond.get("tide_phase"):
    parts.append(f"tide {cond['tide_phase']}")
if parts:
    st.text("Conditions: " + ", ".join(parts))
if cond.get("note"):
    st.text(f"Conditions note: {cond['note']}")

try:
    drawing = data.session_drawing(url, sid, detail["sha256"])
except FloatliftError as exc:  # the stored track no longer reads or analyses with this version
    drawing = None
    st.warning(f"This session's track cannot be drawn: {ui.md(exc)}. Its stored rides are listed below.")
if drawing is not None and not drawing.matches_stored:
    st.info(f"Re-running the analysis for the drawing found slightly different rides from the stored ones "
            f"(stored by analysis version {detail['analysis_version']}, installed {drawing.analysis_version}). "
            "The table and the onset marks show the stored rides; `floatlift reanalyse --all` refreshes them.")

left, right = st.columns([5, 8])
with left:
    st.markdown("**Path by activity** (local metres east and north)")
    if drawing is not None:
        st.image(data.track_picture(url, sid, detail["sha256"]), width="stretch")
with right:
    st.markdown("**Rides**")
    sym = units.speed_symbol
    table = pd.DataFrame([{
        "ride": r["index"] + 1,
        "start": pd.Timestamp(r["start"]).tz_convert("UTC").strftime("%H:%M:%S"),
        "time [s]": round(r["duration_s"], 1),
        "distance [m]": round(r["distance_m"]),
        f"peak [{sym}]": round(units.speed_value(r["peak_speed_mps"]), 1),
        f"onset [{sym}]": (None if r["onset_speed_mps"] is None
                           else round(units.speed_value(r["onset_speed_mps"]), 2)),
        f"interval [{sym}]": (f"{units.speed_value(r['onset_ci_mps'][0]):.2f}–"
                              f"{units.speed_value(r['onset_ci_mps'][1]):.2f}" if r.get("onset_ci_mps")
                              else "no onset" if r["onset_speed_mps"] is None else du.MISSING),
    } for r in rides])
    if table.empty:
        st.info("No rides were found in this session.")
    else:
        st.dataframe(table, hide_index=True, key="ride_table", height=min(35 * (len(table) + 1) + 3, 1000))
        st.caption("Start in UTC. Onset: the speed at which the ride began to plane; interval: its "
                   "90 % bootstrap interval.")
        for r in rides:
            if r["onset_speed_mps"] is None and r.get("onset_reason"):
                reason = str(r["onset_reason"]).split(":", 1)[-1].strip().replace("_", " ")
                st.text(f"Ride {r['index'] + 1}, no onset found: {reason}")

st.markdown("**Speed and planing onsets**")
zoom_options = [None, *[r["index"] for r in rides]]
zoom = st.selectbox("Show", zoom_options, key=f"zoom_{sid}",
                    format_func=lambda i: "the whole session" if i is None else f"ride {i + 1}")
if drawing is not None:
    st.image(data.speed_picture(url, sid, detail["sha256"], units, zoom, gen), width="stretch")
st.caption(f"Source file: {ui.md(PurePosixPath(detail['source_file'].replace(chr(92), '/')).name)} · "
           f"{detail['points']} fixes · "
           f"analysis version {detail['analysis_version']}")
st.caption(ANALYSIS_CAUTION)

"""Add tracks: upload GPX files, say who rode which board in what conditions, see the outcome."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from dashboard import data, ui
from sessions.store.library import CONDITION_RANGES
from sessions.store.schema import TIDE_PHASES, WATER_PRESETS

units = ui.current_units()
url = data.db_url()
gen = data.generation(url)
st.title("Add tracks")
st.write("Upload GPX tracks from a GPS watch or phone (.gpx or .gpx.gz, up to "
         f"{data.MAX_UPLOAD_BYTES // (1024 * 1024)} MB each). Each file is analysed and stored once; "
         "a file already in the library is recognised by its content.")

files = st.file_uploader("GPX files", type=["gpx", "gz"], accept_multiple_files=True, key="uploads")

c1, c2 = st.columns(2)
rider_names = [r["name"] for r in data.riders(url, gen)]
board_names = [b["name"] for b in data.boards(url, gen)]
rider = c1.selectbox("Rider", [ui.NONE_LABEL, *rider_names], key="import_rider")
board = c2.selectbox("Board", [ui.NONE_LABEL, *board_names], key="import_board")
st.caption("Riders and boards are added with `floatlift rider add` and `floatlift board add`.")

with st.expander("Conditions (optional)"):
    k1, k2, k3 = st.columns(3)
    lo, hi = CONDITION_RANGES["wave_face_m"]
    wave = k1.number_input(f"Breaking wave face [{units.height_symbol}]", min_value=0.0,
                           max_value=float(units.height_value(hi)), value=None, step=0.5 if units.trade else 0.1,
                           key="import_wave")
    lo, hi = CONDITION_RANGES["period_s"]
    period = k2.number_input("Swell period [s]", min_value=lo, max_value=hi, value=None, step=1.0,
                             key="import_period")
    lo, hi = CONDITION_RANGES["water_temp_c"]
    temp = k3.number_input("Water temperature [°C]", min_value=lo, max_value=hi, value=None, step=0.5,
                           key="import_temp")
    k4, k5 = st.columns(2)
    water = k4.selectbox("Water", ["(not given)", *WATER_PRESETS], key="import_water")
    tide = k5.selectbox("Tide", ["(not given)", *TIDE_PHASES], key="import_tide")
    note = st.text_input("Note (wind, crowd, anything worth keeping)", key="import_note", max_chars=500)

if st.button("Import", type="primary", disabled=not files, key="import_go"):
    conditions = {}
    if wave is not None:
        conditions["wave_face_m"] = float(units.height_to_si(wave))
    if period is not None:
        conditions["period_s"] = float(period)
    if temp is not None:
        conditions["water_temp_c"] = float(temp)
    if water != "(not given)":
        conditions["water_preset"] = water
    if tide != "(not given)":
        conditions["tide_phase"] = tide
    if note.strip():
        conditions["note"] = note.strip()
    uploads = [(f.name, f.getvalue()) for f in files]
    with st.spinner(f"Analysing {len(uploads)} file(s)…"):
        result = data.import_uploads(url, uploads, rider=None if rider == ui.NONE_LABEL else rider,
                                     board=None if board == ui.NONE_LABEL else board, conditions=conditions)
    st.session_state["last_import"] = result
    st.rerun()  # the sidebar and every cached table read the new generation

result = st.session_state.get("last_import")
if result is not None:
    st.subheader("Outcome")
    st.write(f"Imported {len(result.imported)}, already in the library {len(result.already_present)}, "
             f"refused {len(result.refused)}.")
    if result.imported:
        st.dataframe(pd.DataFrame([{"file": r["file"], "session": r["session_id"], "rides": r["rides"]}
                                   for r in result.imported]), hide_index=True, key="imported_table")
    if result.already_present:
        st.dataframe(pd.DataFrame([{"file": r["file"], "already stored as session": r["session_id"]}
                                   for r in result.already_present]), hide_index=True, key="present_table")
    if result.refused:
        st.markdown("**Refused**")
        st.dataframe(pd.DataFrame(result.refused), hide_index=True, key="refused_table")
    targets = [r["session_id"] for r in result.imported] + [r["session_id"] for r in result.already_present]
    if targets:
        if st.button(f"Open session #{targets[0]}", key="open_imported"):
            st.session_state["open_session"] = targets[0]
            st.session_state["review_rider"] = "all"
            st.session_state["review_board"] = "all"
            st.switch_page("views/review.py")

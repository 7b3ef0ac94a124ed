"""Boards and load: the board catalogue, a board's planform and its load figures for a rider."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from dashboard import data, ui
from dashboard import units as du
from sessions.load import CAUTION as LOAD_CAUTION
from sessions.store.schema import WATER_PRESETS

units = ui.current_units()
url = data.db_url()
gen = data.generation(url)
st.title("Boards and load")

boards = data.boards(url, gen)
if not boards:
    st.info("No boards in the library yet: add one with `floatlift board add`.")
    st.stop()

catalogue = pd.DataFrame([{
    "board": b["name"],
    "model": b["model"] or "",
    "version": b["version"] or "",
    "size": units.board_size(b["length_m"], b["width_m"], b["thickness_m"]),
    "volume [L]": None if b["volume_l"] is None else round(b["volume_l"], 1),
    f"planform area [{units.area_symbol}]": (None if b["planform_area_m2"] is None
                                             else round(units.area_value(b["planform_area_m2"]), 3)),
    f"mass [{units.mass_symbol}]": None if b["mass_kg"] is None else round(units.mass_value(b["mass_kg"]), 1),
    "build": b["construction"] or "",
    "fins": b["fins"] or "",
    "sessions": b["sessions"],
} for b in boards])
st.dataframe(catalogue, hide_index=True, key="board_catalogue")

c1, c2, c3 = st.columns([3, 3, 2])
board_name = c1.selectbox("Board", [b["name"] for b in boards], key="load_board")
riders = [r for r in data.riders(url, gen) if r["body_mass_kg"] is not None]
rider_name = c2.selectbox("Rider", [r["name"] for r in riders], key="load_rider")
water = c3.radio("Water", WATER_PRESETS, key="load_water", horizontal=True)

spec = data.board_object(url, board_name, gen)
if spec.outline is not None:
    st.image(data.planform_picture(url, board_name, gen, units), width="stretch")
    st.caption(f"Outline: {'measured stations' if spec.outline.source == 'stations' else spec.outline.source}; "
               f"wide point {units.board_length(spec.outline.wide_point_from_nose_m)} from the nose.")
else:
    st.info("This board has no outline or dimensions, so its planform cannot be drawn.")

if not riders:
    st.info("No rider with a recorded body mass: add one with `floatlift rider add --mass ...`.")
    st.stop()

figs, model_warnings = data.load_figures(url, board_name, rider_name, water, gen)
st.subheader(ui.md(f"{rider_name} on {board_name}"))
m = st.columns(5)
m[0].metric("Litres per kg of rider", du.number(figs.litres_per_kg, 2))
m[1].metric("Weight the board floats", du.share(figs.lifted_share),
            help="Buoyancy of the fully submerged board as a share of rider, gear and board weight.")
m[2].metric("Planform loading", units.loading(figs.planform_loading_n_m2),
            help="Weight of rider, gear and board per unit of planform area.")
band = figs.predicted_onset_mps
m[3].metric("Predicted planing speed", du.MISSING if band is None else units.speed_range(*band, digits=1),
            help="Speed band at which the board is predicted to plane (planing-hull model, trim range).")
m[4].metric("Smallest catchable wave", units.height(figs.min_breaking_wave_m, 2),
            help="Height of the smallest breaking wave face whose speed reaches the low end of the planing band.")
rider = next(r for r in riders if r["name"] == rider_name)
st.caption(f"Rider {units.mass(rider['body_mass_kg'])}, worn gear {units.mass(rider['gear_mass_kg'])} · "
           f"total load with the board {units.mass(figs.total_mass_kg)} · buoyancy {units.mass(figs.buoyancy_kg)} of "
           f"{water} water ({figs.water_density_kg_m3:.1f} kg/m³) · displacement speed limit "
           f"{units.speed(figs.displacement_speed_limit_mps)}")
FIGURE_WORDS = {
    "total_mass_kg": "total load", "lifted_share": "weight the board floats",
    "board_float_fraction": "how deep the board alone floats", "planform_area_m2": "planform area",
    "planform_loading_n_m2": "planform loading", "planform_loading_kg_m2": None,
    "displacement_speed_limit_mps": "displacement speed limit", "predicted_onset_mps": "predicted planing speed",
    "min_breaking_wave_m": "smallest catchable wave", "breaking_wave_band_m": None, "onset_froude_vol": None,
}
for key, reason in figs.unavailable.items():
    word = FIGURE_WORDS.get(key, key.replace("_", " "))
    if word:
        st.text(f"No {word}: {reason}")
for note in (*figs.notes, *model_warnings):
    st.text(f"Note: {note}")
measured = data.measured_on_board(url, gen, board_name)
if not measured.empty:
    st.markdown("**Measured on this board** (median planing onset of each rider's rides)")
    sym = units.speed_symbol
    st.dataframe(pd.DataFrame({
        "rider": measured["rider"],
        "rides": measured["rides"],
        f"measured onset [{sym}]": [None if pd.isna(v) else round(float(units.speed_value(v)), 2)
                                    for v in measured["measured_median_mps"]],
        f"predicted band [{sym}]": [units.speed_range(lo, hi, 2)
                                    for lo, hi in zip(measured["model_lo_mps"], measured["model_hi_mps"])],
        f"planform loading [{units.loading_symbol}]": [
            None if pd.isna(v) else round(float(units.loading_value(v)), 2 if units.trade else 0)
            for v in measured["planform_loading_npm2"]],
        "litres per kg": measured["litres_per_kg"].round(2),
    }), hide_index=True, key="measured_table")
st.warning(LOAD_CAUTION)

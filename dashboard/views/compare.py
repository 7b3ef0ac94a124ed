"""Compare boards: distributions, differences with intervals and the verdict, by wave size."""

from __future__ import annotations

import math
import re

import pandas as pd
import streamlit as st

from dashboard import data, ui
from dashboard import units as du
from sessions import compare as cmp

units = ui.current_units()
url = data.db_url()
gen = data.generation(url)
st.title("Compare boards")

sessions = data.sessions_frame(url, gen)
if sessions.empty:
    ui.empty_library_note()
    st.stop()
used = sessions.dropna(subset=["board"])
board_names = sorted(used["board"].unique())
if len(board_names) < 2:
    st.info("A comparison needs sessions on at least two boards.")
    st.stop()


def _default_boards() -> list[str]:
    """The versions of the model with most versions, else the two most used boards."""
    per_model = used.dropna(subset=["board_model"]).groupby("board_model")["board"].nunique()
    if not per_model.empty and per_model.max() >= 2:
        model = per_model.idxmax()
        return sorted(used.loc[used["board_model"] == model, "board"].unique())[:2]
    return list(used["board"].value_counts().index[:2])


c1, c2, c3 = st.columns([4, 3, 2])
chosen = c1.multiselect("Boards (the first is the reference, A)", board_names, default=_default_boards(),
                        key="cmp_boards")
riders = c2.multiselect("Riders (none chosen: all)", sorted(used["rider"].dropna().unique()), key="cmp_riders")
bands = [None, *cmp.DEFAULT_WAVE_BANDS_M]


def _band_label(band) -> str:
    if band is None:
        return "all wave sizes"
    lo, hi = band
    if math.isinf(hi):
        return f"{units.height(lo)} and bigger"
    return f"{units.height(lo)} to {units.height(hi)}"


band = c3.selectbox("Wave face", bands, format_func=_band_label, key="cmp_band")
if len(chosen) < 2:
    st.info("Choose at least two boards.")
    st.stop()

result = data.comparison(url, gen, tuple(chosen), tuple(riders), band, cmp.Rules().n_resamples)
a = chosen[0]

speed_metrics = {"onset_speed_mps", "peak_speed_mps", cmp.RESIDUAL_METRIC}
_LABELS = {**cmp.RIDE_METRICS, **cmp.SESSION_METRICS, cmp.RESIDUAL_METRIC: cmp.RESIDUAL_LABEL,
           "catch_success": "catch success"}


def _label(metric: str) -> str:
    """The engine's plain label without its unit (units are shown in their own column)."""
    return re.sub(r"\s*\[[^\]]*\]$", "", _LABELS.get(metric, metric))


st.subheader("Verdict")
for d in result.differences:
    if d.metric in ("onset_speed_mps", "rides_per_hour", "catch_success"):
        st.markdown(f"- **{ui.md(_label(d.metric))}**: {ui.md(cmp.verdict_sentence(d))}")
for note in result.notes:  # the boards were not ridden or recorded alike
    st.info(ui.md(note))


def _value(metric: str, x: float, digits: int = 2) -> float | None:
    if x is None or not math.isfinite(x):
        return None
    return round(float(units.speed_value(x)), digits) if metric in speed_metrics else round(float(x), digits)


def _unit(metric: str) -> str:
    if metric in speed_metrics:
        return units.speed_symbol
    return {"duration_s": "s", "distance_m": "m"}.get(metric, "")


rows = []
for s in result.boards:
    on = s.metrics["onset_speed_mps"]
    rph = s.metrics["rides_per_hour"]
    cs = s.metrics["catch_success"]
    rows.append({
        "board": s.board, "sessions": s.sessions, "rides": s.rides,
        f"onset median [{units.speed_symbol}]": _value("onset_speed_mps", on.median),
        "onset 95 % interval": units.speed_range(*on.ci, digits=2),
        "rides per hour": _value("rides_per_hour", rph.median),
        "catch success": du.share(cs.median),
        f"planform loading [{units.loading_symbol}]": _value("x", units.loading_value(s.planform_loading_npm2),
                                                            2 if units.trade else 0),
        "litres per kg": _value("x", s.litres_per_kg),
        "model planing band": (du.MISSING if s.model_onset_band_mps is None
                               else units.speed_range(*s.model_onset_band_mps, digits=2)),
    })
st.subheader("Boards")
st.dataframe(pd.DataFrame(rows), hide_index=True, key="cmp_boards_table")

onset_png, rates_png = data.comparison_pictures(url, gen, tuple(chosen), tuple(riders), band,
                                                cmp.Rules().n_resamples, units)
st.image(onset_png, width="stretch")

st.subheader(ui.md(f"Differences: each board minus {a}"))
diff_rows = []
for d in result.differences:
    unit = _unit(d.metric)
    lo, hi = d.ci
    diff_rows.append({
        "metric": _label(d.metric),
        "board B": d.b,
        "B − A": _value(d.metric, d.estimate),
        "95 % interval": (du.MISSING if not (math.isfinite(lo) and math.isfinite(hi))
                          else f"{_value(d.metric, lo)} to {_value(d.metric, hi)}"),
        "unit": unit,
        "p (rank test)": None if not math.isfinite(d.p_value) else round(d.p_value, 3),
        "sessions A / B": f"{d.sessions_a} / {d.sessions_b}",
        "verdict": cmp.verdict_sentence(d),
    })
st.dataframe(pd.DataFrame(diff_rows), hide_index=True, key="cmp_diff_table",
             height=min(35 * (len(diff_rows) + 1) + 3, 1000))
st.caption("Intervals resample whole sessions (rides of one session share the day's waves); the rank test "
           "compares session medians. A verdict needs the interval to exclude zero and p below "
           f"{result.rules.alpha:g}, with at least {result.rules.min_sessions} sessions and "
           f"{result.rules.min_rides} rides per board.")

st.subheader("Onset by wave size")
band_words = {cmp.wave_band_label(lo, hi): _band_label((lo, hi)) for lo, hi in cmp.DEFAULT_WAVE_BANDS_M}
strata = [{
    "wave face": band_words.get(d.stratum, d.stratum), "board B": d.b, "rides A / B": f"{d.n_a} / {d.n_b}",
    f"B − A [{units.speed_symbol}]": _value("onset_speed_mps", d.estimate),
    "95 % interval": units.speed_range(*d.ci, digits=2), "verdict": cmp.verdict_sentence(d),
} for d in result.strata]
st.dataframe(pd.DataFrame(strata), hide_index=True, key="cmp_strata_table")

st.subheader("Rides per hour and catch success")
left, _ = st.columns([3, 1])
left.image(rates_png, width="stretch")

fit = result.load_fit
if fit is None:
    st.text(result.load_fit_note)
else:
    lines = [f"Load fit over {fit.n_rides} rides ({fit.n_load_points} board-and-load combinations, "
             f"R² {fit.r_squared:.2f}):"]
    for s in result.boards:
        if s.board in fit.board_residuals:
            mean, lo, hi, k = fit.board_residuals[s.board]
            word = "earlier" if mean < 0 else "later"
            lines.append(f"  {s.board}: planes {units.speed(abs(mean), 2)} {word} than its load predicts "
                         f"({units.speed_range(lo, hi, 2)}, {k} sessions)")
    st.text("\n".join(lines))
st.warning(result.caution)

"""Test-ride feedback: 1-5 scores and notes per session, and a board model's campaign table."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from dashboard import data, ui
from dashboard import units as du
from sessions.compare import CAUTION as COMPARE_CAUTION
from sessions.errors import FloatliftError
from sessions.store.schema import SCORE_NAMES

SCORE_WORDS = {"paddling": "Paddling", "catching": "Catching waves", "speed": "Speed", "control": "Control"}
SCORE_HELP = "1 = poor, 3 = as expected, 5 = excellent"

units = ui.current_units()
url = data.db_url()
gen = data.generation(url)
st.title("Test-ride feedback")

frame = data.sessions_frame(url, gen)
if frame.empty:
    ui.empty_library_note()
    st.stop()

score_tab, campaign_tab = st.tabs(["Score a session", "Campaign by board model"])

with score_tab:
    models = sorted(frame["board_model"].dropna().unique())
    model_filter = st.selectbox("Board model", ["all", *models], key="fb_model",
                                format_func=lambda m: "all boards" if m == "all" else m)
    shown = frame if model_filter == "all" else frame[frame["board_model"] == model_filter]
    shown = shown.sort_values(["start", "session_id"], ascending=False)
    labels = {int(r["session_id"]): ui.session_label(r) for _, r in shown.iterrows()}
    sid = st.selectbox("Session", list(labels), format_func=labels.get, key="fb_session")
    detail = data.session_detail(url, sid, gen)
    stored = detail.get("feedback") or {}
    cols = st.columns(len(SCORE_NAMES))
    scores = {}
    for col, name in zip(cols, SCORE_NAMES):
        scores[name] = col.slider(SCORE_WORDS[name], 1, 5, value=int(stored.get(name) or 3), help=SCORE_HELP,
                                  key=f"fb_{name}_{sid}")
    note = st.text_area("Notes (how it paddled, where it caught, how it turned)", value=stored.get("note") or "",
                        max_chars=2000, key=f"fb_note_{sid}")
    if st.button("Save feedback", type="primary", key="fb_save"):
        try:
            data.save_feedback(url, sid, scores, note)
        except FloatliftError as exc:
            st.error(f"Not saved: {exc}")
        else:
            st.session_state["fb_saved"] = sid
            st.rerun()  # every table on the page reads the new generation
    if st.session_state.get("fb_saved") == sid:
        st.success(f"Feedback for session #{sid} saved.")
    if not stored:
        st.caption("No feedback stored for this session yet; the sliders start at 3.")
    else:
        st.caption("Stored: " + ", ".join(f"{SCORE_WORDS[n].lower()} {stored.get(n) or du.MISSING}"
                                          for n in SCORE_NAMES))

with campaign_tab:
    models = sorted(frame["board_model"].dropna().unique())
    if not models:
        st.info("No session is on a board with a model name (set it with `floatlift board edit --model`).")
    else:
        per_model = frame.dropna(subset=["board_model"]).groupby("board_model")["board"].nunique()
        default = models.index(per_model.idxmax())
        model = st.selectbox("Board model", models, index=default, key="campaign_model")
        table = data.campaign(url, gen, model)
        view = pd.DataFrame({
            "version": table["board_version"],
            "board": table["board"],
            "rider": table["rider"],
            "sessions": table["sessions"],
            "rides": table["rides"],
            f"onset median [{units.speed_symbol}]": [None if pd.isna(v) else round(units.speed_value(v), 2)
                                                     for v in table["onset_median_mps"]],
            "rides per hour": table["rides_per_hour"].round(1),
            "catch success": [du.share(v) for v in table["catch_success"]],
            f"wave face [{units.height_symbol}]": [None if pd.isna(v) else round(units.height_value(v), 1)
                                                   for v in table["wave_face_m"]],
            "paddling": table["score_paddling"].round(1),
            "catching": table["score_catching"].round(1),
            "speed": table["score_speed"].round(1),
            "control": table["score_control"].round(1),
            "notes (newest first)": table["feedback"],
        })
        st.dataframe(view, hide_index=True, key="campaign_table")
        st.caption("Medians over rides and sessions; scores are session means (1-5).")
        st.warning(COMPARE_CAUTION)

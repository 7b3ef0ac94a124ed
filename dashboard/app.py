"""Streamlit entry of the floatlift dashboard: navigation, sidebar, then the chosen page.

Run it with ``floatlift dashboard`` (or ``streamlit run dashboard/app.py`` with
``FLOATLIFT_DB`` set). Each page is one file under ``dashboard/views/``.
"""

from __future__ import annotations

from pathlib import Path

import streamlit as st

from dashboard import data, ui
from sessions.errors import FloatliftError

HERE = Path(__file__).resolve().parent
VIEWS = HERE / "views"

st.set_page_config(page_title="floatlift", layout="wide", initial_sidebar_state="expanded")

PAGES = [
    st.Page(VIEWS / "review.py", title="Session review", url_path="review", default=True),
    st.Page(VIEWS / "add_tracks.py", title="Add tracks", url_path="add-tracks"),
    st.Page(VIEWS / "boards.py", title="Boards and load", url_path="boards"),
    st.Page(VIEWS / "compare.py", title="Compare boards", url_path="compare"),
    st.Page(VIEWS / "feedback.py", title="Test-ride feedback", url_path="feedback"),
]

page = st.navigation(PAGES)
with st.sidebar:
    st.markdown("**floatlift**  \nper-wave records from GPX tracks")
ui.units_sidebar()
with st.sidebar:
    st.divider()
    try:
        counts = data.counts(data.db_url(), data.generation(data.db_url()))
        st.caption("Library: " + ", ".join(ui.count(counts[k], k[:-1]) for k in ("sessions", "rides", "riders",
                                                                                  "boards")))
    except FloatliftError as exc:
        st.error(f"The library cannot be opened: {exc}")
        st.stop()
    st.caption(ui.CAUTION)
page.run()

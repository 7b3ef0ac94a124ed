"""Report figures and the one-page PDF, built on synthetic comparisons."""

from __future__ import annotations

import re

import pandas as pd
import pytest
from test_compare_synth import make_library

from sessions import compare as cmp
from sessions import report
from sessions.errors import ReportError
from sessions.units import G_N

A, B = "Tern 6'0", "Tern 6'0 v2"


def _toy_model(board, row):  # stand-in predictor for the model band (not physics)
    loading = (row.rider_body_mass_kg + row.rider_gear_mass_kg + row.board_mass_kg) * G_N / row.planform_area_m2
    return 0.0016 * loading, 0.0021 * loading


@pytest.fixture(scope="module")
def comparison():
    plan = {(A, "Marlo"): 6, (B, "Marlo"): 6, ("Petrel 6'4", "Ines"): 5, ("Skua 5'10", "Bram"): 5,
            ("Gannet 7'2", "Ottilie"): 4}
    rides, sessions = make_library(plan, board_effect_mps={B: -0.4}, seed=9)
    return cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), cmp.Rules(n_resamples=999),
                              onset_model=_toy_model)


def test_onset_by_board_figure_has_boards_labels_and_intervals(comparison):
    fig = report.onset_by_board_figure(comparison)
    ax = fig.axes[0]
    assert ax.get_xlabel() == report.ONSET_LABEL
    assert ax.get_title() == "Planing onset speed per board"
    labels = [t.get_text() for t in ax.get_yticklabels()]
    assert labels[0].startswith(A) and labels[1].startswith(B)
    assert f"({comparison.boards[0].rides} rides)" in labels[0]
    # one scatter of rides per board, each holding all that board's onsets
    offsets = [c.get_offsets() for c in ax.collections if len(c.get_offsets()) > 1]
    assert sorted(len(o) for o in offsets) == sorted(
        int(comparison.rides[comparison.rides.board == b].onset_speed_mps.notna().sum()) for b in (A, B))
    assert "median, 95 % interval" in [t.get_text() for t in ax.get_legend().get_texts()]


def test_onset_vs_loading_figure_has_fit_and_model_band(comparison):
    fig = report.onset_vs_loading_figure(comparison)
    ax = fig.axes[0]
    assert ax.get_xlabel() == report.LOADING_LABEL and ax.get_ylabel() == report.ONSET_LABEL
    legend = [t.get_text() for t in ax.get_legend().get_texts()]
    assert "other boards" in legend and A in legend and B in legend
    assert "load fit: mean prediction per board and load" in legend
    assert f"model band, {A}" in legend and f"model band, {B}" in legend


def test_rides_per_hour_figure_has_two_panels(comparison):
    fig = report.rides_per_hour_figure(comparison)
    assert [ax.get_ylabel() for ax in fig.axes] == ["rides per hour", "catch success (rides / attempts)"]
    for ax in fig.axes:
        assert [t.get_text() for t in ax.get_xticklabels()] == [A, B]


def test_write_report_writes_pngs_and_a_one_page_pdf(comparison, artifacts_dir):
    out = artifacts_dir / "compare_report"  # kept after the run, to look at
    for old in report.FILES:
        (out / old).unlink(missing_ok=True)
    paths = report.write_report(comparison, out)
    assert [p.name for p in paths] == list(report.FILES)
    for p in paths[:3]:
        head = p.read_bytes()[:8]
        assert head == b"\x89PNG\r\n\x1a\n" and p.stat().st_size > 10_000
    pdf = paths[3].read_bytes()
    assert pdf.startswith(b"%PDF")
    assert len(re.findall(rb"/Type\s*/Page\b", pdf)) == 1  # one page


def test_summary_page_carries_tables_and_caution(comparison):
    fig = report.summary_figure(comparison)
    texts = " ".join(t.get_text() for t in fig.texts)
    assert "lifeguards" in texts and "board comparison" in texts
    tables = [a.tables[0] for a in fig.axes if a.tables]
    cells = [c.get_text().get_text() for t in tables for c in t.get_celld().values()]
    assert "onset median [m/s]" in cells and "verdict" in cells
    assert f"{B} lower than {A}" in cells


def test_report_without_load_fit_or_model(tmp_path):
    rides, sessions = make_library({(A, "Marlo"): 4, (B, "Marlo"): 4}, seed=2)
    c = cmp.compare_boards(rides, sessions, cmp.Selection(boards=(A, B)), cmp.Rules(n_resamples=199))
    assert c.load_fit is None
    paths = report.write_report(c, tmp_path)
    assert all(p.exists() for p in paths)
    ax = report.onset_vs_loading_figure(c).axes[0]
    assert not any("model band" in t.get_text() for t in ax.get_legend().get_texts())


def test_report_folder_that_is_a_file_is_a_clear_error(comparison, tmp_path):
    blocker = tmp_path / "taken"
    blocker.write_text("not a folder")
    with pytest.raises(ReportError, match="cannot create the report folder"):
        report.write_report(comparison, blocker)


def test_text_tables_match_the_comparison(comparison):
    rows = cmp.board_table_rows(comparison)
    onset = comparison.boards[0].metrics["onset_speed_mps"]
    assert rows[0][0] == A and rows[0][3].startswith(f"{onset.median:.2f} [")
    diff_rows = cmp.difference_table_rows(comparison, ("onset_speed_mps",))
    assert len(diff_rows) == 1 and diff_rows[0][-1] == f"{B} lower than {A}"
    assert isinstance(pd.DataFrame(rows, columns=cmp.BOARD_TABLE_HEADER), pd.DataFrame)

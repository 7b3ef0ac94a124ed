"""Figures and a one-page PDF summary of a board comparison.

Every number drawn here comes from a :class:`sessions.compare.Comparison`; this module only
lays it out. Figures are built with matplotlib's object-oriented API on the Agg canvas (no
window, no global ``pyplot`` state), so they can be drawn in tests and servers alike.

Files written by :func:`write_report`:

* ``onset_by_board.png`` - onset speed of every ride per board, box, median and interval;
* ``onset_vs_loading.png`` - onset against planform loading, the load fit and the
  planing-model band;
* ``rides_per_hour.png`` - rides per hour and catch success per session, per board;
* ``summary.pdf`` - one page: selection, per-board table, differences with verdicts,
  the two main figures and the caution line.
"""

from __future__ import annotations

import math
import textwrap
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from sessions.compare import (
    BOARD_TABLE_HEADER, DIFF_TABLE_HEADER, RESIDUAL_METRIC, Comparison, board_table_rows,
    difference_table_rows, selection_text, strata_lines,
)
from sessions.errors import ReportError
from sessions.units import KMH_MPS

FILES = ("onset_by_board.png", "onset_vs_loading.png", "rides_per_hour.png", "summary.pdf")
ONSET_LABEL = "planing onset speed [m/s]"
LOADING_LABEL = "planform loading [N/m²]"
_OTHER_COLOUR = "0.72"


def _new_figure(width_in: float, height_in: float) -> Figure:
    fig = Figure(figsize=(width_in, height_in), layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _colours(comparison: Comparison) -> dict[str, str]:
    return {s.board: f"C{i % 10}" for i, s in enumerate(comparison.boards)}


# ======================================================================================
# Figures
# ======================================================================================
def draw_onset_by_board(ax, comparison: Comparison) -> None:
    """Rides' onset speeds per board: jittered points, box, median and its interval."""
    colours = _colours(comparison)
    rng = np.random.default_rng(0)  # jitter only; fixed so figures are reproducible
    names = [s.board for s in comparison.boards]
    data = []
    for y, summary in enumerate(comparison.boards):
        rides = comparison.rides[comparison.rides["board"] == summary.board]
        vals = rides["onset_speed_mps"].dropna().to_numpy(float)
        data.append(vals)
        if vals.size:
            ax.scatter(vals, y + rng.uniform(-0.18, 0.18, vals.size), s=10, alpha=0.45,
                       color=colours[summary.board], linewidths=0)
        m = summary.metrics["onset_speed_mps"]
        if math.isfinite(m.median):
            lo, hi = m.ci
            if math.isfinite(lo) and math.isfinite(hi):
                ax.errorbar([m.median], [y + 0.32], xerr=[[m.median - lo], [hi - m.median]], fmt="D",
                            color="black", capsize=3, ms=5, label="median, 95 % interval" if y == 0 else None)
            else:
                ax.plot([m.median], [y + 0.32], "D", color="black", ms=5)
    ax.boxplot([d if d.size else [np.nan] for d in data], positions=range(len(names)), orientation="horizontal",
               widths=0.5, showfliers=False, manage_ticks=False,
               medianprops={"color": "0.2"}, boxprops={"color": "0.4"}, whiskerprops={"color": "0.4"},
               capprops={"color": "0.4"})
    ax.set_yticks(range(len(names)), [f"{n}\n({s.rides} rides)" for n, s in zip(names, comparison.boards)])
    ax.set_ylim(-0.6, len(names) - 0.4)
    ax.invert_yaxis()
    ax.set_xlabel(ONSET_LABEL)
    ax.set_title("Planing onset speed per board")
    ax.grid(axis="x", alpha=0.3)
    sec = ax.secondary_xaxis("top", functions=(lambda v: v / KMH_MPS, lambda v: v * KMH_MPS))
    sec.set_xlabel("km/h")
    if ax.get_legend_handles_labels()[0]:
        ax.legend(loc="lower right", fontsize="small")


def draw_onset_vs_loading(ax, comparison: Comparison) -> None:
    """Onset against planform loading: rides, the load fit and the planing-model band."""
    colours = _colours(comparison)
    fit_rides = comparison.fit_rides
    chosen = set(colours)
    pool = fit_rides if not fit_rides.empty else comparison.rides
    others = pool[~pool["board"].isin(chosen)]
    if not others.empty:
        ax.scatter(others["planform_loading_npm2"], others["onset_speed_mps"], s=8, color=_OTHER_COLOUR,
                   linewidths=0, label="other boards")
    for board, colour in colours.items():
        r = comparison.rides[comparison.rides["board"] == board]
        ax.scatter(r["planform_loading_npm2"], r["onset_speed_mps"], s=12, alpha=0.6, color=colour,
                   linewidths=0, label=board)
    if comparison.load_fit is not None and not fit_rides.empty:
        fitted = fit_rides.assign(fitted=fit_rides["onset_speed_mps"] - fit_rides[RESIDUAL_METRIC])
        points = fitted.groupby(["board", "planform_loading_npm2"], as_index=False)["fitted"].mean()
        ax.scatter(points["planform_loading_npm2"], points["fitted"], marker="_", s=260, linewidths=2,
                   color="black", label="load fit: mean prediction per board and load", zorder=3)
    curve = comparison.model_curve
    for board, colour in colours.items():
        c = curve[curve["board"] == board] if not curve.empty else curve
        if c.empty or not c["model_lo_mps"].notna().any():
            continue
        ax.fill_between(c["planform_loading_npm2"], c["model_lo_mps"], c["model_hi_mps"], color=colour,
                        alpha=0.10, lw=0)
        for edge in ("model_lo_mps", "model_hi_mps"):
            ax.plot(c["planform_loading_npm2"], c[edge], color=colour, lw=1.2, ls="--",
                    label=f"model band, {board}" if edge == "model_lo_mps" else None)
    ax.set_xlabel(LOADING_LABEL)
    ax.set_ylabel(ONSET_LABEL)
    ax.set_title("Onset speed against planform loading")
    ax.grid(alpha=0.3)
    ax.legend(fontsize="x-small", loc="best")


def draw_session_metric(ax, comparison: Comparison, metric: str, label: str) -> None:
    """One value per session per board, with the board's median and interval."""
    colours = _colours(comparison)
    rng = np.random.default_rng(1)
    for x, summary in enumerate(comparison.boards):
        s = comparison.sessions[comparison.sessions["board"] == summary.board]
        vals = s[metric].dropna().to_numpy(float)
        if vals.size:
            ax.scatter(x + rng.uniform(-0.15, 0.15, vals.size), vals, s=18, alpha=0.6,
                       color=colours[summary.board], linewidths=0)
        m = summary.metrics[metric]
        if math.isfinite(m.median):
            lo, hi = m.ci
            if math.isfinite(lo) and math.isfinite(hi):
                ax.errorbar([x + 0.3], [m.median], yerr=[[m.median - lo], [hi - m.median]], fmt="D",
                            color="black", capsize=3, ms=5)
            else:
                ax.plot([x + 0.3], [m.median], "D", color="black", ms=5)
    ax.set_xticks(range(len(comparison.boards)), [s.board for s in comparison.boards])
    ax.set_xlim(-0.6, len(comparison.boards) - 0.4)
    ax.set_ylabel(label)
    ax.grid(axis="y", alpha=0.3)


def onset_by_board_figure(comparison: Comparison) -> Figure:
    fig = _new_figure(7.5, 1.2 + 1.1 * len(comparison.boards))
    draw_onset_by_board(fig.add_subplot(), comparison)
    return fig


def onset_vs_loading_figure(comparison: Comparison) -> Figure:
    fig = _new_figure(7.5, 5.0)
    draw_onset_vs_loading(fig.add_subplot(), comparison)
    return fig


def rides_per_hour_figure(comparison: Comparison) -> Figure:
    fig = _new_figure(8.0, 4.0)
    ax1, ax2 = fig.subplots(1, 2)
    draw_session_metric(ax1, comparison, "rides_per_hour", "rides per hour")
    ax1.set_title("Rides per hour (one dot per session)")
    draw_session_metric(ax2, comparison, "catch_success", "catch success (rides / attempts)")
    ax2.set_ylim(-0.02, 1.02)
    ax2.set_title("Catch success (one dot per session)")
    return fig


# ======================================================================================
# Summary page and files
# ======================================================================================
SUMMARY_METRICS = ("onset_speed_mps", RESIDUAL_METRIC, "rides_per_hour", "catch_success", "duration_s",
                   "peak_speed_mps")


def summary_figure(comparison: Comparison) -> Figure:
    """One A4 portrait page: selection, tables, two figures and the caution."""
    fig = Figure(figsize=(8.27, 11.69))
    FigureCanvasAgg(fig)
    fig.text(0.05, 0.965, "floatlift - board comparison", fontsize=15, weight="bold", va="top")
    fig.text(0.05, 0.94, "\n".join(textwrap.wrap(selection_text(comparison), 110)), fontsize=8, va="top")

    row_h = 0.0135  # figure fraction per table row at 6.5-7 pt
    board_rows = board_table_rows(comparison)
    top = 0.905
    h1 = row_h * (len(board_rows) + 1)
    t1 = fig.add_axes((0.04, top - h1, 0.92, h1))
    t1.set_axis_off()
    _table(t1, BOARD_TABLE_HEADER, board_rows, fontsize=7)
    t1.set_title("Per board (median [95 % interval])", fontsize=9, loc="left")

    diff_rows = difference_table_rows(comparison, SUMMARY_METRICS)
    top = top - h1 - 0.035
    h2 = row_h * (len(diff_rows) + 1)
    t2 = fig.add_axes((0.04, top - h2, 0.92, h2))
    t2.set_axis_off()
    _table(t2, DIFF_TABLE_HEADER, diff_rows, fontsize=6.5)
    t2.set_title("Differences, board B minus board A (lower onset speed = planes earlier)", fontsize=9, loc="left")
    top = top - h2 - 0.012

    lines = [line for line in strata_lines(comparison) if "too few data" not in line]
    skipped = len(comparison.strata) - len(lines)
    if skipped:
        lines.append(f"{skipped} wave band comparison(s): too few data to tell")
    if lines:
        fig.text(0.05, top, "Onset by wave face height:\n" + "\n".join(lines), fontsize=6.5, va="top")
        top -= 0.011 * (len(lines) + 1) + 0.01

    notes = [comparison.caution, *comparison.notes]
    if comparison.load_fit_note:
        notes.append(comparison.load_fit_note)
    r = comparison.rules
    notes.append(
        f"Intervals: session-resampled bootstrap ({r.n_resamples} resamples, seed {r.seed}); p: Mann-Whitney U "
        f"on session medians; verdict needs interval excluding 0 and p < {r.alpha:g}; at least {r.min_rides} "
        f"rides from {r.min_sessions} sessions per board (session metrics: {r.min_session_values} sessions)."
    )
    note_text = "\n".join(textwrap.fill(n, 130) for n in notes)
    fig.text(0.05, 0.012, note_text, fontsize=6.5, va="bottom")
    bottom = 0.012 + 0.0105 * (note_text.count("\n") + 1) + 0.05  # notes, then the x label

    # the two figures share what is left between the tables and the notes
    space = top - bottom
    h_on = space * min(0.5, 0.28 + 0.05 * len(comparison.boards)) - 0.045
    ax1 = fig.add_axes((0.22, top - 0.045 - h_on, 0.72, h_on))
    draw_onset_by_board(ax1, comparison)
    h_ld = top - 0.045 - h_on - 0.08 - bottom
    ax2 = fig.add_axes((0.10, bottom, 0.84, h_ld))
    draw_onset_vs_loading(ax2, comparison)
    return fig


def _table(ax, header: list[str], rows: list[list[str]], fontsize: float) -> None:
    if not rows:
        ax.text(0, 0.5, "no rows", fontsize=fontsize)
        return
    table = ax.table(cellText=rows, colLabels=header, bbox=(0, 0, 1, 1), cellLoc="left")
    table.auto_set_font_size(False)
    table.set_fontsize(fontsize)
    table.auto_set_column_width(list(range(len(header))))
    for (row, _), cell in table.get_celld().items():
        cell.set_linewidth(0.3)
        if row == 0:
            cell.set_text_props(weight="bold")
            cell.set_facecolor("0.92")


def write_report(comparison: Comparison, out_dir: str | Path, *, dpi: int = 130) -> list[Path]:
    """Write the three PNG figures and ``summary.pdf`` into ``out_dir`` (created if needed)."""
    out = Path(out_dir)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ReportError(f"cannot create the report folder {out}: {exc.strerror or exc}") from exc
    figures = {
        "onset_by_board.png": onset_by_board_figure(comparison),
        "onset_vs_loading.png": onset_vs_loading_figure(comparison),
        "rides_per_hour.png": rides_per_hour_figure(comparison),
        "summary.pdf": summary_figure(comparison),
    }
    written = []
    for name, fig in figures.items():
        path = out / name
        try:
            fig.savefig(path, dpi=dpi, metadata={"Creator": "floatlift"} if name.endswith(".pdf") else None)
        except OSError as exc:
            raise ReportError(f"cannot write {path}: {exc.strerror or exc}") from exc
        written.append(path)
    return written

"""Matplotlib figure builders of the dashboard (object-oriented API, Agg canvas).

Each builder takes results from :mod:`sessions` (already computed) and the user's
:class:`~dashboard.units.DisplayUnits`, and only draws: no figure computes a metric.
They never touch streamlit, so tests can build and inspect them directly.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.collections import LineCollection
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch

from dashboard import palette
from dashboard.units import DisplayUnits


def new_figure(width_in: float, height_in: float) -> Figure:
    fig = Figure(figsize=(width_in, height_in), layout="constrained", facecolor=palette.BACKGROUND)
    FigureCanvasAgg(fig)
    return fig


def png(fig: Figure, dpi: int = 120) -> bytes:
    """The figure as PNG bytes (the pages cache these, so each picture is drawn once)."""
    import io

    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi, facecolor=fig.get_facecolor())
    return buf.getvalue()


def _style(ax) -> None:
    ax.set_facecolor("white")
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    for side in ("left", "bottom"):
        ax.spines[side].set_color(palette.MUTED)
    ax.tick_params(colors=palette.INK, labelsize=8)
    ax.xaxis.label.set_color(palette.INK)
    ax.yaxis.label.set_color(palette.INK)
    ax.grid(color=palette.GRID, linewidth=0.6, alpha=0.8)
    ax.set_axisbelow(True)


def ride_offsets_s(samples: pd.DataFrame, rides: list[dict]) -> list[dict]:
    """Rides of an analysis document with their times as seconds from the first sample."""
    t0 = pd.Timestamp(samples["time"].iloc[0])
    out = []
    for r in rides:
        item = dict(r)
        for key in ("catch_start", "start", "end"):
            item[f"{key}_s"] = (pd.Timestamp(r[key]) - t0).total_seconds() if r.get(key) else math.nan
        out.append(item)
    return out


# --- session review ------------------------------------------------------------------------
def track_figure(samples: pd.DataFrame, rides: list[dict]) -> Figure:
    """The session's path in local metres (east, north), coloured by activity state."""
    fig = new_figure(5.0, 4.6)
    ax = fig.add_subplot()
    _style(ax)
    x = samples["x_m"].to_numpy(float)
    y = samples["y_m"].to_numpy(float)
    states = samples["state"].astype(str).to_numpy()
    if len(x) >= 2:
        segs = np.stack([np.column_stack([x[:-1], y[:-1]]), np.column_stack([x[1:], y[1:]])], axis=1)
        colours = [palette.STATE_COLOURS.get(s, palette.MUTED) for s in states[:-1]]
        widths = np.where(states[:-1] == "ride", 2.2, 1.0)
        ax.add_collection(LineCollection(segs, colors=colours, linewidths=widths, capstyle="round"))
        ax.autoscale_view()
    for r in ride_offsets_s(samples, rides):
        sel = samples["ride"].to_numpy() == r["index"]
        if sel.any():
            i = int(np.flatnonzero(sel)[0])
            ax.annotate(str(r["index"] + 1), (x[i], y[i]), xytext=(3, 3), textcoords="offset points",
                        fontsize=7, color=palette.INK)
    ax.set_aspect("equal", adjustable="datalim")
    ax.set_xlabel("east [m]")
    ax.set_ylabel("north [m]")
    present = [s for s in palette.STATE_COLOURS if s in set(states)]
    ax.legend(handles=[Line2D([], [], color=palette.STATE_COLOURS[s], lw=2.5, label=palette.STATE_WORDS[s])
                       for s in present], loc="best", fontsize=8, frameon=False)
    return fig


def speed_figure(samples: pd.DataFrame, rides: list[dict], units: DisplayUnits,
                 zoom_ride: int | None = None) -> Figure:
    """Speed over the session; rides shaded, each ride's planing onset with its interval.

    The onset is drawn at the ride's start (where the analysis puts the change from
    displacement to planing) at the estimated onset speed; the vertical bar is the
    onset's interval. *zoom_ride* limits the time axis to one ride and its catch.
    """
    fig = new_figure(9.0, 3.4)
    ax = fig.add_subplot()
    _style(ax)
    t_min = samples["t_s"].to_numpy(float) / 60.0
    v = np.asarray(units.speed_value(samples["speed_mps"].to_numpy(float)))
    ax.plot(t_min, v, color=palette.MUTED, lw=0.6, alpha=0.9)
    timed = ride_offsets_s(samples, rides)
    for r in timed:
        a = r["catch_start_s"] if math.isfinite(r["catch_start_s"]) else r["start_s"]
        ax.axvspan(a / 60, r["start_s"] / 60, color=palette.STATE_COLOURS["paddle"], alpha=0.12, lw=0)
        ax.axvspan(r["start_s"] / 60, r["end_s"] / 60, color=palette.STATE_COLOURS["ride"], alpha=0.22, lw=0)
        onset = r.get("onset_speed_mps")
        if onset is not None:
            ci = r.get("onset_ci_mps")
            y = units.speed_value(onset)
            if ci and ci[0] is not None and ci[1] is not None:
                lo, hi = units.speed_value(ci[0]), units.speed_value(ci[1])
                ax.errorbar([r["start_s"] / 60], [y], yerr=[[y - lo], [hi - y]], fmt="o", ms=4,
                            color=palette.ONSET, ecolor=palette.ONSET, elinewidth=1.2, capsize=3, zorder=5)
            else:
                ax.plot([r["start_s"] / 60], [y], "o", ms=4, color=palette.ONSET, zorder=5)
    if zoom_ride is not None:
        match = [r for r in timed if r["index"] == zoom_ride]
        if match:
            r = match[0]
            a = r["catch_start_s"] if math.isfinite(r["catch_start_s"]) else r["start_s"]
            ax.set_xlim((a - 20) / 60, (r["end_s"] + 15) / 60)
    ax.set_xlabel("minutes from the start of the track")
    ax.set_ylabel(f"speed [{units.speed_symbol}]")
    ax.set_ylim(bottom=0)
    ax.legend(handles=[
        Patch(color=palette.STATE_COLOURS["paddle"], alpha=0.3, label="catching"),
        Patch(color=palette.STATE_COLOURS["ride"], alpha=0.4, label="ride"),
        Line2D([], [], color=palette.ONSET, marker="o", lw=1.2, label="planing onset and its interval"),
    ], loc="upper right", fontsize=8, frameon=False, ncols=3)
    return fig


# --- boards ------------------------------------------------------------------------------------
def planform_figure(outline, units: DisplayUnits, name: str = "") -> Figure:
    """Top view of a board from its outline (nose at the left), in cm or inches."""
    fig = new_figure(7.5, 2.6)
    ax = fig.add_subplot()
    _style(ax)
    length = outline.length_m
    x = np.linspace(0.0, length, 301)
    half = np.asarray(outline.widths_at(x), dtype=float) / 2.0
    scale, symbol = (1 / 0.0254, "in") if units.trade else (100.0, "cm")
    xs, hs = x * scale, half * scale
    ax.fill_between(xs, -hs, hs, color=palette.PANEL, edgecolor=palette.ACCENT, linewidth=1.6)
    ax.axhline(0.0, color=palette.MUTED, lw=0.6, ls=(0, (4, 4)))
    wide = outline.wide_point_from_nose_m * scale
    ax.axvline(wide, color=palette.ACCENT, lw=0.8, ls=":")
    ax.annotate("wide point", (wide, float(hs.max())), xytext=(4, 4), textcoords="offset points",
                fontsize=7, color=palette.INK)
    ax.set_aspect("equal")
    ax.set_xlabel(f"from the nose [{symbol}]")
    ax.set_ylabel(f"[{symbol}]")
    if name:
        ax.set_title(name, fontsize=9, color=palette.INK, loc="left")
    return fig


# --- comparison ------------------------------------------------------------------------------------
def onset_distribution_figure(comparison, units: DisplayUnits) -> Figure:
    """Onset speed of every ride per board: box, points, and the median's interval."""
    boards = [s.board for s in comparison.boards]
    fig = new_figure(8.0, 1.3 + 0.9 * len(boards))
    ax = fig.add_subplot()
    _style(ax)
    rng = np.random.default_rng(0)  # jitter only, fixed so the picture is stable
    for i, summary in enumerate(comparison.boards):
        colour = palette.BOARD_COLOURS[i % len(palette.BOARD_COLOURS)]
        rides = comparison.rides[comparison.rides["board"] == summary.board]
        values = np.asarray(units.speed_value(rides["onset_speed_mps"].dropna().to_numpy(float)))
        y = len(boards) - 1 - i
        if values.size:
            ax.boxplot([values], positions=[y], orientation="horizontal", widths=0.5, showfliers=False,
                       patch_artist=True, boxprops={"facecolor": "white", "edgecolor": colour},
                       medianprops={"color": colour, "lw": 2}, whiskerprops={"color": colour},
                       capprops={"color": colour})
            ax.scatter(values, y + rng.uniform(-0.18, 0.18, values.size), s=9, color=colour, alpha=0.55,
                       zorder=3, lw=0)
        m = summary.metrics["onset_speed_mps"]
        lo, hi = m.ci
        if math.isfinite(lo) and math.isfinite(hi):
            ax.plot(units.speed_value(np.array([lo, hi])), [y + 0.38, y + 0.38], color=palette.INK, lw=2)
            ax.plot([units.speed_value(m.median)], [y + 0.38], "D", color=palette.INK, ms=4)
    ax.set_yticks(range(len(boards)), list(reversed(boards)))
    ax.set_ylim(-0.7, len(boards) - 0.2)
    ax.set_xlabel(f"planing onset speed [{units.speed_symbol}]  (bar above: 95 % interval of the median)")
    ax.grid(axis="y", visible=False)
    return fig

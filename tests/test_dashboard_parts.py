"""The dashboard's parts without a server: display units, figure builders, the command.

Unit factors are checked against published conversion values; figures are checked for
what they draw (colours per state, onset marks at the analysis's values, the planform's
area); the command's refusals (bad host, port in use) end in one line and exit 2.
"""

from __future__ import annotations

import math
import socket

import numpy as np
import pandas as pd
import pytest

from dashboard import palette
from dashboard.units import DisplayUnits, duration, share


# --- display units ------------------------------------------------------------------------
def test_speed_units_against_published_factors():
    # NIST SP 811 (2008), appendix B.9: 1 km/h = 0.277 777 8 m/s, 1 knot = 0.514 444 4 m/s,
    # 1 mile per hour = 0.447 04 m/s (exact)
    assert DisplayUnits("metric", "km/h").speed_value(0.2777778) == pytest.approx(1.0, rel=1e-6)
    assert DisplayUnits("trade", "knots").speed_value(0.5144444) == pytest.approx(1.0, rel=1e-6)
    assert DisplayUnits("trade", "mph").speed_value(0.44704) == pytest.approx(1.0, rel=1e-12)
    assert DisplayUnits("metric", "m/s").speed(3.456, 2) == "3.46 m/s"
    assert DisplayUnits("trade", "knots").speed(10.0) == "19.4 kn"
    assert DisplayUnits("metric", "km/h").speed_range(2.0, 3.0) == "7.2–10.8 km/h"


def test_mass_length_area_loading_against_published_factors():
    trade, metric = DisplayUnits("trade", "mph"), DisplayUnits()
    # NIST SP 811 (2008), appendix B.9: 1 lb = 0.453 592 37 kg; 1 ft = 0.3048 m;
    # 1 ft² = 9.290 304 E-02 m²; 1 lbf/ft² = 47.880 26 Pa
    assert trade.mass_value(0.45359237) == pytest.approx(1.0, rel=1e-12)
    assert trade.height_value(0.3048) == pytest.approx(1.0, rel=1e-12)
    assert trade.height_to_si(trade.height_value(1.37)) == pytest.approx(1.37)
    assert trade.area_value(9.290304e-2) == pytest.approx(1.0, rel=1e-12)
    assert trade.loading_value(47.88026) == pytest.approx(1.0, rel=1e-6)
    assert metric.loading(779.4) == "779 N/m²" and metric.mass(80.04) == "80.0 kg"
    assert trade.mass(80.0) == "176.4 lb" and trade.height(1.0) == "3.3 ft"


def test_board_sizes_in_trade_notation_and_centimetres():
    from sessions.boards import parse_dimensions

    dims = parse_dimensions("5'10\" x 19 1/4\" x 2 7/16\"")
    trade = DisplayUnits("trade", "knots").board_size(dims.length_m, dims.width_m, dims.thickness_m)
    assert trade == "5'10\" x 19 1/4\" x 2 7/16\""
    metric = DisplayUnits().board_size(dims.length_m, dims.width_m, dims.thickness_m)
    assert metric == "177.8 x 48.9 x 6.2 cm"  # 70 in = 177.8 cm exactly
    assert DisplayUnits().board_size(None, 0.5, 0.06) == "–"
    assert DisplayUnits("trade", "mph").board_length(6 * 0.3048 + 2 * 0.0254) == "6'2\""


def test_missing_values_and_small_formats():
    u = DisplayUnits()
    assert u.speed(None) == "–" and u.speed(math.nan) == "–" and u.speed_range(1.0, None) == "–"
    assert duration(42.4) == "42 s" and duration(3725) == "1:02:05" and duration(None) == "–"
    assert share(0.695) == "70 %"
    with pytest.raises(ValueError, match="valid names"):
        DisplayUnits("imperial")
    with pytest.raises(ValueError, match="valid names"):
        DisplayUnits("metric", "furlongs per fortnight")


# --- figures -------------------------------------------------------------------------------
@pytest.fixture(scope="module")
def analysed():
    """A short simulated session analysed by the package (samples and rides)."""
    from sessions.analysis import analyse
    from sessions.simulate import simulate_session

    sim = simulate_session(seed=11, duration_s=1500)
    try:
        from sessions.gpx import read_gpx
    except ImportError:  # the reader is part of the package; without it nothing is analysed
        pytest.fail("sessions.gpx is missing")
    result = analyse(read_gpx(sim.gpx_bytes()))
    doc = result.to_json()
    assert doc["rides"], "the simulated session should hold rides"
    return result.samples, doc["rides"]


def test_track_figure_colours_each_stretch_by_its_state(analysed):
    from matplotlib.collections import LineCollection
    from matplotlib.colors import to_hex

    from dashboard.figures import track_figure

    samples, rides = analysed
    fig = track_figure(samples, rides)
    ax = fig.axes[0]
    lines = [c for c in ax.collections if isinstance(c, LineCollection)][0]
    colours = [to_hex(c) for c in lines.get_colors()]
    expected = [palette.STATE_COLOURS[s] for s in samples["state"].astype(str).to_numpy()[:-1]]
    assert colours == expected
    assert ax.get_xlabel() == "east [m]" and ax.get_ylabel() == "north [m]"
    first = lines.get_segments()[0]
    assert first[0] == pytest.approx(samples[["x_m", "y_m"]].to_numpy()[0])
    assert {t.get_text() for t in ax.get_legend().get_texts()} <= set(palette.STATE_WORDS.values())


def test_speed_figure_marks_each_onset_at_its_value_and_interval(analysed):
    from dashboard.figures import speed_figure
    from sessions.units import KMH_MPS

    samples, rides = analysed
    units = DisplayUnits("metric", "km/h")
    fig = speed_figure(samples, rides, units)
    ax = fig.axes[0]
    marks = [line for line in ax.lines if line.get_marker() == "o"]
    with_onset = [r for r in rides if r["onset_speed_mps"] is not None]
    ys = sorted(float(m.get_ydata()[0]) for m in marks if len(m.get_ydata()) == 1)
    assert ys == pytest.approx(sorted(r["onset_speed_mps"] / KMH_MPS for r in with_onset))
    assert ax.get_ylabel() == "speed [km/h]"
    zoomed = speed_figure(samples, rides, units, zoom_ride=rides[0]["index"]).axes[0]
    lo, hi = zoomed.get_xlim()
    t0 = samples["time"].iloc[0]
    start_min = (pd.Timestamp(rides[0]["start"]) - t0).total_seconds() / 60
    assert lo < start_min < hi and hi - lo < 5


def test_planform_figure_encloses_the_outline_area():
    from dashboard.figures import planform_figure
    from sessions.boards import Outline

    # a 180 cm board, 50 cm wide at the middle, 30 cm at nose and tail stations
    outline = Outline.from_stations([[0.0, 0.0], [0.3048, 0.30], [0.9, 0.50], [1.4952, 0.33], [1.8, 0.28]])
    fig = planform_figure(outline, DisplayUnits(), "test board")
    poly = fig.axes[0].collections[0].get_paths()[0].vertices  # fill_between outline [cm]
    x, y = poly[:, 0] / 100, poly[:, 1] / 100
    area = 0.5 * abs(np.dot(x, np.roll(y, 1)) - np.dot(y, np.roll(x, 1)))  # shoelace formula
    assert area == pytest.approx(outline.planform_area_m2, rel=0.01)


# --- the command ----------------------------------------------------------------------------------
def test_streamlit_command_binds_one_address_without_statistics():
    from dashboard.server import MAX_UPLOAD_MB, streamlit_command

    cmd = streamlit_command("127.0.0.1", 8765)
    opts = dict(zip(cmd[5::2], cmd[6::2]))
    assert cmd[1:4] == ["-m", "streamlit", "run"] and cmd[4].endswith("app.py")
    assert opts["--server.address"] == "127.0.0.1" and opts["--server.port"] == "8765"
    assert opts["--server.headless"] == "true" and opts["--browser.gatherUsageStats"] == "false"
    assert opts["--server.maxUploadSize"] == str(MAX_UPLOAD_MB)
    assert opts["--theme.primaryColor"] == palette.ACCENT


def test_dashboard_command_refuses_a_host_name(tmp_path, capsys):
    from sessions.cli import main

    status = main(["dashboard", "--db", f"sqlite:///{tmp_path / 'l.sqlite'}", "--host", "example.org"])
    err = capsys.readouterr().err
    assert status == 2 and "not an IP address" in err and "Traceback" not in err, err


def test_dashboard_command_refuses_a_port_in_use(tmp_path, capsys):
    from sessions.cli import main

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        s.listen()
        port = s.getsockname()[1]
        status = main(["dashboard", "--db", f"sqlite:///{tmp_path / 'l.sqlite'}", "--port", str(port)])
    err = capsys.readouterr().err
    assert status == 2 and f"port {port}" in err and "in use" in err


def test_dashboard_command_rejects_bad_ports_and_libraries(tmp_path, capsys):
    from sessions.cli import main

    with pytest.raises(SystemExit) as exc:
        main(["dashboard", "--port", "70000"])
    assert exc.value.code == 2 and "outside 1-65535" in capsys.readouterr().err
    (tmp_path / "notadb.sqlite").write_bytes(b"this is not a database" * 100)
    status = main(["dashboard", "--db", f"sqlite:///{tmp_path / 'notadb.sqlite'}"])
    err = capsys.readouterr().err
    assert status == 2 and "cannot open the library" in err and "not a database" in err


def test_address_shown_for_every_interface():
    from dashboard.server import address, check_host

    assert address("0.0.0.0", 8000) == "http://127.0.0.1:8000"
    assert address("::1", 8000) == "http://[::1]:8000"
    assert check_host("localhost") == "127.0.0.1"


def test_demo_command_starts_the_dashboard_on_the_demo_library(monkeypatch):
    import dashboard.server
    from sessions.commands.library import _dashboard_hook

    calls = []
    monkeypatch.setattr(dashboard.server, "serve", lambda url, host, port: calls.append((url, host, port)) or 0)
    hook = _dashboard_hook()
    assert hook is not None
    assert hook("sqlite:///demo.sqlite") == 0
    assert calls == [("sqlite:///demo.sqlite", "127.0.0.1", None)]

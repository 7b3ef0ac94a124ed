"""Load figures (sessions.load) and the ``floatlift load`` command, in-process."""

from __future__ import annotations

import json
import math
import warnings

import pytest

from sessions.boards import Board
from sessions.cli import main
from sessions.errors import BoardSpecError, DataQualityWarning
from sessions.load import CAUTION, LoadFigures, LoadSettings, load_figures
from sessions.physics.regimes import HULL_SPEED_FROUDE
from sessions.physics.water import Water
from sessions.riders import Rider
from sessions.units import G_N

CONTRACT_KEYS = (
    "total_mass_kg", "water_density_kg_m3", "buoyancy_n", "lifted_share", "board_float_fraction",
    "litres_per_kg", "planform_area_m2", "planform_loading_n_m2", "displacement_speed_limit_mps",
    "predicted_onset_mps", "min_breaking_wave_m",
)
SHORTBOARD = '5\'10" x 19 1/4" x 2 7/16"'


def _figures(dims=SHORTBOARD, volume=30.0, board_mass=3.0, rider_mass=80.0, water="sea", **kw) -> LoadFigures:
    board = Board.from_spec(name="test", dims=dims, volume=volume, mass_kg=board_mass)
    return load_figures(board, Rider("test rider", rider_mass), water, **kw)


def test_trade_facts_through_load_figures():
    # Common practice, no published source: 80 kg rider, 30 L 3 kg board, fresh water ->
    # about 36.1 % of the load lifted, the board alone about 10 % submerged.
    figures = _figures(dims=None, water="fresh")
    assert figures.lifted_share == pytest.approx(0.361, abs=0.003)
    assert figures.board_float_fraction == pytest.approx(0.100, abs=0.005)
    assert figures.buoyancy_n == pytest.approx(293.935, abs=0.01)  # Archimedes, rho(15 degC)=999.1026
    assert figures.litres_per_kg == pytest.approx(0.375)
    assert figures.total_mass_kg == 83.0


def test_shape_figures_are_consistent():
    f = _figures()
    assert f.planform_loading_n_m2 == pytest.approx(83.0 * G_N / f.planform_area_m2)
    assert f.planform_loading_kg_m2 == pytest.approx(83.0 / f.planform_area_m2)
    # hull-speed rule on the board's length (1.778 m)
    assert f.displacement_speed_limit_mps == pytest.approx(HULL_SPEED_FROUDE * math.sqrt(G_N * 1.778))
    low, high = f.predicted_onset_mps
    assert f.displacement_speed_limit_mps < low < high
    # McCowan: H_b = 0.78 d_b with sqrt(g d_b) = onset speed (McCowan 1894; linear celerity)
    assert f.min_breaking_wave_m == pytest.approx(0.78 * low**2 / G_N)
    assert f.breaking_wave_band_m[1] == pytest.approx(0.78 * high**2 / G_N)
    assert 1.0 <= f.onset_froude_vol[0] < f.onset_froude_vol[1] <= 3.5
    assert [p.trim_deg for p in f.onset_points] == [12.0, 6.0]
    assert f.unavailable == {}


def test_bigger_board_or_lighter_rider_plans_sooner():
    base = _figures().predicted_onset_mps
    wide = _figures(dims="5'10 x 21 x 2.6", volume=34.0).predicted_onset_mps
    long = _figures(dims="7'6 x 21.5 x 2.75", volume=48.0).predicted_onset_mps
    light = _figures(rider_mass=62.0).predicted_onset_mps
    heavy = _figures(rider_mass=95.0).predicted_onset_mps
    for other in (wide, long, light):
        assert other[0] < base[0] and other[1] < base[1]
    assert heavy[0] > base[0] and heavy[1] > base[1]


def test_water_changes_buoyancy_not_rules():
    sea, fresh = _figures(water="sea"), _figures(water="fresh")
    assert sea.buoyancy_n > fresh.buoyancy_n
    assert sea.water_density_kg_m3 / fresh.water_density_kg_m3 == pytest.approx(sea.buoyancy_n / fresh.buoyancy_n)
    warm = _figures(water=Water.from_inputs("sea", temperature_c=28.0))
    assert warm.water_density_kg_m3 < sea.water_density_kg_m3


def test_missing_inputs_give_null_with_reason():
    f = _figures(dims=None, board_mass=None)
    doc = f.to_json()
    for key in ("total_mass_kg", "lifted_share", "board_float_fraction"):
        assert doc[key] is None and "mass" in doc["unavailable"][key]
    for key in ("planform_area_m2", "planform_loading_n_m2", "displacement_speed_limit_mps",
                "predicted_onset_mps", "min_breaking_wave_m"):
        assert doc[key] is None and key in doc["unavailable"]
    assert doc["buoyancy_n"] > 0 and doc["litres_per_kg"] > 0


def test_board_without_volume_is_an_error():
    board = Board(name="shapeless")
    with pytest.raises(BoardSpecError, match="no volume"):
        load_figures(board, Rider("r", 80.0))


def test_settings_change_the_band():
    narrow = _figures(settings=LoadSettings(trim_range_deg=(8.0, 9.0))).predicted_onset_mps
    wide = _figures().predicted_onset_mps
    assert wide[0] < narrow[0] < narrow[1] < wide[1]
    solitary = _figures(settings=LoadSettings(celerity_model="solitary"))
    assert solitary.min_breaking_wave_m == pytest.approx(0.78 * solitary.predicted_onset_mps[0] ** 2 / (G_N * 1.78))


def test_json_document_and_caution():
    doc = _figures().to_json()
    assert set(CONTRACT_KEYS) <= set(doc)
    json.dumps(doc, allow_nan=False)
    assert doc["caution"] == CAUTION
    for words in ("not safety advice", "within your ability", "lifeguards"):
        assert words in CAUTION
    assert 0.0 < doc["lifted_share"] < 1.0 and 0.0 < doc["board_float_fraction"] < 1.0
    assert isinstance(doc["predicted_onset_mps"], list) and len(doc["predicted_onset_mps"]) == 2


# --- the command line ---------------------------------------------------------------

def _run(capsys, *argv):
    status = main(["load", *argv])
    out, err = capsys.readouterr()
    return status, out, err


def test_cli_contract_example(capsys):
    status, out, err = _run(capsys, "--volume", "30", "--board-mass", "3", "--rider-mass", "80", "--water", "fresh",
                            "--json")
    assert status == 0, err
    doc = json.loads(out)
    assert set(CONTRACT_KEYS) <= set(doc)
    # Common practice, no published source (see test_trade_facts_through_load_figures).
    assert doc["lifted_share"] == pytest.approx(0.361, abs=0.003)
    assert doc["board_float_fraction"] == pytest.approx(0.100, abs=0.005)
    assert doc["predicted_onset_mps"] is None
    assert "dimensions or outline" in doc["unavailable"]["predicted_onset_mps"]


def test_cli_full_board_json(capsys):
    status, out, err = _run(capsys, "--volume", "30L", "--board-mass", "6.6lb", "--rider-mass", "176lb",
                            "--gear-mass", "2", "--dims", SHORTBOARD, "--water-temp", "18", "--json")
    assert status == 0, err
    doc = json.loads(out)
    assert doc["total_mass_kg"] == pytest.approx(176 * 0.45359237 + 2 + 6.6 * 0.45359237)
    assert doc["water"] == {"preset": "sea", "temperature_c": 18.0, "salinity_g_kg": 35.16504}
    low, high = doc["predicted_onset_mps"]
    assert 0 < low < high and doc["min_breaking_wave_m"] > 0
    assert all(doc[key] is not None for key in CONTRACT_KEYS)


def test_cli_text_output(capsys):
    status, out, err = _run(capsys, "--dims", "178 x 49 x 6.2 cm", "--board-mass", "3", "--rider-mass", "80")
    assert status == 0, err
    assert "estimated from dimensions" in out
    assert "planing onset (estimate)" in out and "smallest breaking wave" in out
    assert f"Caution: {CAUTION}" in out


def test_cli_text_says_what_is_missing(capsys):
    status, out, _ = _run(capsys, "--volume", "30", "--rider-mass", "80")
    assert status == 0
    assert "give --board-mass" in out and "give --dims or --outline" in out
    assert "Caution:" in out


def test_cli_outline_file_and_salinity(capsys, tmp_path):
    outline = tmp_path / "outline.csv"
    outline.write_text("x_from_nose_m,width_m\n0,0\n0.3048,0.30\n0.85,0.49\n1.4732,0.37\n1.778,0.22\n")
    status, out, err = _run(capsys, "--volume", "30", "--board-mass", "3", "--rider-mass", "80",
                            "--outline", str(outline), "--salinity", "10", "--json")
    assert status == 0, err
    doc = json.loads(out)
    assert doc["outline_source"] == "stations" and doc["water"]["preset"] is None
    assert doc["planform_area_m2"] > 0 and doc["predicted_onset_mps"] is not None


def test_cli_implausible_volume_warns(capsys):
    # the command prints warnings as one line each on stderr and carries on
    with warnings.catch_warnings():
        warnings.simplefilter("always", DataQualityWarning)
        status, out, err = _run(capsys, "--volume", "60", "--board-mass", "3", "--rider-mass", "80",
                                "--dims", SHORTBOARD, "--json")
    assert status == 0 and json.loads(out)["volume_l"] == 60.0
    assert err.startswith("floatlift: warning: stated volume 60 L")


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["--volume", "abc", "--rider-mass", "80"], "volume"),
        (["--volume", "30", "--rider-mass", "-5"], "rider mass"),
        (["--volume", "30", "--rider-mass", "heavy"], "rider mass"),
        (["--volume", "30", "--rider-mass", "80", "--board-mass", "3 stone"], "board mass"),
        (["--dims", "178 x 49 x 6.2", "--rider-mass", "80"], "no units"),
        (["--volume", "30", "--rider-mass", "80", "--water-temp", "99"], "temperature"),
        (["--volume", "30", "--rider-mass", "80", "--salinity", "80"], "salinity"),
        (["--volume", "30", "--rider-mass", "80", "--outline", "absent.csv"], "outline"),
        (["--volume", "30", "--rider-mass", "80", "--dims", SHORTBOARD, "--trim-deg", "1", "5"], "trim"),
        (["--rider-mass", "80"], "--volume"),
        (["--rider-mass", "80", "--outline", "x.csv"], "outline alone"),
    ],
)
def test_cli_bad_input_exits_2_with_one_line(capsys, argv, message):
    status, out, err = _run(capsys, *argv)
    assert status == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("floatlift: error:") and message in lines[0]

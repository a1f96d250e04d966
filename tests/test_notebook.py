"""Notebook and library use: inline drawings and tables, .plot(), DataFrames of probes and sweeps."""

import math
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

import ridesim as rs
from ridesim.errors import InputError
from ridesim.jobs.check import check_scenario
from ridesim.jobs.simulate import simulate
from ridesim.jobs.size_motor import size_motor
from ridesim.jobs.sweep import read_results
from ridesim.scenario.build import solve_scenario
from ridesim.scenario.load import load_scenario

ROOT = Path(__file__).resolve().parent.parent
SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def hexa():
    return load_scenario(ROOT / "scenarios" / "hexagon_trolley.toml")


@pytest.fixture(scope="module")
def sim(hexa):
    # 2.5 s: the shortest run whose comfort grade has its 2 s record after the 0.5 s settling.
    return simulate(hexa.replace_many({"run.duration_s": 2.5, "run.settle_s": 0.5}))


def test_wheel_draws_itself_with_a_true_scale_bar():
    svg = rs.Wheel.polygon(sides=6, apothem=0.12)._repr_svg_()
    root = ET.fromstring(svg)  # well-formed SVG
    poly = root.find(f"{SVG}polygon")
    pts = np.array([[float(v) for v in p.split(",")] for p in poly.get("points").split()])
    # A regular hexagon of apothem a spans 2a / cos(30 deg) = 277.1 mm corner to corner
    # (elementary geometry); the scale bar is the largest 1-2-5 length within a quarter: 50 mm.
    width_mm = 2 * 120.0 / math.cos(math.pi / 6)
    line = root.find(f"{SVG}line")
    bar_px = float(line.get("x2")) - float(line.get("x1"))
    assert "50 mm" in svg
    assert bar_px / np.ptp(pts[:, 0]) == pytest.approx(50.0 / width_mm, rel=0.01)


def test_track_and_pair_draw_themselves(hexa):
    pair = solve_scenario(hexa)
    for obj in (pair.track, pair):
        root = ET.fromstring(obj._repr_svg_())
        assert root.find(f"{SVG}polyline") is not None
    # The pair's wheel touches its track: the lowest wheel point meets the track line, within
    # a pixel (the exact pair has zero clearance).
    root = ET.fromstring(pair._repr_svg_())
    wheel = np.array([[float(v) for v in p.split(",")]
                      for p in root.find(f"{SVG}polygon").get("points").split()])
    track = np.array([[float(v) for v in p.split(",")]
                      for p in root.find(f"{SVG}polyline").get("points").split()])
    low = wheel[np.argmax(wheel[:, 1])]  # SVG y grows downwards
    ty = np.interp(low[0], track[:, 0], track[:, 1])
    assert abs(low[1] - ty) < 1.5


def test_results_show_tables_in_reading_units(hexa, sim):
    check = check_scenario(hexa)
    html = check._repr_html_()
    # The hexagon on its catenary track touches it: its least clearance is zero (a residue
    # of about 6e-12 m in floating point) and reads 0.000 mm.
    assert "<th style='text-align:left;font-weight:normal'>clearance.min_m</th><td>0.000 mm</td>" in html
    assert "e-1" not in html.split("<details>")[0]
    motor = size_motor(hexa)._repr_html_()
    assert "max_shaft_speed_rpm" in motor and " rpm<" in motor
    assert "comfort.band" in sim._repr_html_()


def test_plot_methods_draw_on_given_axes(hexa, sim):
    from matplotlib.figure import Figure

    ax = Figure().subplots()
    assert sim.plot(ax=ax) is ax
    assert len(ax.lines) == sim.probes.shaft_torque_Nm.shape[1]
    ax = Figure().subplots()
    check = check_scenario(hexa)
    check.plot(ax=ax)
    assert len(ax.lines) == len(check.steady.motors) == 2  # two uncoupled driven axles


def test_probes_as_a_dataframe(sim):
    df = sim.to_dataframe()
    cols = sim.probes.columns()
    assert list(df.columns) == list(cols)
    assert len(df) == len(sim.probes.time_s)
    assert np.array_equal(df["time_s"].to_numpy(), np.asarray(sim.probes.time_s))


def test_sweep_results_as_a_dataframe(tmp_path):
    (tmp_path / "results.csv").write_text("case,wheel.apothem_m,check.rollable,error\n"
                                          "0,0.1,True,\n1,0.12,False,\n", encoding="utf-8")
    df = read_results(tmp_path)
    assert list(df["wheel.apothem_m"]) == [0.1, 0.12]
    with pytest.raises(InputError, match="no sweep results table"):
        read_results(tmp_path / "nowhere")


def test_missing_pandas_names_the_extra(sim, tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "pandas", None)  # import pandas now raises ImportError
    with pytest.raises(InputError, match=r"ridesim\[dataframe\]"):
        sim.to_dataframe()
    with pytest.raises(InputError, match=r"ridesim\[dataframe\]"):
        read_results(tmp_path)

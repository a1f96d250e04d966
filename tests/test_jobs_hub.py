"""A wheel around a hub from a scenario: [path] keys, solve, check, export, and bad input.

The expected figures are closed forms: identical ellipses about their foci mesh at
E = 2a with speed ratio (1 - e)/(1 + e) .. (1 + e)/(1 - e) (classical elliptical gears;
Litvin et al., Noncircular Gears: Design and Generation, 2009); the pressure angle of a
polar curve is atan(|r'|/r) (the angle between its radius and its normal), which for an
ellipse about its focus, ``r = p/(1 + e cos φ)``, peaks at ``e/√(1 - e²)`` where
cos φ = -e [derived], and for a regular n-gon's face at its corner at tan(π/n).
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest

from ridesim.cli import main
from ridesim.jobs import run_job
from ridesim.scenario.load import load_scenario, scenario_from_dict

SCENARIOS = Path(__file__).resolve().parent.parent / "scenarios"

A, B = 0.06, 0.05
C = math.sqrt(A * A - B * B)
E_ECC = C / A


def test_scenario_path_round_trip():
    sc = load_scenario(SCENARIOS / "elliptic_gear_pair.toml")
    assert sc.path.is_hub and sc.path.side == "outside" and sc.path.ratio == 1
    again = scenario_from_dict(sc.to_dict())
    assert again == sc
    line = scenario_from_dict({"wheel": {"shape": "circle", "radius_m": 0.1}})
    assert not line.path.is_hub and "path" not in line.to_dict()
    moved = sc.replace("path.centre_distance_m", 0.12)  # replaces the ratio (one of the two)
    assert moved.path.ratio is None and moved.path.centre_distance_m == 0.12


def test_elliptic_gear_pair_solve_and_check(capsys):
    assert main(["solve", str(SCENARIOS / "elliptic_gear_pair.toml"), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["centre_distance_m"] == pytest.approx(2 * A, rel=1e-12)
    assert out["closed"] is True and out["hub_lobes"] == 1
    assert out["hub_radius_min_m"] == pytest.approx(A - C, rel=1e-6)
    res = run_job("check", load_scenario(SCENARIOS / "elliptic_gear_pair.toml"))
    assert res["rollable"] is True
    assert res["speed_ratio_min"] == pytest.approx((1 - E_ECC) / (1 + E_ECC), rel=1e-5)
    assert res["speed_ratio_max"] == pytest.approx((1 + E_ECC) / (1 - E_ECC), rel=1e-5)
    assert res["speed_ratio_mean"] == pytest.approx(1.0, rel=1e-9)
    assert res["friction_demand"] == pytest.approx(E_ECC / math.sqrt(1 - E_ECC**2), rel=1e-5)
    assert abs(res["least_gap_m"]) < 1e-9  # touching at the contact only
    assert res["cautions"]


def test_drum_carousel_check_and_text():
    sc = load_scenario(SCENARIOS / "drum_carousel.toml")
    res = run_job("check", sc)
    assert res["solve"]["side"] == "inside" and res["solve"]["hub_lobes"] == 7
    assert res["friction_demand"] == pytest.approx(math.tan(math.pi / 6), rel=1e-3)
    assert res["least_gap_m"] > -1e-9
    # Too little friction is a reason not to roll.
    slick = run_job("check", sc.replace("surface.friction", 0.3))
    assert slick["rollable"] is False and any("friction" in r for r in slick["reasons"])


def test_export_writes_both_parts(tmp_path):
    assert main(["export", str(SCENARIOS / "elliptic_gear_pair.toml"), "--out", str(tmp_path)]) == 0
    names = sorted(p.name for p in tmp_path.iterdir())
    for part in ("wheel", "hub"):
        assert f"elliptic_gear_pair_{part}.svg" in names and f"elliptic_gear_pair_{part}.csv" in names
    assert "elliptic_gear_pair_cut_list.txt" in names
    svg = (tmp_path / "elliptic_gear_pair_hub.svg").read_text()
    assert 'id="centre-hole"' in svg and 'id="outline"' in svg
    # The hub drawn is the same ellipse about its focus, greatest radius at 90 deg
    # (see tests/test_solve_hub.py): rho = a(1 - e^2)/(1 - e sin phi), in mm to 1e-4 mm.
    pts = np.loadtxt(tmp_path / "elliptic_gear_pair_hub.csv", delimiter=",", skiprows=1)
    phi = np.arctan2(pts[:, 1], pts[:, 0])
    rho = 1000 * A * (1 - E_ECC**2) / (1 - E_ECC * np.sin(phi))
    np.testing.assert_allclose(np.hypot(pts[:, 0], pts[:, 1]), rho, rtol=0, atol=2e-4)
    assert main(["export", str(SCENARIOS / "drum_carousel.toml"), "--out", str(tmp_path)]) == 0
    ring = (tmp_path / "drum_carousel_ring.svg").read_text()
    assert 'id="outer-edge"' in ring and 'id="centre-hole"' not in ring


@pytest.mark.parametrize("path, words", [
    ({"kind": "hub", "side": "inside"}, "path.ratio"),
    ({"kind": "hub", "side": "inside", "ratio": 0.5}, "ratio"),
    ({"kind": "hub", "centre_distance_m": 0.05}, "no hub"),
    ({"kind": "hub", "ratio": 1.5}, "whole"),
    ({"kind": "hub", "ratio": 1, "centre_distance_m": 0.2}, "not both"),
    ({"kind": "line", "ratio": 2}, "hub"),
    ({"kind": "circle"}, "path.kind"),
])
def test_bad_path_is_one_line_exit_2(tmp_path, capsys, path, words):
    lines = ['[wheel]', 'shape = "polar"', 'radius_formula = "0.1 + 0.02*cos(phi)"', "[path]"]
    for k, v in path.items():
        lines.append(f"{k} = {json.dumps(v)}")
    f = tmp_path / "bad.toml"
    f.write_text("\n".join(lines) + "\n")
    assert main(["check", str(f), "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and err.startswith("error:") and words in err
    assert not (tmp_path / "o").exists()  # nothing written


def test_hub_with_track_or_unsupported_job_is_refused(tmp_path, capsys):
    f = tmp_path / "t.toml"
    f.write_text('[track]\nshape = "wave"\namplitude_m = 0.02\nwavelength_m = 0.3\n[path]\nkind = "hub"\n')
    assert main(["solve", str(f)]) == 2
    assert "needs a [wheel]" in capsys.readouterr().err
    assert main(["size-motor", str(SCENARIOS / "drum_carousel.toml")]) == 2
    assert "does not handle" in capsys.readouterr().err
    assert main(["simulate", str(SCENARIOS / "drum_carousel.toml")]) == 2  # rings: not yet
    assert "ring" in capsys.readouterr().err


def test_simulate_elliptic_gear_pair(capsys):
    """The demo pair simulated at constant driver speed: driven speed within 2 % of the
    analytic r/(2a - r) all along, its range the classical (1-e)/(1+e) .. (1+e)/(1-e)."""
    assert main(["simulate", str(SCENARIOS / "elliptic_gear_pair.toml"), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["speed_ratio_error_max"] < 0.02 and out["drifts"] is False
    assert out["speed_ratio_min"] == pytest.approx((1 - E_ECC) / (1 + E_ECC), rel=0.02)
    assert out["speed_ratio_max"] == pytest.approx((1 + E_ECC) / (1 - E_ECC), rel=0.02)
    assert out["cautions"]


def test_render_writes_the_plot_and_the_clip(tmp_path):
    from PIL import Image

    assert main(["render", str(SCENARIOS / "drum_carousel.toml"), "--out", str(tmp_path),
                 "--seconds", "1", "--fps", "10"]) == 0
    assert (tmp_path / "hub_ratio.png").stat().st_size > 0
    with Image.open(tmp_path / "clip.gif") as im:
        assert im.n_frames == 10 and im.size == (640, 360)
    assert "clip.gif" in (tmp_path / "index.md").read_text()


def test_track_solve_refuses_a_hub_path():
    # A job that needs a wheel on a track refuses a hub path with one line naming path.kind.
    from ridesim.errors import ScenarioError
    from ridesim.scenario.build import solve_track_scenario
    from ridesim.solve.pair import RollingPair

    with pytest.raises(ScenarioError, match="path.kind"):
        solve_track_scenario(load_scenario(SCENARIOS / "elliptic_gear_pair.toml"))
    # On a straight path: a square of apothem a rolls on catenary arches of period
    # 2 a asinh(1) (Hall & Wagon, "Roads and Wheels", Math. Mag. 65 (1992) 283-301).
    a = 0.3
    pair = solve_track_scenario(scenario_from_dict(
        {"wheel": {"shape": "polygon", "sides": 4, "apothem_m": a}}))
    assert isinstance(pair, RollingPair)
    assert pair.track.period == pytest.approx(2 * a * math.asinh(1.0), rel=1e-9)

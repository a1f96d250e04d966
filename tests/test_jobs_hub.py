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
    # Flat carousel, no brake: the driven wheel's contact force lies along the line of centres
    # (moments about the pivot), so the demand is the hexagon face's tan(pi/6) [derived].
    # (sampled 2 microradians beside each corner, where the peak sits: within 1e-5)
    assert res["friction"]["required_peak"] == pytest.approx(math.tan(math.pi / 6), rel=1e-5)
    slick = run_job("check", sc.replace("surface.friction", 0.3))
    assert slick["rollable"] is False and any("friction" in r for r in slick["reasons"])
    assert [f["code"] for f in slick["findings"]] == ["friction_exceeded"]
    assert slick["findings"][0]["blocks"] is True
    # Standing up (a vertical drum), gravity leans the contact force: more friction is needed.
    drum = run_job("check", sc.replace("path.gravity_in_plane", True))
    assert drum["friction"]["gravity_m_s2"] > 0
    assert drum["friction"]["required_peak"] > res["friction"]["required_peak"] + 0.05


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
    from ridesim.errors import ScenarioError
    from ridesim.jobs.hub import require_line

    with pytest.raises(ScenarioError, match="does not handle"):  # a job not listed in HUB_JOBS
        require_line(load_scenario(SCENARIOS / "drum_carousel.toml"), "some-new-job")
    f.write_text(f.read_text().replace('kind = "hub"', 'kind = "hub"\nview = "gears"\nside = "inside"'
                                       '\nratio = 1.5'))
    assert main(["simulate", str(f)]) == 2  # a ring turns as a carousel only
    assert "path.view" in capsys.readouterr().err


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


def _drum(tmp_path, extra: str = "") -> Path:
    """The demo drum, its wheel turned once on the arm: 2 rad/s for pi seconds."""
    text = (SCENARIOS / "drum_carousel.toml").read_text()
    text = text.replace("ratio = 1.1666666666666667", "ratio = 1.1666666666666667\n" + extra)
    text += f'\n[drive]\nmode = "shaft_speed"\nshaft_speed_rad_s = 2.0\n[run]\nduration_s = {math.pi!r}\n'
    f = tmp_path / "drum.toml"
    f.write_text(text)
    return f


@pytest.mark.parametrize("gravity", [False, True])
def test_simulate_drum_as_a_carousel(tmp_path, capsys, gravity):
    """A ring is simulated as a carousel (the ring fixed, the wheel's axle on an arm about its
    centre), lying flat or standing as a drum with gravity in the plane. Rolling without slip
    inside a ring, one wheel turn on the arm carries the arm on by psi = 2 pi / ratio (the
    pitch curves' closure, r dtheta = rho dpsi; Litvin & Fuentes 2004): 2 pi 6/7 for the 7/6
    ring; all along, the arm keeps to psi(theta) - pi/2."""
    f = _drum(tmp_path, "gravity_in_plane = true" if gravity else "")
    assert main(["simulate", str(f), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["view"] == "carousel" and out["side"] == "inside" and out["gravity_in_plane"] is gravity
    assert out["wheel_turns"] == pytest.approx(1.0)
    assert out["arm_sweep_rad"] == pytest.approx(2 * math.pi * 6 / 7, abs=0.01)
    assert out["analytic_arm_sweep_rad"] == pytest.approx(2 * math.pi * 6 / 7, abs=0.003)  # 1 step
    assert out["phase_drift_rad"] < 0.01 and out["drifts"] is False
    assert abs(out["arm_drift_end_rad"]) <= out["phase_drift_rad"]
    # Without gravity the unset preload is the wheel's weight; with it, twice the weight.
    hexagon_kg = 2 * math.sqrt(3) * 0.25 ** 2 * 0.018 * 600.0  # area 2 sqrt(3) a^2 [textbook]
    assert out["preload_N"] == pytest.approx(hexagon_kg * 9.80665 * (2 if gravity else 1), rel=1e-6)
    assert main(["simulate", str(f)]) == 0
    text = capsys.readouterr().out
    assert "carousel" in text and "arm swept" in text and "DRIFTS" not in text
    assert ("vertical drum" in text) is gravity


def test_simulate_gear_pair_in_the_carousel_view(tmp_path, capsys):
    """The elliptic pair with path.view = "carousel": the hub fixed, one driver turn carries the
    arm back by a whole turn (ratio 1: psi advances 2 pi), and the arm follows pi/2 - psi(theta)
    with psi the elliptical gears' transmission function (Litvin et al. 2009). At 0.2 ms
    and a 20 N preload the arm stays within 0.01 rad."""
    text = (SCENARIOS / "elliptic_gear_pair.toml").read_text()
    text = (text.replace("ratio = 1 ", 'view = "carousel"\nratio = 1 ')
            .replace("preload_N = 2.0 ", "preload_N = 20.0 ")
            .replace("duration_s = 1.6", f"duration_s = {math.pi / 2!r}")
            .replace("timestep_s = 0.0005", "timestep_s = 0.0002"))
    f = tmp_path / "pair.toml"
    f.write_text(text)
    assert main(["simulate", str(f), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["view"] == "carousel" and out["side"] == "outside"
    assert out["arm_sweep_rad"] == pytest.approx(-2 * math.pi, abs=0.01)
    sc = load_scenario(f)
    from ridesim.scenario.build import solve_hub_scenario

    pair = solve_hub_scenario(sc)
    phi = float(pair.wheel_angle(0.0)) + 2 * math.pi - 0.5 * math.pi  # the end of the turn
    k = round(phi / (2 * math.pi))
    psi = 2 * math.atan((1 - E_ECC) / (1 + E_ECC) * math.tan((phi - 2 * math.pi * k) / 2)) + 2 * math.pi * k
    assert out["analytic_arm_angle_end_rad"] == pytest.approx(0.5 * math.pi - psi, abs=0.003)
    assert out["phase_drift_rad"] < 0.01 and out["drifts"] is False


def test_path_view_and_gravity_keys_are_checked(tmp_path, capsys):
    base = (SCENARIOS / "elliptic_gear_pair.toml").read_text()
    for extra, words in (('view = "round"', "path.view"),
                         ("gravity_in_plane = true", "path.gravity_in_plane belongs to the carousel")):
        f = tmp_path / "bad.toml"
        f.write_text(base.replace("ratio = 1 ", extra + "\nratio = 1 "))
        assert main(["simulate", str(f)]) == 2
        err = capsys.readouterr().err.strip()
        assert err.count("\n") == 0 and words in err
    line = tmp_path / "line.toml"
    line.write_text('[wheel]\nshape = "circle"\nradius_m = 0.1\n[path]\nview = "carousel"\n')
    assert main(["check", str(line)]) == 2
    assert "belongs to a hub path" in capsys.readouterr().err


def test_standing_drum_with_a_weak_preload_loses_contact():
    # Inside a standing ring the preload P presses the wheel outwards while gravity pulls it
    # towards the centre with m g sin(alpha) (alpha: the arm above the horizontal), so the
    # normal force P - m g sin(alpha) first reaches zero at sin(alpha) = P/(m g)
    # (radial statics; the pressure angle is ~0 there, at the middle of a face).
    sc = load_scenario(SCENARIOS / "drum_carousel.toml")
    sc = sc.replace("path.gravity_in_plane", True).replace("path.preload_N", 5.0)
    res = run_job("check", sc)
    assert res["rollable"] is False and [f["code"] for f in res["findings"]] == ["hub_lift_off"]
    from ridesim.scenario.build import solve_hub_scenario, wheel_mass

    m = wheel_mass(sc, solve_hub_scenario(sc).wheel).mass_kg
    alpha = res["friction"]["arm_angle_at_peak_rad"]
    assert math.sin(alpha) == pytest.approx(5.0 / (m * 9.80665), abs=0.01)
    assert "leaves the ring" in res["reasons"][0] and "path.preload_N" in res["reasons"][0]

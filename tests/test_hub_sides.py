"""The given side of a hub path: ``[hub]`` (the wheel solved for a given hub or ring) and
``[ratio]`` (both pitch curves designed for a required speed ratio), through the scenario."""

import json
import math
from pathlib import Path

import numpy as np
import pytest

from ridesim.cli import main
from ridesim.errors import RidesimError
from ridesim.scenario.build import solve_hub_scenario, solve_scenario
from ridesim.scenario.load import load_scenario, scenario_from_dict

ROOT = Path(__file__).resolve().parent.parent
DEMOS = ("ring_drum_from_hub", "ratio_gear_pair")
TWO_PI = 2.0 * math.pi


def _solve(data):
    return solve_hub_scenario(scenario_from_dict(data))


# ---------------------------------------------------------------------------- [hub]
@pytest.mark.parametrize("side,k", [("outside", 1.0), ("outside", 2.5), ("inside", 3.0)])
def test_circle_hub_gives_the_rolling_circle(side, k):
    # Rolling circles without slip (elementary geometry): a wheel of radius R on a circle of
    # radius rho0 turns rho0/R times per turn of it; outside E = R + rho0, inside E = rho0 - R.
    rho0 = 0.3
    pair = _solve({"hub": {"shape": "circle", "radius_m": rho0},
                   "path": {"kind": "hub", "side": side, "ratio": k}})
    R = rho0 / k
    assert pair.solved_from == "hub"
    assert pair.centre_distance == pytest.approx(R + rho0 if side == "outside" else rho0 - R,
                                                 rel=1e-12)
    phi = np.linspace(0.0, TWO_PI, 97)
    assert np.allclose(pair.wheel.radius(phi), R, rtol=1e-12, atol=0)
    assert np.allclose(pair.hub.radius(phi), rho0, rtol=1e-12, atol=0)
    assert pair.ratio == pytest.approx(k, rel=1e-12)


def test_circle_hub_at_a_centre_distance():
    # The same rolling circles: outside R = E - rho0, inside R = rho0 - E.
    out = _solve({"hub": {"shape": "circle", "radius_m": 0.3},
                  "path": {"kind": "hub", "centre_distance_m": 0.45}})
    assert float(out.wheel.radius(0.0)) == pytest.approx(0.15, rel=1e-12)
    ins = _solve({"hub": {"shape": "circle", "radius_m": 0.3},
                  "path": {"kind": "hub", "side": "inside", "centre_distance_m": 0.2}})
    assert float(ins.wheel.radius(1.0)) == pytest.approx(0.1, rel=1e-12)
    assert ins.ratio == pytest.approx(3.0, rel=1e-12)  # rho0 / R


def test_ellipse_hub_about_its_focus_gives_the_same_ellipse():
    # Two identical ellipses turning about their foci at centre distance 2a roll on each other
    # (classical elliptical gears; Litvin et al., Noncircular Gears, 2009): the wheel for an
    # ellipse hub with lobes = 1 is the same ellipse, E = 2a, one turn per turn. About its
    # focus an ellipse is r = a(1 - e^2)/(1 + e cos(phi - phi0)) (focal polar equation), so
    # 1/r is affine in cos phi and sin phi with |(B, C)|/A = e and 1/A = a(1 - e^2).
    a, b = 0.06, 0.05
    c = math.sqrt(a * a - b * b)
    e = c / a
    pair = _solve({"hub": {"shape": "ellipse", "semi_axes_m": [a, b], "axle_m": [c, 0.0],
                           "lobes": 1}, "path": {"kind": "hub"}})
    assert pair.centre_distance == pytest.approx(2 * a, rel=1e-12)
    assert pair.ratio == pytest.approx(1.0, rel=1e-12)
    phi = np.linspace(0.0, TWO_PI, 721)
    inv = 1.0 / pair.wheel.radius(phi)
    M = np.column_stack([np.ones_like(phi), np.cos(phi), np.sin(phi)])
    (A, B, C), *_ = np.linalg.lstsq(M, inv, rcond=None)
    assert np.max(np.abs(M @ np.array([A, B, C]) - inv)) * a < 1e-9
    assert math.hypot(B, C) / A == pytest.approx(e, abs=1e-9)
    assert 1.0 / A == pytest.approx(a * (1 - e * e), rel=1e-9)


def test_ring_demo_wheel_has_the_lobes_asked_for():
    # A ring of 5 repeats rolled over 4 of them per wheel turn: the wheel turns 5/4 times per
    # ring turn (dtheta/dpsi = rho/r, integrated: s/lobes) and has the 4-fold symmetry, so
    # its radius repeats every 2*pi/4.
    sc = load_scenario(ROOT / "scenarios" / "ring_drum_from_hub.toml")
    pair = solve_scenario(sc)
    assert pair.side == "inside" and pair.closed
    assert pair.ratio == pytest.approx(5 / 4, rel=1e-12)
    phi = np.linspace(0.0, TWO_PI, 200, endpoint=False)
    assert np.allclose(pair.wheel.radius(phi), pair.wheel.radius(phi + TWO_PI / 4),
                       rtol=0, atol=1e-9 * 0.6)
    # Contact on the line of centres inside a ring: rho - r = E at every wheel angle.
    th = np.linspace(0.0, TWO_PI, 301)
    rho = pair.hub.radius(pair.hub_angle(th) - math.pi / 2)
    assert np.allclose(rho - pair.wheel_radius(th), pair.centre_distance, rtol=0, atol=1e-9)


# ---------------------------------------------------------------------------- [ratio]
def test_ratio_formula_of_elliptical_gears_gives_an_ellipse():
    # Derivation: identical ellipses about their foci at E = 2a; with the driver's contact
    # radius r = p/(1 - e cos theta), p = a(1 - e^2) (focal polar equation, contact at the
    # far vertex at theta = 0), the driven radius is 2a - r and the speed ratio
    # R = r/(2a - r) = (1 - e^2)/(1 - 2e cos theta + e^2). Designed from R, both pitch curves
    # must be that ellipse (eccentricity e, semi-latus rectum p), with R between
    # (1 - e)/(1 + e) and (1 + e)/(1 - e) (Litvin et al. 2009).
    e, E = 0.3, 0.12
    a = E / 2
    pair = _solve({"ratio": {"formula": f"(1 - {e}^2)/(1 - 2*{e}*cos(theta) + {e}^2)"},
                   "path": {"kind": "hub", "centre_distance_m": E}})
    assert pair.solved_from == "ratio" and pair.closed
    for body in (pair.wheel, pair.hub):
        phi = np.linspace(0.0, TWO_PI, 721)
        inv = 1.0 / body.radius(phi)
        M = np.column_stack([np.ones_like(phi), np.cos(phi), np.sin(phi)])
        (A, B, C), *_ = np.linalg.lstsq(M, inv, rcond=None)
        assert np.max(np.abs(M @ np.array([A, B, C]) - inv)) * a < 1e-9
        assert math.hypot(B, C) / A == pytest.approx(e, abs=1e-9)
        assert 1.0 / A == pytest.approx(a * (1 - e * e), rel=1e-9)
    th = np.linspace(0.0, TWO_PI, 2001)
    sr = pair.speed_ratio(th)
    assert sr.min() == pytest.approx((1 - e) / (1 + e), rel=1e-6)
    assert sr.max() == pytest.approx((1 + e) / (1 - e), rel=1e-9)


def test_ratio_formula_and_table_are_reproduced_along_the_cycle():
    # The designed pair's speed ratio r/(E - r) must be the required one (the inverse problem
    # of non-circular gears, Litvin et al. 2009): the formula at every angle (evaluated here
    # with numpy), the table at its rows (a periodic cubic spline passes through its nodes).
    th = np.linspace(-3.0, 9.0, 1201)
    pair = _solve({"ratio": {"formula": "1 + 0.3*cos(2*theta)"},
                   "path": {"kind": "hub", "centre_distance_m": 0.12}})
    assert np.max(np.abs(pair.speed_ratio(th) - (1 + 0.3 * np.cos(2 * th)))) < 1e-9
    assert pair.ratio == pytest.approx(1.0, rel=1e-12) and pair.hub_lobes == 2
    nodes = np.linspace(0.0, TWO_PI, 25, endpoint=False)
    vals = 1.0 + 0.2 * np.sin(nodes) + 0.1 * np.cos(3 * nodes)  # mean 1: closes with one lobe
    rows = [[float(t), float(v)] for t, v in zip(nodes, vals, strict=True)]
    tab = _solve({"ratio": {"points_rad": rows}, "path": {"kind": "hub", "centre_distance_m": 0.1}})
    assert np.max(np.abs(tab.speed_ratio(nodes) - vals)) < 1e-9
    assert np.max(np.abs(tab.speed_ratio(nodes + TWO_PI) - vals)) < 1e-9
    # Between the rows the ratio is the periodic cubic spline (scipy's, the reference).
    from scipy.interpolate import CubicSpline

    sp = CubicSpline(np.append(nodes, TWO_PI), np.append(vals, vals[0]), bc_type="periodic")
    mid = nodes + 0.5 * (nodes[1] - nodes[0])
    assert np.max(np.abs(tab.speed_ratio(mid) - sp(mid))) < 1e-9


def test_inside_gear_pair_from_a_ratio():
    # An internal pair: r = E R/(1 - R), the ring rho = E + r, so R = r/(E + r) < 1
    # (Litvin et al. 2009, internal gears).
    pair = _solve({"ratio": {"formula": "0.5 + 0.1*cos(theta)"},
                   "path": {"kind": "hub", "side": "inside", "centre_distance_m": 0.05}})
    th = np.linspace(0.0, TWO_PI, 400)
    r = pair.wheel_radius(th)
    R = 0.5 + 0.1 * np.cos(th)
    assert np.allclose(r, 0.05 * R / (1 - R), rtol=1e-12)
    assert np.max(np.abs(pair.speed_ratio(th) - R)) < 1e-9


def test_round_trip_and_replace_keep_the_given_side():
    sc = load_scenario(ROOT / "scenarios" / "ring_drum_from_hub.toml")
    again = scenario_from_dict(sc.to_dict())
    assert again == sc and again.hub.lobes == 4 and again.wheel.shape is None
    three = sc.replace("hub.lobes", 3)
    assert solve_scenario(three).ratio == pytest.approx(5 / 3, rel=1e-12)
    sc2 = load_scenario(ROOT / "scenarios" / "ratio_gear_pair.toml")
    assert scenario_from_dict(sc2.to_dict()) == sc2
    changed = sc2.replace("path.centre_distance_m", 0.2)
    assert solve_scenario(changed).centre_distance == 0.2


# ---------------------------------------------------------------------------- commands
@pytest.mark.parametrize("stem", DEMOS)
@pytest.mark.parametrize("cmd", ["solve", "check", "simulate", "export", "render", "report"])
def test_every_hub_command_runs_on_the_demos(stem, cmd, tmp_path, capsys):
    args = [cmd, str(ROOT / "scenarios" / f"{stem}.toml"), "--json"]
    if cmd in ("export", "render", "report"):
        args += ["--out", str(tmp_path / "out")]
    if cmd == "render":
        args += ["--no-clip"]
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    assert out
    if cmd == "solve":
        assert out["closed"] is True
        assert out["solved_from"] == ("hub" if stem.startswith("ring") else "ratio")


def test_sweep_varies_the_given_side(tmp_path, capsys):
    sweep = tmp_path / "s.toml"
    sweep.write_text(f'base = "{ROOT / "scenarios" / "ring_drum_from_hub.toml"}"\n'
                     'run = "solve"\n[vary]\n"hub.lobes" = [3, 4]\n')
    assert main(["sweep", str(sweep), "--out", str(tmp_path / "res"), "--workers", "1",
                 "--json"]) == 0
    import csv

    rows = list(csv.DictReader((tmp_path / "res" / "results.csv").open()))
    ratios = sorted(float(r["ratio"]) for r in rows)
    assert ratios == pytest.approx([5 / 4, 5 / 3], rel=1e-9)  # ring symmetry / lobes


# ---------------------------------------------------------------------------- bad input
HUB_OK = '[hub]\nshape = "polar"\nradius_formula = "0.6 + 0.03*cos(5*phi)"\n'
BAD = [
    ('[ratio]\nformula = "1.2 + 0.1*cos(theta)"\n[path]\nkind = "hub"\ncentre_distance_m = 0.1\n',
     "ratio.formula"),  # mean ratio 1.2 with a one-fold driver: the driven gear does not close
    ('[ratio]\nformula = "cos(theta)"\n[path]\nkind = "hub"\ncentre_distance_m = 0.1\n',
     "self-crossing"),
    ('[ratio]\nformula = "1 + 0.3*cos(theta"\n[path]\nkind = "hub"\ncentre_distance_m = 0.1\n',
     "ratio.formula"),
    ('[ratio]\npoints_rad = [[0, 1], [1, 1.1], [2, 0.9]]\n[path]\nkind = "hub"\ncentre_distance_m'
     ' = 0.1\n', "ratio.points_rad"),
    ('[ratio]\nformula = "1"\n[path]\nkind = "hub"\n', "path.centre_distance_m"),
    ('[ratio]\nformula = "1"\npoints_rad = [[0, 1], [1, 1], [2, 1], [3, 1]]\n[path]\nkind = "hub"\n'
     'centre_distance_m = 0.1\n', "formula, points_rad"),
    (HUB_OK + 'lobes = 5\n[path]\nkind = "hub"\nside = "inside"\n', "hub.lobes"),  # ring: < 5
    (HUB_OK + 'lobes = 0\n[path]\nkind = "hub"\n', "hub.lobes"),
    (HUB_OK + '[path]\nkind = "hub"\nratio = 2\n', "path.ratio"),
    (HUB_OK + '[path]\nkind = "hub"\n[wheel]\nshape = "circle"\nradius_m = 0.1\n', "not both"),
    (HUB_OK + '[path]\nkind = "hub"\n[ratio]\nformula = "1"\n', "not both"),
    (HUB_OK, "path.kind"),
    ('[hub]\nshape = "circle"\nradius_m = 0.2\nlobes = 1\n[path]\nkind = "hub"\n', "hub.lobes"),
    ('[hub]\nshape = "circle"\nradius_m = 0.2\n[path]\nkind = "hub"\ncentre_distance_m = 0.1\n',
     "path.centre_distance_m"),
    ('[hub]\nshape = "polygon"\nsides = 6\n[path]\nkind = "hub"\n', "hub:"),
]


@pytest.mark.parametrize("text,needle", BAD)
def test_bad_given_side_is_one_line_exit_2(text, needle, tmp_path, capsys):
    path = tmp_path / "bad.toml"
    path.write_text(text)
    out = tmp_path / "out"
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: ") and needle in err[0], err
    assert main(["export", str(path), "--out", str(out)]) == 2
    assert not out.exists() or not any(out.iterdir())


def test_scenario_errors_name_the_key():
    with pytest.raises(RidesimError, match=r"^hub\.lobes"):
        _solve({"hub": {"shape": "polar", "radius_formula": "0.6 + 0.03*cos(5*phi)", "lobes": 6},
                "path": {"kind": "hub", "side": "inside"}})

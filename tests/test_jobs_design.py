"""Design to a brief: optima known in closed form, infeasible briefs, bad briefs, determinism, resume.

The figures per design come from the jobs (checked against closed forms in their own tests);
here the search is checked against optima derived from those closed forms:

- a regular n-gon with sharp corners on its catenary track needs friction tan(pi/n) at steady
  speed, peaking at the cusps (Hall & Wagon, "Roads and Wheels", Mathematics Magazine
  65(5):283-301, 1992; derived: the arch y = -a cosh(x/a) slopes by sinh(x/a) = tan(pi/n) at the
  end of a side), so the fewest sides that roll on grip mu is the least n >= 4 with
  tan(pi/n) <= mu (the triangle fails by interference, Hall & Wagon);
- the track period of a regular n-gon of apothem a is 2 a asinh(tan(pi/n)) (Hall & Wagon), so
  the largest apothem of a square whose period stays within P is P / (2 asinh(1));
- a square of apothem a with corners rounded to r needs (1 - r/a) tan(pi/4) (derived: the
  contact angle at the end of the straight part of a side), so the least corner radius on
  grip 0.8 is r = 0.2 a.
"""

import json
import math
from pathlib import Path

import pytest

from ridesim.cli import main
from ridesim.errors import ScenarioError
from ridesim.jobs.design import load_brief, run_design
from ridesim.jobs.design.evaluate import JOURNAL

ROOT = Path(__file__).resolve().parent.parent

NGON = """
seed = 3
[base]
[base.wheel]
shape = "polygon"
sides = 8
apothem_m = 0.1
[base.surface]
friction = {mu}
[vary]
"wheel.sides" = {{ from = 3, to = {n_max} }}
[require]
"check.rollable" = true
{extra}
[goal]
minimize = "wheel.sides"
"""

APOTHEM = """
seed = {seed}
[base]
[base.wheel]
shape = "polygon"
sides = 4
apothem_m = 0.1
[vary]
"wheel.apothem_m" = {{ from = 0.02, to = 0.3 }}
[require]
"solve.period_m" = {{ max = 0.2 }}
[goal]
maximize = "wheel.apothem_m"
[search]
samples = 16
refine = 1
xtol = 1e-4
"""


def brief(tmp_path, text, name="brief.toml"):
    f = tmp_path / name
    f.write_text(text)
    return f


def least_sides(mu):
    # Least n >= 4 with tan(pi/n) <= mu (Hall & Wagon 1992; the triangle interferes).
    n = 4
    while math.tan(math.pi / n) > mu:
        n += 1
    return n


def test_fewest_sides_that_roll_on_grip(tmp_path):
    res = run_design(brief(tmp_path, NGON.format(mu=0.5, n_max=12, extra="")), workers=1)
    assert least_sides(0.5) == 7
    assert res.feasible
    assert res.to_dict()["best"]["values"] == {"wheel.sides": 7}
    # Branch and bound on the goal, one goal value at a time: proving 7 optimal takes the
    # sides 3..6 (all fail) and 7, and nothing above 7 is run.
    assert res.to_dict()["evaluations"] == 7 - 3 + 1
    assert sorted(d.values["wheel.sides"] for d in res.outcome.designs) == [3, 4, 5, 6, 7]


def test_branch_and_bound_runs_ties_together_and_ignores_workers(tmp_path):
    # Sides and grip both vary; the least sides that roll on the better grip 0.6 is the least
    # n >= 4 with tan(pi/n) <= 0.6 (Hall & Wagon 1992), i.e. 6. Each goal value's designs (both
    # grips) run together; the tiers 7 and 8 are pruned. 1 and 2 workers run the same designs.
    text = NGON.format(mu=0.5, n_max=12, extra="").replace(
        '"wheel.sides" = { from = 3, to = 12 }',
        '"wheel.sides" = [4, 5, 6, 7, 8]\n"surface.friction" = [0.5, 0.6]')
    a = run_design(brief(tmp_path, text), workers=1)
    b = run_design(brief(tmp_path, text, "b.toml"), workers=2)
    assert least_sides(0.6) == 6
    assert a.to_dict()["best"]["values"] == {"wheel.sides": 6, "surface.friction": 0.6}
    ran = [(d.values["wheel.sides"], d.values["surface.friction"]) for d in a.outcome.designs]
    assert ran == [(n, mu) for n in (4, 5, 6) for mu in (0.5, 0.6)]
    assert [d.values for d in b.outcome.designs] == [d.values for d in a.outcome.designs]
    assert a.outcome.stages == b.outcome.stages == {"enumeration": 6, "pruned": 4}
    for k in ("best", "candidates", "evaluations", "method"):
        assert a.to_dict()[k] == b.to_dict()[k]


def test_fewest_sides_with_a_friction_margin(tmp_path):
    # Keep 20 % of the grip 0.5 in reserve: tan(pi/n) <= 0.5/1.2.
    extra = '"check.friction.required_peak" = { max = 0.4166666666666667 }'
    res = run_design(brief(tmp_path, NGON.format(mu=0.5, n_max=12, extra=extra)), workers=2)
    best = res.to_dict()["best"]
    assert best["values"]["wheel.sides"] == least_sides(0.5 / 1.2) == 8
    assert best["figures"]["check.friction.required_peak"] == pytest.approx(
        math.tan(math.pi / 8), rel=1e-6)
    assert res.to_dict()["binding"][0]["requirement"].startswith("check.friction.required_peak")


def test_largest_apothem_within_a_period(tmp_path):
    res = run_design(brief(tmp_path, APOTHEM.format(seed=1)), workers=1)
    a_star = 0.2 / (2 * math.asinh(math.tan(math.pi / 4)))
    a = res.to_dict()["best"]["values"]["wheel.apothem_m"]
    assert a <= a_star * (1 + 1e-9)
    assert a == pytest.approx(a_star, rel=1e-3)
    # Against a grid at the same resolution over the range (0.28 / 1e-4 points): far fewer.
    assert res.to_dict()["evaluations"] * 10 < 0.28 / (1e-4 * 0.28)


@pytest.mark.slow
def test_least_corner_radius_on_grip(tmp_path):
    text = """
seed = 2
[base]
[base.wheel]
shape = "polygon"
sides = 4
apothem_m = 0.3
corner_radius_m = 0.03
fit_track_to_corners = true
[base.surface]
friction = 0.8
[vary]
"wheel.corner_radius_m" = { from = 0.005, to = 0.15 }
[require]
"check.friction.required_peak" = { max = 0.8 }
[goal]
minimize = "wheel.corner_radius_m"
[search]
samples = 8
refine = 1
"""
    res = run_design(brief(tmp_path, text), workers=2)
    r = res.to_dict()["best"]["values"]["wheel.corner_radius_m"]
    assert r == pytest.approx(0.2 * 0.3, rel=0.01)  # (1 - r/a) tan(pi/4) = 0.8


def test_infeasible_brief_reports_nearest_and_violation(tmp_path, capsys):
    # Up to 8 sides on grip 0.3: tan(pi/8) = 0.414 > 0.3, so nothing rolls; the nearest is
    # the octagon, missing by tan(pi/8) - 0.3.
    extra = '"check.friction.required_peak" = { max = 0.3 }'
    f = brief(tmp_path, NGON.format(mu=0.3, n_max=8, extra=extra))
    res = run_design(f, workers=1)
    d = res.to_dict()
    assert d["feasible"] is False and d["best"] is None
    assert d["nearest"]["values"] == {"wheel.sides": 8}
    assert d["conflicts"]["never_met"] == ["check.rollable == true",
                                           "check.friction.required_peak <= 0.3"]
    code = main(["design", str(f), "--json", "--workers", "1", "--out", str(tmp_path / "out")])
    assert code == 0
    d = json.loads(capsys.readouterr().out)
    failed = {f["requirement"]: f for f in d["nearest"]["failed"]}
    peak = failed["check.friction.required_peak <= 0.3"]
    assert peak["by"] == pytest.approx(math.tan(math.pi / 8) - 0.3, rel=1e-6)
    assert (tmp_path / "out" / "nearest_1.toml").is_file()
    assert not (tmp_path / "out" / "best.toml").exists()


@pytest.mark.parametrize("change, words", [
    (('"wheel.sides" = { from = 3, to = 12 }', '"wheel.sidez" = [4, 5]'), "wheel.sidez"),
    (('"check.rollable"', '"check.friction.required_peek"'), "required_peek"),
    (('"check.rollable"', '"checks.rollable"'), "checks.rollable"),
    (("from = 3, to = 12", "from = 12, to = 3"), "empty range"),
    (("from = 3, to = 12", "from = 2, to = 12"), "wheel.sides must be >= 3"),
    (('minimize = "wheel.sides"', 'minimize = "check.clearance.feature"'), "not a number"),
    (('"check.rollable" = true', '"solve.friction.required_peak" = { max = 1 }'),
     "not a figure of solve"),
])
def test_bad_brief_one_line_exit_2(tmp_path, capsys, change, words):
    text = NGON.format(mu=0.5, n_max=12, extra="").replace(*change)
    f = brief(tmp_path, text)
    code = main(["design", str(f), "--json", "--out", str(tmp_path / "out")])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert len(err.splitlines()) == 1 and words in err
    assert not (tmp_path / "out").exists()  # refused before any design ran or file was written


def test_empty_list_refused():
    with pytest.raises(ScenarioError, match="empty list"):
        from ridesim.jobs.design.brief import _variable

        _variable("wheel.sides", [])


def test_same_seed_same_result(tmp_path):
    a = run_design(brief(tmp_path, APOTHEM.format(seed=5)), workers=1).to_dict()
    b = run_design(brief(tmp_path, APOTHEM.format(seed=5)), workers=2).to_dict()
    c = run_design(brief(tmp_path, APOTHEM.format(seed=6), "c.toml"), workers=1).to_dict()
    for k in ("best", "candidates", "evaluations", "method"):
        assert a[k] == b[k]
    assert a["candidates"] != c["candidates"]  # another seed, another sample


def test_resume_after_interruption(tmp_path):
    f = brief(tmp_path, APOTHEM.format(seed=1))
    out = tmp_path / "out"
    full = run_design(f, out, workers=1).to_dict()
    lines = (out / JOURNAL).read_text().splitlines(keepends=True)
    n = len(lines)
    assert n == full["evaluations"]
    # As if killed after 10 designs, half-way through writing the 11th line.
    (out / JOURNAL).write_text("".join(lines[:10]) + lines[10][: len(lines[10]) // 2])
    again = run_design(f, out, workers=1).to_dict()
    assert again["computed_now"] == n - 10
    for k in ("best", "candidates", "evaluations"):
        assert json.dumps(again[k]) == json.dumps(full[k])  # same values, same order
    again2 = run_design(f, out, workers=1).to_dict()
    assert again2["computed_now"] == 0


def test_best_toml_is_a_ready_scenario(tmp_path):
    from ridesim.jobs import run_job
    from ridesim.scenario.load import load_scenario

    out = tmp_path / "out"
    res = run_design(brief(tmp_path, NGON.format(mu=0.5, n_max=12, extra="")), out, workers=1)
    sc = load_scenario(out / "best.toml")
    assert sc.wheel.sides == 7
    # The same job on the written scenario gives the figure the search reported.
    assert run_job("check", sc)["rollable"] is True
    assert (out / "candidates.csv").read_text().splitlines()[1].startswith("1,7,")
    assert json.loads((out / "design.json").read_text())["best"] == res.to_dict()["best"]


def test_two_goals_front_is_the_period_line(tmp_path):
    # Largest apothem against shortest period of a square: every period is 2 a asinh(1)
    # (Hall & Wagon 1992), so the trade-off front is that line, a increasing with the period.
    text = APOTHEM.format(seed=1).replace('maximize = "wheel.apothem_m"',
                                          'maximize = "wheel.apothem_m"\nminimize = "solve.period_m"')
    res = run_design(brief(tmp_path, text), tmp_path / "out", workers=1)
    front = res.to_dict()["pareto"]
    assert len(front) >= 10
    for p in front:
        a, period = p["goals"]
        assert period == pytest.approx(2 * a * math.asinh(1.0), rel=1e-9)
        assert period <= 0.2
    a_s = [p["goals"][0] for p in front]
    assert a_s == sorted(a_s, reverse=True)  # listed best first in the first goal
    # Its ends are the two single-goal optima: the range's low end, and P = 0.2 m.
    assert min(a_s) == pytest.approx(0.02, abs=0.28 * 1e-3)
    assert max(a_s) == pytest.approx(0.2 / (2 * math.asinh(1.0)), rel=1e-3)
    assert (tmp_path / "out" / "pareto.png").stat().st_size > 1000


def test_screen_never_simulates_a_design_that_fails_check(tmp_path):
    text = """
[base]
[base.wheel]
shape = "polygon"
sides = 8
apothem_m = 0.1
[base.surface]
friction = 0.5
[base.run]
duration_s = 1.2
settle_s = 0.4
[vary]
"wheel.sides" = [4, 8]
[require]
"simulate.contact_lost" = false
[goal]
minimize = "wheel.sides"
"""
    res = run_design(brief(tmp_path, text), workers=1)
    by_sides = {d.values["wheel.sides"]: d for d in res.outcome.designs}
    # The square needs tan(pi/4) = 1 > 0.5: check refuses it and it is never simulated.
    assert by_sides[4].jobs_run == ["check"] and not by_sides[4].feasible
    assert by_sides[8].jobs_run == ["check", "simulate"]
    assert "check.rollable == true" in res.to_dict()["requirements"]


def test_demo_brief_loads_and_its_paths_are_figures():
    # Loading runs check and size-motor once on the base trolley to check every path.
    b = load_brief(ROOT / "scenarios" / "briefs" / "trolley_brief.toml")
    assert b.jobs == ("check", "size-motor")
    assert set(b.probe) == {"check", "size-motor"}


@pytest.mark.slow  # a Dask LocalCluster takes seconds to start; sweeps test it in the fast suite
def test_dask_cluster_gives_the_same_designs(tmp_path):
    pytest.importorskip("distributed")
    f = brief(tmp_path, NGON.format(mu=0.5, n_max=12, extra=""))
    a = run_design(f, workers=1).to_dict()
    b = run_design(f, workers=2, cluster="local").to_dict()
    for k in ("best", "candidates", "evaluations"):
        assert a[k] == b[k]


def test_requirement_written_as_text():
    from ridesim.jobs.design.brief import _requirement

    (r,) = _requirement("check.friction.required_peak", "<= 0.4")
    assert (r.op, r.target) == ("<=", 0.4)
    assert r.judge(0.5)[0] is False and r.judge(0.5)[1] == pytest.approx(0.1)
    (r,) = _requirement("check.rollable", "== true")
    assert r.judge(True)[0] is True and r.judge(False)[0] is False


def test_ctrl_c_keeps_finished_designs_and_resumes(tmp_path):
    f = brief(tmp_path, APOTHEM.format(seed=1))
    full = run_design(f, tmp_path / "full", workers=1).to_dict()

    def interrupt(evaluated, computed):
        if computed == 5:
            raise KeyboardInterrupt  # as Ctrl-C would, in the middle of the search

    out = tmp_path / "out"
    stopped = run_design(f, out, workers=1, progress=interrupt)
    assert stopped.interrupted and stopped.computed == 5
    assert not (out / "best.toml").exists()  # nothing half-done is written as a result
    again = run_design(f, out, workers=1).to_dict()
    assert again["computed_now"] == full["evaluations"] - 5
    assert json.dumps(again["candidates"]) == json.dumps(full["candidates"])


# ------------------------------------------------------ one number of a list key: harmonics

LOBE = """
seed = 2
[base]
[base.wheel]
shape = "harmonic"
mean_radius_m = 0.12
harmonics = [[3, 0.05, 0.0], [6, 0.0, 0.0]]
[base.surface]
friction = 0.5
[vary]
"wheel.harmonics[0][1]" = { from = 0.0, to = 0.3 }
[require]
"check.friction.required_peak" = { max = 0.4 }
[goal]
maximize = "wheel.harmonics[0][1]"
[search]
samples = 8
refine = 1
xtol = 1e-4
"""


def test_largest_lobe_of_a_harmonic_wheel_on_grip(tmp_path):
    # r = r0 (1 + a cos 3phi) rolls on a track of slope -r'/r (y = -r, dx = r dtheta: Hall &
    # Wagon 1992), so it needs friction max |r'|/r = max 3a |sin t| / (1 + a cos t); the
    # maximum is at cos t = -a, giving 3a / sqrt(1 - a^2) [derived]. The largest lobe
    # coefficient within 0.4 is therefore a* = 0.4 / sqrt(9 + 0.4^2).
    out = tmp_path / "out"
    res = run_design(brief(tmp_path, LOBE), out, workers=1).to_dict()
    a_star = 0.4 / math.sqrt(9 + 0.4**2)
    a = res["best"]["values"]["wheel.harmonics[0][1]"]
    assert a == pytest.approx(a_star, rel=1e-3)
    assert a <= a_star * (1 + 1e-6)
    # best.toml and the journal hold the whole list, with that one number set.
    from ridesim.scenario.load import load_scenario

    assert load_scenario(out / "best.toml").wheel.harmonics == ((3, a, 0.0), (6, 0.0, 0.0))
    rows = [json.loads(line) for line in (out / JOURNAL).read_text().splitlines()]
    assert rows and all(r["lists"]["wheel.harmonics"] == [[3, r["values"]["wheel.harmonics[0][1]"],
                                                           0.0], [6, 0.0, 0.0]] for r in rows)


@pytest.mark.parametrize("change, words", [
    ('"wheel.harmonics[2][1]"', 'vary."wheel.harmonics[2][1]": index 2 is outside wheel.harmonics'),
    ('"wheel.harmonics[0][1][0]"', "wheel.harmonics[0][1] is a number, not a list"),
    ('"wheel.harmonics[0]"', "names a list of 3 items, not one number"),
    ('"wheel.mean_radius_m[0]"', "wheel.mean_radius_m is not a list key"),
    ('"wheel.harmonic[0][1]"', "unknown scenario key wheel.harmonic"),
    ('"wheel.harmonics[x][1]"', "not a key path with indexes"),
    ('"wheel.axle_m[0]"', "the base scenario sets no wheel.axle_m"),
])
def test_bad_list_index_in_a_brief_one_line_exit_2(tmp_path, capsys, change, words):
    f = brief(tmp_path, LOBE.replace('"wheel.harmonics[0][1]" = {', change + " = {", 1))
    code = main(["design", str(f), "--json", "--out", str(tmp_path / "out")])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert len(err.splitlines()) == 1 and words in err, err
    assert not (tmp_path / "out").exists()  # refused before any design ran


def test_a_list_and_its_number_varied_together_are_refused(tmp_path, capsys):
    text = LOBE.replace("[require]", '"wheel.harmonics[00][1]" = [0.1, 0.2]\n[require]')
    code = main(["design", str(brief(tmp_path, text)), "--json"])
    err = capsys.readouterr().err.strip()
    assert code == 2 and "both set wheel.harmonics[0][1]" in err and len(err.splitlines()) == 1


def test_lobed_wheel_demo_brief_finds_a_design_within_its_grip(tmp_path):
    from ridesim.jobs import run_job
    from ridesim.scenario.load import load_scenario

    out = tmp_path / "out"
    res = run_design(ROOT / "scenarios" / "briefs" / "lobed_wheel_brief.toml", out, workers=1)
    d = res.to_dict()
    assert d["feasible"]
    a3, a6 = d["best"]["values"]["wheel.harmonics[0][1]"], d["best"]["values"]["wheel.harmonics[1][1]"]
    sc = load_scenario(out / "best.toml")
    assert sc.wheel.harmonics == ((3, a3, 0.0), (6, a6, 0.0))
    check = run_job("check", sc)  # the written design meets the brief by the check itself
    assert check["rollable"] and check["friction"]["required_peak"] <= 0.4
    # Its valleys lie deeper than a pure three-lobed wheel's on the same grip can reach:
    # r0 (1 + a*) with a* = 0.4 / sqrt(9 + 0.4^2) (the closed form of the test above).
    assert check["pair"]["depth_max_m"] > 0.12 * (1 + 0.4 / math.sqrt(9.16))


def test_trade_off_plot_axes_are_words_with_units():
    from ridesim.jobs.design.result import figure_label

    assert figure_label("simulate.axle_bounce_m") == "axle bounce [m]"
    assert figure_label("size-motor.peak_torque_Nm") == "peak motor torque [N m]"
    assert figure_label("check.friction.required_peak") == "friction needed (peak)"
    assert figure_label("wheel.harmonics[0][1]") == ("harmonics term 0: cosine coefficient a_k"
                                                     " [fraction of mean radius]")
    assert figure_label("simulate.some_new_figure_s") == "simulate.some_new_figure_s [s]"

"""The command line: exit codes, one-line errors, exactly one JSON object, atomic outputs."""

import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

from ridesim.cli import main

ROOT = Path(__file__).resolve().parent.parent
SCENARIOS = ROOT / "scenarios"


def run_cli(*args):
    """Run the installed entry point in a subprocess (as a user would)."""
    return subprocess.run([sys.executable, "-m", "ridesim.cli", *args], capture_output=True,
                          text=True, cwd=ROOT)


def test_solve_json_hexagon_matches_closed_form():
    # Regular n-gon of apothem a: period 2a*asinh(tan(pi/n)) (Hall & Wagon, "Roads and
    # Wheels", Mathematics Magazine 65(5), 1992); contact depth from a to a/cos(pi/n).
    r = run_cli("solve", str(SCENARIOS / "hexagon_trolley.toml"), "--json")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)  # exactly one JSON object on stdout
    a, n = 0.12, 6
    period = 2 * a * math.asinh(math.tan(math.pi / n))
    assert out["period_m"] == pytest.approx(period, rel=1e-12)
    assert out["revolution_length_m"] == pytest.approx(n * period, rel=1e-12)
    assert out["depth_min_m"] == pytest.approx(a, rel=1e-12)
    assert out["depth_max_m"] == pytest.approx(a / math.cos(math.pi / n), rel=1e-12)
    assert out["lobes"] == n
    xs = sorted(c["x_m"] for c in out["cusps"])
    assert xs == pytest.approx([(k + 0.5) * period for k in range(n)], rel=1e-12)


def test_solve_json_wave_track_depth_closed_form():
    # Closure integral of a cosine track: λ/sqrt(D² - A²) = 2π/n, so D = sqrt(A² + (nλ/2π)²)
    # (standard integral of 1/(D - A cos u); Gradshteyn & Ryzhik 2.553 [memory]).
    r = run_cli("solve", str(SCENARIOS / "wave_track_sculpture.toml"), "--json")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    A, lam, n = 0.02, 0.3, 3
    assert out["depth_m"] == pytest.approx(math.sqrt(A**2 + (n * lam / (2 * math.pi)) ** 2),
                                           rel=1e-12)
    assert out["closed"] is True and out["lobes"] == n
    assert out["depth_min_m"] == pytest.approx(out["depth_m"] - A, rel=1e-12)


def test_solve_text_output_and_out_dir(tmp_path):
    assert main(["solve", str(SCENARIOS / "ellipse_pull_toy.toml"), "--out", str(tmp_path)]) == 0
    saved = json.loads((tmp_path / "solve.json").read_text())
    # Ellipse about a focus: track depth from a - c to a + c (Hall & Wagon 1992).
    a, b = 0.05, 0.04
    c = math.sqrt(a * a - b * b)
    assert saved["depth_min_m"] == pytest.approx(a - c, rel=1e-9)
    assert saved["depth_max_m"] == pytest.approx(a + c, rel=1e-9)
    assert not list(tmp_path.glob(".*.tmp"))  # no temporary file left behind


@pytest.mark.parametrize(
    ("body", "needle"),
    [
        ('[wheel]\nshape = "polygon"\nsides = 4\napothem_m = -0.3\n', "wheel.apothem_m must be > 0"),
        ('[wheel]\nshape = "ellipse"\nsemi_axes_m = [0.3, 0.2]\naxle_m = [0.5, 0.0]\n',
         "not strictly inside"),
        ('[wheel]\nshape = "polar"\nradius_formula = "0.3 + foo(phi)"\n', "foo"),
        ('[track]\nshape = "wave"\namplitude_m = 0.1\nwavelength_m = 1.0\ndepth_m = 0.05\n',
         "depth_m"),
        ("[wheel\n", "TOML"),
    ],
)
def test_bad_input_one_line_exit_2(tmp_path, body, needle):
    f = tmp_path / "bad.toml"
    f.write_text(body)
    r = run_cli("solve", str(f), "--json")
    assert r.returncode == 2
    assert r.stdout == ""
    lines = r.stderr.strip().splitlines()
    assert len(lines) == 1 and needle in lines[0], r.stderr
    assert "Traceback" not in r.stderr


def test_unknown_command_and_missing_file_exit_2(tmp_path):
    assert run_cli("frobnicate", "x.toml").returncode == 2
    r = run_cli("solve", str(tmp_path / "missing.toml"))
    assert r.returncode == 2 and "not found" in r.stderr


def test_out_dir_keeps_previous_result_when_input_is_bad(tmp_path):
    good = SCENARIOS / "hexagon_trolley.toml"
    assert main(["solve", str(good), "--out", str(tmp_path)]) == 0
    before = (tmp_path / "solve.json").read_text()
    bad = tmp_path / "bad.toml"
    bad.write_text('[wheel]\nshape = "polygon"\nsides = 2\napothem_m = 0.3\n')
    assert main(["solve", str(bad), "--out", str(tmp_path)]) == 2
    assert (tmp_path / "solve.json").read_text() == before


def test_render_and_export_write_their_files(tmp_path):
    # Cut files (geometry checked to 0.01 mm in test_drawings): the wheel SVG declares its
    # size in mm and must hold the hexagon, 2a/cos(pi/6) wide and 2a tall (plane geometry).
    import xml.etree.ElementTree as ET

    r = run_cli("export", str(SCENARIOS / "hexagon_trolley.toml"), "--out", str(tmp_path / "cut"),
                "--json")
    assert r.returncode == 0, r.stderr
    files = json.loads(r.stdout)["files"]
    svg = next(f for f in files if f.endswith("_wheel.svg"))
    root = ET.parse(svg).getroot()
    a = 120.0
    assert float(root.get("width").removesuffix("mm")) > 2 * a / math.cos(math.pi / 6)
    assert float(root.get("height").removesuffix("mm")) > 2 * a
    assert any(f.endswith("_track_01.csv") for f in files)
    r = run_cli("render", str(SCENARIOS / "ellipse_pull_toy.toml"), "--out", str(tmp_path / "pic"),
                "--seconds", "1", "--json")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    names = {Path(f["path"]).name for f in out["files"]}
    assert {"wheel.png", "track.png", "friction.png", "clip.gif"} <= names
    assert all(f["caption"] for f in out["files"])
    index = (tmp_path / "pic" / "index.md").read_text()
    assert "clip.gif" in index and "friction.png" in index


def test_render_without_out_is_a_usage_error():
    r = run_cli("render", str(SCENARIOS / "ellipse_pull_toy.toml"))
    assert r.returncode == 2 and "--out" in r.stderr


def test_simulate_json_and_probe_csv_agree(tmp_path):
    # The comfort figure of `simulate --json` is the ISO 2631-1 Wk weighted r.m.s. of the seat's
    # vertical acceleration (weighted over the whole record, evaluated after the settling
    # time): recompute it from the probe CSV.
    import numpy as np

    from ridesim.metrics.comfort import weighted_rms

    f = tmp_path / "toy.toml"
    f.write_text((SCENARIOS / "wave_track_sculpture.toml").read_text()
                 + '\n[run]\nduration_s = 3.2\nsettle_s = 1.0\n')
    r = run_cli("simulate", str(f), "--json", "--out", str(tmp_path / "sim"))
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    for key in ("axle_bounce_m", "slip", "torque", "speed", "contact_lost", "steps", "sim_time_s",
                "comfort"):
        assert key in out
    data = np.genfromtxt(tmp_path / "sim" / "probes.csv", delimiter=",", names=True)
    assert len(data) == out["steps"]
    a_w = weighted_rms(data["seat_ay_m_s2"], 1000.0, "k", settle_s=1.0)
    # CSV values carry 9 significant digits: agreement to 1e-6 relative.
    assert out["comfort"]["weighted_rms_m_s2"] == pytest.approx(a_w, rel=1e-6)


def test_output_into_a_closed_pipe_is_not_an_error():
    # A reader that has gone (here `true`, which exits at once, long before the solve
    # finishes) makes the write fail with a broken pipe: the command ends quietly, exit 0.
    cmd = (f'"{sys.executable}" -m ridesim.cli solve "{SCENARIOS / "hexagon_trolley.toml"}"'
           " | true; echo ${PIPESTATUS[0]}")
    r = subprocess.run(["bash", "-c", cmd], capture_output=True, text=True, cwd=ROOT)
    assert r.stdout.strip() == "0"
    assert "internal error" not in r.stderr and "Traceback" not in r.stderr


def test_render_with_simulation_writes_the_simulated_pictures(tmp_path):
    # A scenario with no start acceleration (steady from the start) and a short run.
    f = tmp_path / "wave.toml"
    f.write_text((SCENARIOS / "wave_track_sculpture.toml").read_text()
                 + '\n[run]\nduration_s = 3.2\nsettle_s = 1.0\n')
    r = run_cli("render", str(f), "--out", str(tmp_path / "pic"), "--simulate", "--seconds", "1",
                "--json")
    assert r.returncode == 0, r.stderr
    names = {Path(x["path"]).name for x in json.loads(r.stdout)["files"]}
    assert {"torque.png", "bounce.png", "seat.png", "comfort.png", "clip.gif"} <= names
    from PIL import Image

    for n in ("torque.png", "bounce.png", "seat.png", "comfort.png"):
        assert Image.open(tmp_path / "pic" / n).format == "PNG"


@pytest.mark.parametrize("command", ["check", "simulate", "size-motor"])
def test_every_sizing_or_grading_output_carries_the_safety_cautions_once(command):
    """Outputs that size motors or grade rides carry the usual cautions (common practice): the
    one shared list first, each said once even where a result gathers several (a simulation
    with its comfort grade)."""
    from ridesim.safety import SAFETY_CAUTIONS

    p = run_cli(command, str(SCENARIOS / "hexagon_trolley.toml"), "--json")
    assert p.returncode == 0, p.stderr
    cautions = json.loads(p.stdout)["cautions"]
    assert cautions[: len(SAFETY_CAUTIONS)] == list(SAFETY_CAUTIONS)
    assert len(cautions) == len(set(cautions))
    assert len(cautions) > len(SAFETY_CAUTIONS)  # and the command's own model limits
    if command == "simulate":
        assert any("ISO 2631-1" in c for c in cautions)  # the comfort grade's own cautions


def _tree(folder):
    """Every path under ``folder`` with its bytes (files) or None (folders)."""
    return {str(p.relative_to(folder)): (p.read_bytes() if p.is_file() else None)
            for p in sorted(folder.rglob("*"))}


@pytest.mark.parametrize("command", ["solve", "simulate", "export", "sweep"])
def test_out_naming_an_existing_file_is_bad_input_and_changes_nothing(tmp_path, capsys, command):
    # A file where the folder should be: one line naming --out and the fix, exit 2, and the
    # file (and everything beside it) left as it was. The check runs before the scenario is
    # even read, so a long command (simulate) costs nothing.
    target = tmp_path / "results"
    target.write_text("keep me\n")
    before = _tree(tmp_path)
    scenario = SCENARIOS / "hexagon_trolley.toml"
    assert main([command, str(scenario), "--out", str(target)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--out" in err[0] and "existing file" in err[0]
    assert "internal error" not in err[0]
    assert _tree(tmp_path) == before


def test_out_under_an_existing_file_is_bad_input_and_changes_nothing(tmp_path, capsys):
    # A folder that cannot be created, whoever runs the test (root included): its parent
    # is a file.
    blocker = tmp_path / "notes.txt"
    blocker.write_text("keep me\n")
    before = _tree(tmp_path)
    assert main(["check", str(SCENARIOS / "hexagon_trolley.toml"),
                 "--out", str(blocker / "out")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--out" in err[0] and "is a file, not a folder" in err[0]
    assert _tree(tmp_path) == before


@pytest.mark.parametrize("sub", ["", "new"])
def test_out_in_an_unwritable_folder_is_bad_input_and_changes_nothing(tmp_path, capsys, sub):
    locked = tmp_path / "locked"
    locked.mkdir()
    (locked / "old.json").write_text("{}\n")
    locked.chmod(0o555)
    try:
        try:  # root (with CAP_DAC_OVERRIDE) writes through folder permissions
            (locked / "probe").touch()
        except PermissionError:
            pass
        else:
            pytest.skip("folder permissions do not bind this user; the file cases above run")
        before = _tree(tmp_path)
        out = locked / sub if sub else locked
        assert main(["check", str(SCENARIOS / "hexagon_trolley.toml"), "--out", str(out)]) == 2
        err = capsys.readouterr().err.strip().splitlines()
        assert len(err) == 1 and "--out" in err[0] and "not writable" in err[0]
        assert _tree(tmp_path) == before
    finally:
        locked.chmod(0o755)


def test_out_folder_that_does_not_exist_yet_is_created(tmp_path):
    out = tmp_path / "a" / "b"
    assert main(["solve", str(SCENARIOS / "hexagon_trolley.toml"), "--out", str(out)]) == 0
    assert (out / "solve.json").is_file()
def test_solve_lists_the_whole_period_wheelbases(tmp_path):
    """A regular hexagon (apothem a) has period P = 2 a asinh(tan(pi/6)) and greatest radius
    a / cos(pi/6) (Hall & Wagon 1992); solve lists k P from one wheel diameter to five."""
    a = 0.12
    P = 2 * a * math.asinh(math.tan(math.pi / 6))
    r_max = a / math.cos(math.pi / 6)
    r = run_cli("solve", str(SCENARIOS / "hexagon_trolley.toml"), "--json")
    out = json.loads(r.stdout)
    ks = [k for k in range(1, 100) if 2 * r_max <= k * P <= 10 * r_max]
    assert out["whole_period_wheelbase_periods"] == ks
    assert out["whole_period_wheelbases_m"] == pytest.approx([k * P for k in ks], rel=1e-12)
    assert out["wheelbase_range_m"] == pytest.approx([2 * r_max, 10 * r_max], rel=1e-12)
    r = run_cli("solve", str(SCENARIOS / "hexagon_trolley.toml"), "--wheelbase-range", "0.3",
                "0.5")
    assert r.returncode == 0, r.stderr
    assert f"{3 * P:.4f} m (k = 3)" in r.stdout  # 0.3955 m, the trolley's own wheelbase
    assert "k = 2" not in r.stdout and "k = 4" not in r.stdout  # 0.2637 m, 0.5273 m
    r = run_cli("solve", str(SCENARIOS / "hexagon_trolley.toml"), "--wheelbase-range", "1", "0")
    assert r.returncode == 2 and r.stderr.count("\n") == 1 and "--wheelbase-range" in r.stderr


def test_wheelbase_in_periods_that_disagrees_with_the_length_is_refused(tmp_path):
    sc = tmp_path / "both.toml"
    sc.write_text((SCENARIOS / "hexagon_trolley.toml").read_text().replace(
        "wheelbase_m = 0.3955004239205194", "wheelbase_m = 0.4\nwheelbase_periods = 3"))
    r = run_cli("check", str(sc))
    assert r.returncode == 2 and r.stderr.count("\n") == 1
    assert "vehicle.wheelbase_periods" in r.stderr and "give only one" in r.stderr


def test_solve_lists_whole_period_wheelbases_for_rounded_corners_too(tmp_path, capsys):
    """A square (apothem 0.25 m) with 10 mm fitted corners: period 0.4406255 m from the
    closed form in test_jobs_check (Hall & Wagon 1992, DLMF 19.7.4); two periods print as
    0.8813 m (to 0.1 mm), the wheelbase a builder can measure."""
    from test_jobs_check import rounded_polygon_period

    P = rounded_polygon_period(4, 0.25, 0.01)
    sc = tmp_path / "rounded.toml"
    sc.write_text('[wheel]\nshape = "polygon"\nsides = 4\napothem_m = 0.25\ncorner_radius_m = 0.01\n'
                  "fit_track_to_corners = true\n")
    assert main(["solve", str(sc), "--wheelbase-range", "0.5", "1.5", "--out", str(tmp_path)]) == 0
    text = capsys.readouterr().out
    assert f"{2 * P:.4f} m (k = 2)" in text and "0.8813 m (k = 2)" in text
    saved = json.loads((tmp_path / "solve.json").read_text())
    assert saved["whole_period_wheelbase_periods"] == [2, 3]
    assert saved["whole_period_wheelbases_m"] == pytest.approx([2 * P, 3 * P], rel=1e-12)


@pytest.mark.parametrize("args", [
    ["--help"],
    ["solve", "ellipse_pull_toy.toml"],
    ["check", "ellipse_pull_toy.toml"],
    ["check", "wave_track_sculpture.toml"],
    ["export", "wave_track_sculpture.toml", "--out", "{tmp}"],
])
def test_light_commands_do_not_import_heavy_modules(args, tmp_path):
    # Light commands must start fast (DEVELOPERS.md: heavy imports happen where used). Which
    # modules a command loads is a property of the code, not of the machine: list them.
    argv = [a.replace("{tmp}", str(tmp_path)) if a.endswith("}") else
            (str(SCENARIOS / a) if a.endswith(".toml") else a) for a in args]
    code = ("import sys, io, contextlib\nfrom ridesim.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            f"    rc = main({argv!r})\n"
            "heavy = ('scipy.optimize', 'scipy.fft', 'matplotlib', 'pymunk', 'PIL', 'ridesim.sim.world')\n"
            "print(rc, sorted(m for m in heavy if m in sys.modules))\n")
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    assert res.returncode == 0, res.stderr
    assert res.stdout.split() == ["0", "[]"], res.stdout

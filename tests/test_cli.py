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

    from ridesim.comfort import weighted_rms

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

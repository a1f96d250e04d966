"""Sweeps: identical tables locally and on Dask, safe resume after SIGKILL, clear bad-file errors.

The per-case figures come from the solver (checked against closed forms in
test_solve_*); here the checks are on the sweep machinery: the regular n-gon
period 2a*asinh(tan(pi/n)) (Hall & Wagon, "Roads and Wheels", Mathematics
Magazine 65(5), 1992) is used to confirm each row holds its own case's result.
"""

import csv
import json
import math
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from ridesim.errors import ScenarioError
from ridesim.jobs.sweep.plan import load_sweep
from ridesim.jobs.sweep.run import read_journal, run_sweep

ROOT = Path(__file__).resolve().parent.parent
BASE = ROOT / "scenarios" / "hexagon_trolley.toml"


def write_sweep(tmp_path, body, name="sweep.toml"):
    f = tmp_path / name
    f.write_text(f'base = "{BASE}"\n' + body)
    return f


GRID = """
run = "solve"
[vary]
"wheel.sides" = [3, 4, 5, 6]
"wheel.apothem_m" = { from = 0.1, to = 0.2, count = 3 }
"""


def rows_of(path):
    with open(path, newline="") as fh:
        return list(csv.DictReader(fh))


def test_grid_rows_hold_their_own_case(tmp_path):
    plan = load_sweep(write_sweep(tmp_path, GRID))
    assert len(plan.cases) == 12
    out = run_sweep(plan, tmp_path / "out", workers=2)
    assert (out.done, out.failed, out.computed) == (12, 0, 12)
    for r in rows_of(out.table):
        n, a = int(r["wheel.sides"]), float(r["wheel.apothem_m"])
        assert float(r["period_m"]) == pytest.approx(2 * a * math.asinh(math.tan(math.pi / n)),
                                                     rel=1e-12)
    assert [int(r["case"]) for r in rows_of(out.table)] == list(range(12))


def test_local_and_dask_tables_identical(tmp_path):
    pytest.importorskip("distributed")
    body = GRID + """
[random]
seed = 11
cases = 2
"wheel.axle_m" = { normal = [[0.0, 0.0], [0.003, 0.003]] }
"""
    plan = load_sweep(write_sweep(tmp_path, body))
    a = run_sweep(plan, tmp_path / "local", workers=2)
    b = run_sweep(plan, tmp_path / "dask", workers=2, cluster="local")
    assert a.done == b.done == 24
    assert Path(a.table).read_bytes() == Path(b.table).read_bytes()
    # No wall-clock column: the tables are reproducible.
    assert "elapsed_s" not in Path(a.table).read_text()


def test_failing_case_is_a_row_not_a_stop(tmp_path):
    plan = load_sweep(write_sweep(tmp_path, 'run = "solve"\n[vary]\n"wheel.sides" = [2, 4]\n'))
    out = run_sweep(plan, tmp_path / "out", workers=1)
    rows = rows_of(out.table)
    assert out.failed == 1 and rows[0]["error"].startswith("wheel.sides must be")
    assert rows[1]["error"] == "" and float(rows[1]["lobes"]) == 4


@pytest.mark.parametrize(
    ("body", "needle"),
    [
        ('run = "solve"\n[vary]\n"wheel.sidez" = [4]\n', 'unknown parameter vary."wheel.sidez"'),
        ('run = "solve"\n[vary]\n"wheel.sides" = []\n', "empty list"),
        ('run = "solve"\n[random]\ncases = 3\n"surface.friction" = { uniform = [0.5, 0.7] }\n',
         "random.seed"),
        ('run = "fly"\n', "run must be one of"),
        ('run = "solve"\n[vary]\n"wheel.apothem_m" = { from = 0.1, to = 0.2 }\n', "count"),
    ],
)
def test_bad_sweep_files_fail_before_any_case(tmp_path, body, needle):
    f = write_sweep(tmp_path, body)
    with pytest.raises(ScenarioError, match=needle.replace(".", r"\.").replace("[", r"\[")):
        load_sweep(f)
    r = subprocess.run([sys.executable, "-m", "ridesim.cli", "sweep", str(f), "--out",
                        str(tmp_path / "o")], capture_output=True, text=True)
    assert r.returncode == 2 and len(r.stderr.strip().splitlines()) == 1
    assert not (tmp_path / "o" / "cases.jsonl").exists()


def test_sigkill_then_resume_loses_and_repeats_nothing(tmp_path):
    # Slow-ish cases: smooth polar wheels with many lobes need many table cells.
    formulas = [f'"0.2 + 0.01*cos({k}*phi)"' for k in range(8, 48)]
    base = tmp_path / "polar.toml"
    base.write_text('[wheel]\nshape = "polar"\nradius_formula = "0.2"\n')
    f = tmp_path / "kill.toml"
    f.write_text(f'base = "{base}"\nrun = "solve"\n[vary]\n"wheel.radius_formula" = '
                 f'[{", ".join(formulas)}]\n')
    out = tmp_path / "out"
    cmd = [sys.executable, "-m", "ridesim.cli", "sweep", str(f), "--out", str(out),
           "--workers", "1"]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.time() + 60
    while time.time() < deadline:
        if len(read_journal(out)) >= 5:
            break
        time.sleep(0.02)
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    first = read_journal(out)
    assert 5 <= len(first) < 40, "the sweep must be killed midway"
    r = subprocess.run(cmd + ["--json"], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    final = read_journal(out)
    assert sorted(final) == list(range(40))
    # Each case is journalled exactly once (the kill may tear the line being written: such a
    # line does not parse and its case was run again).
    lines = []
    for line in (out / "cases.jsonl").read_text().splitlines():
        try:
            lines.append(json.loads(line)["case"])
        except json.JSONDecodeError:
            pass
    assert sorted(lines) == list(range(40))
    # The resumed run computed only what the killed one had not recorded.
    log = (out / "sweep.log").read_text().splitlines()
    second = max(i for i, line in enumerate(log) if line.startswith("start:"))
    resumed = [int(line.split()[2]) for line in log[second:] if line.startswith("computed case")]
    assert not set(resumed) & set(first)
    assert sorted(set(resumed) | set(first)) == list(range(40))
    rows = rows_of(out / "results.csv")
    assert [int(x["case"]) for x in rows] == list(range(40))
    # Identical to an uninterrupted run.
    fresh = tmp_path / "fresh"
    run_sweep(load_sweep(f), fresh, workers=2)
    assert (fresh / "results.csv").read_bytes() == (out / "results.csv").read_bytes()


def test_rows_of_another_ridesim_version_are_refused(tmp_path, monkeypatch):
    # A case's key includes the ridesim version: after an upgrade, a folder of old rows is
    # refused with one line rather than silently mixed into the new table.
    import ridesim.jobs.sweep.plan as plan_mod

    sweep = write_sweep(tmp_path, GRID)
    out = run_sweep(load_sweep(sweep), tmp_path / "out", workers=1)
    assert out.done == 12
    monkeypatch.setattr(plan_mod, "__version__", "0.0.0-older")
    with pytest.raises(ScenarioError, match="another ridesim version"):
        run_sweep(load_sweep(sweep), tmp_path / "out", workers=1)
    # Same version: the rows are reused, nothing recomputed.
    monkeypatch.undo()
    again = run_sweep(load_sweep(sweep), tmp_path / "out", workers=1)
    assert (again.done, again.computed) == (12, 0)


def test_plot_metric_keeps_the_callers_matplotlib_backend(tmp_path):
    # A notebook or GUI user's backend must survive a sweep plot: set a non-Agg backend
    # first, so a plot that switched to Agg would be caught.
    import struct

    import matplotlib

    from ridesim.jobs.sweep.summary import plot_metric

    before = matplotlib.get_backend()
    try:
        matplotlib.use("pdf")
        rows = [{"case": str(i), "a_m": str(0.1 * i), "m": str(i * i), "error": ""} for i in range(1, 5)]
        out = plot_metric(rows, "m", ["a_m"], tmp_path / "m.png")
        assert matplotlib.get_backend().lower() == "pdf"
    finally:
        matplotlib.use(before)
    data = out.read_bytes()
    # PNG signature and IHDR size (PNG specification, ISO/IEC 15948, 5.2 and 11.2.2):
    # the house style's figure of 1100 x 700 px (ridesim.render.style.new_figure).
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    assert struct.unpack(">II", data[16:24]) == (1100, 700)

"""Sweeps under abuse: integer ranges, bad journals, two runs on one folder, killed coordinators.

The per-case figures used here are the solver's regular n-gon track period 2a asinh(tan(pi/n))
(Hall & Wagon, "Roads and Wheels", Mathematics Magazine 65(5), 1992), and its revolution
length n times that period, so that --best can be checked against a closed form.
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from ridesim.cli import main
from ridesim.errors import ScenarioError
from ridesim.jobs.sweep.plan import load_sweep
from ridesim.jobs.sweep.run import JOURNAL, _lock, read_journal, run_sweep

ROOT = Path(__file__).resolve().parent.parent
BASE = ROOT / "scenarios" / "hexagon_trolley.toml"
A = 0.12  # the base's apothem [m]


def write_sweep(tmp_path, body):
    f = tmp_path / "sweep.toml"
    f.write_text(f'base = "{BASE}"\n' + body)
    return f


def revolution_m(n: int, a: float = A) -> float:
    """Closed form: n periods of 2 a asinh(tan(pi / n)) per revolution (Hall & Wagon 1992)."""
    return n * 2 * a * math.asinh(math.tan(math.pi / n))


def test_a_range_over_an_integer_key_gives_whole_values(tmp_path):
    plan = load_sweep(write_sweep(tmp_path, 'run = "solve"\n[vary]\n'
                                  '"wheel.sides" = { from = 3, to = 8, count = 6 }\n'))
    assert [c.values["wheel.sides"] for c in plan.cases] == [3, 4, 5, 6, 7, 8]
    assert all(isinstance(c.values["wheel.sides"], int) for c in plan.cases)


@pytest.mark.parametrize(("body", "needle"), [
    ('[vary]\n"wheel.sides" = { from = 3, to = 8, count = 4 }\n', "integer key"),
    ('[vary]\n"wheel.sides" = [1, 2]\n', "no case of the sweep is a valid scenario"),
    ('[random]\nseed = 1\ncases = 1000000000\n"surface.friction" = { uniform = [0.5, 0.7] }\n',
     "more than the limit of 100000"),
])
def test_bad_cases_are_refused_before_any_case_runs(tmp_path, body, needle):
    with pytest.raises(ScenarioError, match=needle):
        load_sweep(write_sweep(tmp_path, 'run = "solve"\n' + body))


SIDES = 'run = "solve"\n[vary]\n"wheel.sides" = [3, 4, 5]\n'


def _journal_lines(out: Path) -> list[str]:
    return (out / JOURNAL).read_text(encoding="utf-8").splitlines()


def test_a_torn_last_line_is_reported_and_the_next_record_starts_fresh(tmp_path):
    plan = load_sweep(write_sweep(tmp_path, SIDES))
    out = tmp_path / "out"
    run_sweep(plan, out, workers=1)
    lines = _journal_lines(out)
    # Keep case 0, tear case 1's line in half (a kill while it was written), drop case 2.
    (out / JOURNAL).write_text(lines[0] + "\n" + lines[1][: len(lines[1]) // 2])
    outcome = run_sweep(plan, out, workers=1)
    assert outcome.computed == 2 and outcome.done == 3
    assert outcome.warnings and "line 2: cut short" in outcome.warnings[0]
    rows = read_journal(out)
    assert sorted(rows) == [0, 1, 2]


@pytest.mark.parametrize("junk", [b'{"foo": 1}', b"[1, 2]", b"42", b'{"case": "abc"}',
                                  b"\xff\xfe junk"])
def test_junk_lines_are_skipped_by_line_number(tmp_path, junk):
    plan = load_sweep(write_sweep(tmp_path, SIDES))
    out = tmp_path / "out"
    run_sweep(plan, out, workers=1)
    lines = (out / JOURNAL).read_bytes().splitlines()
    (out / JOURNAL).write_bytes(lines[0] + b"\n" + junk + b"\n" + lines[2] + b"\n")
    outcome = run_sweep(plan, out, workers=1)
    assert outcome.computed == 1 and outcome.done == 3  # case 1 computed again
    assert any("line 2: not a case record" in w for w in outcome.warnings)


def test_a_case_recorded_twice_with_different_figures_is_refused(tmp_path):
    plan = load_sweep(write_sweep(tmp_path, SIDES))
    out = tmp_path / "out"
    run_sweep(plan, out, workers=1)
    row = json.loads(_journal_lines(out)[0])
    row["metrics"]["period_m"] = 1.0
    with open(out / JOURNAL, "a", encoding="utf-8") as fh:
        fh.write(json.dumps(row) + "\n")
    with pytest.raises(ScenarioError, match="line 4 records case 0 again with different figures"):
        run_sweep(plan, out, workers=1)


def test_two_sweeps_cannot_share_one_folder(tmp_path):
    plan = load_sweep(write_sweep(tmp_path, SIDES))
    out = tmp_path / "out"
    out.mkdir()
    held = _lock(out)
    try:
        with pytest.raises(ScenarioError, match="another sweep is writing into"):
            run_sweep(plan, out, workers=1)
    finally:
        held.close()
    assert run_sweep(plan, out, workers=1).done == 3  # free again


def _sweep_cli(*args: str):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        rc = main(["sweep", *args])
    return rc, out.getvalue(), err.getvalue()


def test_best_lists_the_lowest_metric_and_plot_writes_a_png(tmp_path):
    f = write_sweep(tmp_path, 'run = "solve"\n[vary]\n"wheel.sides" = [3, 4, 5, 6, 8]\n')
    out = tmp_path / "out"
    rc, stdout, err = _sweep_cli(str(f), "--out", str(out), "--workers", "1", "--json",
                                 "--best", "revolution_length_m", "--plot", "revolution_length_m")
    assert rc == 0, err
    summary = json.loads(stdout)
    expected = sorted([3, 4, 5, 6, 8], key=revolution_m)
    assert [int(float(b["wheel.sides"])) for b in summary["best"]] == expected
    assert float(summary["best"][0]["revolution_length_m"]) == pytest.approx(
        revolution_m(expected[0]), rel=1e-9)
    png = Path(summary["plot"])
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 1000


def test_best_of_an_unknown_metric_is_one_clean_line(tmp_path):
    f = write_sweep(tmp_path, SIDES)
    rc, _, err = _sweep_cli(str(f), "--out", str(tmp_path / "out"), "--workers", "1",
                            "--best", "no_such_metric")
    lines = [x for x in err.splitlines() if x.startswith("error")]
    assert rc == 2 and len(lines) == 1 and "Traceback" not in err


def _children(pid: int) -> list[int]:
    kids = []
    for d in Path("/proc").iterdir():
        if d.name.isdigit():
            try:
                stat = (d / "stat").read_text()
            except OSError:
                continue
            if int(stat.rsplit(")", 1)[1].split()[1]) == pid:
                kids.append(int(d.name))
    return kids


def _alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state != "Z"


def _has_dask() -> bool:
    try:
        import distributed  # noqa: F401
    except ImportError:
        return False
    return True


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="needs /proc (Linux)")
@pytest.mark.parametrize("where, wanted", [
    (["--workers", "2"], 2),  # the local pool's two workers
    # A local Dask cluster: its two worker processes and multiprocessing's resource tracker.
    pytest.param(["--workers", "2", "--cluster", "local"], 3,
                 marks=pytest.mark.skipif(not _has_dask(), reason="needs dask.distributed")),
], ids=["pool", "dask-local"])
def test_workers_exit_when_the_sweep_is_killed(tmp_path, where, wanted):
    f = write_sweep(tmp_path, 'run = "check"\n[vary]\n"surface.friction" = '
                    '{ from = 0.5, to = 0.9, count = 40 }\n')
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    p = subprocess.Popen([sys.executable, "-m", "ridesim.cli", "sweep", str(f), "--out",
                          str(tmp_path / "out"), *where], cwd=ROOT, env=env,
                         stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    workers: list[int] = []
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and len(workers) < wanted:
        time.sleep(0.2)
        workers = _children(p.pid)
    assert len(workers) >= wanted, f"the sweep started {len(workers)} of {wanted} worker processes"
    p.send_signal(signal.SIGKILL)
    p.wait()
    deadline = time.monotonic() + 10
    while time.monotonic() < deadline and any(_alive(w) for w in workers):
        time.sleep(0.2)
    left = [w for w in workers if _alive(w)]
    for w in left:  # do not leave them behind even when the test fails
        os.kill(w, signal.SIGKILL)
    assert not left, f"orphaned workers {left}"

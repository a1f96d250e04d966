"""Output folders hold one complete set of files, whatever moment a run is killed at.

``render``, ``export`` and ``report`` write their set into a staging folder and swap it in
(``ridesim/export/results.py``): after a kill the folder holds the previous complete set or,
once the new set was complete, the new one; a run's folder holds its own set only (stale
track sections of an earlier export are removed); identical inputs give byte-identical
JSON.
"""

from __future__ import annotations

import json
import os
import random
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from ridesim.cli import main
from ridesim.export import results
from ridesim.export.results import begin_set, commit_set, recover_sets

ROOT = Path(__file__).resolve().parents[1]
HEX = ROOT / "scenarios" / "hexagon_trolley.toml"


def snapshot(folder: Path) -> dict[str, bytes]:
    """Every file of a folder (hidden bookkeeping included) by relative name."""
    return {p.relative_to(folder).as_posix(): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def _export(out: Path, section: str) -> int:
    return main(["export", str(HEX), "--out", str(out), "--section", section])


def test_reexport_with_fewer_sections_removes_the_stale_ones(tmp_path):
    assert _export(tmp_path, "0.05") == 0
    many = sorted(p.name for p in tmp_path.glob("*_track_*.svg"))
    assert _export(tmp_path, "1.0") == 0
    few = sorted(p.name for p in tmp_path.glob("*_track_*.svg"))
    assert len(many) > 1 and few == ["hexagon_trolley_track_01.svg"]
    assert not list(tmp_path.glob(".staging-*"))


def test_identical_inputs_give_byte_identical_json(tmp_path):
    assert _export(tmp_path, "0.05") == 0
    first = (tmp_path / "export.json").read_bytes()
    assert _export(tmp_path, "0.05") == 0
    assert (tmp_path / "export.json").read_bytes() == first


def test_the_kept_record_names_its_files_relative_to_its_folder(tmp_path):
    """A folder moved or sent as it is still finds its files from its record."""
    assert _export(tmp_path / "a", "0.5") == 0
    (tmp_path / "a").rename(tmp_path / "b")
    files = json.loads((tmp_path / "b" / "export.json").read_text())["files"]
    assert files and all(not Path(f).is_absolute() and (tmp_path / "b" / f).is_file() for f in files)
    assert set(files) == {p.name for p in (tmp_path / "b").iterdir()
                          if not p.name.startswith(".") and p.name != "export.json"}


def test_a_failed_run_leaves_the_previous_set(tmp_path):
    assert _export(tmp_path, "0.05") == 0
    before = snapshot(tmp_path)
    assert _export(tmp_path, "1e-6") == 2  # refused (too many sections) mid-job
    assert snapshot(tmp_path) == before


@pytest.mark.parametrize("moves_before_kill", [0, 1, 3, 5])
def test_a_kill_during_the_swap_is_finished_by_the_next_run(tmp_path, monkeypatch,
                                                            moves_before_kill):
    # Reference set, written without interruption into the same folder (its JSON names it).
    out = tmp_path / "out"
    assert _export(out, "1.0") == 0
    ref_b = snapshot(out)
    assert _export(out, "0.05") == 0
    # Stage the second set, then die after a few of its files have been moved in.
    stage = begin_set(out, "export")
    for rel, data in ref_b.items():
        if not rel.startswith(".set-"):
            (stage / rel).write_bytes(data)
    real, count = os.replace, [0]

    def dying_replace(src, dst):
        moving = Path(src).parent.name.startswith(".staging-") and not str(src).endswith(".tmp")
        if moving and count[0] >= moves_before_kill:
            raise KeyboardInterrupt  # stands for SIGKILL: nothing after this line runs
        count[0] += 1
        return real(src, dst)

    monkeypatch.setattr(results.os, "replace", dying_replace)
    with pytest.raises(KeyboardInterrupt):
        commit_set(out, stage, "export")
    monkeypatch.setattr(results.os, "replace", real)
    assert recover_sets(out) == ["export"]
    assert snapshot(out) == ref_b


def test_an_incomplete_stage_is_discarded(tmp_path):
    assert _export(tmp_path, "1.0") == 0
    before = snapshot(tmp_path)
    stage = begin_set(tmp_path, "export")
    (stage / "half.svg").write_text("<svg")  # killed while writing the set
    assert recover_sets(tmp_path) == []
    assert snapshot(tmp_path) == before


def _kill_run(args: list[str], delay_s: float) -> None:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    p = subprocess.Popen([sys.executable, "-m", "ridesim.cli", *args], cwd=ROOT, env=env,
                         stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    time.sleep(delay_s)
    p.send_signal(signal.SIGKILL)
    p.wait()


def test_export_killed_at_random_moments_leaves_one_whole_set(tmp_path):
    out = tmp_path / "out"
    assert _export(out, "1.0") == 0
    refs = [snapshot(out)]
    assert _export(out, "0.05") == 0
    refs.append(snapshot(out))
    rng = random.Random(17)  # fixed seed: the same moments every run
    for k in range(4):
        section = ("1.0", "0.05")[k % 2]
        _kill_run(["export", str(HEX), "--out", str(out), "--section", section],
                  rng.uniform(0.2, 2.5))
        recover_sets(out)  # what the next run does first
        assert snapshot(out) in refs


@pytest.mark.slow
@pytest.mark.parametrize("command", ["render", "report"])
def test_render_and_report_killed_at_random_moments_leave_one_whole_set(tmp_path, command):
    extra = ["--no-clip"] if command == "render" else ["--no-simulate"]
    ref = tmp_path / "ref"
    assert main([command, str(HEX), "--out", str(ref), *extra]) == 0
    out = tmp_path / "out"
    assert main([command, str(HEX), "--out", str(out), *extra]) == 0
    names = set(snapshot(ref))
    rng = random.Random(29)
    for _ in range(4):
        _kill_run([command, str(HEX), "--out", str(out), *extra], rng.uniform(0.5, 6.0))
        recover_sets(out)
        assert set(snapshot(out)) == names

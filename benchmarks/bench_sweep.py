"""Sweep throughput: cases per second with 1 and 2 local workers, and the machinery's overhead.

A 64-case simulate sweep (hexagon trolley, 6 s of simulated time per case,
friction and speed varied). Baseline measured in the same run: the same 64 jobs
called directly, one after another, with no sweep machinery. Overhead = (1-worker
sweep time - direct time) / direct time.

Run: ``python3 benchmarks/bench_sweep.py``.
"""

from __future__ import annotations

import tempfile
import time
from pathlib import Path

from ridesim.jobs import run_job
from ridesim.jobs.sweep.plan import load_sweep
from ridesim.jobs.sweep.run import run_sweep
from ridesim.scenario.load import load_scenario

ROOT = Path(__file__).resolve().parent.parent


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        base = tmp / "base.toml"
        base.write_text((ROOT / "scenarios" / "hexagon_trolley.toml").read_text()
                        .replace("duration_s = 4.0", "duration_s = 6.0\nsettle_s = 1.0"))
        sweep = tmp / "sweep.toml"
        sweep.write_text(f'base = "{base}"\nrun = "simulate"\n[vary]\n'
                         '"surface.friction" = { from = 0.7, to = 1.4, count = 8 }\n'
                         '"drive.speed_m_s" = { from = 0.2, to = 0.55, count = 8 }\n')
        plan = load_sweep(sweep)
        sc0 = load_scenario(base)
        t0 = time.perf_counter()
        for case in plan.cases:
            run_job("simulate", sc0.replace_many(case.values))
        direct = time.perf_counter() - t0
        times = {}
        for workers in (1, 2):
            t0 = time.perf_counter()
            out = run_sweep(plan, tmp / f"out{workers}", workers=workers)
            times[workers] = time.perf_counter() - t0
            assert out.done == 64 and out.failed == 0
        n = len(plan.cases)
        print("64-case simulate sweep (6 s simulated per case)")
        print(f"  direct calls, no sweep machinery : {direct:6.2f} s  {n / direct:6.2f} cases/s")
        for w, t in times.items():
            print(f"  sweep, {w} worker(s)              : {t:6.2f} s  {n / t:6.2f} cases/s")
        print(f"  speed-up 2 workers over 1        : {times[1] / times[2]:5.2f}x (target >= 1.8x)")
        print(f"  sweep overhead per case (1 worker): {100 * (times[1] / direct - 1):5.1f} %"
              " (target < 5 %)")
        same = (tmp / "out1" / "results.csv").read_bytes() == (tmp / "out2" / "results.csv").read_bytes()
        print(f"  1- and 2-worker tables identical : {same}")


if __name__ == "__main__":
    main()

"""Sweep throughput: cases per second with 1 and 2 local workers, and the machinery's overhead.

A 64-case simulate sweep (hexagon trolley, 6 s of simulated time per case,
friction and speed varied). Baseline measured in the same run: the same 64 jobs
called directly, one after another, with no sweep machinery. The three ways
(direct, sweep with 1 worker, sweep with 2) are timed in paired, alternated
repeats: each repeat runs all three, in an order rotated from repeat to repeat,
so load on a shared machine hits them alike. Overhead = median over repeats of
(1-worker sweep time / direct time of the same repeat) - 1; the speed-up of 2
workers is the median of the paired ratios too.

Run: ``python3 benchmarks/bench_sweep.py [--repeat N]``.
"""

from __future__ import annotations

import argparse
import os
import statistics
import tempfile
import time
from pathlib import Path

from ridesim.jobs import run_job
from ridesim.jobs.sweep.plan import load_sweep
from ridesim.jobs.sweep.run import run_sweep
from ridesim.scenario.load import load_scenario

ROOT = Path(__file__).resolve().parent.parent


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3, help="paired repeats (medians reported)")
    args = ap.parse_args()
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
        n = len(plan.cases)

        def direct(r: int) -> None:
            for case in plan.cases:
                run_job("simulate", sc0.replace_many(case.values))

        def swept(workers: int, r: int) -> None:
            out = run_sweep(plan, tmp / f"out{workers}_{r}", workers=workers)
            assert out.done == n and out.failed == 0

        ways = {"direct": direct, "sweep1": lambda r: swept(1, r), "sweep2": lambda r: swept(2, r)}
        names = list(ways)
        t: dict[str, list[float]] = {k: [] for k in names}
        for r in range(args.repeat):
            for name in names[r % 3:] + names[:r % 3]:
                t0 = time.perf_counter()
                ways[name](r)
                t[name].append(time.perf_counter() - t0)
        med = {k: statistics.median(v) for k, v in t.items()}
        overhead = statistics.median(a / b - 1 for a, b in zip(t["sweep1"], t["direct"], strict=True))
        speedup = statistics.median(a / b for a, b in zip(t["sweep1"], t["sweep2"], strict=True))
        print(f"64-case simulate sweep (6 s simulated per case); {args.repeat} paired repeats,"
              f" alternated; medians; load average {os.getloadavg()[0]:.1f}")
        d = med["direct"]
        print(f"  direct calls, no sweep machinery : {d:6.2f} s  {n / d:6.2f} cases/s")
        for w in (1, 2):
            m = med[f"sweep{w}"]
            print(f"  sweep, {w} worker(s)              : {m:6.2f} s  {n / m:6.2f} cases/s")
        print(f"  speed-up 2 workers over 1        : {speedup:5.2f}x (target >= 1.8x)")
        print(f"  sweep overhead per case (1 worker): {100 * overhead:5.1f} % (target < 5 %)")
        same = all((tmp / f"out{w}_0" / "results.csv").read_bytes()
                   == (tmp / "out1_0" / "results.csv").read_bytes() for w in (1, 2))
        print(f"  1- and 2-worker tables identical : {same}")


if __name__ == "__main__":
    main()

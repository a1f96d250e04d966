"""Design search throughput and economy.

1. Machinery: a check-only brief of 32 designs (the hexagon trolley, ``surface.friction``
   varied over 32 choices, every design run: the goal is a figure) with 1 and 2 local
   workers, against the same 32 check jobs called directly in the same run. Overhead =
   (1-worker time - direct time) / direct time (target < 5 %); speed-up 2 workers over 1
   (target >= 1.8x on 2 cores).
2. Economy: evaluations the search needs for two optima known in closed form, against a
   full grid at the same resolution (target >= 10x fewer). An evaluation is one distinct
   design run through the brief's jobs (the count ``evaluations`` the search reports: every
   design it ran, feasible or not; a design stopped early by the screen still counts once,
   and the jobs it runs inside are not counted apart). The two optima:

   - the fewest sides of a regular polygon that rolls on grip 0.5 (tan(pi/n) <= mu, Hall &
     Wagon 1992) among 3..64 sides. The search's resolution is one side, so the grid at the
     same resolution is every integer in the brief's range: 62 designs. The search cannot do
     better than 5 (3..6 must be run to show they fail, then 7), so the ratio depends on the
     range: 62 / 5 here, 10 / 5 for 3..12; the range is that of a builder who does not know the
     answer (the key allows up to 1000 sides).
   - the largest square apothem whose track period 2 a asinh(1) stays within 0.2 m, to 1e-4
     of the range (``search.xtol``): the grid at that resolution has 1e4 points.

Run from the repository root: ``PYTHONPATH=. python3 benchmarks/bench_design.py``.
"""

from __future__ import annotations

import math
import tempfile
import time
from pathlib import Path

from ridesim.jobs import run_job
from ridesim.jobs.design import load_brief, run_design

ROOT = Path(__file__).resolve().parent.parent


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        mus = [round(0.6 + 0.025 * k, 4) for k in range(32)]
        f = tmp / "check.toml"
        f.write_text(f'base = "{ROOT / "scenarios" / "hexagon_trolley.toml"}"\n[vary]\n'
                     f'"surface.friction" = {mus}\n[require]\n"check.rollable" = true\n'
                     '[goal]\nminimize = "check.torque.peak_Nm"\n')
        brief = load_brief(f)
        t0 = time.perf_counter()
        for mu in mus:
            run_job("check", brief.base.replace_many({"surface.friction": mu}))
        direct = time.perf_counter() - t0
        times = {}
        for workers in (1, 2):
            t0 = time.perf_counter()
            res = run_design(brief, tmp / f"out{workers}", workers=workers)
            times[workers] = time.perf_counter() - t0
            assert len(res.outcome.designs) == 32
        print("32-design check-only brief (hexagon trolley)")
        print(f"  direct check calls             : {direct:6.2f} s  {32 / direct:6.2f} designs/s")
        for w, t in times.items():
            print(f"  design search, {w} worker(s)     : {t:6.2f} s  {32 / t:6.2f} designs/s")
        print(f"  speed-up 2 workers over 1      : {times[1] / times[2]:5.2f}x (target >= 1.8x)")
        print(f"  machinery overhead (1 worker)  : {100 * (times[1] / direct - 1):5.1f} %"
              " (target < 5 %)")

        ngon = tmp / "ngon.toml"
        ngon.write_text('[base]\n[base.wheel]\nshape = "polygon"\nsides = 8\napothem_m = 0.1\n'
                        '[base.surface]\nfriction = 0.5\n[vary]\n'
                        '"wheel.sides" = { from = 3, to = 64 }\n[require]\n'
                        '"check.rollable" = true\n[goal]\nminimize = "wheel.sides"\n')
        res = run_design(ngon, workers=2).to_dict()
        res1 = run_design(ngon, workers=1).to_dict()
        assert res1["candidates"] == res["candidates"], "1 and 2 workers differ"
        n = res["evaluations"]
        print(f"fewest sides on grip 0.5: found {res['best']['values']['wheel.sides']} (closed"
              f" form 7) in {n} evaluations (1 and 2 workers alike; least possible 5: sides"
              f" 3..7); grid of 62 (sides 3..64, every integer): {62 / n:.1f}x fewer")
        apo = tmp / "apothem.toml"
        apo.write_text('[base]\n[base.wheel]\nshape = "polygon"\nsides = 4\napothem_m = 0.1\n'
                       '[vary]\n"wheel.apothem_m" = { from = 0.02, to = 0.3 }\n[require]\n'
                       '"solve.period_m" = { max = 0.2 }\n[goal]\nmaximize = "wheel.apothem_m"\n'
                       '[search]\nsamples = 16\nrefine = 1\nxtol = 1e-4\n')
        res = run_design(apo, workers=1).to_dict()
        n = res["evaluations"]
        a = res["best"]["values"]["wheel.apothem_m"]
        a_star = 0.2 / (2 * math.asinh(1.0))
        print(f"largest square apothem within a 0.2 m period: {a:.6f} m (closed form"
              f" {a_star:.6f}, error {abs(a / a_star - 1):.1e}) in {n} evaluations; grid of"
              f" 1e4 points at the same resolution: {1e4 / n:.0f}x fewer")


if __name__ == "__main__":
    main()

"""How the solve and the checks grow with the number of outline vertices.

Case: an outline of N points on a lobed oval (x = 0.30 cos t, y = 0.20 sin t
(1 + 0.1 cos 3t) m) with the axle off-centre at (0.05, 0.03) m, read in two ways:
as the polygon through the points (``corners = "all"``: every vertex is a corner
of the track, N cusps a revolution, and there is no symmetry), and as the smooth
spline through them (the default for an outline this fine: no point turns by the
corner angle). For N = 512 ... 8192 it times

- ``track_for`` (the wheel-first solve),
- ``clearance`` (whole-outline clearance over a revolution; its default pose
  grid grows with the number of cusps, about 13 poses a vertex),
- ``cart_phasing`` for a two-axle cart on one shaft with a wheelbase of 2.5
  track periods (720 chassis positions, a resting height per axle at each),

as the median of a few runs, and fits the growth exponent ``p`` of
``time ~ N**p`` by least squares on the log-log points (1 is linear; the
earlier all-pairs versions were 2 or more). The machine's timings vary by up to
±30 % from run to run, so read the exponents to about ±0.15.

Run: ``python benchmarks/bench_scaling.py`` from the repository root (add
``--quick`` for 512..2048 only). Prints times and exponents; no pass/fail.
"""

from __future__ import annotations

import math
import statistics
import sys
import time

import numpy as np

import ridesim as rs
from ridesim.assess.clearance import clearance
from ridesim.assess.phasing import cart_phasing
from ridesim.scenario.load import VehicleSpec

SIZES = (512, 1024, 2048, 4096, 8192)


def outline(n: int, corners: str) -> rs.Wheel:
    t = np.linspace(0.0, 2.0 * math.pi, n, endpoint=False)
    pts = np.column_stack([0.3 * np.cos(t), 0.2 * np.sin(t) * (1.0 + 0.1 * np.cos(3.0 * t))])
    return rs.Wheel.outline(pts, axle=(0.05, 0.03), corners=corners)


def median_time(fn, repeat: int) -> float:
    ts = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        ts.append(time.perf_counter() - t0)
    return statistics.median(ts)


def exponent(ns, ts) -> float:
    return float(np.polyfit(np.log(ns), np.log(ts), 1)[0])


def main() -> None:
    sizes = SIZES[:3] if "--quick" in sys.argv else SIZES
    for corners, what in (("all", "polygon through the points (every vertex a corner)"),
                          ("none", "smooth spline through the points")):
        print(what)
        rows = []
        for n in sizes:
            w = outline(n, corners)
            pair = rs.track_for(w)
            cart = VehicleSpec(axles=2, wheelbase_m=2.5 * pair.track.period, coupled=True)
            t_solve = median_time(lambda w=w: rs.track_for(w), 7)
            t_clear = median_time(lambda p=pair: clearance(p), 3)
            t_phase = median_time(lambda p=pair, v=cart: cart_phasing(p, v), 3)
            res = clearance(pair)
            rows.append((n, t_solve, t_clear, t_phase))
            print(f"  N = {n:5d}: track_for {t_solve * 1e3:8.1f} ms   clearance {t_clear:7.3f} s"
                  f" ({res.poses} poses)   cart_phasing {t_phase:7.3f} s", flush=True)
        ns = [r[0] for r in rows]
        print("  growth exponent p (time ~ N^p): "
              f"track_for {exponent(ns, [r[1] for r in rows]):.2f}, "
              f"clearance {exponent(ns, [r[2] for r in rows]):.2f}, "
              f"cart_phasing {exponent(ns, [r[3] for r in rows]):.2f}")


if __name__ == "__main__":
    main()

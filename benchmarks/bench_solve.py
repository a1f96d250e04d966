"""Solver speed and memory against a baseline measured in the same run.

Case: an ellipse wheel (semi-axes 0.30 x 0.20 m) with an off-centre axle at
(0.05, 0.03) m, the track sampled at 1e5 wheel angles over one revolution.

Baseline: ``scipy.integrate.cumulative_simpson`` of r(θ) on the same samples
(r evaluated there, then the composite Simpson's rule cumulatively): the
strongest standard quadrature for a running integral on given samples. For
reference only, and labelled so, the earlier ODE-solver baseline: dx/dθ = r(θ)
with ``scipy.integrate.solve_ivp`` (DOP853, rtol 1e-10, atol 1e-12, dense
output at the samples), which is several times slower than the quadrature and
so flatters the solver.

Accuracy of both is measured against an independent reference: adaptive
Gauss-Kronrod quadrature (``scipy.integrate.quad``, epsabs 1e-14) of r over
[θ0, θ] at 200 of the samples.

Run: ``python benchmarks/bench_solve.py``. Prints medians and ratios; no
pass/fail (targets are in the README's benchmark section).
"""

from __future__ import annotations

import math
import statistics
import time
import tracemalloc

import numpy as np
from scipy.integrate import cumulative_simpson, quad, solve_ivp

import ridesim as rs
from ridesim.solve.inverse import _closing_depth

N = 100_000
REPEAT = 15


def median_time(fn, repeat=REPEAT) -> float:
    fn()  # warm
    ts = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        ts.append(time.perf_counter() - t0)
    return statistics.median(ts)


def paired(base, ours, repeat=REPEAT) -> tuple[float, float, float]:
    """Medians of ``base`` and ``ours`` timed alternately, and the median of the per-pair
    ratios base/ours (a load that changes during the run affects both sides of a pair)."""
    base()
    ours()
    tb, to, ratio = [], [], []
    for _ in range(repeat):
        t0 = time.perf_counter()
        base()
        t1 = time.perf_counter()
        ours()
        t2 = time.perf_counter()
        tb.append(t1 - t0)
        to.append(t2 - t1)
        ratio.append((t1 - t0) / (t2 - t1))
    return statistics.median(tb), statistics.median(to), statistics.median(ratio)


def main() -> None:
    wheel = rs.Wheel.ellipse(semi_axes=(0.30, 0.20), axle=(0.05, 0.03))
    pair = rs.track_for(wheel)
    th0 = float(pair.wheel_angle(0.0))
    theta = np.linspace(th0, th0 + 2 * math.pi, N, endpoint=False)

    def r(t):
        return wheel.radius(t - 0.5 * math.pi)

    h = float(theta[1] - theta[0])

    def baseline():
        return cumulative_simpson(r(theta), dx=h, initial=0.0)

    def ode_baseline():
        sol = solve_ivp(lambda t, y: r(t), (th0, th0 + 2 * math.pi), [0.0], method="DOP853",
                        rtol=1e-10, atol=1e-12, dense_output=True)
        return sol.sol(theta)[0]

    def ours_x():
        p = rs.track_for(wheel)
        return p.axle_x(theta)

    def ours_xy():
        return rs.track_for(wheel).dense(N)

    # Accuracy against adaptive quadrature at 200 samples.
    pick = np.linspace(0, N - 1, 200).astype(int)
    ref = np.array([quad(r, th0, float(theta[i]), epsabs=1e-15, epsrel=1e-13, limit=200)[0]
                    for i in pick])
    scale = pair.revolution_length
    err_base = float(np.max(np.abs(baseline()[pick] - ref)) / scale)
    err_ode = float(np.max(np.abs(ode_baseline()[pick] - ref)) / scale)
    err_ours = float(np.max(np.abs(ours_x()[pick] - ref)) / scale)
    _, _, y = ours_xy()
    err_y = float(np.max(np.abs(y[pick] + r(theta[pick]))) / wheel.extremes()[1])

    t_base, t_x, r_x = paired(baseline, ours_x)
    _, t_xy, r_xy = paired(baseline, ours_xy)
    t_ode, _, r_ode = paired(ode_baseline, ours_x)
    print(f"forward solve, ellipse with off-centre axle, {N:.0e} samples"
          " (speed-ups: medians of paired runs)")
    print(f"  baseline cumulative_simpson     : {t_base * 1e3:8.2f} ms   rel. error {err_base:.1e}")
    print(f"  ridesim x(theta)                : {t_x * 1e3:8.2f} ms   rel. error {err_ours:.1e}"
          f"   speed-up {r_x:5.2f}x")
    print(f"  ridesim x and y (dense)         : {t_xy * 1e3:8.2f} ms   rel. error y {err_y:.1e}"
          f"   speed-up {r_xy:5.2f}x")
    print(f"  (reference only) ODE solver solve_ivp DOP853 dense: {t_ode * 1e3:8.2f} ms"
          f"   rel. error {err_ode:.1e}   ridesim x(theta) {r_ode:5.1f}x faster"
          " (this baseline flatters the solver)")

    # Closure-depth root find on a fresh track each time (includes its setup).
    def root():
        return _closing_depth(rs.Track.wave(amplitude=0.1, wavelength=1.0), 2)

    t_root = median_time(root)
    exact = math.sqrt(0.1**2 + (2 * 1.0 / (2 * math.pi)) ** 2)
    print(f"closure depth, wave A=0.1 m, wavelength 1 m, 2 lobes: {t_root * 1e3:.3f} ms,"
          f" error {abs(root() - exact):.1e} m")

    def formula_root():
        return _closing_depth(rs.Track.profile("0.05*cos(x) + 0.02*cos(2*x)", 2 * math.pi), 3)

    print(f"closure depth, formula track, 3 lobes: {median_time(formula_root) * 1e3:.3f} ms")

    # Memory for 1e6 samples.
    tracemalloc.start()
    rs.track_for(wheel).dense(1_000_000)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    print(f"memory, 1e6 dense samples (theta, x, y = 24 MB of output): peak {peak / 1e6:.1f} MB")


if __name__ == "__main__":
    main()

"""Real-time factor of the rigid-body engine against pymunk's own stepping cost.

Run from the repository root:  PYTHONPATH=. python benchmarks/bench_sim.py

Builds a two-axle cart on 64-vertex wheels (a regular 64-gon on its catenary
track, speed drive, 1 kHz) and times, on fresh copies of the same world:

* raw C stepping: ``cpSpaceStep`` in a Python loop, no probes, no controller (the engine's
  own cost); the same bodies are driven by pymunk's motors alone at the shaft speed of the
  target ground speed, within the same torque limit, so both timings see the same motion and
  contacts;
* ``pymunk.Space.step`` in a Python loop (the usual pymunk call, with its Python wrapper);
* the engine: stepping plus every probe, the speed controller and the guard rails;
* the engine's probe post-processing (slip, normal force, seat acceleration).

The timings are interleaved and each figure is the least of several repeats, in process
CPU time, so that other work on a shared machine disturbs them as little as possible.
Prints steps per second, real-time factors and the overhead ratios.
"""

from __future__ import annotations

import argparse
import time

from pymunk._chipmunk_cffi import lib

from ridesim.scenario.load import scenario_from_dict
from ridesim.sim.run import PymunkEngine


def cart(sides: int, duration_s: float) -> dict:
    a = 0.15
    return {
        "name": f"bench_{sides}gon",
        "wheel": {"shape": "polygon", "sides": sides, "apothem_m": a},
        "vehicle": {"body_mass_kg": 10.0, "axles": 2, "wheelbase_m": 0.5},
        "drive": {"mode": "speed", "speed_m_s": 0.5, "max_torque_Nm": 20.0},
        "surface": {"friction": 0.8},
        "run": {"duration_s": duration_s, "timestep_s": 0.001, "settle_s": 0.2, "iterations": 30},
    }


def time_raw(sc, n: int, wrapper: bool) -> tuple[float, float]:
    """CPU time [s] of ``n`` steps, and the distance [m] the first axle travelled."""
    eng = PymunkEngine.from_scenario(sc)
    w = eng.world
    x0 = w.wheels[0].position.x
    for m in w.drive.motors:  # a plain pymunk speed drive: forward at v / r, torque-limited
        m.rate = abs(sc.drive.speed_m_s) / w.r_mean_m
        m.max_force = sc.drive.max_torque_Nm
    space = w.space
    dt = sc.run.timestep_s
    if wrapper:
        step = space.step
        t0 = time.process_time()
        for _ in range(n):
            step(dt)
        return time.process_time() - t0, w.wheels[0].position.x - x0
    sp, cp_step = space._space, lib.cpSpaceStep
    t0 = time.process_time()
    for _ in range(n):
        cp_step(sp, dt)
    return time.process_time() - t0, w.wheels[0].position.x - x0


def time_engine(sc, n: int) -> tuple[float, float, float]:
    """CPU times [s] of stepping and of probe post-processing, and the first axle's travel [m]."""
    eng = PymunkEngine.from_scenario(sc)
    t0 = time.process_time()
    eng.step(n)
    t1 = time.process_time()
    p = eng.probes()
    return t1 - t0, time.process_time() - t1, float(p.axle_x_m[-1, 0] - p.axle_x_m[0, 0])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sides", type=int, default=64)
    ap.add_argument("--seconds", type=float, default=2.0, help="simulated seconds per timing")
    ap.add_argument("--repeats", type=int, default=7)
    args = ap.parse_args()
    sc = scenario_from_dict(cart(args.sides, args.seconds))
    n = int(round(args.seconds / sc.run.timestep_s))
    eng = PymunkEngine.from_scenario(sc)
    w = eng.world
    n_static = sum(1 for s in w.space.shapes if s.body.body_type == s.body.STATIC)
    print(f"two-axle cart, {args.sides}-gon wheels ({w.wheel_pieces} pieces each), {n_static} track"
          f" shapes, dt = {sc.run.timestep_s * 1e3:g} ms, iterations {sc.run.iterations},"
          f" {n} steps per timing, least of {args.repeats}")
    raw, wrap, eng_t, post_t = [], [], [], []
    for _ in range(args.repeats):
        t, travel_raw = time_raw(sc, n, False)
        raw.append(t)
        wrap.append(time_raw(sc, n, True)[0])
        e, p, travel_eng = time_engine(sc, n)
        eng_t.append(e)
        post_t.append(p)
    # Paired ratios (raw and engine timed back to back in each repeat) are steadier than the
    # ratio of separate minima on a machine whose speed drifts; report their medians too.
    paired = sorted((e + p) / r for e, p, r in zip(eng_t, post_t, raw, strict=True))
    paired_eng = sorted(e / r for e, r in zip(eng_t, raw, strict=True))
    rtf = sorted(args.seconds / (e + p) for e, p in zip(eng_t, post_t, strict=True))
    raw, wrap, eng_t, post_t = min(raw), min(wrap), min(eng_t), min(post_t)
    sim_s = n * sc.run.timestep_s
    for label, t in (("raw cpSpaceStep loop", raw), ("pymunk Space.step loop", wrap),
                     ("engine (probes, drive, guards)", eng_t),
                     ("engine + probe post-processing", eng_t + post_t)):
        print(f"  {label:34s} {n / t:10.0f} steps/s  {1e6 * t / n:7.2f} us/step"
              f"  {sim_s / t:7.1f}x real time")
    print(f"  overhead of probes+controller over raw C stepping: {100 * (eng_t / raw - 1):6.1f} %"
          " (target <= 25 %)")
    total = 100 * ((eng_t + post_t) / raw - 1)
    print(f"  ... including post-processing:                      {total:6.1f} %")
    print(f"  engine vs pymunk Space.step loop:                  {100 * (eng_t / wrap - 1):6.1f} %")
    print(f"  real-time factor of the engine: {sim_s / (eng_t + post_t):.1f}x (target >= 50x)")
    print(f"  first axle travelled {travel_raw:.3f} m under the plain pymunk drive, {travel_eng:.3f} m"
          " under the engine's speed drive")
    mid = len(paired) // 2
    print(f"  medians of paired repeats: overhead {100 * (paired_eng[mid] - 1):.1f} % (engine),"
          f" {100 * (paired[mid] - 1):.1f} % (with post-processing); real-time factor"
          f" {rtf[mid]:.1f}x (range {rtf[0]:.1f}-{rtf[-1]:.1f}x)")


if __name__ == "__main__":
    main()

"""Rolling around a hub: solve and simulation speed against the straight track, same run.

Run from the repository root:  PYTHONPATH=. python benchmarks/bench_hub.py

* Solve: ``hub_for`` (ratio given: a root find for the centre distance plus the hub map)
  against ``track_for`` of the same wheel, for a 400-vertex outline (straight edges, closed
  forms) and for a smooth polar wheel (Chebyshev tables), then both pairs sampled at 1e4
  wheel angles (hub angle and hub radius against axle position and track height).
* Simulation: one wheel revolution of the gear pair (:func:`ridesim.sim.hub.run_gear_pair`,
  0.5 ms steps) against one revolution of the same wheel on its straight track (a one-axle
  cart at the same shaft speed through ``PymunkEngine``, 0.5 ms steps).

Each figure is the median of several repeats in process CPU time. Target (issue 15): the
hub within 2x of the straight track. Prints the timings and their ratios; no pass/fail.
"""

from __future__ import annotations

import math
import statistics
import time

import numpy as np

import ridesim as rs
from ridesim.scenario.load import scenario_from_dict
from ridesim.sim.hub import run_gear_pair
from ridesim.sim.run import PymunkEngine

REPEAT = 7


def cpu_median(fn, repeat=REPEAT) -> float:
    fn()
    ts = []
    for _ in range(repeat):
        t0 = time.process_time()
        fn()
        ts.append(time.process_time() - t0)
    return statistics.median(ts)


def main() -> None:
    ang = np.linspace(0.0, 2 * math.pi, 401)[:-1]
    pts = np.column_stack([np.cos(ang), np.sin(ang)]) * (0.3 + 0.05 * np.cos(3 * ang))[:, None]
    cases = {"400-vertex outline": rs.Wheel.outline(pts),
             "polar 0.3 + 0.05 cos 3phi": rs.Wheel.polar("0.3 + 0.05*cos(3*phi)")}
    theta = np.linspace(0.0, 2 * math.pi, 10_000)
    for label, w in cases.items():
        def line(w=w):
            p = rs.track_for(w)
            x = p.axle_x(theta)
            return p.track.y(x)

        def hub(w=w):
            p = rs.hub_for(w, ratio=3)
            p.hub_angle(theta)
            return p.hub.radius(0.5 * math.pi - p.hub_angle(theta))

        t_line, t_hub = cpu_median(line), cpu_median(hub)
        print(f"solve + 1e4 samples, {label}: track {t_line * 1e3:.1f} ms, hub {t_hub * 1e3:.1f} ms,"
              f" ratio {t_hub / t_line:.2f}")

    a, b = 0.3, 0.27
    c = math.sqrt(a * a - b * b)
    w = rs.Wheel.ellipse(semi_axes=(a, b), axle=(c, 0.0))
    pair = rs.hub_for(w, ratio=1)
    omega = 2.0
    rev_s = 2 * math.pi / omega

    def gear():
        run_gear_pair(pair, driver_speed_rad_s=omega, turns=1.0, timestep_s=5e-4)

    sc = scenario_from_dict({
        "wheel": {"shape": "ellipse", "semi_axes_m": [a, b], "axle_m": [c, 0.0]},
        "vehicle": {"body_mass_kg": 5.0, "axles": 1},
        "drive": {"mode": "shaft_speed", "shaft_speed_rad_s": omega, "max_torque_Nm": 50.0},
        "surface": {"friction": 1.5},
        "run": {"duration_s": rev_s, "timestep_s": 5e-4, "settle_s": 0.1, "iterations": 30},
    })

    def straight():
        eng = PymunkEngine.from_scenario(sc)
        eng.run()

    t_line, t_gear = cpu_median(straight, 3), cpu_median(gear, 3)
    print(f"one revolution at 0.5 ms steps: straight-track cart {t_line:.3f} s, gear pair"
          f" {t_gear:.3f} s, ratio {t_gear / t_line:.2f}")


if __name__ == "__main__":
    main()

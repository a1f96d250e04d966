"""Rigid-body engine against textbook mechanics.

Sources: rolling without slipping down an incline, ``a = g sin(theta) / (1 + beta)`` with
``beta = I / (m R^2)`` (1/2 for a uniform disk, hence ``(2/3) g sin(theta)``), and the
least friction for it ``mu = tan(theta) beta / (1 + beta)`` (``tan(theta)/3`` for a disk);
a sliding body ``a = g (sin(theta) - mu cos(theta))`` (Halliday, Resnick & Walker,
"Fundamentals of Physics" [memory]); Newton's second law for a cart with spinning wheels
(derived in the test's docstring). Each simulated run is 1 s at 1 kHz.
"""

import dataclasses
import math

import numpy as np
import pytest

from ridesim.jobs.simulate import simulate
from ridesim.metrics import ride
from ridesim.scenario.load import DriveSpec, scenario_from_dict
from ridesim.sim.run import PymunkEngine
from ridesim.sim.world import STANDARD_GRAVITY_M_S2 as G

R = 0.1  # wheel radius [m]
GRADE = math.radians(20.0)


def disk_scenario(mu, body_mass=0.0, axles=1, driven=None, torque=None):
    d = {
        "wheel": {"shape": "circle", "radius_m": R, "thickness_m": 0.02, "density_kg_m3": 700.0},
        "vehicle": {"body_mass_kg": body_mass, "axles": axles, "wheelbase_m": 0.4 if axles > 1 else 0.0},
        "drive": {"mode": "torque", "torque_Nm": torque or 1.0},
        "surface": {"friction": mu},
        "run": {"duration_s": 1.0, "timestep_s": 0.001, "settle_s": 0.1},
    }
    if driven is not None:
        d["vehicle"]["driven_axles"] = driven
    sc = scenario_from_dict(d)
    if torque is None:
        # Free rolling: no drive torque (a direct construction, since a torque drive needs > 0).
        sc = dataclasses.replace(sc, drive=DriveSpec(mode="torque", torque_Nm=0.0))
    return sc


def fitted_accel(probes, t0=0.1):
    s = probes.time_s > t0
    return float(np.polyfit(probes.time_s[s], probes.speed_m_s[s], 1)[0])


def test_disk_rolls_down_an_incline_at_two_thirds_g_sin():
    """Uniform disk, no slip: a = g sin(theta) / (1 + 1/2) = (2/3) g sin(theta).

    The engine always has a body on the axle; with ``body_mass_kg = 0`` it weighs a thousandth
    of the wheel, which changes the closed form by 0.03 %. The check is the closed form with that
    mass included, and (2/3) g sin(theta) itself within the 2 % the brief asks.
    """
    eng = PymunkEngine.from_scenario(disk_scenario(mu=0.3), grade_rad=GRADE)
    p = eng.run()
    w = eng.world
    m = w.wheel_mass_kg + w.body_mass_kg
    exact = G * math.sin(GRADE) * m / (m + w.wheel_inertia_kg_m2 / R**2)
    a = fitted_accel(p)
    np.testing.assert_allclose(a, exact, rtol=0.02)
    np.testing.assert_allclose(a, (2.0 / 3.0) * G * math.sin(GRADE), rtol=0.02)
    # The disk's inertia about its centre is m R^2 / 2 (the plate model), so beta = 1/2.
    np.testing.assert_allclose(w.wheel_inertia_kg_m2, 0.5 * w.wheel_mass_kg * R**2, rtol=1e-9)
    t_on, _, _ = ride.slip_onset(p)
    assert t_on is None


@pytest.mark.parametrize("fraction", [0.5, 0.8])
def test_disk_slides_when_friction_is_below_a_third_of_the_grade(fraction):
    """mu below tan(theta)/3 cannot hold rolling: the disk slides, a = g (sin - mu cos).

    With slip, friction on the rim is kinetic, mu N with N = m g cos(theta) (the body's weight
    reaches the rim through the axle), whatever the body's share of m.
    """
    mu_min = math.tan(GRADE) / 3.0
    mu = fraction * mu_min
    p = PymunkEngine.from_scenario(disk_scenario(mu=mu), grade_rad=GRADE).run()
    a = fitted_accel(p, t0=0.2)
    np.testing.assert_allclose(a, G * (math.sin(GRADE) - mu * math.cos(GRADE)), rtol=0.02)
    t_on, axle, peak = ride.slip_onset(p)
    assert t_on is not None and axle == 0
    assert peak > 0.1  # m/s: the rim slides at tens of cm/s after half a second
    # The disk slides forward faster than it turns: the rim at the contact moves forward over
    # the track, positive slip, growing as (a - alpha R) t with alpha R = 2 mu g cos(theta).
    s = p.time_s > 0.5
    assert np.all(p.slip_speed_m_s[s, 0] > 0)
    grow = G * (math.sin(GRADE) - mu * math.cos(GRADE)) - 2 * mu * G * math.cos(GRADE)
    np.testing.assert_allclose(np.polyfit(p.time_s[s], p.slip_speed_m_s[s, 0], 1)[0], grow, rtol=0.02)
    # Rim scrub over the settled record: the integral of that slip speed, grow t, from the
    # later of the settling time and the moment it passes the threshold.
    t_slip, scrub = ride.slip_scrub(p)
    thr = ride.slip_threshold_m_s(p)
    t_a = max(p.settle_s, thr / grow)
    t_end = float(p.time_s[-1])
    np.testing.assert_allclose(scrub, 0.5 * grow * (t_end**2 - t_a**2), rtol=0.03)
    np.testing.assert_allclose(t_slip, t_end - t_a, rtol=0.03)


def test_friction_just_above_a_third_of_the_grade_still_rolls():
    # 20 % above the least friction for rolling: no slip, rolling acceleration.
    mu = 1.2 * math.tan(GRADE) / 3.0
    eng = PymunkEngine.from_scenario(disk_scenario(mu=mu), grade_rad=GRADE)
    p = eng.run()
    assert ride.slip_onset(p)[0] is None
    np.testing.assert_allclose(fitted_accel(p), (2.0 / 3.0) * G * math.sin(GRADE), rtol=0.02)


@pytest.mark.parametrize("driven", [[0, 1], [1]])
def test_cart_under_constant_torque_follows_newton(driven):
    """Cart on a level track, torque T on each of n driven wheels, N wheels in all.

    Each wheel (mass m, inertia I about its axle, radius r) rolls without slipping, so its
    angular acceleration is a / r. Wheel i: I a / r = T_i - f_i r, with f_i the forward
    traction at its contact. The whole cart: M a = sum f_i, M the total mass (body and
    wheels). Summing, sum f_i = (sum T_i) / r - N I a / r^2, so
    a = n T / r / (M + N I / r^2). Undriven wheels still add their I / r^2.
    """
    T = 0.5
    sc = disk_scenario(mu=0.8, body_mass=5.0, axles=2, driven=driven, torque=T)
    eng = PymunkEngine.from_scenario(sc)
    p = eng.run()
    w = eng.world
    M = w.body_mass_kg + 2 * w.wheel_mass_kg
    expected = len(driven) * T / R / (M + 2 * w.wheel_inertia_kg_m2 / R**2)
    np.testing.assert_allclose(fitted_accel(p), expected, rtol=0.02)
    # The seat rides on the level body: its horizontal acceleration is the cart's, its vertical 0.
    s = p.time_s > 0.1
    np.testing.assert_allclose(np.mean(p.seat_ax_m_s2[s]), expected, rtol=0.02)
    assert np.max(np.abs(p.seat_ay_m_s2[s])) < 0.01 * expected
    # Level track, no vertical acceleration: the normal forces carry the whole weight M g.
    np.testing.assert_allclose(np.mean(p.normal_force_N[s].sum(axis=1)), M * G, rtol=0.01)
    assert np.all(p.contact[s])
    # The drive torque the probes read is the torque applied.
    np.testing.assert_allclose(p.shaft_torque_Nm, T, rtol=1e-9)


def test_runs_are_deterministic():
    sc = scenario_from_dict({
        "wheel": {"shape": "polygon", "sides": 5, "apothem_m": 0.1},
        "vehicle": {"body_mass_kg": 3.0, "axles": 2, "wheelbase_m": 0.3},
        "drive": {"mode": "speed", "speed_m_s": 0.4},
        "surface": {"friction": 0.9},
        "run": {"duration_s": 1.0, "settle_s": 0.3},
    })
    a, b = simulate(sc), simulate(sc)
    assert a.to_dict() == b.to_dict()
    np.testing.assert_array_equal(a.probes.axle_y_m, b.probes.axle_y_m)
    np.testing.assert_array_equal(a.probes.shaft_torque_Nm, b.probes.shaft_torque_Nm)


def test_time_at_the_torque_limit_follows_newton():
    """A speed drive asked to ramp faster than its torque limit allows runs at that limit until
    the cart reaches the target speed: with the limit T on each of n = 2 driven round wheels,
    a = n T / r / (M + N I / r^2) (Newton's second law, as in the constant-torque test above),
    so it is at the limit until t = v / a and the settled share of time at the limit is
    (v/a - settle) / (duration - settle)."""
    T, v, settle, dur = 0.1, 0.5, 0.2, 3.0
    sc = disk_scenario(mu=0.8, body_mass=5.0, axles=2, torque=1.0).replace_many({
        "drive.mode": "speed", "drive.speed_m_s": v, "drive.accel_m_s2": 5.0,
        "drive.max_torque_Nm": T, "run.duration_s": dur, "run.settle_s": settle})
    res = simulate(sc)
    w = res.probes.info
    M = w["body_mass_kg"] + 2 * w["wheel_mass_kg"]
    a = 2 * T / R / (M + 2 * w["wheel_inertia_kg_m2"] / R**2)
    expected = 100.0 * (v / a - settle) / (dur - settle)
    assert 20.0 < expected < 80.0  # the limit binds for a good part of the run, not all of it
    np.testing.assert_allclose(res.drive["at_limit_pct"], expected, atol=1.0)
    assert not res.drive["stalled"]

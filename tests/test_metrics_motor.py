"""Motor sizing against hand calculations from Newton's laws.

Circle-wheeled cart on its flat track, all wheels driven, over a trapezoidal
duty cycle. Per driven wheel of radius R (Newton's second law for the cart and
for each wheel, with the textbook rolling-resistance model: resisting torque
C_rr·N·R, Gillespie, "Fundamentals of Vehicle Dynamics", SAE 1992 [memory]):

    accelerating at a:  T_a = R·M·(a + g·C_rr)/n + I·a/R
    cruising:           T_c = R·M·g·C_rr/n
    braking at b:       T_b = R·M·(g·C_rr - b)/n - I·b/R

with M the total mass (body and wheels) and n the number of wheels. The
cycle's r.m.s. torque is √((T_a² t_a + T_c² t_c + T_b² t_b) / (t_a + t_c + t_b))
(common practice in motor application notes). C_rr = 0.010 is the low end of
the range for a car tyre on concrete, 0.010-0.015 (engineering tables, as
listed in the project's REFERENCES).
"""

import math

import numpy as np
import pytest

from ridesim.io.scenario import scenario_from_dict
from ridesim.metrics.motor import duty_profile, size_motor

G = 9.80665
R, BODY, AXLES, CRR = 0.1, 12.0, 2, 0.010
V, A, B, CRUISE = 0.5, 0.25, 0.5, 4.0


def cart(**extra):
    d = {
        "wheel": {"shape": "circle", "radius_m": R, "thickness_m": 0.02, "density_kg_m3": 700.0},
        "vehicle": {"body_mass_kg": BODY, "axles": AXLES, "wheelbase_m": 0.5},
        "drive": {"mode": "speed", "speed_m_s": V, "accel_m_s2": A},
        "surface": {"friction": 0.9, "rolling_resistance": CRR},
        "duty": {"cruise_s": CRUISE, "brake_m_s2": B},
    }
    for k, v in extra.items():
        d.setdefault(k, {}).update(v)
    return scenario_from_dict(d)


def hand():
    m = 700.0 * 0.02 * math.pi * R * R  # disk mass [kg]
    inertia = 0.5 * m * R * R  # uniform disk about its axis (textbook)
    M = BODY + AXLES * m
    Ta = R * M * (A + G * CRR) / AXLES + inertia * A / R
    Tc = R * M * G * CRR / AXLES
    Tb = R * M * (G * CRR - B) / AXLES - inertia * B / R
    ta, tb = V / A, V / B
    rms = math.sqrt((Ta**2 * ta + Tc**2 * CRUISE + Tb**2 * tb) / (ta + CRUISE + tb))
    return Ta, Tc, Tb, rms


def test_circle_cart_torques_match_newton():
    Ta, Tc, Tb, rms = hand()
    res = size_motor(cart())
    tq = res.torque_Nm[0]
    t = res.t_s
    ta = V / A
    np.testing.assert_allclose(tq[t < ta], Ta, rtol=1e-9)
    np.testing.assert_allclose(tq[(t > ta) & (t < ta + CRUISE)], Tc, rtol=1e-9)
    np.testing.assert_allclose(tq[(t > ta + CRUISE) & (t < ta + CRUISE + V / B)], Tb, rtol=1e-9)
    assert res.peak_torque_Nm == pytest.approx(max(abs(Ta), abs(Tb)), rel=1e-9)
    # The phases fall on whole samples here, so the sampled r.m.s. is the closed form.
    assert res.rms_torque_Nm == pytest.approx(rms, rel=1e-9)
    assert res.max_shaft_speed_rpm == pytest.approx(V / R * 60 / (2 * math.pi), rel=1e-12)
    # Peak power is at the end of the ramp; midpoint samples stop a*dt/2 short of the top
    # speed (dt = 0.01 s here), a relative shortfall of a*dt/(2V) = 2.5e-3.
    assert res.peak_power_W == pytest.approx(Ta * (V - A * 0.005) / R, rel=1e-9)
    # Mean delivered power (braking power counted as zero: here T_b < 0 since b > g C_rr):
    # [int_0^ta T_a (A t)/R dt + T_c (V/R) t_c] / t_total; midpoint samples integrate the
    # linear ramp exactly.
    ta, tb = V / A, V / B
    assert Tb < 0
    mean = (Ta * A * ta**2 / (2 * R) + Tc * V / R * CRUISE) / (ta + CRUISE + tb)
    assert res.mean_power_W == pytest.approx(mean, rel=1e-9)


def test_duty_profile_is_trapezoidal():
    t, v, a = duty_profile(1.0, 0.5, 1.0, 3.0, 1.0, 0.01)
    dt = t[1] - t[0]
    # Distance covered: area of the trapezoid, v*(t_a/2 + t_c + t_b/2) = 1*(1 + 3 + 0.5).
    assert np.sum(v) * dt == pytest.approx(4.5, rel=1e-3)
    assert v.max() == pytest.approx(1.0) and v[-1] == 0.0
    assert set(np.unique(a)) == {-1.0, 0.0, 0.5}


def test_grade_adds_the_slope_force():
    # On a grade α the driven shafts also carry M·g·sin(α)·R/n (tractive-force model,
    # Ehsani et al. 2018, ch. 2 [memory]).
    flat = size_motor(cart())
    alpha = 0.05
    up = size_motor(cart(duty={"grade_rad": alpha}))
    m = 700.0 * 0.02 * math.pi * R * R
    extra = (BODY + AXLES * m) * G * math.sin(alpha) * R / AXLES
    np.testing.assert_allclose(up.torque_Nm - flat.torque_Nm, extra, rtol=1e-9)
    assert any("grade" in c for c in up.cautions)


def test_gear_ratio_choice_and_cautions():
    Ta, Tc, Tb, rms = hand()
    # A motor rated 0.2 N m continuous, 0.6 N m peak, 300 rad/s; gearbox efficiency 0.9.
    sc = cart(motor={"gear_ratios": [1.0, 5.0, 20.0, 80.0], "rated_torque_Nm": 0.2,
                     "peak_torque_Nm": 0.6, "rated_speed_rad_s": 300.0, "efficiency": 0.9,
                     "safety_factor": 1.5})
    res = size_motor(sc)
    by = {g.ratio: g for g in res.gears}
    for i, g in by.items():
        assert g.motor_rms_torque_Nm == pytest.approx(rms / (i * 0.9), rel=1e-9)
        assert g.motor_max_speed_rad_s == pytest.approx(V / R * i, rel=1e-12)
    # i = 1: too much torque; i = 80: 400 rad/s x 1.5 > 300 rad/s.
    assert not by[1.0].fits and "continuous torque" in by[1.0].limits
    assert not by[80.0].fits and by[80.0].limits == ("speed",)
    expected = min(i for i in (5.0, 20.0)
                   if rms / (i * 0.9) * 1.5 <= 0.2 and max(abs(Ta), abs(Tb)) / (i * 0.9) * 1.5 <= 0.6
                   and V / R * i * 1.5 <= 300.0)
    assert res.best_ratio == expected
    d = res.to_dict()
    for key in ("peak_torque_Nm", "rms_torque_Nm", "max_shaft_speed_rpm", "peak_power_W",
                "mean_power_W", "cautions"):
        assert key in d
    assert any("licensed engineer" in c for c in d["cautions"])


def test_missing_accel_is_assumed_and_said():
    res = size_motor(cart(drive={"accel_m_s2": 0.0}))
    assert res.accel_m_s2 == 0.25
    assert any("drive.accel_m_s2 is not given" in c for c in res.cautions)


def test_square_wheel_cruise_torque_matches_analytic_peak():
    # Square plate wheels at steady speed: the shaft torque is I·α with α = d(v/r)/dt and
    # r = a·cosh(x/a); its peak I·v²/(2a²) falls at the cusp (derived in
    # test_assess_analytic). During the cruise the sized torque must reach that value and
    # not exceed it (64 samples a period catch the peak within a few percent).
    a, v = 0.3, 0.5
    sc = scenario_from_dict({
        "wheel": {"shape": "polygon", "sides": 4, "apothem_m": a},
        "vehicle": {"body_mass_kg": 5.0, "axles": 1},
        "drive": {"speed_m_s": v, "accel_m_s2": 0.01},
        "surface": {"friction": 1.2},
        "duty": {"cruise_s": 20.0},
    })
    res = size_motor(sc)
    from ridesim.io.build import solve_scenario, wheel_mass

    inertia = wheel_mass(sc, solve_scenario(sc).wheel).inertia_kg_m2
    t_a = v / 0.01
    cruise = (res.t_s > t_a) & (res.t_s < t_a + 20.0)
    peak = inertia * v * v / (2 * a * a)
    sampled = float(np.max(np.abs(res.torque_Nm[0][cruise])))
    assert 0.95 * peak <= sampled <= peak * (1 + 1e-9)
    # The reported peak includes the exact one-sided value at the cusp.
    assert res.peak_torque_Nm >= peak * (1 - 1e-9)

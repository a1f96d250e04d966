"""Motor sizing of a hub pair at a steady speed, against closed forms of statics and dynamics."""

import json
import math
from pathlib import Path

import numpy as np
import pytest

import ridesim as rs
from ridesim.cli import main
from ridesim.metrics.hub_motor import hub_drive

SCENARIOS = Path(__file__).resolve().parent.parent / "scenarios"
G = 9.80665
A, B = 0.06, 0.05
C = math.sqrt(A * A - B * B)
ECC = C / A
P_SEMI = A * (1 - ECC**2)  # semi-latus rectum


def _ellipse_pair():
    w = rs.Wheel.ellipse(semi_axes=(A, B), axle=(C, 0.0))
    return rs.hub_for(w, ratio=1)


def _r(theta):
    # The ellipse about its focus (near vertex along +x): r = p/(1 + e cos phi), the contact on
    # the wheel-frame ray phi = theta - pi/2 (ridesim's angle convention).
    return P_SEMI / (1 + ECC * np.cos(theta - 0.5 * math.pi))


def test_elliptic_gears_quasi_static_torque_is_the_gear_law():
    # Ideal pair, constant driver speed, brake T on the driven gear, no inertia: power balance
    # T_driver * omega = T * psi' * omega, psi' = r/(2a - r) (identical ellipses about their
    # foci at E = 2a; Litvin et al., Noncircular Gears, 2009): the torque runs between
    # T (1 - e)/(1 + e) and T (1 + e)/(1 - e) and its time mean is T (psi' averages 1).
    T = 0.3
    d = hub_drive(_ellipse_pair(), "gear", 2.0, load_torque_Nm=T, preload_N=10.0)
    r = _r(d.theta_rad)
    np.testing.assert_allclose(d.torque_Nm, T * r / (2 * A - r), rtol=1e-9)
    assert d.peak_torque_Nm == pytest.approx(T * (1 + ECC) / (1 - ECC), rel=1e-6)
    assert np.min(d.torque_Nm) == pytest.approx(T * (1 - ECC) / (1 + ECC), rel=1e-5)
    assert d.mean_torque_Nm == pytest.approx(T, rel=1e-9)
    assert d.peak_power_W == pytest.approx(2.0 * d.peak_torque_Nm, rel=1e-12)


def test_elliptic_gears_inertia_torque():
    # No brake: the driver only speeds up and slows down the driven gear (inertia I):
    # T = I psi' psi'' omega^2 (work-energy, K = I (psi' omega)^2 / 2), with
    # psi' = p/(2 a D - p), D = 1 + e cos(phi), so psi'' = 2 a p e sin(phi)/(2 a D - p)^2 [derived].
    inertia, omega = 2e-4, 5.0
    d = hub_drive(_ellipse_pair(), "gear", omega, driven_inertia_kg_m2=inertia, preload_N=10.0)
    phi = d.theta_rad - 0.5 * math.pi
    D = 1 + ECC * np.cos(phi)
    sp = P_SEMI / (2 * A * D - P_SEMI)
    spp = 2 * A * P_SEMI * ECC * np.sin(phi) / (2 * A * D - P_SEMI) ** 2
    np.testing.assert_allclose(d.torque_Nm, inertia * sp * spp * omega**2, rtol=1e-5,
                               atol=1e-7 * np.max(np.abs(d.torque_Nm)))
    assert abs(d.mean_torque_Nm) < 1e-6 * d.peak_torque_Nm  # kinetic energy returns each turn


def test_circle_in_a_drum_lifts_its_weight():
    # A disc (R, centred axle, mass m) in a ring rho0, standing up (gravity in the plane).
    # Arm driven at Omega, wheel free: a lever lifting m g at E = rho0 - R, T = m g E sin(phi),
    # peak m g E; mean delivered power m g E Omega / pi (the positive half of a sine averages
    # 1/pi over a lap). Wheel driven on the arm: T = m g E sin(phi) R/rho0 (moments about the
    # pivot and the axle; see tests/test_assess_hub_loads.py), peak m g E R/rho0. Circles turn
    # at constant rates, so no inertia torque at any speed.
    R, rho0, m = 0.1, 0.5, 2.0
    E = rho0 - R
    pair = rs.hub_for(rs.Wheel.circle(R), side="inside", centre_distance=E)
    kw = {"mass_kg": m, "gravity_m_s2": G, "preload_N": 30.0, "wheel_inertia_kg_m2": 0.01}
    arm = hub_drive(pair, "arm", 0.7, **kw)
    assert arm.peak_torque_Nm == pytest.approx(m * G * E, rel=1e-6)
    assert arm.mean_power_W == pytest.approx(m * G * E * 0.7 / math.pi, rel=1e-5)
    assert abs(arm.mean_torque_Nm) < 1e-8 * arm.peak_torque_Nm  # gravity does no work over a lap
    wheel = hub_drive(pair, "wheel", 3.5, **kw)
    assert wheel.peak_torque_Nm == pytest.approx(m * G * E * R / rho0, rel=1e-6)
    # Same lap time both ways (the arm at the wheel's speed over the ratio, rho0/R = 5).
    assert wheel.cycle_s == pytest.approx(arm.cycle_s, rel=1e-6)


def test_size_motor_cli_on_hub_scenarios(capsys):
    assert main(["size-motor", str(SCENARIOS / "elliptic_gear_pair.toml"), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["per"] == "motor" and out["view"] == "gears" and len(out["motors"]) == 1
    assert out["max_shaft_speed_rad_s"] == 4.0  # drive.shaft_speed_rad_s
    # The brake alone would need 0.002 N m on average (power balance); inertia adds ripple only.
    assert out["motors"][0]["mean_torque_Nm"] == pytest.approx(0.002, rel=1e-6)
    assert out["peak_torque_Nm"] >= 0.002 * (1 + ECC) / (1 - ECC)
    assert out["cautions"] and any("guard" in c for c in out["cautions"])
    assert main(["size-motor", str(SCENARIOS / "drum_carousel.toml")]) == 0
    text = capsys.readouterr().out
    assert "wheel shaft (motor on the arm)" in text and "arm (motor at the pivot" in text


def test_hub_gear_ratios_are_checked_per_motor():
    # Through a reduction i with efficiency eta the motor sees T/(i eta) and turns at i omega
    # (common practice; the same rule as a line's sizing). The demo drum stood up, with no rotor
    # inertia given (motor.inertia_kg_m2 = 0); the arm's samples are resampled evenly in time,
    # hence the 0.2 % tolerance on its r.m.s.
    from ridesim.jobs import run_job
    from ridesim.scenario.load import load_scenario

    sc = load_scenario(SCENARIOS / "drum_carousel.toml")
    sc = sc.replace("path.gravity_in_plane", True).replace("motor.gear_ratios", [20.0])
    out = run_job("size-motor", sc)
    eta = sc.motor.efficiency
    for m in out["motors"]:
        (g,) = m["gears"]
        assert g["motor_rms_torque_Nm"] == pytest.approx(m["rms_torque_Nm"] / (20 * eta), rel=2e-3)
        assert g["motor_max_speed_rad_s"] == pytest.approx(20 * m["max_shaft_speed_rad_s"], rel=1e-12)
    assert out["gears"] == out["motors"][0]["gears"]

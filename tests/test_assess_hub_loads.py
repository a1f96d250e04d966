"""Friction demand and drive torque of a hub pair with gravity, a preload and a brake.

Every expected number is a closed form of textbook statics written beside its check.
"""

import math

import numpy as np
import pytest

import ridesim as rs
from ridesim.assess.friction import contact_loads
from ridesim.assess.hub import hub_friction, hub_loads
from ridesim.model.wheel import MassProperties

G = 9.80665


def _ring(R=0.1, rho0=0.5):
    return rs.hub_for(rs.Wheel.circle(R), side="inside", centre_distance=rho0 - R)


def test_disc_in_a_drum_wheel_driven():
    # A disc (radius R, centred axle, mass m) in a ring of radius rho0, its axle on a free,
    # massless arm at E = rho0 - R, the wheel turned slowly by a motor on the arm. Moments of
    # wheel and arm together about the pivot (the motor's reaction stays inside): the contact's
    # tangential force F_t satisfies rho0 F_t = E m g sin(phi); radially N = m g cos(phi) + P
    # (phi: the arm from straight down). Hence mu = (E/rho0) m g sin(phi) / (m g cos(phi) + P),
    # which is the classical tan(phi) of a disc held in a cylinder as R/rho0 -> 0 and P = 0
    # (Meriam & Kraige, Engineering Mechanics: Statics, friction chapter [memory]). The motor's
    # torque follows from the wheel's moments about its axle: T = R F_t.
    R, rho0, m, P = 0.1, 0.5, 2.0, 3.0
    pair = _ring(R, rho0)
    E = rho0 - R
    th = np.linspace(0.1, 6.0, 40)
    ld = hub_loads(pair, th, mass_kg=m, gravity_m_s2=G, preload_N=P)
    phi = ld.arm_rad + 0.5 * math.pi  # arm angle measured from straight down
    ft = E * m * G * np.sin(phi) / rho0
    n = m * G * np.cos(phi) + P
    ok = n > 0
    np.testing.assert_allclose(ld.normal_N, n, rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(ld.mu_required[ok], np.abs(ft[ok]) / n[ok], rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(ld.drive_torque_Nm, R * ft, rtol=1e-9, atol=1e-12)
    assert np.all(ld.pressure_angle_rad < 1e-6)  # a circle's normal is radial


def test_disc_in_a_drum_arm_driven():
    # The same drum with the arm turned by a motor at the pivot and the wheel free on its
    # centred axle: the wheel's moments about its axle give F_t = 0 (no friction needed), and
    # the arm motor lifts the weight at E: T = m g E sin(phi) (statics of a lever).
    R, rho0, m = 0.1, 0.5, 2.0
    pair = _ring(R, rho0)
    th = np.linspace(0.1, 6.0, 40)
    ld = hub_loads(pair, th, drive="arm", mass_kg=m, gravity_m_s2=G, preload_N=0.0)
    phi = ld.arm_rad + 0.5 * math.pi
    ok = np.cos(phi) > 0.1
    assert np.max(ld.mu_required[ok]) < 1e-12
    np.testing.assert_allclose(ld.drive_torque_Nm, m * G * (rho0 - R) * np.sin(phi), rtol=1e-9,
                               atol=1e-12)


def test_preloaded_circle_pair_without_gravity():
    # Gravity off, circle wheel R around a circle hub rho0, pressed together by P, the driven
    # member braked by T_L. Power balance of an ideal pair: T_w = T_L * R/rho0 (the speed ratio
    # is R/rho0); the tangential force is T_L/rho0 = T_w/R and the normal force P, so
    # mu = T_w / (R P) (friction drive between cylinders, e.g. Shigley's Mechanical Engineering
    # Design, friction drives [memory]).
    R, rho0, P, TL = 0.04, 0.1, 20.0, 0.3
    pair = rs.hub_for(rs.Wheel.circle(R), centre_distance=R + rho0)
    th = np.linspace(0.0, 2 * math.pi, 17)
    ld = hub_loads(pair, th, preload_N=P, load_torque_Nm=TL)
    tw = TL * R / rho0
    np.testing.assert_allclose(ld.drive_torque_Nm, tw, rtol=1e-12)
    np.testing.assert_allclose(ld.mu_required, tw / (R * P), rtol=1e-12)
    fr = hub_friction(pair, preload_N=P, load_torque_Nm=TL, available=0.1)
    assert fr.peak == pytest.approx(tw / (R * P), rel=1e-8) and fr.slips is True


@pytest.mark.parametrize("side", ["outside", "inside"])
def test_drive_torque_is_the_virtual_work(side):
    # Principle of virtual work (Lanczos, The Variational Principles of Mechanics [memory]): a
    # slow, loss-free drive does the work that raises the weight and turns the brake, so
    # T dtheta = dV + T_L |dalpha| with V = m g y of the wheel's centre of mass (here off the
    # axle: an ellipse about its focus).
    a, b = 0.06, 0.05
    w = rs.Wheel.ellipse(semi_axes=(a, b), axle=(math.sqrt(a * a - b * b), 0.0))
    pair = rs.hub_for(w, ratio=1 if side == "outside" else 2, side=side)
    com = w.mass_properties(0.01, 600.0).com_m
    m, TL, h = 0.7, 0.05, 1e-5
    th = np.linspace(0.05, 2 * math.pi - 0.05, 23)
    ld = hub_loads(pair, th, mass_kg=m, com_m=com, gravity_m_s2=G, preload_N=40.0,
                   load_torque_Nm=TL)

    def y(t):
        arm, axle, spin = pair.poses(t)
        return axle[..., 1] - com[0] * np.sin(spin) + com[1] * np.cos(spin)

    dV = m * G * (y(th + h) - y(th - h)) / (2 * h)
    dalpha = (pair.poses(th + h)[0] - pair.poses(th - h)[0]) / (2 * h)
    np.testing.assert_allclose(ld.drive_torque_Nm, dV + TL * np.abs(dalpha), rtol=1e-6, atol=1e-8)


def test_straight_limit_matches_the_line_track():
    # A hexagon wheel (mass m, axle at its centre) on top of a hub of ratio k, gravity down,
    # driven slowly: as E -> infinity this is the wheel on its straight track, where
    # ridesim.assess.friction gives mu = |slope| = tan(beta). On the hub the pressure angle
    # beta is the same at every E (|dr/dtheta|/r on both), but the arm has swung by delta
    # from the top, so the contact force leans from the line of centres by gamma with
    # tan(gamma) = (E/rho) tan(delta) (moments about the pivot, as in the drum test). Then
    # mu_hub = |tan(beta -+ gamma)| and, by the mean value theorem,
    # |mu_hub - mu_line| <= sec^2(beta_max + gamma_max) * gamma_max   [derived],
    # which shrinks as 1/E (delta spans one wheel turn, 2 pi / k of the hub).
    wheel = rs.Wheel.polygon(sides=6, apothem=0.1)
    line = rs.track_for(wheel)
    m = 1.5
    th = np.linspace(0.013, 2 * math.pi - 0.013, 301)
    th = th[np.abs(np.mod(th - 0.5 * math.pi, math.pi / 3) - math.pi / 6) < math.pi / 6 - 1e-3]
    cl = contact_loads(line, line.axle_x(th), speed_m_s=0.0, wheel_load_N=0.0,
                       wheel_mass=MassProperties(m, 0.01, (0.0, 0.0), 0.0))
    errs = []
    for k in (100, 1000):
        pair = rs.hub_for(wheel, ratio=k)
        ld = hub_loads(pair, th, mass_kg=m, gravity_m_s2=G)
        delta = np.max(np.abs(ld.arm_rad - 0.5 * math.pi))
        rho = pair.hub_radius(th)
        gamma = math.atan(np.max(pair.centre_distance / rho) * math.tan(delta))
        bound = gamma / math.cos(math.pi / 6 + gamma) ** 2
        err = float(np.max(np.abs(ld.mu_required - cl.mu_required)))
        assert err <= bound, (k, err, bound)
        errs.append(err)
    # First order in 1/E: ten times the ratio, a tenth of the error (within 10 %).
    assert 9.0 < errs[0] / errs[1] < 11.0


def test_loss_of_contact_is_reported():
    # Gravity off, no preload: nothing presses the parts together (N = 0 everywhere).
    pair = rs.hub_for(rs.Wheel.circle(0.05), centre_distance=0.15)
    fr = hub_friction(pair, preload_N=0.0, available=0.5)
    assert fr.lift_off and not math.isfinite(fr.peak)

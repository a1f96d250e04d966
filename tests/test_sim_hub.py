"""A simulated elliptical gear pair (pymunk) against the analytic speed ratio.

Identical ellipses about their foci at E = 2a (classical elliptical gears; Litvin et al.,
Noncircular Gears: Design and Generation, 2009): at constant driver speed the driven
speed over the driver's is ``r/(2a - r)``, running from (1 - e)/(1 + e) to
(1 + e)/(1 - e); the driven angle is the transmission function
``ψ = 2 atan(((1 - e)/(1 + e)) tan(φ/2))``.
"""

import math

import numpy as np
import pytest

import ridesim as rs
from ridesim.errors import InputError
from ridesim.sim.hub import run_gear_pair


def test_elliptical_gears_driven_speed_ripple():
    a, b = 0.3, 0.27
    c = math.sqrt(a * a - b * b)
    e = c / a
    pair = rs.hub_for(rs.Wheel.ellipse(semi_axes=(a, b), axle=(c, 0.0)), ratio=1)
    run = run_gear_pair(pair, driver_speed_rad_s=2.0, turns=1.0, load_torque_Nm=0.5)
    assert run.theta_rad[-1] - run.theta_rad[0] == pytest.approx(2 * math.pi, rel=1e-3)
    theta, ratio = run.speed_ratio(window=5)
    # Pointwise within 2 % of the analytic ratio along the whole driver turn.
    np.testing.assert_allclose(ratio, pair.speed_ratio(theta), rtol=0.02)
    # The ripple's extremes within 2 % of the closed form.
    assert ratio.min() == pytest.approx((1 - e) / (1 + e), rel=0.02)
    assert ratio.max() == pytest.approx((1 + e) / (1 - e), rel=0.02)
    # The driven member stays in phase: within 0.01 rad of the transmission function.
    phi = run.theta_rad - 0.5 * math.pi
    k = np.round(phi / (2 * math.pi))
    exact = 2 * np.arctan((1 - e) / (1 + e) * np.tan((phi - 2 * math.pi * k) / 2)) + 2 * math.pi * k
    assert np.max(np.abs(run.psi_rad - exact)) < 0.01
    # The pivots stay at the centre distance (the carriage rides on the contact).
    assert np.max(np.abs(run.centre_distance_m - 2 * a)) < 1e-3 * a


def test_gear_pair_refuses_a_ring():
    pair = rs.hub_for(rs.Wheel.circle(radius=0.2), ratio=2, side="inside")
    with pytest.raises(InputError):
        run_gear_pair(pair)


@pytest.mark.parametrize("side", ["outside", "inside"])
def test_carousel_arm_follows_the_hub_angle(side):
    """Hub fixed, wheel on an arm about its centre: rolling without slip turns the arm to
    ``π/2 - ψ(θ)`` around a hub and ``ψ(θ) - π/2`` inside a ring, with ψ the pitch-curve
    integral ∫ r/(E ∓ r) dθ (Litvin & Fuentes 2004), and keeps the axle at E. Around the
    hub: the elliptical pair, whose ψ is the transmission function
    2 atan(((1-e)/(1+e)) tan(φ/2)) (Litvin et al. 2009)."""
    from ridesim.sim.hub import run_carousel

    if side == "outside":
        a, b = 0.3, 0.27
        c = math.sqrt(a * a - b * b)
        e = c / a
        pair = rs.hub_for(rs.Wheel.ellipse(semi_axes=(a, b), axle=(c, 0.0)), ratio=1)
    else:
        pair = rs.hub_for(rs.Wheel.polar("0.3 + 0.03*cos(2*phi)"), ratio=1.5, side="inside")
    run = run_carousel(pair, turns=1.0)
    assert run.theta_rad[-1] - run.theta_rad[0] == pytest.approx(2 * math.pi, rel=1e-3)
    if side == "outside":
        phi = run.theta_rad - 0.5 * math.pi
        k = np.round(phi / (2 * math.pi))
        psi = 2 * np.arctan((1 - e) / (1 + e) * np.tan((phi - 2 * math.pi * k) / 2)) + 2 * math.pi * k
        expected = 0.5 * math.pi - psi
    else:
        expected = pair.hub_angle(run.theta_rad) - 0.5 * math.pi
    assert np.max(np.abs(run.arm_rad - expected)) < 0.01
    assert np.max(np.abs(run.axle_radius_m - pair.centre_distance)) < 2e-3 * pair.centre_distance

"""Tests of the contact force balance and friction demand (ridesim.assess.friction).

Sources: L. Hall & S. Wagon, "Roads and Wheels", Mathematics Magazine 65(5), 1992 (polygon
roads are catenary arches); Newton's laws for a rigid body in the plane (e.g. Meriam &
Kraige, "Engineering Mechanics: Dynamics" [memory]); the Kepler relations of the ellipse,
r = a (1 - e cos E) and dtheta/dE = b / r with E the eccentric anomaly (e.g. Murray &
Dermott, "Solar System Dynamics", 1999 [memory]).
"""

import math

import numpy as np
import pytest

import ridesim as rs
from ridesim.assess.friction import contact_loads, cycle_nodes, friction_demand
from ridesim.errors import InputError
from ridesim.model.wheel import MassProperties

G = 9.80665


@pytest.mark.parametrize("n", [3, 4, 5, 6, 7, 8])
def test_regular_polygon_peak_is_tan_pi_over_n(n):
    """Steady speed, centre of mass on the axle: mu_required = |dy/dx| = tan(phi).

    The contact force is vertical (the axle carries the load straight down, nothing pushes
    sideways) while the track slopes by phi, so the surface must supply mu >= tan(phi),
    as for a block resting on an incline. On the n-gon's road y = -a cosh(x/a) the slope
    is -sinh(x/a); it is steepest at the cut-off x = a asinh(tan(pi/n)) (Hall & Wagon
    1992), where |sinh(asinh(tan(pi/n)))| = tan(pi/n).
    """
    a = 0.3
    pair = rs.track_for(rs.Wheel.polygon(sides=n, apothem=a))
    res = friction_demand(pair, available=0.9)
    # The one-sided cusp nodes sit 1e-10 L inside the arch: slope error ~1e-10 / a.
    np.testing.assert_allclose(res.peak, math.tan(math.pi / n), rtol=1e-8)
    cusp_x = np.array([c.x_m for c in pair.cusps])
    L = pair.revolution_length
    d = np.abs((res.at_x_m - cusp_x + 0.5 * L) % L - 0.5 * L)
    assert d.min() <= 1e-9 * L
    assert res.slips == (math.tan(math.pi / n) > 0.9)
    # The mass, the load and the speed do not matter for a centred wheel at steady speed.
    mp = rs.Wheel.polygon(sides=n, apothem=a).mass_properties(0.02, 700.0)
    res2 = friction_demand(pair, speed_m_s=1.3, wheel_mass=mp, wheel_load_N=50.0)
    np.testing.assert_allclose(res2.peak, res.peak, rtol=1e-12)


@pytest.mark.parametrize("n, rho", [(4, 0.006), (4, 0.03), (6, 0.01)])
def test_rounded_corners_lower_the_peak_to_the_end_of_the_flat(n, rho):
    """With the corners rounded to rho (faces kept at the apothem a), a flat ends where its
    slope is tan(u_e) = (a - rho) tan(pi/n) / a, and the corner's arc turns the slope back to
    level in the valley (derived; the flats are Hall & Wagon's arches), so the steepest
    contact, and the friction a steady ride needs, is (1 - rho/a) tan(pi/n)."""
    a = 0.3
    pair = rs.track_for(rs.Wheel.polygon(sides=n, apothem=a, corner_radius=rho))
    res = friction_demand(pair, available=0.9)
    np.testing.assert_allclose(res.peak, (1 - rho / a) * math.tan(math.pi / n), rtol=1e-6)


def test_ellipse_about_focus_peak():
    """Ellipse about a focus: the road is y = -a + c cos(x/b), so mu peaks at c/b.

    With E the eccentric anomaly, r = a(1 - e cos E) and dtheta/dE = b/r (Kepler relations),
    so x = int r dtheta = b E and r(x) = a - c cos(x/b), c = a e (the road is a sinusoid,
    Hall & Wagon 1992). Its steepest slope is c/b.
    """
    a, b = 0.05, 0.04
    c = math.sqrt(a * a - b * b)
    pair = rs.track_for(rs.Wheel.ellipse((a, b), axle=(c, 0.0)))
    x = np.linspace(0.0, pair.revolution_length, 101)
    # Chebyshev tables at 1e-13 relative: 1e-12 m is ample.
    np.testing.assert_allclose(pair.track.y(x), -a + c * np.cos(x / b), atol=1e-12)
    res = friction_demand(pair)  # massless wheel: only the slope matters
    np.testing.assert_allclose(res.peak, c / b, rtol=1e-9)


def test_wave_track_peak_is_amplitude_times_wavenumber():
    """Track f = A cos(2 pi x / lambda): steepest slope 2 pi A / lambda (calculus)."""
    A, lam = 0.02, 0.3
    pair = rs.wheel_for(rs.Track.wave(A, lam), lobes=3)
    res = friction_demand(pair)
    # Even periodic grid of 2048 nodes: the peak is missed by at most 1 - cos(pi/683).
    np.testing.assert_allclose(res.peak, 2 * math.pi * A / lam, rtol=2e-5)


def test_accelerating_on_flat_track_driven_and_free():
    """Newton on a flat road (circle on its flat track, slope 0).

    Driven wheel pushing a mass M at acceleration a_x: the contact must push (m + M) a_x
    forwards while carrying W + m g, so mu = (m + M) a_x / (W + m g).
    Free (towed) wheel: only its spin-up needs friction, I alpha = R F with alpha = a_x/R,
    so mu = I a_x / (R^2 (W + m g)) (rolling without slip, e.g. Halliday, Resnick &
    Walker, "Fundamentals of Physics" [memory]).
    """
    R, m, J, M, W, ax = 0.1, 2.0, 0.01, 30.0, 100.0, 1.5
    pair = rs.track_for(rs.Wheel.circle(R))
    mp = MassProperties(mass_kg=m, inertia_kg_m2=J, com_m=(0.0, 0.0), area_m2=math.pi * R * R)
    drv = friction_demand(pair, speed_m_s=0.7, accel_m_s2=ax, wheel_mass=mp, wheel_load_N=W,
                          pushed_mass_kg=M)
    # The solved flat track carries slope noise |s| < 1e-10 (table derivative); mu then errs
    # by about |s| F_y / F_x relative: < 1e-8 for both cases here.
    np.testing.assert_allclose(drv.mu, (m + M) * ax / (W + m * G), rtol=1e-8)
    free = friction_demand(pair, speed_m_s=0.7, accel_m_s2=ax, wheel_mass=mp, wheel_load_N=W,
                           driven=False)
    np.testing.assert_allclose(free.mu, J * ax / (R * R * (W + m * G)), rtol=1e-8)
    cl = contact_loads(pair, np.array([0.3]), speed_m_s=0.7, accel_m_s2=ax, wheel_mass=mp,
                       wheel_load_N=W, pushed_mass_kg=M)
    # Shaft torque: traction force times radius plus spin-up, T = R (m + M) a + I a / R.
    np.testing.assert_allclose(cl.torque_Nm, R * (m + M) * ax + J * ax / R, rtol=1e-10)


def test_free_wheel_rolling_resistance():
    """A towed wheel on a flat road: the road pushes back C_rr N (textbook rolling resistance).

    Gillespie, "Fundamentals of Vehicle Dynamics", SAE, 1992 [memory]: F_rr = C_rr N.
    """
    R, W, crr = 0.1, 200.0, 0.015
    pair = rs.track_for(rs.Wheel.circle(R))
    cl = contact_loads(pair, np.array([0.0, 0.2]), speed_m_s=1.0, wheel_load_N=W, driven=False,
                       rolling_resistance=crr)
    # slope noise |s| < 1e-10 on the solved flat track: errors ~ |s| / crr relative
    np.testing.assert_allclose(cl.normal_N, W, rtol=1e-10)
    np.testing.assert_allclose(cl.force_x_N, -crr * W, rtol=1e-10)
    np.testing.assert_allclose(cl.axle_force_x_N, crr * W, rtol=1e-10)
    np.testing.assert_allclose(cl.mu_required, crr, rtol=1e-8)


def test_eccentric_wheel_lifts_off_at_the_centripetal_limit():
    """A circle turning about an off-centre axle (offset e): an unbalanced rotor.

    With the centre of mass straight above the axle the contact is at the least radius
    R - e with slope 0, and the centre of mass pulls up by m e omega^2 (centripetal force,
    omega = v / (R - e)); the wheel unloads when m e omega^2 = W + m g.
    """
    R, e, m, W = 0.1, 0.03, 1.0, 5.0
    pair = rs.track_for(rs.Wheel.circle(R, axle=(0.0, -e)))  # centre above the axle
    mp = MassProperties(mass_kg=m, inertia_kg_m2=m * (R * R / 2 + e * e), com_m=(0.0, e),
                        area_m2=math.pi * R * R)
    v_lift = (R - e) * math.sqrt((W + m * G) / (m * e))
    lo = friction_demand(pair, speed_m_s=0.98 * v_lift, wheel_mass=mp, wheel_load_N=W)
    hi = friction_demand(pair, speed_m_s=1.02 * v_lift, wheel_mass=mp, wheel_load_N=W)
    assert not lo.lift_off and hi.lift_off
    assert math.isinf(hi.peak)
    # At x = 0 (least radius down, centre of mass up) the normal load is W + m g - m e w^2.
    v = 0.5 * v_lift
    cl = contact_loads(pair, np.array([0.0]), speed_m_s=v, wheel_mass=mp, wheel_load_N=W)
    np.testing.assert_allclose(cl.normal_N, W + m * G - m * e * (v / (R - e)) ** 2, rtol=1e-9)


def test_cycle_nodes_integrate_exactly():
    """Weights sum to the revolution length; the wheel turns 2 pi: int dx / r = 2 pi."""
    for pair in (rs.track_for(rs.Wheel.polygon(sides=5, apothem=0.2)),
                 rs.track_for(rs.Wheel.ellipse((0.05, 0.04), axle=(0.03, 0.0)))):
        x, w = cycle_nodes(pair, 1024, offsets_m=(0.0, 0.0731))
        assert np.all(np.diff(x) >= 0)
        np.testing.assert_allclose(w.sum(), pair.revolution_length, rtol=1e-13)
        # 16-point Gauss panels between cusps; smooth integrand: 1e-10 is generous.
        np.testing.assert_allclose(np.dot(w, 1.0 / pair.contact_radius(x)), 2 * math.pi, rtol=1e-10)


def test_bad_inputs():
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=0.3))
    with pytest.raises(InputError, match="speed_m_s"):
        friction_demand(pair, speed_m_s=-1.0)
    with pytest.raises(InputError, match="rolling_resistance"):
        friction_demand(pair, rolling_resistance=-0.1)
    with pytest.raises(InputError, match="wheel_mass"):
        friction_demand(pair, wheel_mass=3.0)
    with pytest.raises(InputError, match="available"):
        friction_demand(pair, available=0.0)

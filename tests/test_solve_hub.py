"""Tests of rolling around a hub (ridesim.solve.hub) against closed forms.

The axle stays at the centre distance E from the hub's centre and the contact lies on
the line of centres: outside ``r + ρ = E``, inside a ring ``ρ - r = E``, and
``r dθ = ρ dψ``; these are the pitch-curve relations of non-circular gears (Litvin &
Fuentes, Gear Geometry and Applied Theory, 2nd ed., 2004; Litvin, Fuentes-Aznar,
Gonzalez-Perez & Hayasaka, Noncircular Gears: Design and Generation, 2009). The
wheel's contact is on its ray at frame angle ``θ - π/2`` and the hub's at ``π/2 - ψ``
(outside) or ``ψ - π/2`` (inside).
"""

import math

import numpy as np
import pytest
from scipy.integrate import quad

import ridesim as rs
from ridesim.errors import ClosureError, GeometryError, InputError

TWO_PI = 2.0 * math.pi
HALF_PI = 0.5 * math.pi


# ------------------------------------------------------------------ elliptical gears


@pytest.mark.parametrize("b", [0.28, 0.2, 0.1])
def test_identical_ellipses_about_their_foci(b):
    """Two identical ellipses turning about their foci at E = 2a roll on each other.

    Classical elliptical gears (Litvin et al., Noncircular Gears, 2009): about its focus an
    ellipse is ``r = a(1 - e²)/(1 + e cos φ)`` with φ from the near vertex, and
    ``2a - r`` is the other focal radius, so the congruent ellipse meshes at E = 2a. Here
    φ = θ - π/2, so ``r = a(1-e²)/(1 + e sin θ)``, and the hub's greatest radius a + c is
    in contact (at hub-frame angle π/2) when ψ = 0: ``ρ(φ_h) = a(1-e²)/(1 - e sin φ_h)``.
    The speed ratio ``dψ/dθ = r/(2a - r) = (1-e²)/(1 + e² + 2e cos φ)`` runs from
    (1-e)/(1+e) (φ = 0) to (1+e)/(1-e) (φ = π), and integrates to the transmission
    function ``ψ = 2 atan(((1-e)/(1+e)) tan(φ/2))`` [derived from ∫ dφ/(A + B cos φ)].
    """
    a = 0.3
    c = math.sqrt(a * a - b * b)
    e = c / a
    w = rs.Wheel.ellipse(semi_axes=(a, b), axle=(c, 0.0))
    pair = rs.hub_for(w, ratio=1)
    np.testing.assert_allclose(pair.centre_distance, 2 * a, rtol=1e-12)
    assert pair.closed and abs(pair.closure_gap_rad) < 1e-9
    assert pair.ratio == pytest.approx(1.0, rel=1e-12)
    phi_h = np.linspace(0.0, TWO_PI, 361)
    np.testing.assert_allclose(pair.hub.radius(phi_h), a * (1 - e * e) / (1 - e * np.sin(phi_h)),
                               rtol=1e-11)
    theta = np.linspace(-3.0, 3.0, 601) + HALF_PI  # |φ| < π: one branch of tan(φ/2)
    phi = theta - HALF_PI
    np.testing.assert_allclose(pair.hub_angle(theta),
                               2 * np.arctan((1 - e) / (1 + e) * np.tan(phi / 2)), atol=1e-11)
    lo, hi = (1 - e) / (1 + e), (1 + e) / (1 - e)
    np.testing.assert_allclose(pair.speed_ratio(np.array([HALF_PI, 1.5 * math.pi])), [lo, hi],
                               rtol=1e-12)
    sr = pair.speed_ratio(np.linspace(0.0, TWO_PI, 2001))
    assert sr.min() >= lo * (1 - 1e-12) and sr.max() <= hi * (1 + 1e-12)
    # Inverse: the wheel for the elliptical hub is the same ellipse (greatest radius in
    # contact at θ = 0, where the hub's least radius is).
    inv = rs.wheel_for_hub(w, lobes=1)
    np.testing.assert_allclose(inv.centre_distance, 2 * a, rtol=1e-12)
    np.testing.assert_allclose(inv.wheel.radius(phi_h), a * (1 - e * e) / (1 + e * np.sin(phi_h)),
                               rtol=1e-11)


# ------------------------------------------------------------------ circles


@pytest.mark.parametrize("R, rho0", [(0.2, 0.6), (0.25, 0.1), (0.3, 0.3)])
def test_circle_around_a_circular_hub(R, rho0):
    """A centred circle of radius R around a circular hub of radius ρ0: E = R + ρ0, and the
    wheel turns ρ0/R times per hub turn (equal arcs: R θ = ρ0 ψ). Inside a ring of radius
    ρ0 > R: E = ρ0 - R, same ratio (friction wheels; any machine-design text)."""
    w = rs.Wheel.circle(radius=R)
    out = rs.hub_for(w, ratio=rho0 / R)
    np.testing.assert_allclose(out.centre_distance, R + rho0, rtol=1e-13)
    np.testing.assert_allclose(out.hub.radius(np.linspace(0, 6, 7)), rho0, rtol=1e-13)
    by_e = rs.hub_for(w, centre_distance=R + rho0)
    np.testing.assert_allclose(by_e.ratio, rho0 / R, rtol=1e-13)
    np.testing.assert_allclose(by_e.hub_angle(np.array([0.7, 2.0])), np.array([0.7, 2.0]) * R / rho0,
                               rtol=1e-13)
    gap, _ = out.outline_gap(n_poses=8, n_points=360)
    assert abs(gap) < 1e-12 * (R + rho0)  # touching at the contact, clear elsewhere
    if rho0 > R:
        ring = rs.hub_for(w, ratio=rho0 / R, side="inside")
        np.testing.assert_allclose(ring.centre_distance, rho0 - R, rtol=1e-13)
        np.testing.assert_allclose(ring.hub.radius(np.linspace(0, 6, 7)), rho0, rtol=1e-13)
        assert abs(ring.outline_gap(n_poses=8, n_points=360)[0]) < 1e-12


# ------------------------------------------------------------------ straight edges, exact


@pytest.mark.parametrize("side", ["outside", "inside"])
def test_polygon_hub_angle_against_quadrature(side):
    """The closed-form hub angle of a straight-edged wheel matches ``∫ r/(E ∓ r) dθ`` by
    scipy's adaptive quadrature, and the inverse map returns the wheel angle."""
    w = rs.Wheel.polygon_from_vertices([(0.3, -0.2), (0.1, 0.35), (-0.25, 0.1), (-0.2, -0.3)],
                                       axle=(0.02, 0.01))
    E = 0.9 if side == "outside" else 0.5
    pair = rs.hub_for(w, centre_distance=E, side=side)
    sign = -1.0 if side == "outside" else 1.0
    th0 = float(pair.wheel_angle(0.0))

    def rate(t):
        r = float(w.radius(t - HALF_PI))
        return r / (E + sign * r)

    kinks = sorted((k + HALF_PI - th0) % TWO_PI + th0 for k in w.kinks)
    for t_end in (th0 + 1.0, th0 + 3.3, th0 + 5.9):
        pts = [k for k in kinks if th0 < k < t_end]
        ref = quad(rate, th0, t_end, points=pts or None, epsabs=1e-14, epsrel=1e-13, limit=200)[0]
        np.testing.assert_allclose(pair.hub_angle(t_end), ref, rtol=1e-11)
    theta = np.linspace(-4.0, 9.0, 301)
    np.testing.assert_allclose(pair.wheel_angle(pair.hub_angle(theta)), theta, atol=1e-12)
    total = quad(rate, th0, th0 + TWO_PI, points=[k for k in kinks if k > th0], epsabs=1e-14,
                 epsrel=1e-13, limit=200)[0]
    np.testing.assert_allclose(pair.ratio, TWO_PI / total, rtol=1e-11)


def test_square_hub_contact_radius():
    """Square wheel, ratio 2: the hub has 2 x 4 lobes, and along the roll its radius at the
    contact ray (frame angle π/2 - ψ) is E - r (the line-of-centres relation)."""
    pair = rs.hub_for(rs.Wheel.polygon(sides=4, apothem=0.3), ratio=2)
    assert pair.hub_lobes == 8 and pair.hub.symmetry == 8
    theta = np.linspace(0.0, 2 * TWO_PI, 997)
    psi = pair.hub_angle(theta)
    np.testing.assert_allclose(psi[-1] - psi[0], TWO_PI, rtol=1e-12)  # two wheel turns, one hub turn
    r = pair.wheel_radius(theta)
    np.testing.assert_allclose(pair.hub.radius(HALF_PI - psi), pair.centre_distance - r, rtol=1e-11)
    assert len(pair.hub.kinks) == 8  # one corner of the hub per seat of a wheel corner


def test_hub_extremes_at_its_corners():
    """An irregular wheel's hub is least where the wheel's farthest corner seats: E - max|v|
    (the line-of-centres relation at that corner), found exactly, not at a nearby sample."""
    w = rs.Wheel.polygon_from_vertices([(0.3, -0.2), (0.1, 0.35), (-0.25, 0.1), (-0.2, -0.3)],
                                       axle=(0.02, 0.01))
    pair = rs.hub_for(w, ratio=1)
    far = float(np.max(np.hypot(*np.asarray(w.vertices).T)))
    np.testing.assert_allclose(pair.hub.extremes()[0], pair.centre_distance - far, rtol=1e-13)


# ------------------------------------------------------------------ the straight limit


@pytest.mark.parametrize("n", [3, 4, 6])
def test_straight_limit(n):
    """E -> ∞ recovers the straight track, with first-order error coefficient
    ``tan(π/n)/asinh(tan(π/n))`` in a/E [derived]:

    ``E ψ = ∫ E r/(E - r) dθ = ∫ r dθ + (1/E) ∫ r² dθ + O(1/E²)``, and over a revolution
    ``∫ r dθ = L = 2 n a asinh(tan(π/n))`` (the catenary track, Hall & Wagon 1992) while
    ``∫ r² dθ = 2 × area = 2 n a² tan(π/n)``. Hence ``E Ψ / L - 1 = (a/E) tan(π/n) /
    asinh(tan(π/n)) + O((a/E)²)``: the error coefficient converges with error ∝ a/E.
    """
    a = 0.3
    w = rs.Wheel.polygon(sides=n, apothem=a)
    L = 2 * n * a * math.asinh(math.tan(math.pi / n))
    c0 = math.tan(math.pi / n) / math.asinh(math.tan(math.pi / n))

    def rel(E):
        pair = rs.hub_for(w, centre_distance=E)
        return E * (TWO_PI / pair.ratio) / L - 1.0

    r6 = rel(1e6 * a)
    assert 0 < r6 < 1e-5
    np.testing.assert_allclose(r6 * 1e6, c0, rtol=1e-5)
    d3 = rel(1e3 * a) * 1e3 - c0
    d4 = rel(1e4 * a) * 1e4 - c0
    assert 0 < d3 < 0.02  # the next term, (1/E²) ∫ r³ dθ, is positive
    assert d4 / d3 == pytest.approx(0.1, abs=0.005)  # the coefficient's error shrinks ∝ a/E

    # Unrolled hub (x = E ψ, y = ρ - E) against the catenary track, at E = 1e6 a.
    E = 1e6 * a
    pair = rs.hub_for(w, centre_distance=E)
    line = rs.track_for(w)
    theta = float(line.wheel_angle(0.0)) + np.linspace(0.0, TWO_PI, 2001)
    x = E * pair.hub_angle(theta)
    y = pair.hub_radius(theta) - E
    np.testing.assert_allclose(x, line.axle_x(theta), rtol=0, atol=1e-5 * L)
    np.testing.assert_allclose(y, line.track.y(x), rtol=1e-5)  # relative to the track's depth


# ------------------------------------------------------------------ gears for a ratio


def test_ratio_formula_closes_and_reproduces():
    """R(θ) = 1 + 0.3 cos θ: mean 1, so the driven gear turns once per driver turn; the pair
    reproduces R and its integral ψ = θ + 0.3 sin θ (closed form), and the pitch radii are
    r = E R/(1 + R), ρ = E/(1 + R) (the classical inverse problem; Litvin et al. 2009)."""
    E = 0.8
    pair = rs.gears_for_ratio("1 + 0.3*cos(theta)", centre_distance=E)
    assert pair.closed and abs(pair.closure_gap_rad) < 1e-9
    theta = np.linspace(-2.0, 2 * TWO_PI, 1201)
    R = 1 + 0.3 * np.cos(theta)
    np.testing.assert_allclose(pair.speed_ratio(theta), R, rtol=1e-9)
    psi = pair.hub_angle(theta) - pair.hub_angle(0.0)
    np.testing.assert_allclose(psi, theta + 0.3 * np.sin(theta), atol=1e-9)
    np.testing.assert_allclose(pair.wheel_radius(theta), E * R / (1 + R), rtol=1e-12)
    np.testing.assert_allclose(pair.hub.radius(HALF_PI - pair.hub_angle(theta)), E / (1 + R), rtol=1e-9)


def test_ratio_with_two_lobes_and_a_table():
    """R = 0.5 + 0.1 cos 2θ has mean 1/2 and period π: the driver (symmetry 2) turns twice per
    driven turn. A table of the same R (256 rows, periodic cubic spline, error O(h⁴))
    gives the same pair."""
    pair = rs.gears_for_ratio("0.5 + 0.1*cos(2*theta)", centre_distance=0.6)
    assert pair.ratio == pytest.approx(2.0, rel=1e-12)
    th = np.linspace(0.0, TWO_PI, 256, endpoint=False)
    tab = rs.gears_for_ratio(np.column_stack([th, 0.5 + 0.1 * np.cos(2 * th)]), centre_distance=0.6)
    theta = np.linspace(0.0, TWO_PI, 500)
    np.testing.assert_allclose(tab.speed_ratio(theta), 0.5 + 0.1 * np.cos(2 * theta), rtol=1e-8)
    np.testing.assert_allclose(pair.speed_ratio(theta), 0.5 + 0.1 * np.cos(2 * theta), rtol=1e-9)
    ring = rs.gears_for_ratio("0.5 + 0.1*cos(2*theta)", centre_distance=0.2, side="inside")
    np.testing.assert_allclose(ring.speed_ratio(theta), 0.5 + 0.1 * np.cos(2 * theta), rtol=1e-9)
    np.testing.assert_allclose(ring.hub_radius(theta) - ring.wheel_radius(theta), 0.2, rtol=1e-12)


# ------------------------------------------------------------------ bad input


def _one_line(excinfo):
    msg = str(excinfo.value)
    assert "\n" not in msg and len(msg) < 300
    return msg


def test_wheel_radius_reaching_the_centre_distance():
    with pytest.raises(GeometryError) as ex:
        rs.hub_for(rs.Wheel.polygon(sides=4, apothem=0.3), centre_distance=0.3 * math.sqrt(2))
    assert "centre_distance" in _one_line(ex) and "no hub" in str(ex.value)


def test_self_crossing_ratio():
    with pytest.raises(GeometryError) as ex:
        rs.gears_for_ratio("0.5 + cos(theta)", centre_distance=1.0)
    assert "self-crossing" in _one_line(ex)


def test_ring_that_does_not_contain_the_wheel():
    with pytest.raises(GeometryError) as ex:  # a triangle's corners poke out of its ring
        rs.hub_for(rs.Wheel.polygon(sides=3, apothem=0.3), ratio=2, side="inside")
    assert "does not contain" in _one_line(ex)
    with pytest.raises(GeometryError) as ex:  # a ring turning faster than its wheel
        rs.hub_for(rs.Wheel.circle(radius=0.3), ratio=0.5, side="inside")
    assert "ratio" in _one_line(ex)


def test_other_bad_input():
    w = rs.Wheel.polar("0.3 + 0.05*cos(phi)")
    with pytest.raises(InputError) as ex:
        rs.hub_for(w, ratio=1.5)  # symmetry 1: the hub closes only for whole ratios
    assert "whole" in _one_line(ex)
    with pytest.raises(ClosureError) as ex:
        rs.gears_for_ratio("1.1 + 0.3*cos(theta)", centre_distance=1.0)
    assert "does not close" in _one_line(ex)
    with pytest.raises(ClosureError):
        _ = rs.hub_for(w, centre_distance=0.9).hub  # an open hub says so when used
    with pytest.raises(InputError):
        rs.hub_for(w, ratio=1, centre_distance=1.0)
    with pytest.raises(InputError):
        rs.hub_for(w, side="around")


def test_wheel_for_hub_recovers_the_square():
    """The hub of a square wheel (ratio 2, 8 lobes) gives the square back with 4 hub periods
    per wheel turn: least radius the apothem a, greatest a√2 (the corners), same E."""
    sq = rs.hub_for(rs.Wheel.polygon(sides=4, apothem=0.3), ratio=2)
    back = rs.wheel_for_hub(sq.hub, lobes=4)
    np.testing.assert_allclose(back.centre_distance, sq.centre_distance, rtol=1e-10)
    rmin, rmax, _ = back.wheel.extremes()
    np.testing.assert_allclose([rmin, rmax], [0.3, 0.3 * math.sqrt(2)], rtol=1e-9)
    assert back.wheel.symmetry == 4 and back.ratio == pytest.approx(2.0, rel=1e-12)

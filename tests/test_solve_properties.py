"""Property tests of the rolling relations for random wheels (forward and inverse solves).

For every star-shaped wheel the rolling pair must satisfy the no-slip relations
``y = -r(θ - pi/2)`` and ``dx/dθ = r`` (Hall & Wagon, "Roads and Wheels", Mathematics
Magazine 65(5):283-301, 1992), repeat with its period and revolution, and the inverse
solve of its track must return the wheel. These hold whatever the shape, so they are
checked on random ones (hypothesis) as well as on one wheel of each family.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import ridesim as rs

TWO_PI = 2.0 * math.pi
HALF_PI = 0.5 * math.pi
SETTINGS = settings(max_examples=25, deadline=None)


# ----------------------------------------------------------------------- random wheels


@st.composite
def star_polygons(draw):
    """Polygon with 5-12 vertices at random radii in [0.5, 1.5]*scale and random angle gaps.

    Gaps are weights in [1, 3] normalised to 2 pi, so with at least 5 vertices each is below
    3/(3 + 4) * 2 pi < pi: every edge is seen from the axle (the origin) and the polygon is
    star-shaped about it.
    """
    n = draw(st.integers(5, 12))
    scale = draw(st.sampled_from([0.01, 0.3, 2.0]))
    radii = np.array(draw(st.lists(st.floats(0.5, 1.5), min_size=n, max_size=n))) * scale
    gaps = np.array(draw(st.lists(st.floats(1.0, 3.0), min_size=n, max_size=n)))
    start = draw(st.floats(0.0, TWO_PI))
    ang = start + np.concatenate(([0.0], np.cumsum(gaps[:-1]))) * TWO_PI / gaps.sum()
    return rs.Wheel.polygon_from_vertices(np.column_stack([radii * np.cos(ang), radii * np.sin(ang)]))


@st.composite
def convex_polygons_with_inner_axle(draw):
    """Convex polygon (points on an ellipse) with the axle a random interior convex combination."""
    n = draw(st.integers(3, 10))
    a = draw(st.floats(0.05, 0.5))
    b = a * draw(st.floats(0.3, 1.0))
    gaps = np.array(draw(st.lists(st.floats(1.0, 3.0), min_size=n, max_size=n)))
    if n == 3:
        gaps = np.minimum(gaps, 1.9)  # keep every gap below pi for a triangle
    ang = np.concatenate(([0.0], np.cumsum(gaps[:-1]))) * TWO_PI / gaps.sum()
    v = np.column_stack([a * np.cos(ang), b * np.sin(ang)])
    weights = np.array(draw(st.lists(st.floats(0.1, 1.0), min_size=n, max_size=n)))
    axle = weights @ v / weights.sum()
    return rs.Wheel.polygon_from_vertices(v, axle=axle)


@st.composite
def smooth_polar_wheels(draw):
    """``r = r0 (1 + sum c_k cos(k phi + p_k))`` with sum |c_k| <= 0.4, k = 1..3: positive, smooth.

    One coefficient is at least 0.005 so the wheel is not round; the round wheel (flat
    track) has its own test in test_solve_inverse.
    """
    r0 = draw(st.sampled_from([0.05, 0.3, 1.0]))
    cs = np.array(draw(st.lists(st.floats(0.0, 0.4 / 3), min_size=3, max_size=3)))
    cs[draw(st.integers(0, 2))] = draw(st.floats(0.005, 0.4 / 3))
    ps = draw(st.lists(st.floats(0.0, TWO_PI), min_size=3, max_size=3))
    terms = " + ".join(f"{float(c)!r}*cos({k}*phi + {float(p)!r})"
                       for k, (c, p) in enumerate(zip(cs, ps, strict=True), 1))
    return rs.Wheel.polar(f"{r0!r}*(1 + {terms})")


def check_round_trip(w):
    """Forward then inverse solve returns the wheel; and the pair's basic invariants."""
    fwd = rs.track_for(w)
    rmin, rmax, _ = w.extremes()
    L = fwd.revolution_length
    x = np.linspace(-0.5 * L, 1.5 * L, 2001)
    # The track lies below the axle line, between -rmax and -rmin.
    y = fwd.track.y(x)
    assert np.all(y < 0)
    assert np.all(y >= -rmax * (1 + 1e-10)) and np.all(y <= -rmin * (1 - 1e-10))  # table noise, as below
    # The wheel turns one way as it rolls.
    th = fwd.wheel_angle(x)
    assert np.all(np.diff(th) > 0)
    # axle_x undoes wheel_angle (tables at 1e-13; 1e-12 of the revolution).
    np.testing.assert_allclose(fwd.axle_x(th), x, rtol=0, atol=1e-12 * L)
    # The inverse solve of the track returns the wheel, rotated by the pose at x = 0
    # (see test_solve_inverse.test_inverse_of_the_forward_track_is_the_wheel): 1e-8.
    inv = rs.wheel_for(fwd.track, lobes=fwd.lobes)
    assert abs(inv.depth) <= 1e-10 * rmax
    th0 = float(fwd.wheel_angle(np.array([0.0]))[0])
    psi = np.linspace(0.0, TWO_PI, 2001)
    np.testing.assert_allclose(inv.wheel.radius(psi), w.radius(psi + th0), rtol=1e-8)


@SETTINGS
@given(star_polygons())
def test_random_star_polygon_round_trip(w):
    check_round_trip(w)


@SETTINGS
@given(convex_polygons_with_inner_axle())
def test_random_convex_polygon_with_random_axle_round_trip(w):
    check_round_trip(w)


@SETTINGS
@given(smooth_polar_wheels())
def test_random_smooth_polar_wheel_round_trip(w):
    check_round_trip(w)


# --------------------------------------------------- periodicity and no-slip, every family

FAMILY = {
    "square": rs.Wheel.polygon(sides=4, apothem=0.3),
    "hexagon-off-axle": rs.Wheel.polygon(sides=6, apothem=0.12, axle=(0.02, -0.03)),
    "outline": rs.Wheel.outline([(0, 0), (0.3, 0.05), (0.35, 0.25), (0.1, 0.4), (-0.1, 0.2)],
                                axle=(0.1, 0.15)),
    "ellipse-centred": rs.Wheel.ellipse(semi_axes=(0.05, 0.04)),
    "ellipse-focus": rs.Wheel.ellipse(semi_axes=(0.05, 0.04), axle=(0.03, 0.0)),
    "ellipse-off-centre": rs.Wheel.ellipse(semi_axes=(0.3, 0.1), axle=(0.1, 0.03)),
    "circle-off-centre": rs.Wheel.circle(radius=0.2, axle=(0.05, 0.02)),
    "polar-trefoil": rs.Wheel.polar("0.3 + 0.05*cos(3*phi)"),
}


@pytest.mark.parametrize("name", list(FAMILY))
def test_track_and_wheel_angle_repeat(name):
    w = FAMILY[name]
    pair = rs.track_for(w)
    P, L = pair.track.period, pair.revolution_length
    np.testing.assert_allclose(P * pair.lobes, L, rtol=1e-12)
    x = np.linspace(-1.3 * L, 2.1 * L, 3001)
    scale = w.extremes()[1]
    # y(x) = -r(θ(x)) reads the x -> θ table (its own cells, refined to a 1e-13 Chebyshev
    # tail); shifting by a period reads another part of it, and wrapping x several revolutions
    # out costs a few ulps of x (times the slope). Allow 1e-11 of the size.
    for m in (1, 2, -1, pair.lobes):
        np.testing.assert_allclose(pair.track.y(x + m * P), pair.track.y(x), rtol=0, atol=1e-11 * scale)
    # One revolution of travel is one full turn.
    np.testing.assert_allclose(pair.wheel_angle(x + L) - pair.wheel_angle(x), TWO_PI, rtol=0, atol=1e-12)
    np.testing.assert_allclose(pair.wheel_angle(x + 3 * L) - pair.wheel_angle(x), 3 * TWO_PI,
                               rtol=0, atol=1e-11)


@pytest.mark.parametrize("name", list(FAMILY))
def test_contact_is_straight_below_the_axle(name):
    # y = -r(θ - pi/2): the rim point at wheel angle θ - pi/2 is the one in contact. Same
    # table argument as above: 1e-11 relative.
    w = FAMILY[name]
    pair = rs.track_for(w)
    th = float(pair.wheel_angle(np.array([0.0]))[0]) + np.linspace(-4.0, 11.0, 3001)
    np.testing.assert_allclose(pair.track.y(pair.axle_x(th)), -w.radius(th - HALF_PI), rtol=1e-11)
    np.testing.assert_allclose(pair.contact_radius(pair.axle_x(th)), w.radius(th - HALF_PI), rtol=1e-11)


@pytest.mark.parametrize("name", list(FAMILY))
def test_no_slip_dx_dtheta_equals_the_contact_radius(name):
    """Finite-difference check of ``dx/dθ = r`` (rolling without slip, Hall & Wagon 1992).

    Central difference of axle_x in θ with h = 1e-5 rad: truncation h^2 r''/6 ~ 1e-10 r,
    rounding ~ 1e-16 L / h ~ 1e-11 r; 1e-8 relative. Angles within 2h of a rim corner are
    left out (there r has a kink and the difference is only first-order).
    """
    w = FAMILY[name]
    pair = rs.track_for(w)
    h = 1e-5
    th = float(pair.wheel_angle(np.array([0.0]))[0]) + np.linspace(0.0, TWO_PI, 2001)
    corners = np.array(w.kinks) + HALF_PI
    if corners.size:
        dist = np.abs((th[:, None] - corners[None, :] + math.pi) % TWO_PI - math.pi).min(axis=1)
        th = th[dist > 2 * h]
    dxdth = (pair.axle_x(th + h) - pair.axle_x(th - h)) / (2 * h)
    np.testing.assert_allclose(dxdth, -pair.track.y(pair.axle_x(th)), rtol=1e-8)

"""Tests of the whole-outline clearance check and corner seating (ridesim.assess.clearance).

Sources: L. Hall & S. Wagon, "Roads and Wheels", Mathematics Magazine 65(5):283-301, 1992
(regular n-gons roll on catenary arches y = -a cosh(x/a) cut off at x = a asinh(tan(pi/n));
the equilateral triangle fails by interference). Elementary geometry for the rest.
"""

import math

import numpy as np
import pytest

import ridesim as rs
from ridesim.assess.clearance import (
    INTERFERENCE_TOL_REL,
    _PolygonRim,
    clearance,
    cusp_seating,
)
from ridesim.errors import InputError


def regular_pair(n, apothem=0.3):
    return rs.track_for(rs.Wheel.polygon(sides=n, apothem=apothem))


def dense_pose_min(pair, x, per_edge=4000, exclusion=1e-5):
    """Independent brute force: least gap over densely sampled polygon edges at one pose."""
    V = np.array(pair.wheel.vertices)
    W = np.roll(V, -1, axis=0)
    t = np.arange(per_edge) / per_edge
    pts = (V[:, None, :] + t[None, :, None] * (W - V)[:, None, :]).reshape(-1, 2)
    th = float(pair.wheel_angle(np.array([x]))[0])
    c, s = math.cos(th), math.sin(th)
    X = x + pts[:, 0] * c + pts[:, 1] * s
    Y = -pts[:, 0] * s + pts[:, 1] * c
    gap = Y - pair.track.y(X)
    phi = np.arctan2(pts[:, 1], pts[:, 0])
    near = np.abs(np.angle(np.exp(1j * (phi - (th - math.pi / 2))))) < exclusion
    return float(np.min(np.where(near, np.inf, gap)))


# ---------------------------------------------------------------------------
# Regular polygons on their catenary tracks (Hall & Wagon 1992)


def test_triangle_interferes():
    """Hall & Wagon (1992): the equilateral triangle cannot roll on its own road."""
    pair = regular_pair(3)
    res = clearance(pair)
    assert res.interferes
    assert res.min_m < -1e-3 * 0.3  # a gross overlap, not a rounding effect
    assert res.first_interference_x_m is not None
    assert res.intervals_m
    # The worst point is a vertex (the corner digs into the neighbouring arch).
    assert res.feature_vertex is not None
    # A signed Euclidean distance is never larger than the vertical one, same sign.
    assert res.euclid_m < 0 and abs(res.euclid_m) <= abs(res.min_m) * (1 + 1e-12)


@pytest.mark.parametrize("n", [4, 5, 6, 7, 8])
def test_squares_to_octagons_clear(n):
    """Hall & Wagon (1992): squares and up roll on their catenary roads without interference."""
    res = clearance(regular_pair(n))
    assert not res.interferes
    assert res.min_m >= -INTERFERENCE_TOL_REL * 0.3 / math.cos(math.pi / n)
    assert res.first_interference_x_m is None and res.intervals_m == ()


def test_clearance_scales_with_size():
    """Geometric similarity: scaling wheel and track by k scales every gap by k exactly."""
    a, b = clearance(regular_pair(3, 0.3)), clearance(regular_pair(3, 0.2))
    # Both worst values come from the same bounded 1-D refinement; 1e-6 relative covers it.
    np.testing.assert_allclose(b.min_m, a.min_m * 0.2 / 0.3, rtol=1e-6)


@pytest.mark.parametrize("x_frac", [0.05, 0.2, 0.31, 0.45, 0.62, 0.9])
def test_exact_edges_agree_with_dense_sampling(x_frac):
    """The exact per-edge minimum against an independent dense sampling at single poses.

    Samples are points of the edges, so each is an upper bound of the true least gap; the
    gap along an edge is convex on an arch of curvature at most 1/a (catenary y = -a cosh(x/a)
    has curvature 1/(a cosh^2)), so the true least gap lies at most kappa h^2/8 below the
    best sample, h the sample spacing.
    """
    pair = regular_pair(3)
    x = x_frac * pair.revolution_length
    exact = clearance(pair, poses=[x]).min_m
    per_edge = 4000
    h = 2 * 0.3 * math.tan(math.pi / 3) / per_edge
    dense = dense_pose_min(pair, x, per_edge)
    assert exact <= dense + 1e-15
    assert exact >= dense - (1 / 0.3) * h * h / 8 - 1e-15


def test_edge_dipping_into_an_arch_between_its_ends():
    """A straight segment over an arch top is caught in its middle, where its ends are clear.

    On the square's arch y = -a cosh(x/a) (Hall & Wagon 1992), the segment y = y0 + m x has
    the least gap where the slopes match, sinh(x/a) = -m, i.e. x* = -a asinh(m), with gap
    y0 + m x* + a sqrt(1 + m^2) (cosh(asinh m) = sqrt(1 + m^2)).
    """
    a = 0.3
    pair = regular_pair(4, a)
    rim = _PolygonRim(pair)
    x_top = float(rim.xm[np.argmin(np.abs(rim.xm))])
    m = np.array([0.0, 0.05, -0.04])
    y0 = -a - 1e-3
    half = 0.12
    Px = x_top - half + 0 * m
    Qx = x_top + half + 0 * m
    Py = y0 - m * half
    Qy = y0 + m * half
    # Contact ray pointing up (theta = pi): far from the bottom edge used for the angle test.
    e = np.full(3, int(np.argmin(rim.V[:, 1] + np.roll(rim.V[:, 1], -1))))
    gap, t = rim.edge_min(Px, Py, Qx, Qy, np.full(3, math.pi), 1e-5, e)
    xs = -a * np.arcsinh(m)
    expected = y0 + m * xs + a * np.sqrt(1 + m * m)
    np.testing.assert_allclose(gap, expected, rtol=0, atol=1e-15)
    assert np.all(gap < 0)
    # Both ends are well clear of the arch: a vertex-only check would miss the overlap.
    ends = np.minimum(Py + a * np.cosh(-half / a), Qy + a * np.cosh(half / a))
    assert np.all(ends > 0.01)
    np.testing.assert_allclose(Px + t * (Qx - Px) - x_top, xs, atol=1e-12)


# ---------------------------------------------------------------------------
# Continuity under small changes of the wheel


def morphed(base_vertices, eps):
    V = np.array(base_vertices)
    V[0] = V[0] * (1 + eps)  # move vertex 0 outwards by eps of its radius
    return rs.track_for(rs.Wheel.polygon_from_vertices(V))


def test_clearance_is_continuous_for_a_morphed_triangle():
    """Moving one vertex by d moves every outline point and the track by O(d).

    So the least gap changes by O(d) (Lipschitz, constant of order 1), and for a smooth
    worst configuration it is differentiable: doubling a small change doubles the effect.
    """
    V = rs.Wheel.polygon(sides=3, apothem=0.3).vertices
    R = float(np.hypot(*V[0]))
    c0 = clearance(morphed(V, 0.0)).min_m
    c1 = clearance(morphed(V, 1e-5)).min_m
    c2 = clearance(morphed(V, 2e-5)).min_m
    for c, eps in ((c1, 1e-5), (c2, 2e-5)):
        assert abs(c - c0) <= 4.0 * eps * R
    # Linear response: second difference small against the first (10 % covers the
    # 1e-12 L refinement tolerance on a change of ~1e-6 m).
    np.testing.assert_allclose(c2 - c0, 2 * (c1 - c0), rtol=0.1)


def test_clearance_is_continuous_for_a_morphed_square():
    """The square clears by a hair; small vertex moves change the figure by small amounts."""
    V = rs.Wheel.polygon(sides=4, apothem=0.3).vertices
    R = float(np.hypot(*V[0]))
    c0 = clearance(morphed(V, 0.0)).min_m
    for eps in (1e-5, 1e-4, 1e-3):
        c = clearance(morphed(V, eps)).min_m
        assert abs(c - c0) <= 4.0 * eps * R


def test_sharpened_square_corner_digs_in_as_the_seating_angle_predicts():
    """Two independent routes agree: corner geometry and the full-roll clearance.

    Pushing a square's vertex 0 outwards by 1 % makes its corner sharper than 90 deg, so its
    cusp opens by less than a right angle (ideal pair: opening = corner angle); the corner
    comes down along the normal of the side it leaves (the roulette cusp of a rolling
    point meets the base curve at right angles), which then points into the next arch.
    """
    V = rs.Wheel.polygon(sides=4, apothem=0.3).vertices
    pair = morphed(V, 1e-2)
    seat = [s for s in cusp_seating(pair) if s.vertex == 0][0]
    # Interior angle at the moved vertex from plain geometry.
    W = pair.wheel.vertices
    k = int(np.argmax(np.hypot(W[:, 0], W[:, 1])))
    u, w = W[k - 1] - W[k], W[(k + 1) % 4] - W[k]
    angle = math.acos(float(np.dot(u, w) / np.linalg.norm(u) / np.linalg.norm(w)))
    np.testing.assert_allclose(seat.interior_angle_rad, angle, atol=1e-12)
    assert seat.approach_margin_rad < 0
    res = clearance(pair)
    assert res.interferes and res.feature_vertex == 0


# ---------------------------------------------------------------------------
# Corner seating at cusps


@pytest.mark.parametrize("n", [3, 4, 5, 6, 8])
def test_cusp_seating_regular_polygons(n):
    """Interior angle (n-2)pi/n (Euclid); the arches meet at slope tan(pi/n).

    The catenary y = -a cosh(x/a) has slope -sinh(x/a), and at the cut-off x = a asinh(tan(pi/n))
    that is tan(pi/n) in size on both sides, so the cusp opens by pi - 2 pi/n in the air.
    """
    seats = cusp_seating(regular_pair(n))
    assert len(seats) == n
    interior = (n - 2) * math.pi / n
    opening = math.pi - 2 * math.atan(math.tan(math.pi / n))
    for s in seats:
        # one-sided slopes are extrapolated from 1e-7 P away: second order, ~1e-12 rad
        np.testing.assert_allclose(s.interior_angle_rad, interior, atol=1e-12)
        np.testing.assert_allclose(s.opening_angle_rad, opening, atol=1e-9)
        np.testing.assert_allclose(s.margin_rad, 0.0, atol=1e-9)
        np.testing.assert_allclose(s.approach_margin_rad, math.pi / 2 - 2 * math.pi / n, atol=1e-9)
    assert (seats[0].approach_margin_rad < -1e-6) == (n == 3)


def test_no_cusps_on_smooth_tracks():
    assert cusp_seating(rs.track_for(rs.Wheel.ellipse((0.05, 0.04), axle=(0.03, 0.0)))) == []
    assert cusp_seating(rs.wheel_for(rs.Track.wave(0.02, 0.3), lobes=3)) == []


# ---------------------------------------------------------------------------
# Smooth wheels


def test_ellipse_about_its_focus_does_not_interfere():
    """An ellipse turning about a focus rolls on its road with no interference (Hall & Wagon)."""
    res = clearance(rs.track_for(rs.Wheel.ellipse((0.05, 0.04), axle=(0.03, 0.0))))
    assert not res.interferes
    assert res.min_m >= -INTERFERENCE_TOL_REL * 0.08


def test_circle_on_flat_track_has_nonnegative_clearance():
    """A centred circle on its flat track: a rim point at angle psi from the bottom is R(1 - cos psi) up."""
    R = 0.1
    pair = rs.track_for(rs.Wheel.circle(R))
    res = clearance(pair, rim_points=2048)
    assert not res.interferes
    assert res.min_m >= 0.0
    # Some sample lies within one spacing of the contact, so the least gap is at most that.
    assert res.min_m <= R * (1 - math.cos(2 * math.pi / 2048))


def test_wave_and_sawtooth_wheels_clear():
    """Smooth wheels solved from a track touch only at the contact (local Euler-Savary form)."""
    for pair in (rs.wheel_for(rs.Track.wave(0.02, 0.3), lobes=3),
                 rs.wheel_for(rs.Track.sawtooth(0.05, 0.3), lobes=3)):
        res = clearance(pair)
        assert not res.interferes


def test_many_sided_outline_clears():
    """A 400-point outline of an ellipse about its focus rolls as the smooth ellipse does,
    whether read as the 400-gon through the points (corners = "all": its vertices are the rim
    points checked) or, by default, as the smooth curve through them."""
    phi = np.linspace(0.0, 2 * math.pi, 400, endpoint=False)
    a, e = 0.05, 0.6
    r = a * (1 - e * e) / (1 + e * np.cos(phi))
    pts = np.column_stack([r * np.cos(phi), r * np.sin(phi)])
    pair = rs.track_for(rs.Wheel.outline(pts, corners="all"))
    res = clearance(pair)
    assert not res.interferes
    assert res.rim_points == 400
    assert not clearance(rs.track_for(rs.Wheel.outline(pts))).interferes


def test_result_to_dict_is_plain():
    d = clearance(regular_pair(3)).to_dict()
    assert isinstance(d["min_m"], float) and isinstance(d["interferes"], bool)
    assert isinstance(d["first_interference_x_m"], float)


def test_bad_inputs():
    pair = regular_pair(4)
    with pytest.raises(InputError, match="rim_points"):
        clearance(pair, rim_points=3)
    with pytest.raises(InputError, match="contact_exclusion_rad"):
        clearance(pair, contact_exclusion_rad=0.0)
    with pytest.raises(InputError, match="poses"):
        clearance(pair, poses=[])
    with pytest.raises(InputError, match="RollingPair"):
        clearance("square")


def _wobbly_outline(n, axle=(0.05, 0.03)):
    t = np.linspace(0.0, 2.0 * math.pi, n, endpoint=False)
    pts = np.column_stack([0.3 * np.cos(t), 0.2 * np.sin(t) * (1.0 + 0.1 * np.cos(3.0 * t))])
    return rs.Wheel.outline(pts, axle=axle, corners="all")  # a many-vertex polygon, read as one


@pytest.mark.parametrize("wheel", [
    rs.Wheel.polygon(sides=3, apothem=0.3),  # interferes (Hall & Wagon 1992)
    rs.Wheel.polygon(sides=7, apothem=0.2, axle=(0.02, -0.01)),
    rs.Wheel.ellipse(semi_axes=(0.3, 0.2), axle=(0.05, 0.03)),
    rs.Wheel.polygon(sides=5, apothem=0.2, corner_radius=0.03),
], ids=["triangle", "off-centre heptagon", "ellipse", "rounded pentagon"])
def test_pruned_search_agrees_with_every_rim_point(wheel):
    """The box-hierarchy search against the all-points evaluation it prunes.

    Every pose's least gap below the threshold must be the same figure (the pruned search
    evaluates the same candidates exactly; a dropped run is one whose exact lower bound is
    above the threshold), and poses it reports nothing below the threshold for must have
    nothing below it.
    """
    from ridesim.assess.clearance import _Checker, _pose_grid

    pair = rs.track_for(wheel)
    chk = _Checker(pair, 2048, 1e-5)
    x = _pose_grid(pair, 0.0, 512)
    th = np.asarray(pair.wheel_angle(x), dtype=float)
    g_all, j_all, t_all = chk.evaluate(x, th, math.inf, prune=False)  # every rim point
    for thr in (1e-4 * chk.rmax, 1e-7 * chk.rmax, -chk.tol):
        g_fast, _, _ = chk.evaluate(x, th, thr)
        below = g_all < thr
        np.testing.assert_allclose(g_fast[below], g_all[below], rtol=0, atol=1e-15 * chk.rmax)
        assert np.all(g_fast[~below] >= thr)
    # With no threshold every pose's least gap, and the rim point that has it.
    g_fast, j_fast, t_fast = chk.evaluate(x, th, math.inf)
    np.testing.assert_allclose(g_fast, g_all, rtol=0, atol=1e-15 * chk.rmax)
    np.testing.assert_array_equal(j_fast, j_all)
    np.testing.assert_allclose(t_fast, t_all, rtol=0, atol=1e-12)


def test_many_vertex_outline_clearance_matches_brute_force():
    # A 400-vertex outline: the exact result at the worst pose against dense sampling of
    # every edge (dense_pose_min above), and its gap at 40 poses against the same.
    pair = rs.track_for(_wobbly_outline(400))
    res = clearance(pair)
    assert not res.interferes
    # The worst pose is a tangential touch beside the contact point, where the gap between
    # samples grows with the square of their spacing: 200 samples per edge leave about
    # 1.6e-9 m, 2000 about 4e-11 m (measured), so the reference uses 2000.
    ref = dense_pose_min(pair, res.at_x_m, per_edge=2000)
    # Dense samples include points the exact edge minimum lies between: ref >= exact.
    assert ref >= res.min_m - 1e-12
    assert ref - res.min_m <= 1e-9
    for xq in np.linspace(0.0, pair.revolution_length, 40, endpoint=False):
        exact = clearance(pair, poses=np.array([xq])).min_m
        dense = dense_pose_min(pair, float(xq), per_edge=50)
        assert exact <= dense + 1e-12

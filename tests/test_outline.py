"""Smooth outlines and profiles from points (ridesim.model.outline) against closed forms.

The ellipse's track is the incomplete elliptic integral of the first kind (scipy.special);
a straight edge rolls a catenary arch and a circle about its centre a flat (Hall & Wagon,
"Roads and Wheels", Mathematics Magazine 65(5), 1992); a cosine profile closes a wheel at
the depth given by the standard integral of 1 / (D - A cos kx).
"""

import math

import numpy as np
import pytest
from scipy.special import ellipk, ellipkinc

import ridesim as rs
from ridesim.errors import GeometryError, InputError
from ridesim.model.outline import CORNER_ANGLE_DEG, closed_turns

TWO_PI = 2.0 * math.pi
A, B = 0.2, 0.15  # ellipse semi-axes [m]


def ellipse_points(n, phase=0.0):
    t = phase + TWO_PI * np.arange(n) / n
    return np.column_stack([A * np.cos(t), B * np.sin(t)])


def exact_ellipse_track(psi):
    """Track of the ellipse A x B rolling about its centre, from the lowest point of the track.

    With psi the rim angle from the minor axis, r = A B / sqrt(A^2 cos^2 psi + B^2 sin^2 psi)
    and dx = r dpsi, so x = B F(psi | m), m = 1 - B^2 / A^2 (incomplete elliptic integral of
    the first kind, scipy.special.ellipkinc), and y = -r (Hall & Wagon 1992).
    """
    m = 1.0 - B * B / (A * A)
    x = B * ellipkinc(psi, m)
    y = -A * B / np.sqrt((A * np.cos(psi)) ** 2 + (B * np.sin(psi)) ** 2)
    return x, y


@pytest.mark.parametrize("n,tol_m,phase", [(90, 1e-4, 0.0), (90, 1e-4, 0.3), (360, 1e-5, 0.0)])
def test_points_on_an_ellipse_roll_on_the_ellipse_track(n, tol_m, phase):
    """Targets: 90 points within 0.1 mm of the exact track and no cusps; 360 within 0.01 mm."""
    w = rs.Wheel.outline(ellipse_points(n, phase))
    assert w.kind == "outline" and not w.is_polygon and w.params["corners"] == 0
    pair = rs.track_for(w)
    assert pair.cusps == () and pair.track.kinks == ()
    psi = np.linspace(0.0, 0.5 * math.pi, 1001)
    x, y = exact_ellipse_track(psi)
    # x = 0 is the track's highest point (least radius B in contact); the track is even.
    for sign in (1.0, -1.0):
        np.testing.assert_allclose(pair.track.y(sign * x), y, rtol=0, atol=tol_m)
    # Half a turn per period (two-fold symmetry): 2 B K(m).
    m = 1.0 - B * B / (A * A)
    assert pair.track.period == pytest.approx(2 * B * ellipk(m), abs=tol_m)
    # Exactly one crest and one trough per period: the slope changes sign twice.
    xs = np.linspace(0.0, pair.track.period, 4001)[:-1] + 1e-4
    s = np.sign(pair.track.slope(xs))
    assert int(np.count_nonzero(s != np.roll(s, 1))) == 2


def test_the_default_corner_angle_separates_polygons_from_sampled_curves():
    # A regular n-gon turns by 360/n degrees at each vertex (elementary geometry): every
    # polygon of up to 35 sides stays a polygon under the 10 degree default.
    assert CORNER_ANGLE_DEG == 10.0
    for sides in (3, 4, 6, 12, 35):
        ang = TWO_PI * np.arange(sides) / sides
        pts = np.column_stack([np.cos(ang), np.sin(ang)])
        np.testing.assert_allclose(closed_turns(pts), TWO_PI / sides, rtol=1e-12)
        w = rs.Wheel.outline(pts)
        assert w.is_polygon and len(w.vertices) == sides
    # 90 points on the 0.2 x 0.15 m ellipse turn by at most 5.3 degrees: no corner.
    assert np.degrees(closed_turns(ellipse_points(90)).max()) < 6.0


def d_shape(R=0.1, beta=math.pi / 3, n_arc=60):
    """A circular arc of radius R about the axle over the top, closed by a flat chord at the
    bottom at distance R cos(beta); the chord has only its two end points."""
    ang = np.linspace(-0.5 * math.pi + beta, 1.5 * math.pi - beta, n_arc)
    return np.column_stack([R * np.cos(ang), R * np.sin(ang)])


def test_d_shape_has_cusps_only_at_its_two_corners_and_closed_form_track():
    R, beta = 0.1, math.radians(60)
    d = R * math.cos(beta)
    w = rs.Wheel.outline(d_shape(R, beta))
    assert w.params["corners"] == 2 and not w.is_polygon
    pair = rs.track_for(w)
    assert len(pair.cusps) == 2
    # Revolution: the flat rolls one catenary arch 2 d asinh(tan beta), the arc a flat of
    # length R (2 pi - 2 beta) (Hall & Wagon 1992).
    half = d * math.asinh(math.tan(beta))
    # (The spline through 60 points of the arc is within nanometres of it: 1e-7 m allowed.)
    assert pair.revolution_length == pytest.approx(2 * half + R * (TWO_PI - 2 * beta), abs=1e-7)
    # Arch: y = -d cosh(x / d) about the flat's foot (x = 0, the least radius).
    x = np.linspace(-half, half, 201)
    np.testing.assert_allclose(pair.track.y(x), -d * np.cosh(x / d), rtol=0, atol=1e-9)
    # On the arc the track is flat at -R (the spline through 60 points of the arc stays
    # within a few nm of the circle).
    xa = np.linspace(half + 1e-3, pair.revolution_length - half - 1e-3, 201)
    np.testing.assert_allclose(pair.track.y(xa), -R, rtol=0, atol=1e-7)


def test_corners_override():
    pts = d_shape()
    assert rs.Wheel.outline(pts, corners="all").is_polygon
    smooth = rs.Wheel.outline(pts, corners="none")
    assert smooth.params["corners"] == 0 and rs.track_for(smooth).cusps == ()
    one = rs.Wheel.outline(pts, corners=[0])
    assert one.params["corners"] == 1 and len(rs.track_for(one).cusps) == 1
    # A large corner angle makes the D smooth too; a zero angle makes every point a corner.
    assert rs.Wheel.outline(pts, corner_angle_deg=90).params["corners"] == 0
    assert rs.Wheel.outline(pts, corner_angle_deg=0).is_polygon


def test_clockwise_points_give_the_same_wheel():
    pts = ellipse_points(90, 0.2)
    a, b = rs.Wheel.outline(pts), rs.Wheel.outline(pts[::-1])
    phi = np.linspace(0, TWO_PI, 97)
    np.testing.assert_allclose(a.radius(phi), b.radius(phi), rtol=1e-12)


def test_smooth_outline_area_is_the_ellipse_area():
    # pi A B (the ellipse's area); the spline through 360 points is within ~1e-10 m of it.
    w = rs.Wheel.outline(ellipse_points(360))
    assert w.mass_properties(0.01, 1000.0).area_m2 == pytest.approx(math.pi * A * B, rel=1e-8)


def test_bad_outlines(raises_one_line):
    pts = ellipse_points(90)
    raises_one_line(GeometryError, ["star-shaped", "axle"], rs.Wheel.outline, pts, axle=(0.3, 0.0))
    raises_one_line(InputError, ["corners", "outside"], rs.Wheel.outline, pts, corners=[90])
    raises_one_line(InputError, ["corners"], rs.Wheel.outline, pts, corners="some")
    raises_one_line(InputError, ["corner_angle_deg"], rs.Wheel.outline, pts, corner_angle_deg=200)


def test_points_profile_of_a_cosine_closes_at_the_closed_form_depth():
    """f = A cos(2 pi x / L) sampled at 48 points: the wheel for n lobes closes where
    integral_0^L dx / (D - A cos kx) = L / sqrt(D^2 - A^2) = 2 pi / n (standard integral,
    e.g. Gradshteyn & Ryzhik 2.553.3), i.e. D = sqrt((n L / 2 pi)^2 + A^2)."""
    amp, L, n = 0.02, 0.3, 4
    x = np.linspace(0.0, L, 49)
    t = rs.Track.points(np.column_stack([x, amp * np.cos(TWO_PI * x / L)]))
    assert t.kinks == () and t.params["corners"] == 0
    xs = np.linspace(0, 2 * L, 1001)
    # Cubic spline interpolation error bound (5/384) h^4 max|f(4)| (Hall & Meyer, J. Approx.
    # Theory 16, 1976): 7.6e-8 m here.
    bound = 5 / 384 * (L / 48) ** 4 * amp * (TWO_PI / L) ** 4
    np.testing.assert_allclose(t.shape(xs), amp * np.cos(TWO_PI * xs / L), rtol=0, atol=bound)
    pair = rs.wheel_for(t, lobes=n)
    assert pair.depth == pytest.approx(math.hypot(n * L / TWO_PI, amp), rel=1e-8)


def test_points_profile_with_a_sharp_valley_keeps_it_as_a_kink():
    # Two circular-ish humps meeting in a V: 20 points per hump, the V turns by ~60 degrees.
    L = 0.2
    x = np.linspace(0.0, L, 41)
    f = 0.03 * np.sin(math.pi * np.mod(x, L / 2) / (L / 2))
    t = rs.Track.points(np.column_stack([x, f]))
    np.testing.assert_allclose(sorted(t.kinks), [0.0, L / 2], atol=1e-15)
    np.testing.assert_allclose(t.shape(np.array([L / 4, 3 * L / 4])), [0.03, 0.03], atol=1e-6)


@pytest.mark.parametrize("n, corners", [(50, []), (200, [0, 17, 90]), (4096, [])])
def test_points_and_derivatives_in_one_pass_are_scipys_ppoly_values(n, corners):
    # Reference: scipy.interpolate.PPoly, the spline's own representation (xy calls it per
    # coordinate and order); xy_d1 shares one interval search and must give the same bits,
    # at knots, just either side of them, and beyond one period (the periodic wrap).
    from ridesim.model.outline import ClosedSpline

    t = np.linspace(0.0, 2.0 * np.pi, n, endpoint=False)
    pts = np.column_stack([0.3 * np.cos(t), 0.2 * np.sin(t) * (1.0 + 0.1 * np.cos(3.0 * t))])
    cs = ClosedSpline.through(pts, np.array(corners, dtype=int))
    L = cs.length
    rng = np.random.default_rng(n)
    s = np.concatenate([rng.uniform(-L, 2.0 * L, 5000), cs.knots, cs.knots * (1 + 1e-16),
                        cs.knots - 1e-12 * L])
    p, d = cs.xy_d1(s)
    assert np.array_equal(p, cs.xy(s))
    assert np.array_equal(d, cs.xy(s, 1))

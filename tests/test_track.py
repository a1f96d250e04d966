"""Tests of the periodic track profiles (ridesim.model.track) against their closed forms."""

import math

import numpy as np
import pytest

import ridesim as rs
from ridesim.errors import GeometryError, InputError

X = np.linspace(-1.3, 2.9, 1501)


def test_wave_closed_form_and_derivative():
    # f = A cos(2 pi x / lambda), f' = -A (2 pi/lambda) sin(2 pi x / lambda) (calculus).
    A, lam = 0.02, 0.3
    t = rs.Track.wave(amplitude=A, wavelength=lam)
    k = 2 * math.pi / lam
    np.testing.assert_allclose(t.y(X), A * np.cos(k * X), rtol=0, atol=1e-17)
    np.testing.assert_allclose(t.slope(X), -A * k * np.sin(k * X), rtol=0, atol=1e-15)
    assert t.period == lam
    lo, hi = t.shape_range()
    np.testing.assert_allclose([lo, hi], [-A, A], rtol=1e-14)
    assert t.pieces() == [(0.0, lam)]


def test_lowered_track_is_shape_minus_depth():
    t = rs.Track.wave(amplitude=0.02, wavelength=0.3)
    D = 0.1
    low = t.lowered(D)
    np.testing.assert_allclose(low.y(X), t.shape(X) - D, rtol=0, atol=1e-17)
    assert low.offset == D and t.offset == 0.0  # the original is not changed
    np.testing.assert_allclose(low.slope(X), t.slope(X), rtol=0, atol=0)


@pytest.mark.parametrize("up", [0.5, 0.3, 0.9])
def test_sawtooth_is_two_straight_flanks(up):
    # Top at x = 0, down by `rise` over (1 - up) * run, back up over up * run.
    h, L = 0.02, 0.2
    t = rs.Track.sawtooth(rise=h, run=L, up_fraction=up)
    xb = L * (1 - up)
    xw = np.mod(X, L)
    expected = np.where(xw <= xb, -h * xw / xb, -h + h * (xw - xb) / (L - xb))
    np.testing.assert_allclose(t.y(X), expected, rtol=0, atol=1e-16)
    inside = (np.abs(xw - xb) > 1e-9) & (xw > 1e-9) & (L - xw > 1e-9)
    expected_slope = np.where(xw < xb, -h / xb, h / (L - xb))
    np.testing.assert_allclose(t.slope(X)[inside], expected_slope[inside], rtol=1e-14)
    np.testing.assert_allclose(t.kinks, [0.0, xb], atol=1e-16)
    assert t.shape_range() == (-h, 0.0)
    np.testing.assert_allclose(t.line_nodes, [[0, 0], [xb, -h], [L, 0]], atol=1e-16)


@pytest.mark.parametrize(
    "track,x,expected",
    [(rs.Track.sawtooth(rise=0.02, run=0.2), 0.01, -0.02 / 0.1),
     (rs.Track.points([(0.0, 0.0), (0.1, -0.02), (0.4, 0.0)]), 0.2, 0.02 / 0.3),
     (rs.Track.wave(amplitude=0.02, wavelength=0.3), 0.0, 0.0)],
    ids=["sawtooth", "points", "wave"],
)
def test_slope_accepts_a_scalar_position(track, x, expected):
    # The slope is documented as vectorised: a scalar x must give a 0-d result (as numpy
    # ufuncs do), for line tracks as for formula tracks.
    s = track.slope(x)
    assert np.ndim(s) == 0
    np.testing.assert_allclose(float(s), expected, rtol=1e-14, atol=1e-18)


def test_points_profile_interpolates_and_repeats():
    pts = [(0.0, 0.0), (0.1, -0.02), (0.25, -0.01), (0.4, 0.0)]
    t = rs.Track.points(pts, corners="all")
    assert t.period == pytest.approx(0.4, rel=1e-15)
    xs = np.array([0.05, 0.175, 0.325, 0.45, -0.35])
    # Linear interpolation between the nodes, repeated every 0.4 m.
    expected = np.array([-0.01, -0.015, -0.005, -0.01, -0.01])
    np.testing.assert_allclose(t.y(xs), expected, rtol=1e-13)
    np.testing.assert_allclose(t.kinks, [0.0, 0.1, 0.25], atol=1e-16)
    # By default only the points where the profile turns by more than 10 degrees are
    # corners: it turns by atan(0.2) + atan(1/15) = 15.1 degrees at x = 0 and 0.1 and not at
    # all at 0.25 (the points on either side are on one line), where it stays straight: a
    # cubic through collinear points is their line (de Boor 1978, ch. IV).
    d = rs.Track.points(pts)
    np.testing.assert_allclose(d.kinks, [0.0, 0.1], atol=1e-16)
    np.testing.assert_allclose(d.y(xs), expected, rtol=1e-12, atol=1e-15)


def test_points_with_a_longer_period_close_back_to_the_start():
    t = rs.Track.points([(0.0, 0.0), (0.1, -0.02)], period=0.3)
    # Segment from (0.1, -0.02) back up to (0.3, 0): midpoint at x = 0.2 is -0.01.
    np.testing.assert_allclose(t.y(np.array([0.2, 0.5])), [-0.01, -0.01], rtol=1e-13)
    assert t.period == 0.3


def test_points_with_an_offset_start_keep_the_kinks_in_the_base_period():
    # The profile turns by atan(0.05) + atan(1/30) = 4.8 degrees at each point: below the
    # default corner angle, so it is given as straight segments explicitly.
    t = rs.Track.points([(1.0, 0.0), (1.2, -0.01), (1.5, 0.0)], corners="all")
    assert t.start == 1.0
    np.testing.assert_allclose(t.kinks, [1.0, 1.2], atol=1e-15)
    np.testing.assert_allclose(t.y(np.array([1.1, 1.6, 0.6])), [-0.005, -0.005, -0.005], rtol=1e-12)


def test_formula_profile_and_its_derivative():
    t = rs.Track.profile("0.5*cos(2*x)", period=math.pi)
    # Outside [0, pi) the formula is evaluated at x mod pi, which rounds x by up to an ulp
    # of |x| (4e-16 here): exact to within a few ulp of the height.
    np.testing.assert_allclose(t.y(X), 0.5 * np.cos(2 * X), rtol=0, atol=1e-15)
    np.testing.assert_allclose(t.slope(X), -np.sin(2 * X), rtol=0, atol=2e-15)
    assert t.kinks == ()


def test_formula_profile_whose_ends_meet_at_an_angle_records_a_kink():
    # |sin x| repeats every pi but its slope jumps from -1 to +1 at x = 0.
    t = rs.Track.profile("abs(sin(x))", period=math.pi)
    assert 0.0 in t.kinks
    np.testing.assert_allclose(t.y(X), np.abs(np.sin(X)), rtol=0, atol=1e-15)


def test_formula_over_one_period_repeats_outside_it():
    """A parabola arch f = -(x - 0.2)^2 / 0.4 written over one period [0, 0.4] is not periodic by
    itself; the track repeats it (f(x) = f(x mod 0.4)), and its repeats meet at an angle at
    x = 0: the slope -2 (x - 0.2)/0.4 is +1 just after a joint and -1 just before it."""
    P = 0.4
    t = rs.Track.profile("-((x-0.2)**2)/0.4", period=P)
    u = np.mod(X, P)
    np.testing.assert_allclose(t.y(X), -((u - 0.2) ** 2) / 0.4, rtol=0, atol=1e-15)
    np.testing.assert_allclose(t.slope(X), -2.0 * (u - 0.2) / 0.4, rtol=0, atol=1e-14)
    assert t.kinks == (0.0,)
    np.testing.assert_allclose(t.shape_range(), (-0.1, 0.0), atol=1e-12)


def test_polyline_contains_the_kinks():
    t = rs.Track.sawtooth(rise=0.02, run=0.2, up_fraction=0.3)
    pl = t.polyline(0.0, 0.6, 7)  # samples at 0.1 m: the kinks at 0.14, 0.34, 0.54 are added
    for xk in (0.14, 0.2, 0.34, 0.4, 0.54):
        assert np.any(np.abs(pl[:, 0] - xk) < 1e-15), xk
    np.testing.assert_allclose(pl[:, 1], t.y(pl[:, 0]), atol=0)
    assert np.all(np.diff(pl[:, 0]) > 0)


@pytest.mark.parametrize(
    "track",
    [rs.Track.wave(amplitude=0.02, wavelength=0.3), rs.Track.sawtooth(rise=0.01, run=0.13, up_fraction=0.2),
     rs.Track.profile("0.1*sin(x) + 0.02*cos(3*x)", period=2 * math.pi),
     rs.Track.points([(0.5, 0.0), (0.6, -0.03), (0.9, 0.01), (1.1, 0.0)])],
    ids=["wave", "sawtooth", "formula", "points"],
)
def test_every_track_repeats_with_its_period(track):
    P = track.period
    for m in (1, 2, -3):
        np.testing.assert_allclose(track.y(X + m * P), track.y(X), rtol=0, atol=1e-14)


# ------------------------------------------------------------------------------ bad input


@pytest.mark.parametrize(
    "points,pattern",
    [
        ([(0.0, 0.0), (0.2, -0.01), (0.2, 0.0), (0.4, 0.0)], "increasing x"),
        ([(0.0, 0.0), (0.3, -0.01), (0.2, 0.0)], "increasing x"),
    ],
)
def test_track_points_must_increase(raises_one_line, points, pattern):
    raises_one_line(InputError, ["points", pattern], rs.Track.points, points)


def test_track_points_must_repeat(raises_one_line):
    raises_one_line(GeometryError, ["points", "repeat", "period"], rs.Track.points,
                    [(0.0, 0.0), (0.1, -0.02), (0.3, -0.01)])


def test_track_points_period_shorter_than_span(raises_one_line):
    raises_one_line(InputError, ["period", "span"], rs.Track.points, [(0.0, 0.0), (0.2, -0.01)], period=0.1)


def test_track_points_shape(raises_one_line):
    raises_one_line(InputError, ["points"], rs.Track.points, [(0.0, 0.0)])
    raises_one_line(InputError, ["points", "finite"], rs.Track.points, [(0.0, 0.0), (0.1, float("nan"))])


@pytest.mark.parametrize("up", [0.0, 1.0, -0.2, 1.5])
def test_sawtooth_up_fraction_range(raises_one_line, up):
    raises_one_line(InputError, ["up_fraction", r"\(0, 1\)"], rs.Track.sawtooth, 0.02, 0.2, up_fraction=up)


@pytest.mark.parametrize(
    "call,field",
    [
        (lambda: rs.Track.sawtooth(rise=-0.02, run=0.2), "rise"),
        (lambda: rs.Track.sawtooth(rise=0.02, run=0.0), "run"),
        (lambda: rs.Track.wave(amplitude=-0.02, wavelength=0.3), "amplitude"),
        (lambda: rs.Track.wave(amplitude=0.02, wavelength=-0.3), "wavelength"),
        (lambda: rs.Track.profile("cos(x)", period=-1.0), "period"),
    ],
)
def test_track_sizes_must_be_positive(raises_one_line, call, field):
    raises_one_line(InputError, [field, "> 0"], call)


def test_formula_track_must_repeat(raises_one_line):
    raises_one_line(GeometryError, ["formula", "repeat", "period"], rs.Track.profile, "0.1*x", period=1.0)

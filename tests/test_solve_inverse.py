"""Tests of the wheel-for-a-track solve and closure depths (ridesim.solve.inverse).

A track shape f lowered by D gives the contact radius ``r = D - f`` and the wheel turns
``dθ = dx / r``; it closes after n periods when ``∫ dx/(D - f) = 2 pi / n`` over one
period (Hall & Wagon, "Roads and Wheels", Mathematics Magazine 65(5):283-301, 1992).
The closure integral and the wheel are written here in closed form for a cosine wave and
for a straight-flanked sawtooth; round trips check that the inverse undoes the forward
solve for every wheel family.
"""

import math

import numpy as np
import pytest
from scipy.optimize import brentq

import ridesim as rs
from ridesim.errors import ClosureError, GeometryError, InputError
from ridesim.solve.inverse import closure_angle

TWO_PI = 2.0 * math.pi
HALF_PI = 0.5 * math.pi
A_WAVE, LAM_WAVE = 0.02, 0.3


def wave_closing_depth(A, lam, n):
    """Closing depth of ``f = A cos(2 pi x / lam)`` for n lobes.

    ``∫0^lam dx / (D - A cos(2 pi x/lam)) = (lam/2pi) ∫0^2pi du/(D - A cos u) = lam / sqrt(D^2 - A^2)``
    (Gradshteyn & Ryzhik, Table of Integrals, Series and Products, 3.613.2 / 2.553.3
    [memory]; or the substitution t = tan(u/2)). Setting it to 2 pi/n gives
    ``D_n = sqrt(A^2 + (n lam / 2 pi)^2)``.
    """
    return math.sqrt(A * A + (n * lam / TWO_PI) ** 2)


# ---------------------------------------------------------------------- cosine wave


@pytest.mark.parametrize("D", [0.0201, 0.025, 0.05, 0.1447, 1.0])
def test_wave_closure_integral(wave_track, D):
    # lam / sqrt(D^2 - A^2), see wave_closing_depth; the quadrature is refined to 1e-14 and
    # the near-singular case D = 1.005 A is graded towards the crest: 1e-12 relative.
    expected = LAM_WAVE / math.sqrt(D * D - A_WAVE**2)
    np.testing.assert_allclose(closure_angle(wave_track, D), expected, rtol=1e-12)


@pytest.mark.parametrize("n", [1, 2, 3])
def test_wave_closing_depth_and_wheel(wave_track, n):
    """Closing depth ``D_n`` and the n-lobed wheel ``r = (D^2 - A^2)/(D + A cos(n θ))``.

    From ``tan(n θ/2) = sqrt((D+A)/(D-A)) tan(kx/2)`` (the same integral, indefinite) the
    contact radius ``D - A cos kx`` equals ``(D^2 - A^2)/(D + A cos nθ)`` [derived]; θ = 0 at
    the crest x = 0, wheel-frame angle phi = θ - pi/2. For n = 1 it is an ellipse about a
    focus with semi-axes D_1 and lam/2pi (Hall & Wagon 1992).
    """
    D = wave_closing_depth(A_WAVE, LAM_WAVE, n)
    pair = rs.wheel_for(wave_track, lobes=n)
    # brentq to 1e-15 on a quadrature accurate to 1e-14: 1e-12.
    np.testing.assert_allclose(pair.depth, D, rtol=1e-12)
    assert pair.closed and pair.closure_gap_rad == 0.0 and pair.lobes == n
    np.testing.assert_allclose(pair.revolution_length, n * LAM_WAVE, rtol=1e-12)
    phi = np.linspace(0.0, TWO_PI, 4001)
    r = (D * D - A_WAVE**2) / (D + A_WAVE * np.cos(n * (phi + HALF_PI)))
    # The wheel's radius comes from tables refined to 1e-13; 1e-9 relative is the bar.
    np.testing.assert_allclose(pair.wheel.radius(phi), r, rtol=1e-9)
    assert pair.wheel.symmetry == n
    x = np.linspace(-LAM_WAVE, 2 * LAM_WAVE, 301)
    np.testing.assert_allclose(pair.track.y(x), A_WAVE * np.cos(TWO_PI * x / LAM_WAVE) - D,
                               rtol=0, atol=1e-15)
    if n == 1:
        a, b = D, LAM_WAVE / TWO_PI
        c = math.sqrt(a * a - b * b)
        np.testing.assert_allclose(c, A_WAVE, rtol=1e-12)  # the focus distance is the amplitude
        ellipse = (b * b / a) / (1 + (c / a) * np.cos(phi + HALF_PI))
        np.testing.assert_allclose(pair.wheel.radius(phi), ellipse, rtol=1e-9)


def test_closure_depths_list(wave_track):
    got = rs.closure_depths(wave_track, max_lobes=5)
    assert [n for n, _ in got] == [1, 2, 3, 4, 5]
    np.testing.assert_allclose([d for _, d in got],
                               [wave_closing_depth(A_WAVE, LAM_WAVE, n) for n in range(1, 6)], rtol=1e-12)


def test_explicit_closing_depth_closes(wave_track):
    D = wave_closing_depth(A_WAVE, LAM_WAVE, 3)
    pair = rs.wheel_for(wave_track, depth=D)
    assert pair.closed and pair.lobes == 3
    assert abs(pair.closure_gap_rad) <= 1e-12  # 3 lam / sqrt(D^2 - A^2) - 2 pi = 0
    phi = np.linspace(0.0, TWO_PI, 1001)
    r = (D * D - A_WAVE**2) / (D + A_WAVE * np.cos(3 * (phi + HALF_PI)))
    np.testing.assert_allclose(pair.wheel.radius(phi), r, rtol=1e-9)


@pytest.mark.parametrize("D", [0.03, 0.05, 0.1, 0.2])
def test_explicit_depth_that_does_not_close(wave_track, D, raises_one_line):
    # One period turns the wheel lam / sqrt(D^2 - A^2); the nearest whole number of periods n
    # per turn leaves a gap n lam / sqrt(D^2 - A^2) - 2 pi (closed form above).
    turn = LAM_WAVE / math.sqrt(D * D - A_WAVE**2)
    n = max(1, round(TWO_PI / turn))
    pair = rs.wheel_for(wave_track, depth=D)
    assert not pair.closed
    assert pair.lobes == n
    np.testing.assert_allclose(pair.closure_gap_rad, n * turn - TWO_PI, rtol=1e-12, atol=1e-13)
    np.testing.assert_allclose(pair.depth, D, rtol=0)
    # The rolling map is still usable: one period turns the wheel by `turn`.
    th = pair.wheel_angle(np.array([0.0, LAM_WAVE]))
    np.testing.assert_allclose(th[1] - th[0], turn, rtol=1e-12)
    raises_one_line(ClosureError, ["depth", "lobes", "close"], lambda: pair.wheel)


@pytest.mark.parametrize("n", [1, 2, 4])
def test_flat_track_gives_a_circle(n):
    # f = c: one period P turns the wheel P / (D - c) = 2 pi / n, so D = c + n P / (2 pi) and the
    # wheel is a circle of radius n P / (2 pi) about its centre (rolling circle, no slip).
    c, P = 0.01, 0.3
    pair = rs.wheel_for(rs.Track.profile("0.01", period=P), lobes=n)
    np.testing.assert_allclose(pair.depth, c + n * P / TWO_PI, rtol=1e-12)
    np.testing.assert_allclose(pair.wheel.radius(np.linspace(0.0, TWO_PI, 101)), n * P / TWO_PI, rtol=1e-12)


# ------------------------------------------------------------------ sawtooth: log spirals


def sawtooth_flanks(h, L, up):
    """(length, slope) of the two straight flanks of Track.sawtooth, top at x = 0."""
    x1 = L * (1 - up)
    return [(x1, -h / x1), (L - x1, h / (L - x1))]


def flank_turn(r0, slope, length):
    """Wheel turn over a straight flank: ``∫ dx/(r0 - s x) = -ln(r1/r0)/s``, ``r1 = r0 - s*length``.

    On a straight segment ``r = r0 - s x`` and ``dθ = dx / r`` (Hall & Wagon 1992), so
    ``θ = -ln(r/r0)/s`` and ``r = r0 exp(-s θ)``: the wheel is a logarithmic spiral.
    """
    return -math.log((r0 - slope * length) / r0) / slope


def sawtooth_turn(h, L, up, D):
    """Closure angle of the sawtooth lowered by D: the sum over its two flanks."""
    (l1, s1), (l2, s2) = sawtooth_flanks(h, L, up)
    return flank_turn(D, s1, l1) + flank_turn(D + h, s2, l2)


@pytest.mark.parametrize("up", [0.5, 0.3, 0.85])
@pytest.mark.parametrize("D", [0.001, 0.02, 0.3])
def test_sawtooth_closure_angle_is_a_sum_of_logs(up, D):
    h, L = 0.02, 0.2
    t = rs.Track.sawtooth(rise=h, run=L, up_fraction=up)
    # Closed form in both: agreement to rounding (log1p-based), 1e-13.
    np.testing.assert_allclose(closure_angle(t, D), sawtooth_turn(h, L, up, D), rtol=1e-13)


@pytest.mark.parametrize("n", [1, 2, 3, 5])
def test_sawtooth_wheel_is_made_of_log_spirals(n):
    h, L, up = 0.02, 0.2, 0.3
    t = rs.Track.sawtooth(rise=h, run=L, up_fraction=up)
    pair = rs.wheel_for(t, lobes=n)
    # Closing depth: root of the closed-form closure angle = 2 pi / n (scipy brentq).
    D = brentq(lambda d: sawtooth_turn(h, L, up, d) - TWO_PI / n, 1e-9, 10.0, xtol=1e-16, rtol=1e-15)
    np.testing.assert_allclose(pair.depth, D, rtol=1e-12)
    (l1, s1), (l2, s2) = sawtooth_flanks(h, L, up)
    th1 = flank_turn(D, s1, l1)
    step = TWO_PI / n
    theta = np.linspace(0.0, TWO_PI, 3001, endpoint=False)
    tau = np.mod(theta, step)  # turn since the last crest
    r = np.where(tau < th1, D * np.exp(-s1 * tau), (D + h) * np.exp(-s2 * (tau - th1)))
    # Exact spiral map in the solver: agreement to rounding, 1e-12.
    np.testing.assert_allclose(pair.wheel.radius(theta - HALF_PI), r, rtol=1e-12)
    # Corners of the wheel where the flanks meet: at the crest (depth D) and the trough (D + h).
    xs = np.sort([c.x_m for c in pair.cusps])
    np.testing.assert_allclose(xs, np.sort(np.concatenate([L * np.arange(n), l1 + L * np.arange(n)])),
                               atol=1e-15)
    depths = sorted(c.depth_m for c in pair.cusps)
    np.testing.assert_allclose(depths, [D] * n + [D + h] * n, rtol=1e-12)
    # The flanks meet at crests (depth D: the track bends down) and in valleys (depth D + h:
    # it bends up, where a wheel corner seats).
    for c in pair.cusps:
        assert c.kind == ("crest" if abs(c.depth_m - D) < 1e-9 else "valley")
    np.testing.assert_allclose(np.sort(pair.wheel.kinks), np.sort([c.phi_rad for c in pair.cusps]),
                               atol=1e-12)


@pytest.mark.parametrize("n", [1, 3])
def test_log_spiral_wheel_rolls_back_on_straight_flanks(n):
    # Forward solve of the spiral wheel found above: a log spiral r = r0 exp(-s θ) gives
    # x = ∫ r dθ = r0 (1 - exp(-s θ))/s and y = -r = -r0 + s x, a straight line of slope s.
    h, L, up = 0.02, 0.2, 0.3
    inv = rs.wheel_for(rs.Track.sawtooth(rise=h, run=L, up_fraction=up), lobes=n)
    fwd = rs.track_for(inv.wheel)
    (l1, s1), (l2, s2) = sawtooth_flanks(h, L, up)
    np.testing.assert_allclose(fwd.revolution_length, n * L, rtol=1e-12)
    np.testing.assert_allclose(fwd.track.period, L, rtol=1e-12)
    kinks = np.array([c.x_m for c in fwd.cusps])
    x = np.linspace(0.0, fwd.revolution_length, 4001)
    far = np.min(np.abs(x[:, None] - np.concatenate([kinks, kinks + fwd.revolution_length])[None, :]),
                 axis=1) > 1e-6
    slope = fwd.track.slope(x[far])
    # Slopes from the table's derivative (Chebyshev, refined to 1e-13): 1e-9 absolute.
    assert np.all(np.minimum(np.abs(slope - s1), np.abs(slope - s2)) <= 1e-9)
    y = fwd.track.y(x)
    assert np.all(y <= -inv.depth * (1 - 1e-10)) and np.all(y >= -(inv.depth + h) * (1 + 1e-10))


# -------------------------------------------------------------- round trips (forward -> inverse)

ROUND_TRIP_WHEELS = {
    "square": rs.Wheel.polygon(sides=4, apothem=0.3),
    "triangle": rs.Wheel.polygon(sides=3, side=0.2),
    "heptagon": rs.Wheel.polygon(sides=7, circumradius=0.1),
    "hexagon-off-axle": rs.Wheel.polygon(sides=6, apothem=0.12, axle=(0.02, -0.03)),
    "vertices": rs.Wheel.polygon_from_vertices([(0.1, 0.0), (0.05, 0.12), (-0.09, 0.04), (-0.06, -0.1)]),
    "outline": rs.Wheel.outline([(0, 0), (0.3, 0.05), (0.35, 0.25), (0.1, 0.4), (-0.1, 0.2)],
                                axle=(0.1, 0.15)),
    "star": rs.Wheel.outline([(r * math.cos(a), r * math.sin(a)) for r, a in
                              zip([1.0, 0.45] * 5, HALF_PI + math.pi * np.arange(10) / 5, strict=True)]),
    "ellipse-centred": rs.Wheel.ellipse(semi_axes=(0.05, 0.04)),
    "ellipse-focus": rs.Wheel.ellipse(semi_axes=(0.05, 0.04), axle=(0.03, 0.0)),
    "ellipse-off-centre": rs.Wheel.ellipse(semi_axes=(0.3, 0.1), axle=(0.1, 0.03)),
    "circle-off-centre": rs.Wheel.circle(radius=0.2, axle=(0.05, 0.02)),
    "polar-trefoil": rs.Wheel.polar("0.3 + 0.05*cos(3*phi)"),
    "polar-lopsided": rs.Wheel.polar("0.2 + 0.03*sin(phi) + 0.01*cos(2*phi + 0.4)"),
    # A round wheel rolls on a flat track; the inverse of that track is the same circle.
    "circle-centred": rs.Wheel.circle(radius=0.05),
}


@pytest.mark.parametrize("name", list(ROUND_TRIP_WHEELS))
def test_inverse_of_the_forward_track_is_the_wheel(name):
    """wheel_for(track_for(w).track) returns w, rotated to its pose at x = 0.

    Both solves integrate the same ``dθ = dx / r`` with the same contact radius ``r = -y``;
    the inverse starts its turn at θ = 0 at x = 0 where the forward pair has turned
    θ0 = wheel_angle(0), so at every x the inverse angle is the forward one minus θ0 and
    ``inv.radius(psi) = w.radius(psi + θ0)``. The forward track is already below the axle,
    so the closing depth is 0. Tables at 1e-13 both ways: 1e-8 relative is ample.
    """
    w = ROUND_TRIP_WHEELS[name]
    fwd = rs.track_for(w)
    inv = rs.wheel_for(fwd.track, lobes=fwd.lobes)
    rmax = w.extremes()[1]
    assert abs(inv.depth) <= 1e-10 * rmax
    assert inv.closed and inv.lobes == fwd.lobes
    np.testing.assert_allclose(inv.revolution_length, fwd.revolution_length, rtol=1e-10)
    th0 = float(fwd.wheel_angle(np.array([0.0]))[0])
    psi = np.linspace(0.0, TWO_PI, 4001)
    np.testing.assert_allclose(inv.wheel.radius(psi), w.radius(psi + th0), rtol=1e-8)


def test_parabola_arches_roll_a_parabola_about_its_focus():
    """Robison, "Rolling curves", Math. Mag. 33 (1960): a parabola rolling on a congruent
    parabola carries its focus along a straight line; the wheel is r = 2f / (1 + cos t).

    Derivation for the track f(x) = -(x - 0.2)^2 / 0.4 (period 0.4, arches x'^2 = 4 f y' with
    f = 0.1 m): lowered by D the contact radius is r = D + u^2/(4f), u = x - 0.2, and
    dtheta = du / r. With D = f, r is the focal distance of the parabola's point (u, u^2/4f)
    and theta - theta(0.2) = 2 atan(u / 2f), so r = f / cos^2(t/2) = 2f / (1 + cos t) with
    t = theta - theta(0.2). One arch (u = -0.2 .. 0.2, u / 2f = -1 .. 1) turns the wheel
    2 atan(1) * 2 = pi: two arches close a turn, so lobes = 2 needs D = f, and the wheel is two
    parabola pieces meeting at r = 2f = 0.2 m, r(phi) = 2f / (1 + |cos phi|) with the vertex
    (r = f) straight down at x = 0.2 (wheel angle pi/2, contact ray at phi = 0).
    Area 2 * int 1/2 r^2 dphi = f^2 int sec^4(t/2) dt = 16 f^2 / 3 (t from -pi/2 to pi/2);
    polar moment about the focus 2 * int 1/4 r^4 dphi = f^4 / 2 * int sec^8(t/2) dt
    = f^4 / 2 * 4 int_0^1 (1 + s^2)^3 ds = f^4 * 192 / 35 (s = tan(t/2)).
    """
    f, P = 0.1, 0.4
    pair = rs.wheel_for(rs.Track.profile("-((x-0.2)**2)/0.4", period=P), lobes=2)
    assert pair.closed and pair.lobes == 2
    assert pair.depth == pytest.approx(f, abs=1e-12)
    phi = np.linspace(-math.pi, math.pi, 4001)
    np.testing.assert_allclose(pair.wheel.radius(phi), 2 * f / (1 + np.abs(np.cos(phi))),
                               rtol=1e-12)
    x = np.linspace(0.0, 2 * P, 801)
    u = np.mod(x, P) - 0.2
    theta = 2 * np.arctan(u / (2 * f)) + HALF_PI + math.pi * np.floor(x / P)
    np.testing.assert_allclose(pair.wheel_angle(x), theta, atol=1e-12)
    np.testing.assert_allclose(pair.depth_range(), (f, 2 * f), rtol=1e-12)
    rho, thick = 1000.0, 0.01
    mp = pair.wheel.mass_properties(thick, rho)
    assert mp.area_m2 == pytest.approx(16 * f * f / 3, rel=1e-10)
    assert mp.inertia_kg_m2 == pytest.approx(rho * thick * f**4 * 192 / 35, rel=1e-10)


# ---------------------------------------------------------------------------- bad input


@pytest.mark.parametrize("D", [0.01, 0.02, -0.5])
def test_depth_must_clear_the_track_top(raises_one_line, wave_track, D):
    raises_one_line(GeometryError, ["depth", "highest"], rs.wheel_for, wave_track, depth=D)
    raises_one_line(GeometryError, ["depth", "highest"], closure_angle, wave_track, D)


@pytest.mark.parametrize("lobes", [0, 1.5, -2, True, "3"])
def test_lobes_must_be_a_positive_integer(raises_one_line, wave_track, lobes):
    raises_one_line(InputError, ["lobes", ">= 1"], rs.wheel_for, wave_track, lobes=lobes)


@pytest.mark.parametrize("max_lobes", [0, 2.5])
def test_closure_depths_max_lobes(raises_one_line, wave_track, max_lobes):
    raises_one_line(InputError, ["max_lobes", ">= 1"], rs.closure_depths, wave_track, max_lobes=max_lobes)


def test_lobes_and_depth_are_exclusive(raises_one_line, wave_track):
    raises_one_line(InputError, ["lobes", "depth", "not both"], rs.wheel_for, wave_track, lobes=3, depth=0.2)


def test_wheel_for_refuses_other_axle_paths(raises_one_line, wave_track):
    raises_one_line(InputError, ["path", "line", "hub"], rs.wheel_for, wave_track, lobes=2, path="hub")


def test_wheel_for_needs_a_track_and_a_numeric_depth(raises_one_line, wave_track):
    raises_one_line(InputError, ["track", "Track"], rs.wheel_for, "wave", lobes=2)
    raises_one_line(InputError, ["depth", "number"], rs.wheel_for, wave_track, depth="0.2")

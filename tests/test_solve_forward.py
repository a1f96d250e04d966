"""Tests of the track-for-a-wheel solve (ridesim.solve.forward) against closed forms.

With the axle on the x axis the contact is straight below the axle, ``y = -r``, and
the rim does not slip, ``dx = r dθ``, so ``x(θ) = ∫ r dθ`` (Hall & Wagon, "Roads and
Wheels", Mathematics Magazine 65(5):283-301, 1992). Each test below integrates that
relation in closed form for one family of wheels and compares the solver with it.
"""

import math

import numpy as np
import pytest
from scipy.special import ellipe, ellipeinc, ellipk, ellipkinc

import ridesim as rs
from ridesim.errors import InputError

TWO_PI = 2.0 * math.pi
HALF_PI = 0.5 * math.pi


def nearest_pose(theta_exact, step, theta_solver):
    """The pose ``theta_exact + k*step`` nearest to ``theta_solver`` (poses repeat by symmetry)."""
    return theta_exact + step * round((theta_solver - theta_exact) / step)


# ------------------------------------------------------------------ polygons: catenaries


@pytest.mark.parametrize("n", range(3, 13))
def test_regular_polygon_rolls_on_catenary_arches(n):
    """Regular n-gon of apothem a on arches ``y = -a cosh(x/a)``, |x| <= a asinh(tan(pi/n)).

    Hall & Wagon, "Roads and Wheels", Mathematics Magazine 65(5):283-301, 1992. A face at
    distance a from the axle touching at angle u from its foot gives ``x = a asinh(tan u)``
    and ``y = -a sec u = -a cosh(x/a)``; the face stays in contact for |u| <= pi/n (half the
    angle one face subtends), so the wheel turns pi/n between the top of an arch and its
    cusp, and the cusp is at ``x = a asinh(tan(pi/n))`` with depth ``a sec(pi/n)`` (the
    circumradius). Everything is closed form in the solver too, so 1e-10 is generous.
    """
    a = 0.3
    pair = rs.track_for(rs.Wheel.polygon(sides=n, apothem=a))
    half = a * math.asinh(math.tan(math.pi / n))
    period = 2 * half
    x = np.linspace(-half, half, 801)
    np.testing.assert_allclose(pair.track.y(x), -a * np.cosh(x / a), rtol=1e-10)
    np.testing.assert_allclose(pair.track.period, period, rtol=1e-10)
    np.testing.assert_allclose(pair.revolution_length, n * period, rtol=1e-10)
    assert pair.lobes == n
    # Slope -sinh(x/a) inside the arch (the kink at the cut-offs is excluded).
    np.testing.assert_allclose(pair.track.slope(x[1:-1]), -np.sinh(x[1:-1] / a), rtol=1e-10, atol=1e-12)
    # The track repeats the arch: sample several periods away.
    np.testing.assert_allclose(pair.track.y(x + 3 * period), -a * np.cosh(x / a), rtol=1e-10)
    # Cusps at the cut-offs, one per vertex, as deep as the circumradius.
    assert len(pair.cusps) == n
    cx = np.sort([c.x_m for c in pair.cusps])
    np.testing.assert_allclose(cx, half + period * np.arange(n), rtol=0, atol=1e-10 * a)
    np.testing.assert_allclose([c.depth_m for c in pair.cusps], a / math.cos(math.pi / n), rtol=1e-10)
    np.testing.assert_allclose(pair.track.y(np.array(cx)), -a / math.cos(math.pi / n), rtol=1e-10)
    # The wheel turns pi/n from the arch top to the cusp.
    th0 = pair.wheel_angle(np.array([0.0]))[0]
    np.testing.assert_allclose(pair.wheel_angle(np.array([half]))[0] - th0, math.pi / n, rtol=1e-10)
    # Inverse map: x = a asinh(tan u) with u the turn from the top.
    u = np.linspace(-0.999, 0.999, 201) * math.pi / n
    np.testing.assert_allclose(pair.axle_x(th0 + u), a * np.arcsinh(np.tan(u)), rtol=1e-10, atol=1e-12 * a)


@pytest.mark.parametrize("n", range(3, 13))
def test_polygon_track_lists_each_kink_once(n):
    # One cusp per period, at the arch cut-off a asinh(tan(pi/n)) (Hall & Wagon 1992); the
    # kinks are positions within one period, so the list holds that one position, once.
    a = 0.3
    pair = rs.track_for(rs.Wheel.polygon(sides=n, apothem=a))
    np.testing.assert_allclose(pair.track.kinks, [a * math.asinh(math.tan(math.pi / n))], rtol=1e-10)


@pytest.mark.parametrize("n", [3, 4, 6])
def test_cusp_is_where_a_vertex_seats(n):
    # At a cusp the vertex is straight below the axle: its wheel-frame angle is the
    # contact angle wheel_angle(x) - pi/2, and its distance is the cusp depth.
    w = rs.Wheel.polygon(sides=n, apothem=0.12)
    pair = rs.track_for(w)
    for c in pair.cusps:
        v = w.vertices[c.vertex]
        np.testing.assert_allclose(np.hypot(*v), c.depth_m, rtol=1e-12)
        contact = pair.wheel_angle(np.array([c.x_m]))[0] - HALF_PI
        for ang in (c.phi_rad, contact):
            d = (math.atan2(v[1], v[0]) - ang + math.pi) % TWO_PI - math.pi
            assert abs(d) < 1e-10


def test_many_vertex_outline_cusps_and_kinks_match_a_brute_force_reference():
    """A 2000-vertex outline: every vertex seats in its own cusp (Hall & Wagon 1992: an edge
    rolls on one arch, a vertex at each arch's end), matched here by a brute-force search
    over all vertices per cusp; the arches' lengths sum to the revolution; and the track's
    kinks are the cusps' positions, each once (an all-pairs scan)."""
    n = 2000
    t = np.linspace(0.0, TWO_PI, n, endpoint=False)
    pts = np.column_stack([0.3 * np.cos(t), 0.2 * np.sin(t) * (1.0 + 0.1 * np.cos(3.0 * t))])
    w = rs.Wheel.outline(pts, axle=(0.05, 0.03), corners="all")  # a 2000-vertex polygon
    pair = rs.track_for(w)
    V = np.asarray(w.vertices)
    ang = np.arctan2(V[:, 1], V[:, 0])
    assert len(pair.cusps) == n
    seen = set()
    for c in pair.cusps:
        j = int(np.argmin(np.abs(np.angle(np.exp(1j * (ang - c.phi_rad))))))  # brute force
        assert c.vertex == j
        seen.add(j)
        assert c.depth_m == pytest.approx(float(np.hypot(*V[j])), rel=1e-12)
        contact = pair.wheel_angle(np.array([c.x_m]))[0] - HALF_PI
        assert abs(np.angle(np.exp(1j * (ang[j] - contact)))) < 1e-9
    assert seen == set(range(n))
    # Arch lengths: an edge at distance d whose ends lie at u0, u1 from its foot rolls
    # d (asinh(tan u1) - asinh(tan u0)) of track (Hall & Wagon 1992).
    W = np.roll(V, -1, axis=0)
    e = W - V
    d = np.abs(V[:, 0] * e[:, 1] - V[:, 1] * e[:, 0]) / np.hypot(e[:, 0], e[:, 1])
    foot = np.arctan2(e[:, 1], e[:, 0]) - HALF_PI
    u0 = np.angle(np.exp(1j * (ang - foot)))
    u1 = np.angle(np.exp(1j * (np.arctan2(W[:, 1], W[:, 0]) - foot)))
    total = float(np.sum(d * (np.arcsinh(np.tan(u1)) - np.arcsinh(np.tan(u0)))))
    assert pair.revolution_length == pytest.approx(total, rel=1e-12)
    # Kinks: brute-force all-pairs deduplication of the cusp positions.
    period = pair.track.period
    ref: list[float] = []
    for xc in sorted(c.x_m % period for c in pair.cusps):
        xc = 0.0 if xc > period * (1 - 1e-9) else xc
        if not any(abs(xc - k) <= 1e-9 * period for k in ref):
            ref.append(xc)
    assert list(pair.track.kinks) == sorted(ref)


def test_off_centre_polygon_arch_lengths():
    """Each edge of a polygon rolls on its own catenary arch.

    An edge from vertex p to q at distance d from the axle, whose foot of perpendicular is at
    angle alpha, is in contact while the turn from the foot u runs from angle(p) - alpha to
    angle(q) - alpha; it covers ``d (asinh(tan u1) - asinh(tan u0))`` of track (Hall & Wagon
    1992) and its arch top is at depth d. Computed here from the vertex coordinates.
    """
    axle = (0.03, -0.05)
    w = rs.Wheel.polygon(sides=5, apothem=0.2, axle=axle)
    v = w.vertices
    total, tops = 0.0, []
    for i in range(len(v)):
        p, q = v[i], v[(i + 1) % len(v)]
        e = q - p
        nrm = np.array([e[1], -e[0]]) / np.linalg.norm(e)
        d = float(p @ nrm)
        alpha = math.atan2(nrm[1], nrm[0])
        u0 = (math.atan2(p[1], p[0]) - alpha + math.pi) % TWO_PI - math.pi
        u1 = (math.atan2(q[1], q[0]) - alpha + math.pi) % TWO_PI - math.pi
        total += d * (math.asinh(math.tan(u1)) - math.asinh(math.tan(u0)))
        if u0 < 0 < u1:
            tops.append(d)
    pair = rs.track_for(w)
    np.testing.assert_allclose(pair.revolution_length, total, rtol=1e-12)
    assert pair.lobes == 1
    x = np.linspace(0.0, pair.revolution_length, 20001)
    y = pair.track.y(x)
    # The highest point of the track is the nearest arch top, at x = 0.
    np.testing.assert_allclose(y.max(), -min(tops), rtol=1e-9)
    np.testing.assert_allclose(pair.track.y(np.array([0.0])), -min(tops), rtol=1e-12)
    assert np.all(y <= -min(tops) * (1 - 1e-12))


# --------------------------------------------------------------- ellipse about a focus


@pytest.mark.parametrize(
    "a,b,side",
    [(0.05, 0.04, 1.0), (0.05, 0.04, -1.0), (0.3, 0.1, 1.0), (1.0, 0.99, -1.0), (2.0, 0.3, 1.0)],
)
def test_ellipse_about_a_focus_rolls_on_a_sine_wave(a, b, side):
    """Ellipse with the axle at a focus: ``y = -(a - c cos(x/b))``, period ``2 pi b``.

    Derivation (Hall & Wagon 1992): about the focus ``r = p/(1 + e cos phi)`` with
    ``p = b^2/a``, ``e = c/a``, phi from the nearer vertex. Then
    ``x = ∫ r dphi = (2p/sqrt(1-e^2)) atan(sqrt((1-e)/(1+e)) tan(phi/2))`` and
    ``2p/sqrt(1-e^2) = 2b``, so ``tan(x/2b) = sqrt((1-e)/(1+e)) tan(phi/2)``; substituting
    ``cos phi = (1-t^2)/(1+t^2)`` gives ``r = a - c cos(x/b)``. x = 0 is the top (least r).
    The solver integrates to 1e-13; 1e-9 relative is the check the track must pass.
    """
    c = math.sqrt(a * a - b * b)
    pair = rs.track_for(rs.Wheel.ellipse(semi_axes=(a, b), axle=(side * c, 0.0)))
    x = np.linspace(-3 * math.pi * b, 3 * math.pi * b, 3001)
    np.testing.assert_allclose(pair.track.y(x), -(a - c * np.cos(x / b)), rtol=1e-9)
    np.testing.assert_allclose(pair.track.slope(x), -(c / b) * np.sin(x / b), rtol=0, atol=1e-9 * c / b)
    np.testing.assert_allclose(pair.track.period, TWO_PI * b, rtol=1e-12)
    np.testing.assert_allclose(pair.revolution_length, TWO_PI * b, rtol=1e-12)
    assert pair.lobes == 1


def test_focus_ellipse_wheel_angle_closed_form():
    """Wheel turn for the focus ellipse: ``tan(phi/2) = sqrt((1+e)/(1-e)) tan(x/2b)``.

    Same derivation as above (Hall & Wagon 1992), inverted; phi is the turn from the pose
    with the nearer vertex down. Measured from the exact vertex pose, so this checks the
    integration whatever the origin: 1e-9 rad and 1e-9 b.
    """
    a, b = 0.05, 0.04
    c = math.sqrt(a * a - b * b)
    e = c / a
    pair = rs.track_for(rs.Wheel.ellipse(semi_axes=(a, b), axle=(c, 0.0)))
    # Nearer vertex at phi = 0 in the wheel frame; it is down when theta = pi/2.
    th_star = nearest_pose(HALF_PI, TWO_PI, float(pair.wheel_angle(np.array([0.0]))[0]))
    x_star = float(pair.axle_x(np.array([th_star]))[0])
    phi = np.linspace(-3.0, 3.0, 1201)
    x = 2 * b * np.arctan2(math.sqrt((1 - e) / (1 + e)) * np.sin(phi / 2), np.cos(phi / 2))
    np.testing.assert_allclose(pair.axle_x(th_star + phi) - x_star, x, rtol=0, atol=1e-9 * b)
    np.testing.assert_allclose(pair.wheel_angle(x_star + x), th_star + phi, rtol=0, atol=1e-9)


# ------------------------------------------------------------- elliptic-integral tracks


@pytest.mark.parametrize("a,b", [(0.05, 0.04), (0.3, 0.1), (1.0, 0.5), (0.1, 0.3)])
def test_centred_ellipse_track_is_an_elliptic_integral_of_the_first_kind(a, b):
    """Centred ellipse: ``x(θ) - x(θ*) = r_min F(θ - θ* | 1 - r_min^2/r_max^2)``.

    About the centre ``r = ab / sqrt(b^2 cos^2 phi + a^2 sin^2 phi)``. For a > b write
    ``b^2 cos^2 + a^2 sin^2 = a^2 (1 - m cos^2 phi)``, ``m = 1 - b^2/a^2``; with
    ``psi = phi - pi/2`` this is ``a^2 (1 - m sin^2 psi)``, so
    ``∫ r dphi = b ∫ dpsi / sqrt(1 - m sin^2 psi) = b F(psi | m)`` (incomplete elliptic
    integral of the first kind, scipy.special.ellipkinc; Abramowitz & Stegun, Handbook of
    Mathematical Functions, 1964, 17.2.7 [memory]). The least radius b touches at
    ``psi = k pi`` and ``F(psi + pi) = F(psi) + 2K``, so from that pose θ*:
    ``x = b F(θ - θ* | m)``. For a < b the roles swap (``a F``, ``m = 1 - a^2/b^2``).
    A revolution is ``4 r_min K(m)`` and the track repeats every half of it.
    """
    rmin, rmax = min(a, b), max(a, b)
    m = 1.0 - (rmin / rmax) ** 2
    pair = rs.track_for(rs.Wheel.ellipse(semi_axes=(a, b)))
    # Least radius along +-y (a > b) or +-x (a < b); down when theta = phi + pi/2.
    th_exact = 0.0 if a > b else HALF_PI
    th_star = nearest_pose(th_exact, math.pi, float(pair.wheel_angle(np.array([0.0]))[0]))
    x_star = float(pair.axle_x(np.array([th_star]))[0])
    d = np.linspace(-7.0, 7.0, 1401)
    x = rmin * ellipkinc(d, m)
    # The solver integrates to ~1e-13; 1e-9 of the size is the required accuracy.
    np.testing.assert_allclose(pair.axle_x(th_star + d) - x_star, x, rtol=1e-9, atol=1e-9 * rmin)
    np.testing.assert_allclose(pair.wheel_angle(x_star + x), th_star + d, rtol=0, atol=1e-9)
    np.testing.assert_allclose(pair.revolution_length, 4 * rmin * ellipk(m), rtol=1e-12)
    np.testing.assert_allclose(pair.track.period, 2 * rmin * ellipk(m), rtol=1e-12)
    assert pair.lobes == 2
    # Table values carry ~1e-13 of the largest radius: 1e-11 relative to the least.
    np.testing.assert_allclose(pair.track.y(np.array([0.0])), -rmin, rtol=1e-11)


@pytest.mark.parametrize(
    "R,axle",
    [(0.2, (0.05, 0.0)), (0.2, (0.0, -0.1)), (0.2, (0.1, 0.12)), (1.0, (0.9, 0.0))],
)
def test_off_centre_circle_track_is_an_elliptic_integral_of_the_second_kind(R, axle):
    """Circle of radius R, axle at distance e from its centre (direction beta to the centre).

    ``r(phi) = e cos(psi) + sqrt(R^2 - e^2 sin^2 psi)``, ``psi = phi - beta`` (law of
    cosines), so ``∫ r dphi = e sin psi + R E(psi | (e/R)^2)`` with E the incomplete
    elliptic integral of the second kind (scipy.special.ellipeinc; Abramowitz & Stegun
    17.2.8 [memory]). The contact angle is ``phi = θ - pi/2``; the least radius R - e touches
    at ``psi = pi``. A revolution is ``4 R E(m)`` (the sine part closes).
    """
    cx, cy = -axle[0], -axle[1]
    e, beta = math.hypot(cx, cy), math.atan2(cy, cx)
    m = (e / R) ** 2
    pair = rs.track_for(rs.Wheel.circle(radius=R, axle=axle))

    def x_of(theta):
        psi = theta - HALF_PI - beta
        return e * np.sin(psi) + R * ellipeinc(psi, m)

    th_star = nearest_pose(beta + 1.5 * math.pi, TWO_PI, float(pair.wheel_angle(np.array([0.0]))[0]))
    x_star = float(pair.axle_x(np.array([th_star]))[0])
    th = th_star + np.linspace(-7.0, 7.0, 1401)
    x = x_of(th) - x_of(th_star)
    np.testing.assert_allclose(pair.axle_x(th) - x_star, x, rtol=1e-9, atol=1e-9 * R)
    np.testing.assert_allclose(pair.wheel_angle(x_star + x), th, rtol=0, atol=1e-9)
    np.testing.assert_allclose(pair.revolution_length, 4 * R * ellipe(m), rtol=1e-12)
    np.testing.assert_allclose(pair.track.y(np.array([0.0])), -(R - e), rtol=1e-11)
    # y = -r at the contact, with r from the law of cosines.
    psi = th - HALF_PI - beta
    r = e * np.cos(psi) + np.sqrt(R * R - (e * np.sin(psi)) ** 2)
    np.testing.assert_allclose(pair.track.y(pair.axle_x(th)), -r, rtol=1e-9)


@pytest.mark.parametrize(
    "wheel,theta_exact,step",
    [
        (rs.Wheel.ellipse(semi_axes=(0.05, 0.04)), 0.0, math.pi),
        (rs.Wheel.ellipse(semi_axes=(0.05, 0.04), axle=(math.sqrt(0.05**2 - 0.04**2), 0.0)), HALF_PI, TWO_PI),
        (rs.Wheel.circle(radius=0.2, axle=(0.05, 0.0)), HALF_PI, TWO_PI),
        (rs.Wheel.circle(radius=1.0, axle=(0.9, 0.0)), HALF_PI, TWO_PI),
        (rs.Wheel.polar("0.3 + 0.05*cos(3*phi)"), math.pi / 3 + HALF_PI, TWO_PI / 3),
    ],
    ids=["centred-ellipse", "focus-ellipse", "circle-e0.25", "circle-e0.9", "polar-trefoil"],
)
def test_track_origin_is_at_the_top(wheel, theta_exact, step):
    # Contract: x = 0 at a highest point of the track, i.e. the least radius straight down.
    # The least radius is known exactly for these shapes (vertex of the ellipse, far side of
    # the circle, trough of the cosine). An origin off by d rad shifts the whole track by
    # about r*d, which the 1e-9-relative closed-form checks cannot absorb: 1e-10 rad.
    pair = rs.track_for(wheel)
    th0 = float(pair.wheel_angle(np.array([0.0]))[0])
    off = th0 - nearest_pose(theta_exact, step, th0)
    assert abs(off) <= 1e-10, f"x = 0 is {off:.3g} rad of wheel turn away from the track's top"


# ------------------------------------------------------ circle with its axle near the rim


def lowest_point(pair, R, e):
    """Deepest contact of an off-centre circle with its axle at (e, 0): centre at (-e, 0).

    The greatest radius R + e points at the centre (phi = pi), which is down at θ = 3pi/2;
    by symmetry it is half a revolution, ``2 R E(m)``, after the top.
    """
    x_top = float(pair.axle_x(np.array([HALF_PI]))[0])
    x_low = float(pair.axle_x(np.array([1.5 * math.pi]))[0])
    np.testing.assert_allclose(x_low - x_top, 2 * R * ellipe((e / R) ** 2), rtol=1e-12)
    return x_low


@pytest.mark.parametrize("ratio", [0.5, 0.9, 0.99, 0.999, 0.9999])
def test_track_curvature_at_the_lowest_point(ratio):
    """Radius of curvature of the track at its lowest point is ``R (R + e) / e``, → 2R.

    Near the deepest contact, ``psi`` small: ``r = (R+e) - psi^2 e (R+e)/(2R) + O(psi^4)``
    and ``x = (R+e) psi + O(psi^3)``, so ``y = -(R+e) + x^2 e / (2R(R+e))``: the track's
    curvature there is ``e / (R (R+e))`` [derived; it is the straight-path Euler-Savary form
    kappa_wheel = kappa_track + cos(phi)/r with kappa_wheel = 1/R, r = R + e, listed in
    REFERENCES.md]. As e → R it tends to 1/(2R); the gap ``R(R-e)/e`` from 2R is what the
    test resolves (5e-5 of 2R at e = 0.9999 R).
    Curvature by a central difference of the slope with h = 1e-3 R: truncation ~ h^2/R^2
    ~ 1e-6 x a shape factor of order 0.1 (measured < 3e-7), table noise in the slope
    ~ 1e-10 / (2h kappa) ~ 1e-7: 2e-6 relative.
    """
    R = 0.2
    e = ratio * R
    pair = rs.track_for(rs.Wheel.circle(radius=R, axle=(e, 0.0)))
    x_low = lowest_point(pair, R, e)
    h = 1e-3 * R
    s = pair.track.slope(np.array([x_low - h, x_low + h]))
    kappa = (s[1] - s[0]) / (2 * h) / (1 + (0.5 * (s[0] + s[1])) ** 2) ** 1.5
    np.testing.assert_allclose(1.0 / kappa, R * (R + e) / e, rtol=2e-6)
    np.testing.assert_allclose(-pair.track.y(np.array([x_low])), R + e, rtol=1e-11)


@pytest.mark.parametrize("ratio", [0.9, 0.99, 0.999, 0.9999])
def test_axle_near_the_rim_tends_to_a_circle_of_twice_the_radius(ratio):
    """As e → R the track tends to semicircles of radius 2R centred on the axle line.

    With ``eps = R - e`` and ``psi`` the contact angle from the centre direction
    (|psi| < pi/2): ``E(psi|m) = sin psi + (1-m)/2 ∫0^psi sin^2/cos + O((1-m)^2)`` and
    ``sqrt(R^2 - e^2 sin^2) = R cos psi + (R^2 - e^2) sin^2 psi / (2R cos psi) + ...``, so the
    track point, measured from the lowest point's x on the axle line, lies at distance
    ``rho = 2R - eps h(psi) + O(eps^2)``, ``h = cos^2 psi - sin psi (ln(sec psi + tan psi) - sin psi)``
    [derived]. In the limit (eps = 0) every contact with |psi| < pi/2 is on the circle of
    radius 2R about the axle-line point above the lowest contact; a revolution is 4R.
    Check on |psi| <= pi/3 that ``|rho - 2R + eps h| <= 2 eps^2 / R``: the constant 2 bounds
    the remainder of the closed form ``x = e sin psi + R E(psi|m)`` there (checked below
    with scipy, not with the solver), so the tolerance shrinks as e → R.
    """
    R = 0.2
    e = ratio * R
    eps = R - e
    m = (e / R) ** 2
    psi = np.linspace(-math.pi / 3, math.pi / 3, 241)
    g = np.log(1 / np.cos(psi) + np.tan(psi)) - np.sin(psi)
    h = np.cos(psi) ** 2 - np.sin(psi) * g
    tol = 2 * eps * eps / R
    # The bound holds for the exact closed form (scipy only).
    xe = e * np.sin(psi) + R * ellipeinc(psi, m)
    ye = -(e * np.cos(psi) + np.sqrt(R * R - (e * np.sin(psi)) ** 2))
    assert np.max(np.abs(np.hypot(xe, ye) - 2 * R + eps * h)) <= tol
    # The solver's track.
    pair = rs.track_for(rs.Wheel.circle(radius=R, axle=(e, 0.0)))
    x_low = lowest_point(pair, R, e)
    th = psi + 1.5 * math.pi  # centre direction phi = pi, contact phi = theta - pi/2
    x = pair.axle_x(th)
    rho = np.hypot(x - x_low, pair.track.y(x))
    np.testing.assert_allclose(rho - 2 * R + eps * h, 0.0, rtol=0, atol=tol)
    np.testing.assert_allclose(pair.revolution_length, 4 * R * ellipe(m), rtol=1e-12)
    assert abs(pair.revolution_length - 4 * R) <= 4 * R * (1 - m) * (1 + abs(math.log(1 - m)))


# --------------------------------------------------------------------- polar formulas


@pytest.mark.parametrize("n", [1, 2, 3, 5])
def test_polar_conic_wheel_rolls_on_a_cosine_wave(n):
    """``r = (D^2 - A^2) / (D + A cos(n theta))`` rolls on ``y = A cos(2 pi x / lambda) - D``.

    With ``lambda = 2 pi sqrt(D^2 - A^2) / n``: from ``dθ = dx / (D - A cos kx)``,
    ``θ = (2/(k sqrt(D^2-A^2))) atan(sqrt((D+A)/(D-A)) tan(kx/2))`` (Gradshteyn & Ryzhik,
    Table of Integrals, 2.553.3 [memory]; or the substitution t = tan(kx/2)). With
    ``k sqrt(D^2-A^2) = n`` this is ``tan(n θ/2) = sqrt((D+A)/(D-A)) tan(kx/2)``, and
    eliminating x gives ``D - A cos kx = (D^2 - A^2)/(D + A cos nθ)`` [derived]. For n = 1
    the wheel is an ellipse about a focus (Hall & Wagon 1992). θ = 0 is the contact straight
    below the axle, phi = θ - pi/2, so the formula is written in phi + pi/2.
    """
    A, lam = 0.02, 0.3
    D = math.sqrt(A * A + (n * lam / TWO_PI) ** 2)
    w = rs.Wheel.polar(f"({D * D - A * A!r}) / ({D!r} + {A!r}*cos({n}*(phi + pi/2)))")
    pair = rs.track_for(w)
    x = np.linspace(-lam, 2 * lam, 3001)
    np.testing.assert_allclose(pair.track.y(x), A * np.cos(TWO_PI * x / lam) - D, rtol=1e-9)
    np.testing.assert_allclose(pair.track.period, lam, rtol=1e-12)
    np.testing.assert_allclose(pair.revolution_length, n * lam, rtol=1e-12)
    assert pair.lobes == n


# --------------------------------------------------------------------------- bad input


def test_track_for_refuses_other_axle_paths(raises_one_line, square_wheel):
    raises_one_line(InputError, ["path", "line", "circle"], rs.track_for, square_wheel, path="circle")


def test_track_for_needs_a_wheel(raises_one_line):
    raises_one_line(InputError, ["wheel", "Wheel"], rs.track_for, "square")


def test_convex_corners_make_valleys_and_reentrant_corners_make_crests():
    """A convex wheel corner rolls into a V of the track (a cusp); a re-entrant corner of a
    star-shaped wheel, where the rim turns inwards, puts a ridge in the track (elementary
    geometry of r = -y: the rim's corner and the track's corner bend the same way)."""
    hexagon = rs.track_for(rs.Wheel.polygon(sides=6, apothem=0.12))
    assert [c.kind for c in hexagon.cusps] == ["valley"] * 6
    ang = np.arange(10) * 2 * np.pi / 10
    r = np.where(np.arange(10) % 2 == 0, 0.2, 0.15)  # tips at 0.2 m, notches at 0.15 m
    star = rs.track_for(rs.Wheel.polygon_from_vertices(np.column_stack([r * np.cos(ang),
                                                                       r * np.sin(ang)])))
    for c in star.cusps:
        assert c.kind == ("valley" if abs(c.depth_m - 0.2) < 1e-9 else "crest")
    assert {c.kind for c in star.cusps} == {"valley", "crest"}


# ------------------------------------------------------------------ rounded corners


def ellipe_beyond_one(phi, m):
    """Incomplete elliptic integral E(phi | m) for m > 1 (with m sin^2 phi <= 1), from scipy's
    m < 1 integrals by the reciprocal-modulus transformation (NIST DLMF 19.7.4, with k^2 = m):
    E(phi, k) = k E(beta, 1/k) - (k^2 - 1)/k F(beta, 1/k), sin(beta) = k sin(phi)."""
    k = math.sqrt(m)
    beta = math.asin(k * math.sin(phi))
    return k * ellipeinc(beta, 1.0 / m) - (m - 1.0) / k * ellipkinc(beta, 1.0 / m)


def rounded_polygon_parts(n, a, rho):
    """A regular n-gon (apothem a) with corners rounded to rho, faces kept at the apothem.

    Each face's flat ends where the ray from the axle turns u_e from the face's foot,
    tan(u_e) = (a - rho) tan(pi/n) / a; the arc about the corner's centre (distance
    D = (a - rho)/cos(pi/n) from the axle) spans psi_e = pi/n - u_e either side of the corner.
    With dx = r dtheta (Hall & Wagon 1992) a flat rolls over 2 a asinh(tan u_e) (r = a sec u),
    an arc over 2 D sin(psi_e) + 2 rho E(psi_e | D^2/rho^2), since there
    r = D cos(psi) + sqrt(rho^2 - D^2 sin^2 psi).
    """
    ue = math.atan((a - rho) * math.tan(math.pi / n) / a)
    D = (a - rho) / math.cos(math.pi / n)
    pe = math.pi / n - ue
    flat = 2 * a * math.asinh(math.tan(ue))
    arc = 2 * D * math.sin(pe) + 2 * rho * ellipe_beyond_one(pe, D * D / (rho * rho))
    return ue, D, flat, arc


@pytest.mark.parametrize("n, a, rho", [(3, 0.2, 0.02), (4, 0.3, 0.006), (4, 0.3, 0.05),
                                       (6, 0.12, 0.01), (8, 0.1, 0.004)])
def test_rounded_polygon_rolls_a_revolution_of_arches_and_arcs(n, a, rho):
    pair = rs.track_for(rs.Wheel.polygon(sides=n, apothem=a, corner_radius=rho))
    _, _, flat, arc = rounded_polygon_parts(n, a, rho)
    # Adaptive Chebyshev tables against the closed form: 1e-12.
    np.testing.assert_allclose(pair.revolution_length, n * (flat + arc), rtol=1e-12)
    np.testing.assert_allclose(pair.track.period, flat + arc, rtol=1e-12)
    assert pair.cusps == ()  # smooth valleys, no corners
    # r = -y straight below the axle, everywhere.
    x = np.linspace(0.0, pair.revolution_length, 2001)
    r = pair.wheel.radius(pair.wheel_angle(x) - math.pi / 2)
    np.testing.assert_allclose(-pair.track.y(x), r, rtol=1e-11)


@pytest.mark.parametrize("n, a, rho", [(4, 0.3, 0.006), (6, 0.12, 0.01)])
def test_rounded_polygon_flats_roll_on_catenaries_and_corners_on_round_valleys(n, a, rho):
    """The flats roll on the same arches as the sharp polygon's, y = -a cosh((x - x_m)/a) with x_m
    under the foot of the face (Hall & Wagon 1992), only shorter. In the valley, with r = -y and
    dtheta/dx = 1/r, y'' = -(r r'' - r'^2)/r^3 (r' = dr/dtheta); at the valley bottom r' = 0 and
    the arc gives r'' = -D (D + rho)/rho, so the valley's radius of curvature is
    rho (D + rho)/D: a little wider than the corner that seats in it (derived)."""
    pair = rs.track_for(rs.Wheel.polygon(sides=n, apothem=a, corner_radius=rho))
    ue, D, flat, arc = rounded_polygon_parts(n, a, rho)
    P = pair.track.period
    # x = 0 is the crest (least radius, a face's foot below the axle).
    u = np.linspace(-0.95, 0.95, 41) * a * math.asinh(math.tan(ue))
    for k in range(n):
        np.testing.assert_allclose(pair.track.y(k * P + u), -a * np.cosh(u / a), rtol=1e-11)
    # Valley bottom halfway between crests: depth D + rho, curvature 1 / (rho (D + rho) / D).
    xv = 0.5 * P
    np.testing.assert_allclose(-pair.track.y(xv), D + rho, rtol=1e-11)
    h = 1e-2 * rho  # central difference: truncation ~ (h/rho)^2/12, rounding ~ 1e-13 |y|/h^2
    ypp = (pair.track.y(xv + h) - 2 * pair.track.y(xv) + pair.track.y(xv - h)) / h**2
    np.testing.assert_allclose(1.0 / ypp, rho * (D + rho) / D, rtol=1e-4)


def test_rounded_corners_limits_and_errors():
    sharp = rs.track_for(rs.Wheel.polygon(sides=5, apothem=0.1))
    tiny = rs.track_for(rs.Wheel.polygon(sides=5, apothem=0.1, corner_radius=1e-7))
    np.testing.assert_allclose(tiny.revolution_length, sharp.revolution_length, rtol=1e-5)
    with pytest.raises(rs.RidesimError, match="too large"):
        rs.Wheel.polygon(sides=4, apothem=0.1, corner_radius=0.1)
    with pytest.raises(rs.RidesimError, match="convex"):
        rs.Wheel.polygon_from_vertices([(0.2, 0.0), (0.0, 0.05), (-0.2, 0.0), (0.0, 0.2)],
                                       axle=(0.0, 0.1), corner_radius=0.01)
    with pytest.raises(rs.RidesimError, match="corner_radius"):
        rs.Wheel.polygon(sides=4, apothem=0.1, corner_radius=-0.01)


# ------------------------------------------------------------- harmonic (Fourier) wheels


def test_harmonic_wheel_without_terms_is_a_circle_on_a_flat_track():
    """``r = r0``: a circle about its centre rolls on a flat track at depth r0, one turn a
    revolution of ``2 pi r0`` (the circumference; Hall & Wagon 1992, ``x = ∫ r dθ``)."""
    r0 = 0.1
    for w in (rs.Wheel.harmonic(r0), rs.Wheel.harmonic(r0, [(2, 0.0, 0.0), (5, 0.0, 0.0)])):
        assert w.is_round
        pair = rs.track_for(w)
        x = np.linspace(-0.5, 0.5, 101)
        np.testing.assert_allclose(pair.track.y(x), -r0, rtol=0, atol=1e-15)
        np.testing.assert_allclose(pair.revolution_length, TWO_PI * r0, rtol=1e-12)


def test_harmonic_wheel_rolls_2_pi_r0_whatever_its_terms():
    """``∫ r dφ = r0 ∫ (1 + Σ a_k cos kφ + b_k sin kφ) dφ = 2 pi r0``: every term integrates
    to zero over a turn, so one revolution rolls ``2 pi r0`` (Hall & Wagon 1992, x = ∫ r dθ),
    and the track's period is that over the symmetry (the gcd of the k, here 1 and 3)."""
    r0 = 0.15
    for terms, sym in (([(3, 0.05, 0.02), (5, -0.01, 0.03)], 1), ([(3, 0.04, -0.03), (6, 0.01, 0.0)], 3)):
        pair = rs.track_for(rs.Wheel.harmonic(r0, terms))
        assert pair.wheel.symmetry == sym
        np.testing.assert_allclose(pair.revolution_length, TWO_PI * r0, rtol=1e-12)
        np.testing.assert_allclose(pair.track.period, TWO_PI * r0 / sym, rtol=1e-12)


@pytest.mark.parametrize("eps", [0.01, 0.02, 0.05])
def test_harmonic_cos_2phi_wheel_track_in_closed_form(eps):
    """``r = r0 (1 + ε cos 2φ)`` in closed form, and its first-order perturbation.

    Measured by the angle s from the least radius (φ = π/2, where x = 0):
    ``r = r0 (1 - ε cos 2s)``, and ``x = ∫ r ds = r0 (s - (ε/2) sin 2s)``, ``y = -r``
    (Hall & Wagon 1992) exactly [derived]. Inverting x(s) to first order,
    ``s = u + (ε/2) sin 2u + O(ε²)`` with ``u = x / r0``, so
    ``y = -r0 (1 - ε cos 2u + ε² sin² 2u) + O(ε³)`` [derived]: the first-order track
    ``-r0 (1 - ε cos(2x/r0))`` is off by ``r0 ε² sin²(2x/r0)`` at most, and the second-order
    one by O(ε³).
    """
    r0 = 0.1
    pair = rs.track_for(rs.Wheel.harmonic(r0, [(2, eps, 0.0)]))
    s = np.linspace(-3.0, 3.0, 2001)
    np.testing.assert_allclose(pair.track.y(r0 * (s - 0.5 * eps * np.sin(2 * s))),
                               -r0 * (1 - eps * np.cos(2 * s)), rtol=0, atol=1e-10 * r0)
    np.testing.assert_allclose(pair.track.period, math.pi * r0, rtol=1e-12)
    u = s
    y = pair.track.y(r0 * u)
    first = -r0 * (1 - eps * np.cos(2 * u))
    second = first - r0 * eps**2 * np.sin(2 * u) ** 2
    off1 = np.max(np.abs(y - first))
    assert 0.99 * r0 * eps**2 <= off1 <= r0 * eps**2 * (1 + eps)  # the ε² term, no more
    assert np.max(np.abs(y - second)) <= r0 * eps**3


def test_harmonic_cos_2phi_wheel_second_order_residual_is_third_order():
    """Halving ε divides what the second-order form of the previous test leaves by 8
    (an O(ε³) residual), within 5 %."""
    r0 = 0.1
    u = np.linspace(-3.0, 3.0, 2001)

    def residual(eps):
        y = rs.track_for(rs.Wheel.harmonic(r0, [(2, eps, 0.0)])).track.y(r0 * u)
        return np.max(np.abs(y + r0 * (1 - eps * np.cos(2 * u) + eps**2 * np.sin(2 * u) ** 2)))

    assert residual(0.02) / residual(0.01) == pytest.approx(8.0, rel=0.05)


def test_harmonic_wheel_matches_the_same_rim_as_listed_points():
    """The rim ``r0 (1 + 0.05 cos 2φ + 0.02 sin 3φ)`` sampled at 720 points and read back as a
    smooth outline (a periodic cubic spline: ``Wheel.outline``, another code path) rolls on the
    same track. The spline's error is ``(5/384) h^4 max|f''''|`` (de Boor, A Practical Guide to
    Splines, 1978 [memory]), about 1e-11 m here for h = 2 pi r0 / 720; 1e-9 m leaves room."""
    r0 = 0.1
    w = rs.Wheel.harmonic(r0, [(2, 0.05, 0.0), (3, 0.0, 0.02)])
    pts = w.outline_points(720)
    a, b = rs.track_for(w), rs.track_for(rs.Wheel.outline(pts, corners="none"))
    x = np.linspace(-0.7, 0.7, 1401)
    np.testing.assert_allclose(b.track.y(x), a.track.y(x), rtol=0, atol=1e-9)
    np.testing.assert_allclose(b.revolution_length, a.revolution_length, rtol=1e-9)

"""Tests of the wheel outlines (ridesim.model.wheel) against closed forms.

Radii are checked against the polar equations of the shapes (elementary analytic
geometry), mass properties against textbook plate formulas, and every validation
path for a one-line message that names the bad field.
"""

import math

import numpy as np
import pytest

import ridesim as rs
from ridesim.errors import FormulaError, GeometryError, InputError

TWO_PI = 2.0 * math.pi
PHI = np.linspace(0.0, TWO_PI, 2001)


def regular_polygon_radius(phi, sides, apothem):
    """Radius of a regular polygon with a face at the bottom, about its centre.

    The face normals point along ``-pi/2 + 2*pi*k/n``; along a ray at angle ``delta``
    from the nearest normal the face is met at ``apothem / cos(delta)`` (elementary
    geometry of a line at distance ``apothem`` from the origin).
    """
    step = TWO_PI / sides
    delta = np.mod(phi + 0.5 * math.pi + 0.5 * step, step) - 0.5 * step
    return apothem / np.cos(delta)


def off_centre_circle_radius(phi, R, centre):
    """Distance from the axle to a circle of radius ``R`` whose centre is at ``centre``.

    The ray ``t*u`` meets the circle where ``t^2 - 2 t (u.c) - K = 0``, ``K = R^2 - |c|^2``
    (law of cosines), so ``t = u.c + sqrt((u.c)^2 + K)``. Where ``u.c < 0`` that sum cancels,
    so there the product of the roots is used instead: ``t = K / (sqrt((u.c)^2 + K) - u.c)``.
    ``K`` itself cancels when the axle is near the rim, so it is formed exactly from the
    given floats (rational arithmetic) and rounded once. Both forms are then accurate to a
    few ulps.
    """
    from fractions import Fraction

    K = float(Fraction(R) ** 2 - Fraction(centre[0]) ** 2 - Fraction(centre[1]) ** 2)
    uc = centre[0] * np.cos(phi) + centre[1] * np.sin(phi)
    root = np.sqrt(uc * uc + K)
    with np.errstate(divide="ignore"):
        short = K / (root - uc)
    return np.where(uc >= 0.0, uc + root, short)


# ---------------------------------------------------------------------------------- radii


@pytest.mark.parametrize("sides", range(3, 13))
def test_regular_polygon_radius_apothem_and_vertices(sides):
    # Regular polygon: circumradius R = a / cos(pi/n), side 2 a tan(pi/n) (elementary
    # geometry, e.g. Coxeter, Introduction to Geometry, 1961, sec. 2.1 [memory]).
    a = 0.3
    w = rs.Wheel.polygon(sides=sides, apothem=a)
    # Exact up to rounding: a/cos of an angle in [-pi/n, pi/n] is a few ulps.
    np.testing.assert_allclose(w.radius(PHI), regular_polygon_radius(PHI, sides, a), rtol=1e-13)
    R = a / math.cos(math.pi / sides)
    np.testing.assert_allclose(np.linalg.norm(w.vertices, axis=1), R, rtol=1e-14)
    edges = np.linalg.norm(np.roll(w.vertices, -1, axis=0) - w.vertices, axis=1)
    np.testing.assert_allclose(edges, 2 * a * math.tan(math.pi / sides), rtol=1e-13)
    # A face is at the bottom: the radius straight down is the apothem.
    np.testing.assert_allclose(w.radius(np.array([-0.5 * math.pi])), a, rtol=1e-15)
    assert w.symmetry == sides
    assert w.is_polygon
    # Kinks are the vertex directions.
    vang = np.sort(np.mod(np.arctan2(w.vertices[:, 1], w.vertices[:, 0]), TWO_PI))
    np.testing.assert_allclose(np.sort(w.kinks), vang, atol=1e-14)


@pytest.mark.parametrize("sides", [3, 4, 6, 9])
def test_polygon_size_parameters_agree(sides):
    # apothem = R cos(pi/n) = s / (2 tan(pi/n)) (elementary geometry [memory]).
    a = 0.12
    R = a / math.cos(math.pi / sides)
    s = 2 * a * math.tan(math.pi / sides)
    ref = rs.Wheel.polygon(sides=sides, apothem=a)
    for w in (rs.Wheel.polygon(sides=sides, circumradius=R), rs.Wheel.polygon(sides=sides, side=s)):
        np.testing.assert_allclose(w.radius(PHI), ref.radius(PHI), rtol=1e-13)
        assert w.params["apothem_m"] == pytest.approx(a, rel=1e-14)


def test_polygon_axle_offset_moves_the_vertices():
    a, axle = 0.3, (0.05, -0.02)
    w = rs.Wheel.polygon(sides=4, apothem=a, axle=axle)
    centred = rs.Wheel.polygon(sides=4, apothem=a)
    np.testing.assert_allclose(w.vertices, centred.vertices - np.array(axle), atol=1e-15)
    np.testing.assert_allclose(w.shape_offset, (-axle[0], -axle[1]), atol=0)
    assert w.symmetry == 1  # an off-centre axle breaks the rotational symmetry


def test_polygon_from_vertices_ray_intersections():
    # Ray t*u meets the edge from p to q at t = (p x q) / (u x (q - p)) (line intersection
    # by Cramer's rule, elementary analytic geometry).
    pts = np.array([(0.0, 0.0), (0.3, 0.05), (0.35, 0.25), (0.1, 0.4), (-0.1, 0.2)])
    axle = np.array([0.1, 0.15])
    w = rs.Wheel.polygon_from_vertices(pts[::-1], axle=axle)  # clockwise input
    v = pts - axle
    ang = np.arctan2(v[:, 1], v[:, 0])
    expected = np.empty_like(PHI)
    for k, phi in enumerate(PHI):
        u = np.array([math.cos(phi), math.sin(phi)])
        for i in range(len(v)):
            p, q = v[i], v[(i + 1) % len(v)]
            t = (p[0] * q[1] - p[1] * q[0]) / (u[0] * (q - p)[1] - u[1] * (q - p)[0])
            # The ray crosses this edge if phi lies between the two vertex angles.
            lo, span = ang[i], (ang[(i + 1) % len(v)] - ang[i]) % TWO_PI
            if (phi - lo) % TWO_PI <= span:
                expected[k] = t
                break
    np.testing.assert_allclose(w.radius(PHI), expected, rtol=1e-12)
    # Stored anticlockwise (positive shoelace area) whatever the input order.
    x, y = w.vertices[:, 0], w.vertices[:, 1]
    assert 0.5 * np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y) > 0


def test_outline_drops_a_repeated_closing_point():
    pts = [(0.0, 0.0), (1.0, 0.0), (1.0, 1.0), (0.0, 1.0), (0.0, 0.0)]
    w = rs.Wheel.outline(pts, axle=(0.5, 0.5))
    assert len(w.vertices) == 4
    assert w.kind == "outline"
    np.testing.assert_allclose(w.radius(np.array([0.0, 0.25 * math.pi])), [0.5, math.sqrt(0.5)],
                               rtol=1e-14)


def test_dense_outline_far_from_the_origin_keeps_its_last_rim_point_and_its_symmetry():
    """9000 points of the three-lobed polar wheel r = 0.1 + 0.02 cos(3 phi), given in a
    drawing frame with the axle at (10, 10) m. The last rim point is one step (about 7e-5 m)
    from the first, less than numpy's default allclose tolerance there (1e-5 of 10 m), but it
    is a real point: dropping it left 8999 points, no 3-fold symmetry, and a track period of a
    whole turn. The wheel's period is the track length of a third of a turn,
    int_0^(2pi/3) r dphi = (2 pi / 3) 0.1 m (the cos(3 phi) term integrates to zero); the
    inscribed polygon is shorter by O(step^2 / r^2) (about 1e-7 relative here: a chord
    replacing an arc of angle h lies within r h^2 / 8 of it)."""
    n, axle = 9000, np.array([10.0, 10.0])
    phi = TWO_PI * np.arange(n) / n
    r = 0.1 + 0.02 * np.cos(3 * phi)
    pts = np.column_stack([r * np.cos(phi), r * np.sin(phi)]) + axle
    # Read as the polygon through the points (every point a corner) and, by default, as the
    # smooth curve through them (no corner: the points turn by 0.04 degrees each).
    poly = rs.Wheel.outline(pts, axle=axle, corners="all")
    assert len(poly.vertices) == n and poly.symmetry == 3
    w = rs.Wheel.outline(pts, axle=axle)
    assert w.params["points"] == n and w.params["corners"] == 0 and w.symmetry == 3
    for wheel in (poly, w):
        pair = rs.track_for(wheel)
        assert pair.lobes == 3
        assert pair.track.period == pytest.approx(TWO_PI / 3 * 0.1, rel=1e-6)
    # A closing point that repeats the first (to 1e-9 m) is still dropped.
    again = np.vstack([pts, pts[:1] + 1e-9])
    assert len(rs.Wheel.outline(again, axle=axle, corners="all").vertices) == n
    assert rs.Wheel.outline(again, axle=axle).params["points"] == n


@pytest.mark.parametrize("a,b", [(0.05, 0.04), (0.3, 0.1), (0.1, 0.3), (1.0, 1.0)])
def test_centred_ellipse_radius(a, b):
    # Polar equation of an ellipse about its centre: r = ab / sqrt(b^2 cos^2 + a^2 sin^2)
    # (standard analytic geometry).
    w = rs.Wheel.ellipse(semi_axes=(a, b))
    expected = a * b / np.sqrt((b * np.cos(PHI)) ** 2 + (a * np.sin(PHI)) ** 2)
    np.testing.assert_allclose(w.radius(PHI), expected, rtol=1e-14)
    assert w.symmetry == (1 if a == b else 2)
    assert w.is_round == (a == b)


@pytest.mark.parametrize("a,b,sign", [(0.05, 0.04, 1.0), (0.05, 0.04, -1.0), (2.0, 0.3, 1.0)])
def test_ellipse_about_a_focus_is_a_conic(a, b, sign):
    # Polar equation of a conic about a focus: r = p / (1 + e cos(phi - phi0)), semi-latus
    # rectum p = b^2/a, eccentricity e = c/a, phi0 the direction of the nearer vertex
    # (standard analytic geometry; Hall & Wagon, "Roads and Wheels", 1992).
    c = math.sqrt(a * a - b * b)
    w = rs.Wheel.ellipse(semi_axes=(a, b), axle=(sign * c, 0.0))
    phi0 = 0.0 if sign > 0 else math.pi
    expected = (b * b / a) / (1.0 + (c / a) * np.cos(PHI - phi0))
    np.testing.assert_allclose(w.radius(PHI), expected, rtol=1e-13)
    rmin, rmax, _ = w.extremes()
    np.testing.assert_allclose([rmin, rmax], [a - c, a + c], rtol=1e-13)
    assert w.symmetry == 1


@pytest.mark.parametrize("ratio", [0.25, 0.9, 0.9999, 1.0 - 1e-6])
def test_off_centre_circle_radius_stays_accurate_near_the_rim(ratio):
    # Law-of-cosines radius (see off_centre_circle_radius). The solver tables refine until
    # the Chebyshev tail of r is below 1e-13 of its scale, so the radius itself must be
    # accurate to better than that; 1e-13 relative leaves hundreds of ulps for rounding.
    R = 0.2
    axle = (ratio * R * math.cos(0.7), ratio * R * math.sin(0.7))
    w = rs.Wheel.circle(radius=R, axle=axle)
    centre = (-axle[0], -axle[1])  # the circle's centre seen from the axle
    np.testing.assert_allclose(w.radius(PHI), off_centre_circle_radius(PHI, R, centre), rtol=1e-13)


def test_polar_formula_radius_and_symmetry():
    w = rs.Wheel.polar("0.3 + 0.05*cos(3*phi)")
    np.testing.assert_allclose(w.radius(PHI), 0.3 + 0.05 * np.cos(3 * PHI), rtol=1e-15)
    assert w.symmetry == 3
    assert not w.is_polygon
    rmin, rmax, phi_min = w.extremes()
    np.testing.assert_allclose([rmin, rmax], [0.25, 0.35], rtol=1e-14)
    np.testing.assert_allclose(np.cos(3 * phi_min), -1.0, atol=1e-12)


@pytest.mark.parametrize(
    "wheel,phi_exact,step",
    [
        # Centred ellipse a > b: least radius b along +-y (period pi).
        (rs.Wheel.ellipse(semi_axes=(0.05, 0.04)), 0.5 * math.pi, math.pi),
        # About the focus at +c: least radius toward the vertex (+a, 0).
        (rs.Wheel.ellipse(semi_axes=(0.05, 0.04), axle=(math.sqrt(0.05**2 - 0.04**2), 0.0)),
         0.0, TWO_PI),
        # Off-centre circle, centre at (-0.05, 0) from the axle: least radius along +x.
        (rs.Wheel.circle(radius=0.2, axle=(0.05, 0.0)), 0.0, TWO_PI),
        # r = 0.3 + 0.05 cos 3 phi: least radius at phi = pi/3 (mod 2pi/3).
        (rs.Wheel.polar("0.3 + 0.05*cos(3*phi)"), math.pi / 3, TWO_PI / 3),
    ],
    ids=["centred-ellipse", "focus-ellipse", "off-centre-circle", "polar-trefoil"],
)
def test_extremes_locates_the_least_radius_precisely(wheel, phi_exact, step):
    # The solved track puts x = 0 where the least radius touches, so its direction fixes the
    # track's origin: an error of d rad moves the origin by r*d. 1e-10 rad keeps the
    # track's closed forms (checked to 1e-9 relative in test_solve_forward) meaningful.
    _, _, phi_min = wheel.extremes()
    off = (phi_min - phi_exact + 0.5 * step) % step - 0.5 * step
    assert abs(off) <= 1e-10, f"least radius found at {phi_min!r}, {off:.3g} rad from the exact one"


def test_polygon_extremes_exact():
    a = 0.3
    w = rs.Wheel.polygon(sides=5, apothem=a)
    rmin, rmax, phi_min = w.extremes()
    np.testing.assert_allclose([rmin, rmax], [a, a / math.cos(math.pi / 5)], rtol=1e-14)
    np.testing.assert_allclose(w.radius(np.array([phi_min])), a, rtol=1e-14)


@pytest.mark.parametrize(
    "wheel,phi,expected",
    [
        (rs.Wheel.polygon(sides=4, apothem=0.3), -0.5 * math.pi, 0.3),
        (rs.Wheel.outline([(0, 0), (1, 0), (1, 1), (0, 1)], axle=(0.5, 0.5)), 0.0, 0.5),
        (rs.Wheel.ellipse(semi_axes=(0.05, 0.04)), 0.0, 0.05),
        (rs.Wheel.polar("0.3 + 0.05*cos(3*phi)"), 0.0, 0.35),
    ],
    ids=["polygon", "outline", "ellipse", "polar"],
)
def test_radius_accepts_a_scalar_angle(wheel, phi, expected):
    # The radius is documented as vectorised and the class example calls it with a float:
    # a scalar angle must give a 0-d result, as numpy ufuncs do.
    r = wheel.radius(phi)
    assert np.ndim(r) == 0
    np.testing.assert_allclose(float(r), expected, rtol=1e-14)


# ----------------------------------------------------------------------- mass properties


def test_square_plate_mass_and_inertia():
    # Square plate of side s about its centre, axis normal to the plate: I = m s^2 / 6
    # (perpendicular-axis theorem on m s^2/12 twice; Meriam & Kraige, Engineering Mechanics:
    # Dynamics, appendix B [memory]). Shoelace sums are exact up to rounding: 1e-12.
    s, t, rho = 0.6, 0.02, 700.0
    mp = rs.Wheel.polygon(sides=4, side=s).mass_properties(thickness_m=t, density_kg_m3=rho)
    m = rho * t * s * s
    np.testing.assert_allclose(mp.area_m2, s * s, rtol=1e-12)
    np.testing.assert_allclose(mp.mass_kg, m, rtol=1e-12)
    np.testing.assert_allclose(mp.inertia_kg_m2, m * s * s / 6, rtol=1e-12)
    np.testing.assert_allclose(mp.com_m, (0.0, 0.0), atol=1e-15)


@pytest.mark.parametrize("sides", [3, 5, 6, 8, 12])
def test_regular_polygon_inertia(sides):
    # Regular n-gon of side s about its centre: I = m s^2 (1 + 3 cot^2(pi/n)) / 24
    # (sum of n isosceles triangles; reduces to m s^2/6 for the square) [memory].
    s, t, rho = 0.1, 0.01, 2700.0
    w = rs.Wheel.polygon(sides=sides, side=s)
    mp = w.mass_properties(thickness_m=t, density_kg_m3=rho)
    area = sides * s * s / (4 * math.tan(math.pi / sides))
    m = rho * t * area
    np.testing.assert_allclose(mp.area_m2, area, rtol=1e-12)
    np.testing.assert_allclose(mp.inertia_kg_m2, m * s * s * (1 + 3 / math.tan(math.pi / sides) ** 2) / 24,
                               rtol=1e-12)


def test_disk_mass_and_inertia():
    # Uniform disk about its centre: I = m R^2 / 2 (Meriam & Kraige, appendix B [memory]).
    # The polar integrals converge to 1e-13 (Gauss-Legendre, doubled until settled): 1e-11.
    R, t, rho = 0.2, 0.01, 7850.0
    mp = rs.Wheel.circle(radius=R).mass_properties(thickness_m=t, density_kg_m3=rho)
    m = rho * t * math.pi * R * R
    np.testing.assert_allclose(mp.mass_kg, m, rtol=1e-11)
    np.testing.assert_allclose(mp.inertia_kg_m2, m * R * R / 2, rtol=1e-11)
    np.testing.assert_allclose(mp.com_m, (0.0, 0.0), atol=1e-14)


def test_centred_ellipse_mass_and_inertia():
    # Elliptic plate about its centre: I = m (a^2 + b^2) / 4, area pi a b (Meriam & Kraige,
    # appendix B [memory]).
    a, b, t, rho = 0.05, 0.04, 0.012, 700.0
    mp = rs.Wheel.ellipse(semi_axes=(a, b)).mass_properties(thickness_m=t, density_kg_m3=rho)
    m = rho * t * math.pi * a * b
    np.testing.assert_allclose(mp.area_m2, math.pi * a * b, rtol=1e-11)
    np.testing.assert_allclose(mp.inertia_kg_m2, m * (a * a + b * b) / 4, rtol=1e-11)


@pytest.mark.parametrize(
    "make,i_cm_per_m,centre_shape",
    [
        # (wheel with the axle at `axle`, I_cm / m, tolerance class)
        (lambda ax: rs.Wheel.polygon(sides=4, side=0.6, axle=ax), 0.6**2 / 6, 1e-12),
        (lambda ax: rs.Wheel.circle(radius=0.2, axle=ax), 0.2**2 / 2, 1e-11),
        (lambda ax: rs.Wheel.ellipse(semi_axes=(0.05, 0.04), axle=ax), (0.05**2 + 0.04**2) / 4, 1e-11),
    ],
    ids=["square", "disk", "ellipse"],
)
def test_parallel_axis_theorem_and_centre_of_mass(make, i_cm_per_m, centre_shape):
    # Parallel-axis theorem I_axle = I_cm + m d^2 (Meriam & Kraige, Dynamics, sec. on
    # moments of inertia [memory]); the centre of mass of a symmetric plate is its centre,
    # which sits at -axle in the axle frame.
    t, rho = 0.01, 1000.0
    for axle in [(0.01, 0.0), (0.0, -0.02), (0.015, 0.012)]:
        mp = make(axle).mass_properties(thickness_m=t, density_kg_m3=rho)
        d2 = axle[0] ** 2 + axle[1] ** 2
        np.testing.assert_allclose(mp.inertia_kg_m2, mp.mass_kg * (i_cm_per_m + d2), rtol=centre_shape)
        np.testing.assert_allclose(mp.com_m, (-axle[0], -axle[1]), rtol=centre_shape, atol=1e-15)


@pytest.mark.parametrize("k", [1, 2, 3, 5])
def test_polar_wheel_area_inertia_and_centroid(k):
    # For r = r0 + eps cos(k phi), integer k >= 1 (derived here):
    #   area = 1/2 int r^2 = pi r0^2 + pi eps^2 / 2        (int cos = 0, int cos^2 = pi)
    #   J    = 1/4 int r^4 = pi r0^4/2 + 3 pi r0^2 eps^2/2 + 3 pi eps^4/16   (int cos^4 = 3pi/4)
    #   x_c  = (1/3 int r^3 cos phi) / area: for k = 1 it is (pi r0^2 eps + pi eps^3/4) / area,
    #   for k >= 2 every term integrates to zero.
    r0, eps, t, rho = 0.3, 0.05, 0.01, 2700.0
    mp = rs.Wheel.polar(f"{r0} + {eps}*cos({k}*phi)").mass_properties(thickness_m=t, density_kg_m3=rho)
    area = math.pi * r0**2 + math.pi * eps**2 / 2
    J = math.pi * r0**4 / 2 + 1.5 * math.pi * r0**2 * eps**2 + 3 * math.pi * eps**4 / 16
    xc = (math.pi * r0**2 * eps + math.pi * eps**3 / 4) / area if k == 1 else 0.0
    np.testing.assert_allclose(mp.area_m2, area, rtol=1e-12)
    np.testing.assert_allclose(mp.mass_kg, rho * t * area, rtol=1e-12)
    np.testing.assert_allclose(mp.inertia_kg_m2, rho * t * J, rtol=1e-12)
    np.testing.assert_allclose(mp.com_m, (xc, 0.0), atol=1e-13 * r0)


# ------------------------------------------------------------------------------ bad input

C_SHAPE = [(0, 0), (1, 0), (1, 0.3), (0.3, 0.3), (0.3, 0.7), (1, 0.7), (1, 1), (0, 1)]


def star_points(tips=5, outer=1.0, inner=0.4):
    ang = 0.5 * math.pi + math.pi * np.arange(2 * tips) / tips
    rad = np.where(np.arange(2 * tips) % 2 == 0, outer, inner)
    return np.column_stack([rad * np.cos(ang), rad * np.sin(ang)])


def test_star_outline_is_accepted_about_its_centre():
    # The kernel of a regular star contains its centre: every ray meets the rim once.
    w = rs.Wheel.outline(star_points())
    np.testing.assert_allclose(w.radius(np.array([0.5 * math.pi])), 1.0, rtol=1e-14)


@pytest.mark.parametrize(
    "points,axle",
    [
        (C_SHAPE, (0.6, 0.5)),            # axle in the notch of a "C"
        (C_SHAPE, (0.15, 0.15)),          # axle inside the "C" but the arms hide edges
        (star_points(), (0.0, 0.8)),      # axle inside a tip of a star
    ],
    ids=["C-notch", "C-corner", "star-tip"],
)
def test_non_star_shaped_outline_is_refused(raises_one_line, points, axle):
    raises_one_line(GeometryError, ["star-shaped", "axle"], rs.Wheel.outline, points, axle=axle)


def test_axle_outside_polygon(raises_one_line):
    raises_one_line(GeometryError, ["axle", "inside"], rs.Wheel.polygon, 4, apothem=0.3, axle=(0.5, 0.0))
    raises_one_line(GeometryError, ["axle"], rs.Wheel.polygon_from_vertices,
                    [(0, 0), (1, 0), (0, 1)], axle=(1.0, 1.0))


@pytest.mark.parametrize("axle", [(0.06, 0.0), (0.05, 0.0), (0.0, -0.04), (0.04, 0.03)])
def test_axle_outside_or_on_ellipse(raises_one_line, axle):
    raises_one_line(GeometryError, ["axle", "inside", "ellipse"], rs.Wheel.ellipse, (0.05, 0.04), axle=axle)


def test_axle_outside_circle(raises_one_line):
    raises_one_line(GeometryError, ["axle", "circle"], rs.Wheel.circle, 0.2, axle=(0.0, 0.2))


@pytest.mark.parametrize("sides", [2, 0, -4, 4.0, True, "4"])
def test_polygon_needs_three_or_more_integer_sides(raises_one_line, sides):
    raises_one_line(InputError, ["sides", ">= 3"], rs.Wheel.polygon, sides, apothem=0.3)


@pytest.mark.parametrize(
    "kwargs",
    [dict(apothem=0.3, side=0.2), dict(apothem=0.3, circumradius=0.4), dict(side=0.2, circumradius=0.4), {}],
)
def test_polygon_needs_exactly_one_size(raises_one_line, kwargs):
    raises_one_line(InputError, ["apothem", "circumradius", "side", "exactly one"], rs.Wheel.polygon, 4,
                    **kwargs)


@pytest.mark.parametrize(
    "call,field",
    [
        (lambda: rs.Wheel.polygon(4, apothem=-0.3), "apothem"),
        (lambda: rs.Wheel.polygon(4, side=0.0), "side"),
        (lambda: rs.Wheel.polygon(4, circumradius=-1.0), "circumradius"),
        (lambda: rs.Wheel.polygon(4, apothem=float("nan")), "apothem"),
        (lambda: rs.Wheel.ellipse((-0.05, 0.04)), r"semi_axes\[0\]"),
        (lambda: rs.Wheel.ellipse((0.05, 0.0)), r"semi_axes\[1\]"),
        (lambda: rs.Wheel.circle(-0.2), "radius"),
        (lambda: rs.Wheel.polygon(4, apothem=0.3).mass_properties(-0.01, 700.0), "thickness_m"),
        (lambda: rs.Wheel.polygon(4, apothem=0.3).mass_properties(0.01, 0.0), "density_kg_m3"),
    ],
)
def test_sizes_must_be_positive(raises_one_line, call, field):
    raises_one_line(InputError, [field, "> 0"], call)


def test_bad_axle_and_point_lists(raises_one_line):
    raises_one_line(InputError, ["axle", r"\[x, y\]"], rs.Wheel.circle, 0.2, axle=(0.0, 0.0, 0.0))
    raises_one_line(InputError, ["semi_axes"], rs.Wheel.ellipse, (0.05,))
    raises_one_line(InputError, ["points", "three"], rs.Wheel.outline, [(0, 0), (1, 0)])
    raises_one_line(InputError, ["vertices", "finite"], rs.Wheel.polygon_from_vertices,
                    [(0, 0), (1, float("inf")), (0, 1)])


def test_polar_formula_must_close(raises_one_line):
    raises_one_line(GeometryError, ["radius_formula", "does not close", "periodic"],
                    rs.Wheel.polar, "0.3 + 0.01*phi")


@pytest.mark.parametrize("formula", ["0.1*cos(phi)", "0.2 - 0.3*sin(2*phi)", "0*phi"])
def test_polar_formula_must_stay_positive(raises_one_line, formula):
    raises_one_line(GeometryError, ["radius_formula", "positive"], rs.Wheel.polar, formula)


def test_polar_formula_syntax_error_is_a_formula_error():
    with pytest.raises(FormulaError):
        rs.Wheel.polar("0.3 + * cos(phi)")


# ------------------------------------------------------------- harmonic (Fourier) wheels


def test_harmonic_wheel_area_by_parseval_and_symmetry_by_its_modes():
    # Area = 1/2 ∫ r² dφ = π r0² (1 + Σ (a_k² + b_k²)/2) by Parseval's identity for the
    # Fourier series r/r0 = 1 + Σ a_k cos kφ + b_k sin kφ (each cos², sin² integrates to π,
    # cross terms to 0). The symmetry is the gcd of the mode numbers: r(φ + 2π/g) = r(φ)
    # exactly when every k present is a multiple of g.
    r0 = 0.2
    terms = [(3, 0.05, -0.02), (6, 0.01, 0.03), (9, 0.0, 0.01)]
    w = rs.Wheel.harmonic(r0, terms)
    assert w.kind == "harmonic" and not w.is_polygon and w.symmetry == 3
    area = math.pi * r0**2 * (1 + sum(a * a + b * b for _, a, b in terms) / 2)
    np.testing.assert_allclose(w.mass_properties(0.01, 1000.0).area_m2, area, rtol=1e-12)
    assert rs.Wheel.harmonic(r0, [(2, 0.1, 0.0), (3, 0.0, 0.05)]).symmetry == 1
    assert rs.Wheel.harmonic(r0, [(4, 0.1, 0.0), (6, 0.0, 0.05)]).symmetry == 2
    assert w.params == {"mean_radius_m": r0, "harmonics": tuple(terms)}


def test_harmonic_wheel_extremes_of_one_term():
    # r = r0 (1 + a cos kφ + b sin kφ) = r0 (1 + hypot(a, b) cos(kφ - atan2(b, a))):
    # least r0 (1 - hypot(a, b)), greatest r0 (1 + hypot(a, b)) (the harmonic-addition
    # identity, elementary trigonometry).
    r0, a, b = 0.1, 0.03, 0.04
    rmin, rmax, phi_min = rs.Wheel.harmonic(r0, [(5, a, b)]).extremes()
    np.testing.assert_allclose([rmin, rmax], [r0 * 0.95, r0 * 1.05], rtol=1e-12)
    np.testing.assert_allclose(math.cos(5 * phi_min - math.atan2(b, a)), -1.0, atol=1e-12)


@pytest.mark.parametrize("terms,where", [
    ([(2, 1.2, 0.0)], r"-0\.02 m at phi = (1\.571|4\.712) rad"),  # r0 (1 - 1.2) at cos 2φ = -1
    ([(2, 1.0, 0.0)], r"0 m at phi"),                              # touches zero
    ([(2, 0.7, 0.0), (4, 0.0, 0.6)], r"falls to -"),               # each alone would do
])
def test_harmonic_wheel_radius_must_stay_positive(raises_one_line, terms, where):
    raises_one_line(GeometryError, ["harmonics", "must stay > 0", where], rs.Wheel.harmonic,
                    0.1, terms)


def test_harmonic_wheel_just_positive_is_accepted():
    # r0 (1 + 0.999 cos 2φ) >= 0.001 r0 > 0: accepted, the least radius where it should be.
    rmin = rs.Wheel.harmonic(0.1, [(2, 0.999, 0.0)]).extremes()[0]
    np.testing.assert_allclose(rmin, 0.1 * 0.001, rtol=1e-9)


@pytest.mark.parametrize("terms,patterns", [
    ([(0, 0.1, 0.0)], [r"harmonics\[0\]\[0\]", "whole number from 1 to 64"]),
    ([(65, 0.1, 0.0)], [r"harmonics\[0\]\[0\]", "1 to 64"]),
    ([(2.0, 0.1, 0.0)], [r"harmonics\[0\]\[0\]", "whole number"]),
    ([(2, 0.1, 0.0), (2, 0.0, 0.1)], [r"harmonics\[1\]", "listed twice"]),
    ([(2, math.nan, 0.0)], [r"harmonics\[0\]\[1\]", "finite"]),
    ([(2, 0.1)], [r"harmonics\[0\]", r"\[k, a_k, b_k\]"]),
    ("2, 0.1, 0", ["harmonics", "list of"]),
])
def test_harmonic_wheel_refuses_bad_terms(raises_one_line, terms, patterns):
    raises_one_line(InputError, patterns, rs.Wheel.harmonic, 0.1, terms)


def test_harmonic_wheel_refuses_a_bad_mean_radius(raises_one_line):
    raises_one_line(InputError, ["mean_radius", "> 0"], rs.Wheel.harmonic, -0.1, [])

"""The pymunk world builder: track geometry, wheel bodies, initial pose.

References: the square wheel's track is a chain of inverted catenaries
``y = -a cosh((x - x_k)/a)`` of period ``2 a asinh(1)`` (Hall & Wagon, "Roads and Wheels",
Mathematics Magazine 65(5):283-301, 1992); a chord of length h across a curve of
curvature kappa stands off it by ``kappa h^2 / 8`` (the sagitta, elementary geometry);
parallel-axis theorem ``I_axle = I_cm + m d^2``; polygon areas by the shoelace formula.
"""

import math

import numpy as np
import pymunk
import pytest

import ridesim as rs
from ridesim.scenario.build import solve_scenario, wheel_mass
from ridesim.scenario.load import load_scenario, scenario_from_dict
from ridesim.sim.world import (
    WorldOptions,
    build_world,
    fan_pieces,
    track_shapes,
    track_vertices,
)

A = 0.3  # square apothem [m]
DEMOS = ["hexagon_trolley", "ellipse_pull_toy", "wave_track_sculpture"]


def square_scenario(**over):
    d = {
        "wheel": {"shape": "polygon", "sides": 4, "apothem_m": A},
        "vehicle": {"body_mass_kg": 10.0, "axles": 2, "wheelbase_m": 2 * A * math.asinh(1.0)},
        "drive": {"mode": "speed", "speed_m_s": 0.5},
        "surface": {"friction": 1.5},
        "run": {"duration_s": 1.0, "settle_s": 0.3},
    }
    for k, v in over.items():
        sec, key = k.split(".")
        d[sec][key] = v
    return scenario_from_dict(d)


def demo(name):
    sc = load_scenario(f"scenarios/{name}.toml")
    pair = solve_scenario(sc)
    return sc, pair, build_world(sc, pair, wheel_mass(sc, pair.wheel))


def catenary_y(x):
    P = 2 * A * math.asinh(1.0)
    u = np.mod(x + 0.5 * P, P) - 0.5 * P
    return -A * np.cosh(u / A)


def test_square_track_vertices_lie_on_the_catenaries_and_chords_meet_the_tolerance():
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=A))
    tol = 1e-5
    xy, err = track_vertices(pair.track, -0.5, 1.5, tol)
    np.testing.assert_allclose(xy[:, 1], catenary_y(xy[:, 0]), rtol=0, atol=1e-12)
    # Independent measure of the chord gap against the closed form, 50 points per chord.
    f = np.linspace(0, 1, 52)[1:-1]
    xm = xy[:-1, 0, None] + f * np.diff(xy[:, 0])[:, None]
    ym = xy[:-1, 1, None] + f * np.diff(xy[:, 1])[:, None]
    gap = np.max(np.abs(catenary_y(xm) - ym))
    # The spacing rule aims each chord's sagitta at the tolerance from discrete curvature;
    # allow 50 % for that estimate. The reported error is the same gap, measured coarser.
    assert gap <= 1.5 * tol
    np.testing.assert_allclose(err, gap, rtol=0.05)
    # Chords never longer than the sagitta rule allows at the least curvature 1/(2a):
    # h <= sqrt(8 tol / kappa_min) (plus the 5 % of a coarse curvature estimate).
    assert np.max(np.diff(xy[:, 0])) <= 1.05 * math.sqrt(8 * tol * 2 * A)


@pytest.mark.parametrize("name", DEMOS + ["square"])
def test_static_shapes_fill_the_ground_below_the_track_and_nothing_above(name):
    if name == "square":
        sc = square_scenario()
        pair = solve_scenario(sc)
        w = build_world(sc, pair, wheel_mass(sc, pair.wheel))
    else:
        sc, pair, w = demo(name)
    space = w.space
    x0 = float(np.mean(w.offsets_m))
    lo, hi = w.x_range_m  # the built stretch of track (it depends on the run's length)
    xs = np.linspace(max(x0 - pair.track.period, lo + 0.01), min(x0 + 2 * pair.track.period, hi - 0.01),
                     701)
    y = pair.track.y(xs)
    flt = pymunk.ShapeFilter(group=99)

    def near(px, py, dist):
        hits = space.point_query((float(px), float(py)), dist, flt)
        return any(h.shape.body.body_type == pymunk.Body.STATIC for h in hits)

    above = [near(x, yy + 5e-5, 0.0) for x, yy in zip(xs, y, strict=True)]
    below = [near(x, yy - 5e-4, 6e-4) for x, yy in zip(xs, y, strict=True)]
    # 50 micrometres above the ideal track is air (the polyline lies on or under it); half a
    # millimetre below, the ground (a block, or a track segment within 0.6 mm) is everywhere:
    # the rounding of hump vertices cuts a few micrometres at most, rho theta^2 / 8.
    assert not any(above)
    assert all(below)


def test_wheel_body_mass_inertia_and_centre_of_mass_follow_parallel_axes():
    sc, pair, w = demo("ellipse_pull_toy")
    mp = wheel_mass(sc, pair.wheel)
    b = w.wheels[0]
    d2 = mp.com_m[0] ** 2 + mp.com_m[1] ** 2
    np.testing.assert_allclose(b.mass, mp.mass_kg, rtol=1e-12)
    np.testing.assert_allclose(b.moment, mp.inertia_kg_m2 - mp.mass_kg * d2, rtol=1e-12)
    np.testing.assert_allclose(tuple(b.center_of_gravity), mp.com_m, atol=1e-15)
    # The focus of a 0.05 x 0.04 m ellipse is sqrt(a^2 - b^2) = 0.03 m from its centre.
    np.testing.assert_allclose(math.hypot(*mp.com_m), 0.03, rtol=1e-9)


@pytest.mark.parametrize("name", DEMOS + ["square"])
def test_wheels_start_on_the_ideal_pose_touching_the_track_and_rolling(name):
    if name == "square":
        sc = square_scenario()
        pair = solve_scenario(sc)
        w = build_world(sc, pair, wheel_mass(sc, pair.wheel))
    else:
        sc, pair, w = demo(name)
    for i, body in enumerate(w.wheels):
        x = float(w.offsets_m[i])
        theta = float(pair.wheel_angle(x))
        np.testing.assert_allclose(tuple(body.position), (x, 0.0), atol=1e-12)
        np.testing.assert_allclose(body.angle, -theta, atol=1e-12)
        # Rim points at their ideal world places: (x, 0) + R(-theta) p.
        p = pair.wheel.outline_points(720)
        c, s = math.cos(-theta), math.sin(-theta)
        world = np.column_stack([x + c * p[:, 0] - s * p[:, 1], s * p[:, 0] + c * p[:, 1]])
        got = np.array([tuple(body.local_to_world(tuple(q))) for q in p])
        np.testing.assert_allclose(got, world, atol=1e-12)
        # The rim touches the track and is nowhere below it (to the polygon tolerances).
        gap = world[:, 1] - pair.track.y(world[:, 0])
        tol = w.track_error_m + w.wheel_error_m + 1e-9
        assert gap.min() > -tol
        assert gap.min() < 10 * tol + 1e-6
        # Rolling without slip: the rim point straight below the axle is at rest.
        r = float(pair.contact_radius(x))
        v = body.velocity_at_world_point((x, -r))
        np.testing.assert_allclose(tuple(v), (0.0, 0.0), atol=1e-12)
        if w.start_speed_m_s > 0:
            np.testing.assert_allclose(tuple(body.velocity_at_world_point((x, 0.0))),
                                       (w.start_speed_m_s, 0.0), atol=1e-12)


def test_rounded_square_keeps_its_faces_at_the_apothem():
    # Corners rounded by r with the vertices pulled in by r: the faces stay at the apothem, so
    # the face-down square's bounding box is exactly [-a, a] x [-a, a].
    sc = square_scenario(**{"wheel.corner_radius_m": 0.005})
    pair = solve_scenario(sc)
    w = build_world(sc, pair, wheel_mass(sc, pair.wheel))
    assert w.corner_radius_m == 0.005 and w.corner_radius_source == "scenario"
    body = pymunk.Body(1.0, 1.0)
    shapes = [s for s in w.space.shapes if s.body is w.wheels[0]]
    assert len(shapes) == 1
    sh = pymunk.Poly(body, shapes[0].get_vertices(), radius=shapes[0].radius)
    bb = sh.cache_bb()
    np.testing.assert_allclose([bb.left, bb.bottom, bb.right, bb.top], [-A, -A, A, A], atol=1e-12)


def test_default_corner_radius_and_its_report():
    sc = square_scenario()
    pair = solve_scenario(sc)
    w = build_world(sc, pair, wheel_mass(sc, pair.wheel))
    assert w.corner_radius_source == "default"
    np.testing.assert_allclose(w.corner_radius_m, 0.02 * A)
    w2 = build_world(sc, pair, wheel_mass(sc, pair.wheel), WorldOptions(corner_radius_m=0.0))
    assert w2.corner_radius_m == 0.0


def test_fan_pieces_tile_the_polygon():
    # Shoelace areas of the sectors add up to the 64-gon's area n a^2 tan(pi/n).
    n, a = 64, 0.15
    v = rs.Wheel.polygon(sides=n, apothem=a).vertices
    pieces = fan_pieces(np.asarray(v), max_edges=8)
    assert len(pieces) >= 8

    def area(p):
        x, y = p[:, 0], p[:, 1]
        return 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))

    np.testing.assert_allclose(sum(area(p) for p in pieces), n * a * a * math.tan(math.pi / n),
                               rtol=1e-12)
    assert all(area(p) > 0 for p in pieces)


def test_track_shapes_on_a_straight_line_make_one_block():
    xy = np.column_stack([np.linspace(0, 1, 11), np.full(11, -0.1)])
    polys, segs = track_shapes(xy, clear_m=0.005, depth_m=0.05, max_radius_m=0.2)
    assert len(polys) == 1 and not segs
    pts, rho = polys[0]
    assert rho == 0.2
    # The block, rounded by rho, has its top face back on y = -0.1.
    body = pymunk.Body(body_type=pymunk.Body.STATIC)
    sh = pymunk.Poly(body, [tuple(p) for p in pts], radius=rho)
    np.testing.assert_allclose(sh.cache_bb().top, -0.1, atol=1e-12)


def _top_at(pts, rho, x):
    """Height [m] of a rounded block's surface at x, from a downward pymunk segment query."""
    body = pymunk.Body(body_type=pymunk.Body.STATIC)
    sh = pymunk.Poly(body, [tuple(p) for p in pts], radius=rho)
    space = pymunk.Space()
    space.add(body, sh)
    hit = space.segment_query_first((x, 1.0), (x, -1.0), 0.0, pymunk.ShapeFilter())
    return float(hit.point.y)


def test_a_sawtooth_peak_stays_sharp_when_marked_as_a_kink():
    """A triangle peak of turn tau rounded by rho loses rho (1/cos(tau/2) - 1) of its height
    (the inset moves the vertex down by rho / cos(tau/2), the rounding raises it by rho:
    elementary geometry); a peak marked as a true kink of the track keeps its height exactly."""
    rise, run = 0.03, 0.075
    x = np.linspace(-2 * run, 2 * run, 17)  # four edges per flank
    y = -0.105 - rise * (1 - np.abs(np.abs(x) / run - 1))
    xy = np.column_stack([x, y])

    def peak_block(polys):
        return [(p, r) for p, r in polys if p[:-2, 0].min() < 0.0 < p[:-2, 0].max()][0]

    polys, _ = track_shapes(xy, clear_m=0.005, depth_m=0.05, max_radius_m=0.2)
    block = peak_block(polys)
    tau = 2 * math.atan(rise / run)
    rho = block[1]
    assert rho > 0
    np.testing.assert_allclose(_top_at(*block, 0.0), -0.105 - rho * (1 / math.cos(tau / 2) - 1),
                               atol=1e-9)
    kink = np.isin(np.arange(17), [0, 4, 8, 12, 16])
    polys, _ = track_shapes(xy, clear_m=0.005, depth_m=0.05, max_radius_m=0.2, kink=kink)
    block = peak_block(polys)
    assert block[1] == 0.0
    # (A ray through the vertex itself may slip past it: probe just beside the peak.)
    np.testing.assert_allclose(_top_at(*block, 1e-7), -0.105 - rise / run * 1e-7, atol=1e-12)


def test_space_is_tuned_for_metres():
    sc = square_scenario()
    pair = solve_scenario(sc)
    w = build_world(sc, pair, wheel_mass(sc, pair.wheel))
    assert w.space.collision_slop == pytest.approx(1e-3)
    assert w.space.iterations == sc.run.iterations
    np.testing.assert_allclose(tuple(w.space.gravity), (0.0, -9.80665))


def test_inset_keeps_vertices_on_straight_runs():
    """Moving a square's edges in by r (half side s) puts its corners at (+-(s - r), +-(s - r))
    and points in the middle of a side at distance s - r from the centre (elementary geometry);
    a vertex between two collinear edges has no mitre and must not turn into NaN."""
    from ridesim.sim.world import _inset_convex

    s, r = 0.2, 0.03
    square = np.array([[s, -s], [s, 0.0], [s, s], [0.0, s], [-s, s], [-s, 0.0], [-s, -s], [0.0, -s]])
    inner = _inset_convex(square, r)
    expected = square * np.where(np.abs(square) > 0, (s - r) / s, 0.0)
    np.testing.assert_allclose(inner, expected, atol=1e-15)

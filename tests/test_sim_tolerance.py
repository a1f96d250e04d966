"""Manufacturing tolerance: the as-built wheel and track, in the model and in the simulation.

Sources of the expected values:

* plane geometry of a rigid wheel on a surface: a circle of radius ``s R`` resting on the
  line drawn for radius ``R`` holds its centre ``(s - 1) R`` above the drawn axle line; a
  rigid wheel on a surface raised by ``delta`` rides ``delta`` higher (Euclid; elementary);
* the as-built axle of a wheel whose rim still rolls ideally sits at ``C + R(-theta) e`` from
  the nominal axle point ``C`` (a rigid-body displacement, elementary kinematics), so its
  height is the nominal one plus ``|e| cos(theta + alpha)``: ``2 |e|`` peak to peak over any
  turn of more than half a revolution (derived in the test);
* a uniform plate: disk ``m = rho t pi R^2``, ``I = m R^2 / 2`` about its centre; rectangle
  ``I = m (a^2 + b^2) / 12`` about its centre; parallel-axis theorem ``I_O = I_G + m d^2``
  (Halliday, Resnick & Walker, "Fundamentals of Physics", chapter on rotation [memory]);
* the sample standard deviation of ``N`` normal draws has standard error ``sigma / sqrt(2N)``
  (large-sample result, e.g. Kendall & Stuart, "The Advanced Theory of Statistics" [memory]);
  the normality of the section draws is checked with scipy's Kolmogorov-Smirnov test.

Every simulation here is at most 2 s at 1 ms.
"""

import dataclasses
import math

import numpy as np
import pytest
import scipy.stats

import ridesim as rs
from ridesim.errors import GeometryError, InputError
from ridesim.jobs.simulate import simulate
from ridesim.metrics import ride
from ridesim.model.tolerance import (
    AsBuilt,
    as_built_mass,
    as_built_outline,
    joint_positions_m,
    track_height_error_m,
)
from ridesim.scenario.build import solve_scenario, wheel_mass
from ridesim.scenario.load import scenario_from_dict
from ridesim.sim.run import PymunkEngine
from ridesim.sim.world import JOINT_RAMP_HALF_M, build_world

R = 0.1  # circle wheel radius [m]
A = 0.3  # square wheel apothem [m]


def circle_scenario(wheel=None, track=None, axles=1, wheelbase=0.0, duration=1.0, speed=0.3):
    d = {
        "wheel": {"shape": "circle", "radius_m": R, **(wheel or {})},
        "vehicle": {"body_mass_kg": 2.0, "axles": axles, "wheelbase_m": wheelbase},
        "drive": {"mode": "speed", "speed_m_s": speed, "max_torque_Nm": 30.0},
        "surface": {"friction": 0.8},
        "run": {"duration_s": duration, "timestep_s": 0.001, "settle_s": 0.2},
    }
    if track is not None:
        d["track"] = dict(track)
    return scenario_from_dict(d)


# ----------------------------------------------------------------------------- 1. scaled circle


@pytest.mark.parametrize("scale", [1.002, 1.01, 0.99])
def test_scaled_circle_rolls_at_s_minus_one_times_r(scale):
    """A circle cut ``s R`` rolling on the flat track drawn for ``R``: axle at ``(s - 1) R``.

    Plane geometry: the centre of a circle resting on a line is its radius above it; the drawn
    line is ``R`` below the nominal axle line. Tolerance 1 micrometre (0.5 % of the smallest
    offset, 0.2 mm): the engine's resting contact overlap, measured on the nominal wheel in
    the same test, is some 30 nanometres, and it is the same for both wheels to within a
    fraction of that.
    """
    nominal = PymunkEngine.from_scenario(circle_scenario()).run()
    eng = PymunkEngine.from_scenario(circle_scenario({"scale": scale}))
    p = eng.run()
    m = ride.settled(p)
    y = p.axle_y_m[m, 0]
    y0 = nominal.axle_y_m[ride.settled(nominal), 0]
    assert abs(float(np.mean(y0))) < 1e-6  # the engine's own overlap on the nominal wheel
    np.testing.assert_allclose(np.mean(y), (scale - 1.0) * R, rtol=0, atol=1e-6)
    np.testing.assert_allclose(np.mean(y) - np.mean(y0), (scale - 1.0) * R, rtol=0, atol=1e-6)
    # A circle on a line does not bounce: peak to peak below a micrometre.
    assert ride.axle_bounce_m(p)[0] < 1e-6
    # The start pose already holds the axle (s - 1) R up (exact circle against the polyline).
    np.testing.assert_allclose(eng.world.as_built["start_lift_m"][0], (scale - 1.0) * R, atol=1e-8)
    # The as-built wheel's radii, plate mass and inertia: s R, s^2 m, s^4 J.
    mp = wheel_mass(circle_scenario(), rs.Wheel.circle(R))
    # (r_min is read off the inscribed polygon: short by at most its chord gap, the world's
    # default polygon tolerance of 1e-5 m for this radius.)
    np.testing.assert_allclose([eng.world.r_min_m, eng.world.r_max_m], scale * R, rtol=0, atol=1.01e-5)
    np.testing.assert_allclose(eng.world.wheel_mass_kg, scale**2 * mp.mass_kg, rtol=1e-12)
    np.testing.assert_allclose(eng.world.wheel_inertia_kg_m2, scale**4 * mp.inertia_kg_m2, rtol=1e-12)


# ----------------------------------------------------------------------------- 2. joint step


@pytest.mark.parametrize("delta", [0.002, 0.005, -0.002])
def test_circle_rides_a_joint_step_up_or_down_by_its_height(delta):
    """A joint step ``delta`` on the flat track: the rigid circle rides ``delta`` higher after it.

    Sections of 0.3 m: section 0 (from x = 0) is as drawn and section 1 (from x = 0.3 m) is
    ``delta`` higher, so crossing the joint at 0.3 m the axle rises by ``delta`` (falls, for
    ``delta < 0``). Plane geometry also says where the climb starts: the circle meets the top
    corner of an up-step (0.5 mm before the joint) when its centre is
    ``sqrt(R^2 - (R - delta)^2)`` before that corner.

    Tolerance on the levels: 2 % of the step. Each level is flat to 1e-15 m; it sits below the
    ideal by the overlap the contact keeps after the wheel lands (the engine pushes out only
    overlaps beyond its 1 mm slop), measured at 0.1 to 10 micrometres here, 0.5 % of the
    smallest step at most.
    """
    sc = circle_scenario(track={"joint_step_m": delta, "section_length_m": 0.3}, duration=2.0)
    eng = PymunkEngine.from_scenario(sc)
    p = eng.run()
    x, y = p.axle_x_m[:, 0], p.axle_y_m[:, 0]
    before = (x > 0.08) & (x < 0.25)
    after = (x > 0.38) & (x < 0.55)
    assert before.sum() > 400 and after.sum() > 400
    tol = 0.02 * abs(delta)
    np.testing.assert_allclose(np.mean(y[before]), 0.0, atol=tol)
    np.testing.assert_allclose(np.mean(y[after]), delta, atol=tol)
    np.testing.assert_allclose(np.mean(y[after]) - np.mean(y[before]), delta, atol=tol)
    assert np.ptp(y[before]) < tol and np.ptp(y[after]) < tol
    if delta > 0:
        # Start of the climb: the axle leaves the lower level (by 1 % of the step) within
        # 2 mm of where the circle meets the step's corner (the corner is rounded by about a
        # millimetre and the wheel is not quite at its ideal speed when it strikes it).
        x_touch = 0.3 - JOINT_RAMP_HALF_M - math.sqrt(R * R - (R - delta) ** 2)
        i = int(np.flatnonzero((x > 0.25) & (y > 0.01 * delta))[0])
        np.testing.assert_allclose(x[i], x_touch, atol=2e-3)
    ab = eng.world.as_built
    assert ab["track_step_max_m"] == pytest.approx(abs(delta), rel=1e-12)
    assert ab["track_joints"] >= 2


# ----------------------------------------------------------------------------- 3. section errors


def test_track_height_error_is_constant_per_section_and_seeded():
    kw = dict(height_error_m=0.001, error_seed=7, joint_step_m=0.0, section_length_m=0.5)
    k = np.arange(-40, 40)
    # Several points in each section: one value per section.
    f = np.array([0.0, 0.25, 0.5, 0.999])
    x = (k[:, None] + f[None, :]) * 0.5
    h = track_height_error_m(x, **kw)
    np.testing.assert_array_equal(h, np.repeat(h[:, :1], len(f), axis=1))
    # Neighbouring sections differ (continuous draws: equal values have probability 0).
    assert np.all(np.diff(h[:, 0]) != 0)
    # Deterministic, whatever stretch is asked for: a sub-range gives the same values.
    np.testing.assert_array_equal(track_height_error_m(x, **kw), h)
    np.testing.assert_array_equal(track_height_error_m(x[50:60], **kw), h[50:60])
    # The documented draw: the first standard normal of default_rng([seed, k + 2**20]).
    ref = np.array([0.001 * np.random.default_rng([7, int(j) + 2**20]).standard_normal() for j in k])
    np.testing.assert_array_equal(h[:, 0], ref)
    # Another seed, another track.
    other = track_height_error_m(x, **{**kw, "error_seed": 8})
    assert not np.allclose(other, h)
    # No error asked: exactly zero.
    np.testing.assert_array_equal(track_height_error_m(x, **{**kw, "height_error_m": 0.0}), 0.0)


def test_track_height_errors_are_normal_with_the_given_standard_deviation():
    """Over N sections the sample standard deviation is sigma within 4 sigma/sqrt(2N).

    The standard error of a normal sample's standard deviation is ``sigma / sqrt(2N)``; four
    of them (2 % at N = 20000) is a false alarm once in 16000 seeds. The mean is zero within
    ``4 sigma / sqrt(N)``, and the Kolmogorov-Smirnov test (scipy) does not reject the normal
    law at the 0.1 % level.
    """
    sigma, L, N = 0.0015, 0.25, 20000
    x = (np.arange(N) - N // 2 + 0.5) * L
    h = track_height_error_m(x, height_error_m=sigma, error_seed=11, joint_step_m=0.0,
                             section_length_m=L)
    np.testing.assert_allclose(np.std(h, ddof=1), sigma, rtol=4 / math.sqrt(2 * N))
    assert abs(float(np.mean(h))) < 4 * sigma / math.sqrt(N)
    assert scipy.stats.kstest(h, scipy.stats.norm(0.0, sigma).cdf).pvalue > 1e-3


def test_joint_steps_alternate_up_and_down():
    L, step = 0.4, 0.002
    joints = joint_positions_m(-2.0, 2.0, L)
    # Joints at k L within the range, both ends included when they fall on one.
    np.testing.assert_allclose(joints, L * np.arange(-5, 6), atol=1e-15)
    np.testing.assert_allclose(joint_positions_m(-0.1, 0.8, L), [0.0, 0.4, 0.8])
    assert len(joint_positions_m(0.1, 0.3, L)) == 0
    kw = dict(height_error_m=0.0, error_seed=0, joint_step_m=step, section_length_m=L)
    d = track_height_error_m(joints + 1e-3, **kw) - track_height_error_m(joints - 1e-3, **kw)
    # Into an odd section the track steps up, into an even one down: +step, -step, ...
    expect = np.where(np.mod(np.round(joints / L).astype(int), 2) == 1, step, -step)
    np.testing.assert_allclose(d, expect, rtol=0, atol=1e-15)
    assert np.all(d[1:] == -d[:-1])
    # With a random error too, the step adds to each odd section's draw.
    both = track_height_error_m(joints + 1e-3, **{**kw, "height_error_m": 0.001, "error_seed": 3})
    rand = track_height_error_m(joints + 1e-3, **{**kw, "height_error_m": 0.001, "error_seed": 3,
                                                 "joint_step_m": 0.0})
    np.testing.assert_allclose(both - rand, step * np.mod(np.round(joints / L), 2), atol=1e-15)


def test_built_track_has_a_short_ramp_at_each_joint_and_section_heights_elsewhere():
    sc = circle_scenario(track={"height_error_m": 0.001, "error_seed": 5, "section_length_m": 0.2},
                         duration=1.0)
    pair = solve_scenario(sc)
    w = build_world(sc, pair, wheel_mass(sc, pair.wheel))
    xy = w.track_xy_m
    ab = AsBuilt.from_scenario(sc)
    # Every node is the drawn track plus its section's height (the flat track y = -R).
    np.testing.assert_allclose(xy[:, 1], -R + ab.track_error_m(xy[:, 0]), rtol=0, atol=1e-15)
    joints = joint_positions_m(xy[0, 0] + JOINT_RAMP_HALF_M, xy[-1, 0] - JOINT_RAMP_HALF_M, 0.2)
    assert len(joints) >= 3 and w.as_built["track_joints"] == len(joints)
    for j in joints:
        # Nodes at j -+ 0.5 mm and none strictly between: the step is one straight ramp.
        assert np.any(np.isclose(xy[:, 0], j - JOINT_RAMP_HALF_M, rtol=0, atol=1e-12))
        assert np.any(np.isclose(xy[:, 0], j + JOINT_RAMP_HALF_M, rtol=0, atol=1e-12))
        inside = np.abs(xy[:, 0] - j) < JOINT_RAMP_HALF_M * (1 - 1e-9)
        assert not np.any(inside)
    # The nominal node spacing (and so the chord gap to the curve) is kept within sections.
    assert np.max(np.diff(xy[:, 0])) <= 0.5 * R + 1e-12


# ----------------------------------------------------------------------------- 4. mass


@pytest.mark.parametrize("scale, e", [(1.002, (0.0, 0.0)), (0.98, (0.001, -0.002)), (1.0, (0.003, 0.004))])
def test_as_built_disk_follows_the_plate_formulas(scale, e):
    """Disk of radius s R: m = rho t pi (s R)^2, I_centre = m (s R)^2 / 2, plus m |e|^2 at the axle."""
    t, rho = 0.012, 700.0
    mp = rs.Wheel.circle(R).mass_properties(t, rho)
    ab = as_built_mass(mp, scale, e)
    m = rho * t * math.pi * (scale * R) ** 2
    np.testing.assert_allclose(ab.mass_kg, m, rtol=1e-12)
    np.testing.assert_allclose(ab.area_m2, math.pi * (scale * R) ** 2, rtol=1e-12)
    np.testing.assert_allclose(ab.com_m, (-e[0], -e[1]), rtol=0, atol=1e-15)
    np.testing.assert_allclose(ab.inertia_kg_m2, m * (scale * R) ** 2 / 2 + m * (e[0] ** 2 + e[1] ** 2),
                               rtol=1e-12)


def test_as_built_rectangle_with_an_off_centre_axle_follows_the_parallel_axis_theorem():
    """Rectangle a x b, nominal axle (u, v) off its centre, scaled by s about that axle.

    The centre moves to s (-u, -v) from the nominal axle, hence s (-u, -v) - e from the
    as-built one; I = m' (s^2 (a^2 + b^2)) / 12 + m' |s (-u, -v) - e|^2 with m' = s^2 m.
    """
    a, b, u, v = 0.4, 0.25, 0.03, -0.02
    s, e = 1.01, (0.002, 0.001)
    t, rho = 0.01, 500.0
    verts = [(-a / 2, -b / 2), (a / 2, -b / 2), (a / 2, b / 2), (-a / 2, b / 2)]
    w = rs.Wheel.polygon_from_vertices(verts, axle=(u, v))
    ab = as_built_mass(w.mass_properties(t, rho), s, e)
    m = rho * t * (s * a) * (s * b)
    c = (-s * u - e[0], -s * v - e[1])
    np.testing.assert_allclose(ab.mass_kg, m, rtol=1e-12)
    np.testing.assert_allclose(ab.com_m, c, rtol=1e-12)
    j_centre = m * s * s * (a * a + b * b) / 12
    np.testing.assert_allclose(ab.inertia_kg_m2, j_centre + m * (c[0] ** 2 + c[1] ** 2), rtol=1e-12)
    # The outline: scaled about the nominal axle, then seen from the hole at nominal + e.
    p = as_built_outline(np.asarray(w.vertices), s, e)
    centre = p.mean(axis=0)  # of a rectangle's corners: its centre
    np.testing.assert_allclose(centre, c, rtol=1e-12)
    np.testing.assert_allclose(np.ptp(p, axis=0), (s * a, s * b), rtol=1e-12)


# ----------------------------------------------------------------------------- 5. axle error


def square_scenario(e):
    return scenario_from_dict({
        "wheel": {"shape": "polygon", "sides": 4, "apothem_m": A, "axle_error_m": list(e)},
        "vehicle": {"body_mass_kg": 10.0, "axles": 1},
        "drive": {"mode": "speed", "speed_m_s": 0.8},
        "surface": {"friction": 1.5},
        "run": {"duration_s": 2.0, "timestep_s": 0.001, "settle_s": 0.3},
    })


@pytest.mark.parametrize("e, full", [((0.001, 0.0), True), ((0.0, 0.001), False)])
def test_square_wheel_axle_error_adds_a_rotating_offset_to_the_axle_path(e, full):
    """Square (apothem 0.3 m) with its hole drilled 1 mm off: the axle path gains 2 |e| of bounce.

    The rim rolls on its track exactly as the nominal one does, so the point that was the
    nominal axle, ``C``, stays on the nominal path; the as-built axle is the rigid-body image
    ``C + R(-theta) e``, of height ``y_C - e_x sin(theta) + e_y cos(theta)``, a sinusoid of
    amplitude ``|e|`` in the wheel angle, spanning ``2 |e|`` peak to peak once the turn covers
    both its extremes. After settling the wheel turns from about 0.8 rad to 4.8 rad (1.7 s at
    0.8 m/s on a 0.3 m apothem): that covers pi/2 and 3 pi/2, the extremes for a horizontal
    error (``full``), but only pi, the lowest point, for a vertical one, whose span is then
    ``|e| (1 + max(cos(theta_start), cos(theta_end)))``, about 1.7 |e|.

    Checks: the simulated axle height less that sinusoid (evaluated at the simulated wheel
    angle) is the nominal path, so its peak-to-peak stays within 1.5 times the nominal run's
    bounce (the engine's own contact noise, 0.22 mm here: 50 % margin for a different
    sequence of contacts); and the bounce is the sinusoid's span within that same noise
    (triangle inequality for peak-to-peak values), ``2 |e|`` for the horizontal error.
    """
    nominal = simulate(square_scenario((0.0, 0.0)))
    r = simulate(square_scenario(e))
    p = r.probes
    m = ride.settled(p)
    th = p.wheel_angle_rad[:, 0]
    assert th[m][0] < 1.2 and th[m][-1] > 4.0  # the turn the docstring reasons on
    offset = -e[0] * np.sin(th) + e[1] * np.cos(th)
    span = float(np.ptp(offset[m]))
    if full:
        np.testing.assert_allclose(span, 2 * math.hypot(*e), rtol=1e-3)
    else:
        top = max(math.cos(th[m][0]), math.cos(th[m][-1]))
        np.testing.assert_allclose(span, math.hypot(*e) * (1 + top), rtol=1e-6)
    noise = nominal.axle_bounce_m
    assert noise < 0.5e-3  # the nominal square rolls level to a fraction of a millimetre
    residual = p.axle_y_m[:, 0] - offset
    assert np.ptp(residual[m]) < 1.5 * noise
    assert abs(r.axle_bounce_m - span) < 1.5 * noise
    assert r.axle_bounce_m - nominal.axle_bounce_m > 1.2 * math.hypot(*e)
    # The start pose is on the ideal roll of the nominal rim: axle at height R(-theta0) e.
    np.testing.assert_allclose(p.axle_y_m[0, 0], offset[0], atol=1e-5)
    assert r.slip_onset_time_s is None and not r.contact_lost


# ----------------------------------------------------------------------------- start pose


def test_two_axle_cart_starts_pitched_onto_sections_of_different_heights():
    """Axles at -+0.2 m over sections -1 (raised by the joint step) and 0: pitch asin(-delta/0.4).

    Plane geometry: each circle rests on its own section, so the axles start at heights
    ``delta`` and 0, and the rigid chassis joining axles 0.4 m apart is pitched by
    ``asin(-delta / 0.4)``. Tolerance 1e-7 m: the start pose is found on an 8192-point circle
    (7 nm chord gap) and is otherwise exact.
    """
    delta = 0.003
    sc = circle_scenario(track={"joint_step_m": delta, "section_length_m": 0.5}, axles=2,
                         wheelbase=0.4, duration=0.3, speed=0.2)
    eng = PymunkEngine.from_scenario(sc)
    w = eng.world
    np.testing.assert_allclose(w.as_built["start_lift_m"], [delta, 0.0], rtol=0, atol=1e-7)
    np.testing.assert_allclose(w.as_built["start_pitch_rad"], math.asin(-delta / 0.4), rtol=1e-6)
    np.testing.assert_allclose(w.chassis.angle, math.asin(-delta / 0.4), rtol=1e-6)
    np.testing.assert_allclose([b.position.y for b in w.wheels], [delta, 0.0], rtol=0, atol=1e-7)
    p = eng.run()
    # Both wheels stay on their sections over the short run, at the same heights (the 1e-6 m
    # resting overlap of the engine, as in the scaled-circle test).
    np.testing.assert_allclose(p.axle_y_m[-100:].mean(axis=0), [delta, 0.0], atol=2e-6)


def test_three_axle_chassis_rests_on_the_two_wheels_that_carry_it():
    """Axles at -0.3, 0 and 0.3 m over a raised section -1 (to x = 0) and section 0 beyond.

    Plane geometry: the rear circle rests on section -1 (height ``delta``), the middle one on
    the top corner of the step down at x = -0.5 mm (height ``delta - (R - sqrt(R^2 - h^2))``,
    h = 0.5 mm), the front one would rest on section 0 (height 0). A rigid chassis with its
    weight at the middle axle rests on the rear and middle wheels (the upper convex hull of the
    needed heights across the middle); the front wheel hangs ``delta`` above its section.
    """
    delta, h = 0.002, JOINT_RAMP_HALF_M
    sc = circle_scenario(track={"joint_step_m": delta, "section_length_m": 0.5}, axles=3,
                         wheelbase=0.3, duration=0.5)
    pair = solve_scenario(sc)
    w = build_world(sc, pair, wheel_mass(sc, pair.wheel))
    corner = delta - (R - math.sqrt(R * R - h * h))
    pitch = math.asin((corner - delta) / 0.3)
    # The start pose is found on an 8192-point circle (chord gap 7 nm): heights to 1e-8 m,
    # the pitch to 2 x 7 nm over 0.3 m, 5e-8 rad.
    np.testing.assert_allclose(w.as_built["start_pitch_rad"], pitch, rtol=0, atol=5e-8)
    y = [b.position.y for b in w.wheels]
    np.testing.assert_allclose(y[:2], [delta, corner], rtol=0, atol=1e-7)
    np.testing.assert_allclose(y[2], corner + 0.3 * math.sin(pitch), rtol=0, atol=1e-7)


# ----------------------------------------------------------------------------- 6. nominal


def _probe_arrays(result):
    return {k: v for k, v in result.probes.columns().items()}


@pytest.mark.parametrize("first", ["wheel", "track"])
def test_explicit_nominal_tolerance_keys_change_nothing(first):
    """A nominal build with every tolerance key given at its default gives the same results.

    The figures are equal; the probe records are equal to the last bit or two (numpy's vector
    reductions can round a sum differently with the memory alignment of its operands: one
    normal force in 600 differed by 1 unit in the last place in one full-suite run, measured).
    """
    common = {
        "vehicle": {"body_mass_kg": 2.0, "axles": 2, "wheelbase_m": 0.3},
        "drive": {"mode": "speed", "speed_m_s": 0.3},
        "surface": {"friction": 0.9},
        "run": {"duration_s": 0.6, "settle_s": 0.2},
    }
    nominal_track = {"height_error_m": 0.0, "error_seed": 4, "joint_step_m": 0.0, "section_length_m": 0.7}
    nominal_wheel = {"scale": 1.0, "axle_error_m": [0.0, 0.0]}
    if first == "wheel":
        base = {"wheel": {"shape": "polygon", "sides": 5, "apothem_m": 0.1}, **common}
        explicit = {**base, "wheel": {**base["wheel"], **nominal_wheel}, "track": nominal_track}
    else:
        base = {"track": {"shape": "wave", "amplitude_m": 0.01, "wavelength_m": 0.2, "lobes": 3}, **common}
        explicit = {**base, "track": {**base["track"], **nominal_track}, "wheel": nominal_wheel}
    sa, sb = scenario_from_dict(base), scenario_from_dict(explicit)
    assert AsBuilt.from_scenario(sb).is_nominal
    a, b = simulate(sa), simulate(sb)
    assert a.to_dict() == b.to_dict()
    pa, pb = _probe_arrays(a), _probe_arrays(b)
    for k in pa:
        np.testing.assert_allclose(pa[k], pb[k], rtol=4 * np.finfo(float).eps, atol=0.0, err_msg=k)


# ----------------------------------------------------------------------------- AsBuilt record


def test_as_built_is_read_from_every_scenario_layout():
    wheel_first = scenario_from_dict({
        "wheel": {"shape": "circle", "radius_m": R, "scale": 1.003, "axle_error_m": [0.001, 0.0]},
        "track": {"height_error_m": 0.002, "error_seed": 9, "joint_step_m": 0.001, "section_length_m": 0.6},
    })
    ab = AsBuilt.from_scenario(wheel_first)
    assert wheel_first.track.shape is None
    assert (ab.scale, ab.axle_error_m) == (1.003, (0.001, 0.0))
    assert (ab.height_error_m, ab.error_seed, ab.joint_step_m, ab.section_length_m) == (0.002, 9, 0.001, 0.6)
    assert not ab.wheel_is_nominal and not ab.track_is_nominal and not ab.is_nominal
    track_first = scenario_from_dict({
        "track": {"shape": "wave", "amplitude_m": 0.01, "wavelength_m": 0.2, "height_error_m": 0.001},
        "wheel": {"scale": 0.999},
    })
    ab = AsBuilt.from_scenario(track_first)
    assert track_first.wheel.shape is None
    assert ab.scale == 0.999 and ab.height_error_m == 0.001 and ab.section_length_m == 1.0
    only_wheel = scenario_from_dict({"wheel": {"shape": "circle", "radius_m": R}})
    assert only_wheel.track is None and AsBuilt.from_scenario(only_wheel) == AsBuilt()
    assert AsBuilt().is_nominal
    # A scenario with neither section set (a bare record) gives the defaults too.
    assert AsBuilt.from_scenario(dataclasses.replace(only_wheel, wheel=None)) == AsBuilt()
    d = AsBuilt.from_scenario(wheel_first).to_dict()
    assert d["axle_error_m"] == [0.001, 0.0] and d["is_nominal"] is False
    assert all(k in ("is_nominal", "scale", "error_seed") or k.endswith("_m") for k in d)


def test_bad_as_built_values_raise_one_line_errors(raises_one_line):
    raises_one_line(InputError, ["scale", "> 0"], AsBuilt, scale=0.0)
    raises_one_line(InputError, ["height_error_m", ">= 0"], AsBuilt, height_error_m=-1e-3)
    raises_one_line(InputError, ["error_seed"], AsBuilt, error_seed=-1)
    raises_one_line(InputError, ["axle_error_m"], AsBuilt, axle_error_m=(0.0, float("nan")))
    raises_one_line(InputError, ["section_length_m", "> 0"], track_height_error_m, [0.0],
                    height_error_m=0.0, error_seed=0, joint_step_m=0.0, section_length_m=0.0)
    # Sections shorter than two joint ramps cannot be built: the scenario refuses them.
    raises_one_line(InputError, ["track.section_length_m", ">= 0.002"], circle_scenario,
                    track={"joint_step_m": 0.001, "section_length_m": 0.001})
    # An axle error larger than the wheel puts the axle outside it.
    sc = circle_scenario({"axle_error_m": [0.15, 0.0]})
    pair = solve_scenario(sc)
    raises_one_line(GeometryError, ["axle_error_m", "outside"], build_world, sc, pair,
                    wheel_mass(sc, pair.wheel))


def test_coupled_mounting_error_bounce_matches_the_quasi_static_estimate():
    """A coupled two-axle hexagon cart with the front wheel mounted 0.02 rad off.

    Two independent code paths: the pymunk world (dynamics, contacts) and the quasi-static
    geometry of ridesim.assess.phasing (each wheel rests at the lowest axle height its turned
    outline allows; the chassis is a rigid beam on them). At 0.4 m/s the cart is slow enough
    for the static picture to hold: agreement within 15 %, and both far above the in-phase
    cart's bounce.
    """
    from ridesim.assess.phasing import cart_phasing
    from ridesim.jobs.simulate import simulate
    from ridesim.scenario.build import solve_scenario
    from ridesim.scenario.load import load_scenario

    sc = load_scenario("scenarios/hexagon_trolley.toml").replace_many(
        {"vehicle.coupled": True, "run.duration_s": 3.0})
    off = sc.replace("vehicle.phase_offsets_rad", [0.0, 0.02])
    sim = simulate(off).to_dict()["axle_bounce_m"]
    est = cart_phasing(solve_scenario(off), off.vehicle, phase_offsets_rad=[0.0, 0.02]).bounce_m
    assert sim == pytest.approx(est, rel=0.15)
    assert simulate(sc).to_dict()["axle_bounce_m"] < 0.1 * est

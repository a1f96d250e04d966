"""The pymunk world of one build: track shapes, wheel bodies, chassis, joints and drive.

Geometry follows the solver's conventions (:mod:`ridesim.solve.pair`): the axle
line is ``y = 0``, the track lies below it, the wheel rolls towards +x turning
clockwise, and a wheel-frame point ``p`` of a wheel at axle position ``x`` with
clockwise rotation ``theta = pair.wheel_angle(x)`` sits at ``(x, 0) + R(-theta) p``.
pymunk measures angles anticlockwise, so a wheel body's ``angle`` is ``-theta``
and its angular velocity is negative when rolling forward.

Units are SI throughout. pymunk's defaults are tuned for pixels and are retuned
here for metres (see :func:`make_space`).

Modelling choices, each stated where it is made:

* planar model, one wheel body per axle (a real axle with a wheel on each side
  is one wheel here: give the pair's mass and inertia, and read torques per axle);
* the track is a polyline whose vertices lie on the ideal curve, spaced so that
  the chord-to-curve gap (sagitta) stays below a tolerance (the measured gap is
  reported). Over humps it becomes a few convex blocks whose hump vertices are
  rounded by nearly the track's least radius of curvature (edges stay in place);
  in troughs and next to sharp cusps it is a chain of linked segments
  (:func:`track_shapes`);
* a smooth wheel is a polygon inscribed in the rim to the same tolerance, with
  every vertex rounded by nearly the rim's least radius of curvature; a circle is
  an exact circle; non-convex outlines are split into convex pieces. Rounding
  matters because a straight edge rolling over a sharp polyline vertex pivots
  with a jolt (its instantaneous centre jumps by an edge length), which shows as
  contact-force noise and a small loss of energy;
* sharp wheel corners are rounded by a small radius with the faces kept in
  place (a sharp corner can catch the next arch and vault at high friction);
  the rounded corner cannot reach the bottom of a cusp, so the wheel dips there
  by about ``kappa r^2 / (2 cos(phi))`` for track curvature ``kappa`` and flank
  slope angle ``phi`` at the cusp [derived; 42 micrometres for a 6 mm radius on
  a 0.3 m square, against 41.9 from an exact placement of the rounded square];
* the chassis is a rigid body without collision shapes, joined to each wheel
  by a pivot at the axle; a one-axle vehicle's body is held level (as by a pull
  handle or guide rail), since nothing else would stop it turning about the axle;
* each drive shaft is a motor constraint between chassis and wheel (the motor
  sits on the chassis, so its reaction acts on the body): a shaft-speed servo
  (``shaft_speed``), a saturated motor giving a set torque (``torque``), or a
  torque set every step by the ground-speed controller of
  :mod:`ridesim.sim.run` (``speed``), all within ``max_torque_Nm``;
* an as-built build (:class:`ridesim.model.tolerance.AsBuilt`: wheel scale and
  axle error, track section heights and joint steps) changes the geometry and
  the wheel's mass properties before any shape is made; each joint step is a
  1 mm ramp (:data:`JOINT_RAMP_HALF_M`), and the vehicle starts with each wheel
  just touching the as-built track (:func:`outline_clearance_m`). A nominal
  build takes none of these paths.

:func:`build_world` builds the parts in order, each in its own module:
:mod:`ridesim.sim.world_track` (track polyline and shapes),
:mod:`ridesim.sim.world_wheels` (outline, corners, convex pieces, start pose,
wheel bodies), :mod:`ridesim.sim.world_chassis` (masses, chassis, pitch hold,
coupling gears, rolling resistance) and :mod:`ridesim.sim.world_drive` (the
drive motors). Their public names are re-exported here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pymunk

from ridesim.errors import InputError
from ridesim.model.tolerance import AsBuilt
from ridesim.records import record
from ridesim.sim.budget import check_simulation_budget
from ridesim.sim.world_chassis import (
    add_chassis,
    add_pitch_hold_and_gears,
    add_rolling_resistance,
    vehicle_masses,
)
from ridesim.sim.world_drive import Drive, add_drive
from ridesim.sim.world_track import (
    JOINT_RAMP_HALF_M,
    add_track,
    as_built_track_vertices,
    track_shapes,
    track_vertices,
    travel_bounds_m,
)
from ridesim.sim.world_wheels import (
    DEFAULT_CORNER_RADIUS_FRACTION,
    _corner_radius,
    _inset_convex,  # noqa: E402,F401  (re-exported for its tests)
    add_wheels,
    collision_pieces,
    fan_pieces,
    outline_clearance_m,
    round_corners,
    start_pose,
    wheel_as_built,
    wheel_outline,
    wheel_pieces,
)

__all__ = [
    "WorldOptions",
    "World",
    "Drive",
    "DEFAULT_CORNER_RADIUS_FRACTION",
    "TRACK_TOLERANCE_FRACTION",
    "STANDARD_GRAVITY_M_S2",
    "make_space",
    "track_vertices",
    "wheel_outline",
    "round_corners",
    "fan_pieces",
    "wheel_pieces",
    "build_world",
    "track_shapes",
    "travel_bounds_m",
    "JOINT_RAMP_HALF_M",
    "as_built_track_vertices",
    "outline_clearance_m",
]

STANDARD_GRAVITY_M_S2 = 9.80665
"""Standard gravity [m/s^2] (CGPM 1901 conventional value)."""


TRACK_TOLERANCE_FRACTION = 1e-5
"""Default largest gap between the track polyline and the ideal track, as a fraction of the least
wheel radius (clipped to 0.2 to 1 micrometre).

A chord is shorter than the arc it spans by ``kappa^2 h^3 / 24``, so a polyline whose chords
stand ``tol`` off a curve of curvature ``kappa`` is shorter than it by the fraction
``kappa tol / 3`` [derived]. A wheel rolling on it without slip covers less rim per period than
the ideal pair and falls behind its track: measured on a square wheel (apothem 0.15 m, corners
rounded 3 mm, track fitted to them) at 1e-5 m, the wheel lost 0.1 to 0.2 mrad per half
revolution, its corners then struck the next arch early and the phase error grew (10 mrad and
1.5 mm of bounce after 8 s at 2 rad/s; 0.33 rad and 36 mm after 25 s at 0.5 rad/s). At 1e-6 m it
kept its phase within 0.4 mrad over two revolutions. The smaller gap costs about 10 % in
step rate (most track pieces are convex blocks of many edges).
"""

SLOP_M = 1e-3
"""Allowed contact overlap [m]: pymunk's default 0.1 means 10 cm at metre scale."""




@record
class WorldOptions:
    """Build settings that the scenario file does not hold.

    Attributes
    ----------
    grade_rad : float
        Track grade [rad]: gravity is turned by this angle so that the level model
        track behaves as a track tilted downhill towards +x (positive) or uphill
        (negative). Mechanically identical to tilting the track itself.
    gravity_m_s2 : float
        Magnitude of gravity [m/s^2].
    track_tolerance_m : float or None
        Largest gap [m] between the track polyline and the ideal curve; None: the
        default rule ``clip(1e-5 * least radius, 2e-7, 1e-6)`` (see :data:`TRACK_TOLERANCE_FRACTION`).
    wheel_tolerance_m : float or None
        Largest gap [m] between a smooth wheel's polygon and its rim; None: the rule
        ``clip(1e-4 * least radius, 2e-6, 1e-5)``. Unlike the track's, it was left alone: finer
        wheels gave no consistent gain. On the wave sculpture 3e-6 and 1e-6 m halved the
        phase drift (0.8 to 0.3-0.4 mrad in 6 s, bounce 0.075 to 0.03 mm); on the five-lobed
        wheel of the creep tests 3e-6 m made it worse (0.4 to 1.6 mrad in 8 s, 0.05 to
        0.12 mm); at 1e-6 m a smooth wheel meets the 720-vertex cap of :func:`wheel_outline`,
        whose evenly spaced vertices ran the ellipse toy 2.7 times slower.
    corner_radius_m : float or None
        Corner radius [m] overriding the scenario's ``wheel.corner_radius_m``; None: use
        the scenario's value when > 0, else :data:`DEFAULT_CORNER_RADIUS_FRACTION` of
        the least rim radius.
    collision_slop_m : float
        Allowed contact overlap [m] before position correction acts.
    travel_m : tuple of float or None
        ``(backward, forward)`` axle travel [m] the track must cover; None: estimated
        from the drive and duration (:func:`travel_bounds_m`).
    """

    grade_rad: float = 0.0
    gravity_m_s2: float = STANDARD_GRAVITY_M_S2
    track_tolerance_m: float | None = None
    wheel_tolerance_m: float | None = None
    corner_radius_m: float | None = None
    collision_slop_m: float = SLOP_M
    travel_m: tuple[float, float] | None = None



@dataclass
class World:
    """A built pymunk world and the facts the stepper and the probes need.

    Attributes
    ----------
    space : pymunk.Space
        The space, with every body, shape and constraint added.
    chassis : pymunk.Body
        The vehicle body (origin midway between first and last axle, on the axle line).
    wheels : list of pymunk.Body
        One wheel body per axle, rear to front; body origin at the axle.
    drive : Drive
        Motors and their shafts.
    offsets_m : ndarray
        Chassis-frame x [m] of each axle.
    seat_m : tuple of float
        Seat point [m] in the chassis frame.
    track_xy_m : ndarray, shape (M, 2)
        Track polyline vertices [m] actually used.
    track_error_m : float
        Largest measured gap [m] between the polyline and the ideal track.
    wheel_outline_m : ndarray, shape (K, 2)
        Wheel polygon [m] in the axle frame, as built (before corner rounding).
    wheel_error_m : float
        Largest measured gap [m] between the wheel polygon and the rim (0 for polygon wheels).
    wheel_pieces : int
        Number of convex collision pieces per wheel.
    corner_radius_m : float
        Corner radius [m] used (0 when the wheel has no sharp corners).
    corner_radius_source : str
        ``scenario``, ``option``, ``default`` or ``none``.
    wheel_mass_kg, wheel_inertia_kg_m2 : float
        Mass [kg] and inertia about the axle [kg m^2] of one wheel.
    wheel_com_m : tuple of float
        Wheel centre of mass [m] from the axle, wheel frame.
    body_mass_kg, body_inertia_kg_m2 : float
        Chassis mass [kg] and inertia about its centre of mass [kg m^2].
    body_inertia_estimated : bool
        True when the chassis inertia was estimated (not given).
    r_min_m, r_max_m : float
        Least and greatest rim radius [m] of the wheel as built (about its as-built axle).
    x_range_m : tuple of float
        Track start and end [m].
    r_mean_m : float
        Mean rolling radius [m]: axle travel per revolution over 2 pi.
    effective_mass_kg : float
        Vehicle mass [kg] plus each wheel's inertia about its axle over ``r_mean^2``.
    start_speed_m_s : float
        Ground speed [m/s] at t = 0.
    rolling_torque_Nm : float
        Rolling-resistance torque [N m] applied to each wheel (0: none).
    pitch_held : bool
        True when the chassis is held level (one-axle vehicle).
    gravity_m_s2 : tuple of float
        Gravity vector [m/s^2] used.
    as_built : dict
        Manufacturing errors applied (:meth:`ridesim.model.tolerance.AsBuilt.to_dict`, with
        ``is_nominal``) and, for an as-built build, what they did: ``track_joints`` (joints
        built), ``track_step_max_m`` (largest joint step), ``start_lift_m`` (per axle: height
        of the start pose above the nominal one) and ``start_pitch_rad``.
    """

    space: pymunk.Space
    chassis: pymunk.Body
    wheels: list
    drive: Drive
    offsets_m: np.ndarray
    seat_m: tuple[float, float]
    track_xy_m: np.ndarray
    track_error_m: float
    wheel_outline_m: np.ndarray
    wheel_error_m: float
    wheel_pieces: int
    corner_radius_m: float
    corner_radius_source: str
    wheel_mass_kg: float
    wheel_inertia_kg_m2: float
    wheel_com_m: tuple[float, float]
    body_mass_kg: float
    body_inertia_kg_m2: float
    body_inertia_estimated: bool
    r_min_m: float
    r_max_m: float
    x_range_m: tuple[float, float]
    r_mean_m: float
    effective_mass_kg: float
    start_speed_m_s: float
    rolling_torque_Nm: float
    pitch_held: bool
    gravity_m_s2: tuple[float, float]
    as_built: dict = field(default_factory=dict)


# ----------------------------------------------------------------------------- space


def make_space(iterations: int, gravity_m_s2: tuple[float, float], slop_m: float = SLOP_M) -> pymunk.Space:
    """A pymunk space retuned for metres.

    Parameters
    ----------
    iterations : int
        Constraint solver iterations per step (``run.iterations``).
    gravity_m_s2 : pair of float
        Gravity vector [m/s^2], e.g. ``(0, -9.80665)``.
    slop_m : float
        Allowed contact overlap [m]. pymunk's default of 0.1 is tuned for pixels and
        would switch off position correction for overlaps below 10 cm; about 1 mm keeps
        wheels within a fraction of a millimetre of the track.

    Returns
    -------
    pymunk.Space
    """
    space = pymunk.Space()
    space.iterations = int(iterations)
    space.gravity = (float(gravity_m_s2[0]), float(gravity_m_s2[1]))
    space.collision_slop = float(slop_m)
    # collision_bias is a fraction of overlap left per second: unit-free, default kept.
    # Arbiters of pairs no longer touching are dropped at once, so that every arbiter the
    # probes read belongs to a contact of the step just taken (the default keeps them 3 steps).
    space.collision_persistence = 1
    space.damping = 1.0  # no artificial velocity damping
    return space



def build_world(scenario, pair, mass, options: WorldOptions | None = None) -> World:
    """Build the pymunk world of a scenario and its solved pair, posed on the ideal roll.

    The scenario's manufacturing errors (:class:`ridesim.model.tolerance.AsBuilt`) are
    applied to the wheel outline, its mass properties and the track; the wheels of an
    as-built build start just touching the as-built track.

    Parameters
    ----------
    scenario : Scenario
        Validated scenario (vehicle, drive, surface and run sections are used).
    pair : RollingPair
        The solved pair (``ridesim.scenario.build.solve_scenario``).
    mass : MassProperties
        Mass properties of one nominal wheel (``ridesim.scenario.build.wheel_mass``).
    options : WorldOptions, optional
        Settings not in the scenario (grade, tolerances, corner radius override).

    Returns
    -------
    World
    """
    opt = options or WorldOptions()
    veh, run = scenario.vehicle, scenario.run
    wheel = pair.wheel
    r_min, r_max, _ = wheel.extremes()
    ab = AsBuilt.from_scenario(scenario)
    gmag = float(opt.gravity_m_s2)
    grav = (gmag * math.sin(opt.grade_rad), -gmag * math.cos(opt.grade_rad))
    space = make_space(run.iterations, grav, opt.collision_slop_m)

    tol = opt.track_tolerance_m
    if tol is None:
        tol = min(max(TRACK_TOLERANCE_FRACTION * r_min, 2e-7), 1e-6)
    wtol = opt.wheel_tolerance_m
    if wtol is None:
        wtol = min(max(1e-4 * r_min, 2e-6), 1e-5)
    if not (tol > 0 and wtol > 0):
        raise InputError(f"track/wheel tolerance must be > 0 m, got {tol!r}, {wtol!r}")

    # --- wheel outline (pure geometry; shapes are made below) and masses
    v, werr, corner, k_rim, mass, r_lo, r_hi = wheel_as_built(wheel, wtol, ab, mass, r_min, r_max)
    masses = vehicle_masses(veh, mass, r_hi)
    offsets, n_ax = masses.offsets_m, int(veh.axles)

    # --- track
    if opt.travel_m is not None:
        back, fwd = (float(opt.travel_m[0]), float(opt.travel_m[1]))
    else:
        back, fwd = travel_bounds_m(scenario, r_lo, r_hi, masses.total_kg, opt.grade_rad, gmag)
    x_lo = float(offsets[0]) - r_hi - back - 0.1 * r_hi
    x_hi = float(offsets[-1]) + r_hi + fwd + 0.1 * r_hi
    # Nearly straight stretches may use segments up to half the least radius long. The work
    # is estimated from one period before the whole reach is built (refused over budget).
    x_p = float(pair.track.pieces()[0][0])
    one, _ = track_vertices(pair.track, x_p, x_p + float(pair.track.period), tol, 0.5 * r_min)
    check_simulation_budget(scenario, pair.track, x_lo, x_hi, max(len(one) - 1, 1), r_min)
    # Track shapes need the corner radius: wheel corners meet the track at its valleys.
    cr_guess = _corner_radius(scenario, opt, r_min)
    clear = max(3.0 * cr_guess, 5.0 * opt.collision_slop_m)
    # Nearly straight stretches may use segments up to half the least radius long.
    xy, terr, joints = add_track(space, pair, ab, x_lo, x_hi, tol, clear, r_min, r_max)

    # --- wheel geometry
    pieces, poly_r, cr, src, circle = collision_pieces(scenario, opt, wheel, v, corner, k_rim,
                                                       cr_guess, wtol)

    # --- bodies, posed on the ideal roll (or just on an as-built track)
    v0, pose = start_pose(scenario, pair, ab, offsets, v, corner, cr, xy, circle)
    chassis = add_chassis(space, masses, pose, v0)
    wheels = add_wheels(space, scenario, pair, ab, masses, pose, v0, chassis, pieces, poly_r, circle)
    pitch_held = add_pitch_hold_and_gears(space, veh, chassis, wheels)

    # --- rolling resistance
    rr_torque = add_rolling_resistance(space, pair, ab, scenario.surface, masses.total_kg, gmag,
                                       chassis, wheels)

    # --- drive
    drive = add_drive(space, scenario, chassis, wheels)

    # --- what the stepper and the probes need
    m_w, j_axle, com = masses.wheel_kg, masses.wheel_axle_kg_m2, masses.wheel_com_m
    total_mass = masses.total_kg
    wheel_ab = not ab.wheel_is_nominal
    rev = pair.revolution_length * ab.scale if wheel_ab else pair.revolution_length
    as_built = ab.to_dict()
    if pose is not None:
        steps = np.zeros(0)
        if joints is not None and len(joints):
            h = JOINT_RAMP_HALF_M
            steps = ab.track_error_m(joints + h) - ab.track_error_m(joints - h)
        as_built.update({
            "track_joints": int(len(steps)),
            "track_step_max_m": float(np.max(np.abs(steps), initial=0.0)),
            "start_lift_m": [float(y) for y in pose[1]],
            "start_pitch_rad": float(pose[4]),
        })

    return World(
        space=space, chassis=chassis, wheels=wheels, drive=drive, offsets_m=masses.offsets_m,
        seat_m=(float(veh.seat_m[0]), float(veh.seat_m[1])), track_xy_m=xy, track_error_m=terr,
        wheel_outline_m=v, wheel_error_m=0.0 if circle else werr,
        wheel_pieces=1 if circle else len(pieces), corner_radius_m=cr,
        corner_radius_source=src, wheel_mass_kg=m_w, wheel_inertia_kg_m2=j_axle, wheel_com_m=com,
        body_mass_kg=masses.body_kg, body_inertia_kg_m2=masses.body_kg_m2,
        body_inertia_estimated=masses.body_inertia_estimated,
        r_min_m=float(r_lo), r_max_m=float(r_hi), x_range_m=(x_lo, x_hi),
        r_mean_m=rev / (2 * math.pi),
        effective_mass_kg=total_mass + n_ax * j_axle * (2 * math.pi / rev) ** 2,
        start_speed_m_s=v0,
        rolling_torque_Nm=rr_torque, pitch_held=pitch_held, gravity_m_s2=grav, as_built=as_built,
    )

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
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pymunk
import pymunk.autogeometry

from ridesim.errors import GeometryError, InputError
from ridesim.model.tolerance import AsBuilt, joint_positions_m
from ridesim.model.vehicle import axle_offsets_m
from ridesim.sim.budget import check_simulation_budget

__all__ = [
    "WorldOptions",
    "World",
    "Drive",
    "DEFAULT_CORNER_RADIUS_FRACTION",
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

DEFAULT_CORNER_RADIUS_FRACTION = 0.02
"""Corner radius used when the scenario gives none, as a fraction of the least rim radius.

A sawn or milled plywood or steel edge is rarely sharper than a millimetre or two (common
practice). Measured here: with 1 % (3 mm on a square of apothem 0.3 m) the leading corner
still caught the next arch at friction 1.5 to 3 (slip bursts, up to 1.3 mm of bounce and
the drive at its torque limit); with 2 % (6 mm) no catching at friction up to 3, on square,
pentagon and hexagon wheels. The price is the dip at each cusp, about
``kappa r^2 / (2 cos(phi))``: 42 micrometres for the 0.3 m square (see the module notes).
"""

TRACK_MAX_TURN_RAD = math.radians(2.0)
"""Largest turn [rad] of the track from one polyline edge to the next within a smooth stretch.

Where the track bends tightly (the valley in which a rounded wheel corner seats, a few
millimetres across) the chord tolerance alone leaves facets of 10 degrees and more; a
rounded corner rolling through such a faceted valley hops from facet to facet (1 to 3 mm
of bounce measured on squares and hexagons with corners of 0.5 to 1 % of the apothem)."""

SLOP_M = 1e-3
"""Allowed contact overlap [m]: pymunk's default 0.1 means 10 cm at metre scale."""

JOINT_RAMP_HALF_M = 5e-4
"""Half-width [m] of the ramp that stands for a step at an as-built track joint.

A step is built as a straight ramp from ``joint - 0.5 mm`` to ``joint + 0.5 mm`` (track nodes
are put at both ends and none in between but the track's own kinks), so that it stays a short
steep rise rather than a slope smeared over a chord of the nominal track (up to half the least
wheel radius long where the track is nearly straight).
"""

_VEHICLE_GROUP = 1  # shape filter group: vehicle shapes never collide with each other
_HUGE_RATE_RAD_S = 1e6  # torque-mode motor target: never reached, so the motor stays saturated


@dataclass(frozen=True)
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
        default rule ``clip(1e-4 * least radius, 2e-6, 1e-5)``.
    wheel_tolerance_m : float or None
        Largest gap [m] between a smooth wheel's polygon and its rim; None: as the track.
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
class Drive:
    """How the wheels are driven in the built world.

    Attributes
    ----------
    mode : str
        ``speed``, ``shaft_speed`` or ``torque``.
    motors : list of pymunk.SimpleMotor
        One motor per drive shaft (chassis is body ``a``, wheel body ``b``).
    shaft_axles : list of tuple of int
        Axles turned by each shaft (several when the axles are coupled).
    motor_axle : list of int
        Axle whose wheel each motor acts on.
    max_torque_Nm : float
        Motor torque limit [N m] per shaft.
    """

    mode: str
    motors: list = field(default_factory=list)
    shaft_axles: list = field(default_factory=list)
    motor_axle: list = field(default_factory=list)
    max_torque_Nm: float = 0.0


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


# ----------------------------------------------------------------------------- polylines


def _sagitta_positions(s: np.ndarray, kappa: np.ndarray, tol_m: float, max_seg_m: float,
                       min_seg: int, max_turn_rad: float = np.inf) -> np.ndarray:
    """Arc-length positions of vertices so that each chord's sagitta is about ``tol_m``.

    A chord of length ``h`` across a curve of curvature ``kappa`` stands off it by
    ``kappa h^2 / 8``; the vertex density per unit length is therefore
    ``sqrt(kappa / (8 tol))``, floored at ``1 / max_seg_m`` and, with ``max_turn_rad``, at
    ``kappa / max_turn_rad`` (no chord turns the curve by more than that).
    """
    dens = np.maximum(np.sqrt(np.abs(kappa) / (8.0 * tol_m)), 1.0 / max_seg_m)
    if np.isfinite(max_turn_rad):
        dens = np.maximum(dens, np.abs(kappa) / max_turn_rad)
    ds = np.diff(s)
    cum = np.concatenate(([0.0], np.cumsum(0.5 * (dens[1:] + dens[:-1]) * ds)))
    n = max(min_seg, int(math.ceil(cum[-1])))
    return np.interp(np.linspace(0.0, cum[-1], n + 1), cum, s)


def _discrete_curvature(p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Arc length [m] and curvature [1/m] of an open dense polyline ``p`` (N, 2)."""
    d = np.diff(p, axis=0)
    h = np.hypot(d[:, 0], d[:, 1])
    s = np.concatenate(([0.0], np.cumsum(h)))
    ang = np.unwrap(np.arctan2(d[:, 1], d[:, 0]))
    turn = np.abs(np.diff(ang)) / (0.5 * (h[1:] + h[:-1]))
    kappa = np.empty(len(p))
    kappa[1:-1] = turn
    kappa[0] = turn[0] if len(turn) else 0.0
    kappa[-1] = turn[-1] if len(turn) else 0.0
    return s, kappa


def track_vertices(track, x_lo: float, x_hi: float, tol_m: float,
                   max_seg_m: float | None = None) -> tuple[np.ndarray, float]:
    """Polyline vertices on the track from ``x_lo`` to ``x_hi`` with chord gap about ``tol_m``.

    One period is discretised (kinks kept as vertices, spacing from the local
    curvature) and repeated, so every period is cut identically.

    Parameters
    ----------
    track : ridesim.model.track.Track
        The track rolled on (``y < 0``).
    x_lo, x_hi : float
        Range [m] to cover.
    tol_m : float
        Target largest gap [m] between a chord and the curve.
    max_seg_m : float, optional
        Longest segment [m] (where the track is nearly straight); default a quarter period.

    Returns
    -------
    xy : ndarray, shape (M, 2)
        Vertices [m], x increasing; the ends lie at or beyond the range.
    error_m : float
        Largest gap [m] between the polyline and the track, measured at 8 points per chord
        over one period.
    """
    P = float(track.period)
    dense_n = 4096
    base = []
    max_seg = 0.25 * P if max_seg_m is None else float(max_seg_m)
    for a, b in track.pieces():
        xd = np.linspace(a, b, max(64, int(dense_n * (b - a) / P)))
        pts = np.column_stack([xd, track.y(xd)])
        s, kappa = _discrete_curvature(pts)
        sv = _sagitta_positions(s, kappa, tol_m, max_seg, 1, TRACK_MAX_TURN_RAD)
        base.append(np.interp(sv, s, xd)[:-1])
    xb = np.concatenate(base)
    x0 = float(track.pieces()[0][0])
    m0 = math.floor((x_lo - x0) / P) - 1
    m1 = math.ceil((x_hi - x0) / P) + 1
    xs = (xb[None, :] + P * np.arange(m0, m1 + 1)[:, None]).ravel()
    i0 = max(int(np.searchsorted(xs, x_lo, side="right")) - 1, 0)
    i1 = min(int(np.searchsorted(xs, x_hi, side="left")) + 1, len(xs))
    xs = xs[i0:i1]
    xy = np.column_stack([xs, track.y(xs)])
    # Measured gap over one period's worth of chords (all periods are identical).
    xper = xb + x0
    xper = np.concatenate([xper, [x0 + P]])
    yper = track.y(xper)
    f = np.linspace(0.0, 1.0, 9)[1:-1]
    xm = xper[:-1, None] + f[None, :] * np.diff(xper)[:, None]
    ym = yper[:-1, None] + f[None, :] * np.diff(yper)[:, None]
    err = float(np.max(np.abs(track.y(xm) - ym)))
    return xy, err


def wheel_outline(wheel, tol_m: float, max_vertices: int = 720) -> tuple[np.ndarray, float, np.ndarray]:
    """The wheel as a polygon in the axle frame, anticlockwise.

    Parameters
    ----------
    wheel : ridesim.model.wheel.Wheel
        The wheel.
    tol_m : float
        Largest gap [m] between a chord and the rim for smooth wheels.
    max_vertices : int
        Cap on the vertex count of a smooth wheel.

    Returns
    -------
    vertices : ndarray, shape (K, 2)
        Polygon vertices [m].
    error_m : float
        Largest measured gap [m] between the polygon and the rim (0 for polygon wheels).
    corner : ndarray of bool, shape (K,)
        True at vertices that are true corners of the rim (polygon vertices, kinks); for a
        rounded polygon, its sharp polygon's vertices (to be rounded by its corner radius).
    curvature_max : float
        Largest rim curvature [1/m] away from kinks (inf for polygon wheels).
    """
    if wheel.is_polygon or wheel.rounding is not None:
        # A rounded polygon is exact in pymunk as its sharp polygon with every corner rounded
        # (its corner radius is applied to the collision pieces, see build_world): no facets.
        v = np.array(wheel.vertices if wheel.is_polygon else wheel.rounding[0], dtype=float)
        return v, 0.0, np.ones(len(v), dtype=bool), np.inf
    kinks = np.array(sorted(wheel.kinks), dtype=float)
    if len(kinks):
        starts = kinks
        ends = np.concatenate([kinks[1:], [kinks[0] + 2 * math.pi]])
    else:
        starts, ends = np.array([0.0]), np.array([2 * math.pi])
    phis = []
    k_max = 0.0
    # Chords at most 5 % of the least radius even where the rim is nearly straight: where the
    # rim bends inwards its polygon has inward corners, which the rounding below cannot smooth,
    # and a track hump rolling under such a corner jumps by its turn times the hump's radius.
    max_seg = 0.05 * float(np.min(wheel.radius(np.linspace(0.0, 2 * math.pi, 721))))
    for a, b in zip(starts, ends, strict=True):
        ph = np.linspace(a, b, max(64, int(8192 * (b - a) / (2 * math.pi))))
        r = wheel.radius(ph)
        pts = np.column_stack([r * np.cos(ph), r * np.sin(ph)])
        s, kappa = _discrete_curvature(pts)
        k_max = max(k_max, float(np.max(kappa[1:-1])))
        sv = _sagitta_positions(s, kappa, tol_m, max_seg, 4)
        phis.append(np.interp(sv, s, ph)[:-1])
    phi = np.concatenate(phis)
    if len(phi) > max_vertices:
        phi = np.linspace(0.0, 2 * math.pi, max_vertices, endpoint=False)
        if len(kinks):
            phi = np.unique(np.concatenate([phi, kinks]))
    corner = np.zeros(len(phi), dtype=bool)
    if len(kinks):
        corner[np.isin(phi, kinks)] = True
    r = wheel.radius(phi)
    v = np.column_stack([r * np.cos(phi), r * np.sin(phi)])
    pc = np.concatenate([phi, [phi[0] + 2 * math.pi]])
    f = np.linspace(0.0, 1.0, 9)[1:-1]
    pm = pc[:-1, None] + f[None, :] * np.diff(pc)[:, None]
    rm = wheel.radius(pm)
    # Distance from each rim point to its chord.
    a, b = v, np.roll(v, -1, axis=0)
    e = b - a
    rim = np.stack([rm * np.cos(pm), rm * np.sin(pm)], axis=-1)
    cross = e[:, None, 0] * (rim[..., 1] - a[:, None, 1]) - e[:, None, 1] * (rim[..., 0] - a[:, None, 0])
    err = float(np.max(np.abs(cross) / np.hypot(e[:, 0], e[:, 1])[:, None]))
    return v, err, corner, k_max


def _is_convex(v: np.ndarray) -> bool:
    e = np.roll(v, -1, axis=0) - v
    cross = e[:, 0] * np.roll(e[:, 1], -1) - e[:, 1] * np.roll(e[:, 0], -1)
    return bool(np.all(cross > -1e-15 * float(np.max(np.abs(v))) ** 2))


def _inset_convex(v: np.ndarray, r: float) -> np.ndarray:
    """Vertices of a polygon (anticlockwise) whose edges are moved inwards by ``r`` [m], mitred.

    Rounding the inset polygon by ``r`` (``Poly(..., radius=r)``) puts its faces back
    exactly where the original faces were, with corners rounded by ``r``.
    """
    nxt = np.roll(v, -1, axis=0)
    e = nxt - v
    L = np.hypot(e[:, 0], e[:, 1])
    nrm = np.column_stack([e[:, 1], -e[:, 0]]) / L[:, None]  # outward for anticlockwise
    c = (v * nrm).sum(axis=1) - r  # offset lines n . p = c
    n0, c0 = np.roll(nrm, 1, axis=0), np.roll(c, 1)  # previous edge
    det = n0[:, 0] * nrm[:, 1] - n0[:, 1] * nrm[:, 0]
    # A vertex between two collinear edges (on a flat of a rounded polygon) has no mitre: it
    # moves in along the common normal.
    flat = np.abs(det) <= 1e-12
    safe = np.where(flat, 1.0, det)
    x = np.where(flat, v[:, 0] - r * nrm[:, 0], (c0 * nrm[:, 1] - c * n0[:, 1]) / safe)
    y = np.where(flat, v[:, 1] - r * nrm[:, 1], (n0[:, 0] * c - nrm[:, 0] * c0) / safe)
    return np.column_stack([x, y])


def round_corners(v: np.ndarray, corner: np.ndarray, r: float, points: int = 6) -> np.ndarray:
    """Round the convex corners of a closed anticlockwise polygon by about ``r`` [m].

    Each convex corner flagged in ``corner`` is replaced by a quadratic Bezier curve
    tangent to both adjacent edges at distance ``r tan(tau/2)`` from the corner (``tau``
    the turning angle), close to a circular arc of radius ``r``; concave corners are left.

    Parameters
    ----------
    v : ndarray, shape (K, 2)
        Vertices [m], anticlockwise.
    corner : ndarray of bool, shape (K,)
        Which vertices to round.
    r : float
        Corner radius [m].
    points : int
        Points replacing each rounded corner.

    Returns
    -------
    ndarray, shape (K', 2)
    """
    out = []
    k = len(v)
    t = np.linspace(0.0, 1.0, points)
    for i in range(k):
        p, a, b = v[i], v[i - 1], v[(i + 1) % k]
        d1, d2 = p - a, b - p
        l1, l2 = float(np.hypot(*d1)), float(np.hypot(*d2))
        cross = d1[0] * d2[1] - d1[1] * d2[0]
        if not corner[i] or cross <= 0 or r <= 0:
            out.append(p[None, :])
            continue
        tau = math.atan2(cross, float(np.dot(d1, d2)))
        cut = min(r * math.tan(0.5 * tau), 0.45 * l1, 0.45 * l2)
        p0 = p - d1 / l1 * cut
        p2 = p + d2 / l2 * cut
        q = ((1 - t) ** 2)[:, None] * p0 + (2 * (1 - t) * t)[:, None] * p + (t**2)[:, None] * p2
        out.append(q)
    return np.concatenate(out)


def fan_pieces(v: np.ndarray, max_span_rad: float = math.pi / 4, max_edges: int = 16) -> list[np.ndarray]:
    """Split a convex polygon into convex fan sectors about its centroid.

    Each sector is the centroid plus a run of consecutive vertices spanning at most
    ``max_span_rad`` about it and ``max_edges`` edges; a polygon of at most ``max_edges``
    vertices is kept whole. One body made of sectors collides exactly like the whole
    polygon, but each sector's bounding box is small, so only the sectors near the track
    are tested against the track pieces under them (collision cost grows with the track
    pieces inside each shape's bounding box).

    Parameters
    ----------
    v : ndarray, shape (K, 2)
        Convex polygon [m], anticlockwise.
    max_span_rad : float
        Largest angle [rad] one sector may span about the centroid.
    max_edges : int
        Largest number of rim edges per sector.

    Returns
    -------
    list of ndarray
        Sector vertex lists [m] (the centroid first).
    """
    k = len(v)
    if k <= max_edges:
        return [np.array(v, dtype=float)]
    x, y = v[:, 0], v[:, 1]
    xn, yn = np.roll(x, -1), np.roll(y, -1)
    c = x * yn - xn * y
    area = 0.5 * c.sum()
    ctr = np.array([((x + xn) * c).sum() / (6 * area), ((y + yn) * c).sum() / (6 * area)])
    rel = v - ctr
    ang = np.unwrap(np.arctan2(rel[:, 1], rel[:, 0]))
    ang = np.concatenate([ang, [ang[0] + 2 * math.pi]])
    n_sec = max(int(math.ceil(2 * math.pi / max_span_rad - 1e-9)), int(math.ceil(k / max_edges)), 1)
    bounds = [0]
    for j in range(1, n_sec):
        target = ang[0] + 2 * math.pi * j / n_sec
        b = int(np.argmin(np.abs(ang[:k] - target)))
        if b > bounds[-1]:
            bounds.append(b)
    bounds.append(k)
    out = []
    for a, b in zip(bounds[:-1], bounds[1:], strict=True):
        idx = [i % k for i in range(a, b + 1)]
        out.append(np.vstack([ctr, v[idx]]))
    return out


def wheel_pieces(v: np.ndarray, corner: np.ndarray, corner_radius_m: float,
                 tol_m: float, smooth_radius_m: float = 0.0) -> tuple[list[np.ndarray], float]:
    """Convex collision pieces of a wheel polygon and the rounding radius of each piece.

    Parameters
    ----------
    v : ndarray, shape (K, 2)
        Wheel polygon [m] in the axle frame, anticlockwise.
    corner : ndarray of bool
        True corners of the rim (to be rounded).
    corner_radius_m : float
        Corner radius [m] (0: sharp).
    tol_m : float
        Tolerance [m] of the convex decomposition of a non-convex outline.
    smooth_radius_m : float
        For a smooth rim given as a fine polygon (no true corners): every vertex is rounded by
        this radius [m], pieces built on the polygon moved inwards by it, so that the faces stay
        in place and the vertices become arcs close to the rim's own curvature. A polygon rolling
        on a line pivots about each vertex in turn and jolts at every change of pivot; the
        arcs leave only short straight remainders of the chords. Keep it below the least radius
        of curvature of the rim.

    Returns
    -------
    pieces : list of ndarray
        Convex vertex lists [m].
    radius_m : float
        ``Poly`` rounding radius [m] to give every piece.
    """
    r = float(corner_radius_m)
    if smooth_radius_m > 0 and not np.any(corner):
        rw = float(smooth_radius_m)
        inner = _inset_convex(v, rw)  # mitred inset (edge lines moved in by rw); any star shape
        if _is_convex(v):
            return fan_pieces(inner), rw
        line = [tuple(p) for p in inner] + [tuple(inner[0])]
        hulls = pymunk.autogeometry.convex_decomposition(line, float(tol_m))
        return [np.array([tuple(q) for q in h], dtype=float) for h in hulls], rw
    if _is_convex(v):
        if r > 0 and np.any(corner):
            inner = _inset_convex(v, r)
            if not _is_convex(inner):
                raise GeometryError(
                    f"wheel.corner_radius_m = {r:g} m is too large for this wheel's faces;"
                    " use a smaller radius"
                )
            # Rounding each piece by r rounds their union by r: (A + D) u (B + D) = (A u B) + D.
            return fan_pieces(inner), r
        return fan_pieces(v), 0.0
    rounded = round_corners(v, corner, r) if r > 0 else v
    line = [tuple(p) for p in rounded] + [tuple(rounded[0])]
    hulls = pymunk.autogeometry.convex_decomposition(line, float(tol_m))
    pieces = [np.array([tuple(q) for q in h], dtype=float) for h in hulls]
    return pieces, 0.0


# ----------------------------------------------------------------------------- as built


def as_built_track_vertices(xy: np.ndarray, track, as_built: AsBuilt,
                            ramp_half_m: float = JOINT_RAMP_HALF_M) -> tuple[np.ndarray, np.ndarray]:
    """Track polyline of the as-built track: section heights added, a short ramp at each joint.

    Nodes are put at ``joint -+ ramp_half_m`` on the nominal curve, the nominal nodes strictly
    between them are dropped (the track's kinks excepted), and every node is raised by its
    section's height error (:meth:`ridesim.model.tolerance.AsBuilt.track_error_m`). Within a
    section the as-built track is the nominal one shifted by a constant, so each chord keeps
    its gap to the (shifted) curve: the polyline error budget is unchanged outside the ramps.

    Parameters
    ----------
    xy : ndarray, shape (M, 2)
        Nominal polyline vertices [m], x increasing (:func:`track_vertices`).
    track : ridesim.model.track.Track
        The nominal track (for heights at the new nodes and its kinks).
    as_built : AsBuilt
        The track errors.
    ramp_half_m : float
        Half-width [m] of each joint ramp.

    Returns
    -------
    xy : ndarray, shape (M', 2)
        As-built vertices [m].
    joints_x_m : ndarray
        The joints [m] built (those whose ramp lies within the polyline).
    """
    L = float(as_built.section_length_m)
    h = float(ramp_half_m)
    if L < 4.0 * h:
        raise InputError(
            f"track.section_length_m = {L:g} m is too short: each joint is built as a"
            f" {2e3 * h:g} mm ramp, so sections must be at least {4e3 * h:g} mm long;"
            " lengthen section_length_m"
        )
    x = xy[:, 0]
    joints = joint_positions_m(float(x[0]) + h, float(x[-1]) - h, L)
    keep = np.ones(len(x), dtype=bool)
    if len(joints):
        jj = np.searchsorted(joints, x)
        near = np.minimum(np.abs(x - joints[np.clip(jj - 1, 0, len(joints) - 1)]),
                          np.abs(x - joints[np.clip(jj, 0, len(joints) - 1)]))
        keep = near >= h
        kinks = np.asarray(track.kinks, dtype=float)
        if len(kinks) and not np.all(keep):
            P = float(track.period)
            d = np.mod(x[:, None] - kinks[None, :] + 0.5 * P, P) - 0.5 * P
            keep |= np.any(np.abs(d) <= 1e-9 * P, axis=1)
    xs = np.concatenate([x[keep], joints - h, joints + h])
    ys = np.concatenate([xy[keep, 1], track.y(joints - h), track.y(joints + h)])
    xs, first = np.unique(xs, return_index=True)
    ys = ys[first] + as_built.track_error_m(xs)
    return np.column_stack([xs, ys]), joints


def outline_clearance_m(outline_m: np.ndarray, track_xy_m: np.ndarray, x_m, y_m, theta_rad) -> np.ndarray:
    """Least vertical gap [m] between posed wheel outlines and a track polyline (< 0: overlap).

    The vertical distance between two piecewise-linear curves is piecewise linear in x with
    its breaks at the vertices of either, so its least value is found exactly at the outline's
    vertices (against the track) and at the track's nodes under the wheel (against the
    outline's lowest crossing at that x).

    Parameters
    ----------
    outline_m : ndarray, shape (K, 2)
        Closed outline [m] about the axle, wheel frame.
    track_xy_m : ndarray, shape (M, 2)
        Track polyline [m], x increasing.
    x_m, y_m : array_like, shape (A,)
        Axle positions [m].
    theta_rad : array_like, shape (A,)
        Clockwise wheel rotations [rad]: a wheel-frame point ``p`` is at ``(x, y) + R(-theta) p``.

    Returns
    -------
    ndarray, shape (A,)
        Least gap [m] per pose.
    """
    x = np.atleast_1d(np.asarray(x_m, dtype=float))
    y = np.atleast_1d(np.asarray(y_m, dtype=float))
    th = np.atleast_1d(np.asarray(theta_rad, dtype=float))
    ox, oy = outline_m[:, 0], outline_m[:, 1]
    tx, ty = track_xy_m[:, 0], track_xy_m[:, 1]
    c, s = np.cos(th)[:, None], np.sin(th)[:, None]
    px = x[:, None] + c * ox + s * oy
    py = y[:, None] - s * ox + c * oy
    gap = (py - np.interp(px, tx, ty)).min(axis=1)
    for i in range(len(x)):
        ax_, ay_ = px[i], py[i]
        bx_, by_ = np.roll(ax_, -1), np.roll(ay_, -1)
        sel = (tx >= ax_.min()) & (tx <= ax_.max())
        X, Y = tx[sel], ty[sel]
        if not len(X):
            continue
        lo, hi = np.minimum(ax_, bx_), np.maximum(ax_, bx_)
        span = hi > lo
        ins = (X[None, :] >= lo[:, None]) & (X[None, :] <= hi[:, None]) & span[:, None]
        dx = np.where(span, bx_ - ax_, 1.0)
        yw = ay_[:, None] + (X[None, :] - ax_[:, None]) / dx[:, None] * (by_ - ay_)[:, None]
        low = np.where(ins, yw, np.inf).min(axis=0)
        gap[i] = min(gap[i], float((low - Y).min()))
    return gap


def _radius_bounds(v: np.ndarray) -> tuple[float, float]:
    """Least and greatest distance [m] from the origin to a closed polygon's boundary."""
    a, b = v, np.roll(v, -1, axis=0)
    e = b - a
    t = np.clip(-(a * e).sum(axis=1) / np.maximum((e * e).sum(axis=1), 1e-300), 0.0, 1.0)
    foot = a + t[:, None] * e
    return float(np.hypot(foot[:, 0], foot[:, 1]).min()), float(np.hypot(v[:, 0], v[:, 1]).max())


def _winds_origin(v: np.ndarray) -> bool:
    """True when a closed polygon winds once around the origin."""
    ang = np.arctan2(v[:, 1], v[:, 0])
    d = np.diff(np.concatenate([ang, ang[:1]]))
    d = (d + math.pi) % (2 * math.pi) - math.pi
    return abs(float(d.sum())) > math.pi


def _as_built_phase(pair, x_axle: np.ndarray, axle_error_m) -> tuple[np.ndarray, np.ndarray]:
    """Wheel angles [rad] and axle heights [m] of as-built wheels on the nominal wheel's ideal roll.

    The as-built axle ``A`` sits at ``C + R(-theta) e`` from the point ``C`` that was the nominal
    axle, and the rim rolls ideally when ``C = (x_C, 0)`` with ``theta = wheel_angle(x_C)``. For an
    axle at ``x_axle`` this gives ``x_C = x_axle - (R(-theta(x_C)) e)_x``, solved by fixed-point
    iteration (a contraction: its slope is at most ``|e| / r_min``, well below 1).
    """
    ex, ey = float(axle_error_m[0]), float(axle_error_m[1])
    xc = np.array(x_axle, dtype=float)
    for _ in range(12):
        th = np.asarray(pair.wheel_angle(xc), dtype=float)
        xc = x_axle - (np.cos(th) * ex + np.sin(th) * ey)
    th = np.asarray(pair.wheel_angle(xc), dtype=float)
    return th, -np.sin(th) * ex + np.cos(th) * ey


def _support_line(off: np.ndarray, lift: np.ndarray) -> tuple[float, float]:
    """Line ``y = a + b off`` on which a rigid chassis rests on wheels that need heights ``lift``.

    The chassis rests on the two wheels whose heights bound the upper convex hull of the
    points ``(off_i, lift_i)`` across the chassis origin (midway between the end axles, about
    where the weight acts): every other wheel then hangs at or below its track. Of several
    such lines (collinear wheels, or a hull corner right at the origin) the least steep is
    taken.
    """
    best = None
    n = len(off)
    for i in range(n):
        for j in range(i + 1, n):
            if not (off[i] <= 0.0 <= off[j]) or off[j] <= off[i]:
                continue
            b = (lift[j] - lift[i]) / (off[j] - off[i])
            a = lift[i] - b * off[i]
            if np.all(lift <= a + b * off + 1e-12) and (best is None or abs(b) < abs(best[1])):
                best = (float(a), float(b))
    if best is None:  # not reached for offsets on both sides of the origin; a level fallback
        best = (float(np.max(lift)), 0.0)
    return best


def _as_built_pose(outline, track_xy, pair, offsets, level: bool, axle_error_m, phase_rad=None):
    """Axle positions, wheel angles, chassis height and pitch of an as-built start pose.

    Each wheel is posed on the ideal roll of the nominal rim (:func:`_as_built_phase`), then
    lifted or lowered until its outline just touches the as-built track (a scaled wheel or a
    track section error moves it off that roll); the chassis is set on the two wheels that
    carry it (:func:`_support_line`; with more than two axles the others may hang slightly),
    level when ``level``.
    """
    off = np.asarray(offsets, dtype=float)
    extra = np.zeros(len(off)) if phase_rad is None else np.asarray(phase_rad, dtype=float)
    th, y0 = _as_built_phase(pair, off, axle_error_m)
    th = th + extra  # mounting errors on a shared shaft (clockwise positive)
    lift = y0 - outline_clearance_m(outline, track_xy, off, y0, th)
    if level or len(off) == 1:
        a, b = float(np.max(lift)), 0.0
    else:
        a, b = _support_line(off, lift)
    if not abs(b) < 0.5:
        raise GeometryError(
            f"the as-built track tilts the vehicle by {math.degrees(math.asin(min(abs(b), 1.0))):.0f}"
            " degrees at the start; check track.height_error_m and joint_step_m (metres)"
        )
    beta = math.asin(b)
    xs = off * math.cos(beta)
    ys = a + off * b
    # The pitch moves the axles in by off (1 - cos beta): touch again at the final phases.
    th, _ = _as_built_phase(pair, xs, axle_error_m)
    th = th + extra
    a -= float(outline_clearance_m(outline, track_xy, xs, ys, th).min())
    ys = a + off * b
    return xs, ys, th, a, beta


# ----------------------------------------------------------------------------- builder


def travel_bounds_m(scenario, r_min_m: float, r_max_m: float, total_mass_kg: float,
                    grade_rad: float, gravity_m_s2: float) -> tuple[float, float]:
    """Backward and forward axle travel [m] the track must cover over the run.

    Parameters
    ----------
    scenario : Scenario
        The scenario (drive and run sections).
    r_min_m, r_max_m : float
        Least and greatest rim radius [m].
    total_mass_kg : float
        Vehicle mass including wheels [kg].
    grade_rad : float
        Track grade [rad] (positive downhill towards +x).
    gravity_m_s2 : float
        Gravity [m/s^2].

    Returns
    -------
    tuple of float
        ``(backward, forward)`` [m], both >= 0, with margins.
    """
    d, T = scenario.drive, scenario.run.duration_s
    veh = scenario.vehicle
    g_along = gravity_m_s2 * math.sin(grade_rad)
    if d.mode == "speed":
        fwd = abs(d.speed_m_s) * T * 1.2
    elif d.mode == "shaft_speed":
        fwd = abs(d.shaft_speed_rad_s or 0.0) * r_max_m * T * 1.2
    else:
        n = len(veh.driven_axle_indices)
        a = n * abs(d.torque_Nm or 0.0) / r_min_m / total_mass_kg
        fwd = 0.5 * a * T * T * 1.2
    grav = 0.5 * abs(g_along) * T * T
    fwd += grav if g_along > 0 else 0.0
    back = grav if g_along < 0 else 0.0
    if d.mode == "torque" and (d.torque_Nm or 0.0) < 0:
        fwd, back = back, fwd
    margin = 0.05 * (fwd + back) + 0.5 * r_max_m
    return back + margin, fwd + margin


def _corner_radius(scenario, opt: WorldOptions, r_min: float) -> float:
    src = _corner_radius_source(scenario, opt)
    if src == "option":
        return float(opt.corner_radius_m)
    if src == "scenario":
        return float(scenario.wheel.corner_radius_m)
    return DEFAULT_CORNER_RADIUS_FRACTION * float(r_min)


def _corner_radius_source(scenario, opt: WorldOptions) -> str:
    if opt.corner_radius_m is not None:
        return "option"
    if scenario.wheel is not None and scenario.wheel.corner_radius_m > 0:
        return "scenario"
    return "default"


def _miter_inset(xy: np.ndarray, r: float) -> np.ndarray:
    """Open polyline (x increasing) moved ``r`` [m] downwards, each edge parallel to itself."""
    e = np.diff(xy, axis=0)
    n = np.column_stack([e[:, 1], -e[:, 0]]) / np.hypot(e[:, 0], e[:, 1])[:, None]
    nv = np.empty_like(xy)
    nv[0], nv[-1] = n[0], n[-1]
    s = n[:-1] + n[1:]
    nv[1:-1] = s / (1.0 + (n[:-1] * n[1:]).sum(axis=1))[:, None]
    return xy + r * nv


def track_shapes(xy: np.ndarray, clear_m: float, depth_m: float, max_edges: int = 48,
                 round_fraction: float = 0.9, max_radius_m: float = np.inf,
                 joints_x_m: np.ndarray | None = None, joint_half_m: float = 0.0):
    """Static collision shapes for a track polyline: convex blocks on humps, segments in valleys.

    Where the polyline bends downwards (over a hump, or straight) the ground below it is
    convex, so a run of such edges becomes one convex polygon reaching ``depth_m`` below the
    run: one shape instead of dozens of segments, which keeps the contact tests per step few.
    Blocks end at every upward bend (valley). In smooth troughs (bends under 1 degree per
    vertex) each edge is a segment linked to its neighbours, and so is every edge within
    ``clear_m`` of a sharp valley (over 15 degrees, where a wheel corner seats): a block's
    side face there could push a wheel corner sideways.

    Parameters
    ----------
    xy : ndarray, shape (M, 2)
        Polyline vertices [m], x increasing.
    clear_m : float
        Distance [m] either side of a sharp valley (turn above 15 degrees) kept as segments.
    depth_m : float
        Thickness [m] of the blocks below their lowest vertex.
    max_edges : int
        Most polyline edges in one block.
    round_fraction : float
        Each block is rounded by this fraction of the least radius of curvature over all humps
        (capped by ``max_radius_m`` and the edge lengths). The block is
        built on its run moved down by the radius (edges parallel, vertices mitred) and then
        rounded by it, which puts every edge back in place, keeps the valleys at its ends sharp,
        and turns each hump vertex into an arc. A flat face rolling over a sharp polyline vertex
        pivots with a jolt at each vertex (its instantaneous centre jumps by an edge length);
        over the arcs it jumps only by the short straight remainder of each edge.
    max_radius_m : float
        Largest rounding radius [m].
    joints_x_m : ndarray, optional
        x [m] of as-built joint steps: vertices within ``joint_half_m`` of one are left out of
        the track-wide least radius of curvature (a step's corners would otherwise set the
        rounding of every hump); their own block is still limited by its edge lengths.
    joint_half_m : float
        Half-width [m] of the ramp at each joint.

    Returns
    -------
    polys : list of (ndarray, float)
        Block vertex lists [m] (before rounding) and their rounding radius [m].
    segments : list of tuple
        ``(a, b, prev, next)`` points [m] of each segment and of its neighbours.
    """
    d = np.diff(xy, axis=0)
    m = len(d)
    cross = np.zeros(len(xy))
    cross[1:-1] = d[:-1, 0] * d[1:, 1] - d[:-1, 1] * d[1:, 0]
    L = np.hypot(d[:, 0], d[:, 1])
    turn = np.zeros(len(xy))
    turn[1:-1] = np.arcsin(np.clip(cross[1:-1] / (L[:-1] * L[1:]), -1.0, 1.0))
    valley = cross > 1e-12 * np.max(L) ** 2
    smooth_valley = valley & (turn < math.radians(1.0))
    # A wheel corner pressed into a block near its side face could be pushed out sideways when
    # the overlap is about as wide as deep, i.e. for corners turning by tens of degrees; such
    # corners seat in valleys turning by as much. Gentler valleys need no clearance.
    sharp = xy[valley & (turn >= math.radians(15.0)), 0]
    is_seg = smooth_valley[:-1] | smooth_valley[1:]
    if len(sharp):
        mid = 0.5 * (xy[:-1, 0] + xy[1:, 0])
        j = np.searchsorted(sharp, mid)
        dl = np.abs(mid - sharp[np.clip(j - 1, 0, len(sharp) - 1)])
        dr = np.abs(sharp[np.clip(j, 0, len(sharp) - 1)] - mid)
        is_seg |= np.minimum(dl, dr) - 0.5 * np.abs(d[:, 0]) < clear_m
    polys, segs = [], []
    kappa = np.zeros(len(xy))
    kappa[1:-1] = np.abs(turn[1:-1]) / (0.5 * (L[:-1] + L[1:]))
    if joints_x_m is not None and len(joints_x_m):
        jx = np.asarray(joints_x_m, dtype=float)
        jj = np.searchsorted(jx, xy[:, 0])
        near = np.minimum(np.abs(xy[:, 0] - jx[np.clip(jj - 1, 0, len(jx) - 1)]),
                          np.abs(xy[:, 0] - jx[np.clip(jj, 0, len(jx) - 1)]))
        at_joint = near <= joint_half_m * (1.0 + 1e-9) + 1e-12
        k_hump = float(np.max(kappa[~valley & ~at_joint], initial=0.0))
    else:
        k_hump = float(np.max(kappa[~valley], initial=0.0))
    rho_all = round_fraction / k_hump if k_hump > 0 else np.inf
    i = 0
    while i < m:
        if is_seg[i]:
            prev = xy[i - 1] if i > 0 else xy[i]
            nxt = xy[i + 2] if i + 2 < len(xy) else xy[i + 1]
            segs.append((xy[i], xy[i + 1], prev, nxt))
            i += 1
            continue
        j = i + 1
        while j < m and not is_seg[j] and not valley[j] and j - i < max_edges:
            j += 1
        # Rounding radius: a fraction of the least radius of curvature over every hump (a disk
        # of this radius touching the track from below stays below it: the track curves away
        # more slowly than the disk), and small enough that no edge shrinks to nothing.
        rho = rho_all
        bumps = np.arange(max(i, 1), min(j, m - 1) + 1)
        bumps = bumps[~valley[bumps]]
        if len(bumps):
            lim = 0.45 * np.minimum(L[bumps - 1], L[bumps]) / np.tan(0.5 * np.abs(turn[bumps]) + 1e-300)
            rho = min(rho, float(lim.min()))
        rho = float(min(rho, max_radius_m))
        if not math.isfinite(rho):
            rho = float(depth_m)
        lo, hi = max(i - 1, 0), min(j + 1, m)
        q = _miter_inset(xy[lo : hi + 1], rho)[i - lo : j - lo + 1] if rho > 0 else xy[i : j + 1]
        ybot = float(q[:, 1].min()) - depth_m
        polys.append((np.vstack([q, [[q[-1, 0], ybot], [q[0, 0], ybot]]]), rho))
        i = j
    return polys, segs


def _start_speed(scenario, pair, offsets, radius_scale: float = 1.0) -> float:
    """Ground speed [m/s] at t = 0: the drive's own speed, rolling ideally (torque drives start at rest)."""
    d = scenario.drive
    if d.mode == "speed":
        return float(d.speed_m_s) if d.accel_m_s2 == 0 else 0.0
    if d.mode == "shaft_speed":
        ax = scenario.vehicle.driven_axle_indices[0]
        r = float(pair.contact_radius(float(offsets[ax])))
        if radius_scale != 1.0:
            r *= radius_scale
        return float(d.shaft_speed_rad_s or 0.0) * r
    return 0.0


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
    veh, drv, srf, run = scenario.vehicle, scenario.drive, scenario.surface, scenario.run
    wheel = pair.wheel
    r_min, r_max, _ = wheel.extremes()
    ab = AsBuilt.from_scenario(scenario)
    wheel_ab, track_ab = not ab.wheel_is_nominal, not ab.track_is_nominal
    gmag = float(opt.gravity_m_s2)
    grav = (gmag * math.sin(opt.grade_rad), -gmag * math.cos(opt.grade_rad))
    space = make_space(run.iterations, grav, opt.collision_slop_m)

    tol = opt.track_tolerance_m
    if tol is None:
        tol = min(max(1e-4 * r_min, 2e-6), 1e-5)
    wtol = opt.wheel_tolerance_m if opt.wheel_tolerance_m is not None else tol
    if not (tol > 0 and wtol > 0):
        raise InputError(f"track/wheel tolerance must be > 0 m, got {tol!r}, {wtol!r}")

    # --- wheel outline (pure geometry; shapes are made below)
    v, werr, corner, k_rim = wheel_outline(wheel, wtol)
    # Radii of the wheel as built: ranges, guard rails and speed caps use them; tolerances,
    # corner radius and track shapes keep the nominal ones.
    r_lo, r_hi = float(r_min), float(r_max)
    if wheel_ab:
        # The plate scaled (s^2 mass, s^4 inertia about its centre) and drilled off: explicit
        # wheel.mass_kg / inertia_kg_m2 are taken as the nominal part's and scaled alike.
        mass = ab.mass(mass)
        v = ab.outline(v)
        werr *= ab.scale
        k_rim /= ab.scale
        if not _winds_origin(v):
            raise GeometryError(
                f"wheel.axle_error_m = {list(ab.axle_error_m)} m puts the as-built axle outside the"
                " wheel; give the hole's error from its nominal place (typically under 1e-3 m)"
            )
        r_lo, r_hi = _radius_bounds(v)

    # --- masses
    n_ax = int(veh.axles)
    m_w, j_axle = float(mass.mass_kg), float(mass.inertia_kg_m2)
    com = (float(mass.com_m[0]), float(mass.com_m[1]))
    j_cg = j_axle - m_w * (com[0] ** 2 + com[1] ** 2)  # parallel-axis theorem
    if not (m_w > 0 and j_cg > 0):
        raise InputError(
            f"wheel mass {m_w:g} kg and inertia {j_axle:g} kg m^2 about the axle give a non-positive"
            " inertia about the centre of mass; check wheel.mass_kg and wheel.inertia_kg_m2"
        )
    m_b = float(veh.body_mass_kg)
    if m_b <= 0:
        # A massless body cannot be a pymunk body: give it a thousandth of a wheel's mass.
        m_b = 1e-3 * m_w
    offsets = axle_offsets_m(n_ax, veh.wheelbase_m)
    if veh.body_inertia_kg_m2 is not None:
        j_b, j_est = float(veh.body_inertia_kg_m2), False
    else:
        # Estimate: a uniform box spanning the wheels, length wheelbase span + 2 r_max,
        # height 2 r_max: J = m (L^2 + H^2) / 12.
        L = float(offsets[-1] - offsets[0]) + 2 * r_hi
        j_b, j_est = m_b * (L * L + 4 * r_hi * r_hi) / 12.0, True
    total_mass = m_b + n_ax * m_w

    # --- track
    if opt.travel_m is not None:
        back, fwd = (float(opt.travel_m[0]), float(opt.travel_m[1]))
    else:
        back, fwd = travel_bounds_m(scenario, r_lo, r_hi, total_mass, opt.grade_rad, gmag)
    x_lo = float(offsets[0]) - r_hi - back - 0.1 * r_hi
    x_hi = float(offsets[-1]) + r_hi + fwd + 0.1 * r_hi
    # Nearly straight stretches may use segments up to half the least radius long. The work
    # is estimated from one period before the whole reach is built (refused over budget).
    x_p = float(pair.track.pieces()[0][0])
    one, _ = track_vertices(pair.track, x_p, x_p + float(pair.track.period), tol, 0.5 * r_min)
    check_simulation_budget(scenario, pair.track, x_lo, x_hi, max(len(one) - 1, 1), r_min)
    xy, terr = track_vertices(pair.track, x_lo, x_hi, tol, 0.5 * r_min)
    joints = None
    if track_ab:
        xy, joints = as_built_track_vertices(xy, pair.track, ab)
    static = space.static_body
    # Track shapes need the corner radius: wheel corners meet the track at its valleys.
    cr_guess = _corner_radius(scenario, opt, r_min)
    clear = max(3.0 * cr_guess, 5.0 * opt.collision_slop_m)
    if joints is None:
        polys, segs_xy = track_shapes(xy, clear, 0.5 * r_min, max_radius_m=2.0 * r_max)
    else:
        polys, segs_xy = track_shapes(xy, clear, 0.5 * r_min, max_radius_m=2.0 * r_max,
                                      joints_x_m=joints, joint_half_m=JOINT_RAMP_HALF_M)
    shapes = []
    for pts, rho in polys:
        sh = pymunk.Poly(static, [(float(a), float(b)) for a, b in pts], radius=rho)
        shapes.append(sh)
    segs = []
    for (ax_, ay_), (bx_, by_), prev, nxt in segs_xy:
        sh = pymunk.Segment(static, (float(ax_), float(ay_)), (float(bx_), float(by_)), 0.0)
        # Neighbour points let pymunk smooth contacts across the joints of the chain.
        sh.set_neighbors((float(prev[0]), float(prev[1])), (float(nxt[0]), float(nxt[1])))
        segs.append(sh)
    for sh in shapes + segs:
        sh.friction = 1.0  # pymunk multiplies the two shapes' coefficients: the wheel holds mu
        sh.elasticity = 0.0
    space.add(*shapes, *segs)

    # --- wheel geometry
    cr, src = cr_guess, _corner_radius_source(scenario, opt)
    if wheel.rounding is not None:
        cr, src = float(wheel.rounding[1]), "wheel"
    if not np.any(corner):
        cr, src = 0.0, "none"
    if cr < 0:
        raise InputError(f"corner radius must be >= 0 m, got {cr!r}")
    circle = wheel.kind == "circle"
    # A smooth rim is rounded at every polygon vertex by 90 % of its least radius of curvature.
    r_smooth = 0.9 / k_rim if (not wheel.is_polygon and np.isfinite(k_rim) and k_rim > 0) else 0.0
    pieces, poly_r = ([], 0.0) if circle else wheel_pieces(v, corner, cr, wtol, r_smooth)

    # --- bodies, posed on the ideal roll
    if wheel_ab:
        v0 = _start_speed(scenario, pair, offsets, ab.scale)
    else:
        v0 = _start_speed(scenario, pair, offsets)
    pose = None
    phase = np.zeros(n_ax)
    if veh.coupled and n_ax > 1 and veh.phase_offsets_rad is not None:
        phase = np.asarray(veh.phase_offsets_rad, dtype=float)
    if wheel_ab or track_ab or np.any(phase):
        # As built, the ideal pose may overlap the track or hang above it: put every wheel
        # (with its corners rounded as its collision shapes are) just on the as-built track.
        if circle:  # the exact circle, not its inscribed polygon (7 nm chord gap at 0.1 m)
            o = ab.outline(np.array([wheel.shape_offset], dtype=float))[0] if wheel_ab else \
                np.array(wheel.shape_offset, dtype=float)
            rc = float(wheel.params["radius_m"]) * (ab.scale if wheel_ab else 1.0)
            ph = np.linspace(0.0, 2 * math.pi, 8192, endpoint=False)
            rim = o + rc * np.column_stack([np.cos(ph), np.sin(ph)])
        else:
            rim = round_corners(v, corner, cr) if cr > 0 else v
        pose = _as_built_pose(rim, xy, pair, offsets, n_ax == 1, ab.axle_error_m, phase)
    chassis = pymunk.Body(m_b, j_b)
    if pose is None:
        chassis.position = (0.0, 0.0)
    else:
        chassis.angle = pose[4]
        chassis.position = (0.0, pose[3])
    chassis.velocity = (v0, 0.0)
    space.add(chassis)
    wheels = []
    flt = pymunk.ShapeFilter(group=_VEHICLE_GROUP)
    for i in range(n_ax):
        x = float(offsets[i])
        if pose is None:
            pos, theta = (x, 0.0), float(pair.wheel_angle(x))
        else:
            pos, theta = (float(pose[0][i]), float(pose[1][i])), float(pose[2][i])
        r = float(pair.contact_radius(x))
        if wheel_ab:
            r *= ab.scale  # the as-built wheel rolls about that much further per turn
        body = pymunk.Body(m_w, j_cg)
        body.center_of_gravity = com
        body.angle = -theta  # pymunk turns a body about its centre of mass: set the angle first,
        body.position = pos  # then put the body origin (the axle) in place
        w = -v0 / r  # clockwise when rolling forward
        c, s_ = math.cos(-theta), math.sin(-theta)
        cx, cy = c * com[0] - s_ * com[1], s_ * com[0] + c * com[1]
        # pymunk's body velocity is that of the centre of mass: v_axle + w x (cg - axle).
        body.velocity = (v0 - w * cy, w * cx)
        body.angular_velocity = w
        shapes = []
        if circle:
            # A circle wheel is one exact circle shape (its centre at the shape origin).
            if wheel_ab:
                o = ab.outline(np.array([wheel.shape_offset], dtype=float))[0]
                sh = pymunk.Circle(body, ab.scale * float(wheel.params["radius_m"]),
                                   offset=(float(o[0]), float(o[1])))
            else:
                sh = pymunk.Circle(body, float(wheel.params["radius_m"]), offset=wheel.shape_offset)
            sh.friction = float(srf.friction)
            sh.elasticity = 0.0
            sh.filter = flt
            shapes.append(sh)
        for pc in pieces:
            sh = pymunk.Poly(body, [(float(p[0]), float(p[1])) for p in pc], radius=poly_r)
            sh.friction = float(srf.friction)
            sh.elasticity = 0.0
            sh.filter = flt
            shapes.append(sh)
        space.add(body, *shapes)
        pivot = pymunk.PivotJoint(chassis, body, (x, 0.0), (0.0, 0.0))
        pivot.collide_bodies = False
        space.add(pivot)
        wheels.append(body)

    pitch_held = n_ax == 1
    if pitch_held:
        hold = pymunk.RotaryLimitJoint(space.static_body, chassis, 0.0, 0.0)
        space.add(hold)

    if veh.coupled and n_ax > 1:
        for i in range(1, n_ax):
            gear = pymunk.GearJoint(wheels[0], wheels[i], wheels[i].angle - wheels[0].angle, 1.0)
            space.add(gear)

    # --- rolling resistance: a torque c_rr * N * r about each axle, N the static share of
    # the weight and r the mean contact radius, opposing rotation relative to the chassis.
    xs = np.linspace(0.0, pair.revolution_length, 1025)
    r_mean = float(np.mean(pair.contact_radius(xs[:-1])))
    if wheel_ab:
        r_mean *= ab.scale
    rr_torque = float(srf.rolling_resistance) * total_mass * gmag / n_ax * r_mean
    if rr_torque > 0:
        for body in wheels:
            brake = pymunk.SimpleMotor(chassis, body, 0.0)
            brake.max_force = rr_torque
            space.add(brake)

    # --- drive
    driven = list(veh.driven_axle_indices)
    drive = Drive(mode=drv.mode)
    if veh.coupled and n_ax > 1:
        shafts = [(driven[0], tuple(range(n_ax)))] if driven else []
    else:
        shafts = [(i, (i,)) for i in driven]
    if drv.mode == "torque":
        tq = float(drv.torque_Nm or 0.0)
        rate, limit = math.copysign(_HUGE_RATE_RAD_S, tq), abs(tq)
    elif drv.mode == "shaft_speed":
        rate, limit = float(drv.shaft_speed_rad_s or 0.0), float(drv.max_torque_Nm)
    else:
        # Speed drive: a torque command set every step by the stepper's speed controller.
        rate, limit = _HUGE_RATE_RAD_S, float(drv.max_torque_Nm)
    for ax, axles in shafts:
        # SimpleMotor holds a.w - b.w = rate with a = chassis, b = wheel: a positive rate turns
        # the wheel clockwise relative to the body, i.e. drives the vehicle forward.
        mot = pymunk.SimpleMotor(chassis, wheels[ax], rate)
        mot.max_force = limit  # a torque limit [N m] for a rotary constraint
        space.add(mot)
        drive.motors.append(mot)
        drive.shaft_axles.append(axles)
        drive.motor_axle.append(ax)
    drive.max_torque_Nm = limit

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
        space=space, chassis=chassis, wheels=wheels, drive=drive, offsets_m=offsets,
        seat_m=(float(veh.seat_m[0]), float(veh.seat_m[1])), track_xy_m=xy, track_error_m=terr,
        wheel_outline_m=v, wheel_error_m=0.0 if circle else werr,
        wheel_pieces=1 if circle else len(pieces), corner_radius_m=cr,
        corner_radius_source=src, wheel_mass_kg=m_w, wheel_inertia_kg_m2=j_axle, wheel_com_m=com,
        body_mass_kg=m_b, body_inertia_kg_m2=j_b, body_inertia_estimated=j_est,
        r_min_m=float(r_lo), r_max_m=float(r_hi), x_range_m=(x_lo, x_hi),
        r_mean_m=rev / (2 * math.pi),
        effective_mass_kg=total_mass + n_ax * j_axle * (2 * math.pi / rev) ** 2,
        start_speed_m_s=v0,
        rolling_torque_Nm=rr_torque, pitch_held=pitch_held, gravity_m_s2=grav, as_built=as_built,
    )

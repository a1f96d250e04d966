"""Building the world, part one: the track (polyline, as-built joints, pymunk shapes).

See :mod:`ridesim.sim.world` for the modelling choices.
"""

from __future__ import annotations

import math

import numpy as np
import pymunk
import pymunk.autogeometry

from ridesim.errors import InputError
from ridesim.model.tolerance import AsBuilt, joint_positions_m

TRACK_MAX_TURN_RAD = math.radians(2.0)
"""Largest turn [rad] of the track from one polyline edge to the next within a smooth stretch.

Where the track bends tightly (the valley in which a rounded wheel corner seats, a few
millimetres across) the chord tolerance alone leaves facets of 10 degrees and more; a
rounded corner rolling through such a faceted valley hops from facet to facet (1 to 3 mm
of bounce measured on squares and hexagons with corners of 0.5 to 1 % of the apothem)."""

JOINT_RAMP_HALF_M = 5e-4
"""Half-width [m] of the ramp that stands for a step at an as-built track joint.

A step is built as a straight ramp from ``joint - 0.5 mm`` to ``joint + 0.5 mm`` (track nodes
are put at both ends and none in between but the track's own kinks), so that it stays a short
steep rise rather than a slope smeared over a chord of the nominal track (up to half the least
wheel radius long where the track is nearly straight).
"""


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
                 joints_x_m: np.ndarray | None = None, joint_half_m: float = 0.0,
                 kink: np.ndarray | None = None):
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
    kink : ndarray of bool, shape (M,), optional
        True at vertices that are true kinks of the track (a sawtooth's peaks). A block holding
        a convex kink is left unrounded: rounding would shave the peak (by
        ``rho (1/cos(turn/2) - 1)``, 4 mm for a 43 degree peak between 5 cm edges), and a
        wheel's notch made to sit on that peak would drop onto the shaved hump and lose its
        phase there. Kinks are also left out of the least radius of curvature.

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
    else:
        at_joint = np.zeros(len(xy), dtype=bool)
    is_kink = np.zeros(len(xy), dtype=bool) if kink is None else np.asarray(kink, dtype=bool)
    k_hump = float(np.max(kappa[~valley & ~at_joint & ~is_kink], initial=0.0))
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
        if np.any(is_kink[i : j + 1] & ~valley[i : j + 1]):
            rho = 0.0
        lo, hi = max(i - 1, 0), min(j + 1, m)
        q = _miter_inset(xy[lo : hi + 1], rho)[i - lo : j - lo + 1] if rho > 0 else xy[i : j + 1]
        ybot = float(q[:, 1].min()) - depth_m
        polys.append((np.vstack([q, [[q[-1, 0], ybot], [q[0, 0], ybot]]]), rho))
        i = j
    return polys, segs



def add_track(space: pymunk.Space, pair, ab: AsBuilt, x_lo: float, x_hi: float, tol_m: float,
              clear_m: float, r_min: float, r_max: float):
    """Make the track between ``x_lo`` and ``x_hi`` and add its shapes to the space's static body.

    Parameters
    ----------
    space : pymunk.Space
        The space.
    pair : RollingPair
        The solved pair.
    ab : AsBuilt
        The build's manufacturing errors (the track's are applied when not nominal).
    x_lo, x_hi : float
        Extent [m] of the track.
    tol_m : float
        Largest polyline-to-curve gap [m].
    clear_m : float
        Clearance [m] of the convex blocks' rounding (see :func:`track_shapes`).
    r_min, r_max : float
        Least and largest nominal wheel radius [m].

    Returns
    -------
    xy : numpy.ndarray, shape (n, 2)
        Track polyline [m] as built.
    error_m : float
        Largest polyline-to-curve gap [m] measured.
    joints : numpy.ndarray or None
        Joint positions [m] of an as-built track, None for a nominal one.
    """
    xy, terr = track_vertices(pair.track, x_lo, x_hi, tol_m, 0.5 * r_min)
    joints = None
    if not ab.track_is_nominal:
        xy, joints = as_built_track_vertices(xy, pair.track, ab)
    static = space.static_body
    kinks = np.asarray(pair.track.kinks, dtype=float)
    at_kink = None
    if len(kinks):
        P = float(pair.track.period)
        d = np.mod(xy[:, 0][:, None] - kinks[None, :] + 0.5 * P, P) - 0.5 * P
        at_kink = np.any(np.abs(d) <= 1e-9 * P, axis=1)
    if joints is None:
        polys, segs_xy = track_shapes(xy, clear_m, 0.5 * r_min, max_radius_m=2.0 * r_max, kink=at_kink)
    else:
        polys, segs_xy = track_shapes(xy, clear_m, 0.5 * r_min, max_radius_m=2.0 * r_max,
                                      joints_x_m=joints, joint_half_m=JOINT_RAMP_HALF_M, kink=at_kink)
    shapes = []
    sh: pymunk.Shape
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
    return xy, terr, joints

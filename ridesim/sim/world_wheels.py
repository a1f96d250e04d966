"""Building the world, part two: the wheels (outline, corners, convex pieces, bodies, pose).

See :mod:`ridesim.sim.world` for the modelling choices.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np
import pymunk
import pymunk.autogeometry

from ridesim.errors import GeometryError, InputError
from ridesim.model.tolerance import AsBuilt
from ridesim.sim.world_track import _discrete_curvature, _sagitta_positions

if TYPE_CHECKING:
    from ridesim.sim.world import WorldOptions

DEFAULT_CORNER_RADIUS_FRACTION = 0.02
"""Corner radius used when the scenario gives none, as a fraction of the least rim radius.

A sawn or milled plywood or steel edge is rarely sharper than a millimetre or two (common
practice). Measured here: with 1 % (3 mm on a square of apothem 0.3 m) the leading corner
still caught the next arch at friction 1.5 to 3 (slip bursts, up to 1.3 mm of bounce and
the drive at its torque limit); with 2 % (6 mm) no catching at friction up to 3, on square,
pentagon and hexagon wheels. The price is the dip at each cusp, about
``kappa r^2 / (2 cos(phi))``: 42 micrometres for the 0.3 m square (see the module notes).
"""

_VEHICLE_GROUP = 1  # shape filter group: vehicle shapes never collide with each other


def wheel_outline(wheel, tol_m: float, max_vertices: int = 720,
                  ) -> tuple[np.ndarray, float, np.ndarray, float]:
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


def _corner_radius(scenario, opt: WorldOptions, r_min: float) -> float:
    if opt.corner_radius_m is not None:  # the "option" source
        return float(opt.corner_radius_m)
    if _corner_radius_source(scenario, opt) == "scenario":
        return float(scenario.wheel.corner_radius_m)
    return DEFAULT_CORNER_RADIUS_FRACTION * float(r_min)


def _corner_radius_source(scenario, opt: WorldOptions) -> str:
    if opt.corner_radius_m is not None:
        return "option"
    if scenario.wheel is not None and scenario.wheel.corner_radius_m > 0:
        return "scenario"
    return "default"


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



def wheel_as_built(wheel, tol_m: float, ab: AsBuilt, mass, r_min: float, r_max: float):
    """The wheel outline (pure geometry; shapes are made later) and mass as built.

    Parameters
    ----------
    wheel : Wheel
        The solved wheel.
    tol_m : float
        Largest polygon-to-rim gap [m].
    ab : AsBuilt
        The build's manufacturing errors (the wheel's are applied when not nominal).
    mass : MassProperties
        Mass properties of one nominal wheel.
    r_min, r_max : float
        Least and largest nominal radius [m].

    Returns
    -------
    tuple
        ``(outline, error_m, corner, k_rim, mass, r_lo, r_hi)``: the outline [m], its largest
        gap to the rim [m], the corner flags, the rim's largest curvature [1/m], the mass
        properties, and the least and largest radius [m], all as built.
    """
    v, werr, corner, k_rim = wheel_outline(wheel, tol_m)
    # Radii of the wheel as built: ranges, guard rails and speed caps use them; tolerances,
    # corner radius and track shapes keep the nominal ones.
    r_lo, r_hi = float(r_min), float(r_max)
    if not ab.wheel_is_nominal:
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
    return v, werr, corner, k_rim, mass, r_lo, r_hi


def collision_pieces(scenario, opt: WorldOptions, wheel, v: np.ndarray, corner: np.ndarray,
                     k_rim: float, cr_guess: float, tol_m: float):
    """The wheel's corner radius and convex collision pieces.

    Parameters
    ----------
    scenario : Scenario
        Validated scenario.
    opt : WorldOptions
        Build settings.
    wheel : Wheel
        The solved wheel.
    v : numpy.ndarray
        Outline [m].
    corner : numpy.ndarray of bool
        Corner flags of the outline's vertices.
    k_rim : float
        The rim's largest curvature [1/m].
    cr_guess : float
        Corner radius [m] from the scenario or the default.
    tol_m : float
        Largest polygon-to-rim gap [m].

    Returns
    -------
    tuple
        ``(pieces, piece_radius_m, corner_radius_m, corner_radius_source, circle)``.
    """
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
    pieces, poly_r = ([], 0.0) if circle else wheel_pieces(v, corner, cr, tol_m, r_smooth)
    return pieces, poly_r, cr, src, circle


def start_pose(scenario, pair, ab: AsBuilt, offsets, v, corner, cr: float, xy, circle: bool):
    """Start speed and, for an as-built or phase-offset build, the pose just touching the track.

    Parameters
    ----------
    scenario : Scenario
        Validated scenario.
    pair : RollingPair
        The solved pair.
    ab : AsBuilt
        The build's manufacturing errors.
    offsets : numpy.ndarray
        Axle offsets [m].
    v : numpy.ndarray
        Outline [m] as built.
    corner : numpy.ndarray of bool
        Corner flags.
    cr : float
        Corner radius [m].
    xy : numpy.ndarray
        Track polyline [m] as built.
    circle : bool
        Whether the wheel is an exact circle.

    Returns
    -------
    v0 : float
        Start speed [m/s].
    pose : tuple or None
        ``(x, y, theta, body_y, body_pitch)`` per :func:`_as_built_pose`, or None for the ideal
        roll.
    """
    veh, wheel = scenario.vehicle, pair.wheel
    n_ax = int(veh.axles)
    wheel_ab, track_ab = not ab.wheel_is_nominal, not ab.track_is_nominal
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
    return v0, pose


def add_wheels(space: pymunk.Space, scenario, pair, ab: AsBuilt, masses, pose, v0: float,
               chassis: pymunk.Body, pieces: list, piece_radius_m: float, circle: bool) -> list:
    """Add each axle's wheel body, its collision shapes and its axle pivot on the chassis.

    Parameters
    ----------
    space : pymunk.Space
        The space.
    scenario : Scenario
        Validated scenario (surface friction is used).
    pair : RollingPair
        The solved pair.
    ab : AsBuilt
        The build's manufacturing errors.
    masses : Masses
        The build's masses (:func:`ridesim.sim.world_chassis.vehicle_masses`).
    pose : tuple or None
        Start pose (:func:`start_pose`).
    v0 : float
        Start speed [m/s].
    chassis : pymunk.Body
        The chassis.
    pieces : list of numpy.ndarray
        Convex collision pieces [m] (empty for a circle).
    piece_radius_m : float
        Rounding radius [m] of the pieces.
    circle : bool
        Whether the wheel is an exact circle.

    Returns
    -------
    list of pymunk.Body
        The wheels in axle order.
    """
    wheel, srf = pair.wheel, scenario.surface
    wheel_ab = not ab.wheel_is_nominal
    offsets = masses.offsets_m
    m_w, j_cg, com = masses.wheel_kg, masses.wheel_cg_kg_m2, masses.wheel_com_m
    wheels = []
    flt = pymunk.ShapeFilter(group=_VEHICLE_GROUP)
    for i in range(int(scenario.vehicle.axles)):
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
        shapes: list[pymunk.Shape] = []
        sh: pymunk.Shape
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
            sh = pymunk.Poly(body, [(float(p[0]), float(p[1])) for p in pc], radius=piece_radius_m)
            sh.friction = float(srf.friction)
            sh.elasticity = 0.0
            sh.filter = flt
            shapes.append(sh)
        space.add(body, *shapes)
        pivot = pymunk.PivotJoint(chassis, body, (x, 0.0), (0.0, 0.0))
        pivot.collide_bodies = False
        space.add(pivot)
        wheels.append(body)
    return wheels

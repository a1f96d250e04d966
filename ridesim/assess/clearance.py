"""Clearance between the whole wheel outline and the track over a full roll.

An ideal pair touches at one point by construction: the rim point on the ray
straight below the axle. A real build also needs every *other* part of the
outline to stay on or above the track at every pose. Because the track is a
height profile ``y(x)``, the test is vertical: a posed rim point ``(X, Y)`` is
clear when ``Y - y(X) >= 0``, and the wheel interferes exactly when some rim
point falls below the track (the region under a ``y(x)`` track is unbounded
downwards, so an overlap always puts part of the outline below it).

Poses
-----
At axle position ``x`` the wheel has turned ``theta = pair.wheel_angle(x)``
clockwise and a wheel-frame point ``p`` sits at ``(x, 0) + R(-theta) p``. The
outline repeats after one revolution, so one revolution of poses is checked:
an even grid plus poses clustered geometrically towards every cusp from both
sides (the corner-seating moments, where the closest calls happen), and the
cusp poses themselves.

Rim
---
Polygon wheels are checked edge by edge *exactly*: their track is made of
catenary arches ``y = -d cosh((x - x_m)/d)`` (Hall & Wagon, "Roads and Wheels",
Mathematics Magazine 65(5), 1992), which are concave, so along a straight edge
the gap ``edge(x) - y(x)`` is convex on each arch. Its least value on an arch
is where the arch's slope equals the edge's slope, ``x = x_m + d asinh(-m)``,
clipped to the part of the arch under the edge. This also catches an edge that
dips into an arch between its two vertices. Smooth wheels are sampled densely
in polar angle (corners included) and the worst sample is refined locally.

Exclusions
----------
The contact point touches by construction (gap exactly 0), so rim points
within ``contact_exclusion_rad`` of the contact ray are left out. That also
covers a polygon vertex seated in its cusp (both of its edges then touch the
two arches tangentially at the vertex): that is seating, not interference.
For an ideal pair the gap next to the contact grows like ``s^2 cos(phi)/(2r)``
with the distance ``s`` along the rim (the contact curvatures differ by
``cos(phi)/r``, an Euler-Savary form; see REFERENCES), so the excluded sliver
cannot hide an interference. On a polygon edge whose least gap falls inside the
sliver, the least gap of the rest is taken where the sliver ends (the gap is
convex along the arch), so each pose's figure is that of the outline with just
the sliver removed.

Cost
----
Rim points far above the track are pruned with a lower bound
``Y - max(track over the bins under the point)`` taken from a binned upper
envelope of the track (a sparse table answers range maxima for whole edges);
only candidates that could beat the running minimum (or interfere) are
evaluated exactly. Poses are processed in chunks so memory stays bounded.
Runs of consecutive rim points (or edges) are held in a binary hierarchy of
boxes, each aligned with its run's chord (a run of a smooth rim fits in a box
as thin as its sagitta). Each pose descends it and drops a whole run when the
least gap between the posed box and straight upper bounds of the track (the
tangent at the centre of a bin as wide as the box, raised to cover the track
in the bin) cannot beat the running minimum. Near the contact the rim runs
nearly parallel to the track, and these bounds are close to second order
there, so a pose costs about the logarithm of the rim size plus a few rim
elements, not the whole rim. The elements that reach the bottom are tested and
evaluated exactly as above, so the figures are those of testing every point.

Corner seating
--------------
:func:`cusp_seating` compares, at each cusp, the wheel corner's interior angle
with the opening angle of the cusp (between the two track tangents, in the air
above it). For an ideal pair the corner's sides meet both arches tangentially,
so the two are equal (margin 0). What decides the seat is the direction from
which the corner arrives: a rim point that comes into contact traces a roulette
with a cusp *normal* to the curve it rolls on (as a cycloid meets its line at
right angles), so the corner comes down along the normal of the side it leaves
and rises along the normal of the side it goes onto. That path stays in the air
only when the cusp opens wider than a right angle; the ``approach_margin_rad =
opening - pi/2`` says by how much. A regular n-gon's cusp opens by
``(n - 2) pi / n``: the triangle (pi/3) digs into both neighbouring arches, the
square (pi/2) is a tie that the exact clearance decides (it clears, but only
just), pentagons and up seat freely.
"""

from __future__ import annotations

import math

import numpy as np

from ridesim.arrays import unique_sorted
from ridesim.errors import InputError
from ridesim.records import record
from ridesim.roots import find_minimum
from ridesim.solve.pair import RollingPair
from ridesim.validate import is_integer

__all__ = [
    "ClearanceResult",
    "CuspSeat",
    "clearance",
    "cusp_seating",
    "CONTACT_EXCLUSION_RAD",
    "INTERFERENCE_TOL_REL",
]

HALF_PI = 0.5 * math.pi
TWO_PI = 2.0 * math.pi

#: Half-width [rad] of the neighbourhood of the contact ray left out of the check.
CONTACT_EXCLUSION_RAD = 1e-5
#: Interference tolerance relative to the wheel's greatest radius. The solver's maps are
#: accurate to about 1e-13 relative (closed-form catenaries, Chebyshev tables at 1e-13),
#: so a gap below -1e-9 * rmax is a real overlap, four orders above the numerical noise,
#: and still far below anything a builder can make or measure (0.3 nm on a 0.3 m wheel).
INTERFERENCE_TOL_REL = 1e-9

_REFINE_POINTS = 33  # samples per round of the rim-angle refinement (brackets shrink 16-fold)
_REFINE_ROUNDS = 3
_TREE_CHUNK_POSES = 2048  # poses per chunk through the disc hierarchy
_TREE_FIRST_POSES = 16  # a small first chunk sets the running minimum early
#: Rims of at most this many points (or edges) are measured whole at a single pose (the worst
#: pose's refinement): numpy's per-call cost makes the box hierarchy's descent dearer there
#: (0.8-1.05 ms a pose through the boxes on the demos' 2048-point rims, 0.14-0.47 ms measured whole).
_DIRECT_POINTS = 4096


def _wrap_pi(a: np.ndarray | float) -> np.ndarray | float:
    return (a + math.pi) % TWO_PI - math.pi


def _at(fn, v: float) -> float:
    """``fn`` at one value, passed as a 1-element array (some model methods reject 0-d input)."""
    return float(np.asarray(fn(np.array([float(v)])), dtype=float)[0])


@record
class ClearanceResult:
    """Least clearance between the posed wheel outline and the track.

    Attributes
    ----------
    min_m : float
        Least vertical gap [m] between a rim point (the contact excluded) and the
        track below it over the checked roll; negative means the wheel overlaps
        the track by that much.
    at_x_m : float
        Axle position [m] of the worst pose.
    wheel_angle_rad : float
        Clockwise wheel rotation [rad] at the worst pose.
    feature : str
        The rim point concerned, in words (vertex, point along an edge, or polar angle).
    feature_vertex : int or None
        Index of the wheel vertex concerned when the worst point is a polygon vertex.
    feature_phi_rad : float
        Wheel-frame polar angle [rad] of the worst rim point, in [0, 2π).
    point_m : tuple of float
        World position (x, y) [m] of the worst rim point at the worst pose.
    euclid_m : float
        Signed Euclidean distance [m] from the worst rim point to the track
        (same sign as ``min_m``, never larger in size).
    first_interference_x_m : float or None
        First axle position [m] in the checked roll at which the wheel overlaps the
        track by more than the tolerance; None when it never does.
    interferes : bool
        True when ``min_m < -tolerance_m``.
    tolerance_m : float
        Interference tolerance [m]: ``INTERFERENCE_TOL_REL`` times the greatest radius.
    intervals_m : tuple of (float, float)
        Axle-position ranges [m] within the checked roll where the wheel overlaps.
    x_start_m : float
        Start [m] of the checked roll (one revolution from here unless poses were given).
    poses : int
        Number of poses checked on the grid.
    rim_points : int
        Number of rim points (polygon: vertices, every edge checked exactly).
    """

    min_m: float
    at_x_m: float
    wheel_angle_rad: float
    feature: str
    feature_vertex: int | None
    feature_phi_rad: float
    point_m: tuple[float, float]
    euclid_m: float
    first_interference_x_m: float | None
    interferes: bool
    tolerance_m: float
    intervals_m: tuple[tuple[float, float], ...]
    x_start_m: float
    poses: int
    rim_points: int

    def to_dict(self) -> dict:
        """Plain JSON-ready values, units in the key names.

        Returns
        -------
        dict
        """
        return {
            "min_m": float(self.min_m),
            "at_x_m": float(self.at_x_m),
            "wheel_angle_rad": float(self.wheel_angle_rad),
            "feature": self.feature,
            "feature_vertex": self.feature_vertex,
            "feature_phi_rad": float(self.feature_phi_rad),
            "point_m": [float(self.point_m[0]), float(self.point_m[1])],
            "euclid_m": float(self.euclid_m),
            "first_interference_x_m": (None if self.first_interference_x_m is None
                                       else float(self.first_interference_x_m)),
            "interferes": bool(self.interferes),
            "tolerance_m": float(self.tolerance_m),
            "intervals_m": [[float(a), float(b)] for a, b in self.intervals_m],
            "x_start_m": float(self.x_start_m),
            "poses": int(self.poses),
            "rim_points": int(self.rim_points),
        }


@record
class CuspSeat:
    """How a wheel corner seats in one track cusp.

    Attributes
    ----------
    x_m : float
        Cusp position [m] in the first revolution.
    vertex : int or None
        Wheel vertex seating here (polygon wheels), else None.
    phi_rad : float
        Wheel-frame polar angle [rad] of the seating corner.
    interior_angle_rad : float
        Interior angle [rad] of the wheel corner (from the wheel outline alone).
    opening_angle_rad : float
        Angle [rad] between the two track tangents at the cusp, measured in the
        air above it (from the track alone).
    margin_rad : float
        ``opening - interior`` [rad]: positive, the corner fits into the cusp with
        room to spare; 0 for an ideal pair (the corner's sides meet both arches
        tangentially); negative, the corner's sides cut into the arches.
    approach_margin_rad : float
        ``opening - pi/2`` [rad]: the corner arrives along the normal of the
        incoming side and leaves along the normal of the outgoing side; positive,
        both paths are in the air; negative, the corner digs into the neighbouring
        arch as it seats and as it leaves; 0 is a tie decided at higher order.
    """

    x_m: float
    vertex: int | None
    phi_rad: float
    interior_angle_rad: float
    opening_angle_rad: float
    margin_rad: float
    approach_margin_rad: float

    def to_dict(self) -> dict:
        """Plain JSON-ready values, units in the key names.

        Returns
        -------
        dict
        """
        return {
            "x_m": float(self.x_m),
            "vertex": self.vertex,
            "phi_rad": float(self.phi_rad),
            "interior_angle_rad": float(self.interior_angle_rad),
            "opening_angle_rad": float(self.opening_angle_rad),
            "margin_rad": float(self.margin_rad),
            "approach_margin_rad": float(self.approach_margin_rad),
        }


# ---------------------------------------------------------------------------- envelope
def _window_columns(a: np.ndarray, sub: int, n: int) -> list[np.ndarray]:
    """The ``sub + 1`` samples of each of ``n`` windows ``a[i sub : (i + 1) sub + 1]``.

    One array per position in the window, so that a window's greatest is an elementwise
    maximum (far faster than a reduction over short rows).
    """
    return [a[j: j + n * sub: sub] for j in range(sub + 1)]


def _greatest(cols: list[np.ndarray]) -> np.ndarray:
    """Elementwise greatest of equally long arrays."""
    out = cols[0]
    for col in cols[1:]:
        out = np.maximum(out, col)
    return out


class _Envelope:
    """Binned upper envelope of the track over one period, with range maxima."""

    def __init__(self, track, bins: int = 4096, sub: int = 4) -> None:
        self.x0 = float(track.start)
        self.period = float(track.period)
        self.bins = int(bins)
        self.h = self.period / self.bins
        xs = self.x0 + self.period * np.linspace(0.0, 1.0, self.bins * sub + 1)
        ys, sl = track.y_and_slope(xs)
        ys = np.asarray(ys, dtype=float)
        sl = np.abs(np.asarray(sl, dtype=float))
        smax = float(np.max(sl)) if sl.size else 0.0
        step = self.period / (self.bins * sub)
        # Lipschitz bound between samples, doubled for the slope sampling itself.
        pad = 1.1 * smax * step + 1e-12 * max(1.0, float(np.max(np.abs(ys))))
        env = _greatest(_window_columns(ys, sub, self.bins)) + pad
        self.global_max = float(env.max())
        # Sparse table over the doubled array (so wrapped ranges are contiguous), stacked
        # into one 2-D array so that a range query is two gathers.
        levels = [np.concatenate([env, env])]
        while (1 << len(levels)) <= self.bins:
            prev = levels[-1]
            k = 1 << (len(levels) - 1)
            levels.append(np.maximum(prev[:-k], prev[k:]))
        width = len(levels[0])
        self.table = np.full((len(levels), width), -np.inf)
        for i, lev in enumerate(levels):
            self.table[i, : len(lev)] = lev
        self.env = env

    def range_max(self, xa: np.ndarray, xb: np.ndarray) -> np.ndarray:
        """Upper bound [m] of the track over ``[xa, xb]`` [m] (elementwise, ``xa <= xb``)."""
        ia = np.floor((xa - self.x0) / self.h).astype(np.int64)
        ib = np.floor((xb - self.x0) / self.h).astype(np.int64)
        length = np.minimum(ib - ia, self.bins - 1) + 1
        a = np.mod(ia, self.bins)
        k = np.frexp(length.astype(float))[1] - 1  # floor(log2(length)), exact for integers
        res = np.maximum(self.table[k, a], self.table[k, a + length - (1 << k)])
        return np.where(ib - ia >= self.bins, self.global_max, res)

    def point_max(self, x: np.ndarray) -> np.ndarray:
        """Upper bound [m] of the track within the bin holding each ``x`` [m]."""
        i = np.mod(np.floor((x - self.x0) / self.h).astype(np.int64), self.bins)
        return self.env[i]


# ---------------------------------------------------------------------------- box hierarchy
class _LineEnvelope:
    """Straight upper bounds of the track over bins of every width ``period / 2**level``.

    Bin ``b`` of a level holds the tangent at its centre, ``yc + m (x - centre)``, raised by
    the most the track rises above it in the bin (sampled, plus a Lipschitz allowance between
    samples, as :class:`_Envelope`): ``track(x) <= yc + m (x - centre) + pad`` there. Where
    the track is smooth the allowance shrinks with the square of the bin width, so a run of
    rim nearly parallel to the track (the neighbourhood of the contact) is bounded closely.
    """

    def __init__(self, track, finest_bins: int, sub: int = 8) -> None:
        self.x0 = float(track.start)
        self.period = float(track.period)
        top = max(0, int(math.ceil(math.log2(max(int(finest_bins), 1)))))
        self.top = top
        m = (1 << top) * sub
        xs = self.x0 + self.period * np.linspace(0.0, 1.0, m + 1)
        ys, sl = track.y_and_slope(xs)
        ys = np.asarray(ys, dtype=float)
        sl = np.asarray(sl, dtype=float)
        scale = 1e-12 * max(1.0, float(np.max(np.abs(ys))))
        self.global_max = float(np.max(ys)) + 1.1 * float(np.max(np.abs(sl))) * (self.period / m)
        self.global_max += scale
        # Every level's bin centres, the track at all of them in one call (per level, the
        # fixed cost of a call on a few points added up to a third of a small check's).
        centres = [self.x0 + (np.arange(1 << lev) + 0.5) * (self.period / (1 << lev))
                   for lev in range(top + 1)]
        y_all, m_all = (np.asarray(v, dtype=float) for v in track.y_and_slope(np.concatenate(centres)))
        yc, mc, pad = [], [], []
        for lev in range(top + 1):
            nb = 1 << lev
            stride = 1 << (top - lev)
            w = self.period / nb
            xw = _window_columns(xs[::stride], sub, nb)
            yw = _window_columns(ys[::stride], sub, nb)
            sw = _window_columns(sl[::stride], sub, nb)
            centre = centres[lev]
            y0, m0 = y_all[nb - 1: 2 * nb - 1], m_all[nb - 1: 2 * nb - 1]
            dev = _greatest([yj - (y0 + m0 * (xj - centre)) for xj, yj in zip(xw, yw, strict=True)])
            lip = 1.1 * _greatest([np.abs(sj - m0) for sj in sw]) * (w / sub)
            yc.append(y0)
            mc.append(m0)
            pad.append(dev + lip + scale)
        self._first = (1 << np.arange(top + 1)) - 1  # index of each level's first bin
        self._inv_w = (1 << np.arange(top + 1)) / self.period  # bins per metre
        self.yc = np.concatenate(yc)
        self.mc = np.concatenate(mc)
        self.pad = np.concatenate(pad)

    def lines(self, xl: np.ndarray, xr: np.ndarray):
        """The (at most two) bins' lines covering each ``[xl, xr]`` [m], stacked on axis 0.

        Returns the absolute bin centres [m], heights [m], slopes and pads [m], each of shape
        ``(2, n)`` (a bin and the next), and a mask of ranges a period wide or wider (no line
        bound there: use :attr:`global_max`).
        """
        width = xr - xl
        wide = width >= self.period
        # Level floor(log2(period / width)), read off the float exponent; clipped to the levels.
        lev = np.frexp(self.period / np.maximum(width, 1e-300 * self.period))[1] - 1
        lev = np.minimum(np.maximum(lev, 0), self.top)
        inv_w = np.take(self._inv_w, lev)
        i1 = np.floor((xl - self.x0) * inv_w).astype(np.int64)
        first = np.take(self._first, lev)
        ib = i1 + _PAIR_OFFSETS
        k = first + np.bitwise_and(ib, first)
        return (self.x0 + (ib + 0.5) / inv_w, np.take(self.yc, k), np.take(self.mc, k),
                np.take(self.pad, k), wide)


_PAIR_OFFSETS = np.array([[0], [1]], dtype=np.int64)  # a bin and the next, stacked
_CHILDREN = np.array([0, 1])


def _min4(a: np.ndarray) -> np.ndarray:
    """Least of the four rows of ``a`` (elementwise; a reduction over a short first axis is slower)."""
    return np.minimum(np.minimum(a[0], a[1]), np.minimum(a[2], a[3]))


def _max4(a: np.ndarray) -> np.ndarray:
    """Greatest of the four rows of ``a`` (elementwise)."""
    return np.maximum(np.maximum(a[0], a[1]), np.maximum(a[2], a[3]))


def _below_line(X, Y, centre, yc, mc):
    """Height of the points ``(X, Y)`` [m] above the line ``yc + mc (x - centre)`` [m]."""
    return Y - (yc + mc * (X - centre))


class _BoxTree:
    """Oriented bounding boxes over runs of consecutive rim elements, halving level by level.

    Level ``l`` holds one box per run of ``2**l`` elements (the last run may be shorter); the
    children of run ``j`` are runs ``2j`` and ``2j + 1`` one level down. An element is a
    point, or with ``edges`` the straight edge from point ``i`` to point ``i + 1`` (cyclic),
    whose box then holds both ends (so the whole edge, their convex hull). Each box is
    aligned with its run's chord, so a run of a smooth rim fits in a thin box (its sagitta).
    """

    def __init__(self, pts: np.ndarray, edges: bool, top_runs: int = 16) -> None:
        pts = np.asarray(pts, dtype=float)
        n = len(pts)
        self.n = n
        xs, ys = pts[:, 0], pts[:, 1]
        scale = float(np.max(np.abs(pts))) if n else 1.0
        grow = 1e-13 * scale  # rounding allowance for the posing arithmetic
        self.levels: list[tuple[np.ndarray, np.ndarray]] = []  # corners x, y: (4, runs)
        width = 1
        while True:
            starts = np.arange(0, n, width)
            owner = np.arange(n) // width
            if edges:
                last = np.minimum(starts + width, n) % n  # far end of the run's last edge
            else:
                last = np.minimum(starts + width, n) - 1
            ax, ay = xs[starts], ys[starts]
            ux, uy = xs[last] - ax, ys[last] - ay
            ln = np.hypot(ux, uy)
            short = ln <= 1e-9 * scale
            ux = np.where(short, 1.0, ux / np.where(short, 1.0, ln))
            uy = np.where(short, 0.0, uy / np.where(short, 1.0, ln))
            rx, ry = xs - ax[owner], ys - ay[owner]
            t = rx * ux[owner] + ry * uy[owner]
            h = -rx * uy[owner] + ry * ux[owner]
            t_lo, t_hi = np.minimum.reduceat(t, starts), np.maximum.reduceat(t, starts)
            h_lo, h_hi = np.minimum.reduceat(h, starts), np.maximum.reduceat(h, starts)
            if edges:
                ex, ey = xs[last] - ax, ys[last] - ay
                te, he = ex * ux + ey * uy, -ex * uy + ey * ux
                t_lo, t_hi = np.minimum(t_lo, te), np.maximum(t_hi, te)
                h_lo, h_hi = np.minimum(h_lo, he), np.maximum(h_hi, he)
            t_lo, t_hi, h_lo, h_hi = t_lo - grow, t_hi + grow, h_lo - grow, h_hi + grow
            tt = np.stack([t_lo, t_hi, t_hi, t_lo], axis=1)
            hh = np.stack([h_lo, h_lo, h_hi, h_hi], axis=1)
            cx = ax[:, None] + tt * ux[:, None] - hh * uy[:, None]
            cy = ay[:, None] + tt * uy[:, None] + hh * ux[:, None]
            self.levels.append((np.ascontiguousarray(cx.T), np.ascontiguousarray(cy.T)))
            if len(starts) <= top_runs:
                break
            width *= 2

    def bounds(self, lev: int, ni: np.ndarray, x: np.ndarray | float, c: np.ndarray | float,
               s: np.ndarray | float, env: _LineEnvelope, lower: bool) -> np.ndarray:
        """Bound on ``Y - track(X)`` (``lower``) or ``track(X) - Y`` over each posed box.

        Box ``ni`` of level ``lev`` posed at axle ``x`` turned by ``(c, s) = (cos, sin)`` of
        the wheel angle (one value per pair, or one for all). Below a bin's line the gap is
        linear in the point, so its extremes over a box are at the corners.
        """
        kx, ky = self.levels[lev]
        # The four corners, one row each (np.take: a faster gather than indexing here).
        KX, KY = np.take(kx, ni, axis=1), np.take(ky, ni, axis=1)
        X = x + KX * c + KY * s
        Y = -KX * s + KY * c
        centre, yc, mc, pad, wide = env.lines(_min4(X), _max4(X))
        # The gap below each bin's line at each corner, least over the corners: for many
        # boxes one line at a time (numpy broadcasts one leading axis far faster than two),
        # for a few both at once (fewer calls). The same values either way.
        if len(ni) >= 256:
            v0 = _min4(_below_line(X, Y, centre[0], yc[0], mc[0]))
            v1 = _min4(_below_line(X, Y, centre[1], yc[1], mc[1]))
        else:
            v0, v1 = _min4(_below_line(X[:, None], Y[:, None], centre, yc, mc))
        ylo = _min4(Y)
        if lower:
            return np.where(wide, ylo - env.global_max, np.minimum(v0 - pad[0], v1 - pad[1]))
        return np.where(wide, env.global_max - ylo, np.maximum(pad[0] - v0, pad[1] - v1))

    def candidates(self, x: np.ndarray, c: np.ndarray, s: np.ndarray, env: _LineEnvelope,
                   thr: float | np.ndarray, lower: bool = True, probe=None) -> tuple[np.ndarray, np.ndarray]:
        """(pose, element) pairs that no enclosing box rules out, sorted by pose then element.

        With ``lower``, a box goes when its bound on the least gap ``Y - track(X)`` is
        ``>= thr``; otherwise when its bound on the greatest ``track(X) - Y`` is ``< thr``.
        ``thr`` is a scalar or one value per pose. ``probe(pi, ki)`` gives a value that the
        best element of pose ``pi`` is sure to reach (at least as low with ``lower``, at least
        as high otherwise), read at element ``ki``; each level then moves a pose's ``thr`` to
        the best such value over the first elements of its remaining runs, so the best
        element is never dropped.
        """
        top = len(self.levels) - 1
        runs = self.levels[top][0].shape[1]
        if len(x) == 1 and probe is None and np.ndim(thr) == 0:
            return self._candidates_one(float(x[0]), c[0], s[0], env, float(thr), lower)
        pi = np.repeat(np.arange(len(x)), runs)
        ni = np.tile(np.arange(runs), len(x))
        thr_pose = np.array(np.broadcast_to(np.asarray(thr, dtype=float), np.shape(x)))
        for lev in range(top, -1, -1):
            bd = self.bounds(lev, ni, x[pi], c[pi], s[pi], env, lower)
            keep = bd < thr_pose[pi] if lower else bd >= thr_pose[pi]
            pi, ni, bd = pi[keep], ni[keep], bd[keep]
            if probe is not None and pi.size:
                val = probe(pi, ni << lev)
                heads = np.flatnonzero(np.concatenate(([True], pi[1:] != pi[:-1])))
                if lower:
                    thr_pose[pi[heads]] = np.minimum(thr_pose[pi[heads]], np.minimum.reduceat(val, heads))
                    keep = bd < thr_pose[pi]
                else:
                    thr_pose[pi[heads]] = np.maximum(thr_pose[pi[heads]], np.maximum.reduceat(val, heads))
                    keep = bd >= thr_pose[pi]
                pi, ni = pi[keep], ni[keep]
            if lev == 0:
                break
            # Children, in order: 2j, 2j + 1 (the last run may have one child only).
            pi = np.repeat(pi, 2)
            ni = (2 * ni[:, None] + _CHILDREN).ravel()
            ok = ni < self.levels[lev - 1][0].shape[1]
            pi, ni = pi[ok], ni[ok]
        return pi, ni

    def _candidates_one(self, x: float, c: float, s: float, env: _LineEnvelope, thr: float,
                        lower: bool) -> tuple[np.ndarray, np.ndarray]:
        """:meth:`candidates` of one pose without probes.

        The same bounds, tested in the same order, with the pose's figures as scalars (no
        per-pair copies of them).
        """
        top = len(self.levels) - 1
        ni = np.arange(self.levels[top][0].shape[1])
        for lev in range(top, -1, -1):
            bd = self.bounds(lev, ni, x, c, s, env, lower)
            ni = ni[bd < thr] if lower else ni[bd >= thr]
            if lev == 0 or not ni.size:
                break
            ni = (2 * ni[:, None] + _CHILDREN).ravel()
            ni = ni[ni < self.levels[lev - 1][0].shape[1]]
        return np.zeros(ni.size, dtype=np.int64), ni


# ---------------------------------------------------------------------------- rims
class _PolygonRim:
    """Polygon outline checked edge by edge against its exact catenary arches."""

    def __init__(self, pair: RollingPair) -> None:
        w = pair.wheel
        self.V = np.array(w.vertices, dtype=float)
        self.n = len(self.V)
        self.W = np.roll(self.V, -1, axis=0)  # edge ends
        starts, d, alpha = w.edge_lines()
        L = pair.revolution_length
        th_s = starts[:-1] + HALF_PI  # wheel angle at which vertex i is straight below
        xs = np.asarray(pair.axle_x(th_s), dtype=float)
        u_s = _wrap_pi(starts[:-1] - alpha)
        xm = xs - d * np.arcsinh(np.tan(u_s))
        base = xs[0]
        shift = L * np.floor((xs - base) / L + 1e-12)
        xs, xm = xs - shift, xm - shift
        order = np.argsort(xs)
        self.lo = xs[order]
        self.xm = xm[order]
        self.d = d[order]
        self.L = float(L)
        self.x0 = float(self.lo[0])
        self.hi = np.append(self.lo[1:], self.x0 + self.L)
        self.xb = np.append(self.lo, self.x0 + self.L)
        # Cross-check the arches against the solver's track at piece midpoints.
        mid = 0.5 * (self.lo + self.hi)
        y_arch = -self.d * np.cosh((mid - self.xm) / self.d)
        y_track = np.asarray(pair.track.y(mid), dtype=float)
        scale = float(np.max(np.abs(y_track)))
        self.ok = bool(np.all(np.abs(y_arch - y_track) <= 1e-9 * scale))

    def _piece(self, x: np.ndarray) -> np.ndarray:
        k = np.floor((x - self.x0) / self.L)
        j = np.searchsorted(self.xb, x - k * self.L, side="right") - 1
        j = np.clip(j, 0, self.n - 1)
        return (k.astype(np.int64) * self.n + j).astype(np.int64)

    def edge_min(self, Px, Py, Qx, Qy, theta, delta, e):
        """Exact least gap over each posed edge ``e``; returns (gap [m], fraction along edge)."""
        xa = np.minimum(Px, Qx)
        xb = np.maximum(Px, Qx)
        dx = Qx - Px
        steep = np.abs(dx) <= 1e-15 * self.L
        dxs = np.where(steep, 1.0, dx)
        m = np.where(steep, 0.0, (Qy - Py) / dxs)
        ga = self._piece(xa)
        gb = self._piece(xb)
        count = gb - ga + 1
        best = np.full(Px.shape, np.inf)
        best_t = np.zeros(Px.shape)
        contact = theta - HALF_PI
        ox, oy = self.V[e, 0], self.V[e, 1]
        ux, uy = self.W[e, 0] - ox, self.W[e, 1] - oy
        for off in range(int(count.max()) if count.size else 0):
            g = ga + off
            valid = off < count
            j = np.mod(g, self.n)
            k = np.floor_divide(g, self.n)
            lo = np.maximum(self.lo[j] + k * self.L, xa)
            hi = np.minimum(self.hi[j] + k * self.L, xb)
            xm = self.xm[j] + k * self.L
            d = self.d[j]
            xs = np.clip(xm + d * np.arcsinh(-m), lo, hi)
            xs = np.where(steep, xa, xs)
            t = np.where(steep, np.where(Py <= Qy, 0.0, 1.0), (xs - Px) / dxs)
            t = np.clip(t, 0.0, 1.0)
            ys = np.where(steep, np.minimum(Py, Qy), Py + t * (Qy - Py))
            gap = ys + d * np.cosh((xs - xm) / d)
            # Leave out points next to the contact ray (contact, seated vertex).
            phi = np.arctan2(oy + t * uy, ox + t * ux)
            near = np.abs(_wrap_pi(phi - contact)) < delta
            if np.any(near & valid):
                # The gap is convex along the arch, so with its minimiser left out the least
                # gap of the rest is where the left-out sliver ends: the edge points on the
                # rays contact -/+ delta (when they lie on this edge and over this arch).
                alt = np.full(gap.shape, np.inf)
                for sgn in (-1.0, 1.0):
                    psi = contact + sgn * delta * (1.0 + 1e-9)
                    cx, cy = np.cos(psi), np.sin(psi)
                    den = cx * uy - cy * ux
                    ok = np.abs(den) > 1e-300
                    tb = np.where(ok, (cy * ox - cx * oy) / np.where(ok, den, 1.0), -1.0)
                    xb_ = Px + tb * dx
                    ahead = cx * (ox + tb * ux) + cy * (oy + tb * uy) > 0
                    inside = ok & ahead & (tb >= 0.0) & (tb <= 1.0) & (xb_ >= lo) & (xb_ <= hi)
                    gb = Py + tb * (Qy - Py) + d * np.cosh((xb_ - xm) / d)
                    better_b = inside & (gb < alt)
                    alt = np.where(better_b, gb, alt)
                    t = np.where(near & better_b, tb, t)
                gap = np.where(near, alt, gap)
            gap = np.where(valid, gap, np.inf)
            better = gap < best
            best = np.where(better, gap, best)
            best_t = np.where(better, t, best_t)
        return best, best_t


class _SmoothRim:
    """Smooth outline sampled in polar angle (corners included), refined locally."""

    def __init__(self, pair: RollingPair, n: int, points: np.ndarray | None = None) -> None:
        w = pair.wheel
        if points is None:
            phi = np.linspace(0.0, TWO_PI, int(n), endpoint=False)
            splits = np.array(tuple(w.kinks) + tuple(w.breaks), dtype=float)
            phi = unique_sorted(np.concatenate([phi, np.mod(splits, TWO_PI)]))
            r = np.asarray(w.radius(phi), dtype=float)
            self.P = np.column_stack([r * np.cos(phi), r * np.sin(phi)])
            self.phi = phi
        else:
            self.P = np.asarray(points, dtype=float)
            self.phi = np.mod(np.arctan2(self.P[:, 1], self.P[:, 0]), TWO_PI)
        self.dphi = float(np.max(np.diff(np.append(self.phi, self.phi[0] + TWO_PI))))


# ---------------------------------------------------------------------------- driver
class _Checker:
    def __init__(self, pair: RollingPair, n_rim: int, delta: float) -> None:
        self.pair = pair
        self.track = pair.track
        self.delta = float(delta)
        w = pair.wheel
        rmin, rmax, _ = w.extremes()
        self.rmin, self.rmax = rmin, rmax
        self.tol = INTERFERENCE_TOL_REL * rmax
        self.env = _Envelope(pair.track)
        self.poly: _PolygonRim | None = None
        self.smooth: _SmoothRim | None = None
        self._poly_vertices = None
        if w.is_polygon:
            poly = _PolygonRim(pair)
            if poly.ok:
                self.poly = poly
            else:
                V = np.array(w.vertices)
                W = np.roll(V, -1, axis=0)
                m = max(8, int(math.ceil(n_rim / len(V))))
                t = np.arange(m) / m
                pts = (V[:, None, :] + t[None, :, None] * (W - V)[:, None, :]).reshape(-1, 2)
                self.smooth = _SmoothRim(pair, n_rim, points=pts)
                self._poly_vertices = V
        else:
            self.smooth = _SmoothRim(pair, n_rim)
        if self.poly is not None:
            self.n_points = len(self.poly.V)
            self.tree = _BoxTree(self.poly.V, edges=True)
            self._probe_phi = np.arctan2(self.poly.V[:, 1], self.poly.V[:, 0])
        else:
            sm = self._rim
            self.n_points = len(sm.P)
            self.tree = _BoxTree(sm.P, edges=False)
            self._probe_phi = sm.phi
        # Finest line bins about as wide as a rim element's reach along the track.
        per_rev = max(1, int(round(pair.revolution_length / pair.track.period)))
        self.lines = _LineEnvelope(pair.track, min(1 << 17, 2 * self.n_points // per_rev + 1))

    @property
    def _polygon(self) -> _PolygonRim:
        """The polygon rim of a wheel checked edge by edge."""
        if self.poly is None:
            raise InputError("clearance: this wheel is not checked as a polygon")
        return self.poly

    @property
    def _rim(self) -> _SmoothRim:
        """The sampled rim of a wheel not checked as a polygon."""
        if self.smooth is None:
            raise InputError("clearance: this wheel is checked as a polygon and has no sampled rim")
        return self.smooth

    # -- one chunk of poses: per-pose least gap below ``thr`` (inf where none)
    def evaluate(self, x: np.ndarray, theta: np.ndarray, thr: float, prune: bool = True):
        if prune:
            # Through the box hierarchy: the same candidates' figures, far fewer tried. Where
            # the threshold is far above the poses' least gaps (none given, or overlapping
            # poses below the interference tolerance) rim-point probes set one per pose;
            # elsewhere they would cost more than they save. Every least gap is below 1e300.
            probing = not thr < 1e300 or thr <= -self.tol
            thr = min(float(thr), 1e300)
            c = np.cos(theta)
            s = np.sin(theta)
            probe = None
            if probing:
                def probe(pi, ki):
                    return self._probe(x, theta, c, s, pi, ki)
            pi, ki = self.tree.candidates(x, c, s, self.lines, thr, probe=probe)
            if self.poly is not None:
                return self._eval_poly_pairs(x, theta, c, s, thr, pi, ki)
            return self._eval_smooth_pairs(x, theta, c, s, thr, pi, ki)
        c = np.cos(theta)[:, None]
        s = np.sin(theta)[:, None]
        if self.poly is not None:
            return self._eval_poly(x, theta, c, s, thr)
        return self._eval_smooth(x, theta, c, s, thr)

    def _probe(self, x, theta, c, s, pi, ki):
        # The gap at rim point ki (a polygon's vertex ki) for pose pi: the pose's least gap is
        # at most this (inf inside the contact exclusion), so runs whose lower bound is above
        # it cannot hold the least gap. The margin covers the rounding by which the exact edge
        # evaluation (edge_min's catenary form) may differ from track.y here.
        P = self.poly.V if self.poly is not None else self._rim.P
        phi = self._probe_phi[ki]
        cp, sp = c[pi], s[pi]
        X = x[pi] + P[ki, 0] * cp + P[ki, 1] * sp
        Y = -P[ki, 0] * sp + P[ki, 1] * cp
        gap = Y - np.asarray(self.track.y(X), dtype=float) + 1e-12 * self.rmax
        near = np.abs(_wrap_pi(phi - (theta[pi] - HALF_PI))) < self.delta * (1.0 + 1e-6)
        return np.where(near, np.inf, gap)

    def _eval_poly_pairs(self, x, theta, c, s, thr, pi, ei):
        # The all-points path below, restricted to the (pose, edge) pairs ``pi, ei``:
        # the same arithmetic, element by element.
        p = self._polygon
        V = p.V
        en = (ei + 1) % p.n
        cp, sp, xp = c[pi], s[pi], x[pi]
        Px = xp + V[ei, 0] * cp + V[ei, 1] * sp
        Py = -V[ei, 0] * sp + V[ei, 1] * cp
        Qx = xp + V[en, 0] * cp + V[en, 1] * sp
        Qy = -V[en, 0] * sp + V[en, 1] * cp
        ylow = np.minimum(Py, Qy)
        keep = ylow < thr + self.env.global_max
        pi, ei = pi[keep], ei[keep]
        Px, Py, Qx, Qy, ylow = Px[keep], Py[keep], Qx[keep], Qy[keep], ylow[keep]
        return self._edge_gaps(len(x), theta, thr, pi, ei, Px, Py, Qx, Qy, ylow)

    def _edge_gaps(self, n_pose, theta, thr, pi, ei, Px, Py, Qx, Qy, ylow):
        """Least gap per pose over the edges ``(pi, ei)`` that pass the binned envelope."""
        keep = ylow - self.env.range_max(np.minimum(Px, Qx), np.maximum(Px, Qx)) < thr
        pi, ei = pi[keep], ei[keep]
        gap, t = self._polygon.edge_min(Px[keep], Py[keep], Qx[keep], Qy[keep], theta[pi],
                                        self.delta, ei)
        return _per_pose_min(n_pose, pi, ei, gap, t)

    def _eval_smooth_pairs(self, x, theta, c, s, thr, pi, ki):
        P = self._rim.P
        cp, sp = c[pi], s[pi]
        Xc = x[pi] + P[ki, 0] * cp + P[ki, 1] * sp
        Yc = -P[ki, 0] * sp + P[ki, 1] * cp
        keep = Yc < thr + self.env.global_max
        return self._rim_gaps(len(x), theta, thr, pi[keep], ki[keep], Xc[keep], Yc[keep])

    def _rim_gaps(self, n_pose, theta, thr, pi, ki, Xc, Yc):
        """Least gap per pose over the rim points ``(pi, ki)`` past the binned envelope.

        The contact's own neighbourhood is left out.
        """
        keep = Yc - self.env.point_max(Xc) < thr
        pi, ki, Xc, Yc = pi[keep], ki[keep], Xc[keep], Yc[keep]
        gap = Yc - np.asarray(self.track.y(Xc), dtype=float)
        near = np.abs(_wrap_pi(self._rim.phi[ki] - (theta[pi] - HALF_PI))) < self.delta
        gap = np.where(near, np.inf, gap)
        return _per_pose_min(n_pose, pi, ki, gap, np.zeros(gap.shape))

    def _eval_poly(self, x, theta, c, s, thr):
        p = self._polygon
        V = p.V
        n = p.n
        X = x[:, None] + V[:, 0] * c + V[:, 1] * s
        Y = -V[:, 0] * s + V[:, 1] * c
        ylow = np.minimum(Y, np.roll(Y, -1, axis=1))
        # Coarse bound with the track's highest point, then the binned envelope.
        pi, ei = np.nonzero(ylow < thr + self.env.global_max)
        en = (ei + 1) % n
        return self._edge_gaps(len(x), theta, thr, pi, ei, X[pi, ei], Y[pi, ei], X[pi, en],
                               Y[pi, en], ylow[pi, ei])

    def _eval_smooth(self, x, theta, c, s, thr):
        P = self._rim.P
        X = x[:, None] + P[:, 0] * c + P[:, 1] * s
        Y = -P[:, 0] * s + P[:, 1] * c
        pi, ki = np.nonzero(Y < thr + self.env.global_max)
        return self._rim_gaps(len(x), theta, thr, pi, ki, X[pi, ki], Y[pi, ki])

    def pose_min(self, xq: float, thr: float = math.inf) -> tuple[float, int, float]:
        """Least gap [m] at one pose (all rim points), with the point index and edge fraction.

        With a finite ``thr`` [m], only rim points whose gap may be below it are measured
        (the track envelope bounds the rest), and a pose with none returns inf.
        """
        x = np.array([float(xq)])
        th = np.asarray(self.pair.wheel_angle(x), dtype=float)
        g, j, t = self.evaluate(x, th, thr, prune=self.n_points > _DIRECT_POINTS)
        if not g[0] < thr:  # none below the threshold (whichever path measured it)
            return math.inf, 0, 0.0
        return float(g[0]), int(j[0]), float(t[0])

    # -- smooth rim: refine the polar angle around a sample at one pose
    def refine_phi(self, xq: float, k: int) -> tuple[float, float]:
        sm = self._rim
        th = _at(self.pair.wheel_angle, xq)
        c, s = math.cos(th), math.sin(th)
        contact = th - HALF_PI
        phi0 = float(sm.phi[k])
        lo, hi = phi0 - sm.dphi, phi0 + sm.dphi
        # keep to the side of the contact exclusion that holds the sample
        rel = float(_wrap_pi(phi0 - contact))
        if abs(rel) < sm.dphi + self.delta:
            if rel >= 0:
                lo = max(lo, phi0 - rel + self.delta)
            else:
                hi = min(hi, phi0 - rel - self.delta)
        best = (self._gap_at_phi(xq, c, s, phi0), phi0)
        if not hi > lo:
            return best
        # Nested grids, vectorised: each round samples the bracket at _REFINE_POINTS angles
        # and keeps the two cells around the least sample, shrinking it 16-fold; three rounds
        # leave samples 4e-7 of the bracket apart, then a parabola through the three samples
        # around the least gives its vertex. Four array evaluations instead of the ~30 scalar
        # ones of a one-dimensional minimiser (the same local minimum: the gap is smooth
        # between rim corners, which are rim samples of their own).
        n = _REFINE_POINTS
        for _ in range(_REFINE_ROUNDS):
            ph = np.linspace(lo, hi, n)
            g = self._gaps_at_phi(xq, c, s, ph)
            j = int(np.argmin(g))
            if g[j] < best[0]:
                best = (float(g[j]), float(ph[j]))
            lo, hi = float(ph[max(j - 1, 0)]), float(ph[min(j + 1, n - 1)])
        if 0 < j < n - 1:
            g0, g1, g2 = float(g[j - 1]), float(g[j]), float(g[j + 1])
            curv = g0 - 2.0 * g1 + g2
            if curv > 0.0:
                h = float(ph[j + 1] - ph[j])
                pv = float(ph[j]) + 0.5 * h * (g0 - g2) / curv
                if lo < pv < hi:
                    gv = self._gap_at_phi(xq, c, s, pv)
                    if gv < best[0]:
                        best = (gv, pv)
        return best

    def _gap_at_phi(self, xq: float, c: float, s: float, ph: float) -> float:
        return float(self._gaps_at_phi(xq, c, s, np.array([float(ph)]))[0])

    def _gaps_at_phi(self, xq: float, c: float, s: float, ph: np.ndarray) -> np.ndarray:
        r = np.asarray(self.pair.wheel.radius(ph), dtype=float)  # rim points on the rays (any outline)
        px, py = r * np.cos(ph), r * np.sin(ph)
        X = xq + px * c + py * s
        Y = -px * s + py * c
        return Y - np.asarray(self.track.y(X), dtype=float)

    def refined_pose(self, xq: float, thr: float = math.inf) -> tuple[float, int, float, float]:
        """Least gap [m] at one pose with the rim parameter refined: (gap, index, t, phi).

        ``thr`` [m] as for :meth:`pose_min`.
        """
        g, j, t = self.pose_min(xq, thr)
        if self.poly is not None:
            V, W = self.poly.V[j], self.poly.W[j]
            p = V + t * (W - V)
            return g, j, t, float(np.mod(math.atan2(p[1], p[0]), TWO_PI))
        if not math.isfinite(g):
            return g, j, t, float(self._rim.phi[j])
        g2, ph = self.refine_phi(xq, j)
        if g2 < g:
            return g2, j, t, float(np.mod(ph, TWO_PI))
        return g, j, t, float(self._rim.phi[j])


def _per_pose_min(n_poses: int, pi: np.ndarray, ki: np.ndarray, gap: np.ndarray, t: np.ndarray):
    """Least gap per pose over candidate (pose, point) pairs; inf where a pose has none."""
    gmin = np.full(n_poses, np.inf)
    kmin = np.zeros(n_poses, dtype=np.int64)
    tmin = np.zeros(n_poses)
    if pi.size:
        order = np.lexsort((gap, pi))
        ps = pi[order]
        first = np.concatenate(([True], ps[1:] != ps[:-1]))
        sel = order[first]
        gmin[pi[sel]] = gap[sel]
        kmin[pi[sel]] = ki[sel]
        tmin[pi[sel]] = t[sel]
    return gmin, kmin, tmin


def _pose_grid(pair: RollingPair, x_start: float, n_base: int | None) -> np.ndarray:
    L = pair.revolution_length
    cusps = np.array(sorted(c.x_m for c in pair.cusps), dtype=float)
    nc = len(cusps)
    if n_base is None:
        n_base = max(1024, 2 * nc)
    xs = [x_start + L * np.arange(n_base) / n_base]
    if nc:
        cx = x_start + np.mod(cusps - x_start, L)
        cx = np.sort(cx)
        gaps = np.diff(np.concatenate([cx, [cx[0] + L]]))
        near = np.minimum(gaps, np.roll(gaps, 1))
        levels = 8 if nc <= 64 else 5
        q = 0.3 ** np.arange(levels)
        h = 0.25 * near
        off = h[:, None] * q[None, :]
        xs += [cx, (cx[:, None] - off).ravel(), (cx[:, None] + off).ravel()]
    x = np.concatenate(xs)
    x = x_start + np.mod(x - x_start, L)
    return unique_sorted(x)


def clearance(
    pair: RollingPair,
    *,
    poses: np.ndarray | None = None,
    rim_points: int = 2048,
    contact_exclusion_rad: float = CONTACT_EXCLUSION_RAD,
) -> ClearanceResult:
    """Least clearance between the whole wheel outline and the track over a full roll.

    Parameters
    ----------
    pair : RollingPair
        The solved pair (the wheel must close).
    poses : array_like, optional
        Axle positions [m] to check instead of the default: one revolution from
        ``x = 0`` on an even grid with poses clustered towards every cusp.
    rim_points : int
        Samples [-] of a smooth rim in polar angle (corners are added); polygon
        edges are checked exactly and ignore this.
    contact_exclusion_rad : float
        Half-width [rad] of the neighbourhood of the contact ray left out (the
        contact itself and a vertex seated in its cusp touch by construction).

    Returns
    -------
    ClearanceResult

    Examples
    --------
    >>> import ridesim as rs
    >>> from ridesim.assess.clearance import clearance
    >>> clearance(rs.track_for(rs.Wheel.polygon(sides=3, apothem=0.3))).interferes
    True
    """
    if not isinstance(pair, RollingPair):
        raise InputError(f"pair must be a ridesim RollingPair, got {type(pair).__name__}")
    if not is_integer(rim_points) or rim_points < 64:
        raise InputError(f"rim_points must be an integer >= 64, got {rim_points!r}")
    delta = float(contact_exclusion_rad)
    if not (math.isfinite(delta) and 0.0 < delta < 0.1):
        raise InputError(
            f"contact_exclusion_rad must be in (0, 0.1) rad, got {contact_exclusion_rad!r}"
        )
    chk = _Checker(pair, int(rim_points), delta)
    x, x_start = _check_poses(pair, poses)
    theta = np.asarray(pair.wheel_angle(x), dtype=float)
    P = len(x)
    pmin = _least_gaps(chk, x, theta)
    gmin, j, t, phi, xbest = _refine_worst(chk, pair, x, pmin)
    th_best = _at(pair.wheel_angle, xbest)
    # Describe the feature and its world position.
    pw, feature, vertex = _feature(chk, pair, j, t, phi)
    c, s = math.cos(th_best), math.sin(th_best)
    wx = xbest + pw[0] * c + pw[1] * s
    wy = -pw[0] * s + pw[1] * c
    euclid = _euclid(pair.track, wx, wy, gmin)
    intervals = _interference_intervals(chk, pair, x, pmin)
    first = intervals[0][0] if intervals else None
    return ClearanceResult(
        min_m=float(gmin), at_x_m=xbest, wheel_angle_rad=th_best, feature=feature,
        feature_vertex=vertex, feature_phi_rad=float(np.mod(phi, TWO_PI)),
        point_m=(float(wx), float(wy)), euclid_m=float(euclid),
        first_interference_x_m=None if first is None else float(first),
        interferes=bool(gmin < -chk.tol), tolerance_m=float(chk.tol),
        intervals_m=tuple(intervals), x_start_m=float(x_start), poses=int(P),
        rim_points=int(chk.n_points),
    )


def _check_poses(pair: RollingPair, poses: np.ndarray | None) -> tuple[np.ndarray, float]:
    """The axle positions [m] to check, sorted and unique, and the first of them [m].

    The default is one revolution from ``x = 0`` (see :func:`_pose_grid`).
    """
    x_start = 0.0
    if poses is None:
        x = _pose_grid(pair, x_start, None)
    else:
        x = unique_sorted(np.asarray(poses, dtype=float).ravel())
        if x.size == 0 or not np.all(np.isfinite(x)):
            raise InputError("poses must be a non-empty array of finite axle positions in metres")
        x_start = float(x[0])
    return x, x_start


def _least_gaps(chk: _Checker, x: np.ndarray, theta: np.ndarray) -> np.ndarray:
    """Least gap [m] at each pose ``x`` [m] (wheel angles ``theta`` [rad]).

    Gaps above a threshold are not measured (they read inf); the threshold grows until some
    pose has a gap below it, or is far above the wheel's size.
    """
    P = len(x)
    # Chunks of poses: a small first one sets the running minimum, then large ones (each
    # pose's work through the disc hierarchy is small).
    bounds = [0, min(P, _TREE_FIRST_POSES)]
    while bounds[-1] < P:
        bounds.append(min(P, bounds[-1] + _TREE_CHUNK_POSES))

    t0 = 1e-4 * chk.rmax
    while True:
        run = t0
        pmin = np.full(P, np.inf)
        pidx = np.zeros(P, dtype=np.int64)
        pt = np.zeros(P)
        for a, b in zip(bounds[:-1], bounds[1:], strict=True):
            g, j, t = chk.evaluate(x[a:b], theta[a:b], max(run, -chk.tol))
            pmin[a:b], pidx[a:b], pt[a:b] = g, j, t
            m = float(np.min(g))
            if m < run:
                run = m
        if np.isfinite(np.min(pmin)) and float(np.min(pmin)) < t0:
            break
        if t0 > 4.0 * chk.rmax:  # nothing anywhere near the track: take what we have
            break
        t0 *= 16.0
    return pmin


def _refine_worst(chk: _Checker, pair: RollingPair, x: np.ndarray,
                  pmin: np.ndarray) -> tuple[float, int, float, float, float]:
    """Refine the worst pose between its neighbours.

    Returns the least gap [m], the rim feature's index and parameter, its polar angle [rad]
    and the axle position [m] where it occurs.
    """
    L = pair.revolution_length
    P = len(x)
    k = int(np.argmin(pmin))
    best = chk.refined_pose(float(x[k]))
    xbest = float(x[k])
    if P > 1:
        lo = float(x[k - 1]) if k > 0 else float(x[k]) - (float(x[1]) - float(x[0]))
        hi = float(x[k + 1]) if k + 1 < P else float(x[k]) + (float(x[-1]) - float(x[-2]))
        # Between its neighbours the least gap stays below about the larger neighbour's: rim
        # points whose gap cannot come below twice that margin are not measured (a pose with
        # none reads inf, worse than the pose k that brackets the search).
        nb = [float(pmin[i]) for i in (k - 1, k + 1) if 0 <= i < P and math.isfinite(pmin[i])]
        thr = math.inf
        if nb and math.isfinite(pmin[k]):
            thr = float(pmin[k]) + 2.0 * (max(nb) - float(pmin[k])) + chk.tol
        res = find_minimum(lambda q: chk.refined_pose(q, thr)[0], lo, hi, xatol=1e-12 * L)
        cand = chk.refined_pose(float(res.x))
        if cand[0] < best[0]:
            best, xbest = cand, float(res.x)
    gmin, j, t, phi = best
    return gmin, j, t, phi, xbest


def _feature(chk: _Checker, pair: RollingPair, j: int, t: float,
             phi: float) -> tuple[np.ndarray, str, int | None]:
    """The rim feature found (edge ``j`` at parameter ``t``, or the rim at polar angle ``phi``).

    Returns its point [m] in the wheel's frame, its description, and its vertex index when
    it is a vertex.
    """
    vertex = None
    if chk.poly is not None:
        V, W = chk.poly.V[j], chk.poly.W[j]
        pw = V + t * (W - V)
        n = chk.poly.n
        edge_len = float(np.hypot(*(W - V)))
        if t * edge_len <= 1e-9 * chk.rmax:
            vertex = j
            feature = f"vertex {j}"
        elif (1.0 - t) * edge_len <= 1e-9 * chk.rmax:
            vertex = (j + 1) % n
            feature = f"vertex {vertex}"
        else:
            feature = f"edge {j}-{(j + 1) % n} at {100 * t:.0f}% of its length from vertex {j}"
    else:
        r = _at(pair.wheel.radius, phi)
        pw = np.array([r * math.cos(phi), r * math.sin(phi)])
        feature = f"rim point at polar angle {phi:.4f} rad"
        if chk._poly_vertices is not None:
            Vv = chk._poly_vertices
            dv = np.hypot(Vv[:, 0] - pw[0], Vv[:, 1] - pw[1])
            iv = int(np.argmin(dv))
            if dv[iv] <= 1e-9 * chk.rmax:
                vertex = iv
                feature = f"vertex {iv}"
    return pw, feature, vertex


def _interference_intervals(chk: _Checker, pair: RollingPair, x: np.ndarray,
                            pmin: np.ndarray) -> list[tuple[float, float]]:
    """Intervals [m] of axle position where the wheel overlaps the track (at most 64).

    Their ends are sharpened by bisection; an end at the first or last pose stays there.
    """
    L = pair.revolution_length
    P = len(x)
    bad = pmin < -chk.tol
    intervals: list[tuple[float, float]] = []
    if not np.any(bad):
        return intervals

    def sharpen(a: np.ndarray, b: np.ndarray) -> np.ndarray:
        # Bisect every (clear a, overlapping b) pair at once; the result overlaps.
        for _ in range(32):
            mid = 0.5 * (a + b)
            th_mid = np.asarray(pair.wheel_angle(mid), dtype=float)
            is_bad = chk.evaluate(mid, th_mid, -chk.tol)[0] < -chk.tol
            b = np.where(is_bad, mid, b)
            a = np.where(is_bad, a, mid)
        return b

    idx = np.flatnonzero(bad)
    runs = np.split(idx, np.flatnonzero(np.diff(idx) > 1) + 1)
    # A seated corner is left out at its cusp pose, which splits one overlap into two
    # runs either side of the cusp: join runs whose gap is shorter than 1e-4 L.
    joined: list[list[int]] = []
    for rr in runs:
        i0, i1 = int(rr[0]), int(rr[-1])
        if joined and float(x[i0] - x[joined[-1][1]]) < 1e-4 * L:
            joined[-1][1] = i1
        else:
            joined.append([i0, i1])
    joined = joined[:64]
    clear_x, bad_x = [], []
    for i0, i1 in joined:
        if i0 != 0:
            clear_x.append(float(x[i0 - 1]))
            bad_x.append(float(x[i0]))
        if i1 != P - 1:
            clear_x.append(float(x[i1 + 1]))
            bad_x.append(float(x[i1]))
    ends = iter(sharpen(np.array(clear_x), np.array(bad_x)).tolist() if clear_x else [])
    for i0, i1 in joined:
        xa = float(x[i0]) if i0 == 0 else next(ends)
        xb = float(x[i1]) if i1 == P - 1 else next(ends)
        intervals.append((xa, xb))
    return intervals

def _euclid(track, px: float, py: float, gap: float) -> float:
    """Signed distance [m] from a point to the track (sign of the vertical gap)."""
    if gap == 0.0 or not math.isfinite(gap):
        return float(gap)
    w = abs(gap)
    xs = np.linspace(px - w, px + w, 257)
    ys = np.asarray(track.y(xs), dtype=float)
    d2 = (xs - px) ** 2 + (ys - py) ** 2
    i = int(np.argmin(d2))
    h = xs[1] - xs[0]
    res = find_minimum(lambda q: (q - px) ** 2 + (_at(track.y, q) - py) ** 2,
                       xs[i] - h, xs[i] + h, xatol=1e-14 * max(1.0, abs(px)))
    d = math.sqrt(min(float(d2[i]), float(res.fun)))
    return math.copysign(min(d, w), gap)


# ---------------------------------------------------------------------------- cusp seating
def _one_sided_slope(track, x: float, side: int, eps: float) -> float:
    """Slope at ``x`` [m] from one side (side = -1 left, +1 right), 2nd-order extrapolated."""
    s1 = _at(track.slope, x + side * eps)
    s2 = _at(track.slope, x + 2 * side * eps)
    return 2.0 * s1 - s2


def _corner_interior_angle(wheel, vertex: int | None, phi: float) -> float:
    if vertex is not None and wheel.is_polygon:
        V = np.array(wheel.vertices)
        n = len(V)
        e_in = V[vertex] - V[(vertex - 1) % n]
        e_out = V[(vertex + 1) % n] - V[vertex]
    else:
        h = 1e-6

        def tangent(side: int) -> np.ndarray:
            ph = np.array([phi, phi + side * h, phi + 2 * side * h])
            r = np.asarray(wheel.radius(ph), dtype=float)
            dr = side * (-3 * r[0] + 4 * r[1] - r[2]) / (2 * h)
            c, s = math.cos(phi), math.sin(phi)
            return np.array([dr * c - r[0] * s, dr * s + r[0] * c])

        e_in = tangent(-1)
        e_out = tangent(+1)
    turn = math.atan2(e_in[0] * e_out[1] - e_in[1] * e_out[0], float(np.dot(e_in, e_out)))
    return math.pi - turn


def cusp_seating(pair: RollingPair) -> list[CuspSeat]:
    """Corner-in-cusp geometry at every cusp of the first revolution.

    Parameters
    ----------
    pair : RollingPair
        The solved pair (the wheel must close).

    Returns
    -------
    list of CuspSeat
        One per cusp, in order of ``x``; empty for a smooth track.
    """
    if not isinstance(pair, RollingPair):
        raise InputError(f"pair must be a ridesim RollingPair, got {type(pair).__name__}")
    out = []
    eps = 1e-7 * pair.track.period
    for c in sorted(pair.cusps, key=lambda q: q.x_m):
        s_in = _one_sided_slope(pair.track, c.x_m, -1, eps)
        s_out = _one_sided_slope(pair.track, c.x_m, +1, eps)
        opening = math.pi + math.atan(s_in) - math.atan(s_out)
        interior = _corner_interior_angle(pair.wheel, c.vertex, c.phi_rad)
        out.append(CuspSeat(x_m=float(c.x_m), vertex=c.vertex, phi_rad=float(c.phi_rad),
                            interior_angle_rad=float(interior), opening_angle_rad=float(opening),
                            margin_rad=float(opening - interior),
                            approach_margin_rad=float(opening - HALF_PI)))
    return out

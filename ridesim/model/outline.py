"""Smooth curves through drawn or measured points, with corners only where they turn sharply.

A wheel outline or a track profile given as points is read as a smooth curve through
them: an interpolating cubic spline (periodic when the curve has no corner), broken
into separate pieces at the points where the polyline turns sharply. Each piece is a
not-a-knot cubic spline through its points (a parabola through three, a straight line
through two), so a polygon stays a polygon and a sampled curve becomes smooth again
(de Boor, *A Practical Guide to Splines*, Springer 1978/2001, ch. IV-V; scipy's
``CubicSpline``). Wheel outlines are parametric in cumulative chord length; track
profiles are functions ``f(x)``.

Which points are corners
------------------------
A point is a corner where the polyline turns by more than ``corner_angle_deg`` there
(the angle between the segment before and the one after). The default,
:data:`CORNER_ANGLE_DEG` = 10°, separates the two kinds of input met in practice:

* a smooth curve sampled at ``N`` points per turn of its tangent turns by about
  ``360°/N`` per point, so a curve sampled at 36 or more points per turn (any CAD export
  at a chord tolerance of 0.01 mm and a radius of curvature above 1.5 mm: the turn per
  chord is ``sqrt(8 δ κ)``) has no corner;
* a regular polygon turns by ``360°/n`` at each vertex, so every polygon of up to 35 sides
  stays a polygon, as do straight-segment track profiles whose slopes change by more
  than 10° (a sawtooth rising 1 in 10 turns by 11.4° at each joint).

``corners = "all"`` (a polygon), ``"none"`` (smooth everywhere) or a list of point
indices overrides the angle. Pure numpy/scipy, no I/O.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from ridesim.arrays import unique_sorted
from ridesim.errors import GeometryError, InputError
from ridesim.validate import is_number

__all__ = ["CORNER_ANGLE_DEG", "ClosedSpline", "PolarRim", "closed_turns", "open_turns", "choose_corners",
           "profile_spline"]

#: Default turn [deg] above which a point of a drawn outline or profile is a corner.
CORNER_ANGLE_DEG = 10.0
TWO_PI = 2.0 * math.pi


def closed_turns(points: np.ndarray) -> np.ndarray:
    """Turn [rad] of a closed polyline at each point (0 straight on, pi a reversal).

    Parameters
    ----------
    points : ndarray, shape (N, 2)
        Points [m] of a closed polyline (no repeated closing point).

    Returns
    -------
    ndarray, shape (N,)
        Absolute turning angle [rad] at each point, in [0, pi].
    """
    p = np.asarray(points, dtype=float)
    d_in = p - np.roll(p, 1, axis=0)
    d_out = np.roll(p, -1, axis=0) - p
    cross = d_in[:, 0] * d_out[:, 1] - d_in[:, 1] * d_out[:, 0]
    dot = (d_in * d_out).sum(axis=1)
    return np.abs(np.arctan2(cross, dot))


def choose_corners(turns: np.ndarray, corner_angle_deg: float, corners) -> np.ndarray:
    """Indices of the corner points, sorted.

    Parameters
    ----------
    turns : ndarray, shape (N,)
        Turning angle [rad] at each point (:func:`closed_turns`).
    corner_angle_deg : float
        A point is a corner where it turns by more than this [deg], in [0, 180).
    corners : None, "all", "none" or sequence of int
        Override: every point, no point, or these point indices (0-based).

    Returns
    -------
    ndarray of int
    """
    n = len(turns)
    if isinstance(corners, str):
        if corners == "all":
            return np.arange(n)
        if corners == "none":
            return np.zeros(0, dtype=int)
        raise InputError(f'corners must be "all", "none" or a list of point indices, got {corners!r}')
    if corners is not None:
        try:
            idx = [int(i) for i in corners]
        except (TypeError, ValueError):
            raise InputError(f'corners must be "all", "none" or a list of point indices, got {corners!r}'
                             ) from None
        if not all(is_number(i) for i in corners) or any(float(i) != int(i) for i in corners):
            raise InputError(f"corners must be whole point indices, got {corners!r}")
        bad = [i for i in idx if not 0 <= i < n]
        if bad:
            raise InputError(f"corners: point index {bad[0]} is outside 0..{n - 1}; count points from 0")
        return unique_sorted(np.asarray(idx, dtype=int))
    a = float(corner_angle_deg)
    if not math.isfinite(a) or not 0.0 <= a < 180.0:
        raise InputError(f"corner_angle_deg must be in [0, 180) degrees, got {corner_angle_deg!r}")
    return np.flatnonzero(turns > math.radians(a))


def _piece(t: np.ndarray, y: np.ndarray, periodic: bool):
    """Cubic spline of ``y`` over ``t`` as a scipy PPoly with 4 coefficient rows."""
    from scipy.interpolate import CubicSpline, PPoly

    if len(t) == 2:  # a straight segment
        c = np.array([[0.0], [0.0], [(y[1] - y[0]) / (t[1] - t[0])], [y[0]]])
        return PPoly(c, t)
    if periodic:
        return CubicSpline(t, y, bc_type="periodic")
    return CubicSpline(t, y, bc_type="not-a-knot")


def _join(pieces) -> tuple[np.ndarray, np.ndarray]:
    """Breakpoints and coefficients of consecutive PPoly pieces as one."""
    x = np.concatenate([pieces[0].x] + [p.x[1:] for p in pieces[1:]])
    c = np.concatenate([p.c for p in pieces], axis=1)
    return x, c


@dataclass(frozen=True, eq=False)
class ClosedSpline:
    """A closed planar curve: cubic spline pieces through points, joined at corners.

    The parameter ``s`` is the cumulative chord length [m] from point 0 (the first corner
    when there is one), over ``[0, length]``.

    Attributes
    ----------
    points : ndarray, shape (N, 2)
        The points [m], in the curve's order, starting at ``s = 0``.
    knots : ndarray, shape (N + 1,)
        Parameter ``s`` [m] at each point, the last being the closing one.
    corners : ndarray of int
        Indices into ``points`` of the corners.
    """

    points: np.ndarray
    knots: np.ndarray
    corners: np.ndarray
    _x: Callable[[np.ndarray, int], np.ndarray]  # scipy PPoly: (s, nu) -> values
    _y: Callable[[np.ndarray, int], np.ndarray]

    @classmethod
    def through(cls, points: np.ndarray, corners: np.ndarray) -> ClosedSpline:
        """Fit the curve through ``points`` with corners at the given indices.

        Parameters
        ----------
        points : ndarray, shape (N, 2)
            Distinct points [m] of a closed outline, N >= 3.
        corners : ndarray of int
            Corner indices, sorted.

        Returns
        -------
        ClosedSpline
        """
        from scipy.interpolate import PPoly

        p = np.asarray(points, dtype=float)
        n = len(p)
        corners = np.asarray(corners, dtype=int)
        shift = int(corners[0]) if corners.size else 0
        p = np.roll(p, -shift, axis=0)
        cs = np.sort((corners - shift) % n)
        closed = np.vstack([p, p[:1]])
        s = np.concatenate(([0.0], np.cumsum(np.linalg.norm(np.diff(closed, axis=0), axis=1))))
        if cs.size == 0:
            px = [_piece(s, closed[:, 0], True)]
            py = [_piece(s, closed[:, 1], True)]
        else:
            ends = [*cs.tolist(), n]
            px, py = [], []
            for a, b in zip(ends[:-1], ends[1:], strict=True):
                px.append(_piece(s[a:b + 1], closed[a:b + 1, 0], False))
                py.append(_piece(s[a:b + 1], closed[a:b + 1, 1], False))
        bx, cx = _join(px)
        by, cy = _join(py)
        return cls(points=p, knots=s, corners=cs, _x=PPoly(cx, bx, extrapolate="periodic"),
                   _y=PPoly(cy, by, extrapolate="periodic"))

    @property
    def length(self) -> float:
        """Parameter length [m] (the closed polyline's perimeter)."""
        return float(self.knots[-1])

    def xy(self, s: np.ndarray, nu: int = 0) -> np.ndarray:
        """Points (``nu = 0``) or derivatives of order ``nu`` at parameter ``s`` [m], shape (..., 2)."""
        s = np.asarray(s, dtype=float)
        return np.stack([self._x(s, nu), self._y(s, nu)], axis=-1)

    @cached_property
    def _coef_rows(self) -> np.ndarray:
        """Both coordinates' coefficients per knot interval, shape (intervals, 8): x's then y's."""
        return np.ascontiguousarray(np.concatenate([self._x.c, self._y.c], axis=0).T)  # type: ignore[attr-defined]

    def xy_d1(self, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Points and first derivatives at ``s`` [m]: ``xy(s)`` and ``xy(s, 1)``, located once.

        The same arithmetic as scipy's ``PPoly`` (the periodic wrap, the interval closed on
        the left, the powers summed from the constant term up), so the values are those of
        :meth:`xy` to the last bit; both coordinates and orders share one interval search
        and one gather of coefficients, the cost of two of the four ``PPoly`` calls.
        """
        br = self._x.x  # type: ignore[attr-defined]
        s = np.asarray(s, dtype=float)
        if s.size and not (br[0] <= s.min() and s.max() < br[-1]):  # within a period it is s itself
            s = br[0] + (s - br[0]) % (br[-1] - br[0])
        i = np.minimum(np.searchsorted(br, s, side="right") - 1, len(br) - 2)
        i = np.maximum(i, 0)
        c = self._coef_rows[i]  # (..., 8): x's c0..c3 (highest power first), then y's
        t = s - br[i]
        t2 = t * t
        t3 = t2 * t
        p = np.empty(s.shape + (2,))
        d = np.empty(s.shape + (2,))
        for k, o in enumerate((0, 4)):
            c0, c1, c2, c3 = c[..., o], c[..., o + 1], c[..., o + 2], c[..., o + 3]
            p[..., k] = c3 + c2 * t + c1 * t2 + c0 * t3
            d[..., k] = c2 + c1 * t * 2.0 + c0 * t2 * 3.0
        return p, d

    def sample(self, tol_m: float, max_points: int = 200_000) -> np.ndarray:
        """Points [m] along the curve whose chords stay within ``tol_m`` of it, corners kept.

        Every knot is kept; each knot interval gets ``m`` equal parameter steps where
        ``m`` satisfies ``|P''| h^2 / 8 <= tol_m`` (the sagitta of a chord across a curve
        of bounded second derivative), so the polyline is within ``tol_m`` of the spline.

        Parameters
        ----------
        tol_m : float
            Largest distance [m] from chord to curve.
        max_points : int
            Upper bound on the number of points.

        Returns
        -------
        ndarray, shape (M, 2)
            Points in order, no closing repeat.
        """
        k = self.knots
        h = np.diff(k)
        # |P''| bound on each interval: the larger of its two end values (linear in s).
        d2 = np.linalg.norm(self.xy(np.minimum(k[:-1] + 1e-12 * h, k[1:]), 2), axis=-1)
        d2b = np.linalg.norm(self.xy(np.maximum(k[1:] - 1e-12 * h, k[:-1]), 2), axis=-1)
        acc = np.maximum(d2, d2b)
        m = np.maximum(1, np.ceil(h * np.sqrt(acc / (8.0 * max(tol_m, 1e-12))))).astype(int)
        m = np.minimum(m, max(1, max_points // max(1, len(h))))
        s = np.concatenate([k[i] + h[i] * np.arange(m[i]) / m[i] for i in range(len(h))])
        return self.xy(s)

    def polar(self) -> PolarRim:
        """The curve as a radius about the origin (the axle): see :class:`PolarRim`."""
        return PolarRim(self)


class PolarRim:
    """Radius about the origin of a star-shaped :class:`ClosedSpline`.

    The polar angle of ``P(s)`` rises monotonically with ``s`` on a star-shaped curve
    (anticlockwise), so the ray at angle ``phi`` meets the curve once, at the root of
    ``cross(u(phi), P(s)) = 0``: found by Newton's method from a tabulated first guess,
    kept inside the bracketing table step. Raises GeometryError when the origin does not
    see the whole curve.
    """

    _SUB = 16  # table samples per knot interval

    def __init__(self, curve: ClosedSpline) -> None:
        self.curve = curve
        k = curve.knots
        h = np.diff(k)
        u = np.arange(self._SUB) / self._SUB
        s = np.concatenate([(k[:-1, None] + h[:, None] * u[None, :]).ravel(), [k[-1]]])
        p, d = curve.xy_d1(s)
        cross = p[:, 0] * d[:, 1] - p[:, 1] * d[:, 0]
        ang = np.unwrap(np.arctan2(p[:, 1], p[:, 0]))
        scale = float(np.max(np.linalg.norm(p, axis=1)))
        if (np.any(cross <= 1e-12 * scale * scale) or np.any(np.diff(ang) <= 0)
                or abs(ang[-1] - ang[0] - TWO_PI) > 1e-9):
            j = int(np.argmin(cross))
            raise GeometryError(
                "the outline is not star-shaped about the axle (the smooth rim near"
                f" ({float(p[j, 0]):.6g}, {float(p[j, 1]):.6g}) m is not seen from inside); move the"
                " axle inside the outline, fix the points, or give corners"
            )
        self.s_tab = s
        self.a_tab = ang
        self.a0 = float(ang[0])

    def angle_of(self, s: np.ndarray) -> np.ndarray:
        """Polar angle [rad] of the curve point at parameter ``s``, in ``[a0, a0 + 2π)``."""
        p = self.curve.xy(s)
        return np.mod(np.arctan2(p[..., 1], p[..., 0]) - self.a0, TWO_PI) + self.a0

    def param(self, phi: np.ndarray) -> np.ndarray:
        """Parameter ``s`` [m] where the ray at polar angle ``phi`` [rad] meets the curve."""
        phi = np.asarray(phi, dtype=float)
        a = np.mod(phi - self.a0, TWO_PI) + self.a0
        j = np.clip(np.searchsorted(self.a_tab, a, side="right") - 1, 0, len(self.s_tab) - 2)
        lo, hi = self.s_tab[j], self.s_tab[j + 1]
        s = lo + (hi - lo) * (a - self.a_tab[j]) / (self.a_tab[j + 1] - self.a_tab[j])
        c, sn = np.cos(a), np.sin(a)
        # Six Newton steps a point; a point that a step leaves where it was would stay there
        # (the same step again), so it drops out: after three steps most have (a sixth
        # keep moving by an ulp to the end), and the rest cost a fraction of the whole.
        shape = s.shape
        s, lo, hi, c, sn = (np.ravel(v).copy() for v in (s, lo, hi, c, sn))
        act = None  # every point, the first time
        for _ in range(6):
            if act is None:
                sa, ca, sna, la, ha = s, c, sn, lo, hi
            else:
                sa, ca, sna, la, ha = s[act], c[act], sn[act], lo[act], hi[act]
            p, d = self.curve.xy_d1(sa)
            f = ca * p[..., 1] - sna * p[..., 0]
            df = ca * d[..., 1] - sna * d[..., 0]
            step = f / df
            new = np.clip(sa - step, la, ha)
            moved = np.flatnonzero(new != sa)
            if act is None:
                s = new
                act = moved
            else:
                s[act] = new
                act = act[moved]
            if not act.size:
                break
        return s.reshape(shape)

    def radius(self, phi: np.ndarray) -> np.ndarray:
        """Distance [m] from the origin to the curve along polar angle ``phi`` [rad]."""
        phi = np.asarray(phi, dtype=float)
        p, _ = self.curve.xy_d1(self.param(phi))
        return np.cos(phi) * p[..., 0] + np.sin(phi) * p[..., 1]


def profile_spline(nodes: np.ndarray, corners: np.ndarray, period: float):
    """Smooth periodic profile ``f(x)`` through track nodes, with corners at given nodes.

    Parameters
    ----------
    nodes : ndarray, shape (N + 1, 2)
        ``(x, f)`` [m] over one period, strictly increasing x, the last node the first
        shifted by the period at the same height.
    corners : ndarray of int
        Indices (0..N-1) of the nodes where the slope may jump.
    period : float
        Repeat length [m].

    Returns
    -------
    (PPoly, float)
        The profile over ``[x_start, x_start + period]`` (extrapolating periodically) and
        ``x_start`` [m], the first corner (or the first node).
    """
    from scipy.interpolate import PPoly

    nd = np.asarray(nodes, dtype=float)
    n = len(nd) - 1
    corners = np.asarray(corners, dtype=int)
    shift = int(corners[0]) if corners.size else 0
    x = np.concatenate([nd[shift:n, 0], nd[:shift + 1, 0] + period])
    f = np.concatenate([nd[shift:n, 1], nd[:shift + 1, 1]])
    cs = np.sort((corners - shift) % n)
    if cs.size == 0:
        parts = [_piece(x, f, True)]
    else:
        ends = [*cs.tolist(), n]
        parts = [_piece(x[a:b + 1], f[a:b + 1], False) for a, b in zip(ends[:-1], ends[1:], strict=True)]
    bx, c = _join(parts)
    return PPoly(c, bx, extrapolate="periodic"), float(x[0])


def open_turns(nodes: np.ndarray) -> np.ndarray:
    """Turn [rad] at each node of a periodic profile (node 0 joins the last segment to the first).

    Parameters
    ----------
    nodes : ndarray, shape (N + 1, 2)
        Profile nodes over one period, the last the first shifted by the period.

    Returns
    -------
    ndarray, shape (N,)
    """
    nd = np.asarray(nodes, dtype=float)
    ang = np.arctan2(np.diff(nd[:, 1]), np.diff(nd[:, 0]))
    return np.abs(ang - np.roll(ang, 1))

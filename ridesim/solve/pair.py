"""The solved wheel/track pair and the maps between axle position and wheel angle.

Conventions (axle path along the x axis, track below it): the wheel rolls towards
+x turning clockwise; ``wheel_angle(x)`` [rad] is that clockwise rotation from the
pose in which the wheel was defined. The rim point in contact is the one on the
ray at wheel-frame angle ``wheel_angle(x) - pi/2`` (straight below the axle), so
``r = -y`` and ``dx = r dθ``.

A map covers one *base* stretch of ``x_span`` [m] and ``theta_span`` [rad] (a whole
revolution for a wheel-first solve, one track period for a track-first solve) and
is extended periodically: ``theta(x + x_span) = theta(x) + theta_span``.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from ridesim.errors import ClosureError
from ridesim.model.track import Track
from ridesim.model.wheel import Wheel
from ridesim.records import record
from ridesim.solve.table import MonotoneMap, extend_periodic

__all__ = ["RollingPair", "Cusp", "CatenaryMap", "TableMap", "SpiralMap"]

HALF_PI = 0.5 * math.pi
TWO_PI = 2.0 * math.pi


@record
class Cusp:
    """A corner of the track, where a wheel vertex seats.

    Attributes
    ----------
    x_m : float
        Position along the axle path [m], within the first revolution ``[0, L)``.
    vertex : int or None
        Index of the wheel vertex that seats here (polygon wheels), else None.
    phi_rad : float
        Wheel-frame polar angle [rad] of the rim corner that seats here.
    depth_m : float
        Distance [m] from the axle line down to the cusp (the corner's radius).
    kind : str
        ``"valley"``: the track bends up there, a V into which a convex wheel corner seats (a
        cusp proper); ``"crest"``: it bends down, a ridge that a re-entrant corner of the
        wheel rocks over (the peaks of a sawtooth track).
    """

    x_m: float
    vertex: int | None
    phi_rad: float
    depth_m: float
    kind: str = "valley"


def make_cusps(x_m, vertex, phi_rad, depth_m) -> list[Cusp]:
    """Cusps from parallel sequences of their fields (plain Python numbers), kind "valley".

    The same objects as ``Cusp(...)`` one by one, built without the frozen dataclass's
    per-field ``__init__`` (the fields go straight into each instance's ``__dict__``), which
    matters for outlines with thousands of corners.
    """
    new = object.__new__
    out = []
    for xc, v, ph, dep in zip(x_m, vertex, phi_rad, depth_m, strict=True):
        c = new(Cusp)
        c.__dict__.update(x_m=xc, vertex=v, phi_rad=ph, depth_m=dep, kind="valley")
        out.append(c)
    return out


def corner_kind(track: Track, x_m: float) -> str:
    """Whether the track's corner at ``x_m`` [m] is a valley or a crest (see :class:`Cusp`).

    Parameters
    ----------
    track : Track
        The track (lowered as the pair uses it).
    x_m : float
        Position [m] of the corner.

    Returns
    -------
    str
        ``"valley"`` or ``"crest"``.
    """
    eps = 1e-6 * track.period
    y = track.y(np.array([x_m - eps, x_m, x_m + eps]))
    return "valley" if y[0] + y[2] - 2.0 * y[1] >= 0.0 else "crest"


def classify_corners(track: Track, cusps) -> tuple[Cusp, ...]:
    """``cusps`` with each one's :attr:`Cusp.kind` read off ``track`` (as :func:`corner_kind`)."""
    cusps = tuple(cusps)
    if not cusps:
        return cusps
    # corner_kind for all corners in one vectorised call on the track.
    eps = 1e-6 * track.period
    xc = np.array([c.x_m for c in cusps], dtype=float)
    y = np.asarray(track.y(np.stack([xc - eps, xc, xc + eps], axis=1).ravel()),
                   dtype=float).reshape(-1, 3)
    valley = y[:, 0] + y[:, 2] - 2.0 * y[:, 1] >= 0.0
    out = []
    for c, v in zip(cusps, valley, strict=True):
        kind = "valley" if v else "crest"
        out.append(c if c.kind == kind else replace(c, kind=kind))
    return tuple(out)


class CatenaryMap:
    """Exact map for a wheel made of straight edges: each edge rolls on a catenary arch.

    Edge ``i`` at distance ``d_i`` from the axle with its foot at wheel-frame angle
    ``alpha_i`` is in contact while ``theta - pi/2 - alpha_i = u`` with ``x = xm_i +
    d_i asinh(tan u)`` and ``y = -d_i cosh((x - xm_i)/d_i)`` (Hall & Wagon, "Roads
    and Wheels", Mathematics Magazine 65(5), 1992).
    """

    def __init__(self, wheel: Wheel, theta0: float) -> None:
        starts, d, alpha = wheel.edge_lines()
        th = starts + HALF_PI  # wheel angle at which each vertex is straight below the axle
        # Rotate the list so that the base revolution starts at the first vertex contact >= theta0 - 2π.
        shift = TWO_PI * math.floor((th[0] - theta0) / TWO_PI + 1.0)
        th = th - shift
        # Now th[0] <= theta0 < th[0] + 2π. x is measured from the contact at theta0.
        u0 = th[:-1] - HALF_PI - alpha
        u1 = th[1:] - HALF_PI - alpha
        u0 = (u0 + math.pi) % TWO_PI - math.pi
        u1 = u0 + np.diff(th)
        dx = d * (np.arcsinh(np.tan(u1)) - np.arcsinh(np.tan(u0)))
        xb = np.concatenate(([0.0], np.cumsum(dx)))
        self.d = d
        self.alpha_u0 = u0
        self.theta_breaks = th
        # x at theta0
        i0 = int(np.clip(np.searchsorted(th, theta0, side="right") - 1, 0, len(d) - 1))
        x_at0 = xb[i0] + d[i0] * (np.arcsinh(np.tan(u0[i0] + theta0 - th[i0]))
                                  - np.arcsinh(np.tan(u0[i0])))
        self.x_breaks = xb - x_at0
        self.xm = self.x_breaks[:-1] - d * np.arcsinh(np.tan(u0))
        self.x_lo = float(self.x_breaks[0])
        self.theta_lo = float(th[0])
        self.x_span = float(xb[-1])
        self.theta_span = TWO_PI
        self.vertex_order = np.arange(len(d))

    def _edge_of_x(self, x: np.ndarray) -> np.ndarray:
        i = np.searchsorted(self.x_breaks, x, side="right") - 1
        return np.clip(i, 0, len(self.d) - 1)

    def theta_of_x(self, x: np.ndarray) -> np.ndarray:
        """Wheel angle [rad] at base position ``x`` [m]."""
        i = self._edge_of_x(x)
        u = np.arctan(np.sinh((x - self.xm[i]) / self.d[i]))
        return self.theta_breaks[i] + (u - self.alpha_u0[i])

    def x_of_theta(self, theta: np.ndarray) -> np.ndarray:
        """Base position [m] at wheel angle ``theta`` [rad]."""
        i = np.searchsorted(self.theta_breaks, theta, side="right") - 1
        i = np.clip(i, 0, len(self.d) - 1)
        u = self.alpha_u0[i] + (theta - self.theta_breaks[i])
        return self.xm[i] + self.d[i] * np.arcsinh(np.tan(u))

    def y_of_theta(self, theta: np.ndarray) -> np.ndarray:
        """Track height [m] under the axle at base wheel angle ``theta`` [rad]: ``-d/cos u``."""
        i = np.searchsorted(self.theta_breaks, theta, side="right") - 1
        i = np.clip(i, 0, len(self.d) - 1)
        return -self.d[i] / np.cos(self.alpha_u0[i] + (theta - self.theta_breaks[i]))

    def y(self, x: np.ndarray) -> np.ndarray:
        """Track height [m] at base position ``x`` [m]: ``-d cosh((x - xm)/d)``."""
        i = self._edge_of_x(x)
        return -self.d[i] * np.cosh((x - self.xm[i]) / self.d[i])

    def slope(self, x: np.ndarray) -> np.ndarray:
        """Track slope at base position ``x`` [m]: ``-sinh((x - xm)/d)``."""
        i = self._edge_of_x(x)
        return -np.sinh((x - self.xm[i]) / self.d[i])


class TableMap:
    """Map from a polynomial table: forward (``s = theta``) or inverse (``s = x``) solve."""

    def __init__(self, table: MonotoneMap, s_is_x: bool, x_lo: float, theta_lo: float) -> None:
        self.table = table
        self.s_is_x = s_is_x
        span = table.total
        self.x_lo, self.theta_lo = float(x_lo), float(theta_lo)
        self.x_span = span if not s_is_x else table.forward.hi - table.forward.lo
        self.theta_span = span if s_is_x else table.forward.hi - table.forward.lo

    def theta_of_x(self, x: np.ndarray) -> np.ndarray:
        """Wheel angle [rad] at base position ``x`` [m]."""
        return self.table.forward.G(x) if self.s_is_x else self.table.inverse.G(x)

    def x_of_theta(self, theta: np.ndarray) -> np.ndarray:
        """Base position [m] at wheel angle ``theta`` [rad]."""
        return self.table.inverse.G(theta) if self.s_is_x else self.table.forward.G(theta)

    def y_of_theta(self, theta: np.ndarray) -> np.ndarray | None:
        """Track height [m] at base wheel angle ``theta`` [rad] (forward solves; else None)."""
        return None if self.s_is_x else -self.table.forward.g(theta)

    def y(self, x: np.ndarray) -> np.ndarray:
        """Track height [m] from the table (forward solves only)."""
        return -self.table.forward.g(self.table.inverse.G(x))

    def slope(self, x: np.ndarray) -> np.ndarray:
        """Track slope from the table (forward solves only): ``-r'(θ)/r``."""
        th = self.table.inverse.G(x)
        return -self.table.forward.dg(th) / self.table.forward.g(th)

    def y_and_slope(self, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """:meth:`y` and :meth:`slope` at ``x`` [m], the wheel angle found once (the same values)."""
        th = self.table.inverse.G(x)
        g, dg = self.table.forward.g_and_dg(th)
        return -g, -dg / g


def _log1p_over(q: np.ndarray) -> np.ndarray:
    """``log1p(q)/q`` with the limit 1 at q = 0."""
    small = np.abs(q) < 1e-8
    qs = np.where(small, 1.0, q)
    return np.where(small, 1.0 - 0.5 * q + q * q / 3.0, np.log1p(qs) / qs)


def _expm1_over(z: np.ndarray) -> np.ndarray:
    """``expm1(z)/z`` with the limit 1 at z = 0."""
    small = np.abs(z) < 1e-8
    zs = np.where(small, 1.0, z)
    return np.where(small, 1.0 + 0.5 * z + z * z / 6.0, np.expm1(zs) / zs)


class SpiralMap:
    """Exact map for a track of straight segments: each segment rolls a logarithmic spiral.

    On a segment from ``x_j`` with contact radius ``r_j = depth - f(x_j)`` and slope
    ``s_j``, ``r = r_j - s_j (x - x_j)`` and ``θ - θ_j = -ln(r/r_j)/s_j``.
    """

    def __init__(self, nodes: np.ndarray, depth: float) -> None:
        x, f = nodes[:, 0], nodes[:, 1]
        self.xn = x
        self.r = depth - f[:-1]
        self.s = np.diff(f) / np.diff(x)
        dth = np.diff(x) / self.r * _log1p_over(-self.s * np.diff(x) / self.r)
        self.thn = np.concatenate(([0.0], np.cumsum(dth)))
        self.x_lo, self.theta_lo = float(x[0]), 0.0
        self.x_span = float(x[-1] - x[0])
        self.theta_span = float(self.thn[-1])

    def theta_of_x(self, x: np.ndarray) -> np.ndarray:
        """Wheel angle [rad] at base position ``x`` [m]."""
        j = np.clip(np.searchsorted(self.xn, x, side="right") - 1, 0, len(self.s) - 1)
        dx = x - self.xn[j]
        return self.thn[j] + dx / self.r[j] * _log1p_over(-self.s[j] * dx / self.r[j])

    def x_of_theta(self, theta: np.ndarray) -> np.ndarray:
        """Base position [m] at wheel angle ``theta`` [rad]."""
        j = np.clip(np.searchsorted(self.thn, theta, side="right") - 1, 0, len(self.s) - 1)
        dth = theta - self.thn[j]
        return self.xn[j] + self.r[j] * dth * _expm1_over(-self.s[j] * dth)


class RollingPair:
    """A wheel and the track it rolls on with its axle on a horizontal line.

    Attributes
    ----------
    wheel : Wheel
        The wheel (for a track-first solve, the wheel found for the track).
    track : Track
        The track actually rolled on, below the axle line (``y < 0``).
    depth : float
        Depth [m] by which the given track shape was lowered (0 for a wheel-first solve).
    lobes : int
        Track periods per wheel revolution.
    revolution_length : float
        Axle travel [m] per wheel revolution.
    closed : bool
        False only for a track-first solve at an explicit depth that does not close.
    closure_gap_rad : float
        Wheel angle [rad] swept over ``lobes`` periods minus 2π (0 when closed).
    cusps : tuple of Cusp
        Corners of the track within the first revolution.
    """

    def __init__(self, wheel: Wheel | None, track: Track, rmap, *, depth: float, lobes: int,
                 closed: bool, closure_gap_rad: float, cusps: tuple[Cusp, ...],
                 path: str = "line", theta_at_x0: float | None = None) -> None:
        self._wheel = wheel
        self.track = track
        self._map = rmap
        self.depth = float(depth)
        self.lobes = int(lobes)
        self.closed = bool(closed)
        self.closure_gap_rad = float(closure_gap_rad)
        self.cusps = classify_corners(track, cusps)
        self.path = path
        self._theta0 = theta_at_x0
        self.revolution_length = float(rmap.x_span * (TWO_PI / rmap.theta_span))

    @property
    def wheel(self) -> Wheel:
        """The wheel; raises ClosureError when the track-first solve does not close."""
        if self._wheel is None:
            raise ClosureError(
                f"the wheel does not close at depth {self.depth:.6g} m: after {self.lobes}"
                f" period(s) it is {self.closure_gap_rad:+.6g} rad from a full turn; use lobes"
                " to find a closing depth"
            )
        return self._wheel

    def wheel_angle(self, x: np.ndarray | float) -> np.ndarray:
        """Clockwise wheel rotation [rad] when the axle is above ``x`` [m] (vectorised)."""
        m = self._map
        return extend_periodic(m.theta_of_x, x, m.x_lo, m.x_span, m.theta_span)

    def axle_x(self, theta: np.ndarray | float) -> np.ndarray:
        """Axle position [m] at which the wheel has turned ``theta`` [rad] (vectorised)."""
        m = self._map
        return extend_periodic(m.x_of_theta, theta, m.theta_lo, m.theta_span, m.x_span)

    def contact_radius(self, x: np.ndarray | float) -> np.ndarray:
        """Axle-to-contact distance [m] when the axle is above ``x`` [m]: ``-y(x)``."""
        return -self.track.y(x)

    def depth_range(self) -> tuple[float, float]:
        """Shallowest and deepest contact below the axle line [m] (least and greatest r)."""
        lo, hi = self.track.shape_range()
        return self.depth - hi, self.depth - lo

    def dense(self, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """``n`` samples evenly spaced in wheel angle over the first revolution from x = 0.

        Returns
        -------
        theta : ndarray
            Wheel angle [rad].
        x : ndarray
            Axle position [m].
        y : ndarray
            Track height [m] at the contact.
        """
        m = self._map
        th0 = self._theta0 if self._theta0 is not None else float(self.wheel_angle(0.0))
        theta = np.linspace(th0, th0 + TWO_PI, int(n), endpoint=False)
        tol = 1e-12 * TWO_PI
        inside = th0 >= m.theta_lo - tol and th0 + TWO_PI <= m.theta_lo + m.theta_span + tol
        if inside and isinstance(m, TableMap) and not m.s_is_x:
            # One base stretch of a wheel-first table: x and y in one pass, no wrapping.
            x, r = m.table.forward.G_and_g(theta)
            np.negative(r, out=r)
            return theta, x, r
        if inside:
            x = m.x_of_theta(theta)
            y = m.y_of_theta(theta) if isinstance(m, CatenaryMap) else self.track.y(x)
            return theta, x, y
        x = self.axle_x(theta)
        return theta, x, self.track.y(x)

    def _repr_svg_(self) -> str:
        """A small drawing of the wheel on two periods of its track, for Jupyter."""
        from ridesim.model.display import svg_drawing

        P = self.track.period
        x = 0.6 * P
        th = float(self.wheel_angle(x))
        pts = self.wheel.outline_points(360)
        c, s = math.cos(th), math.sin(th)
        posed = np.column_stack([x + c * pts[:, 0] + s * pts[:, 1], -s * pts[:, 0] + c * pts[:, 1]])
        track = self.track.polyline(x - 1.2 * P, x + 1.2 * P, 400)
        return svg_drawing([(track, "#6e5634", "none"), (posed, "#1f4e79", "#a9c8e2")],
                           marks=[(x, 0.0)], width_px=420,
                           title=f"{self.lobes} period(s) of {P * 1000:.1f} mm per revolution")

    def to_dict(self) -> dict:
        """Summary of the solve with SI units in every key (JSON-ready plain values).

        Returns
        -------
        dict
            ``period_m``, ``revolution_length_m``, ``depth_min_m``, ``depth_max_m``
            (least and greatest axle-to-contact distance), ``lobes``, ``cusps`` (list of
            ``{x_m, depth_m, phi_rad, vertex}`` in the first revolution), ``depth_m`` (the
            lowering of a given track shape, 0 for a wheel-first solve), ``closed``,
            ``closure_gap_rad``, ``solved_from`` (``wheel`` or ``track``) and ``wheel``.
        """
        dmin, dmax = self.depth_range()
        out: dict[str, object] = {
            "solved_from": "track" if self.track.kind != "solved" else "wheel",
            "period_m": float(self.track.period),
            "revolution_length_m": float(self.revolution_length),
            "depth_min_m": float(dmin),
            "depth_max_m": float(dmax),
            "lobes": int(self.lobes),
            "cusps": [
                {"x_m": c.x_m, "depth_m": c.depth_m, "phi_rad": c.phi_rad, "vertex": c.vertex,
                 "kind": c.kind}
                for c in self.cusps
            ],
            "depth_m": float(self.depth),
            "closed": bool(self.closed),
            "closure_gap_rad": float(self.closure_gap_rad),
            "wheel_angle_at_x0_rad": float(self.wheel_angle(0.0)),
        }
        if self._wheel is not None:
            w = self._wheel
            out["wheel"] = {"kind": w.kind, "symmetry": int(w.symmetry),
                            "params": {k: v for k, v in w.params.items()}}
        return out

    def __repr__(self) -> str:
        return (f"RollingPair(wheel={self._wheel!r}, period={self.track.period:.6g} m,"
                f" lobes={self.lobes}, depth={self.depth:.6g} m)")

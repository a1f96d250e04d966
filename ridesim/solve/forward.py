"""The track for a wheel (wheel-first solve).

With the axle path on the x axis, the contact point is straight below the axle
(``y = -r``) and the rim does not slip (``dx = r dθ``), so ``x(θ) = ∫ r dθ``
(Hall & Wagon, "Roads and Wheels", Mathematics Magazine 65(5):283-301, 1992).
Straight edges give exact catenary arches; smooth rims are integrated with the
adaptive Chebyshev tables of :mod:`ridesim.solve.table`.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from ridesim.errors import GeometryError, InputError
from ridesim.model.track import Track
from ridesim.model.wheel import Wheel
from ridesim.solve.pair import CatenaryMap, Cusp, RollingPair, TableMap, make_cusps
from ridesim.solve.table import build_map

__all__ = ["track_for", "AXLE_PATHS"]

HALF_PI = 0.5 * math.pi
TWO_PI = 2.0 * math.pi

#: Axle paths the solver knows. A circle about a hub (``r + ρ = E``, ``r dθ = ρ dψ``)
#: is planned as a second entry; every solve takes the path as a parameter.
AXLE_PATHS = ("line",)


def _check_path(path: str) -> None:
    if path not in AXLE_PATHS:
        raise InputError(f"path must be one of {', '.join(AXLE_PATHS)}, got {path!r}")


def _wrap_pi(a: float) -> float:
    return (a + math.pi) % TWO_PI - math.pi


def _nearest_angle(ref: np.ndarray, targets: np.ndarray) -> np.ndarray:
    """Index into ``ref`` of the angle nearest (modulo 2π) to each of ``targets`` [rad]."""
    ref_w = np.mod(ref, TWO_PI)
    order = np.argsort(ref_w, kind="stable")
    srt = ref_w[order]
    t = np.mod(targets, TWO_PI)
    hi = np.searchsorted(srt, t) % len(srt)
    lo = (hi - 1) % len(srt)
    d_hi = np.abs(np.angle(np.exp(1j * (srt[hi] - t))))
    d_lo = np.abs(np.angle(np.exp(1j * (srt[lo] - t))))
    # Ties go to the lower index in ``ref``, as a first-match argmin would.
    pick_lo = (d_lo < d_hi) | ((d_lo == d_hi) & (order[lo] < order[hi]))
    return np.where(pick_lo, order[lo], order[hi])


def _distinct_kinks(xs: list[float], period: float) -> list[float]:
    """Sorted corner positions [m] in ``[0, period)``, one per group closer than 1e-9 period.

    Values are taken in increasing order and kept unless within the tolerance of one already
    kept; one just short of the period's end is the corner at its start (x = 0).
    """
    tol = 1e-9 * period
    kept: list[float] = []
    has_zero_near = False  # a kept value within tol of 0
    last = -math.inf
    for xc in sorted(xs):
        if xc > period * (1 - 1e-9):
            # A cusp at the period's end is the one at its start. Kept values are >= 0 and
            # sorted, so only those within tol of 0 can match it.
            if not has_zero_near:
                kept.append(0.0)
                has_zero_near = True
            continue
        # Values come sorted, so the nearest kept one is the last.
        if xc - last > tol:
            kept.append(xc)
            last = xc
            if abs(xc) <= tol:
                has_zero_near = True
    kept.sort()
    return kept


def track_for(wheel: Wheel, *, path: str = "line") -> RollingPair:
    """Solve the ideal track for ``wheel``.

    Parameters
    ----------
    wheel : Wheel
        The wheel, axle at its origin.
    path : str
        Axle path; only ``"line"`` (a horizontal straight line) so far.

    Returns
    -------
    RollingPair
        The pair, with ``x = 0`` where the least radius is in contact (a highest point
        of the track) and ``track.period = revolution_length / wheel.symmetry``.

    Examples
    --------
    >>> import math, ridesim as rs
    >>> pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=0.3))
    >>> round(pair.track.period, 12) == round(2 * 0.3 * math.asinh(1.0), 12)
    True
    """
    _check_path(path)
    if not isinstance(wheel, Wheel):
        raise InputError(f"wheel must be a ridesim Wheel, got {type(wheel).__name__}")
    rmin, rmax, phi_min = wheel.extremes()
    theta0 = _wrap_pi(phi_min + HALF_PI)  # wheel angle with the least radius straight down
    k = wheel.symmetry
    if wheel.is_round:
        k = 1
    round_wheel = wheel.is_round
    rmap: CatenaryMap | TableMap
    # y and slope in one pass (a table's solve: the wheel angle found once), else None
    y_slope_rev: Callable[[np.ndarray], tuple[np.ndarray, np.ndarray]] | None = None
    if wheel.is_polygon:
        rmap = CatenaryMap(wheel, theta0)
        rev = rmap.x_span
        base_lo = rmap.x_lo

        def y_rev(x: np.ndarray) -> np.ndarray:
            return rmap.y(np.mod(x - base_lo, rev) + base_lo)

        def slope_rev(x: np.ndarray) -> np.ndarray:
            return rmap.slope(np.mod(x - base_lo, rev) + base_lo)

        th_v = rmap.theta_breaks[:-1]
        x_v = rmap.x_breaks[:-1]
        starts, _, _ = wheel.edge_lines()
        verts = wheel.vertices
        if verts is None:
            raise GeometryError("a polygon wheel needs its vertices")
        phis = np.mod(th_v - HALF_PI, TWO_PI)
        # Match each vertex by angle (the map list may be rotated).
        js = _nearest_angle(starts[:-1], th_v - HALF_PI)
        xs = np.mod(x_v, rev)
        depths = np.hypot(verts[js, 0], verts[js, 1])
        o = np.argsort(xs, kind="stable")  # the order of the sort below, done here in bulk
        cusps = make_cusps(xs[o].tolist(), js[o].tolist(), phis[o].tolist(), depths[o].tolist())
    else:
        def unwrap(angles):
            ts = [_wrap_pi(kk + HALF_PI - theta0) + theta0 for kk in angles]
            return sorted(t + TWO_PI if t < theta0 else t for t in ts)

        kinks = unwrap(wheel.kinks)
        corner_t = [t for t in kinks if theta0 < t < theta0 + TWO_PI]
        # Curvature breaks of a smooth rim (a rounded polygon's flats and arcs) split the
        # tables too, but the track stays smooth there: no cusps.
        smooth_t = [t for t in unwrap(wheel.breaks) if theta0 < t < theta0 + TWO_PI]
        breaks = [theta0, *sorted(set(corner_t) | set(smooth_t)), theta0 + TWO_PI]

        def g(theta: np.ndarray) -> np.ndarray:
            return wheel.radius(theta - HALF_PI)

        table = build_map(g, breaks, G0=0.0)
        rmap = TableMap(table, s_is_x=False, x_lo=0.0, theta_lo=theta0)
        rev = rmap.x_span

        if round_wheel:  # a circle about its centre rolls on an exactly flat track

            def y_rev(x: np.ndarray) -> np.ndarray:
                return np.full(np.shape(x), -rmin)

            def slope_rev(x: np.ndarray) -> np.ndarray:
                return np.zeros(np.shape(x))
        else:

            def y_rev(x: np.ndarray) -> np.ndarray:
                return rmap.y(np.mod(x, rev))

            def slope_rev(x: np.ndarray) -> np.ndarray:
                return rmap.slope(np.mod(x, rev))

            def y_and_slope_rev(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
                return rmap.y_and_slope(np.mod(x, rev))

            y_slope_rev = y_and_slope_rev

        cusps = []
        for t in corner_t:
            xc = float(table.forward.G(np.array([t]))[0])
            cusps.append(Cusp(x_m=xc, vertex=None, phi_rad=float((t - HALF_PI) % TWO_PI),
                              depth_m=float(wheel.radius(np.array(t - HALF_PI)))))
    cusps.sort(key=lambda c: c.x_m)
    period = rev / k
    kinks_x = _distinct_kinks([c.x_m % period for c in cusps], period)
    track = Track("solved", period, f=y_rev, df=slope_rev, f_df=y_slope_rev, kinks=kinks_x,
                  params={"period_m": period, "revolution_length_m": rev},
                  extremes=(-rmax, -rmin))
    return RollingPair(wheel, track, rmap, depth=0.0, lobes=k, closed=True,
                       closure_gap_rad=0.0, cusps=tuple(cusps), path=path, theta_at_x0=theta0)

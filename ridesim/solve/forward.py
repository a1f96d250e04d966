"""The track for a wheel (wheel-first solve).

With the axle path on the x axis, the contact point is straight below the axle
(``y = -r``) and the rim does not slip (``dx = r dθ``), so ``x(θ) = ∫ r dθ``
(Hall & Wagon, "Roads and Wheels", Mathematics Magazine 65(5):283-301, 1992).
Straight edges give exact catenary arches; smooth rims are integrated with the
adaptive Chebyshev tables of :mod:`ridesim.solve.table`.
"""

from __future__ import annotations

import math

import numpy as np

from ridesim.errors import InputError
from ridesim.model.track import Track
from ridesim.model.wheel import Wheel
from ridesim.solve.pair import CatenaryMap, Cusp, RollingPair, TableMap
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


def _wrap_pi_array(a: np.ndarray) -> np.ndarray:
    return np.mod(a + math.pi, TWO_PI) - math.pi


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
        cusps = []
        verts = wheel.vertices
        # Match each vertex by angle (the map list may be rotated): the nearest start angle
        # on the circle, found by bisection among the sorted angles (and the wrap-around).
        start_mod = np.mod(starts[:-1], TWO_PI)
        order = np.argsort(start_mod)
        sorted_a = start_mod[order]
        want = np.mod(np.asarray(th_v) - HALF_PI, TWO_PI)
        pos = np.searchsorted(sorted_a, want)
        cand = np.stack([(pos - 1) % len(order), pos % len(order)])
        dist = np.abs(_wrap_pi_array(sorted_a[cand] - want[None, :]))
        match = order[cand[np.argmin(dist, axis=0), np.arange(len(want))]]
        for i in range(len(th_v)):
            phi = float((th_v[i] - HALF_PI) % TWO_PI)
            j = int(match[i])
            cusps.append(Cusp(x_m=float(x_v[i] % rev), vertex=j, phi_rad=phi,
                              depth_m=float(np.hypot(*verts[j]))))
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

        cusps = []
        for t in corner_t:
            xc = float(table.forward.G(np.array([t]))[0])
            cusps.append(Cusp(x_m=xc, vertex=None, phi_rad=float((t - HALF_PI) % TWO_PI),
                              depth_m=float(wheel.radius(np.array(t - HALF_PI)))))
    cusps.sort(key=lambda c: c.x_m)
    period = rev / k
    kinks_x: list[float] = []
    # A cusp at the period's end is the one at its start; cusps within 1e-9 of the period of
    # one already kept are the same (sorted, so a repeat is next to the one it repeats).
    for xc in sorted(0.0 if xc > period * (1 - 1e-9) else xc
                     for xc in (c.x_m % period for c in cusps)):
        if not kinks_x or xc - kinks_x[-1] > 1e-9 * period:
            kinks_x.append(xc)
    track = Track("solved", period, f=y_rev, df=slope_rev, kinks=kinks_x,
                  params={"period_m": period, "revolution_length_m": rev},
                  extremes=(-rmax, -rmin))
    return RollingPair(wheel, track, rmap, depth=0.0, lobes=k, closed=True,
                       closure_gap_rad=0.0, cusps=tuple(cusps), path=path, theta_at_x0=theta0)

"""The wheel for a track (track-first solve) and the depths that close it.

A track shape ``f(x)`` lowered by a depth ``D`` gives the contact radius
``r = D - f(x)`` and the wheel turns ``dθ = dx / r``. Over one period the wheel
turns ``I(D) = ∫ dx / (D - f)``; it closes after ``n`` periods when
``I(D) = 2π/n``. ``I`` falls monotonically from +∞ (as ``D`` approaches the
highest point of ``f``) to 0, so each ``n`` has exactly one closing depth, found
here by a bracketed root find (Hall & Wagon, "Roads and Wheels", Mathematics
Magazine 65(5), 1992, for the relations). Straight segments are integrated in
closed form (each rolls a logarithmic spiral); smooth pieces by Gauss-Legendre
panels graded towards the pieces' ends, refined until the integral settles.
"""

from __future__ import annotations

import math

import numpy as np

from ridesim.arrays import unique_sorted
from ridesim.errors import ClosureError, GeometryError, InputError
from ridesim.model.track import Track
from ridesim.model.wheel import Wheel
from ridesim.solve.forward import _check_path
from ridesim.solve.pair import Cusp, RollingPair, SpiralMap, TableMap, _log1p_over, classify_corners
from ridesim.solve.table import build_map
from ridesim.validate import is_integer, is_number

__all__ = ["wheel_for", "closure_depths", "closure_angle"]

HALF_PI = 0.5 * math.pi
TWO_PI = 2.0 * math.pi
_XG, _WG = np.polynomial.legendre.leggauss(16)


class _ClosureRule:
    """Quadrature for ``I(D) = ∫ dx / (D - f)`` over one period at a fixed resolution."""

    def __init__(self, track: Track, level: int) -> None:
        nodes = track.line_nodes
        self.lines = None
        self.xq = np.empty(0)
        self.wq = np.empty(0)
        self.fq = np.empty(0)
        if nodes is not None:
            self.lines = (np.diff(nodes[:, 0]), nodes[:-1, 1], np.diff(nodes[:, 1]))
            return
        lo, hi = track.shape_range()
        span = max(hi - lo, 1e-300)
        pieces = track.pieces()
        # Split pieces at interior peaks too, so that grading reaches every near-singularity.
        probe_x, probe_f = [], []
        for a, b in pieces:
            xs = np.linspace(a, b, 257)
            probe_x.append(xs)
            probe_f.append(track.shape(xs))
        cuts = []
        for xs, fs in zip(probe_x, probe_f, strict=True):
            j = int(np.argmax(fs))
            if 0 < j < len(xs) - 1 and fs[j] >= hi - 0.05 * span:
                cuts.append(float(xs[j]))
        edges_all = sorted(set([p[0] for p in pieces] + [pieces[-1][1]] + cuts))
        uniform = 4 * 2**level
        grade = 2.0 ** -np.arange(1, 34 + 2 * level)
        xq, wq = [], []
        for a, b in zip(edges_all[:-1], edges_all[1:], strict=True):
            u = np.linspace(0.0, 1.0, uniform + 1)
            u = unique_sorted(np.concatenate([u, grade / uniform, 1.0 - grade / uniform]))
            e = a + (b - a) * u
            mid, half = 0.5 * (e[1:] + e[:-1]), 0.5 * np.diff(e)
            xq.append((mid[:, None] + half[:, None] * _XG[None, :]).ravel())
            wq.append((half[:, None] * _WG[None, :]).ravel())
        self.xq = np.concatenate(xq)
        self.wq = np.concatenate(wq)
        self.fq = track.shape(self.xq)

    def __call__(self, depth: float) -> float:
        if self.lines is not None:
            dx, f0, df = self.lines
            r0 = depth - f0
            return float(np.sum(dx / r0 * _log1p_over(-df / r0)))
        return float(np.dot(self.wq, 1.0 / (depth - self.fq)))


def _check_track(track: Track) -> None:
    if not isinstance(track, Track):
        raise InputError(f"track must be a ridesim Track, got {type(track).__name__}")


def closure_angle(track: Track, depth: float) -> float:
    """Wheel rotation [rad] over one track period with the shape lowered by ``depth`` [m].

    Parameters
    ----------
    track : Track
        Track shape ``f(x)``.
    depth : float
        Depth ``D`` [m]; must exceed the shape's highest point.

    Returns
    -------
    float
        ``∫ dx / (D - f(x))`` over one period [rad].
    """
    _check_track(track)
    lo, hi = track.shape_range()
    if not depth > hi:
        raise GeometryError(
            f"depth_m = {depth:.9g} m leaves the track touching or above the axle line; depth_m"
            f" must be > {hi:.9g} m (the shape's highest point)"
        )
    prev = None
    for level in range(0, 7):
        val = _ClosureRule(track, level)(depth)
        if track.line_nodes is not None:
            return val
        if prev is not None and abs(val - prev) <= 1e-14 * val:
            return val
        prev = val
    return val


def _closing_depth(track: Track, lobes: int) -> float:
    from ridesim.roots import find_root

    lo, hi = track.shape_range()
    target = TWO_PI / lobes
    span = max(hi - lo, track.period / TWO_PI)
    d_hi = hi + 1.01 * lobes * track.period / TWO_PI  # there I(D) <= P/(D - hi) < 2π/n
    root = None
    for level in range(0, 7):
        rule = _ClosureRule(track, level)

        def F(d: float, rule=rule) -> float:
            return rule(d) - target

        delta = 1e-3 * span
        while F(hi + delta) <= 0.0:
            delta *= 1e-3
            if delta < 1e-15 * span:
                raise ClosureError(
                    f"no depth closes the wheel with lobes = {lobes}: even just below the track's"
                    " highest point the wheel turns less than 2*pi/lobes per period (the track"
                    " is too steep or sharp at its peak); try fewer lobes or a gentler profile"
                )
        new = find_root(F, hi + delta, d_hi, xtol=1e-15 * span, rtol=1e-15, maxiter=200)
        if track.line_nodes is not None:
            return float(new)
        if root is not None and abs(new - root) <= 1e-13 * max(abs(new), span):
            return float(new)
        root = new
    return float(new)


def closure_depths(track: Track, max_lobes: int = 6) -> list[tuple[int, float]]:
    """Closing depths for 1..max_lobes lobes.

    Parameters
    ----------
    track : Track
        Track shape ``f(x)``.
    max_lobes : int
        Largest number of track periods per wheel revolution to list.

    Returns
    -------
    list of (int, float)
        ``(lobes, depth_m)`` pairs; depth [m] is the amount ``f`` is lowered.
    """
    _check_track(track)
    if not is_integer(max_lobes) or max_lobes < 1:
        raise InputError(f"max_lobes must be an integer >= 1, got {max_lobes!r}")
    return [(n, _closing_depth(track, n)) for n in range(1, int(max_lobes) + 1)]


def wheel_for(
    track: Track,
    lobes: int | None = None,
    *,
    depth: float | None = None,
    path: str = "line",
) -> RollingPair:
    """Solve the wheel that rolls on ``track`` with its axle on a horizontal line.

    Parameters
    ----------
    track : Track
        Track shape ``f(x)`` [m].
    lobes : int, optional
        Track periods per wheel revolution; the depth is chosen so the wheel closes.
        Default 1 when ``depth`` is not given.
    depth : float, optional
        Explicit depth [m] (``y = f - depth``); the pair reports how far from closing it is.
    path : str
        Axle path; only ``"line"`` so far.

    Returns
    -------
    RollingPair
        The pair; ``pair.depth`` is the depth used, ``pair.wheel.radius(phi)`` the wheel.
    """
    _check_path(path)
    _check_track(track)
    if lobes is not None and depth is not None:
        raise InputError("give lobes or depth, not both")
    if depth is None:
        n = 1 if lobes is None else lobes
        if not is_integer(n) or n < 1:
            raise InputError(f"lobes must be an integer >= 1, got {lobes!r}")
        n = int(n)
        D = _closing_depth(track, n)
        theta_p = TWO_PI / n
        gap = 0.0
    else:
        if not is_number(depth):
            raise InputError(f"depth must be a number in metres, got {depth!r}")
        D = float(depth)
        theta_p = closure_angle(track, D)
        n = max(1, int(round(TWO_PI / theta_p)))
        gap = n * theta_p - TWO_PI
    closed = abs(gap) <= 1e-9
    lowered = track.lowered(D)
    rmap: SpiralMap | TableMap
    if track.line_nodes is not None:
        rmap = SpiralMap(track.line_nodes, D)
        corners_x = track.line_nodes[:-1, 0]
    else:
        breaks = [p[0] for p in track.pieces()] + [track.pieces()[-1][1]]

        def g(x: np.ndarray) -> np.ndarray:
            return 1.0 / (D - track.shape(x))

        table = build_map(g, breaks, G0=0.0)
        rmap = TableMap(table, s_is_x=True, x_lo=track.start, theta_lo=0.0)
        corners_x = np.array(track.kinks)
    if closed:
        rmap.theta_span = theta_p  # exact by construction of the root
    pair = RollingPair(None, lowered, rmap, depth=D, lobes=n, closed=closed,
                       closure_gap_rad=gap, cusps=(), path=path, theta_at_x0=0.0)
    # Cusps: the track's kinks over one revolution.
    cusps = []
    if len(corners_x):
        xs = (np.asarray(corners_x)[None, :] + track.period * np.arange(n)[:, None]).ravel()
        ths = pair.wheel_angle(xs)
        for xc, th in zip(xs, ths, strict=True):
            cusps.append(Cusp(x_m=float(xc - track.start), vertex=None,
                              phi_rad=float((th - HALF_PI) % TWO_PI),
                              depth_m=float(-lowered.y(np.array(xc)))))
    pair.cusps = classify_corners(lowered, sorted(cusps, key=lambda c: c.x_m))
    if closed:
        def radius_fn(phi: np.ndarray) -> np.ndarray:
            return -lowered.y(pair.axle_x(np.asarray(phi, dtype=float) + HALF_PI))

        kinks = [c.phi_rad for c in pair.cusps]
        pair._wheel = Wheel("solved", radius_fn=radius_fn, kinks=kinks, symmetry=n,
                            params={"from_track": track.kind, "lobes": n, "depth_m": D})
    return pair

"""Piecewise-polynomial antiderivatives of positive functions, and their inverses.

Both solves reduce to one operation: given a positive integrand ``g(s)`` on an
interval split at known kinks, build ``G(s) = ∫ g ds`` and its inverse ``s(G)``.
Forward (track for a wheel): ``s`` is the wheel angle θ [rad], ``g = r`` [m] and
``G = x`` [m]. Inverse (wheel for a track): ``s`` is the track position x [m],
``g = 1/r`` [1/m] and ``G = θ`` [rad].

Each cell holds a degree-15 Chebyshev interpolant of ``g`` at 16 Chebyshev points
of the first kind, stored as a monomial in the local coordinate ``t ∈ [-1, 1]``;
its exact antiderivative gives ``G`` on the cell. Cells are bisected until the
two highest Chebyshev coefficients fall below the tolerance (the usual tail test
for Chebyshev interpolants: Trefethen, *Approximation Theory and Approximation
Practice*, SIAM, 2013, ch. 3-4), so the accuracy is a property of the table, not
of the number of output samples. Cells never straddle a kink. Pure numpy, no I/O.
"""

from __future__ import annotations

from bisect import bisect_right
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import cached_property

import numpy as np
from numpy.polynomial import chebyshev as _cheb

from ridesim.errors import GeometryError

__all__ = ["PolyTable", "MonotoneMap", "build_map"]

_NODES = 16
_K = np.arange(_NODES)
#: Chebyshev points of the first kind on [-1, 1], ascending.
_T = np.cos(np.pi * (_K[::-1] + 0.5) / _NODES)
# Values at _T -> Chebyshev coefficients (discrete cosine transform, type II).
_VAL2CHEB = np.cos(np.pi * np.outer(_K, (_K[::-1] + 0.5)) / _NODES) * (2.0 / _NODES)
_VAL2CHEB[0] *= 0.5
# Chebyshev coefficients -> monomial coefficients in t (lowest degree first).
_CHEB2MONO = np.zeros((_NODES, _NODES))
for _j in range(_NODES):
    _p = _cheb.cheb2poly(np.eye(_NODES)[_j])
    _CHEB2MONO[: len(_p), _j] = _p
_VAL2MONO = _CHEB2MONO @ _VAL2CHEB
_MAX_CELLS = 1 << 16
#: Up to this many points a table is evaluated with Python floats (same operations).
_SMALL = 8


def _horner(coef: np.ndarray, idx: np.ndarray, t: np.ndarray) -> np.ndarray:
    """Evaluate monomials ``coef[idx, k] t**k``, one cell ``idx`` per point ``t``.

    The coefficients are gathered one power at a time from the transposed table (a
    contiguous gather per step, not a strided walk over per-point rows); few points are
    evaluated with Python floats, where numpy's per-call cost would dominate. Both do the
    same floating-point operations in the same order, so the results are identical.
    """
    if t.size <= _SMALL:
        out = []
        for i, tt in zip(idx.tolist(), t.tolist(), strict=True):
            c = coef[i].tolist()
            acc = c[-1] * tt
            for k in range(len(c) - 2, 0, -1):
                acc = (acc + c[k]) * tt
            out.append(acc + c[0])
        return np.array(out, dtype=float)
    ct = coef.T
    acc = ct[-1][idx] * t
    for k in range(ct.shape[0] - 2, 0, -1):
        acc += ct[k][idx]
        acc *= t
    acc += ct[0][idx]
    return acc


def _eval_sorted(edges: np.ndarray, coefs: tuple[np.ndarray, ...], flat: np.ndarray) -> list[np.ndarray]:
    """Evaluate piecewise monomials at ascending points, one contiguous slice per cell.

    Each cell's coefficients are scalars over its slice, so every Horner step is a
    plain in-place numpy operation (measured faster here than gathering per-point
    coefficients or broadcasting over padded blocks).
    """
    n = flat.size
    out = [np.empty(n) for _ in coefs]
    cuts = np.searchsorted(flat, edges[1:-1], side="left")
    starts = np.concatenate(([0], cuts))
    stops = np.concatenate((cuts, [n]))
    for i in np.flatnonzero(stops > starts):
        a, b = starts[i], stops[i]
        half = 0.5 * (edges[i + 1] - edges[i])
        t = flat[a:b] - (edges[i] + half)
        t *= 1.0 / half
        for coef, res in zip(coefs, out, strict=True):
            _horner_into(res[a:b], t, coef[i])
    return out


def _eval_runs(edges: list[float], coefs: tuple[np.ndarray, ...], flat: np.ndarray,
               idx: np.ndarray, cuts: np.ndarray) -> list[np.ndarray]:
    """Evaluate at points whose cells ``idx`` come in runs (run starts ``cuts``).

    ``t = (s - left) / half - 1`` and the Horner steps of :func:`_horner`, with each run's
    cell values as scalars: the same floating-point operations per point.
    """
    n = flat.size
    out = [np.empty(n) for _ in coefs]
    starts = [0, *cuts.tolist()]
    stops = [*starts[1:], n]
    for a, b in zip(starts, stops, strict=True):
        i = int(idx[a])
        left = edges[i]
        half = 0.5 * (edges[i + 1] - left)
        t = flat[a:b] - left
        t /= half
        t -= 1.0
        for coef, res in zip(coefs, out, strict=True):
            _horner_into(res[a:b], t, coef[i].tolist())
    return out


def _horner_into(acc: np.ndarray, t: np.ndarray, c) -> None:
    """``acc = c[0] + c[1] t + ... + c[-1] t**(n-1)`` by Horner's rule, in place (scalar ``c``)."""
    np.multiply(t, c[-1], out=acc)
    for j in range(len(c) - 2, 0, -1):
        acc += c[j]
        acc *= t
    acc += c[0]


@dataclass(frozen=True, eq=False)
class PolyTable:
    """A continuous piecewise polynomial ``G`` with its derivative ``g`` on sorted cells.

    Attributes
    ----------
    edges : ndarray, shape (M+1,)
        Cell boundaries in the argument's unit, ascending.
    g_coef : ndarray, shape (M, 16)
        Monomial coefficients of ``g`` in the local coordinate ``t ∈ [-1, 1]``.
    G_coef : ndarray, shape (M, 17)
        Monomial coefficients of ``G`` in ``t``; ``G`` is continuous across cells.
    """

    edges: np.ndarray
    g_coef: np.ndarray
    G_coef: np.ndarray

    @property
    def lo(self) -> float:
        """Lower end of the table's domain."""
        return float(self.edges[0])

    @property
    def hi(self) -> float:
        """Upper end of the table's domain."""
        return float(self.edges[-1])

    @cached_property
    def _edge_list(self) -> list[float]:
        return self.edges.tolist()

    @cached_property
    def _dg_coef(self) -> np.ndarray:
        k = np.arange(1, self.g_coef.shape[1])
        half = 0.5 * np.diff(self.edges)
        return self.g_coef[:, 1:] * k / half[:, None]

    def _locate(self, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        if s.size <= _SMALL:  # Python floats: the same arithmetic without numpy's call costs
            edges = self._edge_list
            last = len(edges) - 2
            ids, ts = [], []
            for v in s.tolist():
                i = min(max(bisect_right(edges, v) - 1, 0), last)
                lo = edges[i]
                ids.append(i)
                ts.append((v - lo) / (0.5 * (edges[i + 1] - lo)) - 1.0)
            return np.array(ids, dtype=np.intp), np.array(ts, dtype=float)
        idx = np.searchsorted(self.edges, s, side="right") - 1
        np.clip(idx, 0, len(self.edges) - 2, out=idx)
        left = self.edges[idx]
        half = 0.5 * (self.edges[idx + 1] - left)
        t = (s - left) / half - 1.0
        return idx, t

    def _eval(self, coef: np.ndarray, s: np.ndarray) -> np.ndarray:
        return self._eval_many((coef,), s)[0]

    def _eval_many(self, coefs: tuple[np.ndarray, ...], s: np.ndarray) -> list[np.ndarray]:
        """Several piecewise polynomials of the table's cells at ``s``, located once.

        Each result is the same as a call of :meth:`_eval` with that table alone.
        """
        s = np.asarray(s, dtype=float)
        flat = s.ravel()
        n = flat.size
        cells = len(self.edges) - 1
        if n >= 64 * cells and np.all(flat[1:] >= flat[:-1]):
            return [v.reshape(s.shape) for v in _eval_sorted(self.edges, coefs, flat)]
        if n >= 64 * cells:
            # Large and nearly in order (a period's samples whose last one wrapped round, say):
            # located as below, then evaluated run by run of points in one cell, with that
            # cell's coefficients as scalars. Per point these are the operations of
            # _locate and _horner in the same order, so the results are identical.
            idx = np.searchsorted(self.edges, flat, side="right") - 1
            np.clip(idx, 0, cells - 1, out=idx)
            cuts = np.flatnonzero(idx[1:] != idx[:-1]) + 1
            if cuts.size < 4 * cells:
                return [v.reshape(s.shape) for v in _eval_runs(self._edge_list, coefs, flat, idx, cuts)]
        idx, t = self._locate(flat)
        return [_horner(coef, idx, t).reshape(s.shape) for coef in coefs]

    def G_and_g(self, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``G`` and ``g`` at ascending ``s`` in one pass over the cells (dense outputs).

        Parameters
        ----------
        s : ndarray
            Ascending points in the table's domain (not checked).

        Returns
        -------
        G, g : ndarray
        """
        flat = np.asarray(s, dtype=float).ravel()
        G, g = _eval_sorted(self.edges, (self.G_coef, self.g_coef), flat)
        return G.reshape(np.shape(s)), g.reshape(np.shape(s))

    def G(self, s: np.ndarray) -> np.ndarray:
        """Antiderivative at ``s`` (inside the domain; extrapolates polynomially outside)."""
        return self._eval(self.G_coef, s)

    def g(self, s: np.ndarray) -> np.ndarray:
        """Integrand at ``s`` from the table."""
        return self._eval(self.g_coef, s)

    def dg(self, s: np.ndarray) -> np.ndarray:
        """Derivative of the integrand at ``s`` from the table."""
        return self._eval(self._dg_coef, s)

    def g_and_dg(self, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """:meth:`g` and :meth:`dg` at ``s``, the points located once (the same values)."""
        g, dg = self._eval_many((self.g_coef, self._dg_coef), s)
        return g, dg


def _initial_cells(breaks: np.ndarray, initial_cells: int) -> list[tuple[float, float, float]]:
    """About ``initial_cells`` cells spread over the pieces between ``breaks``, each piece at least one.

    Piece ``(a, b)`` gets ``n = ceil(max(1, initial_cells (b - a) / span))`` equal cells with the
    edges of ``np.linspace(a, b, n + 1)`` (``a + j ((b - a) / n)``, the last ``b``), made for
    every piece at once (a piece at a time cost a millisecond per hundred pieces, and a fine
    outline has a piece per point).
    """
    a, b = breaks[:-1], breaks[1:]
    keep = b > a
    a, b = a[keep], b[keep]
    n = np.ceil(np.maximum(1.0, initial_cells * (b - a) / (breaks[-1] - breaks[0]))).astype(np.int64)
    piece = np.repeat(np.arange(len(n)), n)
    j = np.arange(int(n.sum())) - np.repeat(np.cumsum(n) - n, n)
    step = (b - a) / n
    lo = j * step[piece] + a[piece]
    hi = np.where(j + 1 == n[piece], b[piece], (j + 1) * step[piece] + a[piece])
    inf = np.inf
    return [(x, y, inf) for x, y in zip(lo.tolist(), hi.tolist(), strict=True)]


def _cells_for(
    g: Callable[[np.ndarray], np.ndarray],
    breaks: Sequence[float],
    tol: float,
    initial_cells: int,
    initial_edges: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Adaptive cells and nodal values of ``g``: returns edges (M+1) and values (M, 16).

    Cells start from ``initial_edges`` when given (every break must be one of them), else
    from ``initial_cells`` spread over the pieces between ``breaks``; they are only ever
    bisected, so no cell straddles a break.
    """
    breaks_a = np.asarray(breaks, dtype=float)
    pending = []
    if initial_edges is not None:
        e = np.asarray(initial_edges, dtype=float)
        pending = [(lo, hi, np.inf) for lo, hi in zip(e[:-1], e[1:], strict=True) if hi > lo]
    if initial_edges is None:
        pending = _initial_cells(breaks_a, initial_cells)
    done: list[tuple[float, float, np.ndarray]] = []
    scale = None
    for _ in range(40):
        if not pending:
            break
        lo = np.array([p[0] for p in pending])
        hi = np.array([p[1] for p in pending])
        parent_tail = np.array([p[2] for p in pending])
        mid, half = 0.5 * (lo + hi), 0.5 * (hi - lo)
        pts = mid[:, None] + half[:, None] * _T[None, :]
        vals = np.asarray(g(pts), dtype=float).reshape(pts.shape)
        if not np.all(np.isfinite(vals)):
            bad = pts[~np.isfinite(vals)][0]
            raise GeometryError(f"the contact radius is not finite near {bad:.6g}; check the shape")
        if np.any(vals <= 0):
            bad = pts[vals <= 0][0]
            raise GeometryError(
                f"the contact radius is not positive near {bad:.6g}; the axle must be strictly"
                " inside the wheel and the track strictly below the axle line"
            )
        if scale is None:
            scale = float(np.max(np.abs(vals)))
        cheb = vals @ _VAL2CHEB.T
        tail = np.abs(cheb[:, -1]) + np.abs(cheb[:, -2])
        # A cell is resolved when its tail is below the tolerance. When halving a cell no
        # longer shrinks a tail that is already small (below 1e-9 of the scale), the tail is
        # the rounding noise of g itself (an ill-conditioned shape, e.g. an axle a hair from
        # the rim): more cells cannot help, so the cell is accepted at that noise level.
        noise = (tail <= 1e-9 * scale) & (tail > 0.25 * parent_tail)
        ok = (tail <= tol * scale) | noise | (half <= 1e-9 * (breaks_a[-1] - breaks_a[0]))
        for i in np.flatnonzero(ok):
            done.append((lo[i], hi[i], vals[i]))
        pending = []
        for i in np.flatnonzero(~ok):
            pending.append((lo[i], mid[i], tail[i]))
            pending.append((mid[i], hi[i], tail[i]))
        if len(done) + len(pending) > _MAX_CELLS:
            raise GeometryError(
                "the shape needs more than 65536 table cells to reach the solver tolerance;"
                " it is probably not smooth (declare its corners) or nearly touches the axle"
            )
    if pending:
        raise GeometryError("the solver tolerance was not reached; the shape is too rough")
    done.sort(key=lambda c: c[0])
    edges = np.array([c[0] for c in done] + [done[-1][1]])
    values = np.array([c[2] for c in done])
    return edges, values


def _table_from_values(edges: np.ndarray, values: np.ndarray, G0: float) -> PolyTable:
    """Build a table from nodal values of ``g`` on each cell; ``G(edges[0]) = G0``."""
    half = 0.5 * np.diff(edges)
    g_coef = values @ _VAL2MONO.T
    k = np.arange(1, _NODES + 1)
    G_coef = np.zeros((len(half), _NODES + 1))
    G_coef[:, 1:] = g_coef / k * half[:, None]
    # Value at t = -1 of the integrated monomials, then make each cell start at its left value.
    at_minus1 = G_coef[:, 1:] @ ((-1.0) ** k)
    at_plus1 = G_coef[:, 1:].sum(axis=1)
    cell_int = at_plus1 - at_minus1
    left = G0 + np.concatenate(([0.0], np.cumsum(cell_int)[:-1]))
    G_coef[:, 0] = left - at_minus1
    return PolyTable(edges=edges, g_coef=g_coef, G_coef=G_coef)


class MonotoneMap:
    """``G(s)`` for a positive integrand and its inverse, both as polynomial tables.

    The inverse table is built on first use (dense forward outputs never need it).

    Attributes
    ----------
    forward : PolyTable
        ``s -> G`` with derivative ``g``.
    """

    def __init__(self, forward: PolyTable, G0: float) -> None:
        self.forward = forward
        self._G0 = float(G0)
        self._inverse: PolyTable | None = None

    @property
    def inverse(self) -> PolyTable:
        """``G -> s`` with derivative ``1/g`` (built on first use)."""
        if self._inverse is None:
            self._inverse = _inverse_table(self.forward, self._G0)
        return self._inverse

    @property
    def total(self) -> float:
        """``G`` over the whole domain, ``G(hi) - G(lo)``."""
        ends = self.forward.G(np.array([self.forward.lo, self.forward.hi]))
        return float(ends[1] - ends[0])


def _newton_inverse(table: PolyTable, targets: np.ndarray, guess: np.ndarray) -> np.ndarray:
    """Solve ``table.G(s) = targets`` by Newton iteration from ``guess`` (clamped to the domain)."""
    s = guess.copy()
    span = abs(table.hi - table.lo)
    for _ in range(12):
        idx, t = table._locate(s)
        step = (_horner(table.G_coef, idx, t) - targets) / _horner(table.g_coef, idx, t)
        s -= step
        np.clip(s, table.lo, table.hi, out=s)
        if np.max(np.abs(step)) <= 4e-16 * span:
            break
    return s


def build_map(
    g: Callable[[np.ndarray], np.ndarray],
    breaks: Sequence[float],
    *,
    G0: float = 0.0,
    tol: float = 1e-13,
    initial_cells: int = 8,
) -> MonotoneMap:
    """Tabulate ``G(s) = G0 + ∫ g`` over ``[breaks[0], breaks[-1]]`` and its inverse.

    Parameters
    ----------
    g : callable
        Vectorised positive integrand; called on arrays of points strictly inside cells.
    breaks : sequence of float
        Ascending kinks of ``g`` including both ends; no cell straddles one.
    G0 : float
        Value of ``G`` at ``breaks[0]``.
    tol : float
        Relative tolerance on the Chebyshev tail of ``g`` in each cell.
    initial_cells : int
        Cells to start the bisection from (over the whole domain).

    Returns
    -------
    MonotoneMap
        The forward and inverse tables.
    """
    edges, values = _cells_for(g, breaks, tol, initial_cells)
    return MonotoneMap(_table_from_values(edges, values, G0), G0)


def _inverse_table(fwd: PolyTable, G0: float, tol: float = 1e-13) -> PolyTable:
    """Tabulate ``s(G)`` with its own adaptive cells (Newton on the forward table at nodes).

    The inverse's integrand ``1/g(s(G))`` is refined by the same Chebyshev tail test as the
    forward table, starting from the images of the forward cells (so corners stay on edges).
    """
    edges = fwd.edges
    G_edges = fwd.G(edges)
    G_edges[0], G_edges[-1] = G0, fwd.G(np.array([edges[-1]]))[0]
    G_edges = np.maximum.accumulate(G_edges)

    def s_of(Gq: np.ndarray) -> np.ndarray:
        flat = np.ravel(Gq)
        guess = np.interp(flat, G_edges, edges)
        return _newton_inverse(fwd, flat, guess).reshape(np.shape(Gq))

    def inv_g(Gq: np.ndarray) -> np.ndarray:
        return 1.0 / fwd.g(s_of(Gq))

    inv_edges, values = _cells_for(inv_g, [G_edges[0], G_edges[-1]], tol, 1, initial_edges=G_edges)
    inv = _table_from_values(inv_edges, values, float(edges[0]))
    # Anchor each inverse cell exactly at s of its left edge (removes drift from the cumsum).
    k = np.arange(_NODES + 1)
    at_minus1 = inv.G_coef[:, 1:] @ ((-1.0) ** k[1:])
    inv.G_coef[:, 0] = s_of(inv_edges[:-1]) - at_minus1
    return inv


def extend_periodic(fn, v, lo: float, span: float, step: float) -> np.ndarray:
    """Evaluate a map tabulated over one period ``[lo, lo + span)`` at any ``v`` (vectorised).

    A rolling pair repeats: moving ``v`` by one ``span`` moves the result by one ``step``
    (a track period and the wheel turn it takes, say), so ``fn(v) = fn(v - k span) + k step``.

    Parameters
    ----------
    fn : callable
        The map over one period, vectorised.
    v : array_like
        Where to evaluate it.
    lo, span, step : float
        Start and length of the tabulated period, and the result's advance per period.

    Returns
    -------
    ndarray
    """
    v = np.asarray(v, dtype=float)
    k = np.floor((v - lo) / span)
    return fn(v - k * span) + k * step


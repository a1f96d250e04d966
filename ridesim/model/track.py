"""Periodic track profiles.

A track is a height profile ``y(x)`` [m] that repeats every ``period`` [m]. Profiles
given by a user (:meth:`Track.profile`, :meth:`Track.wave`, :meth:`Track.sawtooth`,
:meth:`Track.points`) are shapes ``f(x)``; the solver lowers them by a depth so that
the track lies below the axle line ``y = 0``. Tracks solved for a wheel are already
below the axle line, with ``x = 0`` at a highest point.

Straight pieces (sawtooth, and points profiles whose every point is a corner) are kept
as exact line segments; a points profile that turns gently is a smooth spline between
its corners (:mod:`ridesim.model.outline`). Kinks are recorded so that every integral
is taken piece by piece between them.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence

import numpy as np

from ridesim.arrays import unique_sorted
from ridesim.errors import GeometryError, InputError
from ridesim.model.checks import positive as _positive
from ridesim.model.outline import CORNER_ANGLE_DEG

__all__ = ["Track"]


class Track:
    """A periodic track profile; build with the class methods.

    Examples
    --------
    >>> import ridesim as rs
    >>> t = rs.Track.wave(amplitude=0.5, wavelength=2.0)
    >>> float(t.y(0.0)), float(t.y(1.0))
    (0.5, -0.5)
    """

    def __init__(
        self,
        kind: str,
        period: float,
        *,
        f: Callable[[np.ndarray], np.ndarray] | None = None,
        df: Callable[[np.ndarray], np.ndarray] | None = None,
        f_df: Callable[[np.ndarray], tuple[np.ndarray, np.ndarray]] | None = None,
        nodes: np.ndarray | None = None,
        kinks: Sequence[float] = (),
        offset: float = 0.0,
        x0: float = 0.0,
        params: dict | None = None,
        extremes: tuple[float, float] | None = None,
    ) -> None:
        self._kind = kind
        self._extremes = extremes
        self._period = float(period)
        self._x0 = float(x0)
        self._offset = float(offset)
        self._params = dict(params or {})
        self._nodes = None
        if nodes is not None:
            nd = np.array(nodes, dtype=float)
            nd.setflags(write=False)
            self._nodes = nd
            self._slopes = np.diff(nd[:, 1]) / np.diff(nd[:, 0])
            kinks = tuple(nd[:-1, 0])
        elif f is None:
            raise InputError("a track needs a profile function or line nodes")
        self._f: Callable[[np.ndarray], np.ndarray] | None = f
        self._df = df
        self._f_df = f_df if f is not None and df is not None else None
        ks = sorted({(float(k) - self._x0) % self._period + self._x0 for k in kinks})
        self._kinks = tuple(ks)

    # ------------------------------------------------------------------ constructors
    @classmethod
    def profile(cls, formula: str, period: float, kinks: Sequence[float] = ()) -> Track:
        """Track shape ``f(x)`` [m] as a safe formula in ``x`` [m], repeating every ``period``.

        Parameters
        ----------
        formula : str
            Height [m] in terms of ``x`` [m], e.g. ``"0.5*cos(2*x)"``, for one period
            ``0 <= x <= period``; it repeats from there (``x`` is taken modulo the period), so
            it need not be periodic by itself.
        period : float
            Length [m] of one repeat; ``f(0)`` must equal ``f(period)``.
        kinks : sequence of float, optional
            Positions [m] in one period where the slope jumps (so integrals split there).

        Returns
        -------
        Track
        """
        from ridesim.model.expr import parse

        P = _positive("period", period)
        fx = parse(formula, variable="x")
        dfx = fx.derivative()

        # The formula describes one period, [0, period]; elsewhere it repeats (x is taken
        # modulo the period), so a formula that is not periodic by itself (a parabola arch)
        # still gives a periodic track. At a joint x = k * period the slope is the one just
        # after it, as at any kink. Inside the base period x is used as given (exact).
        def wrap(x) -> np.ndarray:
            x = np.asarray(x, dtype=float)
            return np.where((x >= 0.0) & (x < P), x, np.mod(x, P))

        def f(x: np.ndarray) -> np.ndarray:
            x = wrap(x)
            return np.broadcast_to(fx(x), x.shape).astype(float)

        def df(x: np.ndarray) -> np.ndarray:
            x = wrap(x)
            return np.broadcast_to(dfx(x), x.shape).astype(float)

        probe = np.linspace(0.0, P, 2049)
        v = np.broadcast_to(fx(probe), probe.shape).astype(float)  # both ends, unwrapped
        if not np.all(np.isfinite(v)):
            bad = probe[~np.isfinite(v)][0]
            raise GeometryError(f'track formula "{formula}" is not finite at x = {bad:.6g} m')
        amp = max(float(np.ptp(v)), 1e-12 * max(1.0, float(np.max(np.abs(v)))))
        if abs(v[0] - v[-1]) > 1e-9 * max(amp, float(np.max(np.abs(v)))):
            raise GeometryError(
                f'track formula "{formula}" does not repeat: f(0) = {v[0]:.9g} m but'
                f" f({P:g}) = {v[-1]:.9g} m; fix the formula or period_m"
            )
        ks = list(kinks)
        # The formula's own slopes at the two ends of the period (not wrapped): where they
        # differ the repeats meet at an angle.
        d0, d1 = np.broadcast_to(dfx(np.array([0.0, P])), (2,)).astype(float)
        if abs(d0 - d1) > 1e-9 * max(1.0, abs(d0)):
            ks.append(0.0)  # the profile's ends meet at an angle
        return cls("formula", P, f=f, df=df, kinks=ks,
                   params={"formula": formula, "period_m": P})

    @classmethod
    def wave(cls, amplitude: float, wavelength: float) -> Track:
        """Cosine wave ``f(x) = amplitude * cos(2*pi*x / wavelength)`` [m].

        Parameters
        ----------
        amplitude : float
            Half the crest-to-trough height [m].
        wavelength : float
            Crest-to-crest length [m].

        Returns
        -------
        Track
        """
        A = _positive("amplitude", amplitude)
        lam = _positive("wavelength", wavelength)
        k = 2.0 * math.pi / lam

        def f(x: np.ndarray) -> np.ndarray:
            return A * np.cos(k * np.asarray(x, dtype=float))

        def df(x: np.ndarray) -> np.ndarray:
            return -A * k * np.sin(k * np.asarray(x, dtype=float))

        return cls("wave", lam, f=f, df=df, params={"amplitude_m": A, "wavelength_m": lam},
                   extremes=(-A, A))

    @classmethod
    def sawtooth(cls, rise: float, run: float, up_fraction: float = 0.5) -> Track:
        """Straight-sided zigzag: top at ``x = 0``, down by ``rise`` and back up within ``run``.

        Parameters
        ----------
        rise : float
            Top-to-bottom height [m].
        run : float
            Length of one repeat [m].
        up_fraction : float
            Fraction of ``run`` taken by the climbing flank, in (0, 1); 0.5 is symmetric.

        Returns
        -------
        Track
        """
        h = _positive("rise", rise)
        L = _positive("run", run)
        u = float(up_fraction)
        if not 0.0 < u < 1.0:
            raise InputError(
                f"up_fraction must be in (0, 1), got {up_fraction!r}; a vertical flank cannot be"
                " rolled on"
            )
        nodes = np.array([[0.0, 0.0], [L * (1.0 - u), -h], [L, 0.0]])
        return cls("sawtooth", L, nodes=nodes,
                   params={"rise_m": h, "run_m": L, "up_fraction": u})

    @classmethod
    def points(
        cls,
        points: Sequence[Sequence[float]],
        period: float | None = None,
        *,
        corner_angle_deg: float = CORNER_ANGLE_DEG,
        corners: str | Sequence[int] | None = None,
    ) -> Track:
        """Measured or drawn profile through points: smooth between its corners.

        The profile is an interpolating cubic spline ``f(x)`` through the points (periodic
        when there is no corner), broken at the corners: the points where the polyline
        turns by more than ``corner_angle_deg`` (see :mod:`ridesim.model.outline`). When
        every point is a corner the profile is the straight segments between them, kept
        exact.

        Parameters
        ----------
        points : array_like, shape (N, 2)
            ``(x, f)`` pairs [m] with strictly increasing x.
        period : float, optional
            Repeat length [m]. Default: the span of x, in which case the last point must
            be the first one shifted by the period (same height). With a period longer
            than the span, the profile runs on from the last point back to the first.
        corner_angle_deg : float
            A point is a corner where the polyline turns by more than this [deg]; default 10.
        corners : "all", "none" or sequence of int, optional
            Override the angle: every point a corner (straight segments), none (smooth all
            through), or these indices into ``points`` (counted from 0; the closing point
            is point 0).

        Returns
        -------
        Track
        """
        from ridesim.model.outline import choose_corners, open_turns, profile_spline

        try:
            p = np.asarray(points, dtype=float)
        except (TypeError, ValueError):
            raise InputError("points must be a list of [x, y] pairs in metres") from None
        if p.ndim != 2 or p.shape[1] != 2 or len(p) < 2:
            raise InputError(f"points must be at least two [x, y] pairs, got shape {p.shape}")
        if not np.all(np.isfinite(p)):
            raise InputError("points must be finite numbers in metres")
        dx = np.diff(p[:, 0])
        if np.any(dx <= 0):
            k = int(np.flatnonzero(dx <= 0)[0]) + 1
            raise InputError(f"points must have strictly increasing x; point {k} does not")
        span = float(p[-1, 0] - p[0, 0])
        if period is None:
            P = span
            scale = max(float(np.ptp(p[:, 1])), 1e-12)
            if abs(p[-1, 1] - p[0, 1]) > 1e-9 * scale:
                raise GeometryError(
                    f"points do not repeat: first height {p[0, 1]:.9g} m, last {p[-1, 1]:.9g} m;"
                    " end on the first point's height or give period_m"
                )
            nodes = p.copy()
            nodes[-1, 1] = nodes[0, 1]
        else:
            P = _positive("period", period)
            if P < span - 1e-12 * span:
                raise InputError(f"period {P:g} m is shorter than the points' span {span:g} m")
            if P - span <= 1e-12 * P:
                nodes = p.copy()
                nodes[-1, 1] = nodes[0, 1]
            else:
                nodes = np.vstack([p, [p[0, 0] + P, p[0, 1]]])
        if len(nodes) < 3:
            raise InputError("points must describe at least two segments over one period")
        n = len(nodes) - 1
        if corners is not None and not isinstance(corners, str):
            try:
                corners = sorted({int(i) % n if int(i) == n else int(i) for i in corners})
            except (TypeError, ValueError):
                raise InputError('corners must be "all", "none" or a list of point indices,'
                                 f" got {corners!r}") from None
        cidx = choose_corners(open_turns(nodes), corner_angle_deg, corners)
        params = {"points": len(p), "period_m": P}
        if len(cidx) == n:
            return cls("points", P, nodes=nodes, x0=float(nodes[0, 0]), params=params)
        spline, x0 = profile_spline(nodes, cidx, P)
        slope = spline.derivative()

        def f(x: np.ndarray) -> np.ndarray:
            return spline(np.asarray(x, dtype=float))

        def df(x: np.ndarray) -> np.ndarray:
            return slope(np.asarray(x, dtype=float))

        params["corners"] = int(len(cidx))
        return cls("points", P, f=f, df=df, kinks=tuple(float(k) for k in nodes[cidx, 0]),
                   x0=x0, params=params)

    # ------------------------------------------------------------------ public API
    @property
    def kind(self) -> str:
        """Constructor family: formula, wave, sawtooth, points or solved."""
        return self._kind

    @property
    def params(self) -> dict:
        """The defining parameters (SI units, keys with unit suffixes)."""
        return dict(self._params)

    @property
    def period(self) -> float:
        """Smallest repeating length [m]."""
        return self._period

    @property
    def offset(self) -> float:
        """Depth [m] by which the shape has been lowered (``y = f - offset``)."""
        return self._offset

    @property
    def start(self) -> float:
        """Start [m] of the base period used for pieces and kinks."""
        return self._x0

    @property
    def kinks(self) -> tuple[float, ...]:
        """Positions [m] within the base period where the slope jumps."""
        return self._kinks

    @property
    def line_nodes(self) -> np.ndarray | None:
        """Nodes ``(x, f)`` [m] of one period of a straight-segment track, or None.

        The closing node (first node shifted by the period) is included.
        """
        return self._nodes

    def _wrap(self, x: np.ndarray) -> np.ndarray:
        return np.mod(x - self._x0, self._period) + self._x0

    def _profile(self) -> Callable[[np.ndarray], np.ndarray]:
        """The profile function ``f`` (a track of line nodes has none: callers check nodes first)."""
        if self._f is None:
            raise GeometryError(f"the {self._kind} track is made of line nodes and has no profile function")
        return self._f

    def shape(self, x: np.ndarray | float) -> np.ndarray:
        """Shape ``f(x)`` [m] before lowering (vectorised, periodic)."""
        x = np.asarray(x, dtype=float)
        if self._nodes is not None:
            return np.interp(self._wrap(x), self._nodes[:, 0], self._nodes[:, 1])
        return self._profile()(x)

    def y(self, x: np.ndarray | float) -> np.ndarray:
        """Track height [m] at ``x`` [m] (vectorised, periodic): ``f(x) - offset``."""
        return self.shape(x) - self._offset

    def slope(self, x: np.ndarray | float) -> np.ndarray:
        """Slope ``dy/dx`` at ``x`` (vectorised; at a kink, the slope just after it)."""
        x = np.asarray(x, dtype=float)
        if self._nodes is not None:
            xw = self._wrap(x)
            i = np.searchsorted(self._nodes[:, 0], xw, side="right") - 1
            i = np.clip(i, 0, len(self._slopes) - 1)
            return self._slopes[i]
        if self._df is None:
            h = 1e-6 * self._period
            f = self._profile()
            return (f(x + h) - f(x - h)) / (2 * h)
        return self._df(x)

    def y_and_slope(self, x: np.ndarray | float) -> tuple[np.ndarray, np.ndarray]:
        """:meth:`y` and :meth:`slope` at ``x`` [m]: the same values, in one pass.

        One pass where the profile provides both at once (a solved track's table finds
        the wheel angle once); otherwise the two calls.

        Parameters
        ----------
        x : array_like
            Positions [m].

        Returns
        -------
        y, slope : ndarray
        """
        if self._f_df is None or self._nodes is not None:
            return self.y(x), self.slope(x)
        f, df = self._f_df(np.asarray(x, dtype=float))
        return f - self._offset, df

    def shape_range(self) -> tuple[float, float]:
        """Lowest and highest values [m] of the shape ``f`` over a period."""
        if self._nodes is not None:
            return float(self._nodes[:, 1].min()), float(self._nodes[:, 1].max())
        if self._extremes is not None:
            return self._extremes
        self._extremes = self._search_range()
        return self._extremes

    def _search_range(self) -> tuple[float, float]:
        from ridesim.roots import find_minimum

        f = self._profile()
        x = np.linspace(self._x0, self._x0 + self._period, 4097)
        v = f(x)
        h = x[1] - x[0]
        lo = find_minimum(lambda q: float(f(np.array(q))),
                          x[int(np.argmin(v))] - h, x[int(np.argmin(v))] + h, xatol=1e-13)
        hi = find_minimum(lambda q: -float(f(np.array(q))),
                          x[int(np.argmax(v))] - h, x[int(np.argmax(v))] + h, xatol=1e-13)
        return min(float(v.min()), float(lo.fun)), max(float(v.max()), -float(hi.fun))

    def pieces(self) -> list[tuple[float, float]]:
        """Smooth pieces ``(x_start, x_end)`` [m] of the base period, split at kinks."""
        b = sorted(set([self._x0, *self._kinks, self._x0 + self._period]))
        return [(a, c) for a, c in zip(b[:-1], b[1:], strict=True) if c > a]

    def lowered(self, depth: float) -> Track:
        """The same shape lowered by ``depth`` [m] (``y = f - depth``)."""
        t = Track.__new__(Track)
        t.__dict__.update(self.__dict__)
        t._offset = float(depth)
        return t

    def _repr_svg_(self) -> str:
        """A small drawing of two periods of the track, for Jupyter."""
        from ridesim.model.display import svg_drawing

        span = 2.0 * self.period if math.isfinite(self.period) else 1.0
        return svg_drawing([(self.polyline(0.0, span, 400), "#6e5634", "none")],
                           title=f"track, period {self.period * 1000:.1f} mm", width_px=420)

    def polyline(self, x_start: float, x_end: float, n: int) -> np.ndarray:
        """Points ``(x, y)`` [m] along the track from ``x_start`` to ``x_end``, kinks included.

        Parameters
        ----------
        x_start, x_end : float
            Range [m].
        n : int
            Number of evenly spaced samples (kinks inside the range are added).

        Returns
        -------
        ndarray, shape (M, 2)
        """
        x = np.linspace(x_start, x_end, int(n))
        if self._kinks:
            m0 = math.floor((x_start - self._x0) / self._period)
            m1 = math.ceil((x_end - self._x0) / self._period)
            ks = np.array(self._kinks)
            allk = (ks[None, :] + self._period * np.arange(m0, m1 + 1)[:, None]).ravel()
            allk = allk[(allk > x_start) & (allk < x_end)]
            x = unique_sorted(np.concatenate([x, allk]))
        return np.column_stack([x, self.y(x)])

    def __repr__(self) -> str:
        keys = ", ".join(f"{k}={v!r}" for k, v in self._params.items())
        return f"Track.{self._kind}({keys}, offset={self._offset!r})"

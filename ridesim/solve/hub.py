"""Rolling around a hub: the axle on a circle, and the non-circular gear pairs it makes.

The axle stays at the centre distance ``E`` from the hub's centre and the contact lies
on the line of centres. Around the hub ``r(θ) + ρ(ψ) = E``; inside a ring
``ρ(ψ) - r(θ) = E``; in both ``r dθ = ρ dψ`` (no slip). These are the pitch-curve
relations of non-circular gears on fixed centres (Litvin & Fuentes, *Gear Geometry
and Applied Theory*, 2nd ed., 2004; Litvin, Fuentes-Aznar, Gonzalez-Perez & Hayasaka,
*Noncircular Gears: Design and Generation*, 2009). The straight track is the limit
``E → ∞`` (unrolled, ``x = E ψ`` and ``y = ρ - E = -r``).

Angles (gear view: both bodies turn about fixed centres). The wheel's axle is at
``(0, E)`` above the hub's centre for a wheel outside the hub, at ``(0, -E)`` below the
ring's centre for a wheel inside it, and the contact is straight below the axle, as on
a line: the wheel turns clockwise by ``θ`` with the contact on its ray at wheel-frame
angle ``θ - π/2``. The hub turns by ``ψ`` (anticlockwise around an outside wheel,
clockwise with a wheel inside it) with the contact on its ray at hub-frame angle
``π/2 - ψ`` (outside) or ``ψ - π/2`` (inside). The speed ratio is ``dψ/dθ = r/ρ``.

In the carousel view the hub stands still and an arm pivoted at its centre carries
the axle: see :meth:`HubPair.poses`.

Straight wheel edges are integrated in closed form (``∫ d du/(A cos u + B)`` is an
arctangent or an inverse hyperbolic tangent of ``tan(u/2)``, and inverts in closed
form); circles about their centre are exact; smooth rims use the adaptive Chebyshev
tables of :mod:`ridesim.solve.table`.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from ridesim.errors import ClosureError, GeometryError, InputError
from ridesim.model.checks import positive
from ridesim.model.path import HUB_SIDES
from ridesim.model.wheel import Wheel
from ridesim.solve.table import build_map, extend_periodic

__all__ = ["HubPair", "hub_for", "wheel_for_hub", "gears_for_ratio", "hub_turn"]

HALF_PI = 0.5 * math.pi
TWO_PI = 2.0 * math.pi
_XG, _WG = np.polynomial.legendre.leggauss(16)

# How the partner's contact radius p follows from the given curve's radius q:
# p = c0 + c1*q with c0 = sign*E. "outside": p = E - q; "inside": the given curve is the
# wheel inside a ring, p = E + q; "ring": the given curve is the ring, p = q - E.
_MODES = {"outside": (1.0, -1.0), "inside": (1.0, 1.0), "ring": (-1.0, 1.0)}


# ------------------------------------------------------------------ closed forms for edges


def _h(z: np.ndarray) -> np.ndarray:
    """``atan(√z)/√z`` (z > 0), ``atanh(√-z)/√-z`` (z < 0), 1 at 0; series near 0."""
    z = np.asarray(z, dtype=float)
    out = np.empty_like(z)
    small = np.abs(z) < 1e-4
    zs = z[small]
    out[small] = 1.0 - zs / 3.0 + zs * zs / 5.0 - zs**3 / 7.0
    pos = (~small) & (z > 0)
    sp = np.sqrt(z[pos])
    out[pos] = np.arctan(sp) / sp
    neg = (~small) & (z < 0)
    sn = np.sqrt(-z[neg])
    out[neg] = np.arctanh(sn) / sn
    return out


def _j(w: np.ndarray) -> np.ndarray:
    """``tan(√w)/√w`` (w > 0), ``tanh(√-w)/√-w`` (w < 0), 1 at 0: the inverse of :func:`_h`."""
    w = np.asarray(w, dtype=float)
    out = np.empty_like(w)
    small = np.abs(w) < 1e-4
    ws = w[small]
    out[small] = 1.0 + ws / 3.0 + 2.0 * ws * ws / 15.0 + 17.0 * ws**3 / 315.0
    pos = (~small) & (w > 0)
    sp = np.sqrt(w[pos])
    out[pos] = np.tan(sp) / sp
    neg = (~small) & (w < 0)
    sn = np.sqrt(-w[neg])
    out[neg] = np.tanh(sn) / sn
    return out


def _edge_F(d, P, Q, u):
    """``∫_0^u d/(A cos v + B) dv`` with ``P = A + B > 0``, ``Q = B - A`` (closed form).

    With ``t = tan(u/2)`` the integral is ``∫ 2d dt / (P + Q t²) = (2 d t / P) h(Q t² / P)``.
    """
    t = np.tan(0.5 * u)
    return 2.0 * d * t / P * _h(Q * t * t / P)


def _edge_u(d, P, Q, F):
    """Inverse of :func:`_edge_F`: the ``u`` [rad] at which the integral reaches ``F``."""
    s = F * P / (2.0 * d)
    t = s * _j(s * s * Q / P)
    return 2.0 * np.arctan(t)


# ------------------------------------------------------------------ maps (given -> partner angle)


class _RoundMap:
    """A circle about its centre: the partner turns at the constant rate ``q/p``."""

    def __init__(self, q0: float, p0: float, a0: float) -> None:
        self.rate = q0 / p0
        self.a_lo, self.a_span = a0, TWO_PI
        self.b_lo, self.b_span = 0.0, TWO_PI * self.rate

    def b_of_a(self, a: np.ndarray) -> np.ndarray:
        return (a - self.a_lo) * self.rate

    def a_of_b(self, b: np.ndarray) -> np.ndarray:
        return self.a_lo + b / self.rate


class _EdgeMap:
    """Exact map for a curve of straight edges (edge ``i`` at distance ``d_i`` from its centre).

    On edge ``i`` the given radius is ``q = d/cos u`` with ``u`` the angle from the edge's
    foot, and ``db = q/(c0 + c1 q) du = d du/(c0 cos u + c1 d)``.
    """

    def __init__(self, curve: Wheel, c0: float, c1: float, a0: float) -> None:
        starts, d, alpha = curve.edge_lines()
        th = starts + HALF_PI  # given-body angle at which vertex i is in contact
        th = th + TWO_PI * math.floor((a0 - th[0]) / TWO_PI)
        u0 = np.mod(th[:-1] - HALF_PI - alpha + math.pi, TWO_PI) - math.pi
        u1 = u0 + np.diff(th)
        self.d, self.th, self.u0 = d, th, u0
        self.P = c0 + c1 * d
        self.Q = c1 * d - c0
        self.F0 = _edge_F(d, self.P, self.Q, u0)
        db = _edge_F(d, self.P, self.Q, u1) - self.F0
        bb = np.concatenate(([0.0], np.cumsum(db)))
        i0 = int(np.clip(np.searchsorted(th, a0, side="right") - 1, 0, len(d) - 1))
        b0 = bb[i0] + _edge_F(d[i0], self.P[i0], self.Q[i0], np.array(u0[i0] + a0 - th[i0])) - self.F0[i0]
        self.bb = bb - float(b0)
        self.a_lo, self.a_span = float(th[0]), TWO_PI
        self.b_lo, self.b_span = float(self.bb[0]), float(bb[-1])

    def b_of_a(self, a: np.ndarray) -> np.ndarray:
        i = np.clip(np.searchsorted(self.th, a, side="right") - 1, 0, len(self.d) - 1)
        u = self.u0[i] + (a - self.th[i])
        return self.bb[i] + _edge_F(self.d[i], self.P[i], self.Q[i], u) - self.F0[i]

    def a_of_b(self, b: np.ndarray) -> np.ndarray:
        i = np.clip(np.searchsorted(self.bb, b, side="right") - 1, 0, len(self.d) - 1)
        F = b - self.bb[i] + self.F0[i]
        u = _edge_u(self.d[i], self.P[i], self.Q[i], F)
        return self.th[i] + (u - self.u0[i])


class _TableMap:
    """A smooth (or cornered) rim: ``b = ∫ q/(c0 + c1 q) da`` as a Chebyshev table."""

    def __init__(self, curve: Wheel, c0: float, c1: float, a0: float) -> None:
        breaks = _breaks(curve, a0)

        def g(a: np.ndarray) -> np.ndarray:
            q = curve.radius(a - HALF_PI)
            return q / (c0 + c1 * q)

        self.table = build_map(g, breaks, G0=0.0)
        self.a_lo, self.a_span = a0, TWO_PI
        self.b_lo, self.b_span = 0.0, self.table.total

    def b_of_a(self, a: np.ndarray) -> np.ndarray:
        return self.table.forward.G(a)

    def a_of_b(self, b: np.ndarray) -> np.ndarray:
        return self.table.inverse.G(b)


def _breaks(curve: Wheel, a0: float) -> list[float]:
    """``[a0, corners and curvature breaks of the rim in contact order, a0 + 2π]``."""
    inner = set()
    for k in (*curve.kinks, *curve.breaks):
        a = (k + HALF_PI - a0) % TWO_PI + a0
        if a0 < a < a0 + TWO_PI:
            inner.add(a)
    return [a0, *sorted(inner), a0 + TWO_PI]


def _turn_closed_form(curve: Wheel, c0: float, c1: float) -> float:
    """Partner turn [rad] over one turn of a polygon curve, in closed form."""
    starts, d, alpha = curve.edge_lines()
    u0 = np.mod(starts[:-1] - alpha + math.pi, TWO_PI) - math.pi
    u1 = u0 + np.diff(starts)
    P, Q = c0 + c1 * d, c1 * d - c0
    return float(np.sum(_edge_F(d, P, Q, u1) - _edge_F(d, P, Q, u0)))


class _TurnRule:
    """Gauss-Legendre rule for ``∫ q/(c0 + c1 q) da`` over one turn of a smooth rim."""

    def __init__(self, curve: Wheel, level: int) -> None:
        br = _breaks(curve, 0.0)
        panels = 8 * 2**level
        xs, ws = [], []
        for a, b in zip(br[:-1], br[1:], strict=True):
            e = np.linspace(a, b, panels + 1)
            mid, half = 0.5 * (e[1:] + e[:-1]), 0.5 * np.diff(e)
            xs.append((mid[:, None] + half[:, None] * _XG[None, :]).ravel())
            ws.append((half[:, None] * _WG[None, :]).ravel())
        self.w = np.concatenate(ws)
        self.q = curve.radius(np.concatenate(xs) - HALF_PI)

    def __call__(self, c0: float, c1: float) -> float:
        return float(np.dot(self.w, self.q / (c0 + c1 * self.q)))


def hub_turn(curve: Wheel, centre_distance: float, *, mode: str = "outside") -> float:
    """Partner turn [rad] over one full turn of ``curve`` at centre distance ``E``.

    Parameters
    ----------
    curve : Wheel
        The given body, in the wheel convention (contact on its ray at angle ``a - π/2``).
    centre_distance : float
        ``E`` [m].
    mode : str
        ``"outside"`` (partner radius ``E - q``), ``"inside"`` (``E + q``: the curve is a
        wheel inside a ring) or ``"ring"`` (``q - E``: the curve is the ring).

    Returns
    -------
    float
        ``∫ q/p da`` over one turn [rad]; ``2π`` divided by it is the curve's turns per
        partner turn.
    """
    sgn, c1 = _MODES[mode]
    c0 = sgn * float(centre_distance)
    _check_partner(curve, c0, c1, mode, float(centre_distance))
    if curve.is_round:
        q0 = float(curve.radius(0.0))
        return TWO_PI * q0 / (c0 + c1 * q0)
    if curve.is_polygon:
        return _turn_closed_form(curve, c0, c1)
    prev = None
    for level in range(8):
        val = _TurnRule(curve, level)(c0, c1)
        if prev is not None and abs(val - prev) <= 1e-14 * abs(val):
            return val
        prev = val
    return val


def _check_partner(curve: Wheel, c0: float, c1: float, mode: str, E: float) -> None:
    """The partner's radius must be positive at every contact (one-line errors)."""
    rmin, rmax, _ = curve.extremes()
    if mode == "outside" and not E - rmax > 1e-12 * rmax:
        raise GeometryError(
            f"centre_distance = {E:.9g} m: the wheel's greatest radius {rmax:.9g} m reaches it, so"
            f" no hub is possible (its radius E - r would not be positive); use a centre distance"
            f" > {rmax:.9g} m"
        )
    if mode == "inside" and not E > 0:
        raise GeometryError(
            f"centre_distance = {E:.9g} m: a ring contains the wheel only with its centre distance"
            " > 0 m (ring radius E + r); use a positive centre distance"
        )
    if mode == "ring" and not (0 < E and rmin - E > 1e-12 * rmin):
        raise GeometryError(
            f"centre_distance = {E:.9g} m: the wheel inside this ring (radius ρ - E) needs"
            f" 0 < E < {rmin:.9g} m (the ring's least radius)"
        )


# ------------------------------------------------------------------ the pair


def _mirror(curve: Wheel) -> Wheel:
    """``curve`` reflected in its x axis: ``radius(φ) -> radius(-φ)``."""
    if curve.is_polygon:
        return Wheel.polygon_from_vertices(np.asarray(curve.vertices) * np.array([1.0, -1.0]))

    def radius_fn(phi: np.ndarray) -> np.ndarray:
        return curve.radius(-np.asarray(phi, dtype=float))

    return Wheel("mirrored", radius_fn=radius_fn, kinks=[-k for k in curve.kinks],
                 breaks=[-b for b in curve.breaks], symmetry=curve.symmetry,
                 params={"mirror_of": curve.kind})


class HubPair:
    """A wheel and the hub (or ring) it rolls on with its axle on a circle.

    Attributes
    ----------
    side : str
        ``"outside"`` (around the hub) or ``"inside"`` (inside a ring).
    centre_distance : float
        ``E`` [m], hub centre to axle.
    ratio : float
        Wheel turns per hub turn (the mean of ``1 / speed_ratio``).
    hub_lobes : int
        Repeats of the hub's pattern around it (its rotational symmetry).
    closed : bool
        False only for a solve at an explicit centre distance whose hub does not close.
    closure_gap_rad : float
        Hub angle [rad] swept while the pattern repeats ``hub_lobes`` times, minus 2π.
    path : str
        ``"hub"``.
    solved_from : str
        ``"wheel"`` (hub for a wheel), ``"hub"`` (wheel for a hub) or ``"ratio"``.
    """

    path = "hub"

    def __init__(self, *, own: Wheel, rmap, mode: str, centre_distance: float, swapped: bool,
                 closed: bool, gap: float, lobes: int, solved_from: str,
                 given: Wheel) -> None:
        self._own = own
        self._map = rmap
        self._mode = mode
        self.side = "outside" if mode == "outside" else "inside"
        self.centre_distance = float(centre_distance)
        self._swapped = swapped
        self.closed = bool(closed)
        self.closure_gap_rad = float(gap)
        self.hub_lobes = int(lobes) if not swapped else int(given.symmetry)
        self.wheel_lobes = int(given.symmetry) if not swapped else int(lobes)
        self.solved_from = solved_from
        sgn, c1 = _MODES[mode]
        self._c0, self._c1 = sgn * self.centre_distance, c1
        B = rmap.b_span
        self.ratio = TWO_PI / B if not swapped else B / TWO_PI
        self._given = given
        self._partner_body: Wheel | None = None  # built on first use

    # ---------------------------------------------------------------- angles
    def _b(self, a: np.ndarray | float) -> np.ndarray:
        m = self._map
        return extend_periodic(m.b_of_a, a, m.a_lo, m.a_span, m.b_span)

    def _a(self, b: np.ndarray | float) -> np.ndarray:
        m = self._map
        return extend_periodic(m.a_of_b, b, m.b_lo, m.b_span, m.a_span)

    def hub_angle(self, theta: np.ndarray | float) -> np.ndarray:
        """Hub turn ψ [rad] when the wheel has turned ``theta`` [rad] (vectorised).

        For a hub solved from a wheel, ψ = 0 where the wheel's least radius is in contact.
        """
        return self._a(theta) if self._swapped else self._b(theta)

    def wheel_angle(self, psi: np.ndarray | float) -> np.ndarray:
        """Wheel turn θ [rad] when the hub has turned ``psi`` [rad] (vectorised)."""
        return self._b(psi) if self._swapped else self._a(psi)

    def _partner_sign(self) -> float:
        # Partner-frame contact angle = sign * (b - π/2): the hub outside a wheel counts
        # its frame angle the other way; the ring and a wheel found for a hub do not.
        return -1.0 if (self._mode == "outside" and not self._swapped) else 1.0

    def _partner(self) -> Wheel:
        s = self._partner_sign()
        own = self._own
        c0, c1 = self._c0, self._c1
        exact = isinstance(self._map, _EdgeMap)
        m = self._map

        def radius_fn(phi: np.ndarray) -> np.ndarray:
            a = self._a(s * np.asarray(phi, dtype=float) + HALF_PI)
            if exact:  # the given edge in contact, in closed form
                k = np.floor((a - m.a_lo) / m.a_span)
                ab = a - k * m.a_span
                i = np.clip(np.searchsorted(m.th, ab, side="right") - 1, 0, len(m.d) - 1)
                q = m.d[i] / np.cos(m.u0[i] + ab - m.th[i])
            else:
                q = own.radius(a - HALF_PI)
            return c0 + c1 * q

        # Corners of the given rim make corners of the partner; cover one partner turn.
        turns = int(math.ceil(TWO_PI / m.b_span)) + 1
        a_k = np.array([k + HALF_PI for k in own.kinks])
        kinks_all: list[float] = []
        if a_k.size:
            a_all = (a_k[None, :] + TWO_PI * np.arange(turns)[:, None]).ravel()
            phis = np.sort(np.mod(s * (self._b(a_all) - HALF_PI), TWO_PI))
            keep = np.concatenate(([True], np.diff(phis) > 1e-12))
            kinks_all = [float(p) for p in phis[keep]]
        kind = "ring" if self.side == "inside" and not self._swapped else (
            "hub" if not self._swapped else "solved")
        params = {"centre_distance_m": self.centre_distance, "side": self.side}
        if own.is_round:
            return Wheel(kind, radius_fn=radius_fn, kinks=(), params=params, symmetry=1)
        return Wheel(kind, radius_fn=radius_fn, kinks=kinks_all, params=params,
                     symmetry=int(self._lobes_of_partner()))

    def _lobes_of_partner(self) -> int:
        per = self._map.b_span / max(self._own.symmetry, 1)
        return max(1, int(round(TWO_PI / per)))

    # ---------------------------------------------------------------- bodies
    def _partner_or_raise(self, what: str) -> Wheel:
        if not self.closed:
            raise ClosureError(self._open_message(what))
        if self._partner_body is None:
            self._partner_body = self._partner()
        return self._partner_body

    @property
    def wheel(self) -> Wheel:
        """The wheel (raises ClosureError when a wheel found for a hub does not close)."""
        return self._partner_or_raise("wheel") if self._swapped else self._given

    @property
    def hub(self) -> Wheel:
        """The hub or ring about its centre; ``hub.radius(psi)`` [m] at hub-frame angle ``psi``."""
        return self._given if self._swapped else self._partner_or_raise("hub")

    def _open_message(self, what: str) -> str:
        return (f"the {what} does not close at centre_distance = {self.centre_distance:.9g} m: its"
                f" pattern repeated {self._lobes_of_partner()} time(s) is"
                f" {self.closure_gap_rad:+.6g} rad from a full turn (ratio {self.ratio:.9g}); give"
                " a ratio instead to find a closing centre distance")

    def wheel_radius(self, theta: np.ndarray | float) -> np.ndarray:
        """Axle-to-contact distance r [m] when the wheel has turned ``theta`` [rad]."""
        theta = np.asarray(theta, dtype=float)
        if not self._swapped:
            return self._own.radius(theta - HALF_PI)
        q = self._own.radius(self._a(theta) - HALF_PI)
        return self._c0 + self._c1 * q

    def hub_radius(self, theta: np.ndarray | float) -> np.ndarray:
        """Hub-centre-to-contact distance ρ [m] when the wheel has turned ``theta`` [rad]."""
        r = self.wheel_radius(theta)
        return self.centre_distance - r if self.side == "outside" else self.centre_distance + r

    def speed_ratio(self, theta: np.ndarray | float) -> np.ndarray:
        """Hub speed over wheel speed ``dψ/dθ = r/ρ`` when the wheel has turned ``theta`` [rad]."""
        r = self.wheel_radius(theta)
        return r / (self.centre_distance - r if self.side == "outside" else self.centre_distance + r)

    # ---------------------------------------------------------------- carousel view
    def poses(self, theta: np.ndarray | float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Where the wheel is, with the hub standing still (the carousel view).

        Parameters
        ----------
        theta : array_like
            Wheel turn relative to the arm [rad] (the gear view's wheel angle).

        Returns
        -------
        arm : ndarray
            Arm angle [rad] in the hub's frame, anticlockwise from +x (the direction from the
            hub's centre to the axle): ``π/2 - ψ`` outside, ``ψ - π/2`` inside.
        axle : ndarray, shape (..., 2)
            Axle position [m] in the hub's frame, ``E (cos arm, sin arm)``.
        spin : ndarray
            Clockwise rotation [rad] of the wheel from the pose it was defined in:
            ``θ + ψ`` outside, ``θ - ψ`` inside.
        """
        theta = np.asarray(theta, dtype=float)
        psi = self.hub_angle(theta)
        if self.side == "outside":
            arm, spin = HALF_PI - psi, theta + psi
        else:
            arm, spin = psi - HALF_PI, theta - psi
        axle = self.centre_distance * np.stack([np.cos(arm), np.sin(arm)], axis=-1)
        return arm, axle, spin

    def outline_gap(self, n_poses: int = 96, n_points: int = 720) -> tuple[float, float]:
        """Least radial gap [m] between the whole outlines over one period, and where.

        At each pose, every wheel rim point's distance from the hub's centre is compared
        with the hub's radius along the same ray (outside: it must not be less; inside: not
        more), and, outside, every hub rim point's distance from the axle with the wheel's
        radius along that ray. The contact itself gives 0; a negative gap is interference.

        Parameters
        ----------
        n_poses : int
            Poses spread evenly in wheel angle over one period of the relative motion.
        n_points : int
            Rim points per body (plus the corners of polygon rims).

        Returns
        -------
        gap_m : float
            Least gap [m] (negative: the outlines overlap by that much).
        theta_rad : float
            Wheel angle [rad] of the pose where it occurs.
        """
        wheel, hub = self.wheel, self.hub
        per = TWO_PI / max(self.wheel_lobes, 1)
        th0 = float(self.wheel_angle(0.0))
        thetas = th0 + per * np.arange(int(n_poses)) / int(n_poses)
        wpts = _rim(wheel, n_points)
        hpts = _rim(hub, n_points)
        _, axle, spin = self.poses(thetas)
        c, s = np.cos(spin), np.sin(spin)
        # Wheel points in the hub frame: rotate clockwise by spin, then move to the axle.
        wx = axle[:, 0, None] + c[:, None] * wpts[None, :, 0] + s[:, None] * wpts[None, :, 1]
        wy = axle[:, 1, None] - s[:, None] * wpts[None, :, 0] + c[:, None] * wpts[None, :, 1]
        rho_pt = np.hypot(wx, wy)
        rho_hub = hub.radius(np.arctan2(wy, wx))
        worst = np.min(rho_pt - rho_hub if self.side == "outside" else rho_hub - rho_pt, axis=1)
        if self.side == "outside":
            # Hub points in the wheel frame: move to the axle, then undo the wheel's turn.
            dx = hpts[None, :, 0] - axle[:, 0, None]
            dy = hpts[None, :, 1] - axle[:, 1, None]
            lx = c[:, None] * dx - s[:, None] * dy
            ly = s[:, None] * dx + c[:, None] * dy
            g2 = np.hypot(lx, ly) - wheel.radius(np.arctan2(ly, lx))
            worst = np.minimum(worst, np.min(g2, axis=1))
        i = int(np.argmin(worst))
        return float(worst[i]), float(thetas[i])

    # ---------------------------------------------------------------- summary
    def to_dict(self) -> dict:
        """Summary with SI units in every key (JSON-ready plain values).

        Returns
        -------
        dict
            ``path``, ``side``, ``centre_distance_m``, ``ratio`` (wheel turns per hub turn),
            ``hub_lobes``, ``wheel_lobes``, ``closed``, ``closure_gap_rad``, ``solved_from``,
            and when closed ``wheel_radius_min_m``/``_max_m``, ``hub_radius_min_m``/``_max_m``
            (contact radii) and ``speed_ratio_min``/``_max``.
        """
        out = {"path": "hub", "side": self.side, "centre_distance_m": self.centre_distance,
               "ratio": float(self.ratio), "hub_lobes": int(self.hub_lobes),
               "wheel_lobes": int(self.wheel_lobes), "closed": self.closed,
               "closure_gap_rad": self.closure_gap_rad, "solved_from": self.solved_from}
        if self.closed:
            th = np.linspace(0.0, TWO_PI, 2048, endpoint=False)
            r = self.wheel_radius(th)
            rho = self.hub_radius(th)
            out.update({"wheel_radius_min_m": float(r.min()), "wheel_radius_max_m": float(r.max()),
                        "hub_radius_min_m": float(rho.min()), "hub_radius_max_m": float(rho.max()),
                        "speed_ratio_min": float((r / rho).min()),
                        "speed_ratio_max": float((r / rho).max())})
        return out

    def __repr__(self) -> str:
        return (f"HubPair(side={self.side!r}, centre_distance={self.centre_distance:.6g} m,"
                f" ratio={self.ratio:.6g}, hub_lobes={self.hub_lobes})")


def _rim(body: Wheel, n: int) -> np.ndarray:
    """Rim points [m] about the body's centre: ``n`` evenly in angle plus any corners."""
    phi = np.linspace(0.0, TWO_PI, int(n), endpoint=False)
    if body.kinks:
        phi = np.concatenate([phi, np.array(body.kinks)])
    r = body.radius(phi)
    return np.column_stack([r * np.cos(phi), r * np.sin(phi)])


# ------------------------------------------------------------------ solves


def _check_wheel(wheel: Wheel, name: str) -> None:
    if not isinstance(wheel, Wheel):
        raise InputError(f"{name} must be a ridesim Wheel, got {type(wheel).__name__}")


def _check_side(side: str) -> None:
    if side not in HUB_SIDES:
        raise InputError(f"side must be one of {', '.join(HUB_SIDES)}, got {side!r}")


def _closing_distance(own: Wheel, mode: str, target: float) -> float:
    """Centre distance [m] at which one turn of ``own`` turns the partner by ``target`` [rad]."""
    from ridesim.roots import find_root

    sgn, c1 = _MODES[mode]
    rmin, rmax, _ = own.extremes()
    if own.is_round:  # q/p = target/2π exactly: c0 = q (2π/target - c1)
        return float(sgn * rmax * (TWO_PI / target - c1))
    k = TWO_PI / target
    if mode == "outside":  # turn falls from +∞ (E -> rmax) to 0 (E -> ∞)
        lo_base, hi = rmax, rmax * (1.0 + 1.01 * k)
    elif mode == "inside":  # falls from 2π (E = 0) to 0
        lo_base, hi = 0.0, 1.01 * k * rmax
    else:  # ring: rises from 2π (E = 0) to +∞ (E -> least ring radius)
        lo_base, hi = 0.0, rmin
    scale = rmax

    rules: list[Callable[[float], float]]
    if own.is_polygon:
        def turn(E: float) -> float:
            return _turn_closed_form(own, sgn * E, c1)
        rules = [turn]
    else:
        rules = []
        for level in range(8):
            rule = _TurnRule(own, level)

            def turn_by_rule(E: float, rule: _TurnRule = rule) -> float:
                return rule(sgn * E, c1)
            rules.append(turn_by_rule)

    root: float | None = None
    for f in rules:
        def F(E: float, f=f) -> float:
            return f(E) - target

        if mode == "outside":
            delta = 1e-3 * scale
            while F(lo_base + delta) <= 0.0:
                delta *= 1e-3
                if delta < 1e-15 * scale:
                    raise ClosureError(f"no centre distance gives ratio {k:.9g}; try a smaller ratio")
            a, b = lo_base + delta, hi
        elif mode == "inside":
            a, b = lo_base, hi
        else:
            delta = 1e-3 * scale
            while F(hi - delta) <= 0.0:
                delta *= 1e-3
                if delta < 1e-15 * scale:
                    raise ClosureError(f"no centre distance gives ratio {k:.9g}; try a larger ratio")
            a, b = lo_base, hi - delta
        new = find_root(F, a, b, xtol=1e-15 * scale, rtol=1e-15, maxiter=300)
        if own.is_polygon:
            return float(new)
        if root is not None and abs(new - root) <= 1e-14 * scale:
            return float(new)
        root = new
    if root is None:  # not reached: rules holds at least one rule
        raise ClosureError(f"no centre distance gives ratio {k:.9g}")
    return float(root)


def _build(own: Wheel, mode: str, E: float, target: float | None, *, swapped: bool,
           given: Wheel, solved_from: str) -> HubPair:
    sgn, c1 = _MODES[mode]
    c0 = sgn * E
    _check_partner(own, c0, c1, mode, E)
    rmin, rmax, phi_min = own.extremes()
    a0 = (phi_min + HALF_PI + math.pi) % TWO_PI - math.pi  # as the line solve: in [-π, π)
    if own.is_round:
        a0 = 0.0  # any angle will do: start the count at zero
        rmap: _RoundMap | _EdgeMap | _TableMap = _RoundMap(rmax, c0 + c1 * rmax, a0)
    elif own.is_polygon:
        rmap = _EdgeMap(own, c0, c1, a0)
    else:
        rmap = _TableMap(own, c0, c1, a0)
    s = max(own.symmetry, 1)
    if own.is_round:
        lobes, gap = 1, 0.0
    else:
        per = rmap.b_span / s
        lobes = max(1, int(round(TWO_PI / per)))
        gap = lobes * per - TWO_PI
        if target is not None:
            rmap.b_span = target  # exact by construction of the root; gap is the residual
    closed = abs(gap) <= 1e-9
    return HubPair(own=own, rmap=rmap, mode=mode, centre_distance=E, swapped=swapped,
                   closed=closed, gap=gap, lobes=lobes, solved_from=solved_from, given=given)


def _ratio_target(ratio: float, sym: int, round_: bool, name: str, what: str) -> float:
    """Partner turn [rad] per turn of the given body for ``ratio`` given-turns per partner turn."""
    if not round_:
        lobes = ratio * sym
        if abs(lobes - round(lobes)) > 1e-9 * max(1.0, lobes) or round(lobes) < 1:
            raise InputError(
                f"{name} = {ratio!r} does not close: the {what} has rotational symmetry {sym}, so"
                f" {name} x {sym} must be a whole number (the partner's lobes); use e.g."
                f" {name} = {max(1, round(lobes)) / sym:g}"
            )
    return TWO_PI / ratio


def hub_for(wheel: Wheel, *, ratio: float | None = None, centre_distance: float | None = None,
            side: str = "outside") -> HubPair:
    """Solve the hub (or ring) a wheel rolls on with its axle on a circle about the hub's centre.

    Outside the hub ``ρ = E - r`` and ``ψ(θ) = ∫ r/(E - r) dθ``; inside a ring ``ρ = E + r``
    and ``ψ(θ) = ∫ r/(E + r) dθ``. For a chosen ratio the centre distance ``E`` is the one
    root of the closure condition (one wheel turn advances the hub by 2π/ratio).

    Parameters
    ----------
    wheel : Wheel
        The wheel, axle at its origin.
    ratio : float, optional
        Wheel turns per hub turn; ``ratio x wheel.symmetry`` must be whole (the hub's
        lobes). Inside a ring it must exceed 1. Default 1 outside when ``centre_distance``
        is not given.
    centre_distance : float, optional
        Explicit ``E`` [m]; the pair reports how far the hub is from closing.
    side : str
        ``"outside"`` (around the hub) or ``"inside"`` (inside a ring).

    Returns
    -------
    HubPair
        The pair; ``pair.hub.radius(psi)`` is the hub.

    Examples
    --------
    >>> import ridesim as rs
    >>> pair = rs.hub_for(rs.Wheel.circle(radius=0.2), ratio=3)
    >>> round(pair.centre_distance, 12), round(float(pair.hub.radius(0.0)), 12)
    (0.8, 0.6)
    """
    _check_wheel(wheel, "wheel")
    _check_side(side)
    if ratio is not None and centre_distance is not None:
        raise InputError("give ratio or centre_distance, not both")
    if centre_distance is None:
        if ratio is None:
            if side == "inside":
                raise InputError("side = 'inside' needs a ratio > 1 (or a centre_distance)")
            ratio = 1
        k = positive("ratio", ratio, unit="")
        if side == "inside" and not k > 1:
            raise GeometryError(
                f"ratio = {ratio!r} with side = 'inside': a ring contains the wheel only when the"
                " wheel turns more than once per ring turn; use ratio > 1 (or side = 'outside')"
            )
        target = _ratio_target(k, wheel.symmetry, wheel.is_round, "ratio", "wheel")
        E = _closing_distance(wheel, side, target)
    else:
        E = positive("centre_distance", centre_distance)
        target = None
    pair = _build(wheel, side, E, target, swapped=False, given=wheel, solved_from="wheel")
    if side == "inside" and pair.closed:
        _check_contains(pair)
    return pair


def _check_contains(pair: HubPair) -> None:
    gap, th = pair.outline_gap(n_poses=48, n_points=512)
    if gap < -1e-9 * pair.centre_distance:
        raise GeometryError(
            f"side = 'inside': the ring does not contain the wheel (at wheel angle {th:.4g} rad the"
            f" wheel reaches {-gap:.4g} m beyond it); use a larger ratio or side = 'outside'"
        )


def wheel_for_hub(hub: Wheel, lobes: int = 1, *, side: str = "outside") -> HubPair:
    """Solve the wheel that rolls on a given hub (or inside a given ring).

    Parameters
    ----------
    hub : Wheel
        The hub's outline about its centre (any :class:`Wheel` constructor).
    lobes : int
        Hub periods (repeats of its pattern, ``hub.symmetry`` per turn) per wheel turn.
    side : str
        ``"outside"`` (the wheel rolls around the hub) or ``"inside"`` (inside the ring).

    Returns
    -------
    HubPair
        The pair; ``pair.wheel.radius(phi)`` is the wheel.
    """
    _check_wheel(hub, "hub")
    _check_side(side)
    if isinstance(lobes, bool) or not isinstance(lobes, (int, np.integer)) or lobes < 1:
        raise InputError(f"lobes must be an integer >= 1, got {lobes!r}")
    s = max(hub.symmetry, 1)
    if hub.is_round:
        raise InputError("hub: a round hub fits any wheel size; give the wheel and use hub_for")
    k_own = lobes / s  # hub turns per wheel turn
    if side == "inside" and not k_own < 1:
        raise GeometryError(
            f"lobes = {lobes} with side = 'inside': a ring contains the wheel only when the ring"
            f" turns less than once per wheel turn; use lobes < {s} (the ring's symmetry)"
        )
    if side == "outside":
        own, mode = _mirror(hub), "outside"
    else:
        own, mode = hub, "ring"
    target = TWO_PI / k_own
    E = _closing_distance(own, mode, target)
    pair = _build(own, mode, E, target, swapped=True, given=hub, solved_from="hub")
    if side == "inside":
        _check_contains(pair)
    return pair


def _ratio_function(ratio):
    """A vectorised, 2π-periodic speed ratio R(θ) from a formula in ``theta`` or a table."""
    if isinstance(ratio, str):
        from ridesim.model.expr import parse

        f = parse(ratio, variable="theta")

        def R(theta: np.ndarray) -> np.ndarray:
            return np.broadcast_to(f(theta), np.shape(theta)).astype(float)

        return R, ratio
    try:
        tab = np.asarray(ratio, dtype=float)
    except (TypeError, ValueError):
        raise InputError("ratio must be a formula in theta or a table of [theta_rad, ratio] rows") from None
    if tab.ndim != 2 or tab.shape[1] != 2 or len(tab) < 4 or not np.all(np.isfinite(tab)):
        raise InputError("ratio table must be at least four finite [theta_rad, ratio] rows over one turn")
    th, val = tab[:, 0], tab[:, 1]
    if np.any(np.diff(th) <= 0) or th[-1] - th[0] > TWO_PI + 1e-12:
        raise InputError("ratio table: theta_rad must rise and span at most one turn (2*pi)")
    from scipy.interpolate import CubicSpline

    if abs(th[-1] - th[0] - TWO_PI) > 1e-12:
        th, val = np.append(th, th[0] + TWO_PI), np.append(val, val[0])
    else:
        val = val.copy()
        val[-1] = val[0]
    spline = CubicSpline(th, val, bc_type="periodic")
    t0 = float(th[0])

    def R_table(theta: np.ndarray) -> np.ndarray:
        return spline(np.mod(np.asarray(theta, dtype=float) - t0, TWO_PI) + t0)

    return R_table, "table"


def gears_for_ratio(ratio, *, centre_distance: float, side: str = "outside") -> HubPair:
    """Design both pitch curves of a gear pair from a required speed ratio.

    The classical inverse problem of non-circular gears: with ``R(θ) = dψ/dθ`` the
    driven (hub) speed over the driving (wheel) speed, the driver's pitch radius is
    ``r = E R/(1 + R)`` (outside; ``E R/(1 - R)`` inside a ring) and the driven one's
    ``ρ = E - r`` (``E + r``). The driven gear closes when ``∫ R dθ`` over a driver turn
    is ``2π s/m`` for the driver's symmetry ``s`` and whole ``m``.

    Parameters
    ----------
    ratio : str or array_like
        ``R(θ)`` as a safe formula in ``theta`` [rad] (2π-periodic), or a table of
        ``[theta_rad, ratio]`` rows over one turn (periodic cubic spline between them).
    centre_distance : float
        ``E`` [m].
    side : str
        ``"outside"`` (external gears) or ``"inside"`` (the driven gear is a ring; needs
        ``R < 1``).

    Returns
    -------
    HubPair
        Wheel = driver, hub = driven; ``pair.speed_ratio(theta)`` reproduces ``R``.
    """
    _check_side(side)
    E = positive("centre_distance", centre_distance)
    R, label = _ratio_function(ratio)
    probe = np.linspace(0.0, TWO_PI, 4097)
    vals = R(probe)
    if not np.all(np.isfinite(vals)) or np.any(vals <= 0):
        bad = probe[~(np.isfinite(vals) & (vals > 0))][0]
        raise GeometryError(
            f"ratio {label!r} is not a positive finite speed ratio at theta = {bad:.4g} rad: the"
            " pitch curve would pass through or cross its own centre (self-crossing); the ratio"
            " must be > 0 everywhere"
        )
    if abs(vals[0] - vals[-1]) > 1e-9 * float(np.max(vals)):
        raise GeometryError(
            f"ratio {label!r} is not 2*pi-periodic: R(0) = {vals[0]:.9g} but R(2*pi) ="
            f" {vals[-1]:.9g}; use a periodic ratio"
        )
    if side == "inside" and np.any(vals >= 1):
        raise GeometryError(
            f"ratio {label!r} reaches {float(vals.max()):.6g} with side = 'inside': a ring contains"
            " its driver only when the ratio stays below 1; use side = 'outside' or a smaller ratio"
        )

    if side == "outside":
        def radius_fn(phi: np.ndarray) -> np.ndarray:
            q = R(np.asarray(phi, dtype=float) + HALF_PI)
            return E * q / (1.0 + q)
    else:
        def radius_fn(phi: np.ndarray) -> np.ndarray:
            q = R(np.asarray(phi, dtype=float) + HALF_PI)
            return E * q / (1.0 - q)

    wheel = Wheel("from_ratio", radius_fn=radius_fn,
                  params={"ratio": label, "centre_distance_m": E, "side": side})
    pair = _build(wheel, side, E, None, swapped=False, given=wheel, solved_from="ratio")
    if not pair.closed:
        turn = TWO_PI / pair.ratio
        raise ClosureError(
            f"ratio {label!r} does not close: over one driver turn the driven gear turns"
            f" {turn:.9g} rad (mean ratio {turn / TWO_PI:.9g}); with driver symmetry"
            f" {wheel.symmetry} it must be 2*pi*{wheel.symmetry}/m for whole m (e.g. mean ratio 1)"
        )
    return pair

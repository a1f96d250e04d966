"""Contact forces on one wheel and the friction the surface must supply.

Planar force balance on one wheel
---------------------------------
World frame: x along the axle path (direction of travel), y up, moments
anticlockwise positive. The axle ``A`` is at ``(x, 0)`` and moves with speed
``v`` and acceleration ``a`` (its height is constant for an ideal pair). The
wheel turns clockwise by ``theta = pair.wheel_angle(x)``, so with ``r(x) =
-y(x)`` the contact radius and ``s(x) = dy/dx`` the track slope at the contact::

    theta_dot  = v / r                      (rolling without slip, dx = r dtheta)
    theta_ddot = a / r + s v^2 / r^2        (d/dt (v/r) with dr/dx = -s)

The wheel (mass ``m``, inertia ``I_A`` about the axle, centre of mass offset
``c`` from the axle, in the world frame ``c_w = R(-theta) c = (c_x, c_y)``)
carries these forces:

* the contact force ``F = (F_x, F_y)`` at ``C = (x, -r)``, straight below the axle;
* the axle force ``H = (H_x, -W)`` from the chassis: ``W`` [N] is the load the
  chassis puts on this axle, ``H_x`` the horizontal push or pull;
* gravity ``m g`` down at the centre of mass;
* the shaft torque ``T`` (clockwise positive, i.e. driving forward) and the
  rolling-resistance torque ``tau_rr = C_rr N r`` opposing the rotation (the
  textbook model: a resisting force ``C_rr N`` acting at the contact radius;
  Gillespie, "Fundamentals of Vehicle Dynamics", SAE, 1992 [memory]).

The centre of mass accelerates as ``a_A + alpha x c_w - omega^2 c_w`` with
``omega = -theta_dot``, ``alpha = -theta_ddot`` (anticlockwise)::

    a_cx = a + theta_ddot c_y - theta_dot^2 c_x
    a_cy =   - theta_ddot c_x - theta_dot^2 c_y

Newton, horizontally and vertically::

    F_x + H_x       = m a_cx
    F_y - W - m g   = m a_cy          =>  F_y = W + m g + m a_cy

Moments about the accelerating axle, ``sum M_A = I_A alpha + m c_w x a_A``
(the moment equation about a point other than the centre of mass, e.g. Meriam
& Kraige, "Engineering Mechanics: Dynamics", Wiley [memory]), with ``(C - A) x F
= r F_x``, ``c_w x (0, -m g) = -m g c_x`` and ``c_w x (a, 0) = -c_y a``::

    r F_x - m g c_x - T + tau_rr = -I_A theta_ddot - m c_y a
    =>  T = r F_x - m g c_x + tau_rr + I_A theta_ddot + m c_y a

Two kinds of wheel close the system:

* driven (the shaft supplies whatever torque the motion needs): the horizontal
  axle force is what the wheel pushes the chassis with, ``H_x = -P`` where
  ``P = push_N + pushed_mass_kg * a`` (its share of the body's inertia and of the
  other wheels' needs), so ``F_x = m a_cx + P`` and ``T`` follows;
* free (towed, ``T = 0``): the moment equation gives ``F_x``; with ``N``
  depending on ``F_x`` through the rolling resistance the relation stays linear::

    F_x = (m g c_x - I_A theta_ddot - m c_y a - C_rr r F_y / q) / (r (1 - C_rr s / q))

  and ``H_x = m a_cx - F_x``.

Normal and tangential components relative to the track at the contact (unit
tangent ``(1, s)/q``, upward normal ``(-s, 1)/q``, ``q = sqrt(1 + s^2)``)::

    N   = (F_y - s F_x) / q
    F_t = (F_x + s F_y) / q
    mu_required = |F_t| / N        (N > 0; N <= 0 is lift-off)

Steady speed, centre of mass on the axle, driven wheel alone: ``F_x = 0`` and
``F_y = W + m g``, so ``mu_required = |s| = tan(phi)`` with ``phi`` the track's
slope angle at the contact: the contact force is vertical while the track
tilts, exactly like a block resting on an incline.
"""

from __future__ import annotations

import math

import numpy as np

from ridesim.arrays import unique_sorted
from ridesim.errors import InputError
from ridesim.model.checks import finite as _finite
from ridesim.model.wheel import MassProperties
from ridesim.records import record
from ridesim.solve.pair import RollingPair
from ridesim.validate import is_integer

__all__ = [
    "G_STANDARD_M_S2",
    "ContactLoads",
    "FrictionResult",
    "contact_loads",
    "cycle_nodes",
    "friction_demand",
]

#: Standard acceleration of gravity [m/s^2] (CGPM 1901 conventional value).
G_STANDARD_M_S2 = 9.80665
HALF_PI = 0.5 * math.pi
_GL_ORDER = 16
_GL_T, _GL_W = np.polynomial.legendre.leggauss(_GL_ORDER)


def _check_pair(pair) -> None:
    if not isinstance(pair, RollingPair):
        raise InputError(f"pair must be a ridesim RollingPair, got {type(pair).__name__}")


@record
class ContactLoads:
    """Kinematics and loads of one wheel at a set of axle positions (arrays, one per x).

    Attributes
    ----------
    x_m : ndarray
        Axle position [m].
    theta_rad : ndarray
        Clockwise wheel rotation [rad].
    radius_m : ndarray
        Axle-to-contact distance [m].
    slope : ndarray
        Track slope dy/dx [-] at the contact.
    shaft_speed_rad_s : ndarray
        Wheel angular speed [rad/s], clockwise (forward rolling) positive.
    shaft_accel_rad_s2 : ndarray
        Wheel angular acceleration [rad/s^2], clockwise positive.
    force_x_N, force_y_N : ndarray
        Contact force [N] of the track on the wheel, world frame.
    normal_N : ndarray
        Contact force component [N] along the track's upward normal (the normal load).
    tangential_N : ndarray
        Contact force component [N] along the track tangent (positive towards +x).
    mu_required : ndarray
        ``|tangential| / normal`` [-]; inf where the normal load is not positive.
    torque_Nm : ndarray
        Shaft torque [N m] on the wheel, clockwise (driving forward) positive; 0 for a free wheel.
    axle_force_x_N : ndarray
        Horizontal force [N] of the chassis on the wheel at the axle.
    rolling_torque_Nm : ndarray
        Rolling-resistance torque [N m] opposing the rotation.
    """

    x_m: np.ndarray
    theta_rad: np.ndarray
    radius_m: np.ndarray
    slope: np.ndarray
    shaft_speed_rad_s: np.ndarray
    shaft_accel_rad_s2: np.ndarray
    force_x_N: np.ndarray
    force_y_N: np.ndarray
    normal_N: np.ndarray
    tangential_N: np.ndarray
    mu_required: np.ndarray
    torque_Nm: np.ndarray
    axle_force_x_N: np.ndarray
    rolling_torque_Nm: np.ndarray


def contact_loads(
    pair: RollingPair,
    x_m: np.ndarray,
    *,
    speed_m_s: float,
    accel_m_s2: float = 0.0,
    wheel_mass: MassProperties | None = None,
    wheel_load_N: float | np.ndarray = 1.0,
    push_N: float | np.ndarray = 0.0,
    pushed_mass_kg: float = 0.0,
    driven: bool = True,
    rolling_resistance: float = 0.0,
    g_m_s2: float = G_STANDARD_M_S2,
    slope: np.ndarray | None = None,
) -> ContactLoads:
    """Planar force balance on one wheel at axle positions ``x_m`` (see the module notes).

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    x_m : array_like
        Axle positions [m].
    speed_m_s : float
        Axle speed [m/s], >= 0.
    accel_m_s2 : float
        Axle acceleration [m/s^2].
    wheel_mass : MassProperties, optional
        Mass [kg], inertia about the axle [kg m^2] and centre-of-mass offset [m] of the
        wheel; None for a massless wheel.
    wheel_load_N : float or array_like
        Downward load [N] the chassis puts on this axle.
    push_N : float or array_like
        Driven wheel: forward force [N] the axle must deliver to the chassis besides
        ``pushed_mass_kg * accel_m_s2`` (e.g. the other wheels' rolling resistance).
    pushed_mass_kg : float
        Driven wheel: mass [kg] this wheel accelerates besides itself.
    driven : bool
        True: the shaft supplies the torque the motion needs; False: a free wheel (no
        shaft torque), pushed or towed at the axle.
    rolling_resistance : float
        Rolling-resistance coefficient C_rr [-] (resisting torque C_rr N r).
    g_m_s2 : float
        Gravity [m/s^2].
    slope : array_like, optional
        Track slope [-] at ``x_m`` when already known (e.g. one-sided values at cusps).

    Returns
    -------
    ContactLoads
    """
    _check_pair(pair)
    v = _finite("speed_m_s", speed_m_s, ge=0.0)
    a = _finite("accel_m_s2", accel_m_s2)
    crr = _finite("rolling_resistance", rolling_resistance, ge=0.0)
    g = _finite("g_m_s2", g_m_s2, ge=0.0)
    mp = _finite("pushed_mass_kg", pushed_mass_kg, ge=0.0)
    x = np.asarray(x_m, dtype=float)
    W = np.asarray(wheel_load_N, dtype=float)
    if not np.all(np.isfinite(W)):
        raise InputError("wheel_load_N must be finite (newtons)")
    if wheel_mass is None:
        m, I_A, cx0, cy0 = 0.0, 0.0, 0.0, 0.0
    elif isinstance(wheel_mass, MassProperties):
        m, I_A = float(wheel_mass.mass_kg), float(wheel_mass.inertia_kg_m2)
        cx0, cy0 = (float(q) for q in wheel_mass.com_m)
    else:
        raise InputError(f"wheel_mass must be a MassProperties or None, got {type(wheel_mass).__name__}")
    r = np.asarray(pair.contact_radius(x), dtype=float)
    s = np.asarray(pair.track.slope(x), dtype=float) if slope is None else np.asarray(slope, float)
    th = np.asarray(pair.wheel_angle(x), dtype=float)
    q = np.sqrt(1.0 + s * s)
    wd = v / r
    wdd = a / r + s * v * v / (r * r)
    ct, st = np.cos(th), np.sin(th)
    cx = cx0 * ct + cy0 * st  # R(-theta) c
    cy = -cx0 * st + cy0 * ct
    acx = a + wdd * cy - wd * wd * cx
    acy = -wdd * cx - wd * wd * cy
    Fy = W + m * g + m * acy
    sign = 1.0 if v > 0 or (v == 0 and a >= 0) else -1.0
    if driven:
        P = np.asarray(push_N, dtype=float) + mp * a
        Fx = m * acx + P
        N = (Fy - s * Fx) / q
        trr = sign * crr * N * r
        T = r * Fx - m * g * cx + trr + I_A * wdd + m * cy * a
        Hx = -P * np.ones_like(Fx)
    else:
        num = m * g * cx - I_A * wdd - m * cy * a - sign * crr * r * Fy / q
        Fx = num / (r * (1.0 - sign * crr * s / q))
        N = (Fy - s * Fx) / q
        trr = sign * crr * N * r
        T = np.zeros_like(Fx)
        Hx = m * acx - Fx
    Ft = (Fx + s * Fy) / q
    with np.errstate(divide="ignore", invalid="ignore"):
        mu = np.where(N > 0, np.abs(Ft) / np.where(N > 0, N, 1.0), np.inf)
    bc = np.broadcast_arrays(x, th, r, s, wd, wdd, Fx, Fy, N, Ft, mu, T, Hx, trr)
    return ContactLoads(*(np.array(b, dtype=float) for b in bc))


def cycle_nodes(pair: RollingPair, n: int = 2048, offsets_m=(0.0,)) -> tuple[np.ndarray, np.ndarray]:
    """Quadrature nodes over one revolution, split at every cusp a wheel meets.

    Also split where a smooth rim's curvature jumps (:attr:`ridesim.Wheel.breaks`).

    A vehicle reference point at ``x`` puts axle ``i`` at ``x + offsets_m[i]``, so a cusp
    at ``x_c`` is met at ``x = x_c - offsets_m[i]``. Between those breaks the loads are
    smooth and composite 16-point Gauss-Legendre panels integrate them to high order; at every break two
    one-sided nodes (weight 0) carry the limits from either side, where peaks sit. With no
    cusps at all, ``n`` even nodes and the periodic trapezoid rule are used (spectrally
    accurate for a smooth periodic integrand).

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    n : int
        Approximate number of nodes [-] over the revolution.
    offsets_m : sequence of float
        Axle offsets [m] from the reference point.

    Returns
    -------
    x_m : ndarray
        Sorted nodes [m] in ``[0, L)`` with ``L = pair.revolution_length``.
    weight_m : ndarray
        Quadrature weights [m]; they sum to ``L``.
    """
    _check_pair(pair)
    if not is_integer(n) or n < 16:
        raise InputError(f"n must be an integer >= 16, got {n!r}")
    L = float(pair.revolution_length)
    cusps = np.array([c.x_m for c in pair.cusps], dtype=float)
    # Where a smooth rim's curvature jumps (a rounded polygon's flats meet its arcs) the loads
    # have a kink and the slope its peak: split there too.
    breaks = pair.wheel.breaks if pair.closed else ()
    if breaks:
        xb = pair.axle_x(np.asarray(breaks, dtype=float) + 0.5 * math.pi)
        cusps = np.concatenate([cusps, np.mod(xb, L)])
    offs = np.asarray(offsets_m, dtype=float).ravel()
    if cusps.size == 0:
        x = L * np.arange(n) / n
        return x, np.full(n, L / n)
    b = np.mod((cusps[None, :] - offs[:, None]).ravel(), L)
    b = unique_sorted(b)
    # merge breaks closer than 1e-9 L
    keep = np.concatenate(([True], np.diff(b) > 1e-9 * L))
    b = b[keep]
    if b.size > 1 and (b[0] + L - b[-1]) <= 1e-9 * L:
        b = b[:-1]
    edges = np.concatenate([b, [b[0] + L]])
    lengths = np.diff(edges)
    # Composite 16-point Gauss-Legendre panels (cheap to set up at any density).
    panels = np.maximum(1, np.ceil(n * lengths / (L * _GL_ORDER)).astype(int))
    xs, ws = [], []
    for lo, ln, k in zip(edges[:-1], lengths, panels, strict=True):
        e = lo + ln * np.arange(k + 1) / k
        half = 0.5 * np.diff(e)
        mid = 0.5 * (e[1:] + e[:-1])
        xs.append((mid[:, None] + half[:, None] * _GL_T[None, :]).ravel())
        ws.append((half[:, None] * _GL_W[None, :]).ravel())
    eps = 1e-10 * L
    xs += [b + eps, b + L - eps]
    ws += [np.zeros(b.size), np.zeros(b.size)]
    x = np.mod(np.concatenate(xs), L)
    w = np.concatenate(ws)
    order = np.argsort(x, kind="stable")
    return x[order], w[order]


@record
class FrictionResult:
    """Friction the surface must supply along one revolution.

    Attributes
    ----------
    x_m : ndarray
        Axle positions [m] over one revolution (sorted; one-sided nodes at each cusp).
    mu : ndarray
        Required friction coefficient [-] at each position (inf where the wheel lifts off).
    normal_N : ndarray
        Normal load [N] at each position.
    tangential_N : ndarray
        Tangential load [N] at each position.
    peak : float
        Largest required coefficient [-] (inf when the wheel lifts off somewhere).
    at_x_m : float
        Axle position [m] of the peak.
    slope_at_peak : float
        Track slope dy/dx [-] at the peak.
    available : float or None
        The surface's friction coefficient [-], when given.
    slips : bool or None
        True when ``peak > available``; None when ``available`` is not given.
    lift_off : bool
        True when the normal load is not positive somewhere.
    lift_off_x_m : float or None
        First axle position [m] where the normal load is not positive.
    """

    x_m: np.ndarray
    mu: np.ndarray
    normal_N: np.ndarray
    tangential_N: np.ndarray
    peak: float
    at_x_m: float
    slope_at_peak: float
    available: float | None
    slips: bool | None
    lift_off: bool
    lift_off_x_m: float | None

    def to_dict(self) -> dict:
        """Summary values, JSON-ready (arrays left out).

        Returns
        -------
        dict
        """
        return {
            "required_peak": float(self.peak) if math.isfinite(self.peak) else None,
            "at_x_m": float(self.at_x_m),
            "slope_at_peak": float(self.slope_at_peak),
            "available": None if self.available is None else float(self.available),
            "slips": self.slips,
            "lift_off": bool(self.lift_off),
            "lift_off_x_m": None if self.lift_off_x_m is None else float(self.lift_off_x_m),
        }


def _summarise_mu(x, mu, normal, tangential, slope, available) -> FrictionResult:
    """Peak, location and slip verdict from arrays of required friction.

    Parameters
    ----------
    x, mu, normal, tangential, slope : ndarray
        Positions [m], required friction [-], normal [N] and tangential [N] loads, slope [-].
    available : float or None
        Surface friction coefficient [-].

    Returns
    -------
    FrictionResult
    """
    lifted = ~(normal > 0)
    k = int(np.argmax(np.where(lifted, np.inf, mu))) if lifted.any() else int(np.argmax(mu))
    peak = float(mu[k])
    avail = None if available is None else _finite("available", available, gt=0.0)
    return FrictionResult(
        x_m=x, mu=mu, normal_N=normal, tangential_N=tangential, peak=peak, at_x_m=float(x[k]),
        slope_at_peak=float(slope[k]), available=avail,
        slips=None if avail is None else bool(peak > avail),
        lift_off=bool(lifted.any()),
        lift_off_x_m=float(x[np.flatnonzero(lifted)[0]]) if lifted.any() else None,
    )


def friction_demand(
    pair: RollingPair,
    *,
    speed_m_s: float = 0.0,
    accel_m_s2: float = 0.0,
    wheel_mass: MassProperties | None = None,
    wheel_load_N: float = 1.0,
    push_N: float = 0.0,
    pushed_mass_kg: float = 0.0,
    driven: bool = True,
    rolling_resistance: float = 0.0,
    available: float | None = None,
    g_m_s2: float = G_STANDARD_M_S2,
    samples: int = 2048,
) -> FrictionResult:
    """Required friction coefficient along one revolution for one wheel.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    speed_m_s : float
        Axle speed [m/s] (matters for a wheel with mass: inertia and an off-axle
        centre of mass).
    accel_m_s2 : float
        Axle acceleration [m/s^2].
    wheel_mass : MassProperties, optional
        Wheel mass properties; None for a massless wheel.
    wheel_load_N : float
        Load [N] of the chassis on this axle. With a massless wheel at steady speed the
        answer does not depend on it.
    push_N : float
        Driven wheel: forward force [N] delivered to the chassis besides ``pushed_mass_kg * a``.
    pushed_mass_kg : float
        Driven wheel: mass [kg] accelerated besides the wheel itself.
    driven : bool
        True for a driven wheel (shaft torque as needed), False for a free wheel.
    rolling_resistance : float
        Rolling-resistance coefficient C_rr [-].
    available : float, optional
        The surface's friction coefficient [-]; sets ``slips``.
    g_m_s2 : float
        Gravity [m/s^2].
    samples : int
        Approximate number of positions [-] over the revolution.

    Returns
    -------
    FrictionResult

    Examples
    --------
    >>> import math, ridesim as rs
    >>> from ridesim.assess.friction import friction_demand
    >>> res = friction_demand(rs.track_for(rs.Wheel.polygon(sides=6, apothem=0.12)))
    >>> abs(res.peak - math.tan(math.pi / 6)) < 1e-6
    True
    """
    _check_pair(pair)
    x, _ = cycle_nodes(pair, samples)
    cl = contact_loads(pair, x, speed_m_s=speed_m_s, accel_m_s2=accel_m_s2, wheel_mass=wheel_mass,
                       wheel_load_N=wheel_load_N, push_N=push_N, pushed_mass_kg=pushed_mass_kg,
                       driven=driven, rolling_resistance=rolling_resistance, g_m_s2=g_m_s2)
    return _summarise_mu(x, cl.mu_required, cl.normal_N, cl.tangential_N, cl.slope, available)

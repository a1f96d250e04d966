"""Loads, shaft torque and power along one revolution, from the solved pair alone.

No simulation: the axle of an ideal pair stays at constant height, so a rigid
chassis on such wheels moves level and every quantity follows from the pair's
kinematics and the planar force balance of :mod:`ridesim.assess.friction`.

Vehicle model (the planar model: one wheel per axle)
----------------------------------------------------
* Axles sit at ``x + offset_i`` (:func:`ridesim.model.vehicle.axle_offsets_m`);
  each carries an equal share ``body_mass * g / axles`` of the body's weight
  (exact for one axle, or two with the body's centre of mass midway; an
  assumption for more). The body's centre of mass is taken at axle height, so
  accelerating transfers no load between axles.
* Free (undriven) wheels turn without shaft torque; the chassis pushes them.
  Driven wheels share equally the force that accelerates the body and pushes
  the free wheels: ``push = (body_mass * a + sum of the free wheels' axle
  forces) / driven``. With ``coupled = true`` every wheel is on the chain, so all
  count as driven; the chain's total is reported too.
* Shaft torque per driven wheel: ``T = r F_x - m g c_x + C_rr N r + I_A theta_ddot
  + m c_y a`` (see :mod:`ridesim.assess.friction`): the push share times the
  contact radius, the wheel's own spin-up ``I_A alpha``, the gravity torque of an
  off-axle wheel centre of mass, and rolling resistance ``C_rr N r`` (Gillespie,
  "Fundamentals of Vehicle Dynamics", SAE, 1992 [memory]). Shaft power ``P = T
  omega``.

Other drives, for comparison
----------------------------
* Constant shaft speed ``omega_0``: the ground speed is ``v = r(theta) omega_0``,
  so it ripples by ``(r_max - r_min) / r_mean`` with ``r_mean = L / (2 pi)`` (the
  time mean of ``r``) and surges by ``r_max / r_min`` (``sec(pi/n)`` for a regular
  n-gon) [derived].
* Constant shaft torque: energy balance over the vehicle's position ``x``,
  ``d(1/2 M(x) v^2) = T sum dtheta_j - C_rr sum N_i dx - dPE``, with the
  generalised mass ``M(x) = body + sum_i (m + I_A / r_i^2 + 2 m c_y,i / r_i)`` (the
  wheel's kinetic energy ``1/2 m v^2 + 1/2 I_A omega^2 + m v omega c_y``) and
  ``PE = sum m g c_y,i``. Over one revolution ``int dtheta = 2 pi`` and ``PE``
  returns, so the torque that holds a steady mean speed is ``T = C_rr int sum N_i
  dx / (2 pi driven)``; the speed then follows ``v(x) = sqrt(2 u(x) / M(x))`` with
  ``u`` fixed by the mean speed ``L / int dx/v``.

Lift-off
--------
The normal load at each position is linear in ``v^2`` (every dynamic term is),
``N = N_0 + N_2 v^2``; where ``N_2 < 0`` it reaches zero at ``v = sqrt(N_0 / -N_2)``.
The least such speed over all wheels and positions is the lift-off speed (None
when ``N_2 >= 0`` everywhere, as for an ideal pair with the wheel's centre of
mass on its axle and every wheel driven).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ridesim.assess.friction import G_STANDARD_M_S2, ContactLoads, contact_loads, cycle_nodes
from ridesim.errors import InputError
from ridesim.io.scenario import DriveSpec, SurfaceSpec, VehicleSpec
from ridesim.model.vehicle import axle_offsets_m
from ridesim.model.wheel import MassProperties
from ridesim.roots import find_root
from ridesim.solve.pair import RollingPair

__all__ = ["AnalyticResult", "analyze_cycle", "TorqueModel", "shaft_speed_cycle"]

TWO_PI = 2.0 * math.pi


@dataclass(frozen=True)
class AnalyticResult:
    """Per-wheel loads, torque and power over one revolution at one speed.

    Arrays have shape ``(axles, n)`` (row ``i`` is axle ``i``, rear to front) over the
    vehicle reference positions ``x_m``; summaries are per driven wheel shaft.

    Attributes
    ----------
    speed_m_s : float
        Vehicle speed [m/s].
    accel_m_s2 : float
        Vehicle acceleration [m/s^2] (0: steady speed).
    x_m : ndarray, shape (n,)
        Vehicle reference position [m] over one revolution (chassis origin).
    t_s : ndarray, shape (n,)
        Time [s] at steady speed ``x / v`` (NaN when the speed is 0).
    weight_m : ndarray, shape (n,)
        Quadrature weights [m] (sum ``L``); 0 on the one-sided nodes at cusps.
    offsets_m : ndarray, shape (axles,)
        Axle offsets [m] from the chassis origin.
    driven : tuple of int
        Indices of the driven axles.
    wheel_x_m : ndarray
        Axle positions [m] on the track.
    shaft_speed_rad_s, shaft_accel_rad_s2 : ndarray
        Wheel angular speed [rad/s] and acceleration [rad/s^2], clockwise positive.
    normal_load_N, tangential_load_N : ndarray
        Contact loads [N] normal and tangential to the track.
    torque_Nm : ndarray
        Shaft torque [N m] (0 on free wheels).
    power_W : ndarray
        Shaft power [W] ``T omega`` (positive: the drive delivers).
    mu_required : ndarray
        Required friction coefficient [-] (inf where a wheel lifts off).
    torque_peak_Nm, torque_rms_Nm, torque_mean_Nm : float
        Largest ``|T|``, time-weighted RMS and mean torque [N m] over a revolution,
        the worst driven wheel.
    shaft_speed_max_rad_s, shaft_speed_min_rad_s : float
        Extreme wheel speeds [rad/s], ``v / r_min`` and ``v / r_max`` (exact).
    power_peak_W, power_mean_W : float
        Largest ``|P|`` and time-mean power [W], the worst driven wheel.
    chain_torque_peak_Nm, chain_torque_rms_Nm : float or None
        Coupled axles: peak and RMS [N m] of the summed torque of all wheels on the chain.
    mu_peak : float
        Largest required friction coefficient [-] over all wheels.
    mu_peak_x_m : float
        Axle position [m] on the track, within one revolution, of that peak.
    mu_peak_axle : int
        Axle index of that peak.
    lift_off_speed_m_s : float or None
        Least speed [m/s] at which some normal load reaches zero at steady speed.
    shaft_speed_drive_ripple : float
        Constant-shaft-speed drive: ``(v_max - v_min) / v_mean`` [-].
    shaft_speed_drive_surge : float
        Constant-shaft-speed drive: ``v_max / v_min`` [-].
    constant_torque_Nm : float
        Constant shaft torque [N m] per driven wheel that holds the mean speed.
    constant_torque_ripple : float or None
        Constant-torque drive: ``(v_max - v_min) / v_mean`` [-]; None if it stalls.
    """

    speed_m_s: float
    accel_m_s2: float
    x_m: np.ndarray
    t_s: np.ndarray
    weight_m: np.ndarray
    offsets_m: np.ndarray
    driven: tuple[int, ...]
    wheel_x_m: np.ndarray
    shaft_speed_rad_s: np.ndarray
    shaft_accel_rad_s2: np.ndarray
    normal_load_N: np.ndarray
    tangential_load_N: np.ndarray
    torque_Nm: np.ndarray
    power_W: np.ndarray
    mu_required: np.ndarray
    torque_peak_Nm: float
    torque_rms_Nm: float
    torque_mean_Nm: float
    shaft_speed_max_rad_s: float
    shaft_speed_min_rad_s: float
    power_peak_W: float
    power_mean_W: float
    chain_torque_peak_Nm: float | None
    chain_torque_rms_Nm: float | None
    mu_peak: float
    mu_peak_x_m: float
    mu_peak_axle: int
    lift_off_speed_m_s: float | None
    shaft_speed_drive_ripple: float
    shaft_speed_drive_surge: float
    constant_torque_Nm: float
    constant_torque_ripple: float | None
    extras: dict = field(default_factory=dict)

    def to_dict(self) -> dict:
        """Summary values (per driven wheel shaft), JSON-ready; arrays left out.

        Returns
        -------
        dict
        """
        def f(v):
            return None if v is None or not math.isfinite(v) else float(v)

        return {
            "speed_m_s": float(self.speed_m_s),
            "accel_m_s2": float(self.accel_m_s2),
            "torque_peak_Nm": f(self.torque_peak_Nm),
            "torque_rms_Nm": f(self.torque_rms_Nm),
            "torque_mean_Nm": f(self.torque_mean_Nm),
            "shaft_speed_max_rad_s": f(self.shaft_speed_max_rad_s),
            "shaft_speed_min_rad_s": f(self.shaft_speed_min_rad_s),
            "power_peak_W": f(self.power_peak_W),
            "power_mean_W": f(self.power_mean_W),
            "chain_torque_peak_Nm": f(self.chain_torque_peak_Nm),
            "chain_torque_rms_Nm": f(self.chain_torque_rms_Nm),
            "mu_peak": f(self.mu_peak),
            "mu_peak_x_m": float(self.mu_peak_x_m),
            "lift_off_speed_m_s": f(self.lift_off_speed_m_s),
            "shaft_speed_drive_ripple": float(self.shaft_speed_drive_ripple),
            "shaft_speed_drive_surge": float(self.shaft_speed_drive_surge),
            "constant_torque_Nm": float(self.constant_torque_Nm),
            "constant_torque_ripple": f(self.constant_torque_ripple),
        }


def _vehicle_loads(pair, xr, offsets, driven_set, *, v, a, mp, body_mass, crr, g):
    """Contact loads of every axle at reference positions ``xr`` (list, rear to front)."""
    n_ax = len(offsets)
    W = body_mass * g / n_ax
    free = [i for i in range(n_ax) if i not in driven_set]
    loads: list[ContactLoads | None] = [None] * n_ax
    tow = np.zeros_like(xr)
    for i in free:
        cl = contact_loads(pair, xr + offsets[i], speed_m_s=v, accel_m_s2=a, wheel_mass=mp,
                           wheel_load_N=W, driven=False, rolling_resistance=crr, g_m_s2=g)
        loads[i] = cl
        tow = tow + cl.axle_force_x_N
    nd = len(driven_set)
    push = (body_mass * a + tow) / nd
    for i in driven_set:
        loads[i] = contact_loads(pair, xr + offsets[i], speed_m_s=v, accel_m_s2=a, wheel_mass=mp,
                                 wheel_load_N=W, push_N=push, driven=True, rolling_resistance=crr,
                                 g_m_s2=g)
    return loads


def _constant_torque_ripple(pair, x, w, offsets, driven_set, mp, body_mass, crr, g, v_mean, loads):
    """Constant shaft torque that holds ``v_mean`` and the speed ripple it gives.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    x, w : ndarray
        Reference positions [m] and quadrature weights [m] over one revolution.
    offsets : ndarray
        Axle offsets [m].
    driven_set : sequence of int
        Driven axles.
    mp : MassProperties or None
        Wheel mass properties.
    body_mass : float
        Body mass [kg].
    crr : float
        Rolling-resistance coefficient [-].
    g : float
        Gravity [m/s^2].
    v_mean : float
        Mean speed [m/s] to hold.
    loads : list of ContactLoads
        Steady loads at ``v_mean`` (for the rolling-resistance losses).

    Returns
    -------
    torque_Nm : float
        Constant torque [N m] per driven wheel.
    ripple : float or None
        ``(v_max - v_min) / v_mean`` [-], or None when the cart would stall.
    """
    L = float(pair.revolution_length)
    m = 0.0 if mp is None else mp.mass_kg
    I_A = 0.0 if mp is None else mp.inertia_kg_m2
    c0 = (0.0, 0.0) if mp is None else mp.com_m
    # Sorted, strictly increasing grid with both ends for cumulative integrals.
    xs = np.unique(np.concatenate([x, [0.0, L]]))
    Mx = np.full(xs.shape, float(body_mass))
    pe = np.zeros(xs.shape)
    theta_drv = np.zeros(xs.shape)
    loss_density = np.zeros(xs.shape)
    for i, off in enumerate(offsets):
        xi = xs + off
        r = np.asarray(pair.contact_radius(xi), dtype=float)
        th = np.asarray(pair.wheel_angle(xi), dtype=float)
        cy = -c0[0] * np.sin(th) + c0[1] * np.cos(th)
        Mx += m + I_A / r**2 + 2.0 * m * cy / r
        pe += m * g * cy
        if i in driven_set:
            theta_drv += th - float(np.asarray(pair.wheel_angle(np.array([off])))[0])
        N = np.interp(xs, x, loads[i].normal_N, period=L)
        loss_density += crr * np.maximum(N, 0.0)
    seg = 0.5 * (loss_density[1:] + loss_density[:-1]) * np.diff(xs)
    loss = np.concatenate([[0.0], np.cumsum(seg)])
    nd = len(driven_set)
    T = float(loss[-1]) / (TWO_PI * nd) if nd else 0.0
    rest = T * theta_drv - loss - (pe - pe[0])
    u_floor = float(np.max(-rest))

    def mean_speed(u0: float) -> float:
        v = np.sqrt(np.maximum(2.0 * (u0 + rest) / Mx, 0.0))
        inv = np.where(v > 0, 1.0 / np.where(v > 0, v, 1.0), np.inf)
        tt = float(np.sum(0.5 * (inv[1:] + inv[:-1]) * np.diff(xs)))
        return L / tt if tt > 0 and math.isfinite(tt) else 0.0

    lo = u_floor + 1e-12 * max(1.0, abs(u_floor))
    hi = max(lo, 0.0) + 0.5 * float(Mx.max()) * v_mean**2 * 4.0 + 1.0
    try:
        if mean_speed(lo) >= v_mean:
            return T, None
        while mean_speed(hi) < v_mean:
            hi *= 4.0
        u0 = find_root(lambda u: mean_speed(u) - v_mean, lo, hi, xtol=1e-15, rtol=1e-13)
    except (ValueError, RuntimeError):
        return T, None
    v = np.sqrt(np.maximum(2.0 * (u0 + rest) / Mx, 0.0))
    return T, float((v.max() - v.min()) / v_mean)


def analyze_cycle(
    pair: RollingPair,
    *,
    vehicle: VehicleSpec,
    surface: SurfaceSpec,
    wheel_mass: MassProperties | None,
    speed_m_s: float | None = None,
    accel_m_s2: float = 0.0,
    drive: DriveSpec | None = None,
    samples: int = 2048,
    g_m_s2: float = G_STANDARD_M_S2,
) -> AnalyticResult:
    """Per-wheel loads, shaft torque and power over one revolution.

    Parameters
    ----------
    pair : RollingPair
        The solved pair (every axle carries this wheel on this track).
    vehicle : VehicleSpec
        Body mass [kg], axles, wheelbase [m], coupling, driven axles.
    surface : SurfaceSpec
        Friction [-] and rolling-resistance coefficient [-].
    wheel_mass : MassProperties or None
        One wheel's mass [kg], inertia about the axle [kg m^2] and centre-of-mass
        offset [m]; None for massless wheels.
    speed_m_s : float, optional
        Vehicle speed [m/s]; default ``drive.speed_m_s`` (or, for a ``shaft_speed``
        drive, the mean ground speed ``omega L / 2 pi``).
    accel_m_s2 : float
        Vehicle acceleration [m/s^2] at that speed; 0 for steady running.
    drive : DriveSpec, optional
        Where the default speed comes from.
    samples : int
        Approximate number of positions [-] over one revolution.
    g_m_s2 : float
        Gravity [m/s^2].

    Returns
    -------
    AnalyticResult
    """
    if not isinstance(pair, RollingPair):
        raise InputError(f"pair must be a ridesim RollingPair, got {type(pair).__name__}")
    if not isinstance(vehicle, VehicleSpec):
        raise InputError(f"vehicle must be a VehicleSpec, got {type(vehicle).__name__}")
    if not isinstance(surface, SurfaceSpec):
        raise InputError(f"surface must be a SurfaceSpec, got {type(surface).__name__}")
    L = float(pair.revolution_length)
    if speed_m_s is None:
        if drive is None:
            raise InputError("give speed_m_s (m/s) or a drive to take it from")
        if drive.mode == "shaft_speed" and drive.shaft_speed_rad_s is not None:
            speed_m_s = drive.shaft_speed_rad_s * L / TWO_PI
        else:
            speed_m_s = drive.speed_m_s
    v = float(speed_m_s)
    if not (math.isfinite(v) and v >= 0):
        raise InputError(f"speed_m_s must be >= 0 m/s, got {speed_m_s!r}")
    a = float(accel_m_s2)
    if not math.isfinite(a):
        raise InputError(f"accel_m_s2 must be finite, got {accel_m_s2!r}")
    g = float(g_m_s2)
    crr = float(surface.rolling_resistance)
    body = float(vehicle.body_mass_kg)
    offsets = axle_offsets_m(vehicle.axles, vehicle.wheelbase_m)
    n_ax = len(offsets)
    driven = tuple(range(n_ax)) if vehicle.coupled else tuple(vehicle.driven_axle_indices)
    x, w = cycle_nodes(pair, samples, offsets)

    loads = _vehicle_loads(pair, x, offsets, driven, v=v, a=a, mp=wheel_mass, body_mass=body,
                           crr=crr, g=g)

    def stack(name):
        return np.vstack([getattr(c, name) for c in loads])

    wd = stack("shaft_speed_rad_s")
    wdd = stack("shaft_accel_rad_s2")
    N = stack("normal_N")
    Ft = stack("tangential_N")
    T = stack("torque_Nm")
    mu = stack("mu_required")
    P = T * wd
    wsum = float(w.sum())
    d = list(driven)
    Td = T[d]
    rms = np.sqrt((Td**2 @ w) / wsum)
    mean = (Td @ w) / wsum
    pmean = (P[d] @ w) / wsum
    k_rms = int(np.argmax(rms))
    chain_peak = chain_rms = None
    if vehicle.coupled:
        tot = T.sum(axis=0)
        chain_peak = float(np.max(np.abs(tot)))
        chain_rms = float(np.sqrt((tot**2 @ w) / wsum))
    # Friction peak over all wheels.
    mu_f = np.where(np.isfinite(mu), mu, np.inf)
    ia, ix = np.unravel_index(int(np.argmax(mu_f)), mu_f.shape)
    mu_peak = float(mu_f[ia, ix])
    mu_x = float(np.mod(x[ix] + offsets[ia], L))

    # Lift-off: normal load linear in v^2 at steady speed.
    l0 = _vehicle_loads(pair, x, offsets, driven, v=0.0, a=0.0, mp=wheel_mass, body_mass=body,
                        crr=crr, g=g)
    l1 = _vehicle_loads(pair, x, offsets, driven, v=1.0, a=0.0, mp=wheel_mass, body_mass=body,
                        crr=crr, g=g)
    N0 = np.vstack([c.normal_N for c in l0])
    N2 = np.vstack([c.normal_N for c in l1]) - N0
    scale = max(float(np.max(np.abs(N0))), 1e-300)
    if np.any(N0 <= 0):
        lift = 0.0
    else:
        falling = N2 < -1e-12 * scale
        lift = float(np.sqrt(np.min(N0[falling] / -N2[falling]))) if np.any(falling) else None

    rmin, rmax, _ = pair.wheel.extremes()
    r_mean = L / TWO_PI
    steady = loads if a == 0.0 else _vehicle_loads(pair, x, offsets, driven, v=v, a=0.0,
                                                    mp=wheel_mass, body_mass=body, crr=crr, g=g)
    T_const, ripple_T = _constant_torque_ripple(pair, x, w, offsets, driven, wheel_mass, body, crr,
                                                g, max(v, 1e-9), steady)
    with np.errstate(invalid="ignore", divide="ignore"):
        t = x / v if v > 0 else np.full(x.shape, np.nan)
    return AnalyticResult(
        speed_m_s=v, accel_m_s2=a, x_m=x, t_s=t, weight_m=w, offsets_m=offsets, driven=driven,
        wheel_x_m=np.vstack([x + o for o in offsets]),
        shaft_speed_rad_s=wd, shaft_accel_rad_s2=wdd, normal_load_N=N, tangential_load_N=Ft,
        torque_Nm=T, power_W=P, mu_required=mu,
        torque_peak_Nm=float(np.max(np.abs(Td))), torque_rms_Nm=float(rms[k_rms]),
        torque_mean_Nm=float(mean[k_rms]),
        shaft_speed_max_rad_s=float(v / rmin), shaft_speed_min_rad_s=float(v / rmax),
        power_peak_W=float(np.max(np.abs(P[d]))), power_mean_W=float(np.max(pmean)),
        chain_torque_peak_Nm=chain_peak, chain_torque_rms_Nm=chain_rms,
        mu_peak=mu_peak, mu_peak_x_m=mu_x, mu_peak_axle=int(ia), lift_off_speed_m_s=lift,
        shaft_speed_drive_ripple=float((rmax - rmin) / r_mean),
        shaft_speed_drive_surge=float(rmax / rmin),
        constant_torque_Nm=float(T_const), constant_torque_ripple=ripple_T,
    )


def _profiles(pair, sc, mp, v_top: float, a_ref: float):
    """T0, T1 (per m/s^2), T2 (per (m/s)^2) of each axle over one revolution."""
    def cyc(v, a):
        return analyze_cycle(pair, vehicle=sc.vehicle, surface=sc.surface, wheel_mass=mp,
                             speed_m_s=v, accel_m_s2=a, drive=sc.drive)

    v1, v2 = v_top, 0.5 * v_top
    c1, c2, c3 = cyc(v1, 0.0), cyc(v2, 0.0), cyc(v1, a_ref)
    T2 = (c1.torque_Nm - c2.torque_Nm) / (v1 * v1 - v2 * v2)
    T0 = c1.torque_Nm - v1 * v1 * T2
    T1 = (c3.torque_Nm - c1.torque_Nm) / a_ref
    check = cyc(0.75 * v_top, 0.5 * a_ref)
    model = T0 + (0.75 * v_top) ** 2 * T2 + 0.5 * a_ref * T1
    scale = max(float(np.max(np.abs(check.torque_Nm))), 1e-12)
    if float(np.max(np.abs(model - check.torque_Nm))) > 1e-6 * scale:
        raise InputError("the analytic torque is not linear in acceleration and speed squared"
                         " for this scenario; motor sizing cannot use it (report this case)")
    return c1, T0, T1, T2


class TorqueModel:
    """Per-driven-shaft torque ``T0(x) + v² T2(x) + a T1(x)`` from the analytic cycle.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    sc : Scenario
        Vehicle, surface and drive.
    mp : MassProperties
        One wheel's mass properties.
    v_ref_m_s : float
        Reference speed [m/s] for the fits (> 0).
    a_ref_m_s2 : float
        Reference acceleration [m/s^2] for the fits (> 0).
    """

    def __init__(self, pair, sc, mp, v_ref_m_s: float, a_ref_m_s2: float) -> None:
        self.pair = pair
        self.cycle, self.T0, self.T1, self.T2 = _profiles(pair, sc, mp, v_ref_m_s, a_ref_m_s2)
        self.offsets = axle_offsets_m(sc.vehicle.axles, sc.vehicle.wheelbase_m)
        self.m_total = sc.vehicle.body_mass_kg + sc.vehicle.axles * mp.mass_kg
        L = pair.revolution_length
        self.L = L
        self._tables = []
        for i in self.cycle.driven:
            xw = np.mod(self.cycle.wheel_x_m[i], L)
            order = np.argsort(xw, kind="stable")
            xs, keep = np.unique(xw[order], return_index=True)
            self._tables.append((i, xs, order[keep]))

    def along(self, x_m, v_m_s, a_m_s2, *, grade_rad: float = 0.0):
        """Shaft torque [N m] and shaft speed [rad/s] of each driven wheel along a motion.

        Parameters
        ----------
        x_m, v_m_s, a_m_s2 : array_like
            Chassis-origin position [m], speed [m/s] and acceleration [m/s^2] over time.
        grade_rad : float
            Grade [rad] (adds ``M g sin(grade) r / n_driven``).

        Returns
        -------
        torque_Nm, shaft_speed_rad_s : ndarray, shape (driven, n)
        """
        x = np.asarray(x_m, dtype=float)
        v = np.broadcast_to(np.asarray(v_m_s, dtype=float), x.shape)
        a = np.broadcast_to(np.asarray(a_m_s2, dtype=float), x.shape)
        n_d = len(self._tables)
        torque = np.empty((n_d, x.size))
        omega = np.empty_like(torque)
        for k, (i, xs, idx) in enumerate(self._tables):
            pos = np.mod(x + self.offsets[i], self.L)

            def at(profile, idx=idx, xs=xs, pos=pos):
                return np.interp(pos, xs, profile[idx], period=self.L)

            r = self.pair.contact_radius(pos)
            tq = at(self.T0[i]) + v * v * at(self.T2[i]) + a * at(self.T1[i])
            tq += self.m_total * G_STANDARD_M_S2 * math.sin(grade_rad) * r / n_d
            torque[k] = tq
            omega[k] = v / r
        return torque, omega


def shaft_speed_cycle(pair: RollingPair, sc, mp: MassProperties, omega_rad_s: float) -> dict:
    """Shaft torque over one revolution when the drive holds a constant shaft speed.

    The wheels then turn at ``omega`` whatever the contact radius, so the ground speed
    surges: ``v = omega r(x)`` and ``a = dv/dt = omega^2 r dr/dx`` (rear axle as the
    reference). The wheel's own angular acceleration is zero, but the whole vehicle is
    pushed and held back every period; the torque comes from :class:`TorqueModel` at
    that speed and acceleration, time-weighted (``dt = dx / v``).

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    sc : Scenario
        Vehicle, surface and drive.
    mp : MassProperties
        One wheel's mass properties.
    omega_rad_s : float
        Shaft speed [rad/s].

    Returns
    -------
    dict
        ``peak_Nm``, ``rms_Nm`` (per driven shaft, worst), ``speed_min_m_s``,
        ``speed_max_m_s``, ``accel_peak_m_s2``.
    """
    off0 = float(axle_offsets_m(sc.vehicle.axles, sc.vehicle.wheelbase_m)[0])
    r0 = pair.contact_radius(np.array([off0]))[0]
    model = TorqueModel(pair, sc, mp, float(omega_rad_s * r0), 1.0)
    # Evaluate at the analytic cycle's own nodes (one-sided values at cusps included), where
    # the torque profiles are exact rather than interpolated across a cusp's jump.
    c = model.cycle
    x, wx = np.asarray(c.x_m, dtype=float), np.asarray(c.weight_m, dtype=float)
    xr = np.asarray(c.wheel_x_m[0], dtype=float)
    r = pair.contact_radius(xr)
    drdx = -pair.track.slope(xr)
    # One-sided slopes at the duplicated cusp nodes: take them from the neighbouring node.
    v = omega_rad_s * r
    a = omega_rad_s**2 * r * drdx
    torque = np.empty((len(c.driven), x.size))
    for k, i in enumerate(c.driven):
        torque[k] = model.T0[i] + v * v * model.T2[i] + a * model.T1[i]
    w = wx / v  # time spent at each node [s]
    rms = np.sqrt((torque**2 * w).sum(axis=1) / w.sum())
    return {"peak_Nm": float(np.max(np.abs(torque))), "rms_Nm": float(np.max(rms)),
            "speed_min_m_s": float(v.min()), "speed_max_m_s": float(v.max()),
            "accel_peak_m_s2": float(np.max(np.abs(a)))}

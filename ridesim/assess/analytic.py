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
  count as driven.
* Motors sit on shafts (:func:`ridesim.model.vehicle.drive_motors`): each uncoupled
  driven axle has its own motor; a coupled train has one motor, whose torque is the
  sum of the shaft torques of every wheel on the train and whose speed is the common
  shaft speed. Every summary figure (torque, speed, power) is per motor, the most
  loaded motor's; per-wheel figures carry ``wheel`` in their names.
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
from dataclasses import field

import numpy as np

from ridesim.arrays import unique_sorted
from ridesim.assess.friction import G_STANDARD_M_S2, ContactLoads, contact_loads, cycle_nodes
from ridesim.errors import InputError
from ridesim.model.vehicle import axle_offsets_m, drive_motors, motor_name
from ridesim.model.wheel import MassProperties
from ridesim.records import record
from ridesim.roots import find_root
from ridesim.scenario.load import DriveSpec, SurfaceSpec, VehicleSpec
from ridesim.solve.pair import RollingPair

__all__ = ["AnalyticResult", "analyze_cycle", "TorqueModel", "shaft_speed_cycle", "duty_profile",
           "DutyRun", "duty_run", "phase_figures"]

TWO_PI = 2.0 * math.pi


@record
class AnalyticResult:
    """Per-wheel loads, torque and power over one revolution at one speed.

    Arrays have shape ``(axles, n)`` (row ``i`` is axle ``i``, rear to front) over the
    vehicle reference positions ``x_m``; ``motor_*`` arrays have shape ``(motors, n)``.
    Summaries are per motor (the most loaded motor's figure), per-wheel ones say ``wheel``.

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
        Largest ``|T|``, time-weighted RMS and mean torque [N m] over a revolution, per
        motor (the most loaded motor).
    shaft_speed_max_rad_s, shaft_speed_min_rad_s : float
        Extreme shaft speeds [rad/s], ``v / r_min`` and ``v / r_max`` (exact).
    power_peak_W, power_mean_W : float
        Largest ``|P|`` and time-mean power [W] per motor (the most loaded motor).
    chain_torque_peak_Nm, chain_torque_rms_Nm : float or None
        Coupled axles: peak and RMS [N m] of the train's one motor (equal to the per-motor
        figures).
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
        Constant torque [N m] per motor that holds the mean speed.
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
    motors: tuple = ()
    motor_torque_Nm: np.ndarray | None = None
    motor_speed_rad_s: np.ndarray | None = None
    motor_power_W: np.ndarray | None = None
    wheel_torque_peak_Nm: float = float("nan")
    wheel_torque_rms_Nm: float = float("nan")
    extras: dict = field(default_factory=dict)

    def to_dict(self) -> dict:
        """Summary values (per motor), JSON-ready; arrays left out.

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
            "wheel_torque_peak_Nm": f(self.wheel_torque_peak_Nm),
            "wheel_torque_rms_Nm": f(self.wheel_torque_rms_Nm),
            "motors": self.motor_list(),
        }

    def motor_list(self) -> list[dict]:
        """Each motor's figures over the revolution.

        Returns
        -------
        list of dict
            ``name``, ``axles``, ``peak_Nm``, ``rms_Nm``, ``mean_Nm`` [N m],
            ``max_shaft_speed_rad_s`` [rad/s], ``peak_power_W`` and ``mean_power_W`` [W].
        """
        if self.motor_torque_Nm is None or self.motor_speed_rad_s is None or self.motor_power_W is None:
            return []
        w = np.asarray(self.weight_m, dtype=float)
        ws = float(w.sum())
        out = []
        for k, axles in enumerate(self.motors):
            tq, om, pw = self.motor_torque_Nm[k], self.motor_speed_rad_s[k], self.motor_power_W[k]
            out.append({
                "name": motor_name(axles), "axles": [int(a) for a in axles],
                "peak_Nm": float(np.max(np.abs(tq))),
                "rms_Nm": float(np.sqrt((tq**2 @ w) / ws)),
                "mean_Nm": float((tq @ w) / ws),
                "max_shaft_speed_rad_s": float(np.max(om)),
                "peak_power_W": float(np.max(np.abs(pw))),
                "mean_power_W": float((pw @ w) / ws),
            })
        return out


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
    xs = unique_sorted(np.concatenate([x, [0.0, L]]))
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
    v = _cycle_speed(L, speed_m_s, drive)
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

    def loads_at(v_: float, a_: float):
        return _vehicle_loads(pair, x, offsets, driven, v=v_, a=a_, mp=wheel_mass, body_mass=body,
                              crr=crr, g=g)

    loads = loads_at(v, a)

    def stack(name):
        return np.vstack([getattr(c, name) for c in loads])

    wd = stack("shaft_speed_rad_s")
    T = stack("torque_Nm")
    mu = stack("mu_required")
    P = T * wd
    # One motor per shaft: its torque is the sum over the axles it turns, its speed theirs.
    motors = drive_motors(n_ax, vehicle.coupled, driven)
    mf = _motor_figures(T, wd, P, w, motors, driven, coupled=bool(vehicle.coupled))
    # Friction peak over all wheels.
    mu_f = np.where(np.isfinite(mu), mu, np.inf)
    ia, ix = np.unravel_index(int(np.argmax(mu_f)), mu_f.shape)
    lift = _lift_off_speed(loads_at(0.0, 0.0), loads_at(1.0, 0.0))

    rmin, rmax, _ = pair.wheel.extremes()
    steady = loads if a == 0.0 else loads_at(v, 0.0)
    T_const, ripple_T = _constant_torque_ripple(pair, x, w, offsets, driven, wheel_mass, body, crr,
                                                g, max(v, 1e-9), steady)
    with np.errstate(invalid="ignore", divide="ignore"):
        t = x / v if v > 0 else np.full(x.shape, np.nan)
    return AnalyticResult(
        speed_m_s=v, accel_m_s2=a, x_m=x, t_s=t, weight_m=w, offsets_m=offsets, driven=driven,
        wheel_x_m=np.vstack([x + o for o in offsets]),
        shaft_speed_rad_s=wd, shaft_accel_rad_s2=stack("shaft_accel_rad_s2"),
        normal_load_N=stack("normal_N"), tangential_load_N=stack("tangential_N"),
        torque_Nm=T, power_W=P, mu_required=mu,
        shaft_speed_max_rad_s=float(v / rmin), shaft_speed_min_rad_s=float(v / rmax),
        mu_peak=float(mu_f[ia, ix]), mu_peak_x_m=float(np.mod(x[ix] + offsets[ia], L)),
        mu_peak_axle=int(ia), lift_off_speed_m_s=lift,
        shaft_speed_drive_ripple=float((rmax - rmin) / (L / TWO_PI)),
        shaft_speed_drive_surge=float(rmax / rmin),
        constant_torque_Nm=float(T_const) * (len(motors[0]) if motors else 1),
        constant_torque_ripple=ripple_T, motors=motors, **mf,
    )


def _cycle_speed(L: float, speed_m_s: float | None, drive: DriveSpec | None) -> float:
    """The speed [m/s] a cycle is analysed at: given, or the drive's (a shaft-speed drive's mean)."""
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
    return v


def _motor_figures(T: np.ndarray, wd: np.ndarray, P: np.ndarray, w: np.ndarray, motors,
                   driven, *, coupled: bool) -> dict:
    """Per-motor torque, speed and power along the cycle, and their peak, r.m.s. and mean.

    A motor's torque and power are the sums over the axles it turns; its speed is theirs. The
    headline figures are the most loaded motor's (largest r.m.s.).
    """
    wsum = float(w.sum())
    d = list(driven)
    Td = T[d]
    n = T.shape[1]
    MT = np.vstack([T[list(ax)].sum(axis=0) for ax in motors]) if motors else np.zeros((0, n))
    MW = np.vstack([wd[ax[0]] for ax in motors]) if motors else np.zeros((0, n))
    MP = np.vstack([P[list(ax)].sum(axis=0) for ax in motors]) if motors else np.zeros((0, n))
    rms = np.sqrt((MT**2 @ w) / wsum)
    mean = (MT @ w) / wsum
    pmean = (MP @ w) / wsum
    k_rms = int(np.argmax(rms)) if motors else 0
    wheel_rms = np.sqrt((Td**2 @ w) / wsum)
    chain = coupled and bool(motors)
    return {
        "torque_peak_Nm": float(np.max(np.abs(MT))) if motors else 0.0,
        "torque_rms_Nm": float(rms[k_rms]) if motors else 0.0,
        "torque_mean_Nm": float(mean[k_rms]) if motors else 0.0,
        "power_peak_W": float(np.max(np.abs(MP))) if motors else 0.0,
        "power_mean_W": float(np.max(pmean)) if motors else 0.0,
        "chain_torque_peak_Nm": float(np.max(np.abs(MT))) if chain else None,
        "chain_torque_rms_Nm": float(rms[k_rms]) if chain else None,
        "motor_torque_Nm": MT, "motor_speed_rad_s": MW, "motor_power_W": MP,
        "wheel_torque_peak_Nm": float(np.max(np.abs(Td))) if d else 0.0,
        "wheel_torque_rms_Nm": float(np.max(wheel_rms)) if d else 0.0,
    }


def _lift_off_speed(at_rest, at_unit_speed) -> float | None:
    """Speed [m/s] at which a normal load first reaches zero; None when none ever does.

    At steady speed the normal load is linear in v^2 (``N = N0 + v^2 N2``), so the loads at
    rest and at 1 m/s give it exactly.
    """
    N0 = np.vstack([c.normal_N for c in at_rest])
    N2 = np.vstack([c.normal_N for c in at_unit_speed]) - N0
    scale = max(float(np.max(np.abs(N0))), 1e-300)
    if np.any(N0 <= 0):
        return 0.0
    falling = N2 < -1e-12 * scale
    return float(np.sqrt(np.min(N0[falling] / -N2[falling]))) if np.any(falling) else None


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
    """Per-motor torque ``T0(x) + v² T2(x) + a T1(x)`` from the analytic cycle.

    Each driven wheel's shaft torque follows the fit at its own place on the track; a
    motor's torque is the sum over the wheels it turns (one for an uncoupled axle, all of
    them on a coupled train).

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
        self.motors = self.cycle.motors
        self._tables = []
        for i in self.cycle.driven:
            xw = np.mod(self.cycle.wheel_x_m[i], L)
            order = np.argsort(xw, kind="stable")
            xs, keep = np.unique(xw[order], return_index=True)
            self._tables.append((i, xs, order[keep]))

    def along(self, x_m, v_m_s, a_m_s2, *, grade_rad: float = 0.0):
        """Torque [N m] and shaft speed [rad/s] of each motor along a motion.

        Parameters
        ----------
        x_m, v_m_s, a_m_s2 : array_like
            Chassis-origin position [m], speed [m/s] and acceleration [m/s^2] over time.
        grade_rad : float
            Grade [rad] (adds ``M g sin(grade) r`` shared by the driven wheels).

        Returns
        -------
        torque_Nm, shaft_speed_rad_s : ndarray, shape (motors, n)
            Row ``k`` is motor ``k`` of :attr:`motors`.
        """
        tq, om = self.along_wheels(x_m, v_m_s, a_m_s2, grade_rad=grade_rad)
        row = {i: k for k, (i, _, _) in enumerate(self._tables)}
        torque = np.vstack([sum(tq[row[i]] for i in ax) for ax in self.motors])
        omega = np.vstack([om[row[ax[0]]] for ax in self.motors])
        return torque, omega

    def along_wheels(self, x_m, v_m_s, a_m_s2, *, grade_rad: float = 0.0):
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
        ``peak_Nm``, ``rms_Nm`` (per motor, the most loaded one), ``speed_min_m_s``,
        ``speed_max_m_s``, ``accel_peak_m_s2``.
    """
    off0 = float(axle_offsets_m(sc.vehicle.axles, sc.vehicle.wheelbase_m)[0])
    r0 = pair.contact_radius(np.array([off0]))[0]
    model = TorqueModel(pair, sc, mp, float(omega_rad_s * r0), 1.0)
    # Evaluate at the analytic cycle's own nodes (one-sided values at cusps included), where
    # the torque profiles are exact rather than interpolated across a cusp's jump.
    c = model.cycle
    wx = np.asarray(c.weight_m, dtype=float)
    xr = np.asarray(c.wheel_x_m[0], dtype=float)
    r = pair.contact_radius(xr)
    drdx = -pair.track.slope(xr)
    # One-sided slopes at the duplicated cusp nodes: take them from the neighbouring node.
    v = omega_rad_s * r
    a = omega_rad_s**2 * r * drdx
    wheel = {i: model.T0[i] + v * v * model.T2[i] + a * model.T1[i] for i in c.driven}
    torque = np.vstack([sum(wheel[i] for i in ax) for ax in c.motors])
    w = wx / v  # time spent at each node [s]
    rms = np.sqrt((torque**2 * w).sum(axis=1) / w.sum())
    return {"peak_Nm": float(np.max(np.abs(torque))), "rms_Nm": float(np.max(rms)),
            "speed_min_m_s": float(v.min()), "speed_max_m_s": float(v.max()),
            "accel_peak_m_s2": float(np.max(np.abs(a)))}


def duty_profile(top_speed_m_s: float, accel_m_s2: float, brake_m_s2: float, cruise_s: float,
                 rest_s: float, dt_s: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Trapezoidal speed profile from rest to rest.

    Parameters
    ----------
    top_speed_m_s : float
        Cruise speed [m/s].
    accel_m_s2, brake_m_s2 : float
        Acceleration and braking deceleration [m/s^2], both > 0.
    cruise_s, rest_s : float
        Time at speed and at rest at the end [s].
    dt_s : float
        Sample spacing [s].

    Returns
    -------
    t_s, v_m_s, a_m_s2 : ndarray
        Sample times (midpoints of equal steps), speed and acceleration.
    """
    t_a = top_speed_m_s / accel_m_s2
    t_b = top_speed_m_s / brake_m_s2
    total = t_a + cruise_s + t_b + rest_s
    n = max(int(math.ceil(total / dt_s)), 8)
    t = (np.arange(n) + 0.5) * (total / n)
    v = np.where(t < t_a, accel_m_s2 * t,
                 np.where(t < t_a + cruise_s, top_speed_m_s,
                          np.maximum(top_speed_m_s - brake_m_s2 * (t - t_a - cruise_s), 0.0)))
    a = np.where(t < t_a, accel_m_s2,
                 np.where(t < t_a + cruise_s, 0.0,
                          np.where(t < t_a + cruise_s + t_b, -brake_m_s2, 0.0)))
    return t, v, a


def phase_figures(t_s, torque_Nm, shaft_speed_rad_s, window_s) -> dict:
    """Per-motor torque, speed and power figures over one time window.

    Parameters
    ----------
    t_s : array_like, shape (n,)
        Sample times [s] (equal steps).
    torque_Nm, shaft_speed_rad_s : array_like, shape (motors, n)
        Torque [N m] and shaft speed [rad/s] of each motor.
    window_s : (float, float)
        Start and end [s] of the window (samples with ``t0 <= t <= t1``).

    Returns
    -------
    dict
        ``window_s``; ``peak_Nm`` (largest ``|T|``), ``rms_Nm`` and ``mean_Nm`` [N m],
        ``max_shaft_speed_rad_s`` [rad/s], ``peak_power_W`` [W] (largest delivered ``T omega``):
        each the most loaded motor's; ``motors``, the same figures for each motor. Figures
        are None when no sample falls in the window.
    """
    t = np.asarray(t_s, dtype=float)
    tq = np.atleast_2d(np.asarray(torque_Nm, dtype=float))
    om = np.atleast_2d(np.asarray(shaft_speed_rad_s, dtype=float))
    t0, t1 = float(window_s[0]), float(window_s[1])
    m = (t >= t0 - 1e-12) & (t <= t1 + 1e-12)
    out: dict = {"window_s": [t0, t1]}
    keys = ("peak_Nm", "rms_Nm", "mean_Nm", "max_shaft_speed_rad_s", "peak_power_W")
    if not np.any(m) or tq.shape[0] == 0:
        out.update({k: None for k in keys})
        out["motors"] = []
        return out
    T, W = tq[:, m], om[:, m]
    per: list[dict[str, float]] = []
    for k in range(T.shape[0]):
        per.append({"peak_Nm": float(np.max(np.abs(T[k]))),
                    "rms_Nm": float(np.sqrt(np.mean(T[k] ** 2))),
                    "mean_Nm": float(np.mean(T[k])),
                    "max_shaft_speed_rad_s": float(np.max(np.abs(W[k]))),
                    "peak_power_W": float(np.max(T[k] * W[k]))})
    worst = max(range(len(per)), key=lambda k: per[k]["rms_Nm"])
    for key in keys:
        out[key] = max(p[key] for p in per) if key != "mean_Nm" else per[worst][key]
    out["motors"] = per
    return out


@record
class DutyRun:
    """Per-motor torque and speed along a duty cycle from rest to rest.

    Attributes
    ----------
    t_s, speed_m_s, accel_m_s2, x_m : ndarray, shape (n,)
        Time [s], vehicle speed [m/s], acceleration [m/s^2] and chassis position [m].
    torque_Nm, shaft_speed_rad_s : ndarray, shape (motors, n)
        Torque [N m] and shaft speed [rad/s] of each motor.
    motors : tuple of tuple of int
        The axles each motor turns.
    windows_s : dict
        ``startup``, ``cruise``, ``braking`` (and ``rest`` when there is one) -> (start, end) [s].
    """

    t_s: np.ndarray
    speed_m_s: np.ndarray
    accel_m_s2: np.ndarray
    x_m: np.ndarray
    torque_Nm: np.ndarray
    shaft_speed_rad_s: np.ndarray
    motors: tuple
    windows_s: dict


MAX_DUTY_SAMPLES = 2_000_000
"""Most time samples (times motors) a duty cycle is followed with (about 1 GB of work arrays)."""


def duty_run(model: TorqueModel, *, top_speed_m_s: float, accel_m_s2: float, brake_m_s2: float,
             cruise_s: float, rest_s: float = 0.0, dt_s: float | None = None,
             grade_rad: float = 0.0) -> DutyRun:
    """Follow the duty cycle in time from the scenario's start pose (chassis origin at x = 0).

    Parameters
    ----------
    model : TorqueModel
        The per-motor torque model.
    top_speed_m_s : float
        Cruise speed [m/s] (> 0).
    accel_m_s2, brake_m_s2 : float
        Start-up acceleration and braking deceleration [m/s^2] (> 0).
    cruise_s, rest_s : float
        Time at speed and at rest [s].
    dt_s : float, optional
        Sample spacing [s]; default resolves each track period with 64 samples (at most 10 ms).
    grade_rad : float
        Grade [rad].

    Returns
    -------
    DutyRun
    """
    v_top = float(top_speed_m_s)
    if dt_s is None:
        dt_s = min(0.01, model.pair.track.period / (64.0 * v_top))
    total = v_top / accel_m_s2 + cruise_s + v_top / brake_m_s2 + rest_s
    n_est = total / dt_s * max(len(model.motors), 1)
    if not n_est <= MAX_DUTY_SAMPLES:
        raise InputError(
            f"size-motor: the duty cycle of {total:.4g} s (ramps at {accel_m_s2:g} and"
            f" {brake_m_s2:g} m/s^2, duty.cruise_s = {cruise_s:g} s, duty.rest_s = {rest_s:g} s)"
            f" sampled every {dt_s:.3g} s for {len(model.motors)} motor(s) is about {n_est:.3g}"
            f" samples, beyond the budget of {MAX_DUTY_SAMPLES}; shorten duty.cruise_s or raise"
            " the accelerations")
    t, v, a = duty_profile(v_top, accel_m_s2, brake_m_s2, cruise_s, rest_s, dt_s)
    h = t[1] - t[0]
    x = np.cumsum(v) * h - 0.5 * v * h  # position of the chassis origin [m]
    torque, omega = model.along(x, v, a, grade_rad=grade_rad)
    t_a, t_b = v_top / accel_m_s2, v_top / brake_m_s2
    win = {"startup": (0.0, t_a), "cruise": (t_a, t_a + cruise_s),
           "braking": (t_a + cruise_s, t_a + cruise_s + t_b)}
    if rest_s > 0:
        win["rest"] = (t_a + cruise_s + t_b, t_a + cruise_s + t_b + rest_s)
    return DutyRun(t_s=t, speed_m_s=v, accel_m_s2=a, x_m=x, torque_Nm=torque,
                   shaft_speed_rad_s=omega, motors=tuple(model.motors), windows_s=win)

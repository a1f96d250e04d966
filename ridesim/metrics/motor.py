"""Motor sizing over a duty cycle: per-motor torque, speed and power, and gear ratios that fit.

Motors sit on shafts: each uncoupled driven axle has its own motor, a coupled
train (``vehicle.coupled = true``) has one motor that turns every axle; every
figure here is per motor (the most loaded motor's, with each motor listed).

The duty cycle starts from rest, accelerates at ``drive.accel_m_s2`` to
``drive.speed_m_s``, cruises for ``duty.cruise_s``, brakes at
``duty.brake_m_s2`` and rests for ``duty.rest_s``; the figures are given for
the whole cycle and for each phase (start-up, cruise, braking) with its time
window. At each instant the shaft
torque of each driven wheel comes from the analytic model of
:mod:`ridesim.assess.analytic` at the wheel's own position on the track, so the
torque ripple of a non-circular wheel (inertia ``I·α`` with ``α = d(v/r)/dt``,
the gravity torque of an off-axle wheel mass, rolling resistance ``C_rr·N·r``
and the share of the vehicle's acceleration force) is in the figures, not only
its mean; a motor's torque is the sum over the wheels it turns. That model's torque
at position ``x`` is linear in the acceleration
``a`` and in ``v²``::

    T(x; v, a) = T0(x) + v² T2(x) + a T1(x)

so three analytic cycles give the three profiles; a fourth checks the
linearity. A grade α adds ``M g sin α · r(x) / n_driven`` per driven wheel
(tractive-force model: Ehsani et al., *Modern Electric, Hybrid Electric, and
Fuel Cell Vehicles*, 3rd ed., 2018, ch. 2 [memory]; Gillespie, *Fundamentals of
Vehicle Dynamics*, 1992 [memory]), with the lever arm the instantaneous contact
radius ``r(x)``.

Ratings (common practice in motor application notes): the r.m.s. torque over
the cycle ``√(Σ T_i² t_i / Σ t_i)`` must stay within the continuous rating and
the peak within the intermittent rating, each with the safety factor; through
a reduction ``i`` with efficiency ``η`` the motor sees ``T/(i η)`` plus its own
rotor inertia ``J i α_wheel``, and turns at ``i ω``.
"""

from __future__ import annotations

import math
from dataclasses import field

import numpy as np

from ridesim.assess.analytic import duty_profile, phase_figures
from ridesim.model.vehicle import motor_name
from ridesim.records import record
from ridesim.safety import caution_lines, with_safety

__all__ = ["MotorSizing", "GearCheck", "duty_profile", "motor_sizing", "CAUTIONS", "MOTOR_CAUTIONS"]

G = 9.80665
#: Assumed start acceleration [m/s^2] when a scenario gives none (flagged in the cautions).
DEFAULT_ACCEL_M_S2 = 0.25
RPM_PER_RAD_S = 60.0 / (2.0 * math.pi)
#: Phase names in cycle order, and how the text names them.
PHASE_LABELS = {"startup": "start-up", "cruise": "cruise", "braking": "braking"}

MOTOR_CAUTIONS = (
    "The sizing follows the duty cycle as given: starting under full load, emergency stops,"
    " misalignment, wear and worse friction than assumed need more torque; check the motor's"
    " thermal rating for the real duty and add a speed limit, end stops and an emergency stop.",
)
"""Cautions on the sizing's own model, after :data:`ridesim.safety.SAFETY_CAUTIONS`."""

CAUTIONS = tuple(with_safety(MOTOR_CAUTIONS))
"""Every caution a motor sizing carries."""


@record
class GearCheck:
    """One candidate reduction checked against the motor's ratings.

    Attributes
    ----------
    ratio : float
        Reduction ``i`` (motor turns per wheel turn).
    motor_rms_torque_Nm, motor_peak_torque_Nm : float
        Motor-side r.m.s. and peak torque [N m] over the cycle.
    motor_max_speed_rad_s : float
        Top motor speed [rad/s].
    fits : bool
        True when every given rating holds with the safety factor.
    limits : tuple of str
        Which ratings are exceeded (empty when it fits).
    """

    ratio: float
    motor_rms_torque_Nm: float
    motor_peak_torque_Nm: float
    motor_max_speed_rad_s: float
    fits: bool
    limits: tuple[str, ...]


@record
class MotorSizing:
    """Per-motor duty over the cycle and the gear ratios that fit.

    Attributes
    ----------
    t_s : ndarray
        Time [s].
    speed_m_s : ndarray
        Vehicle speed [m/s].
    torque_Nm : ndarray, shape (motors, n)
        Torque [N m] of each motor (the sum over the wheels it turns).
    shaft_speed_rad_s : ndarray, shape (motors, n)
        Shaft speed [rad/s] of each motor.
    peak_torque_Nm, rms_torque_Nm : float
        Largest ``|T|`` and the cycle r.m.s. [N m], the most loaded motor.
    max_shaft_speed_rpm : float
        Top shaft speed [rpm] (``v / r_min``); ``max_shaft_speed_rad_s`` in SI.
    peak_power_W, mean_power_W : float
        Largest power [W] and the cycle mean of the delivered power (braking power
        counted as zero: a drive that cannot recover energy) [W], the most loaded motor.
    motors : tuple of tuple of int
        The axles each motor turns (row order of ``torque_Nm``).
    by_phase : dict
        ``startup``, ``cruise``, ``braking`` -> figures over that phase's window (see
        :func:`ridesim.assess.analytic.phase_figures`).
    gears : tuple of GearCheck
        The candidate ratios, in the order given.
    best_ratio : float or None
        The smallest candidate ratio that fits (least motor speed), or None.
    cautions : tuple of str
        Safety cautions and the assumptions behind the figures.
    """

    t_s: np.ndarray
    speed_m_s: np.ndarray
    torque_Nm: np.ndarray
    shaft_speed_rad_s: np.ndarray
    peak_torque_Nm: float
    rms_torque_Nm: float
    max_shaft_speed_rpm: float
    peak_power_W: float
    mean_power_W: float
    accel_m_s2: float
    brake_m_s2: float
    cycle_s: float
    motors: tuple = ()
    by_phase: dict = field(default_factory=dict)
    gears: tuple[GearCheck, ...] = ()
    best_ratio: float | None = None
    cautions: tuple[str, ...] = field(default_factory=tuple)

    def _repr_html_(self) -> str:
        """The figures as a table, for Jupyter."""
        from ridesim.model.display import html_table

        return html_table(self.to_dict(), "motor sizing, per motor")

    def to_dict(self) -> dict:
        """JSON contract of ``ridesim size-motor`` (per motor, SI).

        Returns
        -------
        dict
            ``per`` (``"motor"``), ``peak_torque_Nm``, ``rms_torque_Nm``,
            ``max_shaft_speed_rad_s`` (and ``max_shaft_speed_rpm``), ``peak_power_W``,
            ``mean_power_W`` (the most loaded motor over the cycle); ``motors`` (each motor's
            ``name``, ``axles`` and figures); ``by_phase``; ``duty``; ``gears``;
            ``best_ratio``; ``cautions``.
        """
        motors = []
        for k, axles in enumerate(self.motors):
            tq, om = self.torque_Nm[k], self.shaft_speed_rad_s[k]
            pw = tq * om
            motors.append({
                "name": motor_name(axles), "axles": [int(a) for a in axles],
                "peak_torque_Nm": float(np.max(np.abs(tq))),
                "rms_torque_Nm": float(np.sqrt(np.mean(tq**2))),
                "max_shaft_speed_rad_s": float(np.max(om)),
                "peak_power_W": float(np.max(pw)),
                "mean_power_W": float(np.mean(np.maximum(pw, 0.0))),
            })
        return {
            "per": "motor",
            "peak_torque_Nm": self.peak_torque_Nm,
            "rms_torque_Nm": self.rms_torque_Nm,
            "max_shaft_speed_rad_s": self.max_shaft_speed_rpm / RPM_PER_RAD_S,
            "max_shaft_speed_rpm": self.max_shaft_speed_rpm,
            "peak_power_W": self.peak_power_W,
            "mean_power_W": self.mean_power_W,
            "motors": motors,
            "by_phase": {k: {kk: vv for kk, vv in v.items() if kk != "motors"}
                         for k, v in self.by_phase.items()},
            "duty": {"accel_m_s2": self.accel_m_s2, "brake_m_s2": self.brake_m_s2,
                     "cycle_s": self.cycle_s, "top_speed_m_s": float(self.speed_m_s.max())},
            "gears": [
                {"ratio": g.ratio, "motor_rms_torque_Nm": g.motor_rms_torque_Nm,
                 "motor_peak_torque_Nm": g.motor_peak_torque_Nm,
                 "motor_max_speed_rad_s": g.motor_max_speed_rad_s,
                 "motor_max_speed_rpm": g.motor_max_speed_rad_s * RPM_PER_RAD_S,
                 "fits": g.fits, "limits": list(g.limits)}
                for g in self.gears
            ],
            "best_ratio": self.best_ratio,
            "cautions": list(self.cautions),
        }

    def to_text(self) -> str:
        """Readable summary for the command line."""
        names = "; ".join(motor_name(ax) for ax in self.motors) or "none"
        n = len(self.motors)
        lines = [
            f"motor sizing per motor ({n} motor{'s' if n != 1 else ''}: {names}"
            + ("; figures are the most loaded motor's" if n > 1 else "") + ")",
            f"duty: {self.accel_m_s2:g} m/s^2 up, cruise, {self.brake_m_s2:g} m/s^2 down;"
            f" {self.cycle_s:.1f} s cycle",
            f"  peak torque        {self.peak_torque_Nm:10.4g} N m   (whole cycle)",
            f"  r.m.s. torque      {self.rms_torque_Nm:10.4g} N m   (whole cycle: continuous rating)",
            f"  top shaft speed    {self.max_shaft_speed_rpm / RPM_PER_RAD_S:10.4g} rad/s"
            f" ({self.max_shaft_speed_rpm:.4g} rpm)",
            f"  peak power         {self.peak_power_W:10.4g} W",
            f"  mean power         {self.mean_power_W:10.4g} W",
            "  by phase (time window in the cycle):",
        ]
        for key, label in PHASE_LABELS.items():
            ph = self.by_phase.get(key)
            if ph is None or ph.get("peak_Nm") is None:
                continue
            t0, t1 = ph["window_s"]
            lines.append(f"    {label:<9} {f'{t0:.3g}-{t1:.3g} s':<12} peak {ph['peak_Nm']:.4g} N m,"
                         f" r.m.s. {ph['rms_Nm']:.4g} N m")
        for g in self.gears:
            verdict = "fits" if g.fits else "exceeds " + ", ".join(g.limits)
            lines.append(f"  ratio {g.ratio:g}: motor {g.motor_rms_torque_Nm:.4g} N m r.m.s.,"
                         f" {g.motor_peak_torque_Nm:.4g} N m peak,"
                         f" {g.motor_max_speed_rad_s:.4g} rad/s"
                         f" ({g.motor_max_speed_rad_s * RPM_PER_RAD_S:.0f} rpm): {verdict}")
        if self.gears:
            lines.append(f"  best ratio: {self.best_ratio if self.best_ratio else 'none fits'}")
        lines.extend(caution_lines(self.cautions))
        return "\n".join(lines)


def motor_sizing(pair, sc, mp, *, dt_s: float | None = None) -> MotorSizing:
    """Size the drive of a solved pair for its scenario's duty cycle (per motor).

    The scenario-level job is :func:`ridesim.jobs.size_motor.size_motor`, which solves the
    pair and computes the wheel's mass first.

    Parameters
    ----------
    pair : RollingPair
        The solved wheel and track.
    sc : Scenario
        Validated scenario with its wheelbase resolved: drive speed and acceleration,
        ``[duty]``, ``[motor]``.
    mp : MassProperties
        The wheel's mass properties.
    dt_s : float, optional
        Time step [s]; default resolves each track period with at least 64 samples.

    Returns
    -------
    MotorSizing
    """
    from ridesim.assess.analytic import TorqueModel, duty_run

    cautions = list(CAUTIONS)
    v_top = float(sc.drive.speed_m_s)
    if sc.drive.mode == "shaft_speed":
        v_top = float(sc.drive.shaft_speed_rad_s) * pair.revolution_length / (2 * math.pi)
    accel = float(sc.drive.accel_m_s2)
    if accel <= 0:
        accel = DEFAULT_ACCEL_M_S2
        cautions.append(f"drive.accel_m_s2 is not given: the duty cycle assumes a gentle start"
                        f" at {accel:g} m/s^2; give the real figure, starting torque grows with it")
    brake = float(sc.duty.brake_m_s2) if sc.duty.brake_m_s2 is not None else accel
    model = TorqueModel(pair, sc, mp, v_top, accel)
    c1 = model.cycle
    grade = float(sc.duty.grade_rad)
    run = duty_run(model, top_speed_m_s=v_top, accel_m_s2=accel, brake_m_s2=brake,
                   cruise_s=sc.duty.cruise_s, rest_s=sc.duty.rest_s, dt_s=dt_s, grade_rad=grade)
    t, v, torque, omega = run.t_s, run.speed_m_s, run.torque_Nm, run.shaft_speed_rad_s
    by_phase = {k: phase_figures(t, torque, omega, run.windows_s[k]) for k in PHASE_LABELS}
    # Cruise peaks of the exact cycle (one-sided values at cusps included), on a level track.
    cruise_peak = 0.0
    if sc.duty.cruise_s > 0 and not grade:
        cruise_peak = float(np.max(np.abs(c1.motor_torque_Nm)))
        cp = by_phase["cruise"]
        if cp["peak_Nm"] is not None and cruise_peak > cp["peak_Nm"]:
            cp["peak_Nm"] = cruise_peak
    peak = max(float(np.max(np.abs(torque))), cruise_peak)
    rms = float(np.max(np.sqrt(np.mean(torque**2, axis=1))))
    power = torque * omega
    peak_power = float(np.max(power))
    mean_power = float(np.max(np.mean(np.maximum(power, 0.0), axis=1)))
    rmin = float(pair.depth_range()[0])
    max_rpm = v_top / rmin * RPM_PER_RAD_S
    gears, best = _check_gears(sc, torque, omega, t)
    if grade:
        cautions.append("grade is modelled as a slope force on a level track profile (normal"
                        " loads are not reduced by cos(grade)); fine for small grades only")
    return MotorSizing(t_s=t, speed_m_s=v, torque_Nm=torque, shaft_speed_rad_s=omega,
                       peak_torque_Nm=peak, rms_torque_Nm=rms, max_shaft_speed_rpm=max_rpm,
                       peak_power_W=peak_power, mean_power_W=mean_power, accel_m_s2=accel,
                       brake_m_s2=brake, cycle_s=float(t[-1] + 0.5 * (t[1] - t[0])),
                       motors=tuple(run.motors), by_phase=by_phase,
                       gears=gears, best_ratio=best, cautions=tuple(cautions))


def _check_gears(sc, torque: np.ndarray, omega: np.ndarray, t: np.ndarray):
    m = sc.motor
    if not m.gear_ratios:
        return (), None
    sf, eta = m.safety_factor, m.efficiency
    peak_rating = m.peak_torque_Nm if m.peak_torque_Nm is not None else (
        2.0 * m.rated_torque_Nm if m.rated_torque_Nm is not None else None)
    alpha = np.gradient(omega, t, axis=1)
    out = []
    for i in m.gear_ratios:
        tm = torque / (i * eta) + m.inertia_kg_m2 * i * alpha
        rms = float(np.max(np.sqrt(np.mean(tm**2, axis=1))))
        pk = float(np.max(np.abs(tm)))
        spd = float(np.max(omega)) * i
        limits = []
        if m.rated_torque_Nm is not None and rms * sf > m.rated_torque_Nm:
            limits.append("continuous torque")
        if peak_rating is not None and pk * sf > peak_rating:
            limits.append("peak torque")
        if m.rated_speed_rad_s is not None and spd * sf > m.rated_speed_rad_s:
            limits.append("speed")
        out.append(GearCheck(ratio=i, motor_rms_torque_Nm=rms, motor_peak_torque_Nm=pk,
                             motor_max_speed_rad_s=spd, fits=not limits, limits=tuple(limits)))
    fitting = [g.ratio for g in out if g.fits]
    return tuple(out), (min(fitting) if fitting else None)

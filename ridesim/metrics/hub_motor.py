"""Motor sizing for a hub pair at a steady speed: the wheel's shaft, the arm, or the driver gear.

A hub pair runs at a steady speed rather than through a start-stop duty cycle: a motor turns
the wheel's shaft at a constant rate (on the arm of a carousel, or the driver gear of a gear
pair on fixed centres), or a motor at the pivot turns a carousel's arm at a constant rate with
the wheel free on its axle. Over the cycle (one driver turn; with gravity in the plane every
arm angle, :func:`ridesim.assess.hub.hub_cycle`) the motor's torque is

* the quasi-static torque of :func:`ridesim.assess.hub.hub_loads` (gravity on the wheel,
  the brake ``path.load_torque_Nm`` on the driven member, preload), plus
* the inertia torque from the kinetic energy ``K`` of the moving parts: at the constant motor
  speed ``Ω`` it is ``K = Ω² k(θ_m)`` and the power balance ``T Ω = dK/dt = Ω³ dk/dθ_m``
  gives ``T = Ω² dk/dθ_m`` (work-energy for one degree of freedom; e.g. Meriam & Kraige,
  *Engineering Mechanics: Dynamics* [memory]):

  - gears, driver at ``ω``: the driven gear (inertia ``I_h``) turns at ``ψ' ω``, so
    ``T = I_h ψ' ψ'' ω²``;
  - carousel, wheel's shaft at ``ω`` relative to the arm: the wheel's mass ``m`` rides at
    ``E`` on the arm (``J = m E²`` about the pivot; the arm's own inertia left out) turning at
    ``α' ω`` and the wheel spins at ``s' ω`` (``s`` its absolute turn, inertia ``I_w``), so
    ``T = ω² (J α' α'' + I_w s' s'')``;
  - carousel, arm at ``Ω``: ``θ' = Ω/|α'|`` and the wheel spins at ``q Ω`` with
    ``q = s'/|α'|``, so ``T = I_w q (dq/dθ) Ω² / |α'|``.

Here ``ψ' = dψ/dθ = r/ρ`` (:meth:`ridesim.solve.hub.HubPair.speed_ratio`), ``α = ∓ψ`` plus a
constant and ``s = θ ± ψ`` (outside: ``-``/``+``; inside: ``+``/``-``). With no brake and no
inertia the ideal pair's power balance gives the gear law ``T_driver = T_load ψ'`` (Litvin et
al., *Noncircular Gears*, 2009).

Figures per motor, as :class:`ridesim.metrics.motor.MotorSizing` names them: peak and r.m.s.
torque (time-weighted), top shaft speed, peak and mean delivered power; the ``[motor]`` gear
ratios are checked the same way.
"""

from __future__ import annotations

import math
from dataclasses import field

import numpy as np

from ridesim.assess.hub import hub_cycle, hub_cycle_turns, hub_loads
from ridesim.metrics.motor import MOTOR_CAUTIONS, RPM_PER_RAD_S, GearCheck
from ridesim.records import record
from ridesim.safety import caution_lines, with_safety

__all__ = ["HubDrive", "HubMotorSizing", "hub_drive", "hub_cautions", "gear_checks", "HUB_MOTOR_CAUTIONS",
           "DRIVE_NAMES"]

TWO_PI = 2.0 * math.pi

HUB_MOTOR_CAUTIONS = (
    *MOTOR_CAUTIONS,
    "A hub pair is sized at a steady speed: starting, stopping and a jammed pair need more"
    " torque; the torque is quasi-static plus the inertia of the driven member (the arm's own"
    " inertia and the wheel's off-axle centre of mass left out of the inertia term).",
)

#: How each drive is named in the output.
DRIVE_NAMES = {"gear": "driver gear shaft", "wheel": "wheel shaft (motor on the arm)",
               "arm": "arm (motor at the pivot, wheel free on its axle)"}


@record
class HubDrive:
    """One motor turning a hub pair at a steady speed, over the cycle.

    Attributes
    ----------
    key : str
        ``"gear"``, ``"wheel"`` or ``"arm"`` (:data:`DRIVE_NAMES`).
    t_s : ndarray
        Time [s] of each sample (even in the wheel's turn; for the arm, in the arm's).
    theta_rad : ndarray
        Wheel angle [rad] relative to the arm (the gear view's driver angle).
    torque_Nm : ndarray
        Motor torque [N m] in its direction of motion.
    static_torque_Nm : ndarray
        Its quasi-static part [N m].
    shaft_speed_rad_s : float
        The motor's constant speed [rad/s].
    cycle_s : float
        Time [s] of the cycle.
    peak_torque_Nm, rms_torque_Nm, mean_torque_Nm, peak_power_W, mean_power_W : float
        Largest ``|T|`` (one-sided values at the wheel's corners included), time r.m.s.,
        time mean, largest ``T Ω`` and the time mean of the delivered power (braking power
        counted as zero).
    """

    key: str
    t_s: np.ndarray
    theta_rad: np.ndarray
    torque_Nm: np.ndarray
    static_torque_Nm: np.ndarray
    shaft_speed_rad_s: float
    cycle_s: float
    peak_torque_Nm: float
    rms_torque_Nm: float
    mean_torque_Nm: float
    peak_power_W: float
    mean_power_W: float

    @property
    def name(self) -> str:
        """The motor's name."""
        return DRIVE_NAMES[self.key]

    def to_dict(self) -> dict:
        """Figures with units in the key names (arrays left out)."""
        return {"name": self.name, "drive": self.key,
                "peak_torque_Nm": self.peak_torque_Nm, "rms_torque_Nm": self.rms_torque_Nm,
                "mean_torque_Nm": self.mean_torque_Nm, "cycle_s": self.cycle_s,
                "max_shaft_speed_rad_s": self.shaft_speed_rad_s,
                "max_shaft_speed_rpm": self.shaft_speed_rad_s * RPM_PER_RAD_S,
                "peak_power_W": self.peak_power_W, "mean_power_W": self.mean_power_W}


def _inertia_torque(pair, th: np.ndarray, key: str, speed: float, *, wheel_inertia: float,
                    carried_inertia: float, driven_inertia: float, h: float = 1e-5) -> np.ndarray:
    """Inertia torque [N m] at the motor for a constant motor speed (module notes)."""
    sr = pair.speed_ratio(th)
    d_sr = (pair.speed_ratio(th + h) - pair.speed_ratio(th - h)) / (2 * h)
    if key == "gear":
        return driven_inertia * sr * d_sr * speed**2
    outside = pair.side == "outside"
    a1, a2 = (-sr, -d_sr) if outside else (sr, d_sr)  # arm rate and its derivative per wheel turn
    s1, s2 = (1.0 + sr, d_sr) if outside else (1.0 - sr, -d_sr)  # wheel's absolute spin
    if key == "wheel":
        return speed**2 * (carried_inertia * a1 * a2 + wheel_inertia * s1 * s2)
    aa = np.abs(a1)
    q = s1 / aa
    dq = (s2 * aa - s1 * np.sign(a1) * a2) / (aa * aa)
    return wheel_inertia * q * dq * speed**2 / aa


def hub_drive(pair, key: str, speed_rad_s: float, *, mass_kg: float = 0.0,
              com_m: tuple[float, float] = (0.0, 0.0), wheel_inertia_kg_m2: float = 0.0,
              driven_inertia_kg_m2: float = 0.0, gravity_m_s2: float = 0.0, preload_N: float = 0.0,
              load_torque_Nm: float = 0.0, n: int = 2048) -> HubDrive:
    """One motor's torque, speed and power over the cycle of a hub pair at a steady speed.

    Parameters
    ----------
    pair : HubPair
        A closed pair.
    key : str
        ``"gear"`` (the driver of a gear pair on fixed centres), ``"wheel"`` (a carousel's wheel
        shaft, motor on the arm) or ``"arm"`` (a carousel's arm, motor at the pivot).
    speed_rad_s : float
        The motor's constant speed [rad/s].
    mass_kg, com_m, gravity_m_s2, preload_N, load_torque_Nm
        As :func:`ridesim.assess.hub.hub_loads` (gravity only in a carousel).
    wheel_inertia_kg_m2 : float
        Wheel's inertia about its axle [kg m^2].
    driven_inertia_kg_m2 : float
        Gears: the driven gear's inertia about its centre [kg m^2] (carousel: unused; the
        wheel's mass carried at ``E`` stands for the arm).
    n : int
        Samples per wheel turn.

    Returns
    -------
    HubDrive
    """
    w = float(speed_rad_s)
    full = gravity_m_s2 > 0
    turns = hub_cycle_turns(pair, full)
    th = TWO_PI * turns * (np.arange(n * turns) + 0.5) / (n * turns)
    extra = hub_cycle(pair, 16, full=full)  # corners, one-sided
    kw: dict = {"mass_kg": mass_kg, "com_m": com_m, "gravity_m_s2": gravity_m_s2, "preload_N": preload_N,
          "load_torque_Nm": load_torque_Nm}
    drive = "arm" if key == "arm" else "wheel"
    E = float(pair.centre_distance)
    ik = {"wheel_inertia": float(wheel_inertia_kg_m2), "carried_inertia": float(mass_kg) * E * E,
          "driven_inertia": float(driven_inertia_kg_m2)}
    out = []
    for t in (th, extra):
        ld = hub_loads(pair, t, drive=drive, **kw)
        out.append((ld, ld.drive_torque_Nm + _inertia_torque(pair, t, key, w, **ik)))
    (ld, torque), (_, torque_c) = out
    # Time per sample: even in the wheel's turn, or |dα/dθ| dθ/Ω for the arm.
    dth = TWO_PI * turns / th.size
    dt = np.full(th.size, dth / w) if key != "arm" else ld.drive_rate * dth / w
    t_s = np.cumsum(dt) - 0.5 * dt
    T = float(np.sum(dt))
    power = torque * w
    peak = float(max(np.max(np.abs(torque)), np.max(np.abs(torque_c))))
    mean = float(np.sum(torque * dt) / T)
    if abs(mean) < 1e-9 * peak:  # gravity and inertia do no net work: rounding noise
        mean = 0.0
    return HubDrive(key=key, t_s=t_s, theta_rad=th, torque_Nm=torque, static_torque_Nm=ld.drive_torque_Nm,
                    shaft_speed_rad_s=w, cycle_s=T,
                    peak_torque_Nm=peak,
                    rms_torque_Nm=float(math.sqrt(np.sum(torque**2 * dt) / T)),
                    mean_torque_Nm=mean,
                    peak_power_W=float(max(np.max(power), np.max(torque_c * w))),
                    mean_power_W=float(np.sum(np.maximum(power, 0.0) * dt) / T))


@record
class HubMotorSizing:
    """Motor sizing of a hub scenario: one motor (gears) or the two ways to drive a carousel.

    Attributes
    ----------
    name : str
        Scenario name.
    view : str
        ``"gears"`` or ``"carousel"``.
    drives : tuple of HubDrive
        The motor of a gear pair; for a carousel the wheel's shaft first (the way ``simulate``
        drives it), then the arm: alternatives, not motors working together.
    gears : dict
        Drive key -> tuple of :class:`ridesim.metrics.motor.GearCheck` for ``[motor]``.
    best_ratio : dict
        Drive key -> the smallest fitting ratio, or None.
    cautions : tuple of str
        Safety cautions and the model's assumptions.
    """

    name: str
    view: str
    drives: tuple[HubDrive, ...]
    gears: dict = field(default_factory=dict)
    best_ratio: dict = field(default_factory=dict)
    cautions: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        """JSON contract, with the figures of the first drive at the top level like a line's."""
        first = self.drives[0]
        motors = []
        for d in self.drives:
            m = d.to_dict()
            m["gears"] = [{"ratio": g.ratio, "motor_rms_torque_Nm": g.motor_rms_torque_Nm,
                           "motor_peak_torque_Nm": g.motor_peak_torque_Nm,
                           "motor_max_speed_rad_s": g.motor_max_speed_rad_s,
                           "motor_max_speed_rpm": g.motor_max_speed_rad_s * RPM_PER_RAD_S,
                           "fits": g.fits, "limits": list(g.limits)}
                          for g in self.gears.get(d.key, ())]
            m["best_ratio"] = self.best_ratio.get(d.key)
            motors.append(m)
        return {"name": self.name, "path": "hub", "view": self.view, "per": "motor",
                "alternatives": len(self.drives) > 1,
                "peak_torque_Nm": first.peak_torque_Nm, "rms_torque_Nm": first.rms_torque_Nm,
                "max_shaft_speed_rad_s": first.shaft_speed_rad_s,
                "max_shaft_speed_rpm": first.shaft_speed_rad_s * RPM_PER_RAD_S,
                "peak_power_W": first.peak_power_W, "mean_power_W": first.mean_power_W,
                "motors": motors, "duty": {"cycle_s": first.cycle_s},
                "gears": motors[0]["gears"], "best_ratio": motors[0]["best_ratio"],
                "cautions": list(self.cautions)}

    def to_text(self) -> str:
        """Readable summary for the command line."""
        if self.view == "gears":
            head = f"motor sizing per motor ({self.name}: gear pair, the driver at a steady speed)"
        else:
            head = (f"motor sizing per motor ({self.name}: carousel at a steady speed; two ways to"
                    " drive it, one motor each)")
        lines = [head]
        for d in self.drives:
            lines += [f"  {d.name}:",
                      f"    peak torque      {d.peak_torque_Nm:10.4g} N m",
                      f"    r.m.s. torque    {d.rms_torque_Nm:10.4g} N m   (continuous rating)",
                      f"    mean torque      {d.mean_torque_Nm:10.4g} N m",
                      f"    shaft speed      {d.shaft_speed_rad_s:10.4g} rad/s"
                      f" ({d.shaft_speed_rad_s * RPM_PER_RAD_S:.4g} rpm)",
                      f"    peak power       {d.peak_power_W:10.4g} W",
                      f"    mean power       {d.mean_power_W:10.4g} W"]
            for g in self.gears.get(d.key, ()):
                verdict = "fits" if g.fits else "exceeds " + ", ".join(g.limits)
                lines.append(f"    ratio {g.ratio:g}: motor {g.motor_rms_torque_Nm:.4g} N m r.m.s.,"
                             f" {g.motor_peak_torque_Nm:.4g} N m peak,"
                             f" {g.motor_max_speed_rad_s:.4g} rad/s"
                             f" ({g.motor_max_speed_rad_s * RPM_PER_RAD_S:.0f} rpm): {verdict}")
        lines.extend(caution_lines(self.cautions))
        return "\n".join(lines)


def hub_cautions() -> tuple[str, ...]:
    """Every caution a hub motor sizing carries."""
    return tuple(with_safety(HUB_MOTOR_CAUTIONS))


def gear_checks(sc, drive: HubDrive) -> tuple[tuple[GearCheck, ...], float | None]:
    """The ``[motor]`` gear ratios checked against one drive's torque and speed.

    Parameters
    ----------
    sc : Scenario
        Validated scenario (its ``[motor]``).
    drive : HubDrive
        The motor's duty over the cycle.

    Returns
    -------
    (tuple of GearCheck, float or None)
    """
    from ridesim.metrics.motor import _check_gears

    # Even steps in time (the arm's samples are even in the wheel's turn), as the checks average.
    t = (np.arange(drive.t_s.size) + 0.5) * drive.cycle_s / drive.t_s.size
    tq = np.interp(t, drive.t_s, drive.torque_Nm, period=drive.cycle_s)
    om = np.full((1, t.size), drive.shaft_speed_rad_s)
    return _check_gears(sc, tq[None, :], om, t)

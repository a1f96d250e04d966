"""Will it roll? One verdict for a scenario: clearance, friction, torque and lift-off.

:func:`check_scenario` solves the scenario's pair and combines

* the clearance of the whole wheel outline over a full roll
  (:func:`ridesim.assess.clearance.clearance`) and the corner seating at cusps,
* the friction the surface must supply, steady and while accelerating
  (:mod:`ridesim.assess.friction`),
* torque, shaft speed and power per motor (each uncoupled driven axle has its own
  motor, a coupled train one), by phase: the start-up from rest and the braking of
  the duty cycle ``ridesim size-motor`` follows, and the cruise over one wheel
  revolution at steady speed (:mod:`ridesim.assess.analytic`), and the lift-off speed.

``rollable`` is False when the wheel cuts into the track, when the surface
cannot supply the friction (or a wheel lifts off at the drive's speed), when
coupled axles cannot all roll at one angle (their wheelbase costs more bounce, pitch or skid
than one off by the build tolerance from a whole number of track periods), or when the
wheel does not close.
Every figure is an engineering estimate from a rigid, ideal model.
"""

from __future__ import annotations

import math
from dataclasses import field
from typing import TYPE_CHECKING, Any

import numpy as np

from ridesim.assess.analytic import (
    AnalyticResult,
    TorqueModel,
    analyze_cycle,
    duty_run,
    phase_figures,
    shaft_speed_cycle,
)
from ridesim.assess.clearance import ClearanceResult, CuspSeat, clearance, cusp_seating
from ridesim.assess.findings import Finding
from ridesim.assess.wording import describe
from ridesim.errors import InputError
from ridesim.records import record
from ridesim.safety import SAFETY_CAUTIONS, caution_lines, with_safety
from ridesim.scenario.build import resolve_wheelbase, solve_track_scenario, wheel_mass
from ridesim.scenario.load import Scenario

if TYPE_CHECKING:
    from ridesim.jobs.hub import HubCheckResult

__all__ = ["CheckResult", "check_scenario", "SAFETY_CAUTIONS", "CHECK_CAUTIONS"]

HALF_PI = 0.5 * math.pi
RPM_PER_RAD_S = 30.0 / math.pi
PHASE_LABELS = {"startup": "start-up", "cruise": "cruise", "braking": "braking"}

CHECK_CAUTIONS = (
    "The check's model is exact: the track as solved, sharp wheel corners, steady loads and no"
    " build error; `ridesim simulate` adds rounded corners, impacts and as-built errors.",
)
"""Cautions on the check's own model, after :data:`ridesim.safety.SAFETY_CAUTIONS`."""


def _f(v) -> float | None:
    """A plain float, or None for None, NaN or infinity."""
    if v is None:
        return None
    v = float(v)
    return v if math.isfinite(v) else None


@record
class CheckResult:
    """The verdict on a scenario and the figures behind it.

    Attributes
    ----------
    name : str
        Scenario name.
    findings : list of Finding
        What the check found, as codes and figures (:mod:`ridesim.assess.findings`): those that
        block the roll make ``rollable`` False; the others are advice (thin margins, drive
        limits, tangent corners). ``reasons`` and ``notes`` word them.
    cautions : list of str
        Safety cautions carried by every check.
    speed_m_s : float or None
        Vehicle speed [m/s] the figures are for.
    clearance : ClearanceResult or None
        Clearance over a full roll.
    seats : list of CuspSeat
        Corner seating at each cusp of the first revolution.
    steady : AnalyticResult or None
        Loads and torque at steady speed.
    accelerating : AnalyticResult or None
        Loads and torque at the drive's speed while still accelerating (``accel_m_s2 > 0``).
    friction_available : float
        The surface's friction coefficient [-].
    summary : dict
        The pair's solve summary (period, revolution length, depths).
    shaft_drive : dict or None
        Constant-shaft-speed drive: torque [N m] and speed surge [m/s] over a revolution.
    cart : dict or None
        Several axles: phase errors [rad], load shares, lifted axles, bounce [m], pitch range
        [rad], seat bounce [m] and seat acceleration [m/s^2] (quasi-static estimate, vibration
        up to 80 Hz, the top of the ISO 2631-1 band).
    phases : dict
        Per-motor torque figures by phase: ``startup`` and ``braking`` (when the drive has a
        start acceleration) over the duty cycle of ``ridesim size-motor``, each with its
        ``window_s`` in that cycle, and ``cruise`` over one wheel revolution at steady speed.
    """

    name: str
    findings: list[Finding]
    cautions: list[str]
    speed_m_s: float | None
    clearance: ClearanceResult | None
    seats: list[CuspSeat]
    steady: AnalyticResult | None
    accelerating: AnalyticResult | None
    friction_available: float
    summary: dict = field(default_factory=dict)
    cart: dict | None = None
    shaft_drive: dict | None = None
    phases: dict = field(default_factory=dict)

    @property
    def rollable(self) -> bool:
        """True when no finding blocks the roll."""
        return not any(f.blocks for f in self.findings)

    @property
    def reasons(self) -> list[str]:
        """What blocks the roll, each as a sentence a builder can act on (empty when rollable)."""
        return [describe(f) for f in self.findings if f.blocks]

    @property
    def notes(self) -> list[str]:
        """Advice that does not block the roll, in words."""
        return [describe(f) for f in self.findings if not f.blocks]

    # ------------------------------------------------------------------ friction summary
    def _friction(self) -> dict:
        st, ac = self.steady, self.accelerating
        if st is None:
            return {"required_peak": None, "at_x_m": None, "available": self.friction_available,
                    "slips": None}
        worst = st if ac is None or not (ac.mu_peak > st.mu_peak) else ac
        peak = worst.mu_peak
        out = {
            "required_peak": _f(peak),
            "at_x_m": float(worst.mu_peak_x_m),
            "available": float(self.friction_available),
            "slips": bool(not (peak <= self.friction_available)),
            "required_peak_steady": _f(st.mu_peak),
            "at_x_steady_m": float(st.mu_peak_x_m),
            "lift_off": bool(not math.isfinite(peak)),
        }
        if ac is not None:
            out["required_peak_accelerating"] = _f(ac.mu_peak)
            out["accel_m_s2"] = float(ac.accel_m_s2)
        return out

    def plot(self, ax=None):
        """Plot each motor's analytic torque [N m] over one revolution at steady speed.

        Parameters
        ----------
        ax : matplotlib.axes.Axes, optional
            Axes to draw on; new axes (pyplot) when None.

        Returns
        -------
        matplotlib.axes.Axes
        """
        if ax is None:
            import matplotlib.pyplot as plt

            _, ax = plt.subplots(figsize=(8, 3.5))
        st = self.steady
        if st is not None and st.motor_torque_Nm is not None:
            import numpy as np

            for k in range(len(st.motors)):
                ax.plot(st.t_s, np.asarray(st.motor_torque_Nm[k]), label=f"motor {k}")
            ax.legend(fontsize=8)
        ax.set_xlabel("time over one revolution [s]")
        ax.set_ylabel("motor torque [N·m]")
        ax.set_title(f"{self.name}: {'rolls' if self.rollable else 'does not roll'}")
        return ax

    def _repr_html_(self) -> str:
        """The figures as a table, for Jupyter."""
        from ridesim.model.display import html_table

        return html_table(self.to_dict(), f"check: {'rolls' if self.rollable else 'does not roll'}")

    def to_dict(self) -> dict:
        """The JSON contract: plain floats, bools, None, strings and lists.

        Returns
        -------
        dict
            ``rollable``, ``reasons``, ``clearance`` {``min_m``, ``at_x_m``, ...},
            ``friction`` {``required_peak``, ``at_x_m``, ``available``, ``slips``, ...},
            ``torque`` {``peak_Nm`` (largest over the phases), ``rms_Nm`` (cruise), ``by_phase``,
            ...} per motor, ``motors`` (each motor's name, axles and cruise figures),
            ``lift_off_speed_m_s``, ``cautions``, and extra keys with units in their names.
        """
        cl, st = self.clearance, self.steady
        out: dict = {"name": self.name, "rollable": bool(self.rollable),
                     "reasons": list(self.reasons), "notes": list(self.notes),
                     "findings": [f.to_dict() for f in self.findings]}
        if cl is None:
            out["clearance"] = {"min_m": None, "at_x_m": None}
        else:
            out["clearance"] = {
                "min_m": float(cl.min_m), "at_x_m": float(cl.at_x_m),
                "interferes": bool(cl.interferes),
                "first_interference_x_m": _f(cl.first_interference_x_m),
                "feature": cl.feature, "euclid_m": float(cl.euclid_m),
                "tolerance_m": float(cl.tolerance_m),
                "intervals_m": [[float(a), float(b)] for a, b in cl.intervals_m],
            }
        out["friction"] = self._friction()
        if st is None:
            out["torque"] = {"peak_Nm": None, "rms_Nm": None}
            out["lift_off_speed_m_s"] = None
        else:
            by_phase = {k: {kk: vv for kk, vv in v.items() if kk != "motors"}
                        for k, v in self.phases.items()}
            peaks = {k: v["peak_Nm"] for k, v in by_phase.items() if v.get("peak_Nm") is not None}
            top = max(peaks, key=lambda k: peaks[k]) if peaks else "cruise"
            tq = {"per": "motor",
                  "peak_Nm": float(peaks.get(top, st.torque_peak_Nm)),
                  "peak_phase": top,
                  "rms_Nm": float(st.torque_rms_Nm),
                  "mean_Nm": float(st.torque_mean_Nm),
                  "by_phase": by_phase,
                  "wheel_peak_Nm": _f(st.wheel_torque_peak_Nm),
                  "wheel_rms_Nm": _f(st.wheel_torque_rms_Nm)}
            if st.chain_torque_peak_Nm is not None:
                tq["chain_peak_Nm"] = float(st.chain_torque_peak_Nm)
                tq["chain_rms_Nm"] = _f(st.chain_torque_rms_Nm)
            if self.shaft_drive is not None:  # the drive's own torque, not the steady-speed one
                tq = {"per": "motor", "peak_Nm": self.shaft_drive["peak_Nm"],
                      "rms_Nm": self.shaft_drive["rms_Nm"],
                      "peak_steady_speed_Nm": float(st.torque_peak_Nm),
                      "rms_steady_speed_Nm": tq["rms_Nm"], "mean_Nm": tq["mean_Nm"],
                      "by_phase": tq["by_phase"]}
                out["shaft_drive"] = dict(self.shaft_drive)
            out["torque"] = tq
            out["lift_off_speed_m_s"] = _f(st.lift_off_speed_m_s)
            out["speed_m_s"] = _f(self.speed_m_s)
            out["shaft_speed_max_rad_s"] = float(st.shaft_speed_max_rad_s)
            out["shaft_speed_min_rad_s"] = float(st.shaft_speed_min_rad_s)
            powers = [v.get("peak_power_W") for v in by_phase.values()]
            out["power_peak_W"] = float(max([p for p in powers if p is not None]
                                            + [st.power_peak_W]))
            out["power_mean_W"] = float(st.power_mean_W)
            out["driven_axles"] = [int(i) for i in st.driven]
            out["motors"] = st.motor_list()
            out["speed_ripple"] = {
                "constant_shaft_speed": float(st.shaft_speed_drive_ripple),
                "constant_shaft_speed_surge": float(st.shaft_speed_drive_surge),
                "constant_torque": _f(st.constant_torque_ripple),
                "constant_torque_Nm": float(st.constant_torque_Nm),
            }
        if self.seats:
            out["cusps"] = {
                "count": len(self.seats),
                "opening_angle_min_rad": float(min(s.opening_angle_rad for s in self.seats)),
                "approach_margin_min_rad": float(min(s.approach_margin_rad for s in self.seats)),
                "seat_margin_min_rad": float(min(s.margin_rad for s in self.seats)),
            }
        else:
            out["cusps"] = {"count": 0}
        out["pair"] = dict(self.summary)
        if self.cart is not None:
            out["cart"] = dict(self.cart)
        out["cautions"] = list(self.cautions)
        return out

    def to_text(self) -> str:
        """A short plain-text report (millimetres and degrees for reading).

        Returns
        -------
        str
        """
        d = self.to_dict()
        lines = [f"{self.name}: {'ROLLS' if self.rollable else 'DOES NOT ROLL'}"]
        for r in self.reasons:
            lines.append(f"  - {r}")
        c = d["clearance"]
        if c.get("min_m") is not None:
            # (+ 0.0 after rounding: a gap of -1e-10 m within tolerance reads 0.000, not -0.000)
            least_mm = round(1000 * c["min_m"], 3) + 0.0
            lines.append(f"clearance: least {least_mm:.3f} mm at x = {c['at_x_m']:.4f} m"
                         + (" (interferes)" if c.get("interferes") else ""))
        fr = d["friction"]
        if fr.get("required_peak") is not None:
            lines.append(f"friction: needs {fr['required_peak']:.3f} at x = {fr['at_x_m']:.4f} m,"
                         f" surface gives {fr['available']:.3f}" + (" (slips)" if fr["slips"] else ""))
        elif fr.get("lift_off"):
            lines.append("friction: a wheel lifts off the track at this speed")
        tq = d["torque"]
        if tq.get("peak_Nm") is not None:
            mot = d.get("motors") or []
            names = "; ".join(m["name"] for m in mot) or "none"
            lines.append(f"torque per motor ({len(mot)} motor{'s' if len(mot) != 1 else ''}:"
                         f" {names}" + ("; the most loaded motor's figures" if len(mot) > 1 else "")
                         + "):")
            ph = tq.get("by_phase") or {}
            for key, label in PHASE_LABELS.items():
                p = ph.get(key)
                if not p or p.get("peak_Nm") is None:
                    continue
                lines.append(f"  {label:<9} {p['covers']}: peak {p['peak_Nm']:.4g} N m,"
                             f" r.m.s. {p['rms_Nm']:.4g} N m")
            if self.shaft_drive is not None:
                lines.append(f"  constant shaft speed drive: peak {tq['peak_Nm']:.4g} N m,"
                             f" r.m.s. {tq['rms_Nm']:.4g} N m")
            w = d["shaft_speed_max_rad_s"]
            lines.append(f"  shaft speed up to {w:.3g} rad/s ({w * RPM_PER_RAD_S:.3g} rpm),"
                         f" power peak {d['power_peak_W']:.3g} W")
        lo = d.get("lift_off_speed_m_s")
        lines.append("lift-off: none at any speed" if lo is None
                     else f"lift-off above {lo:.3g} m/s")
        for n in self.notes:
            lines.append(f"note: {n}")
        lines += caution_lines(self.cautions)
        return "\n".join(lines)


def check_scenario(sc: Scenario) -> CheckResult | HubCheckResult:
    """Check whether the scenario's build will roll, and what it needs.

    Parameters
    ----------
    sc : Scenario
        A validated scenario (see :func:`ridesim.scenario.load.load_scenario`).

    Returns
    -------
    CheckResult or HubCheckResult
        A :class:`~ridesim.jobs.hub.HubCheckResult` for ``path.kind = "hub"``.

    Examples
    --------
    >>> from ridesim.scenario.load import scenario_from_dict
    >>> sc = scenario_from_dict({"wheel": {"shape": "polygon", "sides": 3, "apothem_m": 0.2}})
    >>> check_scenario(sc).rollable
    False
    """
    if not isinstance(sc, Scenario):
        raise InputError(f"sc must be a Scenario (see load_scenario), got {type(sc).__name__}")
    if sc.path.is_hub:  # a wheel around a hub has its own check
        from ridesim.jobs.hub import check_hub

        return check_hub(sc)
    pair = solve_track_scenario(sc)
    sc = resolve_wheelbase(sc, pair)
    cautions = with_safety(CHECK_CAUTIONS)
    avail = float(sc.surface.friction)
    if not pair.closed:
        nc = Finding("not_closed", {"lobes": int(pair.lobes), "closure_gap_rad": float(pair.closure_gap_rad),
                                    "depth_m": float(pair.depth)})
        return CheckResult(name=sc.name, findings=[nc],
                           cautions=cautions, speed_m_s=None, clearance=None, seats=[],
                           steady=None, accelerating=None, friction_available=avail)
    mp = wheel_mass(sc, pair.wheel)
    cl = clearance(pair)
    seats = cusp_seating(pair)
    steady = analyze_cycle(pair, vehicle=sc.vehicle, surface=sc.surface, wheel_mass=mp,
                           drive=sc.drive, accel_m_s2=0.0)
    v = steady.speed_m_s
    acc = None
    if sc.drive.accel_m_s2 > 0:
        acc = analyze_cycle(pair, vehicle=sc.vehicle, surface=sc.surface, wheel_mass=mp,
                            speed_m_s=v, accel_m_s2=sc.drive.accel_m_s2)
    L = pair.revolution_length
    found = _clearance_findings(pair, sc, cl, seats)
    found += _friction_findings(pair, steady, acc, avail)
    # several axles: phasing, pitch and seat bounce (quasi-static). Coupled axles must see
    # the same track phase: a wheelbase is judged by the bounce, pitch and skid it costs
    # against a wheelbase off by the build tolerance (vehicle.wheelbase_tolerance_m).
    veh = sc.vehicle
    cart = None
    if veh.axles > 1:
        from ridesim.assess.phasing import cart_phasing  # several axles only

        cart = cart_phasing(pair, veh, speed_m_s=v, phase_offsets_rad=veh.phase_offsets_rad)
        found += list(cart.findings)
    shaft = None
    if sc.drive.mode == "shaft_speed" and sc.drive.shaft_speed_rad_s:
        shaft, surge_found = _shaft_speed_drive(pair, sc, mp, steady, avail,
                                                float(sc.drive.shaft_speed_rad_s))
        found += surge_found
    phases = _phases(pair, sc, mp, steady)
    found += _drive_findings(sc, steady, phases)
    return CheckResult(
        name=sc.name, findings=found, cautions=cautions,
        speed_m_s=v, clearance=cl, seats=seats, steady=steady, accelerating=acc,
        friction_available=avail,
        summary={"period_m": float(pair.track.period), "revolution_length_m": float(L),
                 "lobes": int(pair.lobes), "depth_min_m": float(pair.depth_range()[0]),
                 "depth_max_m": float(pair.depth_range()[1]),
                 "wheel_mass_kg": float(mp.mass_kg), "wheel_inertia_kg_m2": float(mp.inertia_kg_m2)},
        cart=None if cart is None else {"wheelbase_m": float(veh.wheelbase_m), **cart.to_dict()},
        shaft_drive=shaft, phases=phases,
    )


def _clearance_findings(pair, sc: Scenario, cl: ClearanceResult, seats: list[CuspSeat]) -> list[Finding]:
    """Findings on clearance: interference, corners tangent at a cusp, the exact-model caveats."""
    found: list[Finding] = []
    worst_seat = min(seats, key=lambda s: s.approach_margin_rad) if seats else None
    if cl.interferes:
        narrow = worst_seat is not None and worst_seat.approach_margin_rad < -1e-6
        found.append(Finding("interference", {
            "feature": cl.feature, "clearance_m": float(cl.min_m), "at_x_m": float(cl.at_x_m),
            "first_x_m": _f(cl.first_interference_x_m),
            "cusp_opening_rad": (float(worst_seat.opening_angle_rad)
                                 if narrow and worst_seat is not None else None)}))
    elif worst_seat is not None and abs(worst_seat.approach_margin_rad) <= 1e-6:
        found.append(Finding("tangent_corners", {
            "cusp_opening_rad": float(worst_seat.opening_angle_rad)}))
    if pair.cusps and not cl.interferes:
        found.append(Finding("cusps_exact_model", {"count": len(pair.cusps)}))
    spec = sc.wheel
    if spec is not None and spec.corner_radius_m > 0 and not spec.fit_track_to_corners:
        found.append(Finding("clearance_sharp_corners", {"corner_radius_m": float(spec.corner_radius_m)}))
    return found


def _friction_findings(pair, steady: AnalyticResult, acc: AnalyticResult | None,
                       avail: float) -> list[Finding]:
    """Findings on friction and lift-off, steady or accelerating, whichever needs more grip."""
    found: list[Finding] = []
    v = steady.speed_m_s
    worst = steady if acc is None or not (acc.mu_peak > steady.mu_peak) else acc
    mu = worst.mu_peak
    lift = steady.lift_off_speed_m_s
    lifted_at_speed = lift is not None and lift <= v
    if not math.isfinite(mu) or lifted_at_speed:
        found.append(Finding("lift_off", {"speed_m_s": float(v), "lift_off_speed_m_s": _f(lift)}))
    elif mu > avail:
        x_at = worst.mu_peak_x_m
        found.append(Finding("friction_exceeded", {
            "required": float(mu), "available": avail, "at_x_m": float(x_at),
            "slope_rad": float(math.atan(abs(_slope_at(pair, x_at)))),
            "accel_m_s2": float(acc.accel_m_s2) if worst is acc and acc is not None else None,
            "required_steady": float(steady.mu_peak)}))
    elif mu > 0.8 * avail:
        found.append(Finding("friction_margin_thin", {"required": float(mu), "available": avail}))
    if lift is not None and not lifted_at_speed and lift < 2.0 * v:
        found.append(Finding("lift_off_near", {"lift_off_speed_m_s": float(lift), "speed_m_s": float(v)}))
    return found


def _shaft_speed_drive(pair, sc: Scenario, mp, steady: AnalyticResult, avail: float,
                       shaft_speed_rad_s: float) -> tuple[dict, list[Finding]]:
    """A constant shaft speed makes the cart surge: the surge figures and their findings.

    Returns the shaft-speed cycle's figures (with ``mu_peak_bound``, the friction needed at
    the surge's top speed and peak acceleration, or steady if more) and the findings.
    """
    found: list[Finding] = []
    shaft = shaft_speed_cycle(pair, sc, mp, shaft_speed_rad_s)
    surge = analyze_cycle(pair, vehicle=sc.vehicle, surface=sc.surface, wheel_mass=mp,
                          speed_m_s=shaft["speed_max_m_s"], accel_m_s2=shaft["accel_peak_m_s2"])
    shaft["mu_peak_bound"] = float(max(surge.mu_peak, steady.mu_peak))
    if shaft["mu_peak_bound"] > avail:
        found.append(Finding("shaft_surge_friction", {
            "required_bound": shaft["mu_peak_bound"], "available": avail,
            "required_steady": float(steady.mu_peak)}))
    found.append(Finding("shaft_surge", {
        "shaft_speed_rad_s": shaft_speed_rad_s,
        **{k: float(shaft[k]) for k in ("speed_min_m_s", "speed_max_m_s", "accel_peak_m_s2",
                                        "peak_Nm", "rms_Nm")}}))
    return shaft, found


def _drive_findings(sc: Scenario, steady: AnalyticResult, phases: dict) -> list[Finding]:
    """Findings on the drive: the torque limit against the peak of every phase, a torque drive's balance."""
    found: list[Finding] = []
    peak_T = max(p["peak_Nm"] for p in phases.values() if p.get("peak_Nm") is not None)
    if peak_T > sc.drive.max_torque_Nm:
        top = max((k for k in phases if phases[k].get("peak_Nm") is not None),
                  key=lambda k: phases[k]["peak_Nm"])
        found.append(Finding("drive_torque_limit", {
            "limit_Nm": float(sc.drive.max_torque_Nm), "peak_Nm": float(peak_T), "phase": top,
            "phase_label": PHASE_LABELS[top]}))
    if sc.drive.mode == "torque" and sc.drive.torque_Nm is not None:
        found.append(Finding("torque_drive_balance", {
            "balance_Nm": float(steady.constant_torque_Nm), "torque_Nm": float(sc.drive.torque_Nm)}))
    return found


def _phases(pair, sc: Scenario, mp, steady: AnalyticResult) -> dict:
    """Per-motor torque by phase: cruise over one revolution; start-up and braking of the duty.

    The start-up (from rest at ``drive.accel_m_s2``) and the braking (at ``duty.brake_m_s2``,
    or the start acceleration) follow the same duty cycle, from the same start pose, as
    ``ridesim size-motor``, so both commands give the same figures for them; the cruise is
    the exact steady cycle (every track position, one-sided values at cusps included).
    """
    v = float(steady.speed_m_s)
    L = float(pair.revolution_length)
    cruise: dict[str, Any] = {"window_s": None, "peak_Nm": float(steady.torque_peak_Nm),
              "rms_Nm": float(steady.torque_rms_Nm), "mean_Nm": float(steady.torque_mean_Nm),
              "max_shaft_speed_rad_s": float(steady.shaft_speed_max_rad_s),
              "peak_power_W": (float(np.max(steady.motor_power_W))
                               if steady.motors and steady.motor_power_W is not None else 0.0),
              "covers": f"at {v:.3g} m/s over one wheel revolution"
                        + (f" ({L / v:.3g} s)" if v > 0 else "")}
    accel = float(sc.drive.accel_m_s2)
    if not (accel > 0 and v > 0 and steady.motors):
        cruise["window_s"] = [0.0, L / v] if v > 0 else None
        return {"cruise": cruise}
    brake = float(sc.duty.brake_m_s2) if sc.duty.brake_m_s2 is not None else accel
    model = TorqueModel(pair, sc, mp, v, accel)
    run = duty_run(model, top_speed_m_s=v, accel_m_s2=accel, brake_m_s2=brake,
                   cruise_s=sc.duty.cruise_s)
    t_a = v / accel
    cruise["window_s"] = [t_a, t_a + L / v]
    out = {}
    for key, rate, what in (("startup", accel, "from rest to"), ("braking", brake, "to rest from")):
        p = phase_figures(run.t_s, run.torque_Nm, run.shaft_speed_rad_s, run.windows_s[key])
        t0, t1 = p["window_s"]
        p["covers"] = (f"{t0:.4g}-{t1:.4g} s, {what} {v:.3g} m/s at {rate:.3g} m/s^2")
        p.pop("motors", None)
        out[key] = p
    return {"startup": out["startup"], "cruise": cruise, "braking": out["braking"]}


def _slope_at(pair, x: float) -> float:
    """Track slope [-] at ``x`` [m] (a 1-element array: some tracks reject 0-d input)."""
    return float(np.asarray(pair.track.slope(np.array([float(x)])), dtype=float)[0])

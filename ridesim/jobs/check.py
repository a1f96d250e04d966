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
from dataclasses import dataclass, field

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
from ridesim.assess.phasing import cart_phasing
from ridesim.errors import InputError
from ridesim.safety import SAFETY_CAUTIONS, caution_lines, with_safety
from ridesim.scenario.build import resolve_wheelbase, solve_scenario, wheel_mass
from ridesim.scenario.load import Scenario

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


@dataclass(frozen=True)
class CheckResult:
    """The verdict on a scenario and the figures behind it.

    Attributes
    ----------
    name : str
        Scenario name.
    rollable : bool
        True when nothing blocks the roll (see the module notes).
    reasons : list of str
        What blocks the roll, each as a sentence a builder can act on (empty when rollable).
    notes : list of str
        Advice that does not block the roll (thin margins, drive limits, tangent corners).
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
    rollable: bool
    reasons: list[str]
    notes: list[str]
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
                     "reasons": list(self.reasons), "notes": list(self.notes)}
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
            top = max(peaks, key=peaks.get) if peaks else "cruise"
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
            lines.append(f"clearance: least {1000 * c['min_m']:.3f} mm at x = {c['at_x_m']:.4f} m"
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


def _deg(rad: float) -> float:
    return math.degrees(rad)


def check_scenario(sc: Scenario) -> CheckResult:
    """Check whether the scenario's build will roll, and what it needs.

    Parameters
    ----------
    sc : Scenario
        A validated scenario (see :func:`ridesim.scenario.load.load_scenario`).

    Returns
    -------
    CheckResult

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
    pair = solve_scenario(sc)
    sc = resolve_wheelbase(sc, pair)
    cautions = with_safety(CHECK_CAUTIONS)
    avail = float(sc.surface.friction)
    if not pair.closed:
        reason = (f"the wheel does not close: after {pair.lobes} track period(s) it is"
                  f" {pair.closure_gap_rad:+.4g} rad from a full turn at track.depth_m ="
                  f" {pair.depth:.6g} m; give track.lobes instead of depth_m to find a closing depth")
        return CheckResult(name=sc.name, rollable=False, reasons=[reason], notes=[],
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
    reasons: list[str] = []
    notes: list[str] = []
    L = pair.revolution_length

    # -- clearance
    worst_seat = min(seats, key=lambda s: s.approach_margin_rad) if seats else None
    if cl.interferes:
        first = cl.first_interference_x_m
        msg = (f"the wheel's {cl.feature} cuts {1000 * -cl.min_m:.1f} mm into the track at"
               f" x = {cl.at_x_m:.3f} m (clearance {1000 * cl.min_m:.1f} mm"
               + (f"; the overlap starts at x = {first:.3f} m" if first is not None else "") + ")")
        if worst_seat is not None and worst_seat.approach_margin_rad < -1e-6:
            msg += (f": the track's cusps open only {_deg(worst_seat.opening_angle_rad):.0f} deg,"
                    " less than the 90 deg a corner needs to come down into a cusp clear of the"
                    " neighbouring arch; use a wheel with more sides (a regular polygon needs at"
                    " least 4, and 5 or more leaves margin) or blunter corners")
        else:
            msg += ": change the wheel shape or move the axle so the outline clears the track"
        reasons.append(msg)
    elif worst_seat is not None and abs(worst_seat.approach_margin_rad) <= 1e-6:
        notes.append(
            "the corners come down into cusps that open at exactly 90 deg, tangent to the next"
            " arch, so they clear it only just: wear, flex or a corner radius can make them catch"
            " (square wheels); round the corners slightly and check the track near the cusps"
        )
    if pair.cusps and not cl.interferes:
        notes.append(
            f"the track has {len(pair.cusps)} corner(s) per wheel turn where the contact jumps"
            " from one face to the next; this model treats them as exact, but a real wheel's"
            " rounded corners and the impact there add bounce and torque spikes: run"
            " `ridesim simulate` to see them"
        )
    spec = sc.wheel
    if spec is not None and spec.corner_radius_m > 0 and not spec.fit_track_to_corners:
        notes.append(f"clearance was checked for sharp corners; the {1000 * spec.corner_radius_m:g}"
                     " mm corner radius changes the contact near the cusps")

    # -- friction and lift-off
    worst = steady if acc is None or not (acc.mu_peak > steady.mu_peak) else acc
    mu = worst.mu_peak
    lift = steady.lift_off_speed_m_s
    lifted_at_speed = lift is not None and lift <= v
    if not math.isfinite(mu) or lifted_at_speed:
        reasons.append(
            f"a wheel leaves the track at {v:.3g} m/s: its normal load reaches zero above"
            f" {lift if lift is not None else 0.0:.3g} m/s (the wheel's centre of mass is off its"
            " axle, or the drive pushes too hard on a slope); run slower, balance the wheel about"
            " its axle or add body weight"
        )
    elif mu > avail:
        x_at = worst.mu_peak_x_m
        slope = _slope_at(pair, x_at)
        during = ""
        if worst is acc:
            during = (f" while accelerating at {acc.accel_m_s2:.3g} m/s^2 ({steady.mu_peak:.2f} at"
                      " steady speed)")
        reasons.append(
            f"peak friction demand {mu:.2f} exceeds the surface's {avail:.2f} at x = {x_at:.3f} m,"
            f" where the track slopes {_deg(math.atan(abs(slope))):.0f} deg{during}: the wheel"
            " will slip there; use a grippier surface (rubber on dry concrete is about 1.0) or a"
            " gentler track (more wheel sides, a smaller wave, a rounder wheel)"
            + (", or accelerate more gently" if during else "")
        )
    elif mu > 0.8 * avail:
        notes.append(f"friction margin is thin: the track needs {mu:.2f} of the surface's {avail:.2f};"
                     " friction coefficients vary widely with dirt, moisture and wear, so measure it")
    if lift is not None and not lifted_at_speed and lift < 2.0 * v:
        notes.append(f"the wheels would leave the track above {lift:.3g} m/s, less than twice the"
                     f" drive's {v:.3g} m/s; limit the speed")

    # -- several axles: phasing, pitch and seat bounce (quasi-static). Coupled axles must see
    # the same track phase: a wheelbase is judged by the bounce, pitch and skid it costs
    # against a wheelbase off by the build tolerance (vehicle.wheelbase_tolerance_m).
    veh = sc.vehicle
    cart = None
    if veh.axles > 1:
        cart = cart_phasing(pair, veh, speed_m_s=v, phase_offsets_rad=veh.phase_offsets_rad)
        if cart.out_of_phase:
            reasons.append(cart.out_of_phase_note)
        notes += [n for n in cart.notes if n != cart.out_of_phase_note]

    # -- a constant shaft speed makes the cart surge
    shaft = None
    if sc.drive.mode == "shaft_speed" and sc.drive.shaft_speed_rad_s:
        shaft = shaft_speed_cycle(pair, sc, mp, float(sc.drive.shaft_speed_rad_s))
        surge = analyze_cycle(pair, vehicle=sc.vehicle, surface=sc.surface, wheel_mass=mp,
                              speed_m_s=shaft["speed_max_m_s"], accel_m_s2=shaft["accel_peak_m_s2"])
        shaft["mu_peak_bound"] = float(max(surge.mu_peak, steady.mu_peak))
        if shaft["mu_peak_bound"] > avail:
            notes.append(f"while surging, the contact may need friction up to"
                         f" {shaft['mu_peak_bound']:.2f} (bound: peak surge acceleration everywhere),"
                         f" above the surface's {avail:.2f} (steady speed: {steady.mu_peak:.2f})")
        notes.append(
            f"a constant shaft speed of {sc.drive.shaft_speed_rad_s:.3g} rad/s makes the ground speed"
            f" surge between {shaft['speed_min_m_s']:.3g} and {shaft['speed_max_m_s']:.3g} m/s"
            f" (up to {shaft['accel_peak_m_s2']:.3g} m/s^2): each motor then needs"
            f" {shaft['peak_Nm']:.3g} N m peak, {shaft['rms_Nm']:.3g} N m r.m.s., far more than at a"
            " steady ground speed, plus impacts where the contact jumps; a speed-regulating drive"
            " avoids it"
        )

    # -- torque by phase (per motor)
    phases = _phases(pair, sc, mp, steady)

    # -- drive
    peak_T = max(p["peak_Nm"] for p in phases.values() if p.get("peak_Nm") is not None)
    if peak_T > sc.drive.max_torque_Nm:
        worst = max((k for k in phases if phases[k].get("peak_Nm") is not None),
                    key=lambda k: phases[k]["peak_Nm"])
        notes.append(f"the drive's torque limit {sc.drive.max_torque_Nm:.3g} N m per motor is below"
                     f" the {peak_T:.3g} N m peak a motor needs ({PHASE_LABELS[worst]}); the cart"
                     " will slow near the peaks or not start")
    if sc.drive.mode == "torque" and sc.drive.torque_Nm is not None:
        tc = steady.constant_torque_Nm
        notes.append(f"a constant {tc:.3g} N m per motor balances the rolling resistance;"
                     f" the drive's {sc.drive.torque_Nm:.3g} N m will keep "
                     + ("accelerating the cart: limit its speed" if sc.drive.torque_Nm > tc
                        else "slowing the cart"))

    return CheckResult(
        name=sc.name, rollable=not reasons, reasons=reasons, notes=notes, cautions=cautions,
        speed_m_s=v, clearance=cl, seats=seats, steady=steady, accelerating=acc,
        friction_available=avail,
        summary={"period_m": float(pair.track.period), "revolution_length_m": float(L),
                 "lobes": int(pair.lobes), "depth_min_m": float(pair.depth_range()[0]),
                 "depth_max_m": float(pair.depth_range()[1]),
                 "wheel_mass_kg": float(mp.mass_kg), "wheel_inertia_kg_m2": float(mp.inertia_kg_m2)},
        cart=None if cart is None else {"wheelbase_m": float(veh.wheelbase_m), **cart.to_dict()},
        shaft_drive=shaft, phases=phases,
    )


def _phases(pair, sc: Scenario, mp, steady: AnalyticResult) -> dict:
    """Per-motor torque by phase: cruise over one revolution; start-up and braking of the duty.

    The start-up (from rest at ``drive.accel_m_s2``) and the braking (at ``duty.brake_m_s2``,
    or the start acceleration) follow the same duty cycle, from the same start pose, as
    ``ridesim size-motor``, so both commands give the same figures for them; the cruise is
    the exact steady cycle (every track position, one-sided values at cusps included).
    """
    v = float(steady.speed_m_s)
    L = float(pair.revolution_length)
    cruise = {"window_s": None, "peak_Nm": float(steady.torque_peak_Nm),
              "rms_Nm": float(steady.torque_rms_Nm), "mean_Nm": float(steady.torque_mean_Nm),
              "max_shaft_speed_rad_s": float(steady.shaft_speed_max_rad_s),
              "peak_power_W": float(np.max(steady.motor_power_W)) if steady.motors else 0.0,
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

"""Jobs for a wheel rolling around a hub (``path.kind = "hub"``): solve text and check.

A hub scenario is simulated as a gear pair or a carousel (:func:`simulate_hub`) and rendered
as a speed-ratio plot and a clip of the carousel (:func:`render_hub`), and its motor sized at
a steady speed (:func:`size_motor_hub`);
:data:`HUB_JOBS` names the jobs that handle one, and :func:`require_line` refuses the
others with one line.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ridesim.assess.findings import Finding
from ridesim.assess.hub import HubAssessment, HubFriction, assess_hub, hub_friction
from ridesim.assess.wording import describe
from ridesim.errors import ScenarioError
from ridesim.safety import caution_lines, with_safety
from ridesim.scenario.build import solve_hub_scenario
from ridesim.scenario.load import Scenario, WheelSpec

#: Standard gravity [m/s^2] (CGPM 1901 conventional value).
G_M_S2 = 9.80665

__all__ = ["HUB_JOBS", "hub_load_case", "HubCheckResult", "HubSimResult", "check_hub", "simulate_hub",
           "solve_hub_text", "require_line", "render_hub", "size_motor_hub",
           "hub_drive_speed"]

#: Jobs (command names) that handle a hub path.
HUB_JOBS = ("solve", "check", "export", "simulate", "render", "report", "size-motor")

HUB_CAUTIONS = (
    "The hub check is kinematic: rigid pitch curves, contact on the line of centres, no tooth"
    " form, backlash, flex or wear; gears need teeth cut on these pitch curves by a gear"
    " specialist's method.",
    "The check's friction demand is quasi-static (a slow, steady drive): inertia, impacts where"
    " the contact jumps and the arm's own weight (taken as balanced on its pivot) are left out;"
    " a fast drive needs more grip.",
)


def hub_load_case(sc: Scenario, pair) -> dict:
    """The loads a hub scenario runs under, as :func:`ridesim.assess.hub.hub_loads` takes them.

    Gravity acts in the plane only for a carousel with ``path.gravity_in_plane`` (a vertical
    drum); the preload is ``path.preload_N`` or, unset, the wheel's weight (twice it in a
    vertical drum, so the contact holds at the top), as :func:`simulate_hub` uses; the brake
    is ``path.load_torque_Nm`` on the driven member (the hub of a gear pair, the arm of a
    carousel).

    Parameters
    ----------
    sc : Scenario
        Validated scenario with ``path.kind = "hub"``.
    pair : HubPair
        Its solved pair.

    Returns
    -------
    dict
        ``mass_kg``, ``com_m``, ``gravity_m_s2``, ``preload_N``, ``load_torque_Nm``.
    """
    from ridesim.scenario.build import wheel_mass

    mw = wheel_mass(sc, pair.wheel)
    gravity = sc.path.sim_view == "carousel" and bool(sc.path.gravity_in_plane)
    weight = mw.mass_kg * G_M_S2
    preload = sc.path.preload_N if sc.path.preload_N is not None else weight * (2.0 if gravity else 1.0)
    return {"mass_kg": float(mw.mass_kg), "com_m": tuple(float(c) for c in mw.com_m),
            "gravity_m_s2": G_M_S2 if gravity else 0.0, "preload_N": float(preload),
            "load_torque_Nm": float(sc.path.load_torque_Nm)}


def hub_drive_speed(sc: Scenario, pair) -> float:
    """The wheel's (driver's) shaft speed [rad/s].

    ``drive.shaft_speed_rad_s``, or ``drive.speed_m_s`` over the wheel's mean contact radius.

    Parameters
    ----------
    sc : Scenario
        Validated scenario with ``path.kind = "hub"``.
    pair : HubPair
        Its solved pair.

    Returns
    -------
    float
    """
    import numpy as np

    if sc.drive.mode == "shaft_speed":
        if sc.drive.shaft_speed_rad_s is None:
            raise ScenarioError("drive.shaft_speed_rad_s is missing: drive.mode = \"shaft_speed\" needs it")
        return float(sc.drive.shaft_speed_rad_s)
    th = np.linspace(0.0, 2 * math.pi, 2048, endpoint=False)
    return float(sc.drive.speed_m_s) / float(np.mean(pair.wheel_radius(th)))


def size_motor_hub(sc: Scenario):
    """Size the motor of a hub scenario at a steady speed (:mod:`ridesim.metrics.hub_motor`).

    Gears (``path.view``): the driver gear at the wheel's shaft speed against the driven gear's
    brake ``path.load_torque_Nm`` and inertia (a plate of the ``[wheel]`` thickness and
    density). Carousel: the wheel's shaft at that speed (motor on the arm), and instead the arm
    at the same mean lap rate (motor at the pivot), under :func:`hub_load_case`'s loads.

    Parameters
    ----------
    sc : Scenario
        Validated scenario with ``path.kind = "hub"``.

    Returns
    -------
    HubMotorSizing
    """
    from ridesim.metrics.hub_motor import HubDrive, HubMotorSizing, gear_checks, hub_cautions, hub_drive
    from ridesim.scenario.build import wheel_mass

    if sc.wheel is None:
        raise ScenarioError("a hub needs a [wheel] with its shape")
    pair = solve_hub_scenario(sc)
    if not pair.closed:
        raise ScenarioError("the hub does not close at path.centre_distance_m; give path.ratio")
    view = sc.path.sim_view
    w = hub_drive_speed(sc, pair)
    case = hub_load_case(sc, pair)
    mw = wheel_mass(sc, pair.wheel)
    drives: tuple[HubDrive, ...]
    if view == "gears":
        mh = pair.hub.mass_properties(sc.wheel.thickness_m, sc.wheel.density_kg_m3)
        drives = (hub_drive(pair, "gear", w, wheel_inertia_kg_m2=mw.inertia_kg_m2,
                            driven_inertia_kg_m2=mh.inertia_kg_m2, **case),)
    else:
        drives = (hub_drive(pair, "wheel", w, wheel_inertia_kg_m2=mw.inertia_kg_m2, **case),
                  hub_drive(pair, "arm", w / float(pair.ratio), wheel_inertia_kg_m2=mw.inertia_kg_m2,
                            **case))
    gears, best = {}, {}
    for d in drives:
        gears[d.key], best[d.key] = gear_checks(sc, d)
    return HubMotorSizing(sc.name, view, drives, gears, best, hub_cautions())


def require_line(sc: Scenario, job: str) -> None:
    """Refuse a job that does not handle a hub path yet, in one line.

    Parameters
    ----------
    sc : Scenario
        Validated scenario.
    job : str
        Command name.
    """
    if sc.path.is_hub and job not in HUB_JOBS:
        raise ScenarioError(
            f"{job} does not handle path.kind = \"hub\" yet (it does: {', '.join(HUB_JOBS)});"
            " remove [path] to run it on a straight track"
        )


def _mm(v: float) -> str:
    return f"{v:.6g} m ({v * 1000:.2f} mm)"


def solve_hub_text(sc: Scenario, out: dict) -> str:
    """Plain-text lines of a hub solve's figures (``HubPair.to_dict()``).

    Parameters
    ----------
    sc : Scenario
        The scenario.
    out : dict
        The pair's figures.

    Returns
    -------
    str
    """
    where = "around the hub" if out["side"] == "outside" else "inside the ring"
    hub = "hub" if out["side"] == "outside" else "ring"
    if sc.hub is not None:
        solved = (f"solved the wheel rolling {where} for the {sc.hub.shape} {hub}"
                  + ("" if sc.hub.lobes is None else f" (hub.lobes = {sc.hub.lobes})"))
    elif sc.ratio is not None:
        kind = "external" if out["side"] == "outside" else "internal"
        key = "ratio.formula" if sc.ratio.formula is not None else "ratio.points_rad"
        solved = f"designed both pitch curves ({kind} gears) for the required speed ratio ({key})"
    elif sc.wheel is not None:
        solved = f"solved the {hub} for the {sc.wheel.shape} wheel rolling {where}"
    else:
        raise ScenarioError("a hub path needs a [wheel] with its shape, a [hub] or a [ratio]")
    lines = [f"scenario: {sc.name}",
             solved,
             f"centre distance:       {_mm(out['centre_distance_m'])}",
             f"ratio:                 {out['ratio']:.9g} wheel turn(s) per hub turn"
             f" ({out['hub_lobes']} hub lobe(s))"]
    if out["closed"]:
        lines += [
            f"wheel contact radius:  {out['wheel_radius_min_m']:.6g} .. {out['wheel_radius_max_m']:.6g} m",
            f"hub contact radius:    {out['hub_radius_min_m']:.6g} .. {out['hub_radius_max_m']:.6g} m",
            f"speed ratio (hub/wheel): {out['speed_ratio_min']:.6g} .. {out['speed_ratio_max']:.6g}",
            "closure: the hub closes",
        ]
    else:
        lines.append(f"closure: NOT closed; the hub is {out['closure_gap_rad']:+.6g} rad from a full"
                     " turn; give path.ratio instead of centre_distance_m to find a closing distance")
    return "\n".join(lines)


@dataclass
class HubCheckResult:
    """The check of a hub scenario.

    Attributes
    ----------
    name : str
        Scenario name.
    rollable : bool
        True when the hub closes and the outlines do not interfere, and the surface's
        friction meets the demand.
    reasons : list of str
        Why not, one line each.
    notes : list of str
        Findings that do not stop it (concave pitch curves).
    pair : dict
        The solve's figures.
    assessment : HubAssessment or None
        Figures of the check (None when the hub does not close).
    friction_available : float
        ``surface.friction``.
    cautions : list of str
        Safety cautions.
    friction : HubFriction or None
        The friction the contact needs along the cycle under the scenario's loads
        (:func:`hub_load_case`); None when the hub does not close.
    findings : list of Finding
        Friction and contact findings as codes and figures (worded in ``reasons``/``notes``).
    """

    name: str
    rollable: bool
    reasons: list[str]
    notes: list[str]
    pair: dict
    assessment: HubAssessment | None
    friction_available: float
    cautions: list[str]
    friction: HubFriction | None = None
    findings: list[Finding] = field(default_factory=list)

    def to_dict(self) -> dict:
        """JSON-ready figures with units in the key names."""
        out = {"name": self.name, "path": "hub", "rollable": self.rollable,
               "reasons": list(self.reasons), "notes": list(self.notes), "solve": dict(self.pair),
               "friction_available": self.friction_available}
        if self.assessment is not None:
            out.update(self.assessment.to_dict())
        if self.friction is not None:
            out["friction"] = self.friction.to_dict()
        out["findings"] = [f.to_dict() for f in self.findings]
        out["cautions"] = list(self.cautions)
        return out

    def to_text(self) -> str:
        """The check as text."""
        p = self.pair
        where = "around a hub" if p["side"] == "outside" else "inside a ring"
        lines = [f"scenario: {self.name} (wheel {where})",
                 f"centre distance {p['centre_distance_m']:.6g} m, ratio {p['ratio']:.6g} wheel turn(s) per"
                 " hub turn"]
        a = self.assessment
        if a is not None:
            lines += [
                f"least gap between the outlines: {round(a.least_gap_m * 1000, 4) + 0.0:+.4f} mm"
                f" (at wheel angle {a.least_gap_theta_rad:.4f} rad; 0 is the contact)",
                f"largest pressure angle: {math.degrees(math.atan(a.friction_demand)):.2f} deg"
                f" (tan {a.friction_demand:.4g}: the friction a free wheel pressed along the line"
                " of centres needs)",
            ]
        fr = self.friction
        if fr is not None:
            lines.append(_friction_line(fr, self.friction_available))
        if a is not None:
            lines += [
                f"driven speed per driving speed: {a.speed_ratio_min:.6g} .. {a.speed_ratio_max:.6g}"
                f" (mean {a.speed_ratio_mean:.6g}, ripple {100 * a.speed_ripple:.2f} %)",
                f"driven torque per driving torque (no losses): {a.torque_ratio_min:.6g} .."
                f" {a.torque_ratio_max:.6g}",
            ]
        lines.append("verdict: ROLLS" if self.rollable else "verdict: DOES NOT ROLL")
        lines += [f"  - {r}" for r in self.reasons]
        lines += [f"note: {n}" for n in self.notes]
        lines += caution_lines(self.cautions)
        return "\n".join(lines)


def _friction_line(fr: HubFriction, available: float) -> str:
    how = ("vertical drum, gravity in the plane" if fr.gravity_m_s2 > 0 else "no gravity in the plane")
    peak = f"{fr.peak:.4g}" if math.isfinite(fr.peak) else "contact lost"
    return (f"friction demand: peak {peak} at wheel angle {fr.at_theta_rad:.4f} rad"
            f" (wheel driven slowly; {how}; preload {fr.preload_N:.4g} N, brake"
            f" {fr.load_torque_Nm:.4g} N m); surface gives {available:.4g}")


def hub_friction_findings(fr: HubFriction, part: str, view: str = "carousel") -> list[Finding]:
    """Findings on a hub pair's friction demand: lost contact, slip, a thin margin.

    Parameters
    ----------
    fr : HubFriction
        The demand along the cycle, with ``available`` set.
    part : str
        ``"hub"`` or ``"ring"`` (for the words).
    view : str
        ``"gears"`` or ``"carousel"`` (for the words: a gear pair has no arm).

    Returns
    -------
    list of Finding
    """
    import numpy as np

    avail = float(fr.available) if fr.available is not None else math.inf
    data = {"at_theta_rad": fr.at_theta_rad, "arm_angle_rad": fr.arm_at_peak_rad,
            "pressure_angle_rad": fr.pressure_angle_at_peak_rad, "part": part,
            "gears": fr.gravity_m_s2 == 0 and view == "gears"}
    if fr.lift_off:
        return [Finding("hub_lift_off", {**data, "preload_N": fr.preload_N})]
    if fr.peak > avail:
        return [Finding("friction_exceeded", {**data, "required": fr.peak, "available": avail,
                                              "share_slipping": float(np.mean(fr.loads.mu_required
                                                                              > avail))})]
    if fr.peak > 0.8 * avail:
        return [Finding("friction_margin_thin", {**data, "required": fr.peak, "available": avail})]
    return []


def check_hub(sc: Scenario) -> HubCheckResult:
    """Check a hub scenario: closure, interference, friction demand, ripple, concavity.

    Parameters
    ----------
    sc : Scenario
        Validated scenario with ``path.kind = "hub"``.

    Returns
    -------
    HubCheckResult
    """
    pair = solve_hub_scenario(sc)
    cautions = with_safety(HUB_CAUTIONS)
    avail = float(sc.surface.friction)
    out = pair.to_dict()
    if not pair.closed:
        reason = (f"the hub does not close at path.centre_distance_m = {pair.centre_distance:.6g} m"
                  f" ({pair.closure_gap_rad:+.4g} rad from a full turn); give path.ratio instead")
        return HubCheckResult(sc.name, False, [reason], [], out, None, avail, cautions)
    a = assess_hub(pair)
    reasons: list[str] = []
    notes: list[str] = []
    if a.interferes:
        reasons.append(f"the outlines overlap by {-a.least_gap_m * 1000:.3f} mm at wheel angle"
                       f" {a.least_gap_theta_rad:.4f} rad: another part of the wheel meets the hub")
    fr = hub_friction(pair, drive="wheel", available=avail, **hub_load_case(sc, pair))
    found = hub_friction_findings(fr, "hub" if pair.side == "outside" else "ring", sc.path.sim_view)
    for f in found:
        (reasons if f.blocks else notes).append(describe(f))
    # A ring's material lies outside its curve: where the curve bends in, the ring is convex
    # (an internal gear is cut by a shaper cutter anyway), so only external curves get the note.
    concave = [("wheel", a.wheel_concave_radius_m)]
    if pair.side == "outside":
        concave.append(("hub", a.hub_concave_radius_m))
    for what, rad in concave:
        if rad is not None:
            notes.append(f"the {what}'s pitch curve is concave (least radius of curvature"
                         f" {rad * 1000:.2f} mm): as gears, no rack or hob can cut it; a shaper"
                         " cutter of smaller pitch radius can (Litvin et al. 2009 [memory])")
    return HubCheckResult(sc.name, not reasons, reasons, notes, out, a, avail, cautions, fr, found)


@dataclass
class HubSimResult:
    """A simulated hub scenario against its closed form: a gear pair or a carousel.

    Attributes
    ----------
    name : str
        Scenario name.
    figures : dict
        Measured and analytic figures with units in the key names; ``view`` says which run
        (``"gears"``: the driven hub's speed against ``dψ/dθ``; ``"carousel"``: the arm's
        angle against the analytic one from ``ψ(θ)``).
    drifts : bool
        True when the driven member (gears) or the arm (carousel) left the analytic angle by
        more than 0.01 rad.
    cautions : list of str
        Safety cautions.
    """

    name: str
    figures: dict
    drifts: bool
    cautions: list[str]

    def to_dict(self) -> dict:
        """JSON-ready figures."""
        return {"name": self.name, "path": "hub", **self.figures, "drifts": self.drifts,
                "cautions": list(self.cautions)}

    def to_text(self) -> str:
        """The run as text."""
        f = self.figures
        if f.get("view") == "carousel":
            return self._carousel_text()
        lines = [f"scenario: {self.name} (gear pair on fixed centres, simulated in pymunk)",
                 f"driver speed {f['driver_speed_rad_s']:.4g} rad/s for {f['driver_turns']:.4g} turn(s);"
                 f" brake torque on the hub {f['load_torque_Nm']:.4g} N m, preload {f['preload_N']:.4g} N",
                 f"driven/driving speed: measured {f['speed_ratio_min']:.5g} .. {f['speed_ratio_max']:.5g},"
                 f" analytic {f['analytic_speed_ratio_min']:.5g} .. {f['analytic_speed_ratio_max']:.5g}",
                 f"largest error against the analytic ratio: {100 * f['speed_ratio_error_max']:.3f} %",
                 f"driven phase off the analytic by at most {f['phase_drift_rad']:.4g} rad",
                 "pivot distance off the centre distance by at most"
                 f" {1000 * f['centre_distance_error_m']:.4f} mm"]
        if self.drifts:
            lines.append("DRIFTS: the driven member slipped out of phase (more than 0.01 rad);"
                         " raise the friction or the preload")
        lines += caution_lines(self.cautions)
        return "\n".join(lines)

    def _carousel_text(self) -> str:
        f = self.figures
        where = "around the fixed hub" if f["side"] == "outside" else "inside the fixed ring"
        plane = ("vertical drum, gravity in the plane" if f["gravity_in_plane"]
                 else "horizontal carousel, no gravity in the plane")
        lines = [f"scenario: {self.name} (carousel: the wheel rolling {where} on an arm pivoted at"
                 f" its centre; {plane}; simulated in pymunk)",
                 f"wheel speed on the arm {f['wheel_speed_rad_s']:.4g} rad/s for {f['wheel_turns']:.4g}"
                 f" turn(s); preload {f['preload_N']:.4g} N",
                 f"arm swept {f['arm_sweep_rad']:+.5g} rad, analytic {f['analytic_arm_sweep_rad']:+.5g} rad"
                 " (from the hub angle psi(theta))",
                 f"arm angle off the analytic by at most {f['phase_drift_rad']:.4g} rad;"
                 f" at the end {f['arm_drift_end_rad']:+.4g} rad",
                 "axle off its circle by at most"
                 f" {1000 * f['axle_radius_error_m']:.4f} mm"]
        if self.drifts:
            lines.append("DRIFTS: the arm left the analytic angle by more than 0.01 rad (slip at the"
                         " contact, or a step too coarse); raise the friction or the preload,"
                         " or halve run.timestep_s")
        lines += caution_lines(self.cautions)
        return "\n".join(lines)


def simulate_hub(sc: Scenario) -> HubSimResult:
    """Simulate a hub scenario as a gear pair or as a carousel (``path.view``).

    Gear view (outside only; the default there): both parts are plates of the ``[wheel]``
    thickness and density (the wheel's ``mass_kg``/``inertia_kg_m2`` override its own),
    balanced on their pivots. The driver is pressed against the hub by ``path.preload_N``
    (unset: the wheel's weight; the preload a friction drive needs) and turns at
    ``drive.shaft_speed_rad_s`` (mode shaft_speed) or at ``drive.speed_m_s`` over the wheel's
    mean contact radius, its motor limited to ``drive.max_torque_Nm``; the hub is braked by
    ``path.load_torque_Nm``. Reported: the driven speed against ``dψ/dθ``.

    Carousel view (the default inside a ring): the hub fixed, the wheel's axle on a radial
    groove of an arm pivoted at the hub's centre, pressed onto the hub (or the ring) by
    ``path.preload_N`` (unset: the wheel's weight, twice it with ``path.gravity_in_plane``),
    the wheel turned on the arm at the same speed as above. With ``path.gravity_in_plane`` the
    wheel's weight acts in the plane (a vertical drum). Reported: the arm's angle against the
    analytic ``π/2 - ψ(θ)`` (outside) or ``ψ(θ) - π/2`` (inside).

    Parameters
    ----------
    sc : Scenario
        Validated scenario with ``path.kind = "hub"``.

    Returns
    -------
    HubSimResult
    """
    import numpy as np

    from ridesim.scenario.build import wheel_mass

    view = sc.path.sim_view
    if view == "gears" and sc.path.side != "outside":
        raise ScenarioError("path.view = \"gears\" needs path.side = \"outside\"; a ring is"
                            " simulated as a carousel (path.view = \"carousel\")")
    if sc.drive.mode == "torque":
        raise ScenarioError("simulate turns a hub pair's wheel at a constant shaft speed: use"
                            " drive.mode = \"shaft_speed\" (or \"speed\")")
    spec = sc.wheel if sc.wheel is not None else WheelSpec(shape=None)
    pair = solve_hub_scenario(sc)
    if not pair.closed:
        raise ScenarioError("the hub does not close at path.centre_distance_m; give path.ratio")
    th = np.linspace(0.0, 2 * math.pi, 2048, endpoint=False)
    w = hub_drive_speed(sc, pair)
    mw = wheel_mass(sc, pair.wheel)
    turns = float(sc.run.duration_s) * w / (2 * math.pi)
    if view == "carousel":
        from ridesim.sim.hub import run_carousel

        gravity = bool(sc.path.gravity_in_plane)
        preload = hub_load_case(sc, pair)["preload_N"]
        E = pair.centre_distance
        crun = run_carousel(pair, wheel_speed_rad_s=w, turns=turns, timestep_s=float(sc.run.timestep_s),
                            friction=float(sc.surface.friction), preload_N=float(preload),
                            mass_kg=mw.mass_kg, inertia_kg_m2=mw.inertia_kg_m2,
                            arm_inertia_kg_m2=mw.mass_kg * E * E,
                            iterations=int(sc.run.iterations),
                            gravity_m_s2=9.80665 if gravity else 0.0,
                            max_drive_torque_Nm=float(sc.drive.max_torque_Nm))
        expected = pair.poses(crun.theta_rad)[0]
        err = crun.arm_rad - expected
        drift = float(np.max(np.abs(err)))
        figures = {"view": "carousel", "side": pair.side, "gravity_in_plane": gravity,
                   "wheel_speed_rad_s": w, "wheel_turns": turns, "preload_N": float(preload),
                   "arm_angle_start_rad": float(crun.arm_rad[0]),
                   "arm_angle_end_rad": float(crun.arm_rad[-1]),
                   "analytic_arm_angle_end_rad": float(expected[-1]),
                   "arm_sweep_rad": float(crun.arm_rad[-1] - crun.arm_rad[0]),
                   "analytic_arm_sweep_rad": float(expected[-1] - expected[0]),
                   "phase_drift_rad": drift, "arm_drift_end_rad": float(err[-1]),
                   "axle_radius_error_m": float(np.max(np.abs(crun.axle_radius_m - E)))}
        return HubSimResult(sc.name, figures, drift > 0.01, with_safety(HUB_CAUTIONS))

    from ridesim.sim.hub import run_gear_pair

    mh = pair.hub.mass_properties(spec.thickness_m, spec.density_kg_m3)
    load = float(sc.path.load_torque_Nm)
    preload = hub_load_case(sc, pair)["preload_N"]
    run = run_gear_pair(pair, driver_speed_rad_s=w, turns=turns, timestep_s=float(sc.run.timestep_s),
                        friction=float(sc.surface.friction), load_torque_Nm=load,
                        preload_N=float(preload), mass_kg=(mw.mass_kg, mh.mass_kg),
                        inertia_kg_m2=(mw.inertia_kg_m2, mh.inertia_kg_m2),
                        iterations=int(sc.run.iterations),
                        max_drive_torque_Nm=float(sc.drive.max_torque_Nm))
    theta, ratio = run.speed_ratio(window=5)
    an = pair.speed_ratio(theta)
    drift = float(np.max(np.abs(run.psi_rad - pair.hub_angle(run.theta_rad))))
    sr = pair.speed_ratio(th)
    figures = {"view": "gears", "driver_speed_rad_s": w, "driver_turns": turns, "load_torque_Nm": load,
               "preload_N": float(preload),
               "speed_ratio_min": float(ratio.min()), "speed_ratio_max": float(ratio.max()),
               "analytic_speed_ratio_min": float(sr.min()), "analytic_speed_ratio_max": float(sr.max()),
               "speed_ratio_error_max": float(np.max(np.abs(ratio / an - 1.0))),
               "phase_drift_rad": drift,
               "centre_distance_error_m": float(np.max(np.abs(run.centre_distance_m
                                                              - pair.centre_distance)))}
    return HubSimResult(sc.name, figures, drift > 0.01, with_safety(HUB_CAUTIONS))


def render_hub(sc: Scenario, out, *, svg: bool = False, clip: bool = True, clip_s: float = 4.0,
               fps: int = 25, size: tuple[int, int] = (640, 360), progress=None) -> list:
    """Write a hub scenario's pictures (speed-ratio plot, clip) with a captioned ``index.md``.

    Parameters
    ----------
    sc : Scenario
        Validated scenario with ``path.kind = "hub"``.
    out : Path
        Output folder (created).
    svg : bool
        Also write an SVG copy of the plot.
    clip : bool
        Write ``clip.gif`` (one wheel turn relative to the arm over ``clip_s``).
    clip_s : float
        Clip length [s].
    fps : int
        Frame rate [1/s].
    size : (int, int)
        Clip size [px].
    progress : callable, optional
        ``progress(fraction)`` while the clip is drawn.

    Returns
    -------
    list of (Path, str)
        Each file and its caption.
    """
    from pathlib import Path

    from ridesim.render.hub import plot_hub_ratio, render_hub_clip
    from ridesim.render.plots import write_index

    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    pair = solve_hub_scenario(sc)
    if not pair.closed:
        raise ScenarioError("the hub does not close at path.centre_distance_m; give path.ratio")
    items = [plot_hub_ratio(pair, out / "hub_ratio.png")]
    if svg:
        items.append(plot_hub_ratio(pair, out / "hub_ratio.svg"))
    if clip:
        items.append(render_hub_clip(pair, out / "clip.gif", duration_s=clip_s, fps=fps, size=size,
                                     progress=progress))
    where = "around a hub" if pair.side == "outside" else "inside a ring"
    write_index(out, items, title=f"{sc.name}: wheel {where}")
    return items

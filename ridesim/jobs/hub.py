"""Jobs for a wheel rolling around a hub (``path.kind = "hub"``): solve text and check.

The simulation, motor sizing, clip and report of a hub path are not built yet;
:data:`HUB_JOBS` names the jobs that handle one, and :func:`require_line` refuses the
others with one line.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ridesim.assess.hub import HubAssessment, assess_hub
from ridesim.errors import ScenarioError
from ridesim.safety import caution_lines, with_safety
from ridesim.scenario.build import solve_hub_scenario
from ridesim.scenario.load import Scenario

__all__ = ["HUB_JOBS", "HubCheckResult", "check_hub", "solve_hub_text", "require_line"]

#: Jobs (command names) that handle a hub path.
HUB_JOBS = ("solve", "check", "export")

HUB_CAUTIONS = (
    "The hub check is kinematic: rigid pitch curves, contact on the line of centres, no tooth"
    " form, backlash, flex or wear; gears need teeth cut on these pitch curves by a gear"
    " specialist's method.",
    "The friction demand assumes the wheel is pressed against the hub along the line of centres"
    " (a free wheel on its arm); a driven wheel, gravity in the plane or a preload spring change"
    " it.",
)


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
    lines = [f"scenario: {sc.name}",
             f"solved the {'hub' if out['side'] == 'outside' else 'ring'} for the"
             f" {sc.wheel.shape} wheel rolling {where}",
             f"centre distance:       {_mm(out['centre_distance_m'])}",
             f"ratio:                 {out['ratio']:.9g} wheel turns per hub turn"
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
    """

    name: str
    rollable: bool
    reasons: list[str]
    notes: list[str]
    pair: dict
    assessment: HubAssessment | None
    friction_available: float
    cautions: list[str]

    def to_dict(self) -> dict:
        """JSON-ready figures with units in the key names."""
        out = {"name": self.name, "path": "hub", "rollable": self.rollable,
               "reasons": list(self.reasons), "notes": list(self.notes), "solve": dict(self.pair),
               "friction_available": self.friction_available}
        if self.assessment is not None:
            out.update(self.assessment.to_dict())
        out["cautions"] = list(self.cautions)
        return out

    def to_text(self) -> str:
        """The check as text."""
        p = self.pair
        where = "around a hub" if p["side"] == "outside" else "inside a ring"
        lines = [f"scenario: {self.name} (wheel {where})",
                 f"centre distance {p['centre_distance_m']:.6g} m, ratio {p['ratio']:.6g} wheel turns per"
                 " hub turn"]
        a = self.assessment
        if a is not None:
            lines += [
                f"least gap between the outlines: {a.least_gap_m * 1000:+.4f} mm"
                f" (at wheel angle {a.least_gap_theta_rad:.4f} rad; 0 is the contact)",
                f"friction demand: {a.friction_demand:.4g} (pressure angle"
                f" {math.degrees(math.atan(a.friction_demand)):.2f} deg); available"
                f" {self.friction_available:.4g}",
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
    reasons, notes = [], []
    if a.interferes:
        reasons.append(f"the outlines overlap by {-a.least_gap_m * 1000:.3f} mm at wheel angle"
                       f" {a.least_gap_theta_rad:.4f} rad: another part of the wheel meets the hub")
    if a.friction_demand > avail:
        reasons.append(f"the contact needs friction {a.friction_demand:.4g} (load along the line of"
                       f" centres) but surface.friction is {avail:.4g}")
    for what, rad in (("wheel", a.wheel_concave_radius_m), ("hub", a.hub_concave_radius_m)):
        if rad is not None:
            notes.append(f"the {what}'s pitch curve is concave (least radius of curvature"
                         f" {rad * 1000:.2f} mm): as gears, no rack or hob can cut it; a shaper"
                         " cutter of smaller pitch radius can (Litvin et al. 2009 [memory])")
    return HubCheckResult(sc.name, not reasons, reasons, notes, out, a, avail, cautions)

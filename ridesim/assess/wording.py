"""Findings in words: one sentence a builder can act on for each finding code.

The decisions are made from codes and figures (:mod:`ridesim.assess.findings`); this module
only words them, in millimetres and degrees for reading. It sits beside the findings (not in
the output layer) so that every result's ``to_text``, from the metrics layer up, words them
the same way.

Examples
--------
>>> from ridesim.assess.findings import Finding
>>> describe(Finding("lift_off_near", {"lift_off_speed_m_s": 1.2, "speed_m_s": 0.8}))
"the wheels would leave the track above 1.2 m/s, less than twice the drive's 0.8 m/s; limit the speed"
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from typing import Any

from ridesim.assess.findings import Finding

__all__ = ["describe"]


def _deg(rad: float) -> float:
    return math.degrees(rad)


def _not_closed(d: Mapping[str, Any]) -> str:
    return (f"the wheel does not close: after {d['lobes']} track period(s) it is"
            f" {d['closure_gap_rad']:+.4g} rad from a full turn at track.depth_m ="
            f" {d['depth_m']:.6g} m; give track.lobes instead of depth_m to find a closing depth")


def _interference(d: Mapping[str, Any]) -> str:
    first = d.get("first_x_m")
    msg = (f"the wheel's {d['feature']} cuts {1000 * -d['clearance_m']:.1f} mm into the track at"
           f" x = {d['at_x_m']:.3f} m (clearance {1000 * d['clearance_m']:.1f} mm"
           + (f"; the overlap starts at x = {first:.3f} m" if first is not None else "") + ")")
    opening = d.get("cusp_opening_rad")
    if opening is not None:
        return msg + (f": the track's cusps open only {_deg(opening):.0f} deg, less than the 90 deg"
                      " a corner needs to come down into a cusp clear of the neighbouring arch;"
                      " use a wheel with more sides (a regular polygon needs at least 4, and 5 or"
                      " more leaves margin) or blunter corners")
    return msg + ": change the wheel shape or move the axle so the outline clears the track"


def _tangent_corners(d: Mapping[str, Any]) -> str:
    return ("the corners come down into cusps that open at exactly 90 deg, tangent to the next"
            " arch, so they clear it only just: wear, flex or a corner radius can make them catch"
            " (square wheels); round the corners slightly and check the track near the cusps")


def _cusps_exact_model(d: Mapping[str, Any]) -> str:
    return (f"the track has {d['count']} corner(s) per wheel turn where the contact jumps"
            " from one face to the next; this model treats them as exact, but a real wheel's"
            " rounded corners and the impact there add bounce and torque spikes: run"
            " `ridesim simulate` to see them")


def _clearance_sharp_corners(d: Mapping[str, Any]) -> str:
    return (f"clearance was checked for sharp corners; the {1000 * d['corner_radius_m']:g}"
            " mm corner radius changes the contact near the cusps")


def _lift_off(d: Mapping[str, Any]) -> str:
    lift = d.get("lift_off_speed_m_s")
    return (f"a wheel leaves the track at {d['speed_m_s']:.3g} m/s: its normal load reaches zero"
            f" above {lift if lift is not None else 0.0:.3g} m/s (the wheel's centre of mass is off"
            " its axle, or the drive pushes too hard on a slope); run slower, balance the wheel"
            " about its axle or add body weight")


def _hub_where(d: Mapping[str, Any]) -> str:
    on = (f"the contact at {_deg(d['arm_angle_rad']):.0f} deg on the {d['part']}" if d.get("gears")
          else f"arm at {_deg(d['arm_angle_rad']):.0f} deg from +x")
    return (f"at wheel angle {d['at_theta_rad']:.3f} rad ({on}, pressure angle"
            f" {_deg(d['pressure_angle_rad']):.0f} deg)")


def _hub_friction_exceeded(d: Mapping[str, Any]) -> str:
    return (f"peak friction demand {d['required']:.2f} exceeds the surface's {d['available']:.2f}"
            f" {_hub_where(d)}: the wheel will slip on the {d['part']} there; use a grippier"
            " surface, a stronger preload (path.preload_N), a lighter brake or a gentler pitch"
            " curve (a higher ratio, a rounder wheel)")


def _friction_exceeded(d: Mapping[str, Any]) -> str:
    if "at_theta_rad" in d:
        return _hub_friction_exceeded(d)
    acc = d.get("accel_m_s2")
    during = "" if acc is None else (f" while accelerating at {acc:.3g} m/s^2"
                                     f" ({d['required_steady']:.2f} at steady speed)")
    return (f"peak friction demand {d['required']:.2f} exceeds the surface's {d['available']:.2f}"
            f" at x = {d['at_x_m']:.3f} m, where the track slopes {_deg(d['slope_rad']):.0f} deg"
            f"{during}: the wheel will slip there; use a grippier surface (rubber on dry concrete"
            " is about 1.0) or a gentler track (more wheel sides, a smaller wave, a rounder wheel)"
            + (", or accelerate more gently" if during else ""))


def _friction_margin_thin(d: Mapping[str, Any]) -> str:
    if "at_theta_rad" in d:
        return (f"friction margin is thin: the contact needs {d['required']:.2f} of the surface's"
                f" {d['available']:.2f} {_hub_where(d)}; friction coefficients vary widely with"
                " dirt, moisture and wear, so measure it")
    return (f"friction margin is thin: the track needs {d['required']:.2f} of the surface's"
            f" {d['available']:.2f}; friction coefficients vary widely with dirt, moisture and"
            " wear, so measure it")


def _lift_off_near(d: Mapping[str, Any]) -> str:
    return (f"the wheels would leave the track above {d['lift_off_speed_m_s']:.3g} m/s, less than"
            f" twice the drive's {d['speed_m_s']:.3g} m/s; limit the speed")


def _wheelbase_out_of_phase(d: Mapping[str, Any]) -> str:
    tc = d["tolerance_cost"]
    return (f"the axles are coupled but the wheelbase {d['wheelbase_m']:.4f} m is"
            f" {d['wheelbase_periods']:.3f} track periods, not a whole number"
            f" ({1000 * abs(d['wheelbase_error_m']):.2f} mm from {d['whole_periods']} x"
            f" {d['period_m']:.4f} m, more than the {1000 * d['wheelbase_tolerance_m']:g} mm build"
            " tolerance): wheels turning at one angle meet the track out of phase, drifting up to"
            f" {_deg(d['phase_error_max_rad']):.2f} deg from their ideal angles, so the cart bounces"
            f" {1000 * d['bounce_m']:.2f} mm, pitches {_deg(d['pitch_range_rad']):.3f} deg and the"
            f" wheels skid {1000 * d['skid_m']:.2f} mm a wheel turn (off by the tolerance:"
            f" {1000 * tc['bounce_m']:.2f} mm, {_deg(tc['pitch_range_rad']):.3f} deg,"
            f" {1000 * tc['skid_m']:.2f} mm); make the wheelbase {d['fix_text']}"
            f" (vehicle.wheelbase_periods = {d['fix_periods']}) or uncouple the axles")


def _wheelbase_uncoupled_rates(d: Mapping[str, Any]) -> str:
    return (f"the wheelbase is {d['wheelbase_periods']:.3f} track periods: the uncoupled wheels"
            " each roll ideally but their shafts turn at different rates at each moment (a shared"
            f" shaft would skid {1000 * d['skid_m']:.2f} mm a wheel turn), so each driven wheel"
            f" needs its own motor or a differential, or make the wheelbase {d['fix_text']}")


def _axles_lift(d: Mapping[str, Any]) -> str:
    return ("axle(s) " + ", ".join(str(i) for i in d["axles"])
            + " lift off the track during the cycle")


def _mounting_errors(d: Mapping[str, Any]) -> str:
    return ("mounting errors on the shared shaft ("
            + ", ".join(f"axle {i} {_deg(e):+.2f} deg" for i, e in enumerate(d["offsets_rad"]))
            + f") make the cart bounce {1000 * d['bounce_m']:.2f} mm and pitch"
            f" {_deg(d['pitch_range_rad']):.2f} deg")


def _seat_band_limited(d: Mapping[str, Any]) -> str:
    return (f"the seat acceleration estimate keeps vibration up to {d['band_hz']:.3g} Hz only"
            f" (the cart takes {d['turn_s']:.3g} s a wheel turn)")


def _shaft_surge_friction(d: Mapping[str, Any]) -> str:
    return (f"while surging, the contact may need friction up to {d['required_bound']:.2f} (bound:"
            f" peak surge acceleration everywhere), above the surface's {d['available']:.2f}"
            f" (steady speed: {d['required_steady']:.2f})")


def _shaft_surge(d: Mapping[str, Any]) -> str:
    return (f"a constant shaft speed of {d['shaft_speed_rad_s']:.3g} rad/s makes the ground speed"
            f" surge between {d['speed_min_m_s']:.3g} and {d['speed_max_m_s']:.3g} m/s"
            f" (up to {d['accel_peak_m_s2']:.3g} m/s^2): each motor then needs"
            f" {d['peak_Nm']:.3g} N m peak, {d['rms_Nm']:.3g} N m r.m.s., far more than at a"
            " steady ground speed, plus impacts where the contact jumps; a speed-regulating drive"
            " avoids it")


def _drive_torque_limit(d: Mapping[str, Any]) -> str:
    return (f"the drive's torque limit {d['limit_Nm']:.3g} N m per motor is below the"
            f" {d['peak_Nm']:.3g} N m peak a motor needs ({d['phase_label']}); the cart will slow"
            " near the peaks or not start")


def _torque_drive_balance(d: Mapping[str, Any]) -> str:
    return (f"a constant {d['balance_Nm']:.3g} N m per motor balances the rolling resistance;"
            f" the drive's {d['torque_Nm']:.3g} N m will keep "
            + ("accelerating the cart: limit its speed" if d["torque_Nm"] > d["balance_Nm"]
               else "slowing the cart"))


def _hub_lift_off(d: Mapping[str, Any]) -> str:
    return (f"the wheel leaves the {d['part']} {_hub_where(d)}: the contact force there is not"
            f" positive with a preload of {d['preload_N']:.3g} N; raise path.preload_N (a spring"
            " pressing the axle onto the " + d["part"] + ") or lighten the brake")


def _creep(d: Mapping[str, Any]) -> str:
    parts = []
    if d["drift_exceeds"]:
        parts.append(f"wheel {d['drift_axle']} ended {d['drift_rad']:+.3g} rad out of phase with its"
                     " track (" + ("behind" if d["drift_rad"] < 0 else "ahead") + "; rolling without"
                     f" slip keeps 0, a finding above {d['drift_limit_rad']:g} rad)")
    if d["growing"]:
        lead = "its axle bounce" if d["drift_exceeds"] else "the axle bounce"
        parts.append(f"{lead} grows by {1e3 * d['trend_m_s']:.3g} mm/s"
                     f" ({1e3 * d['first_window_bounce_m']:.3g} mm in the first {d['window_s']:.3g} s,"
                     f" {1e3 * d['last_window_bounce_m']:.3g} mm in the last)")
        if not d["drift_exceeds"] and d.get("drift_rad") is not None:
            parts[-1] += f" while the phase moved {d['drift_rad']:+.3g} rad"
    if d["cause"] == "slip":
        cause = (f"the wheel slipped at the contact ({1e3 * d['slip_scrub_m']:.3g} mm of rim scrub"
                 " above the slip threshold): more friction, or less torque, keeps it in phase")
    else:
        seen = (f" (the slip probe saw {1e3 * d['slip_scrub_m']:.3g} mm of rim scrub against"
                f" {1e3 * d['creep_m']:.3g} mm of creep)" if d["slip_scrub_m"] > 0 else "")
        cause = (f"not slip the probe can see{seen}: the phase is lost a little at contact changes"
                 " and a wheel out of phase meets the next arch or kink early, which loses more")
        if d.get("corner_radius_m"):
            cause += (f"; the wheel's corners are rounded by {1e3 * d['corner_radius_m']:.3g} mm while"
                      " the track's valleys were solved for sharp ones, so each corner rocks across"
                      " its valley instead of rolling into it (measured on a five-lobed wheel on a"
                      " sawtooth: 2.1 mm corners let the bounce grow, 0.2 mm kept it steady)")
        if d.get("iterations"):
            cause += (f"; with run.iterations = {d['iterations']} the contact solver's friction may"
                      " not converge and the contact creeps")
    rec = (f"rerun with run.timestep_s = {d['recommended_timestep_s']:g} s, or with run.iterations ="
           f" {d['recommended_iterations']} and run.timestep_s ="
           f" {d['recommended_timestep_with_iterations_s']:g} s"
           + (", and set wheel.corner_radius_m to the real edge radius (or, for a polygon wheel,"
              " wheel.fit_track_to_corners = true)" if d.get("corner_radius_m") else "")
           + "; if the drift stays, the model cannot hold this pair in phase: read bounce and torque"
           " peaks as those of an out-of-phase ride, not of the ideal pair")
    return "CREEP: " + "; ".join(parts) + f". Cause: {cause}. Recommended: {rec}."


_WORDS: dict[str, Callable[[Mapping[str, Any]], str]] = {
    "not_closed": _not_closed,
    "interference": _interference,
    "tangent_corners": _tangent_corners,
    "cusps_exact_model": _cusps_exact_model,
    "clearance_sharp_corners": _clearance_sharp_corners,
    "lift_off": _lift_off,
    "friction_exceeded": _friction_exceeded,
    "friction_margin_thin": _friction_margin_thin,
    "lift_off_near": _lift_off_near,
    "wheelbase_out_of_phase": _wheelbase_out_of_phase,
    "wheelbase_uncoupled_rates": _wheelbase_uncoupled_rates,
    "axles_lift": _axles_lift,
    "mounting_errors": _mounting_errors,
    "seat_band_limited": _seat_band_limited,
    "shaft_surge_friction": _shaft_surge_friction,
    "shaft_surge": _shaft_surge,
    "drive_torque_limit": _drive_torque_limit,
    "torque_drive_balance": _torque_drive_balance,
    "hub_lift_off": _hub_lift_off,
    "creep": _creep,
}


def describe(finding: Finding) -> str:
    """One sentence for a finding.

    Parameters
    ----------
    finding : Finding
        A finding of :mod:`ridesim.assess.findings`.

    Returns
    -------
    str
    """
    return _WORDS[finding.code](finding.data)

"""The solve job: the pair of a scenario, its figures, and the whole-period wheelbases.

The command line, sweeps and the design search all call :func:`solve_with_wheelbases`, so a
solve gives the same figures wherever it runs; :func:`solve_text` words them for a person.
"""

from __future__ import annotations

from typing import Any

from ridesim.errors import InputError
from ridesim.scenario.load import Scenario

__all__ = ["WHEELBASE_LIST_MAX", "solve_with_wheelbases", "solve_text"]

WHEELBASE_LIST_MAX = 10000
"""Most whole-period wheelbases `solve` lists (a range wider than that is refused)."""


def solve_with_wheelbases(sc: Scenario, *, wheelbase_range_m=None) -> dict[str, Any]:
    """Solve a scenario's pair; its figures with the whole-period wheelbases.

    Parameters
    ----------
    sc : Scenario
        Validated scenario.
    wheelbase_range_m : (float, float), optional
        Range [m] of the listed whole-period wheelbases; default one wheel diameter
        (2 r_max: neighbouring wheels cannot touch) to five.

    Returns
    -------
    dict
        :meth:`RollingPair.to_dict` plus ``wheelbase_range_m``, ``whole_period_wheelbases_m``
        and ``whole_period_wheelbase_periods`` when the wheel closes.

    Raises
    ------
    InputError
        For a range that is not two lengths 0 <= MIN <= MAX, or that holds more than
        :data:`WHEELBASE_LIST_MAX` periods.
    """
    from ridesim.model.vehicle import whole_period_wheelbases_m
    from ridesim.scenario.build import solve_scenario

    out = solve_scenario(sc).to_dict()
    if sc.path.is_hub or not out["closed"]:  # a hub pair has no wheelbase to list
        return out
    P, r_max = float(out["period_m"]), float(out["depth_max_m"])
    rng = wheelbase_range_m
    lo, hi = (2.0 * r_max, 10.0 * r_max) if rng is None else (float(rng[0]), float(rng[1]))
    if not (0.0 <= lo <= hi < float("inf")):
        raise InputError(f"--wheelbase-range must be two lengths 0 <= MIN <= MAX in metres,"
                         f" got {lo:g} {hi:g}")
    if hi / P > WHEELBASE_LIST_MAX:
        raise InputError(f"--wheelbase-range {lo:g} {hi:g} m holds more than"
                         f" {WHEELBASE_LIST_MAX} track periods of {P:.6g} m; give a narrower range")
    wbs = whole_period_wheelbases_m(P, lo, hi)
    out["wheelbase_range_m"] = [lo, hi]
    out["whole_period_wheelbases_m"] = [w for _, w in wbs]
    out["whole_period_wheelbase_periods"] = [k for k, _ in wbs]
    return out


def _fmt_m(v: float) -> str:
    return f"{v:.6g} m ({v * 1000:.2f} mm)"


def solve_text(sc: Scenario, out: dict[str, Any]) -> str:
    """The solve figures in words, as ``ridesim solve`` prints them.

    Parameters
    ----------
    sc : Scenario
        The scenario solved.
    out : dict
        :func:`solve_with_wheelbases` figures.

    Returns
    -------
    str
    """
    if sc.path.is_hub:
        from ridesim.jobs.hub import solve_hub_text

        return solve_hub_text(sc, out)
    lines = [f"scenario: {sc.name}"]
    if out["solved_from"] == "wheel":
        lines.append(f"solved the track for the {out['wheel']['kind'].replace('_', ' ')} wheel")
    else:
        shape = sc.track.shape if sc.track is not None else "given"
        lines.append(f"solved the wheel for the {shape} track: lowered by"
                     f" depth {_fmt_m(out['depth_m'])}")
    lines += [
        f"track period:          {_fmt_m(out['period_m'])}",
        f"revolution length:     {_fmt_m(out['revolution_length_m'])}"
        f"  ({out['lobes']} period(s) per wheel turn)",
        f"contact depth range:   {out['depth_min_m']:.6g} .. {out['depth_max_m']:.6g} m below the axle",
    ]
    for kind, label in (("valley", "cusps"), ("crest", "crest corners")):
        cs = [c for c in out["cusps"] if c.get("kind", "valley") == kind]
        if cs:
            xs = ", ".join(f"{c['x_m']:.4f}" for c in cs[:8])
            more = "" if len(cs) <= 8 else f", ... ({len(cs)} in all)"
            lines.append(f"{label} in one revolution at x = {xs}{more} m")
    if not out["cusps"]:
        lines.append("no cusps (smooth track)")
    if not out["closed"]:
        lines.append(f"closure: NOT closed; after {out['lobes']} period(s) the wheel is"
                     f" {out['closure_gap_rad']:+.6g} rad from a full turn")
        return "\n".join(lines)
    lines.append("closure: the wheel closes after one revolution")
    lo, hi = out["wheelbase_range_m"]
    P = float(out["period_m"])
    wbs = list(zip(out["whole_period_wheelbase_periods"], out["whole_period_wheelbases_m"],
                   strict=True))
    lines.append(f"whole-period wheelbases from {lo:.4f} to {hi:.4f} m (coupled axles meet the"
                 " track in phase; vehicle.wheelbase_periods = k):")
    if not wbs:
        lines.append("  none in this range")
    else:
        shown = ", ".join(f"{w:.4f} m (k = {k})" for k, w in wbs[:12])
        more = "" if len(wbs) <= 12 else f", ... ({len(wbs)} in all, every {P:.6g} m)"
        lines.append(f"  {shown}{more}")
    return "\n".join(lines)

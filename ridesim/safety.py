"""The safety cautions that every figure ridesim gives carries: one list for all commands.

The checks, the simulation, the motor sizing, the comfort grade and the report each add
cautions of their own about their model's limits; :func:`with_safety` puts this list first and
drops repeats, so a result that gathers several (a simulation with its comfort grade, the
report) says each thing once.
"""

from __future__ import annotations

from collections.abc import Iterable

__all__ = ["SAFETY_CAUTIONS", "with_safety", "caution_lines"]

SAFETY_CAUTIONS = (
    "These figures are engineering estimates from idealised models (rigid wheel and track, planar"
    " motion, no flex or wear); they are not certified ratings: build a prototype and measure it"
    " before relying on them.",
    "Where a wheel corner comes down into a cusp, and at chains, sprockets and gears, fingers and"
    " feet can be crushed or sheared: guard these points (EN ISO 13854 minimum gaps, ISO 13857"
    " reach distances).",
    "Carts on shaped tracks can slip near the cusps, stop suddenly, run away or derail: fit end"
    " stops, speed limiting, an emergency stop and lateral guidance, keep people clear of the"
    " path, and supervise riders (size and weight limits).",
    "Size motors, gearboxes and brakes with margin over these figures and limit the motor"
    " current: slip, rider weight, friction and build tolerances change the loads, and a stalled"
    " or runaway drive can pinch, throw or run over people.",
    "Follow local codes and the applicable standards (amusement rides: ASTM F2291, EN 13814,"
    " ISO 17842-1; machinery: ISO 12100 risk assessment; toys: EN 71-1, ASTM F963) and have any"
    " ride-on build reviewed by a licensed engineer.",
)


def with_safety(*groups: Iterable[str]) -> list[str]:
    """The safety cautions, then every caution of ``groups`` not already said, in order.

    Parameters
    ----------
    *groups : iterables of str
        Cautions of the result at hand (its model's limits, its inputs' assumptions).

    Returns
    -------
    list of str

    Examples
    --------
    >>> notes = with_safety(["a short record gives an indicative value only"], SAFETY_CAUTIONS)
    >>> len(notes) == len(SAFETY_CAUTIONS) + 1
    True
    """
    out = list(SAFETY_CAUTIONS)
    seen = set(out)
    for group in groups:
        for text in group:
            if text not in seen:
                seen.add(text)
                out.append(text)
    return out


def caution_lines(cautions: Iterable[str]) -> list[str]:
    """Text lines of a caution list: the safety cautions under one heading, the rest under another.

    Parameters
    ----------
    cautions : iterable of str
        A result's cautions (as from :func:`with_safety`).

    Returns
    -------
    list of str

    Examples
    --------
    >>> caution_lines(with_safety(["x"]))[0], caution_lines(with_safety(["x"]))[-2:]
    ('safety:', ['limits of this result:', '  - x'])
    """
    cautions = list(cautions)
    safety = [c for c in cautions if c in SAFETY_CAUTIONS]
    rest = [c for c in cautions if c not in SAFETY_CAUTIONS]
    lines = []
    if safety:
        lines.append("safety:")
        lines += [f"  - {c}" for c in safety]
    if rest:
        lines.append("limits of this result:")
        lines += [f"  - {c}" for c in rest]
    return lines

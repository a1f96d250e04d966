"""Findings: what an assessment found, as a code and its figures; words come at the edge.

A verdict is decided from codes and figures, never from the wording of a message, and the
same finding can be worded for a terminal, a report or a translation without touching the
decision. :mod:`ridesim.assess.wording` turns each code into a sentence a builder can act on.

Every code is listed in :data:`CODES` with whether it blocks the roll and what it means.
Figures in ``data`` carry their unit in the key name (``bounce_m``, ``slope_rad``).

Examples
--------
>>> f = Finding("friction_exceeded", {"required": 0.9, "available": 0.7})
>>> f.blocks, f.to_dict()["code"]
(True, 'friction_exceeded')
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import field
from typing import Any

from ridesim.errors import InputError
from ridesim.records import record

__all__ = ["CODES", "Finding"]

#: code -> (blocks the roll, meaning).
CODES: dict[str, tuple[bool, str]] = {
    "not_closed": (True, "the wheel does not close after its track periods"),
    "interference": (True, "part of the wheel outline cuts into the track during the roll"),
    "tangent_corners": (False, "corners come down into cusps that open at exactly 90 deg"),
    "cusps_exact_model": (False, "the contact jumps at cusps, which the exact model idealises"),
    "clearance_sharp_corners": (False, "clearance was checked for sharp corners on a rounded wheel"),
    "lift_off": (True, "a wheel's normal load reaches zero at the drive's speed"),
    "friction_exceeded": (True, "the contact needs more friction than the surface supplies"),
    "friction_margin_thin": (False, "the contact needs more than 80 % of the surface's friction"),
    "lift_off_near": (False, "the wheels would leave the track below twice the drive's speed"),
    "wheelbase_out_of_phase": (True, "coupled axles meet the track out of phase, at a cost above"
                                     " the build tolerance's"),
    "wheelbase_uncoupled_rates": (False, "uncoupled shafts turn at different rates on this"
                                         " wheelbase"),
    "axles_lift": (False, "some axles lift off the track during the cycle"),
    "mounting_errors": (False, "mounting errors on a shared shaft make the cart bounce and pitch"),
    "seat_band_limited": (False, "the seat acceleration estimate covers part of the ISO 2631-1"
                                 " band only"),
    "shaft_surge_friction": (False, "a constant shaft speed's surge may need more friction"),
    "shaft_surge": (False, "a constant shaft speed makes the ground speed surge"),
    "drive_torque_limit": (False, "the drive's torque limit is below the peak a motor needs"),
    "torque_drive_balance": (False, "a constant torque drive accelerates or slows the cart"),
    "hub_lift_off": (True, "the wheel leaves the hub or ring somewhere in the cycle"),
    "creep": (False, "a simulated wheel crept out of phase with its track, or its bounce grew"),
}


@record
class Finding:
    """One thing an assessment found.

    Attributes
    ----------
    code : str
        One of :data:`CODES`.
    data : Mapping
        The figures behind it, units in the key names.
    """

    code: str
    data: Mapping[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        if self.code not in CODES:
            raise InputError(f"finding code must be one of {', '.join(sorted(CODES))},"
                             f" got {self.code!r}")

    @property
    def blocks(self) -> bool:
        """True when this finding alone means the build does not roll as designed."""
        return CODES[self.code][0]

    def to_dict(self) -> dict[str, Any]:
        """The finding as JSON: ``code``, ``blocks`` and its figures.

        Returns
        -------
        dict
        """
        return {"code": self.code, "blocks": self.blocks, **dict(self.data)}

"""The axle path: a straight line (a track below it) or a circle about a hub.

On a line the axle runs along the x axis and the contact is straight below it
(``r = -y``, ``dx = r dθ``). About a hub the axle stays at the centre distance
``E`` from the hub's centre and the contact lies on the line of centres: outside
the hub ``r + ρ = E``, inside a ring ``ρ - r = E``, with ``r dθ = ρ dψ`` (the
pitch-curve relations of non-circular gears: Litvin & Fuentes, *Gear Geometry and
Applied Theory*, 2nd ed., 2004; Litvin, Fuentes-Aznar, Gonzalez-Perez & Hayasaka,
*Noncircular Gears: Design and Generation*, 2009).
"""

from __future__ import annotations

from ridesim.errors import InputError
from ridesim.model.checks import positive
from ridesim.records import record
from ridesim.scenario.schema import HUB_SIDES, PATH_KINDS

__all__ = ["AxlePath", "PATH_KINDS", "HUB_SIDES"]

# PATH_KINDS (kinds of axle path) and HUB_SIDES (around the hub, or inside it: a ring) are
# the scenario keys' choices, defined once in the key table.


def _opt_positive(name: str, value: float | None) -> float | None:
    if value is None:
        return None
    return positive(name, value, unit="")


@record
class AxlePath:
    """Where the axle runs.

    Attributes
    ----------
    kind : str
        ``"line"`` (a horizontal straight line) or ``"hub"`` (a circle about a hub's centre).
    side : str
        For a hub: ``"outside"`` (the wheel rolls around the hub) or ``"inside"`` (inside a
        ring). Ignored on a line.
    centre_distance_m : float or None
        Hub only: the distance ``E`` [m] from the hub's centre to the axle, when given.
    ratio : float or None
        Hub only: wheel turns per hub turn, when given (the solver then finds ``E``).
    """

    kind: str = "line"
    side: str = "outside"
    centre_distance_m: float | None = None
    ratio: float | None = None

    def __post_init__(self) -> None:
        if self.kind not in PATH_KINDS:
            raise InputError(f"path kind must be one of {', '.join(PATH_KINDS)}, got {self.kind!r}")
        if self.side not in HUB_SIDES:
            raise InputError(f"path side must be one of {', '.join(HUB_SIDES)}, got {self.side!r}")
        e = _opt_positive("centre_distance_m", self.centre_distance_m)
        k = _opt_positive("ratio", self.ratio)
        if self.kind == "line" and (e is not None or k is not None):
            raise InputError("centre_distance_m and ratio belong to a hub path; set kind = \"hub\"")
        if e is not None and k is not None:
            raise InputError("give centre_distance_m or ratio for a hub path, not both")
        object.__setattr__(self, "centre_distance_m", e)
        object.__setattr__(self, "ratio", k)

    @property
    def is_hub(self) -> bool:
        """True for an axle on a circle about a hub."""
        return self.kind == "hub"

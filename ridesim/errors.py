"""Error types: every message names the bad input, its value and the fix."""

__all__ = [
    "RidesimError",
    "InputError",
    "FormulaError",
    "ScenarioError",
    "GeometryError",
    "ClosureError",
    "SimulationError",
]


class RidesimError(Exception):
    """Base class of every error ridesim raises on purpose."""


class InputError(RidesimError, ValueError):
    """A parameter is out of range, of the wrong type, or inconsistent."""


class FormulaError(InputError):
    """A user formula cannot be parsed or uses a name that is not allowed."""


class ScenarioError(InputError):
    """A scenario or sweep file has a bad, missing or unknown key (message names the key path)."""


class GeometryError(InputError):
    """A wheel or track shape cannot be used (not star-shaped, axle outside, track above the axle)."""


class ClosureError(InputError):
    """No track depth closes the wheel for the requested number of lobes."""


class SimulationError(RidesimError, RuntimeError):
    """The rigid-body simulation became unphysical (tunnelling, NaN, energy blow-up)."""

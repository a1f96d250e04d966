"""ridesim: non-circular wheels, the tracks they roll on, and whether a real build will ride.

The package face re-exports the model and solver; plotting, clips and the
simulator are imported from their own modules when used.
"""

from ridesim._version import __version__
from ridesim.errors import (
    ClosureError,
    FormulaError,
    GeometryError,
    InputError,
    RidesimError,
    ScenarioError,
    SimulationError,
)
from ridesim.model.path import AxlePath
from ridesim.model.track import Track
from ridesim.model.wheel import MassProperties, Wheel
from ridesim.solve.forward import track_for
from ridesim.solve.hub import HubPair, gears_for_ratio, hub_for, wheel_for_hub
from ridesim.solve.inverse import closure_depths, wheel_for
from ridesim.solve.pair import Cusp, RollingPair

__all__ = [
    "__version__",
    "AxlePath",
    "ClosureError",
    "Cusp",
    "FormulaError",
    "GeometryError",
    "HubPair",
    "InputError",
    "MassProperties",
    "RidesimError",
    "RollingPair",
    "ScenarioError",
    "SimulationError",
    "Track",
    "Wheel",
    "closure_depths",
    "gears_for_ratio",
    "hub_for",
    "track_for",
    "wheel_for",
    "wheel_for_hub",
]

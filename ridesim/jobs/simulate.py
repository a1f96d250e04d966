"""The simulate job: a scenario's rigid-body simulation (pymunk) and the ride measured from it.

Builds the engine from the scenario (:class:`ridesim.sim.run.PymunkEngine`), runs it, and
measures bounce, slip, torque, speed, drive and comfort from its probes
(:class:`ridesim.metrics.ride.SimResult`).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from pathlib import Path

import numpy as np

from ridesim.metrics.ride import SimResult

__all__ = ["simulate", "write_probes"]


def simulate(scenario, *, progress: Callable[[float], None] | None = None, pair=None,
             **options) -> SimResult:
    """Run the rigid-body simulation of a scenario and measure the ride.

    Parameters
    ----------
    scenario : Scenario
        Validated scenario (``ridesim.scenario.load.load_scenario``).
    progress : callable, optional
        Called with the fraction done (0 to 1) as the run advances.
    pair : RollingPair, optional
        The solved pair, when already at hand.
    **options
        Build settings of :class:`ridesim.sim.world.WorldOptions` (``grade_rad``, ...).

    Returns
    -------
    SimResult

    Raises
    ------
    SimulationError
        When the run becomes unphysical (tunnelling, NaN, blow-up); the message names the fix.
    """
    from ridesim.sim.run import PymunkEngine

    eng = PymunkEngine.from_scenario(scenario, pair, **options)
    probes = eng.run(progress=progress)
    if not math.isfinite(float(np.sum(probes.axle_y_m))):
        from ridesim.errors import SimulationError

        raise SimulationError("simulation produced NaN axle heights; halve run.timestep_s")
    return SimResult.from_probes(probes, name=scenario.name)


def write_probes(result: SimResult, path: str | Path) -> Path:
    """Write a run's probe time series as CSV, atomically (temporary file, then rename).

    Parameters
    ----------
    result : SimResult
        A finished run.
    path : str or Path
        Destination file.

    Returns
    -------
    Path
        The written file.
    """
    from ridesim.export.results import write_text_atomic

    return write_text_atomic(path, result.probes_csv())

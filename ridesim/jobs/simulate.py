"""The simulate job: a scenario's rigid-body simulation (pymunk) and the ride measured from it.

Builds the engine from the scenario (:class:`ridesim.sim.run.PymunkEngine`), runs it, and
measures bounce, slip, torque, speed, drive and comfort from its probes
(:class:`ridesim.metrics.ride.SimResult`).
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from pathlib import Path

import numpy as np

from ridesim.metrics import ride
from ridesim.metrics.ride import SimResult

__all__ = ["simulate", "write_probes", "REFINE_STEP_FACTOR"]

REFINE_STEP_FACTOR = 0.2
"""The step of a rerun after a run crept, as a fraction of the step that crept: the first
setting the creep finding recommends (:func:`ridesim.metrics.ride.creep_findings`)."""


def simulate(scenario, *, progress: Callable[[float], None] | None = None, pair=None,
             refine_on_creep: bool = False, **options) -> SimResult:
    """Run the rigid-body simulation of a scenario and measure the ride.

    Parameters
    ----------
    scenario : Scenario
        Validated scenario (``ridesim.scenario.load.load_scenario``).
    progress : callable, optional
        Called with the fraction done (0 to 1) as the run advances.
    pair : RollingPair, optional
        The solved pair, when already at hand.
    refine_on_creep : bool, optional
        When the run creeps (:attr:`SimResult.creeps`), run it once more with the step cut to
        :data:`REFINE_STEP_FACTOR` of ``run.timestep_s`` (five times the steps) and return that
        run, with a caution naming both steps; a run that still creeps keeps its finding.
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
    res = _run(scenario, progress, pair, options)
    if not (refine_on_creep and res.creeps):
        return res
    dt = float(scenario.run.timestep_s)
    fine = dataclasses.replace(scenario, run=dataclasses.replace(scenario.run,
                                                                 timestep_s=REFINE_STEP_FACTOR * dt))
    drift = res.phase_drift_rad
    what = (f"a wheel ended {drift:+.3g} rad out of phase" if drift is not None
            and abs(drift) > ride.PHASE_DRIFT_FINDING_RAD else "its axle bounce grew")
    note = (f"run.timestep_s = {fine.run.timestep_s:g} s was chosen: at {dt:g} s the run crept ({what});"
            " set run.timestep_s in the scenario to keep this step")
    return _run(fine, progress, pair, options, [note])


def _run(scenario, progress, pair, options: dict, cautions: list | None = None) -> SimResult:
    """One engine run of a scenario, measured."""
    from ridesim.sim.run import PymunkEngine

    eng = PymunkEngine.from_scenario(scenario, pair, **options)
    probes = eng.run(progress=progress)
    if not math.isfinite(float(np.sum(probes.axle_y_m))):
        from ridesim.errors import SimulationError

        raise SimulationError("simulation produced NaN axle heights; halve run.timestep_s")
    return SimResult.from_probes(probes, name=scenario.name, cautions=cautions)


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

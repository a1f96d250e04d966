"""The application layer: the jobs a scenario can be run through.

One module a job, each orchestrating the pure layers below it (scenario, model, solve,
assess, sim, metrics, render, export):

* :mod:`.solve` -- the pair, its figures and the whole-period wheelbases;
* :mod:`.check` -- will it roll (clearance, friction, torque by phase, cart phasing);
* :mod:`.simulate` -- the rigid-body run and the ride measured from it;
* :mod:`.size_motor` -- the drive over a duty cycle, per motor;
* :mod:`.render` -- pictures and the clip; :mod:`.report` -- the HTML page;
* :mod:`.sweep` -- many cases of one job on a process pool or a Dask cluster.

:func:`run_job` runs the figure-producing jobs by name and returns JSON-ready dicts; the
command line, sweeps and design searches call it, so every entry point computes exactly
the same figures. Each layer is imported only when its job runs.
"""

from __future__ import annotations

from collections.abc import Callable

from ridesim.scenario.load import Scenario

__all__ = ["JOBS", "run_job"]


def _solve(sc: Scenario, progress=None) -> dict:
    from ridesim.jobs.solve import solve_with_wheelbases

    return solve_with_wheelbases(sc)


def _check(sc: Scenario, progress=None) -> dict:
    from ridesim.jobs.check import check_scenario

    return check_scenario(sc).to_dict()


def _simulate(sc: Scenario, progress=None) -> dict:
    if sc.path.is_hub:
        from ridesim.jobs.hub import simulate_hub

        return simulate_hub(sc).to_dict()
    from ridesim.jobs.simulate import simulate

    return simulate(sc, progress=progress).to_dict()


def _size_motor(sc: Scenario, progress=None) -> dict:
    from ridesim.jobs.size_motor import size_motor

    return size_motor(sc).to_dict()


#: Job name -> function(scenario, progress=None) -> dict.
JOBS: dict[str, Callable[..., dict]] = {
    "solve": _solve,
    "check": _check,
    "simulate": _simulate,
    "size-motor": _size_motor,
}


def run_job(name: str, sc: Scenario, progress=None) -> dict:
    """Run one job on a scenario.

    Parameters
    ----------
    name : str
        One of :data:`JOBS`.
    sc : Scenario
        Validated scenario.
    progress : callable, optional
        ``progress(fraction)`` for long jobs (simulation).

    Returns
    -------
    dict
        The job's JSON-ready result.
    """
    from ridesim.export.results import json_ready
    from ridesim.jobs.hub import require_line

    require_line(sc, name)
    return json_ready(JOBS[name](sc, progress=progress))

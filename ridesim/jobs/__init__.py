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

import contextlib
import math
import os
import warnings
from collections.abc import Callable, Iterator

from ridesim.scenario.load import Scenario

__all__ = ["JOBS", "run_job", "numeric_warnings", "check_figures", "failure_text"]


def _non_finite(data, path: str = "") -> tuple[str, float] | None:
    """The first number of a result that is not finite, with its dotted path; None: none."""
    stack = [(data, path)]
    while stack:
        value, where = stack.pop()
        if isinstance(value, dict):
            stack.extend((v, f"{where}.{k}" if where else str(k)) for k, v in value.items())
        elif isinstance(value, (list, tuple)):
            stack.extend((v, f"{where}[{i}]") for i, v in enumerate(value))
        elif isinstance(value, float) and not math.isfinite(value):
            return where, value
        elif hasattr(value, "dtype") and bool(getattr(value, "size", False)):
            import numpy as np

            arr = np.asarray(value)
            if arr.dtype.kind == "f" and not np.all(np.isfinite(arr)):
                return where, float(arr[~np.isfinite(arr)].ravel()[0])
    return None


def check_figures(name: str, data: dict, sc: Scenario) -> None:
    """Refuse a job's figures that are divergence rather than a result.

    A figure that is not finite, or (simulate) an axle bounce larger than the wheel's
    greatest radius, means the computation ran away: it is an error, never a clean result.

    Parameters
    ----------
    name : str
        Job name (``simulate``, ``size-motor``, ...).
    data : dict
        The job's result as a dict (before JSON conversion).
    sc : Scenario
        The scenario it ran.

    Raises
    ------
    SimulationError
        One line naming the figure, its value and what to change.
    """
    from ridesim.errors import SimulationError

    bad = _non_finite(data)
    if bad is not None:
        raise SimulationError(f"{name}: the figure {bad[0]} came out {bad[1]} (not a finite"
                              " number): the computation diverged; check the scenario's"
                              " magnitudes (speeds, sizes, masses) and run.timestep_s")
    bounce = data.get("axle_bounce_m") if name == "simulate" else None
    if isinstance(bounce, (int, float)):
        from ridesim.scenario.build import solve_track_scenario

        r_max = float(solve_track_scenario(sc).depth_range()[1])
        if bounce > r_max:
            raise SimulationError(
                f"simulate: axle bounce {1000 * bounce:.1f} mm is larger than the wheel (greatest"
                f" radius {1000 * r_max:.1f} mm): the simulation diverged, not a ride; lower the"
                " drive speed or torque, or shorten run.timestep_s")


@contextlib.contextmanager
def numeric_warnings() -> Iterator[list[str]]:
    """Collect the numerical warnings (overflow, division by zero, invalid values) of a job.

    Library warnings raised inside the block are not printed; the context yields a list
    that, after the block, holds one line per distinct warning naming where it arose, for
    the job's ``warnings`` (figures computed through such a step may be unreliable).

    Yields
    ------
    list of str
        Filled when the block ends.
    """
    lines: list[str] = []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            yield lines
        finally:
            seen = set()
            for w in caught:
                if not issubclass(w.category, RuntimeWarning):
                    continue
                where = os.path.relpath(w.filename, os.path.dirname(os.path.dirname(__file__)))
                where = where if not where.startswith("..") else os.path.basename(w.filename)
                text = (f"numerical trouble in {where}: {w.message}; figures computed through"
                        " it may be unreliable (check the scenario's magnitudes)")
                if text not in seen:
                    seen.add(text)
                    lines.append(text)


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


def failure_text(exc: BaseException) -> str:
    """One line for a sweep case or design that failed.

    The error's own words, or, for an exception no ridesim check raised,
    ``internal error: TYPE: words``.

    Parameters
    ----------
    exc : BaseException
        What the case raised.

    Returns
    -------
    str
    """
    from ridesim.errors import RidesimError

    words = " ".join(str(exc).split())
    return words if isinstance(exc, RidesimError) else f"internal error: {type(exc).__name__}: {words}"


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
    with numeric_warnings() as trouble:
        out = JOBS[name](sc, progress=progress)
    check_figures(name, out, sc)
    if trouble:
        out = {**out, "warnings": list(out.get("warnings", [])) + trouble}
    return json_ready(out)


#: Commands whose files form one set in ``--out``: written whole or not at all.
SET_JOBS = ("render", "export", "report")


def run_into(name: str, sc: Scenario, out: str | None,
             produce: Callable[[str | None], tuple[dict, str]]) -> tuple[dict, str, list[str]]:
    """Run a command's job and write its result into ``out``, nothing half-written.

    ``produce(folder)`` runs the job, writing its files (if any) into ``folder``. For the
    commands of :data:`SET_JOBS` with an output folder, that folder is a staging folder
    (:func:`ridesim.export.results.begin_set`) moved into ``out`` whole only when the job
    has finished and its figures passed :func:`check_figures`; paths in the result then
    name ``out``. Any failure leaves the previous set in place. Other commands write
    ``out/NAME.json`` atomically.

    Parameters
    ----------
    name : str
        The command (``check``, ``render``, ...), also the JSON file's name.
    sc : Scenario
        The scenario it runs (its warnings join the result's).
    out : str or None
        Output folder, or None for none.
    produce : callable
        ``produce(folder) -> (data, text)``: the job's dict and its text.

    Returns
    -------
    data : dict
        The JSON-ready result with ``warnings``.
    text : str
        The text to print.
    trouble : list of str
        The numerical warnings raised while it ran (also in ``data["warnings"]``).
    """
    import json
    import os
    import shutil
    from pathlib import Path

    from ridesim.export.results import begin_set, commit_set, json_ready, write_json_atomic

    staged = bool(out) and name in SET_JOBS
    stage = begin_set(out, name) if staged and out else None
    try:
        with numeric_warnings() as trouble:  # library noise becomes one line each
            data, text = produce(str(stage) if stage is not None else out)
        check_figures(name, data, sc)  # divergence is an error, not a result
        data = json_ready({**data, "warnings": list(sc.warnings) + trouble})
        if stage is not None and out:  # the set names its final place
            final = str(Path(out))
            raw = json.dumps(data)
            # The record kept in the folder names its files relative to it (the folder can
            # be moved or sent as it is); the printed result names them where they are.
            kept = json.loads(raw.replace(json.dumps(str(stage) + os.sep)[1:-1], ""))
            data = json.loads(raw.replace(json.dumps(str(stage))[1:-1], json.dumps(final)[1:-1]))
            text = text.replace(str(stage), final)
            write_json_atomic(stage / f"{name}.json", kept)
            commit_set(out, stage, name)
    finally:
        if stage is not None and stage.exists():
            shutil.rmtree(stage, ignore_errors=True)  # not committed: the old set stays
    if out and not staged:
        write_json_atomic(Path(out) / f"{name}.json", data)
    return data, text, trouble

"""Sweep files: a base scenario, the keys to vary, and what to run per case.

```toml
base = "cart.toml"              # relative to the sweep file, or absolute
run = "check"                   # solve | check | simulate | size-motor
[vary]                          # full grid over dotted scenario keys
"wheel.sides" = [4, 5, 6]
"surface.friction" = { from = 0.6, to = 1.0, count = 3 }   # evenly spaced, ends included
[random]                        # tolerance study: draws added to every grid case
seed = 7
cases = 100
"wheel.axle_m" = { normal = [[0.0, 0.0], [0.001, 0.001]] }  # mean(s), standard deviation(s)
"surface.friction" = { uniform = [0.5, 0.7] }
```

Cases are numbered in a fixed order (grid in file order, last key fastest, then
the random draws of each grid case), and each case's random values come from
its own generator seeded by ``(seed, case number)``, so a case's values do not
depend on which cases ran before it: a resumed or distributed sweep gives the
same table as one uninterrupted run.
"""

from __future__ import annotations

import hashlib
import itertools
import json
import math
import tomllib
from pathlib import Path
from typing import Any

import numpy as np

from ridesim._version import __version__
from ridesim.errors import ScenarioError
from ridesim.records import record
from ridesim.scenario.load import Scenario, check_nesting, load_scenario, scenario_keys
from ridesim.scenario.schema import KEY
from ridesim.validate import is_integer, is_number

__all__ = ["SweepPlan", "Case", "load_sweep", "RUNS"]

#: What a sweep can run per case.
RUNS = ("solve", "check", "simulate", "size-motor")
_TOP = ("base", "run", "vary", "random")


@record
class Case:
    """One case of a sweep.

    Attributes
    ----------
    index : int
        Case number (0-based), the row order of the results table.
    values : dict
        Dotted scenario key -> value for this case (varied and drawn keys).
    key : str
        Fingerprint of the case's values and the sweep's base, for safe resuming.
    """

    index: int
    values: dict
    key: str


@record
class SweepPlan:
    """A validated sweep: the base scenario, the run and every case.

    Attributes
    ----------
    base : Scenario
        The scenario every case starts from.
    run : str
        One of :data:`RUNS`.
    columns : tuple of str
        The varied and drawn keys, in file order.
    cases : tuple of Case
        All cases in order.
    source : str
        The sweep file.
    warnings : tuple of str
        Problems found before any case runs (cases that are not valid scenarios).
    """

    base: Scenario
    run: str
    columns: tuple[str, ...]
    cases: tuple[Case, ...]
    source: str
    warnings: tuple[str, ...] = ()


MAX_CASES = 100_000
"""Most cases one sweep may hold (grid size times random draws)."""


def _fail(msg: str) -> ScenarioError:
    return ScenarioError(msg)


def _values_for(key: str, spec: Any) -> list:
    if isinstance(spec, list):
        if not spec:
            raise _fail(f'vary."{key}" is an empty list; give at least one value')
        return list(spec)
    if isinstance(spec, dict):
        unknown = set(spec) - {"from", "to", "count"}
        if unknown or not {"from", "to", "count"} <= set(spec):
            raise _fail(f'vary."{key}" must be a list or {{ from = a, to = b, count = n }},'
                        f" got keys {sorted(spec)}")
        n = spec["count"]
        if not is_integer(n) or n < 1:
            raise _fail(f'vary."{key}".count must be an integer >= 1, got {n!r}')
        a, b = spec["from"], spec["to"]
        if not all(is_number(v) for v in (a, b)):
            raise _fail(f'vary."{key}" from/to must be numbers, got {a!r} and {b!r}')
        if n > MAX_CASES:
            raise _fail(f'vary."{key}".count = {n} is more than the limit of {MAX_CASES} cases')
        vals = [float(a)] if n == 1 else [float(v) for v in np.linspace(float(a), float(b), n)]
        row = KEY.get(key)
        if row is not None and row.kind == "int":  # a range over an integer key: whole steps
            if not all(float(v).is_integer() for v in vals):
                raise _fail(f'vary."{key}" is an integer key, but from = {a!r} to = {b!r} in'
                            f" {n} values gives {', '.join(f'{v:g}' for v in vals[:4])}...;"
                            " choose from, to and count so that every value is whole, or list"
                            " the values")
            vals = [int(v) for v in vals]
        return vals
    return [spec]


def _draw_spec(key: str, spec: Any) -> tuple[str, np.ndarray, np.ndarray]:
    if not isinstance(spec, dict) or len(spec) != 1 or next(iter(spec)) not in ("normal", "uniform"):
        raise _fail(f'random."{key}" must be {{ normal = [mean, sd] }} or'
                    f" {{ uniform = [low, high] }}, got {spec!r}")
    kind, args = next(iter(spec.items()))
    if not isinstance(args, list) or len(args) != 2:
        raise _fail(f'random."{key}".{kind} must be a pair of numbers (or of [x, y] pairs)')
    try:
        p = np.asarray(args[0], dtype=float)
        q = np.asarray(args[1], dtype=float)
    except (TypeError, ValueError):
        raise _fail(f'random."{key}".{kind} must hold numbers, got {args!r}') from None
    if p.shape != q.shape or p.ndim > 1:
        raise _fail(f'random."{key}".{kind}: both entries must have the same shape')
    if kind == "normal" and np.any(q < 0):
        raise _fail(f'random."{key}".normal standard deviation must be >= 0, got {args[1]!r}')
    if kind == "uniform" and np.any(q < p):
        raise _fail(f'random."{key}".uniform needs low <= high, got {args!r}')
    return kind, p, q


def _fingerprint(values: dict, base: Scenario, run: str) -> str:
    # The ridesim version is part of every case's key: after an upgrade, rows computed by
    # another version are not kept silently (run_sweep refuses the folder instead).
    blob = json.dumps({"v": values, "base": base.to_dict(), "run": run, "ridesim": __version__},
                      sort_keys=True, default=str)
    return hashlib.sha256(blob.encode()).hexdigest()[:16]


def load_sweep(path: str | Path) -> SweepPlan:
    """Read and validate a sweep file before any case runs.

    Parameters
    ----------
    path : str or Path
        The sweep TOML file.

    Returns
    -------
    SweepPlan
        The plan with all cases.

    Raises
    ------
    ScenarioError
        For an unknown key, an empty range, random draws without a seed, or a bad base.
    """
    path = Path(path)
    data = _read_toml(path)
    for k in data:
        if k not in _TOP:
            raise _fail(f"unknown sweep key {k!r}; use {', '.join(_TOP)}")
    if "base" not in data or not isinstance(data["base"], str):
        raise _fail('sweep needs base = "scenario.toml" (relative to the sweep file)')
    run = data.get("run", "check")
    if run not in RUNS:
        raise _fail(f"run must be one of {', '.join(RUNS)}, got {run!r}")
    base_path = Path(data["base"])
    if not base_path.is_absolute():
        base_path = path.parent / base_path
    base = load_scenario(base_path)
    known = scenario_keys()
    vary = data.get("vary", {})
    rand = dict(data.get("random", {}))
    if not isinstance(vary, dict) or not isinstance(rand, dict):
        raise _fail("[vary] and [random] must be tables of dotted keys")
    grid_keys = list(vary)
    grid_vals = _grid_values(vary, known)
    draws, seed, n_rand = _random_draws(rand, vary, known)
    reps = n_rand if draws else 1
    n_cases = reps * math.prod(len(v) for v in grid_vals)
    if n_cases > MAX_CASES:
        raise _fail(f"the sweep has {n_cases} cases, more than the limit of {MAX_CASES};"
                    " vary fewer values or lower random.cases")
    cases = _make_cases(grid_keys, grid_vals, draws, seed, reps, base, run)
    # Every case's values are checked against the key table before any case runs: a sweep
    # none of whose cases is valid is refused; invalid cases among valid ones are named now
    # and recorded as failed rows when run.
    bad = _invalid_cases(base, cases)
    if bad and len(bad) == len(cases):
        raise _fail(f"no case of the sweep is a valid scenario; {bad[0]}")
    notes = () if not bad else (f"{len(bad)} of {len(cases)} cases are not valid scenarios and"
                                f" will be recorded as failed rows; {bad[0]}",)
    return SweepPlan(base=base, run=run, columns=tuple(grid_keys + list(draws)),
                     cases=tuple(cases), source=str(path), warnings=notes)


def _read_toml(path: Path) -> dict:
    """The sweep file's TOML as a dict; a missing, unreadable or too deeply nested file is refused."""
    if not path.is_file():
        raise _fail(f"sweep file not found: {path}")
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except tomllib.TOMLDecodeError as exc:
        raise _fail(f"{path}: TOML syntax error: {' '.join(str(exc).split())}") from None
    except UnicodeDecodeError as exc:
        raise _fail(f"{path}: not UTF-8 text ({exc.reason} at byte {exc.start}); save the file"
                    " as UTF-8") from None
    except RecursionError:
        raise _fail(f"{path}: tables or lists nested too deep to read") from None
    check_nesting(data, str(path))
    return data


def _grid_values(vary: dict, known) -> list[list]:
    """The values of each ``[vary]`` key, in file order; an unknown key is refused."""
    grid_vals = []
    for k in vary:
        if k not in known:
            raise _fail(f'unknown parameter vary."{k}"; use a dotted scenario key such as'
                        ' "wheel.sides" or "surface.friction"')
        grid_vals.append(_values_for(k, vary[k]))
    return grid_vals


def _random_draws(rand: dict, vary: dict, known) -> tuple[dict, Any, Any]:
    """The ``[random]`` table's draws, seed and number of cases, validated.

    ``rand`` is a copy of the table: ``seed`` and ``cases`` are popped from it.
    """
    draws = {}
    seed = rand.pop("seed", None)
    n_rand = rand.pop("cases", None)
    for k, spec in rand.items():
        if k not in known:
            raise _fail(f'unknown parameter random."{k}"; use a dotted scenario key')
        if k in vary:
            raise _fail(f'"{k}" is both varied and drawn; keep it in one of [vary], [random]')
        draws[k] = _draw_spec(k, spec)
    if draws:
        if not is_integer(seed):
            raise _fail("random draws need an integer random.seed (so the study can be repeated)")
        if not is_integer(n_rand) or n_rand < 1:
            raise _fail("random draws need random.cases = N (an integer >= 1)")
    elif n_rand is not None:
        raise _fail("random.cases is given but no key is drawn; add e.g."
                    ' "surface.friction" = { uniform = [0.5, 0.7] }')
    return draws, seed, n_rand


def _make_cases(grid_keys: list[str], grid_vals: list[list], draws: dict, seed, reps: int,
                base: Scenario, run: str) -> list[Case]:
    """Every case: the grid in file order, last key fastest, then the draws of each grid case.

    Each case's draws come from its own generator seeded by ``(seed, case number)``.
    """
    cases = []
    index = 0
    for combo in itertools.product(*grid_vals) if grid_keys else [()]:
        for _ in range(reps):
            values = dict(zip(grid_keys, combo, strict=True))
            if draws:
                rng = np.random.default_rng([seed, index])
                for k, (kind, p, q) in draws.items():
                    v = rng.normal(p, q) if kind == "normal" else rng.uniform(p, q)
                    values[k] = v.tolist() if np.ndim(v) else float(v)
            cases.append(Case(index=index, values=values, key=_fingerprint(values, base, run)))
            index += 1
    return cases


def _invalid_cases(base: Scenario, cases: list[Case]) -> list[str]:
    """One line for each case whose values do not make a valid scenario."""
    bad = []
    for case in cases:
        try:
            base.replace_many(case.values)
        except ScenarioError as exc:
            shown = ", ".join(f"{k} = {v!r}" for k, v in case.values.items())
            bad.append(f"case {case.index} ({shown}) is not a valid scenario: {exc}")
    return bad

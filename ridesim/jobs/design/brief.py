"""Design briefs: a base scenario, what may vary, what must hold, and what to optimise.

```toml
base = "../hexagon_trolley.toml"      # relative to the brief, or an inline table of sections
seed = 1                              # the search is deterministic for a given seed
[vary]                                # dotted scenario keys (the key table, scenario/schema.py)
"wheel.sides" = [5, 6, 7, 8]          # discrete choices
"wheel.apothem_m" = { from = 0.08, to = 0.2 }   # a continuous range (ints: every integer in it)
"wheel.harmonics[0][1]" = { from = -0.1, to = 0.1 }  # one number of a list key, indexes from 0
[require]                             # figures of solve / check / size-motor / simulate by JSON path
"check.rollable" = true               # == for true/false, text and numbers
"check.friction.required_peak" = { max = 0.45 }  # <= ; also { min = x } (>=) and { equals = x }
"solve.period_m" = "<= 0.2"           # the same written as text: "<= x", ">= x", "== x"
[goal]
minimize = "wheel.sides"              # a varied key or a figure path; or maximize = ...
[search]                              # all optional
samples = 32                          # space-filling stage: scrambled Sobol points (power of 2)
refine = 2                            # Nelder-Mead refinements from the best points
max_evaluations = 300
keep = 5                              # designs reported and written out
screen = true                         # run check (must say rollable) before simulate
```

A list key's single number is named by its indexes counted from 0, as the scenario's own
error messages name it: ``"wheel.harmonics[1][2]"`` is the second term's ``b_k``,
``"wheel.axle_m[0]"`` the axle's x. The base scenario must set the list; each design sets that
one number in it, and its scenario files (``best.toml``) and journal lines hold the whole list.

Everything is checked here, before any design is evaluated: the keys against the scenario
key table and its hard bounds, each index against the base scenario's list, each range's
ends, each figure path against what its job really returns (by running the jobs once on the
base scenario), and the goals for numbers.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import field
from pathlib import Path
from typing import Any

from ridesim.errors import RidesimError, ScenarioError
from ridesim.records import record
from ridesim.scenario.load import Scenario, load_scenario, scenario_from_dict
from ridesim.validate import is_integer, is_number

__all__ = ["Variable", "Requirement", "Goal", "Brief", "load_brief", "JOB_ORDER", "figure_of"]

#: The jobs a brief may read figures from, cheapest first (the order they run per design).
JOB_ORDER = ("solve", "check", "size-motor", "simulate")
_TOP = ("base", "seed", "vary", "require", "goal", "search")
_SEARCH = {"samples": 32, "refine": 2, "max_evaluations": 300, "keep": 5, "screen": True,
           "xtol": 1e-3}
_OPS = {"max": "<=", "min": ">=", "equals": "=="}


def _fail(msg: str) -> ScenarioError:
    return ScenarioError(msg)


@record
class Variable:
    """One varied scenario key.

    Attributes
    ----------
    key : str
        Dotted scenario key such as ``"wheel.apothem_m"``.
    values : tuple
        The discrete choices (empty for a continuous range).
    low, high : float or None
        The ends of a continuous range, in the key's unit.
    """

    key: str
    values: tuple = ()
    low: float | None = None
    high: float | None = None

    @property
    def continuous(self) -> bool:
        """True for a continuous range, False for discrete choices."""
        return self.low is not None

    def bounds(self) -> tuple[float, float]:
        """The ends ``(low, high)`` of a continuous range, in the key's unit."""
        if self.low is None or self.high is None:
            raise _fail(f"{self.key}: a list of choices has no range; give low and high")
        return self.low, self.high

    def describe(self) -> str:
        """The variable as one line, e.g. ``wheel.apothem_m in [0.08, 0.2]``."""
        if self.continuous:
            return f"{self.key} in [{self.low:g}, {self.high:g}]"
        return f"{self.key} in {{{', '.join(str(v) for v in self.values)}}}"


@record
class Requirement:
    """A condition on one figure: ``value op target``.

    Attributes
    ----------
    path : str
        Figure path (``"check.friction.required_peak"``) or a varied key.
    op : str
        ``"<="``, ``">="`` or ``"=="``.
    target : object
        The bound: a number, or for ``==`` also true/false or text.
    tol : float
        Absolute tolerance of a numeric ``==``.
    implicit : bool
        Added by the search itself (the screen), not written in the brief.
    """

    path: str
    op: str
    target: Any
    tol: float = 0.0
    implicit: bool = False

    def text(self) -> str:
        """The requirement as written, e.g. ``check.friction.required_peak <= 0.45``."""
        t = str(self.target).lower() if isinstance(self.target, bool) else f"{self.target!s}"
        return f"{self.path} {self.op} {t}"

    def judge(self, value: Any) -> tuple[bool | None, float, float]:
        """Judge one value.

        Parameters
        ----------
        value : object
            The figure; None when it was not computed (screened out, or absent).

        Returns
        -------
        met : bool or None
            True met, False failed, None not evaluated.
        by : float
            How far the value is outside the bound, in the figure's unit (0 when met;
            1 for a failed true/false or text condition; nan when not evaluated).
        by_rel : float
            ``by`` over the bound's size (``|target|``, or 1 when the bound is 0); a failed
            true/false or text condition and a figure not evaluated count 1.
        """
        if value is None:
            return None, math.nan, 1.0
        if self.op == "==" and not (is_number(self.target) and is_number(value)):
            ok = value == self.target and type(value) is type(self.target)
            return ok, 0.0 if ok else 1.0, 0.0 if ok else 1.0
        if not is_number(value):
            return False, math.nan, 1.0
        v, t = float(value), float(self.target)
        if not math.isfinite(v):
            return False, math.inf, math.inf
        if self.op == "<=":
            by = max(0.0, v - t)
        elif self.op == ">=":
            by = max(0.0, t - v)
        else:
            by = abs(v - t)
        ok = by <= self.tol
        if ok:
            by = 0.0
        scale = abs(t) if t != 0 else 1.0
        return ok, by, by / scale

    def slack(self, value: Any) -> float | None:
        """Relative room left before the bound (None for ``==`` or non-numbers).

        Parameters
        ----------
        value : object
            The figure.

        Returns
        -------
        float or None
            ``(target - value)/|target|`` for ``<=``, the mirror for ``>=``.
        """
        if self.op == "==" or not is_number(value) or not is_number(self.target):
            return None
        scale = abs(self.target) if self.target != 0 else 1.0
        room = self.target - value if self.op == "<=" else value - self.target
        return float(room) / scale


@record
class Goal:
    """One objective.

    Attributes
    ----------
    path : str
        A varied key or a figure path.
    sense : int
        +1 to minimise, -1 to maximise.
    """

    path: str
    sense: int

    def text(self) -> str:
        """``minimize wheel.sides`` or ``maximize ...``."""
        return f"{'minimize' if self.sense > 0 else 'maximize'} {self.path}"


@record
class Brief:
    """A validated brief.

    Attributes
    ----------
    base : Scenario
        The scenario every design starts from.
    variables : tuple of Variable
        The varied keys, in file order.
    requirements : tuple of Requirement
        What must hold (the screen's implicit ``check.rollable == true`` included).
    goals : tuple of Goal
        One goal, or two for a trade-off front.
    jobs : tuple of str
        The jobs each design runs, cheapest first (see :data:`JOB_ORDER`).
    seed : int
        Seed of the space-filling stage.
    search : dict
        ``samples``, ``refine``, ``max_evaluations``, ``keep``, ``screen``, ``xtol``.
    source : str
        The brief file.
    probe : dict
        Job name -> the job's result on the base scenario (used to check the paths).
    """

    base: Scenario
    variables: tuple[Variable, ...]
    requirements: tuple[Requirement, ...]
    goals: tuple[Goal, ...]
    jobs: tuple[str, ...]
    seed: int
    search: dict
    source: str
    probe: dict = field(default_factory=dict, compare=False, repr=False)

    @property
    def keys(self) -> tuple[str, ...]:
        """The varied keys in file order."""
        return tuple(v.key for v in self.variables)

    @property
    def warnings(self) -> tuple[str, ...]:
        """One line per varied key whose choices or range ends lie outside real builds.

        Returns
        -------
        tuple of str
            The key table's plausibility warnings (``ridesim/scenario/schema.py``).
        """
        from ridesim.scenario.schema import value_warnings

        out: list[str] = []
        for v in self.variables:
            for x in (v.low, v.high) if v.continuous else v.values:
                lines = value_warnings(v.key, x)
                if lines:
                    out.append(f"vary: {lines[0]}")
                    break
        return tuple(out)

    def figure_paths(self) -> tuple[str, ...]:
        """Every figure path the brief reads (requirements, then goals), without repeats."""
        out: list[str] = []
        for p in [r.path for r in self.requirements] + [g.path for g in self.goals]:
            if p not in out and p not in self.keys:
                out.append(p)
        return tuple(out)


def figure_of(result: Any, path: str) -> Any:
    """The value at a dotted path inside a job's JSON result.

    Parameters
    ----------
    result : dict
        A job's result (``run_job``).
    path : str
        Path below the job name, e.g. ``"friction.required_peak"``; a whole number picks
        a list item (``"motors.0.peak_Nm"``).

    Returns
    -------
    object
        The value.

    Raises
    ------
    KeyError
        When the path is not in the result.
    """
    node = result
    for part in path.split("."):
        if isinstance(node, dict) and part in node:
            node = node[part]
        elif isinstance(node, list) and part.isdigit() and int(part) < len(node):
            node = node[int(part)]
        else:
            raise KeyError(part)
    return node


def _bounds_check(key: str, value: float) -> None:
    from ridesim.scenario.load import split_indexed_key
    from ridesim.scenario.schema import KEY

    row = KEY[split_indexed_key(key)[0] if "[" in key else key]
    for name, op, ok in (("gt", ">", lambda v, b: v > b), ("ge", ">=", lambda v, b: v >= b),
                         ("lt", "<", lambda v, b: v < b), ("le", "<=", lambda v, b: v <= b)):
        b = getattr(row, name)
        if b is not None and not ok(value, b):
            raise _fail(f'vary."{key}": {value:g} is outside the key\'s bounds ({key} must be'
                        f" {op} {b:g}); narrow the range")


def _list_item_kind(key: str, base: Scenario | None) -> str:
    """The kind (``real`` or ``int``) of the one number an indexed key names in ``base``."""
    from ridesim.scenario.load import item_at, split_indexed_key
    from ridesim.scenario.schema import KEY

    try:
        name, index = split_indexed_key(key)
        section, field_name = name.split(".")
        table = {} if base is None else base.to_dict().get(section, {})  # the keys it sets
        value = table.get(field_name) if isinstance(table, dict) else None
        if value is None:
            raise ScenarioError(f"{key}: the base scenario sets no {name}; give the whole list"
                                " there (this sets one number of it)")
        item = item_at(name, value, index)
    except ScenarioError as exc:
        text = str(exc)
        text = text[len(key):].lstrip(":") if text.startswith(key) else " " + text
        raise _fail(f'vary."{key}":{text}') from None
    if isinstance(item, (list, tuple)):
        raise _fail(f'vary."{key}" names a list of {len(item)} items, not one number; add an'
                    f" index (e.g. {key}[0])")
    row = KEY[name]
    return "int" if row.kind == "ints" or (row.kind == "terms" and index[-1] == 0) else "real"


def _variable(key: str, spec: Any, base: Scenario | None = None) -> Variable:
    from ridesim.scenario.load import scenario_keys
    from ridesim.scenario.schema import KEY

    choices: tuple[str, ...] = ()
    if "[" in key:
        kind = _list_item_kind(key, base)
    elif key not in scenario_keys() or key not in KEY:
        raise _fail(f'unknown key vary."{key}"; use a dotted scenario key such as "wheel.sides"'
                    " or \"surface.friction\", or one number of a list key such as"
                    " \"wheel.harmonics[0][1]\" (docs/scenario-keys.md lists them)")
    else:
        kind, choices = KEY[key].kind, KEY[key].choices
    if isinstance(spec, list):
        if not spec:
            raise _fail(f'vary."{key}" is an empty list; give at least one value')
        if len(set(map(repr, spec))) != len(spec):
            raise _fail(f'vary."{key}" lists a value twice; give each choice once')
        for v in spec:
            if kind in ("real", "int") and is_number(v):
                if kind == "int" and not isinstance(v, int):
                    raise _fail(f'vary."{key}" takes whole numbers, got {v!r}')
                _bounds_check(key, float(v))
            elif kind in ("real", "int"):
                raise _fail(f'vary."{key}" takes numbers, got {v!r}')
            elif kind == "bool" and not isinstance(v, bool):
                raise _fail(f'vary."{key}" takes true or false, got {v!r}')
            elif kind == "choice" and v not in choices:
                raise _fail(f'vary."{key}": {v!r} is not one of {", ".join(choices)}')
        return Variable(key, values=tuple(spec))
    if isinstance(spec, dict):
        if set(spec) != {"from", "to"}:
            raise _fail(f'vary."{key}" must be a list of choices or {{ from = a, to = b }},'
                        f" got keys {sorted(spec)}")
        a, b = spec["from"], spec["to"]
        if not (is_number(a) and is_number(b)):
            raise _fail(f'vary."{key}" from/to must be numbers, got {a!r} and {b!r}')
        if kind not in ("real", "int"):
            raise _fail(f'vary."{key}" is not a number key ({kind}); list its choices instead')
        if not a < b:
            raise _fail(f'vary."{key}" is an empty range (from = {a:g} is not below to = {b:g});'
                        " give from < to, or a one-value list to fix the key")
        _bounds_check(key, float(a))
        _bounds_check(key, float(b))
        if kind == "int":
            lo, hi = math.ceil(a), math.floor(b)
            if lo > hi:
                raise _fail(f'vary."{key}" holds no whole number between {a:g} and {b:g}')
            return Variable(key, values=tuple(range(lo, hi + 1)))
        return Variable(key, low=float(a), high=float(b))
    raise _fail(f'vary."{key}" must be a list of choices or {{ from = a, to = b }}, got {spec!r}')


def _refuse_overlaps(keys: tuple[str, ...]) -> None:
    """Refuse two varied keys that set the same number.

    A list and one of its items, or one item written twice (``[1]`` and ``[01]``).
    """
    from ridesim.scenario.load import split_indexed_key

    seen: dict[tuple, str] = {}
    for k in keys:
        name, index = split_indexed_key(k) if "[" in k else (k, ())
        for other_id, other in seen.items():
            n, i = other_id
            if n == name and (i == index or not i or not index):
                both = name + "".join(f"[{x}]" for x in (index or i))
                raise _fail(f'vary."{k}" and vary."{other}" both set {both}; vary each number'
                            " once")
        seen[(name, index)] = k


def _requirement(path: str, spec: Any) -> list[Requirement]:
    where = f'require."{path}"'
    if isinstance(spec, str):
        parts = spec.split()
        if len(parts) == 2 and parts[0] in ("<=", ">=", "=="):
            try:
                target: Any = float(parts[1])
            except ValueError:
                target = {"true": True, "false": False}.get(parts[1], parts[1])
                target = target if parts[0] == "==" else None
            if target is None:
                raise _fail(f"{where} = {spec!r}: the bound must be a number")
            return [Requirement(path, parts[0], target)]
        return [Requirement(path, "==", spec)]
    if isinstance(spec, (bool, int, float)):
        return [Requirement(path, "==", spec, tol=1e-9 * max(1.0, abs(spec))
                            if is_number(spec) else 0.0)]
    if isinstance(spec, dict):
        unknown = set(spec) - set(_OPS) - {"tol"}
        if unknown or not set(spec) & set(_OPS):
            raise _fail(f"{where} takes max, min or equals (and tol with equals), got keys"
                        f" {sorted(spec)}")
        out = []
        for k in ("max", "min", "equals"):
            if k in spec:
                t = spec[k]
                if k != "equals" and not is_number(t):
                    raise _fail(f"{where}.{k} must be a number, got {t!r}")
                tol = spec.get("tol", 1e-9 * max(1.0, abs(t)) if is_number(t) else 0.0)
                if not is_number(tol) or tol < 0:
                    raise _fail(f"{where}.tol must be a number >= 0, got {tol!r}")
                out.append(Requirement(path, _OPS[k], t, tol=float(tol) if k == "equals" else 0.0))
        if "max" in spec and "min" in spec and spec["min"] > spec["max"]:
            raise _fail(f"{where}: min {spec['min']:g} is above max {spec['max']:g}; no value"
                        " can meet both")
        return out
    raise _fail(f'{where} must be true/false, a number, "<= x", ">= x", or {{ max = x }},'
                f" {{ min = x }}, {{ equals = x }}; got {spec!r}")


def _job_of(path: str, keys: tuple[str, ...], where: str) -> str | None:
    if path in keys:
        return None
    job = path.split(".", 1)[0]
    if job not in JOB_ORDER or "." not in path:
        raise _fail(f"{where}: unknown figure path {path!r}; start with one of"
                    f" {', '.join(j + '.' for j in JOB_ORDER)} (e.g. check.friction.required_peak)"
                    " or name a varied key")
    return job


def _probe(base: Scenario, jobs: tuple[str, ...], variables: tuple[Variable, ...]) -> dict:
    """Each job's result on the base scenario (or on the middle design when the base fails)."""
    from ridesim.jobs import run_job

    middle = {}
    for v in variables:
        middle[v.key] = 0.5 * sum(v.bounds()) if v.continuous else v.values[len(v.values) // 2]
    out = {}
    for job in jobs:
        for values in ({}, middle):
            try:
                sc = base.replace_many(values) if values else base
                out[job] = run_job(job, sc)
                break
            except RidesimError:
                continue
    return out


def load_brief(path: str | Path, *, probe: bool = True) -> Brief:
    """Read and validate a brief before any design is evaluated.

    Parameters
    ----------
    path : str or Path
        The brief TOML file.
    probe : bool
        Run each job once on the base scenario to check the figure paths (and that goals
        are numbers). Only skipped by tests of the parser.

    Returns
    -------
    Brief

    Raises
    ------
    ScenarioError
        One line naming the bad key, range, path or goal and the fix.
    """
    path = Path(path)
    if not path.is_file():
        raise _fail(f"brief file not found: {path}")
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except tomllib.TOMLDecodeError as exc:
        raise _fail(f"{path}: TOML syntax error: {exc}") from None
    except UnicodeDecodeError:
        raise _fail(f"{path}: not UTF-8 text; save the brief as UTF-8") from None
    for k in data:
        if k not in _TOP:
            raise _fail(f"unknown brief key {k!r}; use {', '.join(_TOP)}")
    base_spec = data.get("base")
    if isinstance(base_spec, str):
        base_path = Path(base_spec)
        if not base_path.is_absolute():
            base_path = path.parent / base_path
        base = load_scenario(base_path)
    elif isinstance(base_spec, dict):
        base = scenario_from_dict({"name": path.stem, **base_spec}, base_dir=path.parent.resolve(),
                                  source=str(path.resolve()))
    else:
        raise _fail('brief needs base = "scenario.toml" (relative to the brief) or a [base] table'
                    " with the scenario's sections")
    seed = data.get("seed", 0)
    if not is_integer(seed) or seed < 0:
        raise _fail(f"seed must be a whole number >= 0, got {seed!r}")
    search = dict(_SEARCH)
    raw_search = data.get("search", {})
    if not isinstance(raw_search, dict):
        raise _fail("[search] must be a table (samples, refine, max_evaluations, keep, screen, xtol)")
    for k, v in raw_search.items():
        if k not in _SEARCH:
            raise _fail(f"unknown key search.{k}; use {', '.join(_SEARCH)}")
        if k == "screen":
            if not isinstance(v, bool):
                raise _fail(f"search.screen must be true or false, got {v!r}")
        elif k == "xtol":
            if not is_number(v) or not 0 < v < 1:
                raise _fail(f"search.xtol must be a fraction of each range, 0 < xtol < 1, got {v!r}")
        elif not is_integer(v) or v < (0 if k == "refine" else 1):
            raise _fail(f"search.{k} must be a whole number >= {0 if k == 'refine' else 1},"
                        f" got {v!r}")
        search[k] = v

    vary = data.get("vary")
    if not isinstance(vary, dict) or not vary:
        raise _fail('brief needs a [vary] table of dotted scenario keys, e.g. "wheel.sides" ='
                    " [4, 5, 6]")
    variables = tuple(_variable(k, s, base) for k, s in vary.items())
    keys = tuple(v.key for v in variables)
    _refuse_overlaps(keys)
    # A combination of values the scenario refuses (e.g. fit_track_to_corners with no corner
    # radius) is not bad input: that design is reported as not evaluated, with the reason.

    require = data.get("require", {})
    if not isinstance(require, dict):
        raise _fail("[require] must be a table of figure paths and conditions")
    reqs: list[Requirement] = []
    for p, spec in require.items():
        reqs += _requirement(p, spec)
    goal = data.get("goal")
    if not isinstance(goal, dict) or not goal:
        raise _fail('brief needs a [goal]: minimize = "a varied key or figure path" (or'
                    " maximize = ...)")
    goals: list[Goal] = []
    for k, v in goal.items():
        if k not in ("minimize", "maximize"):
            raise _fail(f"unknown key goal.{k}; use minimize or maximize")
        for p in v if isinstance(v, list) else [v]:
            if not isinstance(p, str):
                raise _fail(f"goal.{k} must be a path or a list of paths, got {p!r}")
            goals.append(Goal(p, 1 if k == "minimize" else -1))
    if len(goals) > 2:
        raise _fail(f"give one goal, or two for a trade-off front; got {len(goals)}")
    if len({g.path for g in goals}) != len(goals):
        raise _fail("the same path is both minimised and maximised; give it once")

    needed = {_job_of(r.path, keys, f'require."{r.path}"') for r in reqs}
    needed |= {_job_of(g.path, keys, f"goal {g.path!r}") for g in goals}
    needed.discard(None)
    if search["screen"] and "simulate" in needed:
        needed.add("check")
        if not any(r.path == "check.rollable" for r in reqs):
            reqs.insert(0, Requirement("check.rollable", "==", True, implicit=True))
    jobs = tuple(j for j in JOB_ORDER if j in needed)
    for g in goals:
        if g.path in keys:
            var = next(v for v in variables if v.key == g.path)
            if not var.continuous and not all(is_number(x) for x in var.values):
                raise _fail(f"goal {g.path!r} is not a number (its choices are"
                            f" {list(var.values)}); optimise a numeric key or figure")

    results = _probe(base, jobs, variables) if probe else {}
    for p in [r.path for r in reqs] + [g.path for g in goals]:
        job = _job_of(p, keys, p)
        if job is None or job not in results:
            continue
        try:
            value = figure_of(results[job], p.split(".", 1)[1])
        except KeyError:
            raise _fail(f"{p!r} is not a figure of {job} (no {p.split('.', 1)[1]!r} in its"
                        f" JSON); see `ridesim {job} SCENARIO --json` for its figures") from None
        if isinstance(value, (dict, list)):
            raise _fail(f"{p!r} is a {'table' if isinstance(value, dict) else 'list'} of figures,"
                        " not one figure; name one of its entries")
        if p in [g.path for g in goals] and value is not None and not is_number(value):
            raise _fail(f"goal {p!r} is not a number ({value!r}); optimise a numeric figure")
        for r in reqs:
            if r.path == p and r.op != "==" and value is not None and not is_number(value):
                raise _fail(f'require."{p}" {r.op} needs a number, but {p} is {value!r};'
                            " use = true/false or a text value")
    return Brief(base=base, variables=variables, requirements=tuple(reqs), goals=tuple(goals),
                 jobs=jobs, seed=seed, search=search, source=str(path), probe=results)

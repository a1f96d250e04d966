"""The search: space-filling sample, then Nelder-Mead refinement, feasibility first.

Method (stated in every result):

1. **Discrete keys only**: every combination is evaluated (enumeration). When the one goal is
   itself a varied key, its value is known before a design is run, so the combinations are
   run best goal first, one tier at a time (a tier: the combinations sharing the next goal
   value, run together on the workers since none of them can prune another), and the
   search stops before the first tier whose goal is worse than a feasible design's (branch
   and bound with the exact bound). A tier is a property of the brief, not of the pool, so
   the designs run do not depend on the number of workers, and no design is run that the
   bound would have pruned.
2. **Continuous keys**: a scrambled Sobol sample (I. M. Sobol', 1967; Owen scrambling,
   ``scipy.stats.qmc.Sobol``, seeded) of ``search.samples`` points over the box of the
   continuous ranges and the discrete choices (each discrete key one more dimension, cut
   into equal parts per choice), then a Nelder-Mead simplex (Nelder & Mead, The Computer
   Journal 7:308-313, 1965; coefficients 1, 2, 1/2, 1/2 as in Lagarias et al., SIAM J.
   Optim. 9:112-147, 1998) over the continuous keys from each of the ``search.refine`` best
   points with distinct discrete choices, each range scaled to [0, 1] and steps kept inside
   it, until the simplex is smaller than ``search.xtol`` of every range.

Constraints are constraints: designs are compared by Deb's feasibility rules (K. Deb,
Computer Methods in Applied Mechanics and Engineering 186:311-338, 2000): a design that
meets every requirement beats one that does not; two that do are compared by the goal; two
that do not by their total violation (each requirement's shortfall over its bound's size,
one for a failed true/false condition or a figure never reached). Nelder-Mead only compares
values, so it runs on this order exactly, with no penalty weight. With two goals, each is
refined in turn and the trade-off front is the non-dominated set of every feasible design
evaluated. The sample is seeded, so the same brief and seed give the same designs.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ridesim.errors import ScenarioError
from ridesim.jobs.design.brief import Brief
from ridesim.jobs.design.evaluate import Evaluator
from ridesim.records import record
from ridesim.validate import is_number

__all__ = ["Judged", "judge", "run_search", "SearchOutcome"]

_INF = math.inf


@record
class Judged:
    """One evaluated design, judged against the brief.

    Attributes
    ----------
    order : int
        Position in the search (0 first).
    values : dict
        Varied key -> value.
    figures : dict
        Figure path -> value (those the brief reads).
    feasible : bool
        Every requirement met.
    violation : float
        Sum of the relative shortfalls (0 when feasible; inf for a design that could
        not be evaluated).
    requirements : list of dict
        Per requirement: ``requirement``, ``value``, ``met`` (True, False, or None when
        not evaluated), ``by`` and ``by_rel``.
    goals : list
        Goal values, in the brief's order.
    error : str or None
        Why the design could not be evaluated.
    jobs_run : list of str
        The jobs that ran (the screen may stop before the dear ones).
    """

    order: int
    values: dict
    figures: dict
    feasible: bool
    violation: float
    requirements: list
    goals: list
    error: str | None
    jobs_run: list

    def rank_key(self, goal: int | None = 0, sense: tuple[int, ...] = (1,)) -> tuple:
        """Deb's order as a tuple: feasible by goal, then infeasible by violation.

        Parameters
        ----------
        goal : int or None
            Which goal orders feasible designs (None: none).
        sense : tuple of int
            +1 minimise, -1 maximise, per goal.

        Returns
        -------
        tuple
            Smaller is better.
        """
        if not self.feasible:
            return (1, self.violation)
        if goal is None:
            return (0, 0.0)
        g = self.goals[goal]
        if not is_number(g) or not math.isfinite(g):
            return (0, _INF)
        return (0, sense[goal] * float(g))


def judge(row: dict, brief: Brief, order: int) -> Judged:
    """Judge one evaluated design against the brief's requirements and goals.

    Parameters
    ----------
    row : dict
        From :func:`ridesim.jobs.design.evaluate.evaluate_design`.
    brief : Brief
        The brief.
    order : int
        Position in the search.

    Returns
    -------
    Judged
    """
    values = {k: row["values"][k] for k in brief.keys}  # the brief's order (the journal sorts)
    figures = row["figures"]

    def value_of(path: str) -> Any:
        return values[path] if path in values else figures.get(path)

    reqs = []
    violation = 0.0
    for r in brief.requirements:
        v = value_of(r.path)
        if row["error"]:
            met, by, rel = None, math.nan, 1.0
        elif v is None and r.path.split(".", 1)[0] in row["jobs_run"]:
            met, by, rel = False, math.nan, 1.0  # the job ran and gives no value (null)
        else:
            met, by, rel = r.judge(v)
        if met is not True:
            violation += rel
        reqs.append({"requirement": r.text(), "path": r.path, "value": v, "met": met,
                     "by": None if math.isnan(by) else by, "by_rel": rel,
                     "implicit": r.implicit})
    goals = [value_of(g.path) for g in brief.goals]
    if row["error"]:
        violation = _INF
    feasible = not row["error"] and all(q["met"] is True for q in reqs)
    return Judged(order=order, values=dict(values), figures=dict(figures), feasible=feasible,
                  violation=0.0 if feasible else violation, requirements=reqs, goals=goals,
                  error=row["error"], jobs_run=list(row["jobs_run"]))


@dataclass
class SearchOutcome:
    """What the search did.

    Attributes
    ----------
    designs : list of Judged
        Every distinct design evaluated, in search order.
    method : str
        The method, in one sentence.
    stages : dict
        Evaluations per stage (``sample``/``enumeration``, ``refine``).
    budget_hit : bool
        True when ``search.max_evaluations`` stopped the search.
    """

    designs: list
    method: str
    stages: dict
    budget_hit: bool = False


class _Search:
    def __init__(self, brief: Brief, ev: Evaluator) -> None:
        self.brief = brief
        self.ev = ev
        self.judged: dict[str, Judged] = {}
        self.order: list[str] = []
        self.budget = brief.search["max_evaluations"]
        self.budget_hit = False
        self.sense = tuple(g.sense for g in brief.goals)

    def run(self, designs: list[dict]) -> list[Judged | None]:
        """Evaluate designs within the budget; None for those the budget left out."""
        left = self.budget - len(self.order)
        allowed: set[str] = set()
        for d in designs:
            i = _design_id(d)
            if i in self.judged or i in allowed:
                continue
            if len(allowed) < left:
                allowed.add(i)
            else:
                self.budget_hit = True
        run = [d for d in designs if _design_id(d) in allowed]
        for d, row in zip(run, self.ev.evaluate(run), strict=True):
            i = _design_id(d)
            if i not in self.judged:
                self.judged[i] = judge(row, self.brief, len(self.order))
                self.order.append(i)
        return [self.judged.get(_design_id(d)) for d in designs]

    def key(self, j: Judged, goal: int | None = 0) -> tuple:
        return j.rank_key(goal if self.brief.goals else None, self.sense)


def _design_id(values: dict) -> str:
    return repr(sorted(values.items()))


def _snap(v: float) -> float:
    # Designs are written to scenario files: keep 12 significant digits, so the value in
    # best.toml is the value that was evaluated.
    return float(f"{v:.12g}")


def run_search(brief: Brief, ev: Evaluator) -> SearchOutcome:
    """Search the brief's design space.

    Parameters
    ----------
    brief : Brief
        The validated brief.
    ev : Evaluator
        Runs the designs (pool, cluster, journal).

    Returns
    -------
    SearchOutcome
    """
    s = _Search(brief, ev)
    cont = [v for v in brief.variables if v.continuous]
    disc = [v for v in brief.variables if not v.continuous]
    if not cont:
        method, stages = _enumerate(s, disc)
    else:
        method, stages = _sample_and_refine(s, cont, disc)
    designs = [s.judged[i] for i in s.order]
    if s.budget_hit:
        method += f" Stopped at search.max_evaluations = {s.budget}."
    return SearchOutcome(designs=designs, method=method, stages=stages, budget_hit=s.budget_hit)


def _enumerate(s: _Search, disc: list) -> tuple[str, dict]:
    brief = s.brief
    combos = [dict(zip([v.key for v in disc], c, strict=True))
              for c in itertools.product(*(v.values for v in disc))]
    if len(combos) > s.budget:
        raise ScenarioError(f"[vary] holds {len(combos)} combinations, more than"
                            f" search.max_evaluations = {s.budget}; raise it or narrow [vary]")
    bound_goal = (len(brief.goals) == 1 and brief.goals[0].path in combos[0])
    if not bound_goal:
        s.run(combos)
        return (f"Enumeration of all {len(combos)} combinations of the discrete keys, ranked by"
                " Deb's feasibility rules.", {"enumeration": len(s.order)})
    g = brief.goals[0]
    combos.sort(key=lambda c: g.sense * c[g.path])  # stable: ties keep the product's order
    # Tiers: the combinations sharing one goal value. A feasible design bounds every later
    # tier (their goal is worse) but none in its own (a tie is a candidate too), so a tier is
    # the most that can run together without running a design the bound would prune.
    tiers = [list(t) for _, t in itertools.groupby(combos, key=lambda c: c[g.path])]
    best = None
    for tier in tiers:
        if best is not None or s.budget_hit:
            break  # a feasible design has the best goal left: every later tier is worse
        for j in s.run(tier):
            if j is not None and j.feasible:
                best = j.goals[0]
    pruned = len(combos) - len(s.order)
    return (f"Enumeration of the {len(combos)} combinations of the discrete keys, best goal"
            f" ({g.path}) first, one goal value at a time, with branch and bound on the goal"
            f" ({pruned} combinations pruned: their goal is worse than a feasible design's);"
            " ranked by Deb's feasibility rules.", {"enumeration": len(s.order), "pruned": pruned})


def _sample_and_refine(s: _Search, cont: list, disc: list) -> tuple[str, dict]:
    from scipy.stats import qmc

    brief = s.brief
    n_req = brief.search["samples"]
    m = max(1, math.ceil(math.log2(n_req)))
    sampler = qmc.Sobol(d=len(cont) + len(disc), scramble=True, seed=brief.seed)
    u = sampler.random_base2(m)

    def design(x: np.ndarray, choice: dict) -> dict:
        d = {v.key: _snap(v.low + float(xi) * (v.high - v.low)) for v, xi in zip(cont, x,
                                                                                  strict=True)}
        d.update(choice)
        return {v.key: d[v.key] for v in brief.variables}

    first = []
    for row in u:
        choice = {v.key: v.values[min(int(row[len(cont) + k] * len(v.values)), len(v.values) - 1)]
                  for k, v in enumerate(disc)}
        first.append(design(row[:len(cont)], choice))
    s.run(first)
    n_first = len(s.order)
    goal_ids: list[int | None] = list(range(len(brief.goals))) or [None]
    refine = brief.search["refine"]
    xtol = brief.search["xtol"]
    step0 = min(0.25, 1.0 / (2 ** m) ** (1.0 / len(cont)))
    for gi in goal_ids:
        def rank(j: Judged, gi: int | None = gi) -> tuple:
            return (s.key(j, gi), j.order)

        ranked = sorted((s.judged[i] for i in s.order), key=rank)
        starts, seen = [], set()
        for j in ranked:
            picked = tuple(j.values[v.key] for v in disc)
            if picked in seen:
                continue
            seen.add(picked)
            starts.append(j)
            if len(starts) >= refine:
                break
        for j in starts:
            if s.budget_hit:
                break
            choice = {v.key: j.values[v.key] for v in disc}
            x0 = np.array([(j.values[v.key] - v.low) / (v.high - v.low) for v in cont])

            def f(points: list[np.ndarray], choice=choice, gi=gi) -> list[tuple]:
                return [(2, _INF) if r is None else s.key(r, gi)
                        for r in s.run([design(p, choice) for p in points])]

            _nelder_mead(f, x0, step0, xtol, lambda: s.budget_hit)
    n_ref = len(s.order) - n_first
    what = "each goal in turn" if len(brief.goals) > 1 else "the goal"
    return (f"Scrambled Sobol sample of {2 ** m} points (seed {brief.seed}) over"
            f" {len(cont)} continuous and {len(disc)} discrete keys, then Nelder-Mead on the"
            f" continuous keys from the {refine} best point(s) with distinct discrete choices for"
            f" {what} (xtol {xtol:g} of each range); designs ranked by Deb's feasibility rules.",
            {"sample": n_first, "refine": n_ref})


def _nelder_mead(f, x0: np.ndarray, step: float, xtol: float, stop, max_iter: int = 200) -> None:
    """Nelder-Mead on [0, 1]^n comparing keys only (any totally ordered values).

    Parameters
    ----------
    f : callable
        ``f(list of points) -> list of keys``; smaller keys are better.
    x0 : ndarray
        Start point in [0, 1]^n.
    step : float
        Size of the first simplex's edges.
    xtol : float
        Stop when every vertex is within this of the best (each coordinate).
    stop : callable
        ``stop()`` true when the evaluation budget is spent.
    max_iter : int
        Most iterations.
    """
    n = len(x0)

    def clip(x):
        return np.clip(x, 0.0, 1.0)

    pts = [clip(np.asarray(x0, float))]
    for i in range(n):
        e = np.zeros(n)
        e[i] = step if x0[i] + step <= 1.0 else -step
        pts.append(clip(pts[0] + e))
    keys = f(pts)
    for _ in range(max_iter):
        if stop():
            return
        idx = sorted(range(n + 1), key=lambda i: keys[i])
        pts, keys = [pts[i] for i in idx], [keys[i] for i in idx]
        if max(float(np.max(np.abs(p - pts[0]))) for p in pts[1:]) < xtol:
            return
        c = np.mean(pts[:-1], axis=0)
        xr = clip(c + (c - pts[-1]))
        (kr,) = f([xr])
        if kr < keys[0]:
            xe = clip(c + 2.0 * (c - pts[-1]))
            (ke,) = f([xe])
            pts[-1], keys[-1] = (xe, ke) if ke < kr else (xr, kr)
            continue
        if kr < keys[-2]:
            pts[-1], keys[-1] = xr, kr
            continue
        if kr < keys[-1]:
            xc = clip(c + 0.5 * (xr - c))
            (kc,) = f([xc])
            accept = not kr < kc
        else:
            xc = clip(c + 0.5 * (pts[-1] - c))
            (kc,) = f([xc])
            accept = kc < keys[-1]
        if accept:
            pts[-1], keys[-1] = xc, kc
            continue
        new = [clip(pts[0] + 0.5 * (p - pts[0])) for p in pts[1:]]
        pts = [pts[0], *new]
        keys = [keys[0], *f(new)]

"""The result of a design search: the best designs, what binds, what conflicts, and the files.

Written into ``--out DIR`` (atomically, after the search): ``best.toml`` (the best design
that meets the brief, a ready scenario), ``design_1.toml`` ... (the ``search.keep`` best, or
when none meets the brief the nearest ones, ``nearest_1.toml`` ...), ``candidates.csv`` and
``candidates.json`` (every design evaluated, ranked: feasible first by the goal, then the
rest by how far they miss), ``design.json`` (what ``--json`` prints) and, with two goals,
``pareto.png`` (the trade-off front). The journal ``evaluations.jsonl`` and ``design.log``
are kept for resuming.
"""

from __future__ import annotations

import csv
import io
import json
import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ridesim.errors import InputError
from ridesim.jobs.design.brief import Brief, load_brief
from ridesim.jobs.design.evaluate import Evaluator
from ridesim.jobs.design.search import Judged, SearchOutcome, run_search
from ridesim.scenario.toml_text import toml_text
from ridesim.validate import is_number

__all__ = ["DesignResult", "run_design", "pareto_front", "figure_label"]


def pareto_front(designs: list[Judged], sense: tuple[int, ...]) -> list[Judged]:
    """The feasible designs no other feasible design beats on both goals.

    Parameters
    ----------
    designs : list of Judged
        Evaluated designs.
    sense : (int, int)
        +1 minimise, -1 maximise, per goal.

    Returns
    -------
    list of Judged
        The front, in increasing order of the first goal (as minimised).
    """
    if len(sense) != 2:
        raise InputError(f"pareto_front: sense needs one sign per goal for two goals, got {sense!r}")
    pts = []
    for d in designs:
        if d.feasible and all(isinstance(g, (int, float)) and math.isfinite(g) for g in d.goals):
            pts.append((sense[0] * d.goals[0], sense[1] * d.goals[1], d.order, d))
    pts.sort(key=lambda p: (p[0], p[1], p[2]))
    front, best2 = [], math.inf
    for _a, b, _, d in pts:
        if b < best2:
            front.append(d)
            best2 = b
    return front


@dataclass
class DesignResult:
    """A finished design search.

    Attributes
    ----------
    brief : Brief
        The brief.
    outcome : SearchOutcome
        Every design evaluated and the method.
    computed : int
        Designs computed by this run (the rest came from the journal).
    interrupted : bool
        The search was stopped (Ctrl-C) before it finished.
    files : list of str
        Files written.
    """

    brief: Brief
    outcome: SearchOutcome
    computed: int
    interrupted: bool = False
    files: list = field(default_factory=list)

    # ---------------------------------------------------------------- ranking
    @property
    def sense(self) -> tuple[int, ...]:
        """+1 minimise, -1 maximise, per goal."""
        return tuple(g.sense for g in self.brief.goals)

    def ranked(self) -> list[Judged]:
        """Every design: feasible ones by the first goal, then the rest by violation."""
        return sorted(self.outcome.designs,
                      key=lambda d: (d.rank_key(0, self.sense), d.order))

    @property
    def feasible(self) -> bool:
        """Some design meets every requirement."""
        return any(d.feasible for d in self.outcome.designs)

    def top(self) -> list[Judged]:
        """The ``keep`` best feasible designs, or the ``keep`` nearest when none is feasible.

        A design with the same discrete choices as a better one listed and every continuous
        key within 5 % of its range of it is left out (it is in the candidates table), so the
        list shows distinct designs.
        """
        keep = self.brief.search["keep"]
        r = self.ranked()
        ok = [d for d in r if d.feasible]
        out: list[Judged] = []
        for d in ok if ok else r:
            if not any(self._near(d, e) for e in out):
                out.append(d)
            if len(out) >= keep:
                break
        return out

    def _near(self, d: Judged, e: Judged) -> bool:
        """Same discrete choices and every continuous key within 5 % of its range: a repeat."""
        for v in self.brief.variables:
            a, b = d.values[v.key], e.values[v.key]
            if v.continuous:
                low, high = v.bounds()
                if abs(a - b) > 0.05 * (high - low):
                    return False
            elif a != b:
                return False
        return True

    def _goal_figures(self, d: Judged) -> dict:
        out = {r["path"]: r["value"] for r in d.requirements}
        for g, v in zip(self.brief.goals, d.goals, strict=True):
            out[g.path] = v
        return out

    def _entry(self, d: Judged, rank: int) -> dict:
        e = {"rank": rank, "values": d.values, "figures": self._goal_figures(d),
             "feasible": d.feasible, "violation": d.violation if math.isfinite(d.violation)
             else None, "order": d.order, "jobs_run": d.jobs_run}
        if not d.feasible:
            e["failed"] = [{k: q[k] for k in ("requirement", "value", "by", "by_rel")}
                           | {"status": "not evaluated" if q["met"] is None else "failed"}
                           for q in d.requirements if q["met"] is not True]
        if d.error:
            e["error"] = d.error
        return e

    def binding(self) -> list[dict]:
        """For the best design: requirements by their room left, least first (the binding one)."""
        if not self.feasible:
            return []
        best = self.top()[0]
        out = []
        brief_reqs = {r.text(): r for r in self.brief.requirements}
        for q in best.requirements:
            r = brief_reqs[q["requirement"]]
            sl = r.slack(q["value"])
            if sl is not None:
                out.append({"requirement": q["requirement"], "value": q["value"], "slack_rel": sl})
        out.sort(key=lambda x: x["slack_rel"])
        return out

    def conflicts(self) -> dict:
        """When nothing is feasible: which requirements no design met, and which clash."""
        reqs = [r.text() for r in self.brief.requirements]
        met_by = {t: 0 for t in reqs}
        for d in self.outcome.designs:
            for q in d.requirements:
                if q["met"] is True:
                    met_by[q["requirement"]] += 1
        never = [t for t in reqs if met_by[t] == 0]
        each_met = [t for t in reqs if met_by[t] > 0]
        nearest = self.top()[0] if self.outcome.designs else None
        failed = [q["requirement"] for q in (nearest.requirements if nearest else [])
                  if q["met"] is not True]
        clash = [t for t in failed if t in each_met]
        return {"never_met": never, "met_alone_not_together": clash if not never else [],
                "failed_by_nearest": failed}

    # ---------------------------------------------------------------- output
    def to_dict(self) -> dict:
        """The result as one JSON-ready object (what ``--json`` prints).

        Returns
        -------
        dict
            ``feasible``, ``best`` (``values``, ``figures``; None when nothing meets the
            brief), ``nearest`` (when nothing does), ``candidates`` (the best or nearest
            designs, ranked), ``evaluations``, ``computed_now``, ``method``, ``stages``,
            ``binding``, ``conflicts``, ``pareto`` (two goals), ``files``, ``cautions``.
        """
        from ridesim.export.results import json_ready

        top = [self._entry(d, i + 1) for i, d in enumerate(self.top())]
        out: dict[str, Any] = {
            "brief": self.brief.source,
            "feasible": self.feasible,
            "best": ({"values": top[0]["values"], "figures": top[0]["figures"]}
                     if self.feasible else None),
            "candidates": top,
            "evaluations": len(self.outcome.designs),
            "feasible_designs": sum(d.feasible for d in self.outcome.designs),
            "computed_now": self.computed,
            "interrupted": self.interrupted,
            "seed": self.brief.seed,
            "method": self.outcome.method,
            "stages": self.outcome.stages,
            "vary": [v.describe() for v in self.brief.variables],
            "requirements": [r.text() for r in self.brief.requirements],
            "goals": [g.text() for g in self.brief.goals],
            "jobs": list(self.brief.jobs),
        }
        if self.feasible:
            out["binding"] = self.binding()
        else:
            out["nearest"] = top[0] if top else None
            out["conflicts"] = self.conflicts()
        if len(self.brief.goals) == 2:
            out["pareto"] = [{"values": d.values, "goals": d.goals}
                             for d in pareto_front(self.outcome.designs, self.sense)]
        out["files"] = list(self.files)
        if {"simulate", "size-motor"} & set(self.brief.jobs):
            from ridesim.safety import with_safety

            out["cautions"] = with_safety()
        return json_ready(out)

    def to_text(self) -> str:
        """The result as a few lines for the terminal.

        Returns
        -------
        str
        """
        b = self.brief
        if self.interrupted:
            return (f"design brief {Path(b.source).name}: interrupted after {self.computed}"
                    " designs computed; rerun the same command with the same --out to resume"
                    " (finished designs are kept in its journal)")
        lines = [f"design brief {Path(b.source).name}: {len(self.outcome.designs)} designs"
                 f" evaluated ({self.computed} computed now; jobs: {', '.join(b.jobs) or 'none'})",
                 f"method: {self.outcome.method}"]
        top = self.top()

        def vals(d: Judged) -> str:
            return ", ".join(f"{k} = {_short(v)}" for k, v in d.values.items())

        if self.feasible:
            n_ok = sum(d.feasible for d in self.outcome.designs)
            lines.append(f"feasible: yes ({n_ok} designs meet the brief); best by"
                         f" {'; '.join(g.text() for g in b.goals)}:")
            for i, d in enumerate(top):
                goals = ", ".join(f"{g.path} = {_short(v)}" for g, v in zip(b.goals, d.goals,
                                                                           strict=True))
                lines.append(f"  {i + 1}. {vals(d)}  ({goals})")
            bind = self.binding()
            if bind:
                q = bind[0]
                lines.append(f"binds: {q['requirement']} (the best design is at {_short(q['value'])},"
                             f" {100 * q['slack_rel']:.3g} % of the bound to spare)")
        else:
            lines.append("feasible: NO design evaluated meets the brief; the nearest:")
            for i, d in enumerate(top):
                miss = "; ".join(_miss(q) for q in d.requirements if q["met"] is not True)
                lines.append(f"  {i + 1}. {vals(d)}: {d.error or miss}")
            c = self.conflicts()
            if c["never_met"]:
                lines.append("no design met: " + "; ".join(c["never_met"]))
            if c["met_alone_not_together"]:
                lines.append("met alone but not together (they conflict): "
                             + "; ".join(c["met_alone_not_together"]))
        if len(b.goals) == 2:
            front = pareto_front(self.outcome.designs, self.sense)
            lines.append(f"trade-off front: {len(front)} designs (pareto in the JSON"
                         + (", pareto.png)" if self.files else ")"))
        if self.outcome.budget_hit:
            lines.append(f"note: stopped at search.max_evaluations = {b.search['max_evaluations']}")
        for f in self.files:
            if f.endswith("best.toml"):
                lines.append(f"best design: {f} (ready for check, simulate, report, export)")
        if {"simulate", "size-motor"} & set(b.jobs):
            from ridesim.safety import caution_lines, with_safety

            lines += caution_lines(with_safety())
        return "\n".join(lines)

    def write(self, out_dir: str | Path) -> list[str]:
        """Write the scenario files, tables and plot into ``out_dir`` (atomically).

        Parameters
        ----------
        out_dir : str or Path
            The folder.

        Returns
        -------
        list of str
            The files written.
        """
        from ridesim.export.results import json_ready, write_text_atomic

        out = Path(out_dir)
        out.mkdir(parents=True, exist_ok=True)
        files: list[str] = []
        stem = "design" if self.feasible else "nearest"
        for i, d in enumerate(self.top()):
            text = self._scenario_text(d, i + 1)
            files.append(str(write_text_atomic(out / f"{stem}_{i + 1}.toml", text)))
            if i == 0 and self.feasible:
                files.append(str(write_text_atomic(out / "best.toml", text)))
        ranked = self.ranked()
        entries = [self._entry(d, i + 1) for i, d in enumerate(ranked)]
        files.append(str(write_text_atomic(out / "candidates.json",
                                           json.dumps(json_ready(entries), indent=1) + "\n")))
        paths = list(dict.fromkeys([*self.brief.keys, *[q["path"] for q in
                                                        (ranked[0].requirements if ranked else [])],
                                    *[g.path for g in self.brief.goals]]))
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(["rank", *paths, "feasible", "violation", "failed", "error"])
        for e, d in zip(entries, ranked, strict=True):
            w.writerow([e["rank"], *(_cell(d.values.get(p, e["figures"].get(p))) for p in paths),
                        d.feasible, _cell(e["violation"]),
                        "; ".join(f["requirement"] for f in e.get("failed", [])), d.error or ""])
        files.append(str(write_text_atomic(out / "candidates.csv", buf.getvalue())))
        if len(self.brief.goals) == 2:
            files.append(str(self._plot_front(out / "pareto.png")))
        self.files = files
        files.append(str(out / "design.json"))
        stale = [*out.glob("design_*.toml"), *out.glob("nearest_*.toml"), out / "best.toml",
                 out / "pareto.png"]
        for f in stale:  # a previous run's designs that this run did not write again
            if f.exists() and str(f) not in files:
                f.unlink()
        write_text_atomic(out / "design.json", json.dumps(self.to_dict(), indent=1) + "\n")
        return files

    def _scenario_text(self, d: Judged, rank: int) -> str:
        from ridesim.scenario.schema import KEY

        sc = self.brief.base.replace_many(d.values)
        data = sc.to_dict()
        base = Path(sc.base_dir)
        for section, table in data.items():  # files named in the base stay where they are
            if isinstance(table, dict):
                for k, v in table.items():
                    row = KEY.get(f"{section}.{k}")
                    if row is not None and row.kind == "file" and not Path(v).is_absolute():
                        table[k] = str((base / v).resolve())
        data["name"] = f"{sc.name}_design_{rank}"
        vals = ", ".join(f"{k} = {_short(v)}" for k, v in d.values.items())
        data["description"] = (f"{sc.description} Design {rank} of brief"
                               f" {Path(self.brief.source).name}: {vals}.").strip()
        status = "meets the brief" if d.feasible else "does NOT meet the brief (nearest design)"
        return toml_text(data, [f"Written by ridesim design from {self.brief.source}.",
                                f"Design {rank} ({status}): {vals}.",
                                "Run it: ridesim check THIS.toml (simulate, report, export)."])

    def _plot_front(self, path: Path) -> Path:
        from ridesim.render.plots import _save
        from ridesim.render.style import COLOURS, SERIES_COLOURS, new_figure, style_context

        g0, g1 = self.brief.goals
        ok = [d for d in self.outcome.designs if d.feasible and
              all(isinstance(v, (int, float)) for v in d.goals)]
        bad = [d for d in self.outcome.designs if not d.feasible and
               all(isinstance(v, (int, float)) for v in d.goals)]
        front = pareto_front(self.outcome.designs, self.sense)
        # The house style on a figure of its own: the caller's matplotlib backend is untouched.
        with style_context():
            fig = new_figure((1000, 660))
            ax = fig.add_subplot()
            if bad:
                ax.scatter([d.goals[0] for d in bad], [d.goals[1] for d in bad], s=14,
                           c=COLOURS["grid"], label="misses the brief")
            ax.scatter([d.goals[0] for d in ok], [d.goals[1] for d in ok], s=18,
                       c=SERIES_COLOURS[0], label="meets the brief")
            ax.plot([d.goals[0] for d in front], [d.goals[1] for d in front], "o-",
                    c=SERIES_COLOURS[1], label="trade-off front")
            better = {1: "(lower is better)", -1: "(higher is better)"}
            ax.set_xlabel(f"{figure_label(g0.path)} {better[g0.sense]}")
            ax.set_ylabel(f"{figure_label(g1.path)} {better[g1.sense]}")
            ax.legend()
            ax.set_title(f"{Path(self.brief.source).name}: {len(front)} designs on the front")
            return _save(fig, path, svg=False)


#: Plain words for the figures and keys briefs most often optimise (the rest keep their path).
FIGURE_WORDS = {
    "solve.period_m": "track period",
    "check.pair.period_m": "track period",
    "check.pair.depth_max_m": "greatest axle-to-rim distance",
    "check.pair.depth_min_m": "least axle-to-rim distance",
    "check.pair.wheel_mass_kg": "wheel mass",
    "check.friction.required_peak": "friction needed (peak)",
    "check.clearance.min_m": "least clearance",
    "check.torque.peak_Nm": "peak torque per motor",
    "check.torque.rms_Nm": "r.m.s. torque per motor",
    "check.power_peak_W": "peak power",
    "size-motor.peak_torque_Nm": "peak motor torque",
    "simulate.axle_bounce_m": "axle bounce",
    "simulate.torque.peak_Nm": "simulated peak torque per motor",
    "simulate.comfort.weighted_rms_m_s2": "seat vibration (ISO 2631-1 weighted r.m.s.)",
    "simulate.speed.ripple_pct": "speed ripple",
    "wheel.sides": "number of sides",
    "wheel.apothem_m": "wheel apothem",
    "wheel.corner_radius_m": "corner radius",
    "wheel.mean_radius_m": "mean wheel radius",
    "surface.friction": "friction coefficient",
}

#: Units by the end of a path (SI suffixes of keys and figures), longest first.
_UNITS = (("_m_s2", "m/s²"), ("_m_s", "m/s"), ("_rad_s", "rad/s"), ("_kg_m2", "kg m²"),
          ("_Nm", "N m"), ("_pct", "%"), ("_kg", "kg"), ("_rad", "rad"), ("_W", "W"),
          ("_s", "s"), ("_m", "m"))


def figure_label(path: str) -> str:
    """An axis label in plain words with the unit for a figure path or a varied key.

    Parameters
    ----------
    path : str
        ``"simulate.axle_bounce_m"``, ``"wheel.harmonics[0][1]"``...

    Returns
    -------
    str
        ``"axle bounce [m]"``; a coefficient of a harmonic wheel's term by its place in the
        list; any other path itself, with the unit its name ends in.

    Examples
    --------
    >>> figure_label("simulate.axle_bounce_m")
    'axle bounce [m]'
    >>> figure_label("wheel.harmonics[1][2]")
    'harmonics term 1: sine coefficient b_k [fraction of mean radius]'
    """
    if path.startswith("wheel.harmonics[") and path.count("[") == 2:
        i, j = (int(x) for x in path[len("wheel.harmonics"):].strip("[]").split("]["))
        what = ("mode number k", "cosine coefficient a_k", "sine coefficient b_k")[min(j, 2)]
        unit = "" if j == 0 else " [fraction of mean radius]"
        return f"harmonics term {i}: {what}{unit}"
    words = FIGURE_WORDS.get(path, path)
    si = next((u for suffix, u in _UNITS if path.endswith(suffix)), None)
    return f"{words} [{si}]" if si else words


def _miss(q: dict) -> str:
    """One failed requirement of a design, e.g. ``x <= 0.3: 0.414, off by 0.114 (38.1 %)``."""
    if q["met"] is None:
        return f"{q['requirement']}: not evaluated (an earlier job missed its requirement)"
    v = q["value"]
    if is_number(v) and q["by"] is not None:
        return (f"{q['requirement']}: {_short(v)}, off by {_short(q['by'])}"
                f" ({100 * q['by_rel']:.3g} %)")
    return f"{q['requirement']}: got {_short(v)}"


def _short(v: Any) -> str:
    if v is None:
        return "null"
    if isinstance(v, float):
        return f"{v:.6g}"
    if isinstance(v, bool):
        return str(v).lower()
    return str(v)


def _cell(v: Any) -> str:
    if v is None:
        return ""
    if isinstance(v, float):
        return repr(v)
    return str(v)


def run_design(brief: str | Path | Brief, out_dir: str | Path | None = None, *,
               workers: int | None = None, cluster: str | None = None,
               progress=None) -> DesignResult:
    """Load a brief, search it, and write the results into ``out_dir``.

    Parameters
    ----------
    brief : str, Path or Brief
        The brief file, or a brief already loaded.
    out_dir : str or Path, optional
        Folder for the journal (resume), the scenario files and the tables; None writes
        nothing.
    workers : int, optional
        Local worker processes (default: the machine's cores).
    cluster : str, optional
        ``"local"`` or a Dask scheduler address.
    progress : callable, optional
        ``progress(evaluated, computed)`` after each design.

    Returns
    -------
    DesignResult
    """
    b = brief if isinstance(brief, Brief) else load_brief(brief)
    ev = Evaluator(b, out_dir, workers=workers, cluster=cluster, progress=progress)
    interrupted = False
    try:
        outcome = run_search(b, ev)
    except KeyboardInterrupt:
        interrupted = True
        outcome = SearchOutcome(designs=[], method="interrupted", stages={})
    finally:
        ev.close()
    res = DesignResult(brief=b, outcome=outcome, computed=ev.computed, interrupted=interrupted)
    if out_dir is not None and not interrupted:
        res.write(out_dir)
    return res

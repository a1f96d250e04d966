"""Evaluate designs: the jobs per design (cheapest first, screened), a worker pool, a journal.

Each design is one scenario: the base with the varied keys set. Its jobs run through
:func:`ridesim.jobs.run_job`, cheapest first; once a requirement on a job's figures fails,
the dearer jobs are not run (a design that fails ``check`` is never simulated). Designs are
computed on a local process pool or a Dask cluster, as sweeps are, and each result is
appended to the journal ``evaluations.jsonl`` (one fsync'd line a design, keyed by a
fingerprint of the design, the base, the jobs and the requirements), so a rerun of the
same brief reads finished designs back instead of computing them again.
"""

from __future__ import annotations

import hashlib
import json
import os
import time
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path
from typing import Any, TextIO

from ridesim._version import __version__
from ridesim.errors import ScenarioError
from ridesim.jobs.design.brief import Brief, Requirement, figure_of
from ridesim.validate import is_integer

__all__ = ["evaluate_design", "Evaluator", "JOURNAL", "LOG"]

JOURNAL = "evaluations.jsonl"
LOG = "design.log"


def _plain(v: Any) -> Any:
    from ridesim.export.results import json_ready

    return json_ready(v)


def evaluate_design(payload: dict) -> dict:
    """Run one design's jobs in a worker; never raises for a bad design.

    Parameters
    ----------
    payload : dict
        ``base`` (scenario dict), ``base_dir``, ``source``, ``values`` (dotted key ->
        value), ``jobs`` (in order), ``paths`` (figure paths to keep), ``requirements``
        (list of ``[path, op, target, tol]``), ``screen`` (stop after a failing job), ``key``.

    Returns
    -------
    dict
        ``key``, ``values``, ``figures`` (path -> value), ``jobs_run``, ``error`` (None or
        one line) and ``elapsed_s`` (for the log only); with a varied number of a list key
        (``"wheel.harmonics[0][1]"``) also ``lists``: each such list key -> its whole value
        in this design.
    """
    from ridesim.jobs import failure_text, run_job
    from ridesim.scenario.load import scenario_from_dict

    t0 = time.perf_counter()
    row: dict[str, Any] = {"key": payload["key"], "values": payload["values"], "figures": {},
                           "jobs_run": [], "error": None}
    reqs = [Requirement(p, op, t, tol) for p, op, t, tol in payload["requirements"]]
    try:
        sc = scenario_from_dict(payload["base"], base_dir=payload["base_dir"],
                                source=payload["source"]).replace_many(payload["values"])
        lists = sorted({k.split("[", 1)[0] for k in payload["values"] if "[" in k})
        if lists:  # a varied number of a list: the journal keeps the whole list it made
            data = sc.to_dict()
            row["lists"] = {k: data[k.split(".")[0]][k.split(".")[1]] for k in lists}
        for job in payload["jobs"]:
            result = run_job(job, sc)
            row["jobs_run"].append(job)
            for p in payload["paths"]:
                if p.split(".", 1)[0] == job:
                    try:
                        row["figures"][p] = _plain(figure_of(result, p.split(".", 1)[1]))
                    except KeyError:
                        row["figures"][p] = None
            if payload["screen"] and any(
                    r.path.split(".", 1)[0] == job and r.judge(row["figures"].get(r.path))[0]
                    is False for r in reqs):
                break
    except Exception as exc:  # a failing design never stops the search
        row["error"] = failure_text(exc)
    row["elapsed_s"] = time.perf_counter() - t0
    return row


def _fingerprint(values: dict, brief: Brief) -> str:
    blob = json.dumps({"v": values, "base": brief.base.to_dict(), "jobs": brief.jobs,
                       "req": [[r.path, r.op, r.target, r.tol] for r in brief.requirements],
                       "paths": brief.figure_paths(), "ridesim": __version__},
                      sort_keys=True, default=str)
    return hashlib.sha256(blob.encode()).hexdigest()[:16]


class Evaluator:
    """Evaluates batches of designs, reading finished ones back from the journal.

    Parameters
    ----------
    brief : Brief
        The validated brief.
    out_dir : str or Path, optional
        Folder of the journal and log; None keeps no journal (no resume).
    workers : int, optional
        Local worker processes (default: the machine's cores); 1 runs in this process.
    cluster : str, optional
        ``"local"`` for a Dask LocalCluster, or a scheduler address.
    progress : callable, optional
        ``progress(evaluated, computed)`` after each design.
    """

    def __init__(self, brief: Brief, out_dir: str | Path | None = None, *,
                 workers: int | None = None, cluster: str | None = None,
                 progress: Callable[[int, int], None] | None = None) -> None:
        if workers is not None and (not is_integer(workers) or workers < 1):
            raise ScenarioError(f"--workers must be a whole number >= 1, got {workers}")
        self.brief = brief
        self.workers = workers or os.cpu_count() or 1
        self.cluster = cluster
        self.progress = progress
        self.rows: dict[str, dict] = {}        # key -> row, in the order first asked for
        self.computed = 0
        self._journal_rows: dict[str, dict] = {}
        self._out = Path(out_dir) if out_dir is not None else None
        self._journal: TextIO | None = None
        self._log: TextIO | None = None
        self._pool: ProcessPoolExecutor | None = None
        # distributed.Client and LocalCluster once --cluster connects (Dask is optional, untyped)
        self._client: Any = None
        self._local: Any = None
        if self._out is not None:
            self._out.mkdir(parents=True, exist_ok=True)
            self._journal_rows = read_journal(self._out)
            self._journal = open(self._out / JOURNAL, "a", encoding="utf-8")  # noqa: SIM115
            if self._journal.tell() > 0:  # end a line torn by a kill, so the next one stands alone
                with open(self._out / JOURNAL, "rb") as fh:
                    fh.seek(-1, os.SEEK_END)
                    if fh.read(1) != b"\n":
                        self._journal.write("\n")
            self._log = open(self._out / LOG, "a", encoding="utf-8")  # noqa: SIM115
            self._log.write(f"start: {len(self._journal_rows)} designs in the journal,"
                            f" workers={self.workers}, cluster={cluster or 'none'}\n")

    # ------------------------------------------------------------------ plumbing
    def _payload(self, values: dict, key: str) -> dict:
        b = self.brief
        return {"base": b.base.to_dict(), "base_dir": b.base.base_dir, "source": b.base.source,
                "values": values, "jobs": list(b.jobs), "paths": list(b.figure_paths()),
                "requirements": [[r.path, r.op, r.target, r.tol] for r in b.requirements],
                "screen": bool(b.search["screen"]), "key": key}

    def _map(self, payloads: list[dict]) -> list[dict]:
        if not payloads:
            return []
        if self.cluster is not None:
            return self._map_dask(payloads)
        if self.workers == 1 or len(payloads) == 1:
            return [evaluate_design(p) for p in payloads]
        if self._pool is None:
            self._pool = ProcessPoolExecutor(max_workers=self.workers)
        return list(self._pool.map(evaluate_design, payloads))

    def _map_dask(self, payloads: list[dict]) -> list[dict]:
        if self._client is None:
            try:
                from distributed import Client, LocalCluster
            except ImportError:
                raise ScenarioError("--cluster needs Dask: pip install 'ridesim[cluster]'") from None
            if self.cluster == "local":
                self._local = LocalCluster(n_workers=self.workers, threads_per_worker=1,
                                           processes=True, dashboard_address=None)
                self._client = Client(self._local)
            else:
                try:
                    self._client = Client(self.cluster, timeout=10)
                except OSError as exc:
                    raise ScenarioError(f"--cluster {self.cluster}: cannot reach the Dask"
                                        f" scheduler ({exc}); check the address or use"
                                        " --cluster local") from None
        futures = [self._client.submit(evaluate_design, p, key=f"design-{p['key']}", pure=False)
                   for p in payloads]
        return self._client.gather(futures)

    def _record(self, row: dict) -> None:
        elapsed = row.pop("elapsed_s", 0.0)
        if self._journal is not None and self._log is not None:  # both open with an out_dir
            self._journal.write(json.dumps(row, sort_keys=True) + "\n")
            self._journal.flush()
            os.fsync(self._journal.fileno())
            self._log.write(f"computed design {row['key']} in {elapsed:.3f} s\n")
            self._log.flush()
        self.computed += 1

    # ------------------------------------------------------------------ public
    def evaluate(self, designs: list[dict]) -> list[dict]:
        """Evaluate designs (dotted key -> value), computing only those not seen before.

        Parameters
        ----------
        designs : list of dict
            The designs, each the varied keys' values.

        Returns
        -------
        list of dict
            One row per design, in order (see :func:`evaluate_design`).
        """
        keys = [_fingerprint(d, self.brief) for d in designs]
        todo, seen = [], set()
        for d, k in zip(designs, keys, strict=True):
            if k in self.rows or k in seen:
                continue
            seen.add(k)
            if k in self._journal_rows:
                self.rows[k] = self._journal_rows[k]
                if self.progress is not None:
                    self.progress(len(self.rows), self.computed)
            else:
                todo.append(self._payload(d, k))
        for row in self._map(todo):
            self._record(row)
            self.rows[row["key"]] = row
            if self.progress is not None:
                self.progress(len(self.rows), self.computed)
        return [self.rows[k] for k in keys]

    def close(self) -> None:
        """Close the pool or cluster, the journal and the log."""
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None
        if self._client is not None:
            self._client.close()
            if self._local is not None:
                self._local.close()
            self._client = self._local = None
        for fh in (self._journal, self._log):
            if fh is not None:
                fh.close()
        self._journal = self._log = None


def read_journal(out_dir: str | Path) -> dict[str, dict]:
    """Finished designs recorded in ``out_dir``'s journal (a torn last line is ignored).

    Parameters
    ----------
    out_dir : str or Path
        The design's output folder.

    Returns
    -------
    dict
        Fingerprint -> recorded row.
    """
    path = Path(out_dir) / JOURNAL
    rows: dict[str, dict] = {}
    if not path.exists():
        return rows
    with open(path, encoding="utf-8") as fh:
        for line in fh:
            try:
                row = json.loads(line)
            except json.JSONDecodeError:
                continue  # the line being written when the process was killed
            if isinstance(row, dict) and "key" in row:
                rows.setdefault(row["key"], row)
    return rows

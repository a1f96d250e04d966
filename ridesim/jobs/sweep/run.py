"""Run a sweep: local process pool by default, a Dask cluster when asked; resumable.

Results are journalled case by case (``cases.jsonl``, one fsync'd line a case,
written only by the coordinating process), and ``results.csv`` is rewritten
from the journal atomically after each batch, rows in case order. A sweep that
is interrupted (Ctrl-C, a killed worker, a killed process) resumes with the same
command: finished cases are read back, never recomputed, and the final table
equals that of an uninterrupted run (it holds no timings; those go to
``sweep.log``).
"""

from __future__ import annotations

import csv
import io
import json
import os
import time
from collections.abc import Callable
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from pathlib import Path
from typing import Any

from ridesim.errors import ScenarioError
from ridesim.export.results import flatten, write_bytes_atomic, write_text_atomic
from ridesim.jobs.sweep.plan import SweepPlan
from ridesim.records import record
from ridesim.validate import is_integer

__all__ = ["run_sweep", "run_case", "SweepOutcome", "read_journal"]

JOURNAL = "cases.jsonl"
TABLE = "results.csv"
LOG = "sweep.log"


@record
class SweepOutcome:
    """What a sweep run did.

    Attributes
    ----------
    total : int
        Cases in the plan.
    done : int
        Cases with a result (including failed ones) after this run.
    failed : int
        Cases whose run raised an error (their message is in the table).
    computed : int
        Cases computed by this run (the rest were read back from the journal).
    table : Path
        The results table.
    interrupted : bool
        True when the run stopped before all cases were done.
    warnings : tuple of str
        Journal lines skipped on reading, by line number (their cases were run again).
    """

    total: int
    done: int
    failed: int
    computed: int
    table: Path
    interrupted: bool
    warnings: tuple[str, ...] = ()


def run_case(payload: dict) -> dict:
    """Run one case in a worker; never raises for a bad case.

    Parameters
    ----------
    payload : dict
        ``base`` (scenario dict), ``base_dir``, ``source``, ``run``, ``index``, ``key``,
        ``values`` (dotted key -> value).

    Returns
    -------
    dict
        ``case``, ``key``, ``metrics`` (flat dict) and ``error`` (None or one line), and
        ``elapsed_s`` (wall time, for the log only).
    """
    from ridesim.jobs import failure_text, run_job
    from ridesim.scenario.load import scenario_from_dict

    t0 = time.perf_counter()
    row: dict[str, Any] = {"case": payload["index"], "key": payload["key"], "metrics": {},
                           "error": None}
    try:
        sc = scenario_from_dict(payload["base"], base_dir=payload["base_dir"],
                                source=payload["source"])
        sc = sc.replace_many(payload["values"]) if payload["values"] else sc
        row["metrics"] = flatten(run_job(payload["run"], sc), lists="skip")
    except Exception as exc:  # a failing case never stops the sweep
        row["error"] = failure_text(exc)
    row["elapsed_s"] = time.perf_counter() - t0
    return row


def read_journal(out_dir: str | Path, problems: list[str] | None = None) -> dict[int, dict]:
    """Finished cases recorded in ``out_dir``'s journal.

    A line that is not a case record is skipped (its case is recomputed) and reported by
    its line number in ``problems``: a last line cut short by a kill, junk, invalid bytes, a
    valid JSON value of the wrong shape. A case recorded twice with different figures is
    refused: the journal cannot say which is right.

    Parameters
    ----------
    out_dir : str or Path
        The sweep's output folder.
    problems : list of str, optional
        Receives one line per skipped journal line.

    Returns
    -------
    dict
        Case number -> recorded row.

    Raises
    ------
    ScenarioError
        A case recorded twice with different figures.
    """
    path = Path(out_dir) / JOURNAL
    rows: dict[int, dict] = {}
    where: dict[int, int] = {}
    if not path.exists():
        return rows
    data = path.read_bytes()
    lines = data.split(b"\n")
    for lineno, raw in enumerate(lines, start=1):
        if not raw.strip():
            continue
        last = lineno == len(lines)  # no newline after it: the line being written at a kill
        try:
            row = json.loads(raw.decode("utf-8"))
            ok = (isinstance(row, dict) and isinstance(row.get("case"), int)
                  and not isinstance(row.get("case"), bool) and isinstance(row.get("key"), str)
                  and isinstance(row.get("metrics"), dict) and "error" in row)
        except (UnicodeDecodeError, ValueError):
            row, ok = None, False
        if not ok:
            if problems is not None:
                why = "cut short (the run was killed while writing it)" if last else \
                    "not a case record"
                problems.append(f"{path.name} line {lineno}: {why}; skipped, its case is"
                                " computed again")
            continue
        case = row["case"]
        if case in rows:
            if rows[case] != row:
                raise ScenarioError(
                    f"{path} line {lineno} records case {case} again with different figures"
                    f" (first on line {where[case]}); delete one of the two lines or use a new"
                    " --out folder")
            continue
        rows[case], where[case] = row, lineno
    return rows


def _lock(out: Path):
    """Hold an exclusive lock on the sweep folder, or refuse: two sweeps must not share it."""
    fh = open(out / ".lock", "a+")  # noqa: SIM115 - held for the whole run
    try:
        import fcntl

        fcntl.flock(fh.fileno(), fcntl.LOCK_EX | fcntl.LOCK_NB)
    except ImportError:  # no fcntl (Windows): no lock
        pass
    except OSError:
        fh.close()
        raise ScenarioError(f"another sweep is writing into {out} (its lock is held); wait for"
                            " it to finish or use another --out folder") from None
    return fh


def _watch_parent() -> None:
    """Pool worker start-up: exit when the coordinating process dies (even by SIGKILL)."""
    import threading

    parent = os.getppid()

    def watch() -> None:
        while True:
            time.sleep(0.5)
            if os.getppid() != parent:
                os._exit(1)

    threading.Thread(target=watch, daemon=True).start()


def _cell(v: Any) -> str:
    if v is None:
        return ""
    if isinstance(v, float):
        return repr(v)
    if isinstance(v, (list, tuple, dict)):
        return json.dumps(v)
    return str(v)


def _write_table(plan: SweepPlan, rows: dict[int, dict], out_dir: Path) -> Path:
    metric_keys = sorted({k for r in rows.values() for k in r["metrics"]})
    header = ["case", *plan.columns, *metric_keys, "error"]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for case in plan.cases:
        r = rows.get(case.index)
        if r is None:
            continue
        w.writerow([case.index, *(_cell(case.values.get(c)) for c in plan.columns),
                    *(_cell(r["metrics"].get(k)) for k in metric_keys), _cell(r["error"])])
    path = write_text_atomic(out_dir / TABLE, buf.getvalue())
    try:  # Parquet as well when pyarrow is installed
        import pyarrow as pa
        import pyarrow.csv as pacsv
        import pyarrow.parquet as pq

        table = pacsv.read_csv(pa.py_buffer(buf.getvalue().encode()))
        sink = pa.BufferOutputStream()
        pq.write_table(table, sink)
        write_bytes_atomic(out_dir / "results.parquet", sink.getvalue().to_pybytes())
    except ImportError:
        pass
    return path


def _payload(plan: SweepPlan, case) -> dict:
    return {"base": plan.base.to_dict(), "base_dir": plan.base.base_dir,
            "source": plan.base.source, "run": plan.run, "index": case.index,
            "key": case.key, "values": case.values}


def run_sweep(
    plan: SweepPlan,
    out_dir: str | Path,
    *,
    workers: int | None = None,
    cluster: str | None = None,
    progress: Callable[[int, int, int], None] | None = None,
    batch: int = 8,
) -> SweepOutcome:
    """Run every case not yet in ``out_dir``'s journal.

    Parameters
    ----------
    plan : SweepPlan
        From :func:`ridesim.jobs.sweep.plan.load_sweep`.
    out_dir : str or Path
        Output folder (created); holds ``cases.jsonl``, ``results.csv``, ``sweep.log``.
    workers : int, optional
        Local worker processes (default: the machine's cores); 1 runs in this process.
    cluster : str, optional
        ``"local"`` to start a Dask LocalCluster, or a scheduler address such as
        ``"tcp://10.0.0.5:8786"``. Requires ``pip install ridesim[cluster]``.
    progress : callable, optional
        ``progress(done, failed, total)`` after each case.
    batch : int
        Cases between rewrites of the results table.

    Returns
    -------
    SweepOutcome
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    lock = _lock(out)
    try:
        return _run_locked(plan, out, workers, cluster, progress, batch)
    finally:
        lock.close()


def _run_locked(plan, out: Path, workers, cluster, progress, batch) -> SweepOutcome:
    problems: list[str] = []
    rows = read_journal(out, problems)
    by_index = {c.index: c for c in plan.cases}
    for i, r in rows.items():
        c = by_index.get(i)
        if c is None or c.key != r["key"]:
            raise ScenarioError(
                f"{out} holds results of a different sweep or of another ridesim version (case {i}"
                " differs); use a new --out folder or delete the old one"
            )
    todo = [c for c in plan.cases if c.index not in rows]
    if workers is not None and (not is_integer(workers) or workers < 1):
        raise ScenarioError(f"--workers must be >= 1, got {workers}")
    n_workers = workers or os.cpu_count() or 1
    computed = 0
    interrupted = False
    since_table = 0

    def failed() -> int:
        return sum(1 for r in rows.values() if r["error"])

    jpath = out / JOURNAL
    torn = jpath.exists() and jpath.stat().st_size > 0 and not jpath.read_bytes().endswith(b"\n")
    with open(jpath, "a", encoding="utf-8") as journal, \
            open(out / LOG, "a", encoding="utf-8") as log:
        if torn:  # a line cut short by a kill: the next record starts on a fresh line
            journal.write("\n")
        log.write(f"start: {len(todo)} to run, {len(rows)} already done,"
                  f" workers={n_workers}, cluster={cluster or 'none'}\n")

        def record(row: dict) -> None:
            nonlocal computed, since_table
            elapsed = row.pop("elapsed_s", 0.0)
            journal.write(json.dumps(row, sort_keys=True) + "\n")
            journal.flush()
            os.fsync(journal.fileno())
            log.write(f"computed case {row['case']} in {elapsed:.3f} s\n")
            log.flush()
            rows[row["case"]] = row
            computed += 1
            since_table += 1
            if since_table >= batch:
                _write_table(plan, rows, out)
                since_table = 0
            if progress is not None:
                progress(len(rows), failed(), len(plan.cases))

        try:
            if not todo:
                pass
            elif cluster is not None:
                _run_dask(plan, todo, cluster, n_workers if workers else None, record)
            elif n_workers == 1:
                for c in todo:
                    record(run_case(_payload(plan, c)))
            else:
                _run_pool(plan, todo, n_workers, record)
        except KeyboardInterrupt:
            interrupted = True
            log.write("interrupted\n")
        finally:
            _write_table(plan, rows, out)
    return SweepOutcome(total=len(plan.cases), done=len(rows), failed=failed(),
                        computed=computed, table=out / TABLE,
                        interrupted=interrupted or len(rows) < len(plan.cases),
                        warnings=tuple(problems))


def _run_pool(plan: SweepPlan, todo: list, n_workers: int, record: Callable) -> None:
    pool = ProcessPoolExecutor(max_workers=n_workers, initializer=_watch_parent)
    try:
        pending = set()
        queue = iter(todo)
        for c in queue:  # keep a bounded number of cases in flight
            pending.add(pool.submit(run_case, _payload(plan, c)))
            if len(pending) >= 4 * n_workers:
                break
        while pending:
            done, pending = wait(pending, return_when=FIRST_COMPLETED)
            for f in sorted(done, key=lambda f: f.result()["case"]):
                record(f.result())
                nxt = next(queue, None)
                if nxt is not None:
                    pending.add(pool.submit(run_case, _payload(plan, nxt)))
    finally:
        pool.shutdown(wait=True, cancel_futures=True)


def _run_dask(plan: SweepPlan, todo: list, cluster: str, n_workers: int | None,
              record: Callable) -> None:
    try:
        from distributed import Client, LocalCluster, as_completed
    except ImportError:
        raise ScenarioError("--cluster needs Dask: pip install 'ridesim[cluster]'") from None
    local = None
    if cluster == "local":
        local = LocalCluster(n_workers=n_workers or os.cpu_count() or 1, threads_per_worker=1,
                             processes=True, dashboard_address=None)
        client = Client(local)
    else:
        try:
            client = Client(cluster, timeout=10)
        except OSError as exc:
            raise ScenarioError(f"--cluster {cluster}: cannot reach the Dask scheduler ({exc});"
                                " check the address or use --cluster local") from None
    try:
        futures = [client.submit(run_case, _payload(plan, c), key=f"case-{c.index}-{c.key}",
                                 pure=False) for c in todo]
        for fut in as_completed(futures):
            record(fut.result())
    finally:
        client.close()
        if local is not None:
            local.close()

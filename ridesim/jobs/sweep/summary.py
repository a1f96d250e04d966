"""Summaries of a sweep table: the best cases by a metric, and a metric plotted against parameters."""

from __future__ import annotations

import csv
import math
from pathlib import Path

from ridesim.errors import ScenarioError

__all__ = ["read_table", "best_cases", "plot_metric"]


def read_table(path: str | Path) -> list[dict[str, str]]:
    """Rows of a ``results.csv`` as dicts of strings.

    Parameters
    ----------
    path : str or Path
        The table.

    Returns
    -------
    list of dict
    """
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def _num(v: str) -> float | None:
    if v in ("", None):
        return None
    if v in ("True", "False"):
        return float(v == "True")
    try:
        x = float(v)
    except ValueError:
        return None
    return x if math.isfinite(x) else None


def best_cases(rows: list[dict[str, str]], metric: str, n: int = 5, *,
               highest: bool = False) -> list[dict[str, str]]:
    """The ``n`` cases with the lowest (or highest) value of ``metric``; failed cases skipped.

    Parameters
    ----------
    rows : list of dict
        From :func:`read_table`.
    metric : str
        A column name, e.g. ``axle_bounce_m`` or ``friction.required_peak``.
    n : int
        How many.
    highest : bool
        Rank from the highest value instead.

    Returns
    -------
    list of dict
    """
    if rows and metric not in rows[0]:
        cols = [c for c in rows[0] if c not in ("case", "error")]
        raise ScenarioError(f"--best {metric!r} is not a column of the table; use one of "
                            + ", ".join(cols[:12]) + (" ..." if len(cols) > 12 else ""))
    scored = [(x, r) for r in rows
              if not r.get("error") and (x := _num(r.get(metric, ""))) is not None]
    scored.sort(key=lambda xr: xr[0], reverse=highest)
    return [r for _, r in scored[:n]]


def plot_metric(rows: list[dict[str, str]], metric: str, params: list[str], path: str | Path) -> Path:
    """Plot ``metric`` against one parameter (line) or two (coloured grid); write a PNG.

    Parameters
    ----------
    rows : list of dict
        From :func:`read_table`.
    metric : str
        Column to plot.
    params : list of str
        One or two parameter columns.
    path : str or Path
        PNG to write (atomically).

    Returns
    -------
    Path
    """
    import io

    # A pyplot-free figure on its own Agg canvas: draws off-screen without switching the
    # caller's backend (a notebook keeps its own) and without pyplot's figure registry.
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from ridesim.export.results import write_bytes_atomic

    for p in [metric, *params]:
        if rows and p not in rows[0]:
            raise ScenarioError(f"{p!r} is not a column of the sweep table")
    ok: list[dict[str, float]] = []  # the rows whose metric and parameters are all numbers
    for r in rows:
        if r.get("error"):
            continue
        got = {p: _num(r[p]) for p in [metric, *params]}
        nums = {p: v for p, v in got.items() if v is not None}
        if len(nums) == len(got):
            ok.append(nums)
    fig = Figure(figsize=(6.4, 4.0), dpi=100)
    FigureCanvasAgg(fig)
    ax = fig.subplots()
    if len(params) == 1:
        xs = sorted({r[params[0]] for r in ok})
        groups = {x: [r[metric] for r in ok if r[params[0]] == x] for x in xs}
        ax.plot(xs, [sum(v) / len(v) for v in groups.values()], "o-", color="#1f5f8b")
        if any(len(v) > 1 for v in groups.values()):
            ax.fill_between(xs, [min(v) for v in groups.values()], [max(v) for v in groups.values()],
                            color="#1f5f8b", alpha=0.2, label="range over other parameters")
            ax.legend(frameon=False)
        ax.set_xlabel(params[0])
        ax.set_ylabel(metric)
    else:
        sc = ax.scatter([r[params[0]] for r in ok], [r[params[1]] for r in ok],
                        c=[r[metric] for r in ok], cmap="viridis", s=60)
        fig.colorbar(sc, ax=ax, label=metric)
        ax.set_xlabel(params[0])
        ax.set_ylabel(params[1])
    ax.set_title(f"{metric} across the sweep ({len(ok)} cases)")
    ax.grid(alpha=0.3)
    fig.tight_layout()
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    return write_bytes_atomic(path, buf.getvalue())

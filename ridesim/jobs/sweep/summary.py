"""Summaries of a sweep table: the best cases by a metric, and a metric plotted against parameters."""

from __future__ import annotations

import csv
import math
from pathlib import Path

from ridesim.errors import ScenarioError

__all__ = ["read_table", "read_results", "best_cases", "plot_metric"]


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
    from ridesim.export.results import write_bytes_atomic
    from ridesim.render.plots import figure_png
    from ridesim.render.report import axis_label
    from ridesim.render.style import COLOURS, SERIES_COLOURS, new_figure, style_context

    for p in [metric, *params]:
        if rows and p not in rows[0]:
            raise ScenarioError(f"{p!r} is not a column of the sweep table")
    # The rows without an error whose metric and parameters are all numbers, as numbers.
    ok: list[dict[str, float]] = []
    for row in rows:
        if row.get("error"):
            continue
        vals: dict[str, float] = {}
        for p in (metric, *params):
            v = _num(row[p])
            if v is None:
                break
            vals[p] = v
        else:
            ok.append(vals)
    m_label, m_f = axis_label(metric)
    labels = [axis_label(p) for p in params]
    # The house style, on a pyplot-free figure of its own Agg canvas (the caller's
    # matplotlib backend is left alone).
    with style_context():
        fig = new_figure((1100, 700))
        ax = fig.add_subplot()
        if len(params) == 1:
            (x_label, x_f) = labels[0]
            xs = sorted({r[params[0]] for r in ok})
            groups = {x: [r[metric] * m_f for r in ok if r[params[0]] == x] for x in xs}
            xx = [x * x_f for x in xs]
            ax.plot(xx, [sum(v) / len(v) for v in groups.values()], "o-", color=SERIES_COLOURS[0],
                    label="mean over the other parameters")
            if any(len(v) > 1 for v in groups.values()):
                ax.fill_between(xx, [min(v) for v in groups.values()],
                                [max(v) for v in groups.values()], color=SERIES_COLOURS[0],
                                alpha=0.18, lw=0, label="range over the other parameters")
                ax.legend()
            ax.set_xlabel(x_label)
            ax.set_ylabel(m_label)
        else:
            (x_label, x_f), (y_label, y_f) = labels[:2]
            sc = ax.scatter([r[params[0]] * x_f for r in ok],
                            [r[params[1]] * y_f for r in ok],
                            c=[r[metric] * m_f for r in ok], cmap="viridis", s=70,
                            edgecolors=COLOURS["ink"], linewidths=0.4)
            fig.colorbar(sc, ax=ax, label=m_label)
            ax.set_xlabel(x_label)
            ax.set_ylabel(y_label)
        ax.set_title(f"{m_label.split(' [')[0]} across the sweep ({len(ok)} cases)")
        png = figure_png(fig)
    return write_bytes_atomic(path, png)


def read_results(out_dir: str | Path):
    """A sweep's results table (``results.csv`` in its output folder) as a pandas DataFrame.

    Parameters
    ----------
    out_dir : str or Path
        The sweep's output folder (or the ``results.csv`` itself).

    Returns
    -------
    pandas.DataFrame
        One row a case; numbers parsed, unit-suffixed column names as in the table.

    Raises
    ------
    InputError
        pandas is not installed (the ``dataframe`` extra), or there is no table.
    """
    from ridesim.errors import InputError
    from ridesim.model.display import require_pandas

    pd = require_pandas()
    path = Path(out_dir)
    if path.is_dir():
        path = path / "results.csv"
    if not path.is_file():
        raise InputError(f"no sweep results table at {path}: run `ridesim sweep` with --out there")
    return pd.read_csv(path)

"""Showing ridesim objects in a notebook: small SVG drawings and HTML tables, pure Python.

Jupyter shows an object by calling its ``_repr_svg_`` or ``_repr_html_``. The model, solve,
metrics and job classes define those by calling these helpers, which need neither matplotlib
nor anything above the model layer, so every layer from the model up can show itself.
Figures are formatted as in the report: the unit from the key's suffix, in reading units
(mm, degrees), four significant digits, no floating-point residues.
"""

from __future__ import annotations

import html
import math
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

import numpy as np

from ridesim.validate import is_number

__all__ = ["svg_drawing", "html_table", "format_figure", "unit_of", "UNITS", "require_pandas"]

# (suffix, unit shown, factor to the shown unit, most decimals shown). Longest suffixes
# first so ``_m_s2`` wins over ``_m_s`` and ``_m``.
UNITS = (
    ("_kg_m2", "kg·m²", 1.0, 7),
    ("_kg_m3", "kg/m³", 1.0, 1),
    ("_m_s175", "m/s^1.75", 1.0, 4),
    ("_m_s2", "m/s²", 1.0, 4),
    ("_rad_s", "rad/s", 1.0, 3),
    ("_m_s", "m/s", 1.0, 4),
    ("_rpm", "rpm", 1.0, 1),
    ("_Nm", "N·m", 1.0, 5),
    ("_rad", "deg", 180.0 / math.pi, 3),
    ("_pct", "%", 1.0, 2),
    ("_hz", "Hz", 1.0, 2),
    ("_kg", "kg", 1.0, 4),
    ("_W", "W", 1.0, 4),
    ("_m", "mm", 1000.0, 3),
    ("_s", "s", 1.0, 3),
)
"""Unit suffixes of key names and how they read."""

_PLAIN_DECIMALS = 4  # figures without a unit: friction coefficients, ratios, counts of periods


def unit_of(key: str) -> tuple[str, float, int]:
    """Unit a figure is shown in, from its key's unit suffix.

    Parameters
    ----------
    key : str
        Dotted key path, the unit in the last name (``clearance.min_m``).

    Returns
    -------
    (str, float, int)
        Unit shown (``""`` for a plain number), factor from the key's SI unit to it, and
        the most decimals shown (the resolution that matters: 0.001 mm, 0.001 deg, ...).

    Examples
    --------
    >>> unit_of("clearance.min_m")
    ('mm', 1000.0, 3)
    >>> unit_of("speed.mean_m_s")[0], unit_of("window_s")[0], unit_of("friction.available")[0]
    ('m/s', 's', '')
    """
    name = key.split(".")[-1].split("[")[0]
    for suffix, unit, factor, decimals in UNITS:
        if name.endswith(suffix):
            return unit, factor, decimals
    return "", 1.0, _PLAIN_DECIMALS


def _number(x: float, max_decimals: int) -> str:
    """Fixed-point text of a number: four significant digits, at most ``max_decimals``."""
    if not math.isfinite(x):
        return "none"
    ax = abs(x)
    if ax >= 1000.0:
        text = f"{x:,.0f}"
    else:
        decimals = max_decimals if ax == 0.0 else 3 - math.floor(math.log10(ax))
        text = f"{x:.{min(max(decimals, 0), max_decimals)}f}"
    if text.startswith("-") and not text.strip("-0.,"):
        text = text[1:]  # a residue below the resolution: no "-0.000"
    return text


def _num_text(x, factor: float, decimals: int, unit: str) -> str:
    if isinstance(x, (int, np.integer)) and not unit:
        return str(int(x))
    return _number(float(x) * factor, decimals)


def format_figure(key: str, v) -> str:
    """Text of one JSON figure as ridesim shows it: unit from the key, sensible digits.

    Floats are shown fixed-point in the key's reading unit (metres as millimetres, radians
    as degrees) with four significant digits, never finer than the unit's resolution, so a
    floating-point residue reads as zero: a clearance of 6e-12 m is ``0.000 mm``.

    Parameters
    ----------
    key : str
        Dotted key path (gives the unit).
    v : object
        A JSON value.

    Returns
    -------
    str

    Examples
    --------
    >>> format_figure("clearance.min_m", 5.99998e-12)
    '0.000 mm'
    >>> format_figure("torque.mean_Nm", -1.23e-17), format_figure("speed_m_s", 0.4)
    ('0.00000 N·m', '0.4000 m/s')
    >>> format_figure("torque.by_phase.startup.window_s", [0.0, 2.0])
    '0.000, 2.000 s'
    """
    if v is None:
        return "none"
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    unit, factor, decimals = unit_of(key)
    if isinstance(v, (list, tuple)):
        if not v:
            return "none"
        if all(is_number(x) for x in v):
            body = ", ".join(_num_text(x, factor, decimals, unit) for x in v)
            return f"{body} {unit}" if unit else body
        return ", ".join(format_figure(key, x) for x in v)
    if isinstance(v, (int, float, np.number)):
        body = _num_text(v, factor, decimals, unit)
        return f"{body} {unit}" if unit else body
    return str(v)


def _leaves(d: Mapping, prefix: str = "") -> list[tuple[str, Any]]:
    # The leaves of a JSON-like result: numbers, strings, None, lists (of sentences, of numbers).
    rows: list[tuple[str, Any]] = []
    for k, v in d.items():
        key = f"{prefix}{k}"
        if isinstance(v, Mapping):
            rows += _leaves(v, key + ".")
        elif isinstance(v, list) and v and all(isinstance(x, Mapping) for x in v):
            for i, x in enumerate(v):
                rows += _leaves(x, f"{key}[{i}].")
        else:
            rows.append((key, v))
    return rows


def html_table(d: Mapping, title: str, *, sentences: Sequence[str] = ("reasons", "notes", "cautions"),
               limit: int = 400) -> str:
    """An HTML table of a result's figures (formatted), then its sentences as a list.

    Parameters
    ----------
    d : Mapping
        The result as JSON (its ``to_dict()``).
    title : str
        Caption of the table.
    sentences : sequence of str
        Keys whose lists of sentences are shown below the table, not in it.
    limit : int
        Most rows shown.

    Returns
    -------
    str

    Examples
    --------
    >>> "<td>0.000 mm</td>" in html_table({"clearance": {"min_m": 6e-12}}, "check")
    True
    """
    rows, notes = [], []
    for key, v in _leaves(d):
        if key.split(".")[-1] in sentences:
            notes += [str(s) for s in (v or [])]
            continue
        rows.append(f"<tr><th style='text-align:left;font-weight:normal'>{html.escape(key)}</th>"
                    f"<td>{html.escape(format_figure(key, v))}</td></tr>")
    more = len(rows) - limit
    body = "".join(rows[:limit]) + (f"<tr><td colspan=2>... {more} more</td></tr>" if more > 0 else "")
    out = (f"<table><caption style='text-align:left'><b>{html.escape(title)}</b></caption>"
           f"{body}</table>")
    if notes:
        out += ("<details><summary>findings and cautions</summary><ul>"
                + "".join(f"<li>{html.escape(n)}</li>" for n in notes) + "</ul></details>")
    return out


def svg_drawing(shapes: Iterable[tuple[np.ndarray, str, str]], *, width_px: int = 360,
                title: str = "", marks: Iterable[tuple[float, float]] = ()) -> str:
    """A small SVG of outlines in metres (y up), scaled to fit, with a scale bar.

    Parameters
    ----------
    shapes : iterable of (ndarray (N, 2), str, str)
        Points [m], stroke colour and fill colour (``"none"`` for an open line).
    width_px : int
        Drawing width [px].
    title : str
        Text under the drawing.
    marks : iterable of (float, float)
        Points [m] marked with a dot (axles, contacts).

    Returns
    -------
    str
        An ``<svg>`` document.

    Examples
    --------
    >>> svg = svg_drawing([(np.array([[0, 0], [0.1, 0], [0.1, 0.1]]), "#1f4e79", "none")])
    >>> svg.startswith("<svg") and "polyline" in svg
    True
    """
    shapes = [(np.asarray(p, float), s, f) for p, s, f in shapes]
    marks = list(marks)
    pts = np.vstack([p for p, _, _ in shapes] + ([np.asarray(marks, float)] if marks else []))
    lo, hi = pts.min(axis=0), pts.max(axis=0)
    span = np.maximum(hi - lo, 1e-9)
    pad = 8.0
    s = (width_px - 2 * pad) / span[0]
    height = int(min(span[1] * s, 2.0 * width_px)) + 2 * pad
    s = min(s, (height - 2 * pad) / span[1])
    foot = 34 if title else 22

    def xy(p: np.ndarray) -> str:
        x = pad + (p[:, 0] - lo[0]) * s
        y = pad + (hi[1] - p[:, 1]) * s
        return " ".join(f"{a:.1f},{b:.1f}" for a, b in zip(x, y, strict=True))

    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{width_px}" height="{height + foot:.0f}"'
             f' viewBox="0 0 {width_px} {height + foot:.0f}" font-family="sans-serif" font-size="11">']
    for p, stroke, fill in shapes:
        tag = "polygon" if fill != "none" else "polyline"
        parts.append(f'<{tag} points="{xy(p)}" stroke="{stroke}" fill="{fill}" stroke-width="1.5"'
                     ' stroke-linejoin="round"/>')
    for mx, my in marks:
        c = xy(np.array([[mx, my]])).split(",")
        parts.append(f'<circle cx="{c[0]}" cy="{c[1]}" r="2.5" fill="#1d2530"/>')
    # Scale bar: the largest 1, 2 or 5 x 10^k m within a quarter of the width.
    target = 0.25 * span[0]
    p10 = 10.0 ** math.floor(math.log10(target))
    bar = next(f * p10 for f in (5.0, 2.0, 1.0) if f * p10 <= target * (1 + 1e-9))
    y0 = height + 10
    parts.append(f'<line x1="{pad}" y1="{y0}" x2="{pad + bar * s:.1f}" y2="{y0}" stroke="#1d2530"'
                 ' stroke-width="2"/>')
    label = f"{bar * 1000:g} mm" if bar < 1 else f"{bar:g} m"
    parts.append(f'<text x="{pad + bar * s + 6:.1f}" y="{y0 + 4}">{label}</text>')
    if title:
        parts.append(f'<text x="{pad}" y="{y0 + 20}">{html.escape(title)}</text>')
    parts.append("</svg>")
    return "".join(parts)


def require_pandas():
    """The pandas module, or one clear error naming the extra that installs it.

    Returns
    -------
    module
        :mod:`pandas`.

    Raises
    ------
    InputError
        pandas is not installed.
    """
    try:
        import pandas
    except ImportError:
        from ridesim.errors import InputError

        raise InputError("DataFrames need pandas, an optional extra: pip install 'ridesim[dataframe]'"
                         " (or pip install pandas)") from None
    return pandas

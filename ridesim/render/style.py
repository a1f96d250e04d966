"""One plot style for every ridesim picture: colours, fonts, line styles, figure making.

Nothing here imports matplotlib at module level; :func:`new_figure` does, inside, and
returns a figure drawn by the Agg back-end without touching pyplot's global state.
"""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from typing import Literal

__all__ = [
    "COLOURS",
    "SERIES_COLOURS",
    "SERIES_STYLES",
    "RC",
    "DPI",
    "style_context",
    "new_figure",
    "series_style",
]

COLOURS = {
    "ink": "#1d2530",          # text, axle mark
    "grid": "#d5dae0",
    "wheel_fill": "#a9c8e2",
    "wheel_edge": "#1f4e79",
    "ground_fill": "#d8c7a6",
    "ground_edge": "#6e5634",
    "axle_line": "#7d8793",
    "cusp": "#b8323a",
    "com": "#d0672a",
    "dimension": "#3b7a4a",
    "contact": "#b8323a",
}
"""Named colours of the geometry pictures."""

SERIES_COLOURS = ("#1f4e79", "#d0672a", "#3b8a4a", "#7a4e9a", "#b8323a", "#5c6670", "#b08a1e")
"""Colour cycle of data series."""

SERIES_STYLES = {
    "simulated": {"linestyle": "-", "linewidth": 1.4, "alpha": 1.0},
    "analytic": {"linestyle": (0, (6, 3)), "linewidth": 1.8, "alpha": 0.95},
    "limit": {"linestyle": (0, (2, 2)), "linewidth": 1.2, "alpha": 0.9},
    "raw": {"linestyle": "-", "linewidth": 0.7, "alpha": 0.45},
}
"""Line styles by kind of series: simulated (solid), analytic (dashed), limit (dotted), raw (faint)."""

DPI = 150
"""Dots per inch of every PNG (figure size in pixels / DPI = size in inches)."""

RC = {
    "font.family": "DejaVu Sans",
    "font.size": 9.5,
    "axes.titlesize": 11,
    "axes.titleweight": "bold",
    "axes.titlelocation": "left",
    "axes.labelsize": 9.5,
    "axes.edgecolor": "#59636e",
    "axes.labelcolor": COLOURS["ink"],
    "axes.linewidth": 0.8,
    "axes.grid": True,
    "axes.axisbelow": True,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.prop_cycle": None,  # filled in by style_context (needs matplotlib's cycler)
    "grid.color": COLOURS["grid"],
    "grid.linewidth": 0.6,
    "xtick.color": "#59636e",
    "ytick.color": "#59636e",
    "xtick.labelsize": 8.5,
    "ytick.labelsize": 8.5,
    "legend.fontsize": 8.5,
    "legend.frameon": True,
    "legend.framealpha": 0.9,
    "legend.edgecolor": COLOURS["grid"],
    "figure.facecolor": "white",
    "axes.facecolor": "white",
    "savefig.facecolor": "white",
    "lines.solid_capstyle": "round",
    "svg.fonttype": "none",
}
"""matplotlib rc settings of the ridesim style."""


@contextmanager
def style_context() -> Iterator[None]:
    """Apply the ridesim style for the duration of a ``with`` block (restored afterwards)."""
    import matplotlib as mpl
    from cycler import cycler

    rc = dict(RC)
    rc["axes.prop_cycle"] = cycler(color=list(SERIES_COLOURS))
    # matplotlib types rc_context's keys as a Literal of every rcParams name; RC is a plain dict.
    with mpl.rc_context(rc):  # type: ignore[arg-type]
        yield


def new_figure(size_px: tuple[int, int],
               layout: Literal["constrained", "compressed", "tight"] | None = "constrained"):
    """A matplotlib figure of exactly ``size_px`` pixels at :data:`DPI`, on the Agg canvas.

    Call inside :func:`style_context` so the figure picks up the style.

    Parameters
    ----------
    size_px : (int, int)
        Width and height [px], each at least 200.
    layout : str or None
        matplotlib layout engine (``"constrained"``), or None to place axes by hand.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    w, h = size_px
    fig = Figure(figsize=(w / DPI, h / DPI), dpi=DPI, layout=layout)
    FigureCanvasAgg(fig)
    return fig


def series_style(kind: str) -> dict:
    """Line keywords for a series of kind ``simulated``, ``analytic``, ``limit`` or ``raw``.

    Parameters
    ----------
    kind : str
        Kind of series.

    Returns
    -------
    dict
        Keywords for ``Axes.plot``.
    """
    from ridesim.errors import InputError

    if kind not in SERIES_STYLES:
        raise InputError(f"series kind must be one of {', '.join(SERIES_STYLES)}, got {kind!r}")
    return dict(SERIES_STYLES[kind])

"""Outputs for people: still pictures (:mod:`.plots`), GIF clips (:mod:`.clip`), one style (:mod:`.style`).

Importing this package is light: matplotlib and Pillow are imported inside the
functions that draw.
"""

from ridesim.render.clip import render_clip
from ridesim.render.plots import (
    plot_roll,
    plot_series,
    plot_spectrum,
    plot_track,
    plot_wheel,
    render_solver_plots,
    write_index,
)

__all__ = [
    "plot_roll",
    "plot_series",
    "plot_spectrum",
    "plot_track",
    "plot_wheel",
    "render_clip",
    "render_solver_plots",
    "write_index",
]

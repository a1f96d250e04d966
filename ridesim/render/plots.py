"""Still pictures of a solved pair and of result series, in the ridesim style.

Each ``plot_*`` function writes one PNG of exactly ``size_px`` pixels (and an SVG beside
it when ``svg=True``) and returns ``(png_path, caption)``, the caption a single line.
Geometry is drawn in millimetres with equal aspect; series carry SI units in their
axis labels. Files are written atomically.
"""

from __future__ import annotations

import io
import math
from collections.abc import Mapping, Sequence
from pathlib import Path

import numpy as np

from ridesim.errors import InputError
from ridesim.export.results import write_bytes_atomic, write_text_atomic
from ridesim.render.style import COLOURS, DPI, SERIES_COLOURS, new_figure, series_style, style_context

__all__ = [
    "plot_wheel",
    "plot_track",
    "plot_roll",
    "plot_series",
    "plot_spectrum",
    "render_solver_plots",
    "write_index",
    "posed_outline",
    "figure_png",
]

TWO_PI = 2.0 * math.pi


# ---------------------------------------------------------------------------- helpers
def _size(size_px: Sequence[int], name: str = "size_px") -> tuple[int, int]:
    try:
        w, h = (int(v) for v in size_px)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a pair (width, height) in pixels, got {size_px!r}") from None
    if w < 200 or h < 200 or w > 8000 or h > 8000:
        raise InputError(f"{name} must be between 200 and 8000 pixels each, got {size_px!r}")
    return w, h


def figure_png(fig) -> bytes:
    """The figure drawn on its Agg canvas, as an opaque RGB PNG of the figure's pixel size.

    The figure's face is opaque white (style RC), so the alpha channel carries nothing and
    is dropped (see :mod:`ridesim.render.png`).
    """
    from ridesim.render.png import encode_png

    fig.canvas.draw()
    return encode_png(np.asarray(fig.canvas.buffer_rgba()))


def _fill(ax, x: np.ndarray, y: np.ndarray, **kw):
    """A filled polygon that leaves the axes' data limits alone.

    ``Axes.fill`` updates the data limits by walking the polygon's path segment by
    segment in Python, which for a few thousand vertices costs more than drawing
    it; every caller sets its limits explicitly.
    """
    from matplotlib.patches import Polygon

    patch = Polygon(np.column_stack([x, y]), closed=True, **kw)
    ax.add_artist(patch)
    return patch


#: Clear space [px] between the figure's edge and its text, on each side of a figure legend's band
#: and between rows of axes: 3 pt, matplotlib's constrained-layout default (``w_pad = h_pad = 3/72``
#: inch).
PAD_PX = 3.0 / 72.0 * DPI

#: First guess of the margins [px] (left, right, bottom, top) a series plot's text takes: the axes
#: are measured there, so that the final size rarely changes their ticks (which would need a
#: second measuring pass).
_GUESS_PX = (80.0, 16.0, 56.0, 100.0)


def _ticks(fig) -> list:
    return [(tuple(ax.xaxis.get_majorticklocs()), tuple(ax.yaxis.get_majorticklocs())) for ax in fig.axes]


def _place(fig) -> None:
    """Fit a figure's single column of subplots and its outside legends, measuring the text once.

    What matplotlib's constrained layout does for these figures, in one measuring pass instead
    of its two (it lays out every tick label, axis label and title of the figure twice before
    drawing them; that was a third of the time of a series plot): each row of axes gets the room
    its text takes on each side, a figure legend placed ``outside upper``/``outside lower`` its
    own band, with :data:`PAD_PX` clear space at the edges. The axes are first set at a typical size
    (:data:`_GUESS_PX`); a second pass runs only when the final size changes their ticks.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        A figure made with ``new_figure(size, layout=None)`` whose axes are subplots of one
        column (twin axes share their row).
    """
    renderer = fig.canvas.get_renderer()
    W, H = float(fig.bbox.width), float(fig.bbox.height)
    pad = PAD_PX
    specs = [ax.get_subplotspec() for ax in fig.axes]
    n = max(ss.rowspan.stop for ss in specs if ss is not None)
    band = {"upper": 0.0, "lower": 0.0}
    for leg in fig.legends:
        where = getattr(leg, "_outside_loc", None)
        if where in band:
            band[where] = max(band[where], float(leg.get_tightbbox(renderer).height) + 2 * pad)

    def adjust(left, right, bottom, top, gap):
        axes_h = max(1.0, (H - top - bottom - (n - 1) * gap) / n)
        fig.subplots_adjust(left=left / W, right=1 - right / W, bottom=bottom / H, top=1 - top / H,
                            hspace=gap / axes_h if n > 1 else None)

    gl, gr, gb, gt = _GUESS_PX
    adjust(gl, gr, gb + band["lower"], gt + band["upper"], gb + 2 * pad)
    for _ in range(2):
        before = _ticks(fig)
        ext = np.zeros((n, 4))  # text beyond each row's axes frame: left, right, below, above [px]
        for ax, ss in zip(fig.axes, specs, strict=True):
            if ss is None:
                continue
            ax.apply_aspect()
            frame, tight = ax.get_window_extent(renderer), ax.get_tightbbox(renderer)
            row = ss.rowspan.start
            ext[row] = np.maximum(ext[row], [frame.x0 - tight.x0, tight.x1 - frame.x1,
                                             frame.y0 - tight.y0, tight.y1 - frame.y1])
        gap = max((ext[i, 2] + ext[i + 1, 3] + 2 * pad for i in range(n - 1)), default=0.0)
        adjust(ext[:, 0].max() + pad, ext[:, 1].max() + pad,
               ext[-1, 2] + pad + band["lower"], ext[0, 3] + pad + band["upper"], gap)
        if _ticks(fig) == before:
            break


def _save(fig, path: str | Path, svg: bool) -> Path:
    """Write the figure as PNG (and SVG) atomically; the PNG keeps the figure's pixel size."""
    path = Path(path)
    png = path if path.suffix.lower() == ".png" else path.with_suffix(".png")
    write_bytes_atomic(png, figure_png(fig))
    if svg:
        buf = io.BytesIO()
        fig.savefig(buf, format="svg")
        write_bytes_atomic(png.with_suffix(".svg"), buf.getvalue())
    return png


def posed_outline(points_m: np.ndarray, x_m: float, theta_rad: float, y_m: float = 0.0) -> np.ndarray:
    """World positions [m] of wheel-frame points with the axle at ``(x_m, y_m)`` turned by ``theta_rad``.

    The wheel turns clockwise by ``theta_rad`` (the solver's wheel angle): ``(x, y) + R(-theta) p``.

    Parameters
    ----------
    points_m : ndarray, shape (N, 2)
        Points [m] in the axle frame.
    x_m, y_m : float
        Axle position [m].
    theta_rad : float
        Clockwise wheel rotation [rad].

    Returns
    -------
    ndarray, shape (N, 2)
    """
    c, s = math.cos(theta_rad), math.sin(theta_rad)
    p = np.asarray(points_m, dtype=float)
    return np.column_stack([x_m + c * p[:, 0] + s * p[:, 1], y_m - s * p[:, 0] + c * p[:, 1]])


def _mix(colour: str, amount: float) -> tuple[float, float, float]:
    """``colour`` blended with white: ``amount`` 1 is the colour, 0 is white."""
    rgb = np.array([int(colour[i:i + 2], 16) for i in (1, 3, 5)]) / 255.0
    r, g, b = (float(c) for c in 1.0 - amount * (1.0 - rgb))
    return r, g, b


def _outline(wheel, n: int = 1440) -> np.ndarray:
    return wheel.outline_points(n)


def _wheel_title(wheel) -> str:
    p = wheel.params
    if wheel.kind == "polygon" and "sides" in p:
        return f"regular polygon, {p['sides']} sides, apothem {p['apothem_m'] * 1000:.1f} mm"
    if wheel.kind == "rounded_polygon":
        what = (f"regular polygon, {p['sides']} sides, apothem {p['apothem_m'] * 1000:.1f} mm"
                if "sides" in p else "polygon")
        return f"{what}, corners rounded to {p['corner_radius_m'] * 1000:.3g} mm"
    if wheel.kind == "ellipse":
        a, b = p["semi_axes_m"]
        return f"ellipse, semi-axes {a * 1000:.1f} × {b * 1000:.1f} mm"
    if wheel.kind == "circle":
        return f"circle, radius {p['radius_m'] * 1000:.1f} mm"
    if wheel.kind == "polar":
        return f"r(φ) = {p['radius_formula']} m"
    if wheel.kind == "harmonic":
        modes = ", ".join(str(k) for k, _, _ in p["harmonics"]) or "none"
        return f"Fourier wheel, mean radius {p['mean_radius_m'] * 1000:.1f} mm, modes k = {modes}"
    if wheel.kind == "solved":
        return f"{p.get('lobes', '?')} lobes, solved for a {p.get('from_track', '?')} track"
    return f"{wheel.kind} outline"


def _fit_title(ax, text: str, width_px: float, share: float = 1.0) -> None:
    """Set a title wrapped to the width it has (11 pt bold: about 14 px a character at 150 dpi).

    ``share`` is the fraction of the figure's width the axes' title may use.
    """
    import textwrap

    per_line = max(20, int(share * width_px / (14.0 * DPI / 150.0)))
    ax.set_title(textwrap.fill(text, per_line, break_on_hyphens=False))


def _cusp_points(pair, x0: float, x1: float, kind: str = "valley") -> np.ndarray:
    """Track corners of one kind (see :class:`ridesim.solve.pair.Cusp`) between x0 and x1 [m]."""
    rev = pair.revolution_length
    out = []
    for c in pair.cusps:
        if c.kind != kind:
            continue
        for j in range(math.floor((x0 - c.x_m) / rev), math.ceil((x1 - c.x_m) / rev) + 1):
            xc = c.x_m + j * rev
            if x0 <= xc <= x1:
                out.append((xc, float(pair.track.y(xc))))
    return np.array(sorted(out)) if out else np.zeros((0, 2))


# ---------------------------------------------------------------------------- geometry
def plot_wheel(pair, path: str | Path, *, mass=None, size_px: Sequence[int] = (1300, 1000),
               svg: bool = False) -> tuple[Path, str]:
    """Wheel outline in its axle frame with the axle, centre of mass and main dimensions.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    path : str or Path
        PNG file to write.
    mass : MassProperties, optional
        Mass properties; shown when given (otherwise the plate centroid is marked).
    size_px : (int, int)
        Picture size [px].
    svg : bool
        Also write an SVG beside the PNG.

    Returns
    -------
    (Path, str)
        The PNG and a one-line caption.
    """
    w = pair.wheel
    size = _size(size_px)
    pts = _outline(w) * 1000
    rmin, rmax, phi_min = w.extremes()
    phi = np.linspace(0.0, TWO_PI, 8192, endpoint=False)
    phi_max = float(phi[int(np.argmax(w.radius(phi)))])
    com = np.array(mass.com_m if mass is not None else w.mass_properties(1.0, 1.0).com_m) * 1000
    com[np.abs(com) < 5e-4] = 0.0  # below the 0.1 mm shown: print 0.0, not -0.0
    closed = np.vstack([pts, pts[:1]])
    with style_context():
        fig = new_figure(size, layout=None)
        # A square plot area placed by hand (room for labels and title), the notes to its right.
        fw, fh = size
        left, bottom, top, gap, notes = 110, 85, 55, 35, min(330, int(0.3 * fw))
        side_px = max(100, min(fh - bottom - top, fw - left - gap - notes - 10))
        ax = fig.add_axes((left / fw, bottom / fh, side_px / fw, side_px / fh))
        x_side = (left + side_px + gap) / fw
        side = fig.add_axes((x_side, bottom / fh, max(0.05, 1 - x_side - 0.01), side_px / fh))
        _fill(ax, closed[:, 0], closed[:, 1], color=COLOURS["wheel_fill"], alpha=0.55, lw=0)
        ax.plot(closed[:, 0], closed[:, 1], color=COLOURS["wheel_edge"], lw=1.6, label="outline",
                gid="wheel-outline")
        for ph, r, lab in ((phi_min, rmin, "r_min"), (phi_max, rmax, "r_max")):
            ex, ey = r * 1000 * math.cos(ph), r * 1000 * math.sin(ph)
            ax.annotate("", xy=(ex, ey), xytext=(0, 0), zorder=4,
                        arrowprops={"arrowstyle": "-|>", "color": COLOURS["dimension"], "lw": 1.2,
                                    "shrinkA": 0, "shrinkB": 0})
            # Label beside the middle of the ray, on the side away from it.
            nx, ny = -math.sin(ph), math.cos(ph)
            if abs(nx) >= abs(ny):
                ha, va = ("left" if nx > 0 else "right"), "center"
            else:
                ha, va = "center", ("bottom" if ny > 0 else "top")
            ax.annotate(lab, xy=(0.5 * ex, 0.5 * ey), xytext=(5 * nx, 5 * ny), textcoords="offset points",
                        color=COLOURS["dimension"], ha=ha, va=va, fontsize=9, zorder=4)
        ax.plot([0], [0], marker="+", ms=14, mew=1.8, color=COLOURS["ink"], ls="none", label="axle",
                zorder=5)
        ax.plot([0], [0], marker="o", ms=4, color=COLOURS["ink"], ls="none", zorder=5)
        ax.plot([com[0]], [com[1]], marker="o", ms=9, mfc="none", mew=1.6, color=COLOURS["com"],
                ls="none", label="centre of mass", zorder=6)
        ax.plot([com[0]], [com[1]], marker="+", ms=9, mew=1.4, color=COLOURS["com"], ls="none", zorder=6)
        ax.plot([], [], color=COLOURS["dimension"], lw=1.2, label="r_min, r_max")
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        centre, half = 0.5 * (lo + hi), 0.5 * float((hi - lo).max()) * 1.12
        ax.set_xlim(centre[0] - half, centre[0] + half)
        ax.set_ylim(centre[1] - half, centre[1] + half)
        ax.set_aspect("equal", adjustable="box")
        ax.set_xlabel("x in the wheel frame [mm]")
        ax.set_ylabel("y in the wheel frame [mm]")
        _fit_title(ax, f"Wheel: {_wheel_title(w)}", size[0], share=0.62)
        ext = hi - lo
        info = [f"r_min  {rmin * 1000:.1f} mm", f"r_max  {rmax * 1000:.1f} mm",
                f"width  {ext[0]:.1f} mm", f"height {ext[1]:.1f} mm", "",
                "centre of mass from the axle", f"  ({com[0]:.1f}, {com[1]:.1f}) mm"]
        if mass is not None:
            info += ["", f"mass {mass.mass_kg:.3g} kg", "inertia about the axle",
                     f"  {mass.inertia_kg_m2:.3g} kg·m²"]
        side.axis("off")
        side.legend(*ax.get_legend_handles_labels(), loc="upper left", borderaxespad=0.0)
        side.text(0.0, 0.70, "\n".join(info), transform=side.transAxes, ha="left", va="top", fontsize=9,
                  linespacing=1.5)
        png = _save(fig, path, svg)
    caption = (f"Wheel outline in its axle frame: r_min {rmin * 1000:.1f} mm, r_max {rmax * 1000:.1f} mm,"
               f" centre of mass ({com[0]:.1f}, {com[1]:.1f}) mm from the axle.")
    return png, caption


def plot_track(pair, path: str | Path, periods: float = 2.5, poses: int = 3, *,
               size_px: Sequence[int] | None = None, svg: bool = False) -> tuple[Path, str]:
    """The track over a few periods with its cusps, and the wheel at several poses.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    path : str or Path
        PNG file to write.
    periods : float
        Track periods to show (at least 2); more when the poses need room not to overlap.
    poses : int
        Number of wheel poses drawn (0 to 12), spaced so that the wheels do not overlap.
    size_px : (int, int), optional
        Picture size [px]; default 1600 wide with a height that suits the geometry.
    svg : bool
        Also write an SVG beside the PNG.

    Returns
    -------
    (Path, str)
        The PNG and a one-line caption.
    """
    if not isinstance(periods, (int, float)) or not math.isfinite(periods) or periods < 2:
        raise InputError(f"periods must be a number >= 2, got {periods!r}")
    if isinstance(poses, bool) or not isinstance(poses, int) or not 0 <= poses <= 12:
        raise InputError(f"poses must be an integer from 0 to 12, got {poses!r}")
    w = pair.wheel
    P = pair.track.period
    L = periods * P
    rmin, rmax, _ = w.extremes()
    # Poses side by side, clear of each other (wheels 2 r_max wide and a gap), each a further
    # 1/poses of a period along so together they show the whole roll of one period.
    if poses:
        step = math.ceil(2.1 * rmax / P) * P + P / poses
        first = math.ceil(1.05 * rmax / P) * P + 0.1 * P
        xs = first + step * np.arange(poses)
        L = max(L, float(xs[-1]) + 1.05 * rmax)
        periods = L / P
    else:
        xs = np.zeros(0)
    x0 = min(0.0, float(xs.min() - rmax) if poses else 0.0)
    x1 = max(L, float(xs.max() + rmax) if poses else L)
    prof = pair.track.polyline(x0, x1, 4000)
    y_low = float(prof[:, 1].min())
    base = y_low - 0.15 * rmax
    top = rmax * 1.08 if poses else 0.2 * rmax
    if size_px is None:  # axes about 1440 px wide; title, labels and legend take about 190 px
        aspect = (top - base) / (x1 - x0)
        size_px = (1600, int(np.clip(1440 * aspect + 260, 460, 1400)))
    size = _size(size_px)
    pts = _outline(w)
    cusps = _cusp_points(pair, x0, x1)
    crests = _cusp_points(pair, x0, x1, "crest")
    with style_context():
        fig = new_figure(size, layout=None)  # placed by _place
        ax = fig.add_subplot()
        gx = np.concatenate([[prof[0, 0]], prof[:, 0], [prof[-1, 0]]]) * 1000
        gy = np.concatenate([[base], prof[:, 1], [base]]) * 1000
        _fill(ax, gx, gy, color=COLOURS["ground_fill"], lw=0, zorder=1)
        ax.plot(prof[:, 0] * 1000, prof[:, 1] * 1000, color=COLOURS["ground_edge"], lw=1.6, zorder=3,
                label="track", gid="track-profile")
        ax.axhline(0.0, color=COLOURS["axle_line"], lw=0.9, ls=(0, (5, 4)), zorder=2, label="axle line")
        ref = pts[0]  # a rim reference point, drawn as a spoke so the rotation shows
        for k, x in enumerate(xs):
            th = float(pair.wheel_angle(x))
            wp = posed_outline(pts, float(x), th) * 1000
            wp = np.vstack([wp, wp[:1]])
            colour = SERIES_COLOURS[k % len(SERIES_COLOURS)]  # one hue per pose keeps crossings legible
            _fill(ax, wp[:, 0], wp[:, 1], color=colour, alpha=0.16, lw=0, zorder=4)
            ax.plot(wp[:, 0], wp[:, 1], color=colour, lw=1.3, zorder=5,
                    label=f"wheel at x = {x * 1000:.0f} mm", gid=f"wheel-pose-{k}")
            sp = posed_outline(np.array([[0.0, 0.0], ref]), float(x), th) * 1000
            ax.plot(sp[:, 0], sp[:, 1], color=colour, lw=0.9, zorder=5)
            yc = float(pair.track.y(x)) * 1000
            ax.plot([x * 1000, x * 1000], [0.0, yc], color=COLOURS["contact"], lw=0.8, ls=(0, (2, 2)),
                    zorder=5)
            ax.plot([x * 1000], [0.0], marker="o", ms=4, color=COLOURS["ink"], zorder=6,
                    label="axle" if k == 0 else None)
            ax.plot([x * 1000], [yc], marker="o", ms=4.5, mfc="white", mew=1.3, color=COLOURS["contact"],
                    zorder=6, label="contact" if k == 0 else None)
        if len(cusps):
            ax.plot(cusps[:, 0] * 1000, cusps[:, 1] * 1000, ls="none", marker="v", ms=7,
                    color=COLOURS["cusp"], zorder=6, label="cusps")
        if len(crests):
            ax.plot(crests[:, 0] * 1000, crests[:, 1] * 1000, ls="none", marker="^", ms=7,
                    mfc="white", mew=1.3, color=COLOURS["cusp"], zorder=6, label="crest corners")
        ax.set_aspect("equal", adjustable="box")
        ax.set_xlim(x0 * 1000, x1 * 1000)
        ax.set_ylim(base * 1000, top * 1000)
        ax.set_xlabel("x along the track [mm]")
        ax.set_ylabel("height [mm] (axle line at 0)")
        _fit_title(ax, f"Track and wheel ({_wheel_title(w)}): period {P * 1000:.1f} mm,"
                       f" {pair.lobes} period{'s' if pair.lobes != 1 else ''} per revolution", size[0])
        handles, labels = ax.get_legend_handles_labels()
        order = sorted(range(len(labels)), key=lambda i: labels[i].startswith("wheel at"))  # marks first
        fig.legend([handles[i] for i in order], [labels[i] for i in order], loc="outside lower center",
                   ncols=5 if len(cusps) else 4, fontsize=8)
        _place(fig)
        png = _save(fig, path, svg)
    cusp_txt = f"{len(pair.cusps)} cusps per revolution" if pair.cusps else "no cusps"
    caption = (f"Track over {periods:.3g} periods of {P * 1000:.1f} mm ({cusp_txt}), depth"
               f" {rmin * 1000:.1f} to {rmax * 1000:.1f} mm below the axle line, wheel at {poses} poses.")
    return png, caption


def plot_roll(pair, path: str | Path, *, size_px: Sequence[int] = (1400, 800),
              svg: bool = False) -> tuple[Path, str]:
    """Contact radius and wheel angle against axle position over one revolution.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    path : str or Path
        PNG file to write.
    size_px : (int, int)
        Picture size [px].
    svg : bool
        Also write an SVG beside the PNG.

    Returns
    -------
    (Path, str)
        The PNG and a one-line caption.
    """
    size = _size(size_px)
    L = pair.revolution_length
    x = np.linspace(0.0, L, 3001)
    r = pair.contact_radius(x) * 1000
    th = np.degrees(pair.wheel_angle(x) - pair.wheel_angle(0.0))
    slope = np.degrees(np.arctan(np.abs(pair.track.slope(x))))
    with style_context():
        fig = new_figure(size, layout=None)  # placed by _place
        ax1, ax2 = fig.subplots(2, 1, sharex=True)
        ax1.plot(x * 1000, r, color=COLOURS["wheel_edge"], lw=1.5, label="contact radius r")
        ax1.set_ylabel("axle to contact [mm]")
        ax1.set_title(f"Rolling over one revolution ({L * 1000:.1f} mm,"
                      f" {pair.lobes} period{'s' if pair.lobes != 1 else ''})")
        ax1b = ax1.twinx()
        ax1b.plot(x * 1000, slope, color=COLOURS["com"], lw=1.1, ls=(0, (5, 3)), label="track slope |φ|")
        ax1b.set_ylabel("track slope angle [°]")
        ax1b.spines["right"].set_visible(True)
        ax1b.grid(False)
        lines = ax1.get_lines() + ax1b.get_lines()
        fig.legend(lines, [ln.get_label() for ln in lines], loc="outside upper right", ncols=2)
        ax2.plot(x * 1000, th, color=COLOURS["dimension"], lw=1.5)
        ax2.set_ylabel("wheel turned [°]")
        if pair.lobes <= 12:  # one grid line per track period
            from matplotlib.ticker import MultipleLocator

            ax2.yaxis.set_major_locator(MultipleLocator(360.0 / pair.lobes))
        ax2.set_xlabel("axle position x [mm]")
        ax2.set_xlim(0.0, L * 1000)
        _place(fig)
        png = _save(fig, path, svg)
    caption = (f"Contact radius {r.min():.1f}-{r.max():.1f} mm, track slope up to {slope.max():.1f}°,"
               f" and wheel angle against axle position over one revolution of {L * 1000:.1f} mm.")
    return png, caption


# ---------------------------------------------------------------------------- series
def _series_arrays(t_s, series: Mapping) -> list[tuple[str, np.ndarray, np.ndarray]]:
    if not isinstance(series, Mapping) or not series:
        raise InputError("series must be a non-empty dict of label -> values (or label -> (t_s, values))")
    t = None if t_s is None else np.asarray(t_s, dtype=float)
    out = []
    for label, v in series.items():
        if isinstance(v, tuple) and len(v) == 2:
            tt, yy = np.asarray(v[0], dtype=float), np.asarray(v[1], dtype=float)
        else:
            if t is None:
                raise InputError(f"series {label!r}: give t_s or a (t_s, values) pair")
            tt, yy = t, np.asarray(v, dtype=float)
        if tt.ndim != 1 or yy.shape != tt.shape or len(tt) < 2:
            raise InputError(f"series {label!r}: values must be 1-D and as long as their times"
                             f" ({yy.shape} vs {tt.shape})")
        out.append((str(label), tt, yy))
    return out



def _covered_by(tt, yy, kind: str, drawn) -> str | None:
    """Label of an earlier series of the same kind that ``yy`` lies on (within 1 % of its range)."""
    for label, k, t0, y0 in drawn:
        if k != kind or len(t0) != len(tt) or not np.array_equal(t0, tt):
            continue
        span = float(np.ptp(y0)) if len(y0) else 0.0
        if span > 0 and float(np.max(np.abs(np.asarray(yy) - np.asarray(y0)))) <= 0.01 * span:
            return label.split(" (on ")[0]
    return None


def _bulk_limits(ax, data, kinds) -> None:
    """Y limits from the bulk of the data (0.5-99.5 percentiles), outliers marked at the edge.

    A single spike (a contact step at t = 0) would otherwise stretch the axis and squash the
    rest; points beyond the limits are drawn as small triangles on the axis edge.
    """
    ys = [np.asarray(yy, float) for _, _, yy in data]
    allv = np.concatenate([y[np.isfinite(y)] for y in ys]) if ys else np.zeros(0)
    if allv.size < 20:
        return
    lo, hi = np.percentile(allv, [0.5, 99.5])
    full_lo, full_hi = float(allv.min()), float(allv.max())
    span = max(hi - lo, 1e-12)
    pad = 0.12 * span
    if full_hi - full_lo <= 1.6 * span + 2 * pad:
        return  # no outlier worth clipping
    lo, hi = lo - pad, hi + pad
    ax.set_ylim(lo, hi)
    n_out = 0
    for _, tt, yy in data:
        tt, yy = np.asarray(tt, float), np.asarray(yy, float)
        for side, mask, marker in ((hi, yy > hi, "^"), (lo, yy < lo, "v")):
            if mask.any():
                n_out += int(mask.sum())
                ax.plot(tt[mask], np.full(int(mask.sum()), side), linestyle="none", marker=marker,
                        markersize=4, color=COLOURS["cusp"], clip_on=False, zorder=5)
    ax.plot([], [], linestyle="none", marker="^", markersize=4, color=COLOURS["cusp"],
            label=f"beyond the axis ({n_out} samples, to {full_lo:.3g} / {full_hi:.3g})")

def plot_series(t_s, series: Mapping, path: str | Path, ylabel: str, title: str, *,
                xlabel: str = "time [s]", kinds: Mapping[str, str] | None = None,
                size_px: Sequence[int] = (1400, 750), svg: bool = False,
                caption: str | None = None,
                spans: Sequence[tuple[float, float, str]] = ()) -> tuple[Path, str]:
    """Several series on one axis: simulated (solid), analytic (dashed), limits (dotted).

    Parameters
    ----------
    t_s : array_like or None
        Common abscissa (time [s], or position [m] with a matching ``xlabel``).
    series : dict
        ``label -> values`` (same length as ``t_s``) or ``label -> (t, values)``.
    path : str or Path
        PNG file to write.
    ylabel : str
        Y axis label with its unit, e.g. ``"torque [N·m]"``.
    title : str
        Title.
    xlabel : str
        X axis label with its unit.
    kinds : dict, optional
        ``label -> simulated | analytic | limit | raw``; by default labels starting with
        ``analytic`` are analytic, with ``limit`` limits, the rest simulated.
    size_px : (int, int)
        Picture size [px].
    svg : bool
        Also write an SVG beside the PNG.
    caption : str, optional
        Caption to return (default built from the title and labels).
    spans : sequence of (float, float, str)
        Stretches of the abscissa to shade, each with its legend label (e.g. time windows
        left out of the figures).

    Returns
    -------
    (Path, str)
        The PNG and a one-line caption.
    """
    size = _size(size_px)
    data = _series_arrays(t_s, series)
    spans = list(spans)
    kinds = dict(kinds or {})
    with style_context():
        fig = new_figure(size, layout=None)  # placed by _place
        ax = fig.add_subplot()
        drawn: list[tuple[str, str, np.ndarray, np.ndarray]] = []
        for label, tt, yy in data:
            kind = kinds.get(label)
            if kind is None:
                low = label.lower()
                kind = "analytic" if low.startswith("analytic") else "limit" if low.startswith("limit") else (
                    "simulated")
            kw = series_style(kind)
            if kind == "limit":
                kw["color"] = COLOURS["cusp"]
            under = _covered_by(tt, yy, kind, drawn)
            if under is not None:
                # A series lying on an earlier one would hide it: draw it dashed and thinner on
                # top, and say so in the legend, so both stay visible.
                kw.update(linestyle=(0, (3, 3)), linewidth=max(0.8, 0.7 * kw.get("linewidth", 1.4)))
                label = f"{label} (on {under})"
            ax.plot(tt, yy, label=label, **kw)
            drawn.append((label, kind, tt, yy))
        _bulk_limits(ax, data, kinds)
        seen = set()
        for a, b, label in spans:
            ax.axvspan(float(a), float(b), color="0.6", alpha=0.2, lw=0,
                       label=None if label in seen else label)
            seen.add(label)
        ax.set_xlabel(xlabel)
        ax.set_ylabel(ylabel)
        _fit_title(ax, title, size[0])
        ax.margins(x=0)
        if len(data) > 1 or data[0][0] or spans:
            # As many legend columns as fit the figure's width (about 7 px a character).
            _, labels = ax.get_legend_handles_labels()
            widest = max((len(lab) for lab in labels), default=1) + 6
            fit = max(1, int(size[0] / (7.5 * widest * DPI / 150)))
            ncols = max(1, min(4, len(labels), fit))
            legend = fig.legend(loc="outside upper right", ncols=ncols)
            while ncols > 1 and legend.get_window_extent().width > size[0] - 2 * PAD_PX:
                legend.remove()  # wider than the picture (long labels): a column fewer
                ncols -= 1
                legend = fig.legend(loc="outside upper right", ncols=ncols)
        _place(fig)
        png = _save(fig, path, svg)
    if caption is None:
        caption = f"{title}: " + ", ".join(lab for lab, _, _ in data) + f" against {xlabel}."
    return png, " ".join(str(caption).split())


def plot_spectrum(freq_hz, values, path: str | Path, *, ylabel: str = "weighted acceleration [m/s²]",
                  title: str = "Vibration spectrum", kind: str = "bar", band_ratio: float = 2 ** (1 / 3),
                  size_px: Sequence[int] = (1400, 750), svg: bool = False,
                  caption: str | None = None) -> tuple[Path, str]:
    """A spectrum on a logarithmic frequency axis, as bands (bars) or a line.

    Parameters
    ----------
    freq_hz : array_like
        Band centre or sample frequencies [Hz], positive and increasing.
    values : array_like or dict
        Values per frequency, or ``label -> values`` for several series.
    path : str or Path
        PNG file to write.
    ylabel : str
        Y axis label with its unit.
    title : str
        Title.
    kind : str
        ``bar`` (bands of width ``band_ratio`` about each centre) or ``line``.
    band_ratio : float
        Ratio of upper to lower band edge for bars (one-third octave by default).
    size_px : (int, int)
        Picture size [px].
    svg : bool
        Also write an SVG beside the PNG.
    caption : str, optional
        Caption to return.

    Returns
    -------
    (Path, str)
        The PNG and a one-line caption.
    """
    size = _size(size_px)
    f = np.asarray(freq_hz, dtype=float)
    if f.ndim != 1 or len(f) < 1 or np.any(f <= 0) or np.any(np.diff(f) <= 0):
        raise InputError("freq_hz must be positive, increasing frequencies in Hz")
    if kind not in ("bar", "line"):
        raise InputError(f"kind must be 'bar' or 'line', got {kind!r}")
    vals = dict(values) if isinstance(values, Mapping) else {"": values}
    data = []
    for label, v in vals.items():
        v = np.asarray(v, dtype=float)
        if v.shape != f.shape:
            raise InputError(f"values {label!r} must be as long as freq_hz ({v.shape} vs {f.shape})")
        data.append((str(label), v))
    with style_context():
        fig = new_figure(size, layout=None)  # placed by _place
        ax = fig.add_subplot()
        if kind == "bar":
            lo, hi = f / math.sqrt(band_ratio), f * math.sqrt(band_ratio)
            n = len(data)
            for i, (label, v) in enumerate(data):
                # Split each band in n equal parts on the log axis.
                e0 = lo * (hi / lo) ** (i / n)
                e1 = lo * (hi / lo) ** ((i + 1) / n)
                ax.bar(e0, v, width=(e1 - e0) * 0.92, align="edge", label=label or None, alpha=0.85,
                       edgecolor="white", linewidth=0.4)
            ax.set_xlim(lo[0] / 1.05, hi[-1] * 1.05)
        else:
            for label, v in data:
                ax.plot(f, v, label=label or None, lw=1.4)
        ax.set_xscale("log")
        from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

        ax.xaxis.set_major_locator(LogLocator(base=10, subs=(1.0, 2.0, 5.0)))
        ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: f"{v:g}"))
        ax.xaxis.set_minor_formatter(NullFormatter())
        ax.set_xlabel("frequency [Hz]")
        ax.set_ylabel(ylabel)
        ax.set_title(title)
        if any(lab for lab, _ in data):
            fig.legend(loc="outside upper right", ncols=min(4, len(data)))
        _place(fig)
        png = _save(fig, path, svg)
    if caption is None:
        caption = f"{title} from {f[0]:.3g} to {f[-1]:.3g} Hz."
    return png, " ".join(str(caption).split())


# ---------------------------------------------------------------------------- bundles
def render_solver_plots(pair, out_dir: str | Path, *, mass=None, svg: bool = False) -> list[tuple[Path, str]]:
    """The pictures that need only the solved pair: wheel, track with poses, rolling curves.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    out_dir : str or Path
        Folder for ``wheel.png``, ``track.png`` and ``roll.png``.
    mass : MassProperties, optional
        Wheel mass properties for the wheel picture.
    svg : bool
        Also write SVGs.

    Returns
    -------
    list of (Path, str)
        Each PNG with its one-line caption.
    """
    return [fn(*args, **kw) for fn, args, kw in solver_plot_calls(pair, out_dir, mass=mass, svg=svg)]


def solver_plot_calls(pair, out_dir: str | Path, *, mass=None, svg: bool = False) -> list[tuple]:
    """The calls :func:`render_solver_plots` makes, undone, to be drawn elsewhere (one per picture).

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    out_dir : str or Path
        Folder for ``wheel.png``, ``track.png`` and ``roll.png``.
    mass : MassProperties, optional
        Wheel mass properties for the wheel picture.
    svg : bool
        Also write SVGs.

    Returns
    -------
    list of (callable, tuple, dict)
        Function, positional and keyword arguments of each picture, in order.
    """
    out = Path(out_dir)
    return [
        (plot_wheel, (pair, out / "wheel.png"), {"mass": mass, "svg": svg}),
        # A wheel much wider than a period hides the track under overlapping poses: fewer then.
        (plot_track, (pair, out / "track.png"),
         {"svg": svg, "poses": 3 if 2 * pair.depth_range()[1] > 1.5 * pair.track.period else 5}),
        (plot_roll, (pair, out / "roll.png"), {"svg": svg}),
    ]


def write_index(out_dir: str | Path, items: Sequence[tuple[str | Path, str]],
                title: str = "ridesim pictures") -> Path:
    """Write ``index.md`` listing each picture with its one-line caption.

    Parameters
    ----------
    out_dir : str or Path
        Folder of the pictures; the index is written there.
    items : sequence of (path, caption)
        Pictures (paths relative to ``out_dir`` when inside it) and captions.
    title : str
        Heading of the index.

    Returns
    -------
    Path
        The index file.
    """
    out = Path(out_dir)
    lines = [f"# {title}", ""]
    for p, cap in items:
        p = Path(p)
        try:
            rel = p.resolve().relative_to(out.resolve())
        except ValueError:
            rel = p
        one = " ".join(str(cap).split())
        lines.append(f"- [{rel.as_posix()}]({rel.as_posix()}): {one}")
    lines.append("")
    return write_text_atomic(out / "index.md", "\n".join(lines))

"""Full-size cut files for a solved wheel/track pair: SVG drawings and CSV point lists.

Every drawing is 1:1 in millimetres (open W3C SVG 1.1: ``width``/``height`` in mm and
a ``viewBox`` in mm, so one user unit is one millimetre). Geometry sits in one group
whose ``transform`` is ``translate(tx ty) scale(1 -1)``; inside it the coordinates are
the model's own, in mm with y up:

* the wheel in its axle frame (axle at the origin, anticlockwise outline);
* the track in the track frame (x along the axle path from ``x = 0``, y the height
  below the axle line, so ``y < 0``).

The CSV files use the same frames and carry an ``x_mm,y_mm`` header.

Line colours follow a common laser-cutting practice (check your shop's convention):
red ``#ff0000`` = cut, blue ``#0000ff`` = score or mark, black = text to engrave or ignore.

Curved outlines are written as polylines whose chords deviate from the true curve by
at most ``CHORD_TOL_M`` (half the promised 0.005 mm): the point spacing comes from the
local curvature (a chord ``c`` on a curve of radius ``rho`` has sagitta ``c^2/(8 rho)``),
and every chord is then checked against the curve at its quarter points and split
until it meets the tolerance. Polygon wheels keep their exact vertices.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Sequence
from pathlib import Path
from xml.sax.saxutils import escape

import numpy as np

from ridesim.errors import InputError
from ridesim.export.results import write_text_atomic
from ridesim.model.checks import positive as _positive

__all__ = [
    "CHORD_TOL_M",
    "MARGIN_M",
    "export_drawings",
    "wheel_outline_mm",
    "track_sections",
    "track_profile_mm",
    "sample_curve",
]

CHORD_TOL_M = 2.5e-6
"""Largest chordal deviation [m] of a drawn polyline from the true curve (0.0025 mm)."""

MARGIN_M = 0.010
"""Blank margin [m] around the geometry on every side of a drawing."""

CUT = "#ff0000"
SCORE = "#0000ff"
TEXT = "#000000"
STROKE_MM = 0.1
FONT_MM = 3.5
LINE_MM = 5.0
CHAR_W_EM = 0.62  # generous mean advance of a sans-serif glyph, in em
BAR_BAND_MM = 8.0  # height of the scale-bar row
BAR_LABEL_MM = 45.0  # room for the scale bar label
TWO_PI = 2.0 * math.pi


# ---------------------------------------------------------------------------- validation
def _safe_name(name: str) -> str:
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"name must be a non-empty string, got {name!r}")
    return re.sub(r"[^A-Za-z0-9_.-]+", "_", name.strip()).strip("._") or "drawing"


# ---------------------------------------------------------------------------- curve sampling
def sample_curve(point_fn: Callable[[np.ndarray], np.ndarray], breaks: Sequence[float],
                 tol_m: float = CHORD_TOL_M, probe: int = 4096) -> np.ndarray:
    """Parameter values at which a polyline follows a curve within ``tol_m``.

    The curve is smooth between consecutive ``breaks`` (its corners, which are kept).
    Points are first spread so that each chord's sagitta ``c^2 kappa / 8`` is about
    ``tol_m`` (equidistributing ``sqrt(kappa)`` along the arc); then each chord is
    compared with the curve at its quarter points and split until the distance is
    below ``tol_m`` everywhere checked.

    Parameters
    ----------
    point_fn : callable
        ``t -> (N, 2)`` points [m] for parameter values ``t`` (vectorised).
    breaks : sequence of float
        Increasing parameter values: the ends of the range and any corners.
    tol_m : float
        Chordal tolerance [m].
    probe : int
        Number of probe cells over the whole range used to measure curvature.

    Returns
    -------
    ndarray
        Increasing parameter values, including every break.
    """
    b = np.unique(np.asarray(breaks, dtype=float))
    span = float(b[-1] - b[0])
    out = []
    for lo, hi in zip(b[:-1], b[1:], strict=True):
        m = max(64, int(math.ceil(probe * (hi - lo) / span)))
        edges = np.linspace(lo, hi, m + 1)
        mid = 0.5 * (edges[1:] + edges[:-1])
        h = 0.25 * (hi - lo) / m  # stencil stays inside the piece: never straddles a corner
        p0, pp, pm = point_fn(mid), point_fn(mid + h), point_fn(mid - h)
        d1 = (pp - pm) / (2 * h)
        d2 = (pp - 2 * p0 + pm) / (h * h)
        speed = np.hypot(d1[:, 0], d1[:, 1])
        kappa = np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]) / np.maximum(speed, 1e-300) ** 3
        density = np.sqrt(kappa / (8.0 * tol_m)) * speed  # chords per unit parameter
        cum = np.concatenate(([0.0], np.cumsum(density * np.diff(edges))))
        n = max(1, int(math.ceil(cum[-1])))
        t = np.interp(np.linspace(0.0, cum[-1], n + 1), cum, edges) if cum[-1] > 0 else np.array([lo, hi])
        t[0], t[-1] = lo, hi
        out.append(_refine(point_fn, t, tol_m))
    return np.unique(np.concatenate(out))


def _chord_deviation(point_fn: Callable[[np.ndarray], np.ndarray], t: np.ndarray) -> np.ndarray:
    """Largest distance [m] of the curve at each chord's quarter points from that chord."""
    a, b = point_fn(t[:-1]), point_fn(t[1:])
    ab = b - a
    length = np.maximum(np.hypot(ab[:, 0], ab[:, 1]), 1e-300)
    worst = np.zeros(len(ab))
    for f in (0.25, 0.5, 0.75):
        q = point_fn(t[:-1] + f * np.diff(t)) - a
        worst = np.maximum(worst, np.abs(ab[:, 0] * q[:, 1] - ab[:, 1] * q[:, 0]) / length)
    return worst


def _refine(point_fn: Callable[[np.ndarray], np.ndarray], t: np.ndarray, tol_m: float) -> np.ndarray:
    for _ in range(40):
        bad = _chord_deviation(point_fn, t) > tol_m
        if not bad.any():
            return t
        t = np.sort(np.concatenate([t, 0.5 * (t[:-1][bad] + t[1:][bad])]))
    return t


# ---------------------------------------------------------------------------- geometry in mm
def wheel_outline_mm(wheel, tol_m: float = CHORD_TOL_M) -> np.ndarray:
    """Rim points [mm] in the axle frame, anticlockwise, without a closing repeat.

    Parameters
    ----------
    wheel : Wheel
        The wheel.
    tol_m : float
        Chordal tolerance [m] for smooth wheels (polygons keep their exact vertices).

    Returns
    -------
    ndarray, shape (N, 2)
    """
    if wheel.is_polygon:
        return np.array(wheel.vertices, dtype=float) * 1000.0
    # Split at corners and at curvature breaks (a rounded polygon's flat-to-arc joints).
    splits = sorted(set(wheel.kinks) | set(wheel.breaks))
    kinks = [k for k in splits if 0.0 < k < TWO_PI]
    start = splits[0] if splits else 0.0

    def pts(phi: np.ndarray) -> np.ndarray:
        r = wheel.radius(phi)
        return np.column_stack([r * np.cos(phi), r * np.sin(phi)])

    breaks = sorted({start, start + TWO_PI, *[(k - start) % TWO_PI + start for k in kinks]})
    phi = sample_curve(pts, breaks, tol_m)[:-1]
    return pts(phi) * 1000.0


def track_profile_mm(track, x0_m: float, x1_m: float, tol_m: float = CHORD_TOL_M) -> np.ndarray:
    """Track profile points [mm] from ``x0_m`` to ``x1_m`` (track frame), kinks included.

    Parameters
    ----------
    track : Track
        The track rolled on (``y < 0``).
    x0_m, x1_m : float
        Range along the axle path [m].
    tol_m : float
        Chordal tolerance [m].

    Returns
    -------
    ndarray, shape (N, 2)
    """
    P = track.period
    kinks = np.array(track.kinks, dtype=float)
    if kinks.size:
        k0 = math.floor((x0_m - track.start) / P) - 1
        k1 = math.ceil((x1_m - track.start) / P) + 1
        allk = (kinks[None, :] + P * np.arange(k0, k1 + 1)[:, None]).ravel()
        span = x1_m - x0_m
        allk = allk[(allk > x0_m + 1e-12 * span) & (allk < x1_m - 1e-12 * span)]
    else:
        allk = np.zeros(0)

    def pts(x: np.ndarray) -> np.ndarray:
        return np.column_stack([x, track.y(x)])

    x = sample_curve(pts, [x0_m, *allk.tolist(), x1_m], tol_m)
    return pts(x) * 1000.0


def _crest_x(track) -> float:
    """Position [m] of a highest point of the track in its base period."""
    from scipy.optimize import minimize_scalar

    x = np.linspace(track.start, track.start + track.period, 4097)
    y = track.y(x)
    j = int(np.argmax(y))
    h = x[1] - x[0]
    res = minimize_scalar(lambda q: -float(track.y(np.array(q))), bounds=(x[j] - h, x[j] + h),
                          method="bounded", options={"xatol": 1e-12 * track.period})
    xc = float(res.x) if -res.fun >= y[j] else float(x[j])
    # Snap to a kink or the period start when within rounding (kinked crests, x = 0 crests).
    for cand in (track.start, *track.kinks, track.start + track.period):
        if abs(cand - xc) <= 1e-9 * track.period:
            xc = float(cand)
    return (xc - track.start) % track.period + track.start


MAX_SECTIONS = 500
"""Most track pieces one export cuts (each is an SVG and a CSV file)."""


def track_sections(pair, max_section_m: float = 1.0, periods: int | None = None) -> list[tuple[float, float]]:
    """Split the track into pieces that start and end at its highest points.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    max_section_m : float
        Longest piece [m].
    periods : int, optional
        Track periods to cover (default: one wheel revolution, ``pair.lobes``).

    Returns
    -------
    list of (x_start_m, x_end_m)
        Abutting ranges [m], from a crest, covering ``periods`` periods. When one period is
        longer than ``max_section_m`` each period is split into equal parts.
    """
    L = _positive("max_section_m", max_section_m)
    n_per = pair.lobes if periods is None else periods
    if isinstance(n_per, bool) or not isinstance(n_per, (int, np.integer)) or n_per < 1:
        raise InputError(f"periods must be an integer >= 1, got {periods!r}")
    P = pair.track.period
    x0 = _crest_x(pair.track)
    if P <= L * (1 + 1e-12):
        per_piece = max(1, int(math.floor(L / P * (1 + 1e-12))))
        count = math.ceil(n_per / per_piece)
        base, extra = divmod(n_per, count)
        sizes = [base + (1 if i < extra else 0) for i in range(count)]
        ends = np.concatenate(([0], np.cumsum(sizes))) * P
    else:
        parts = math.ceil(P / L * (1 - 1e-12))
        if n_per * parts > MAX_SECTIONS:
            raise InputError(f"max_section_m (--section) = {L:g} m cuts the track into"
                             f" {n_per * parts:.3g} pieces, beyond the limit of {MAX_SECTIONS};"
                             f" give a section of at least {n_per * P / MAX_SECTIONS:.3g} m")
        ends = np.arange(n_per * parts + 1) * (P / parts)
    ends = x0 + ends
    return [(float(a), float(b)) for a, b in zip(ends[:-1], ends[1:], strict=True)]


# ---------------------------------------------------------------------------- SVG writing
def _f(v: float) -> str:
    s = f"{v + 0.0:.4f}".rstrip("0").rstrip(".")
    return "0" if s in ("-0", "") else s


def _path_d(points: np.ndarray, closed: bool) -> str:
    body = " L ".join(f"{_f(x)},{_f(y)}" for x, y in points)
    return f"M {body}" + (" Z" if closed else "")


def _text_width_mm(line: str, font_mm: float = FONT_MM) -> float:
    return len(line) * CHAR_W_EM * font_mm


class _Sheet:
    """One SVG drawing: geometry extent [mm] in model coordinates plus an annotation band."""

    def __init__(self, xmin: float, xmax: float, ymin: float, ymax: float, band_lines: Sequence[str],
                 margin_mm: float) -> None:
        m = margin_mm
        self.lines = list(band_lines)
        self.band_mm = BAR_BAND_MM + LINE_MM * len(self.lines)  # scale bar + text lines
        # Scale bar: 100 mm when the part is at least 80 mm wide, else 10 mm.
        self.bar = 100.0 if xmax - xmin >= 80.0 else 10.0
        text_w = max([_text_width_mm(s) for s in self.lines] + [BAR_LABEL_MM + self.bar])
        self.left, self.top = m, m
        self.right = max(m, text_w + m - (xmax - xmin))  # widen on the right if the text needs it
        self.bottom = m + self.band_mm + m
        self.width = (xmax - xmin) + self.left + self.right
        self.height = (ymax - ymin) + self.top + self.bottom
        self.tx, self.ty = self.left - xmin, self.top + ymax
        self.extent = (xmax - xmin, ymax - ymin)
        self.geo: list[str] = []
        self.ann: list[str] = []

    def to_sheet(self, x: float, y: float) -> tuple[float, float]:
        """Sheet position [mm] of a model point [mm]."""
        return self.tx + x, self.ty - y

    def path(self, points: np.ndarray, colour: str, closed: bool, ident: str | None = None) -> None:
        idattr = f' id="{ident}"' if ident else ""
        self.geo.append(f'<path{idattr} d="{_path_d(points, closed)}" fill="none" stroke="{colour}"'
                        f' stroke-width="{STROKE_MM}"/>')

    def circle(self, cx: float, cy: float, r: float, colour: str, ident: str | None = None) -> None:
        idattr = f' id="{ident}"' if ident else ""
        self.geo.append(f'<circle{idattr} cx="{_f(cx)}" cy="{_f(cy)}" r="{_f(r)}" fill="none"'
                        f' stroke="{colour}" stroke-width="{STROKE_MM}"/>')

    def text(self, x: float, y: float, s: str, anchor: str = "start", size: float = FONT_MM) -> None:
        """Text at sheet position [mm] (not flipped)."""
        self.ann.append(f'<text x="{_f(x)}" y="{_f(y)}" font-family="DejaVu Sans, Arial, sans-serif"'
                        f' font-size="{_f(size)}" text-anchor="{anchor}" fill="{TEXT}">{escape(s)}</text>')

    def line(self, x0: float, y0: float, x1: float, y1: float, colour: str) -> None:
        """Line between sheet positions [mm]."""
        self.ann.append(f'<line x1="{_f(x0)}" y1="{_f(y0)}" x2="{_f(x1)}" y2="{_f(y1)}"'
                        f' stroke="{colour}" stroke-width="{STROKE_MM}"/>')

    def render(self, title: str, desc: str) -> str:
        """The whole SVG document as text, with the scale bar and the band of text lines."""
        bar = self.bar
        y_band = self.top + self.extent[1] + self.top  # the band starts one margin below the geometry
        y_bar = y_band + 3.0
        self.line(self.left, y_bar, self.left + bar, y_bar, SCORE)
        for xe in (self.left, self.left + bar):
            self.line(xe, y_bar - 2.0, xe, y_bar + 2.0, SCORE)
        self.text(self.left + bar + 2.0, y_bar + 1.2, f"{bar:.0f} mm (scale 1:1)")
        y = y_band + BAR_BAND_MM - 1.5
        for s in self.lines:
            y += LINE_MM
            self.text(self.left, y, s)
        layout = (f'margin_left_mm="{_f(self.left)}" margin_right_mm="{_f(self.right)}"'
                  f' margin_top_mm="{_f(self.top)}" margin_bottom_mm="{_f(self.bottom)}"'
                  f' scale_bar_mm="{_f(bar)}"')
        w, h = _f(self.width), _f(self.height)
        return "\n".join([
            '<?xml version="1.0" encoding="UTF-8" standalone="no"?>',
            f'<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{w}mm" height="{h}mm"'
            f' viewBox="0 0 {w} {h}">',
            f"<title>{escape(title)}</title>",
            f"<desc>{escape(desc)}</desc>",
            f'<metadata><rs:layout xmlns:rs="urn:ridesim:drawing-layout" units="mm" {layout}/></metadata>',
            f'<g id="geometry" transform="translate({_f(self.tx)} {_f(self.ty)}) scale(1 -1)">',
            *self.geo,
            "</g>",
            '<g id="annotation">',
            *self.ann,
            "</g>",
            "</svg>",
            "",
        ])


def _csv(points_mm: np.ndarray) -> str:
    return "x_mm,y_mm\n" + "".join(f"{_f(x)},{_f(y)}\n" for x, y in points_mm)


def _mm(v_m: float) -> str:
    return f"{v_m * 1000:.3f}"


def _wheel_lines(wheel, name: str, rmin: float, rmax: float, hole_m: float, thickness_m: float | None,
                 n_points: int, com: np.ndarray | None, pair_depth: float) -> list[str]:
    p = wheel.params
    lines = [f"{name}: wheel, full size 1:1, all dimensions in mm"]
    if wheel.kind == "polygon" and "sides" in p:
        lines.append(f"regular polygon, {p['sides']} sides: apothem {_mm(p['apothem_m'])},"
                     f" circumradius {_mm(p['circumradius_m'])}, side {_mm(p['side_m'])}")
    elif wheel.kind in ("ellipse", "circle"):
        if wheel.kind == "ellipse":
            a, b = p["semi_axes_m"]
            lines.append(f"ellipse, semi-axes {_mm(a)} (x) and {_mm(b)} (y)")
        else:
            lines.append(f"circle, radius {_mm(p['radius_m'])}")
        ax = p.get("axle_m", (0.0, 0.0))
        lines.append(f"axle at ({_mm(ax[0])}, {_mm(ax[1])}) from the shape's centre")
    elif wheel.kind == "polar":
        lines.append(f"radius about the axle: r(phi) = {p['radius_formula']} [m]")
    elif wheel.kind == "solved":
        lines.append(f"solved for a {p.get('from_track', '?')} track, {p.get('lobes', '?')} lobes,"
                     f" track lowered by {_mm(pair_depth)}")
    else:
        lines.append(f"{wheel.kind} outline, {len(wheel.vertices) if wheel.is_polygon else '?'} vertices")
    lines.append(f"radius about the axle: r_min {_mm(rmin)}, r_max {_mm(rmax)}")
    hole = f"axle hole diameter {_mm(hole_m)}"
    if com is not None:
        hole += f"; centre of mass (plate) at ({_mm(com[0])}, {_mm(com[1])}) from the axle"
    lines.append(hole)
    if thickness_m is not None:
        lines.append(f"plate thickness {_mm(thickness_m)}")
    if wheel.is_polygon:
        lines.append(f"outline: {n_points} exact vertices")
    else:
        lines.append(f"outline: {n_points} points, chords within {CHORD_TOL_M * 1000:.4f} mm"
                     " of the true curve")
    lines.append("red: cut; blue: score or mark; black: text")
    return lines


def _wheel_svg(pair, name: str, hole_m: float, thickness_m: float | None, title_lines: Sequence[str],
               margin_m: float) -> tuple[str, np.ndarray]:
    wheel = pair.wheel
    pts = wheel_outline_mm(wheel)
    rmin, rmax, _ = wheel.extremes()
    com = np.array(wheel.mass_properties(1.0, 1.0).com_m)
    off_axle = float(np.hypot(*com)) > 1e-6  # more than 1 um from the axle
    lines = _wheel_lines(wheel, name, rmin, rmax, hole_m, thickness_m, len(pts), com if off_axle else None,
                         pair.depth)
    lines += list(title_lines)
    sheet = _Sheet(pts[:, 0].min(), pts[:, 0].max(), pts[:, 1].min(), pts[:, 1].max(), lines,
                   margin_m * 1000)
    sheet.path(pts, CUT, closed=True, ident="outline")
    rh = 0.5 * hole_m * 1000
    sheet.circle(0.0, 0.0, rh, CUT, ident="axle-hole")
    arm = rh + min(5.0, 0.3 * rmin * 1000)
    sheet.path(np.array([[-arm, 0.0], [arm, 0.0]]), SCORE, closed=False, ident="axle-cross-x")
    sheet.path(np.array([[0.0, -arm], [0.0, arm]]), SCORE, closed=False, ident="axle-cross-y")
    if off_axle:
        cx, cy = com * 1000
        sheet.circle(cx, cy, 1.5, SCORE, ident="centre-of-mass")
        sheet.path(np.array([[cx - 2.5, cy], [cx + 2.5, cy]]), SCORE, closed=False)
        sheet.path(np.array([[cx, cy - 2.5], [cx, cy + 2.5]]), SCORE, closed=False)
    desc = ("Wheel outline in its axle frame (axle at the origin of the geometry group, y up), mm."
            f" Margins: {_f(sheet.left)} mm left, {_f(sheet.right)} mm right, {_f(sheet.top)} mm top,"
            f" {_f(sheet.bottom)} mm bottom (includes the text band).")
    return sheet.render(f"{name} wheel", desc), pts


def _section_svg(pair, name: str, k: int, sections: list[tuple[float, float]], prof: np.ndarray,
                 y_bottom_mm: float, cusps_mm: np.ndarray, title_lines: Sequence[str], margin_m: float,
                 joint_mark_mm: float, strip_mm: float) -> str:
    n = len(sections)
    x0, x1 = prof[0, 0], prof[-1, 0]
    P = pair.track.period * 1000
    lines = [
        f"{name}: track section {k + 1} of {n}, full size 1:1, all dimensions in mm",
        f"x = {x0:.3f} to {x1:.3f} along the track: {(x1 - x0) / P:.4g} period(s) of {P:.3f}",
        f"height at the ends y = {prof[0, 1]:.3f} and {prof[-1, 1]:.3f} (axle line y = 0)",
        f"strip {strip_mm:.1f} below the lowest point: flat bottom edge at y = {y_bottom_mm:.3f}",
    ]
    for valley, label in ((1.0, "cusp"), (0.0, "crest corner")):
        inner = [c for c in cusps_mm if x0 < c[0] < x1 and c[2] == valley]
        if inner:
            lines.append(f"{len(inner)} {label} tick(s) at x = "
                         + ", ".join(f"{c[0]:.3f}" for c in inner[:6])
                         + (" ..." if len(inner) > 6 else ""))
    joints = []
    if k > 0:
        joints.append(f"J{k} at the start")
    if k < n - 1:
        joints.append(f"J{k + 1} at the end")
    if joints:
        lines.append("joints: " + ", ".join(joints) + f"; ticks {joint_mark_mm:.0f} mm in from each joint,"
                     f" {2 * joint_mark_mm:.0f} mm apart when assembled")
    lines.append("red: cut; blue: score or mark; black: text")
    lines += list(title_lines)
    sheet = _Sheet(x0, x1, y_bottom_mm, float(prof[:, 1].max()), lines, margin_m * 1000)
    strip = np.vstack([prof, [[x1, y_bottom_mm], [x0, y_bottom_mm]]])
    sheet.path(strip, CUT, closed=True, ident="strip")
    tick = min(4.0, 0.4 * strip_mm)
    for c in (c for c in cusps_mm if x0 < c[0] < x1):
        sheet.path(np.array([[c[0], c[1]], [c[0], c[1] - tick]]), SCORE, closed=False)
    ends = []
    if k > 0:
        ends.append((x0 + joint_mark_mm, f"J{k}", "start"))
    if k < n - 1:
        ends.append((x1 - joint_mark_mm, f"J{k + 1}", "end"))
    for xj, label, anchor in ends:
        yj = float(np.interp(xj, prof[:, 0], prof[:, 1]))
        sheet.path(np.array([[xj, yj], [xj, yj - 1.5 * tick]]), SCORE, closed=False,
                   ident=f"mark-{label}-{anchor}")
        sx, sy = sheet.to_sheet(xj, yj - 1.5 * tick)
        sheet.text(sx, sy + FONT_MM + 0.5, label, anchor="middle")
    desc = ("Track section in the track frame (x along the axle path, y below the axle line, y up), mm."
            f" Margins: {_f(sheet.left)} mm left, {_f(sheet.right)} mm right, {_f(sheet.top)} mm top,"
            f" {_f(sheet.bottom)} mm bottom (includes the text band).")
    return sheet.render(f"{name} track section {k + 1} of {n}", desc)


def export_drawings(pair, out_dir: str | Path, *, name: str, max_section_m: float = 1.0,
                    wheel_thickness_m: float | None = None, title_lines: Sequence[str] = (),
                    axle_hole_m: float = 0.010, strip_depth_m: float = 0.030, periods: int | None = None,
                    joint_mark_m: float = 0.010, margin_m: float = MARGIN_M) -> list[Path]:
    """Write full-size cut files of the wheel and of the track, sections and point lists.

    Files (all written atomically), with ``NAME`` the sanitised ``name``:

    * ``NAME_wheel.svg``, ``NAME_wheel.csv``: the wheel outline (axle frame, mm), the axle
      hole with a cross-hair, the centre of mass of the plate when it is off the axle, a
      scale bar and a title block;
    * ``NAME_track_01.svg``, ``NAME_track_01.csv``, ...: the track for one wheel revolution
      (or ``periods`` periods), cut at its highest points into pieces no longer than
      ``max_section_m``; each SVG is a strip whose top edge is the profile, with ticks at the
      cusps and alignment ticks labelled ``J1``, ``J2``, ... at both sides of every joint;
    * ``NAME_cut_list.txt``: what each file holds and how the pieces join.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    out_dir : str or Path
        Folder for the files (created if missing).
    name : str
        Scenario name, used in file names and title blocks.
    max_section_m : float
        Longest track piece [m].
    wheel_thickness_m : float, optional
        Plate thickness [m], stated in the wheel's title block.
    title_lines : sequence of str
        Extra lines for every title block (e.g. material, a caution).
    axle_hole_m : float
        Diameter of the axle hole [m] (default 10 mm).
    strip_depth_m : float
        Depth [m] of each track strip below the track's lowest point.
    periods : int, optional
        Track periods to draw (default: one revolution, ``pair.lobes``).
    joint_mark_m : float
        Distance [m] of each joint's alignment tick from the joint.
    margin_m : float
        Blank margin [m] around the geometry.

    Returns
    -------
    list of Path
        The files written, wheel first.
    """
    stem = _safe_name(name)
    hole = _positive("axle_hole_m", axle_hole_m)
    strip = _positive("strip_depth_m", strip_depth_m)
    jm = _positive("joint_mark_m", joint_mark_m)
    margin = _positive("margin_m", margin_m)
    if wheel_thickness_m is not None:
        wheel_thickness_m = _positive("wheel_thickness_m", wheel_thickness_m)
    if isinstance(title_lines, str):
        raise InputError("title_lines must be a sequence of strings, not one string; wrap it in a list")
    title_lines = [str(s) for s in title_lines]
    rmin = pair.wheel.extremes()[0]
    if hole >= 2 * rmin:
        raise InputError(f"axle_hole_m = {hole:g} m does not fit in the wheel (least radius {rmin:g} m);"
                         " give a smaller hole")
    out = Path(out_dir)
    written: list[Path] = []

    sections = track_sections(pair, max_section_m, periods)  # refused before anything is written
    svg, wpts = _wheel_svg(pair, name, hole, wheel_thickness_m, title_lines, margin)
    written.append(write_text_atomic(out / f"{stem}_wheel.svg", svg))
    written.append(write_text_atomic(out / f"{stem}_wheel.csv", _csv(wpts)))

    profs = [track_profile_mm(pair.track, a, b) for a, b in sections]
    y_low = min(float(p[:, 1].min()) for p in profs)
    y_bottom = y_low - strip * 1000
    rev = pair.revolution_length
    c0, c1 = sections[0][0], sections[-1][1]
    cusps = []
    for c in pair.cusps:
        for j in range(math.floor((c0 - c.x_m) / rev), math.ceil((c1 - c.x_m) / rev) + 1):
            xc = c.x_m + j * rev
            if c0 < xc < c1:
                cusps.append((xc * 1000, float(pair.track.y(xc)) * 1000,
                              1.0 if c.kind == "valley" else 0.0))
    cusps_mm = np.array(sorted(cusps)) if cusps else np.zeros((0, 3))
    for k, prof in enumerate(profs):
        svg = _section_svg(pair, name, k, sections, prof, y_bottom, cusps_mm, title_lines, margin,
                           jm * 1000, strip * 1000)
        written.append(write_text_atomic(out / f"{stem}_track_{k + 1:02d}.svg", svg))
        written.append(write_text_atomic(out / f"{stem}_track_{k + 1:02d}.csv", _csv(prof)))

    total = sections[-1][1] - sections[0][0]
    notes = [
        f"{name}: cut files (full size, millimetres)",
        "",
        f"{stem}_wheel.svg / .csv: wheel outline in the axle frame; axle hole {hole * 1000:.3f} mm.",
        f"track: {len(sections)} piece(s) covering {total * 1000:.3f} mm"
        f" ({total / pair.track.period:.4g} period(s)), each at most {max_section_m * 1000:.1f} mm,"
        " cut at the track's highest points.",
    ]
    for k, (a, b) in enumerate(sections):
        notes.append(f"  {stem}_track_{k + 1:02d}: x = {a * 1000:.3f} to {b * 1000:.3f} mm"
                     + (f", joins piece {k + 2} at J{k + 1}" if k < len(sections) - 1 else ""))
    notes += [
        "CSV columns x_mm,y_mm: wheel in the axle frame; track x along the axle path, y below the axle"
        " line (negative).",
        f"Strips stand {strip * 1000:.1f} mm below the lowest point; all share one flat bottom edge at"
        f" y = {y_bottom:.3f} mm, so mount them on one straight, level base.",
        "Check the printed scale bar before cutting. Where a wheel corner seats in a cusp the gap closes:",
        "keep fingers clear of the track near the wheels, and follow the machinery and ride safety rules",
        "that apply where the build is used.",
        *title_lines,
        "",
    ]
    written.append(write_text_atomic(out / f"{stem}_cut_list.txt", "\n".join(notes)))
    return written

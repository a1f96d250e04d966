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

import html
import math
import re
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

import numpy as np

from ridesim.arrays import unique_sorted
from ridesim.errors import InputError
from ridesim.export.results import write_json_atomic, write_text_atomic
from ridesim.model.checks import positive as _positive
from ridesim.validate import is_integer

__all__ = [
    "CHORD_TOL_M",
    "MARGIN_M",
    "export_drawings",
    "export_hub_drawings",
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
    b = unique_sorted(np.asarray(breaks, dtype=float))
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
    return unique_sorted(np.concatenate(out))


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
    if getattr(wheel, "curve", None) is not None:  # an outline through points: its own spline
        return wheel.curve.sample(tol_m) * 1000.0
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
    from ridesim.roots import find_minimum

    x = np.linspace(track.start, track.start + track.period, 4097)
    y = track.y(x)
    j = int(np.argmax(y))
    h = x[1] - x[0]
    res = find_minimum(lambda q: -float(track.y(np.array(q))), x[j] - h, x[j] + h,
                       xatol=1e-12 * track.period)
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
    if not is_integer(n_per) or n_per < 1:
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
                        f' font-size="{_f(size)}" text-anchor="{anchor}" fill="{TEXT}">'
                        f'{html.escape(s, quote=False)}</text>')

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
            f"<title>{html.escape(title, quote=False)}</title>",
            f"<desc>{html.escape(desc, quote=False)}</desc>",
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


def _kerf_lines(kerf_m: float, flat_m: float | None, part: str) -> list[str]:
    out = []
    if flat_m is not None:
        out.append(f"D-bore: {_mm(flat_m)} across the flat (flat at the top of the hole)")
    if kerf_m > 0:
        where = {"wheel": "outside the wheel and inside the axle hole",
                 "hub": "outside the hub and inside its centre hole"}.get(
                     part, "above the profile (the side the wheel rolls on) and outside the strip")
        out.append(f"kerf {_mm(kerf_m)}: red cut lines run {_mm(0.5 * kerf_m)} into the waste, {where};"
                   " the part comes out at the drawn size")
    else:
        out.append("kerf 0: red lines are the part's edges; the cut centre follows them")
    return out


def _wheel_lines(wheel, name: str, rmin: float, rmax: float, hole_m: float, thickness_m: float | None,
                 n_points: int, com: np.ndarray | None, pair_depth: float,
                 tol_m: float = CHORD_TOL_M) -> list[str]:
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
    elif wheel.kind == "harmonic":
        terms = ", ".join(f"[{k}, {a:g}, {b:g}]" for k, a, b in p["harmonics"]) or "none"
        lines.append(f"radius about the axle: r(phi) = r0 (1 + sum a_k cos(k phi) + b_k sin(k phi)),"
                     f" r0 {_mm(p['mean_radius_m'])}, terms [k, a_k, b_k]: {terms}")
    elif wheel.kind == "solved":
        lines.append(f"solved for a {p.get('from_track', '?')} track, {p.get('lobes', '?')} lobes,"
                     f" track lowered by {_mm(pair_depth)}")
    elif wheel.is_polygon:
        lines.append(f"{wheel.kind} outline, {len(wheel.vertices)} vertices")
    else:
        lines.append(f"{wheel.kind} through {p.get('points', '?')} points, smooth between"
                     f" {p.get('corners', 0)} corner(s)")
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
        lines.append(f"outline: {n_points} points, chords within {tol_m * 1000:.4f} mm"
                     " of the true curve")
    lines.append("red: cut; blue: score or mark; black: text")
    return lines


def offset_closed_mm(points: np.ndarray, d_mm: float) -> np.ndarray:
    """A closed polyline moved outward (away from the inside it encloses) by ``d_mm``.

    Each edge moves along its outward normal; each vertex goes to where its two moved
    edges meet (a mitred corner), so straight edges stay straight and sharp corners stay
    sharp: the polyline of a part drawn at size, offset by half a kerf, is the path of
    the cut's centre line (common practice for kerf compensation).

    Parameters
    ----------
    points : ndarray, shape (N, 2)
        Vertices [mm] in either orientation, no closing repeat.
    d_mm : float
        Offset [mm]; negative moves inward.

    Returns
    -------
    ndarray, shape (N, 2)
    """
    p = np.asarray(points, dtype=float)
    if d_mm == 0 or len(p) < 3:
        return p.copy()
    area2 = float(np.sum(p[:, 0] * np.roll(p[:, 1], -1) - np.roll(p[:, 0], -1) * p[:, 1]))
    sgn = 1.0 if area2 > 0 else -1.0  # anticlockwise: outward normal of (dx, dy) is (dy, -dx)
    e = np.roll(p, -1, axis=0) - p
    L = np.maximum(np.hypot(e[:, 0], e[:, 1]), 1e-300)
    n = sgn * np.column_stack([e[:, 1], -e[:, 0]]) / L[:, None]
    n_in = np.roll(n, 1, axis=0)  # normal of the edge arriving at each vertex
    c = np.maximum(1.0 + (n * n_in).sum(axis=1), 1e-6)
    return p + d_mm * (n + n_in) / c[:, None]


def bore_mm(hole_m: float, flat_m: float | None, kerf_m: float, tol_m: float) -> tuple[np.ndarray, dict]:
    """Axle bore cut line [mm]: a circle, or a D (circle cut by a flat at the top).

    Parameters
    ----------
    hole_m : float
        Bore diameter [m].
    flat_m : float or None
        Width across the flat [m] (from the flat to the far side of the circle); None: round.
    kerf_m : float
        Cut width [m]; the line moves half of it into the hole (the waste).
    tol_m : float
        Chordal tolerance [m] of the drawn arc.

    Returns
    -------
    points : ndarray, shape (N, 2)
        Closed polyline [mm] of the cut line.
    geometry : dict
        ``radius_mm`` of the cut line and, for a D, ``flat_y_mm`` (height of the flat).
    """
    r = 0.5 * hole_m * 1000 - 0.5 * kerf_m * 1000
    step = 2.0 * math.acos(max(-1.0, 1.0 - tol_m * 1000 / r)) if r > tol_m * 1000 else 0.5
    if flat_m is None:
        n = max(16, int(math.ceil(TWO_PI / step)))
        a = TWO_PI * np.arange(n) / n
        return np.column_stack([r * np.cos(a), r * np.sin(a)]), {"radius_mm": r}
    f = (flat_m - 0.5 * hole_m) * 1000 - 0.5 * kerf_m * 1000  # centre to flat
    alpha = math.asin(f / r)
    sweep = math.pi + 2 * alpha  # the arc under the flat, from angle pi - alpha onward
    n = max(8, int(math.ceil(sweep / step)))
    a = math.pi - alpha + sweep * np.arange(n + 1) / n
    return np.column_stack([r * np.cos(a), r * np.sin(a)]), {"radius_mm": r, "flat_y_mm": f}


def _wheel_svg(pair, name: str, hole_m: float, thickness_m: float | None, title_lines: Sequence[str],
               margin_m: float, tol_m: float = CHORD_TOL_M, kerf_m: float = 0.0,
               flat_m: float | None = None) -> tuple[str, np.ndarray]:
    wheel = pair.wheel
    pts = wheel_outline_mm(wheel, tol_m)
    rmin, rmax, _ = wheel.extremes()
    com = np.array(wheel.mass_properties(1.0, 1.0).com_m)
    off_axle = float(np.hypot(*com)) > 1e-6  # more than 1 um from the axle
    lines = _wheel_lines(wheel, name, rmin, rmax, hole_m, thickness_m, len(pts), com if off_axle else None,
                         pair.depth, tol_m)
    lines += _kerf_lines(kerf_m, flat_m, "wheel")
    lines += list(title_lines)
    sheet = _Sheet(pts[:, 0].min(), pts[:, 0].max(), pts[:, 1].min(), pts[:, 1].max(), lines,
                   margin_m * 1000)
    sheet.path(offset_closed_mm(pts, 0.5 * kerf_m * 1000), CUT, closed=True, ident="outline")
    rh = 0.5 * hole_m * 1000
    if flat_m is None:
        sheet.circle(0.0, 0.0, rh - 0.5 * kerf_m * 1000, CUT, ident="axle-hole")
    else:
        sheet.path(bore_mm(hole_m, flat_m, kerf_m, tol_m)[0], CUT, closed=True, ident="axle-hole")
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
                 joint_mark_mm: float, strip_mm: float, kerf_m: float = 0.0) -> str:
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
    lines += _kerf_lines(kerf_m, None, "track")
    lines += list(title_lines)
    sheet = _Sheet(x0, x1, y_bottom_mm, float(prof[:, 1].max()), lines, margin_m * 1000)
    sheet.path(strip_outline_mm(prof, y_bottom_mm, kerf_m), CUT, closed=True, ident="strip")
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


def strip_outline_mm(prof: np.ndarray, y_bottom_mm: float, kerf_m: float = 0.0) -> np.ndarray:
    """Cut line [mm] of a track strip: the profile on top, a flat bottom edge, offset by half the kerf.

    Parameters
    ----------
    prof : ndarray, shape (N, 2)
        Profile points [mm], x increasing.
    y_bottom_mm : float
        Height [mm] of the strip's bottom edge.
    kerf_m : float
        Cut width [m]; the line moves half of it away from the strip (into the waste).

    Returns
    -------
    ndarray, shape (N + 2, 2)
    """
    strip = np.vstack([prof, [[prof[-1, 0], y_bottom_mm], [prof[0, 0], y_bottom_mm]]])
    return offset_closed_mm(strip, 0.5 * kerf_m * 1000)


def export_drawings(pair, out_dir: str | Path, *, name: str, max_section_m: float = 1.0,
                    wheel_thickness_m: float | None = None, title_lines: Sequence[str] = (),
                    axle_hole_m: float = 0.010, strip_depth_m: float = 0.030, periods: int | None = None,
                    joint_mark_m: float = 0.010, margin_m: float = MARGIN_M,
                    chord_tol_m: float = CHORD_TOL_M, kerf_m: float = 0.0,
                    axle_flat_m: float | None = None, dxf: bool = False, wheels: int = 1,
                    strips: int = 1, sheet_m: Sequence[float] | None = None) -> list[Path]:
    """Write full-size cut files of the wheel and of the track, sections and point lists.

    Files (all written atomically), with ``NAME`` the sanitised ``name``:

    * ``NAME_wheel.svg``, ``NAME_wheel.csv`` (and ``NAME_wheel.dxf`` with ``dxf``): the wheel
      outline (axle frame, mm), the axle hole (round or D) with a cross-hair, the centre of
      mass of the plate when it is off the axle, a scale bar and a title block;
    * ``NAME_track_01.svg``, ``NAME_track_01.csv`` (``.dxf``), ...: the track for one wheel
      revolution (or ``periods`` periods), cut at its highest points into pieces no longer
      than ``max_section_m``; each drawing is a strip whose top edge is the profile, with
      ticks at the cusps and alignment ticks labelled ``J1``, ``J2``, ... at both sides of
      every joint;
    * ``NAME_cut_list.txt`` and ``NAME_cut_list.json``: the parts, their counts, the
      material thickness, sheet usage and total cut length.

    The CSV files hold the parts at size; the SVG and DXF cut lines are offset by half of
    ``kerf_m`` into the waste (the drawings say so).

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
        Plate thickness [m], stated in the wheel's title block and the cut list.
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
    chord_tol_m : float
        Largest chord-to-curve distance [m] of drawn curves.
    kerf_m : float
        Cut width [m]; 0 draws the parts' edges.
    axle_flat_m : float, optional
        D-bore: width [m] across the flat, between half the hole and the hole; None: round.
    dxf : bool
        Also write DXF (R2010, mm).
    wheels : int
        Wheels to cut (cut list count).
    strips : int
        Copies of each track piece to cut (cut list count: one per rail).
    sheet_m : pair of float, optional
        Sheet size [m]: track pieces are no longer than its long side less two margins, and
        the cut list gives the least number of sheets and the parts that do not fit.

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
    tol = _positive("chord_tol_m", chord_tol_m)
    kerf = float(kerf_m)
    if not math.isfinite(kerf) or kerf < 0:
        raise InputError(f"kerf_m must be >= 0, got {kerf_m!r}")
    if axle_flat_m is not None and not 0.5 * hole < float(axle_flat_m) < hole:
        raise InputError(f"axle_flat_m = {axle_flat_m!r} m must lie between half the axle hole"
                         f" ({0.5 * hole:g} m) and the hole ({hole:g} m): it is the width across the flat")
    if wheel_thickness_m is not None:
        wheel_thickness_m = _positive("wheel_thickness_m", wheel_thickness_m)
    if isinstance(title_lines, str):
        raise InputError("title_lines must be a sequence of strings, not one string; wrap it in a list")
    title_lines = [str(s) for s in title_lines]
    rmin, rmax, _ = pair.wheel.extremes()
    if hole >= 2 * rmin:
        raise InputError(f"axle_hole_m = {hole:g} m does not fit in the wheel (least radius {rmin:g} m);"
                         " give a smaller hole")
    out = Path(out_dir)
    written: list[Path] = []

    svg, wpts = _wheel_svg(pair, name, hole, wheel_thickness_m, title_lines, margin, tol, kerf, axle_flat_m)
    written.append(write_text_atomic(out / f"{stem}_wheel.svg", svg))
    written.append(write_text_atomic(out / f"{stem}_wheel.csv", _csv(wpts)))
    bore, _ = bore_mm(hole, axle_flat_m, kerf, tol)
    wheel_cut = offset_closed_mm(wpts, 0.5 * kerf * 1000)
    if dxf:
        from ridesim.export.dxf import wheel_dxf

        written.append(wheel_dxf(out / f"{stem}_wheel.dxf", pair, wheel_cut, hole, axle_flat_m, kerf,
                                 [*_wheel_lines(pair.wheel, name, rmin, rmax, hole,
                                                wheel_thickness_m, len(wpts), None, pair.depth, tol),
                                  *_kerf_lines(kerf, axle_flat_m, "wheel"), *title_lines]))

    sheet = None
    if sheet_m is not None:
        sheet = sorted((_positive("sheet_m", float(v)) for v in sheet_m), reverse=True)
        room = sheet[0] - 2 * margin - kerf
        if room <= 0:
            raise InputError(f"sheet_m {sheet_m!r} leaves no room inside the {margin:g} m margins")
        max_section_m = min(_positive("max_section_m", max_section_m), room)
    sections = track_sections(pair, max_section_m, periods)
    profs = [track_profile_mm(pair.track, a, b, tol) for a, b in sections]
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
    strip_cuts = []
    for k, prof in enumerate(profs):
        svg = _section_svg(pair, name, k, sections, prof, y_bottom, cusps_mm, title_lines, margin,
                           jm * 1000, strip * 1000, kerf)
        written.append(write_text_atomic(out / f"{stem}_track_{k + 1:02d}.svg", svg))
        written.append(write_text_atomic(out / f"{stem}_track_{k + 1:02d}.csv", _csv(prof)))
        cut = strip_outline_mm(prof, y_bottom, kerf)
        strip_cuts.append(cut)
        if dxf:
            from ridesim.export.dxf import section_dxf

            written.append(section_dxf(out / f"{stem}_track_{k + 1:02d}.dxf", k, len(profs), prof, cut,
                                       cusps_mm, jm * 1000, [
                                           f"{name}: track section {k + 1} of {len(profs)}, 1:1, mm",
                                           *_kerf_lines(kerf, None, "track"), *title_lines]))

    total = sections[-1][1] - sections[0][0]
    parts: list[dict[str, Any]] = [{"part": "wheel", "file": f"{stem}_wheel", "count": int(wheels),
              "size_mm": _bbox(wheel_cut), "cut_length_mm": _perimeter(wheel_cut) + _perimeter(bore)}]
    for k, cut in enumerate(strip_cuts):
        parts.append({"part": f"track section {k + 1}", "file": f"{stem}_track_{k + 1:02d}",
                      "count": int(strips), "size_mm": _bbox(cut), "cut_length_mm": _perimeter(cut)})
    usage = sum(p["count"] * p["size_mm"][0] * p["size_mm"][1] for p in parts) * 1e-6
    cut_total = sum(p["count"] * p["cut_length_mm"] for p in parts) * 1e-3
    sheets = None
    if sheet is not None:
        inner = sorted(((sheet[0] - 2 * margin) * 1000, (sheet[1] - 2 * margin) * 1000), reverse=True)
        for p in parts:
            size = sorted(p["size_mm"], reverse=True)
            p["fits_sheet"] = bool(size[0] <= inner[0] and size[1] <= inner[1])
        # A lower bound: the parts' bounding boxes cannot share less area than their sum.
        sheets = math.ceil(usage / (sheet[0] * sheet[1]) * (1 - 1e-12))
    cut_list = {
        "name": name,
        "units": "mm",
        "material_thickness_m": wheel_thickness_m,
        "kerf_m": kerf,
        "axle_hole_m": hole,
        "axle_flat_m": axle_flat_m,
        "chord_tolerance_m": tol,
        "track_length_m": total,
        "track_periods": total / pair.track.period,
        "parts": parts,
        "sheet_area_m2": usage,
        "sheet_m": None if sheet_m is None else [float(v) for v in sheet_m],
        "sheets_at_least": sheets,
        "total_cut_length_m": cut_total,
    }
    notes = [
        f"{name}: cut files (full size, millimetres)",
        "",
        f"{stem}_wheel.svg / .csv{' / .dxf' if dxf else ''}: wheel outline in the axle frame;"
        f" axle hole {hole * 1000:.3f} mm" + (f", D-bore {axle_flat_m * 1000:.3f} mm across the flat"
                                              if axle_flat_m is not None else "") + ".",
        f"track: {len(sections)} piece(s) covering {total * 1000:.3f} mm"
        f" ({total / pair.track.period:.4g} period(s)), each at most {max_section_m * 1000:.1f} mm,"
        " cut at the track's highest points.",
    ]
    for k, (a, b) in enumerate(sections):
        notes.append(f"  {stem}_track_{k + 1:02d}: x = {a * 1000:.3f} to {b * 1000:.3f} mm"
                     + (f", joins piece {k + 2} at J{k + 1}" if k < len(sections) - 1 else ""))
    notes += ["", "Cut list (bounding boxes of the cut lines, mm):"]
    for p in parts:
        w, h = p["size_mm"]
        notes.append(f"  {p['count']} x {p['part']} ({p['file']}): {w:.1f} x {h:.1f}, cut length"
                     f" {p['cut_length_mm']:.1f} each")
    notes += [
        "  material thickness "
        + (f"{wheel_thickness_m * 1000:.3f} mm" if wheel_thickness_m is not None else "not given")
        + f"; kerf {kerf * 1000:.3f} mm (cut lines offset {kerf * 500:.3f} mm into the waste)",
        f"  sheet usage (sum of bounding boxes) {usage:.4f} m^2; total cut length {cut_total:.3f} m",
        *([] if sheet_m is None else [
            f"  sheet {sheet_m[0] * 1000:.0f} x {sheet_m[1] * 1000:.0f} mm: at least {sheets} sheet(s)"
            + "".join(f"; {p['part']} does not fit" for p in parts if not p["fits_sheet"])]),
        "",
        "CSV columns x_mm,y_mm: the parts at size (no kerf); wheel in the axle frame; track x along"
        " the axle path, y below the axle line (negative).",
        f"Strips stand {strip * 1000:.1f} mm below the lowest point; all share one flat bottom edge at"
        f" y = {y_bottom:.3f} mm, so mount them on one straight, level base.",
        "Check the printed scale bar before cutting. Where a wheel corner seats in a cusp the gap closes:",
        "keep fingers clear of the track near the wheels, and follow the machinery and ride safety rules",
        "that apply where the build is used.",
        *title_lines,
        "",
    ]
    written.append(write_text_atomic(out / f"{stem}_cut_list.txt", "\n".join(notes)))
    written.append(write_json_atomic(out / f"{stem}_cut_list.json", cut_list))
    return written


def _centre_svg(body, pts: np.ndarray, name: str, part: str, lines: Sequence[str], hole_m: float,
                margin_m: float, outer_r_mm: float | None = None, *, cut_mm: np.ndarray | None = None,
                flat_m: float | None = None, kerf_m: float = 0.0, tol_m: float = CHORD_TOL_M) -> str:
    """One part turning about a centre: outline (cut), centre hole (cut) and cross-hair (score).

    ``cut_mm`` is the outline's cut line (kerf applied; default the outline itself); the
    centre hole is a circle, or a D with ``flat_m``, its line ``kerf_m/2`` into the hole; a
    ring's outer edge (``outer_r_mm``, at size) is cut ``kerf_m/2`` outside it.
    """
    cut = pts if cut_mm is None else cut_mm
    k_mm = 0.5 * kerf_m * 1000
    ext = cut if outer_r_mm is None else np.array([[-outer_r_mm - k_mm, -outer_r_mm - k_mm],
                                                   [outer_r_mm + k_mm, outer_r_mm + k_mm]])
    sheet = _Sheet(ext[:, 0].min(), ext[:, 0].max(), ext[:, 1].min(), ext[:, 1].max(), list(lines),
                   margin_m * 1000)
    sheet.path(cut, CUT, closed=True, ident="outline")
    if outer_r_mm is not None:
        sheet.circle(0.0, 0.0, outer_r_mm + k_mm, CUT, ident="outer-edge")
    rh = 0.5 * hole_m * 1000
    if outer_r_mm is None:  # a ring's centre lies in the cut-out: marked, not drilled
        if flat_m is None:
            sheet.circle(0.0, 0.0, rh - k_mm, CUT, ident="centre-hole")
        else:
            sheet.path(bore_mm(hole_m, flat_m, kerf_m, tol_m)[0], CUT, closed=True, ident="centre-hole")
    rmin = float(np.min(np.hypot(pts[:, 0], pts[:, 1])))
    arm = rh + min(5.0, 0.3 * rmin)
    sheet.path(np.array([[-arm, 0.0], [arm, 0.0]]), SCORE, closed=False, ident="centre-cross-x")
    sheet.path(np.array([[0.0, -arm], [0.0, arm]]), SCORE, closed=False, ident="centre-cross-y")
    desc = (f"{part} outline about its centre (the centre at the origin of the geometry group, y up),"
            " mm, in the pose of the solve's reference (angle 0).")
    return sheet.render(f"{name} {part}", desc)


def export_hub_drawings(pair, out_dir: str | Path, *, name: str, thickness_m: float | None = None,
                        title_lines: Sequence[str] = (), hole_m: float = 0.010,
                        ring_rim_m: float = 0.030, margin_m: float = MARGIN_M,
                        dxf: bool = False, flat_m: float | None = None, kerf_m: float = 0.0,
                        tol_m: float = CHORD_TOL_M) -> list[Path]:
    """Write full-size cut files of a wheel and the hub (or ring) it rolls on.

    Files (all written atomically), with ``NAME`` the sanitised ``name``:

    * ``NAME_wheel.svg``, ``NAME_wheel.csv`` (and ``NAME_wheel.dxf`` with ``dxf``): the wheel
      about its axle, with the axle hole;
    * ``NAME_hub.svg``, ``NAME_hub.csv`` (``.dxf``; ``NAME_ring...`` for a wheel inside a
      ring): the hub about its centre, with its centre hole; a ring is drawn as its rolling
      outline cut from a disc ``ring_rim_m`` wider than its greatest radius;
    * ``NAME_cut_list.txt``: the centre distance to set them at, and what each file holds;
      ``NAME_cut_list.json``: the same figures and each part's size and cut length.

    Parameters
    ----------
    pair : HubPair
        A closed hub pair.
    out_dir : str or Path
        Folder for the files (created if missing).
    name : str
        Scenario name, used in file names and title blocks.
    thickness_m : float, optional
        Plate thickness [m], stated in the title blocks.
    title_lines : sequence of str
        Extra lines for every title block.
    hole_m : float
        Diameter [m] of the axle hole and of the hub's centre hole (default 10 mm).
    flat_m : float, optional
        Width [m] across the flat of a D-bore (both holes; the flat at the top, as a line
        wheel's); None: round holes.
    kerf_m : float
        Cut width [m]: every cut line runs half of it into the waste (outside a wheel's and a
        hub's outline, inside their holes, inside a ring's rolling outline, outside its disc),
        so the parts come out at the drawn size (the CSV holds them at size, no kerf).
    tol_m : float
        Chordal tolerance [m] of smooth outlines.
    ring_rim_m : float
        Width [m] of a ring's plate beyond its greatest radius.
    margin_m : float
        Blank margin [m] around the geometry.
    dxf : bool
        Also write DXF (R2010, mm, layers CUT/MARK/TEXT as the line's cut files).

    Returns
    -------
    list of Path
        The files written, wheel first.
    """
    stem = _safe_name(name)
    hole = _positive("hole_m", hole_m)
    tol = _positive("tol_m", tol_m)
    kerf = float(kerf_m)
    if not math.isfinite(kerf) or kerf < 0:
        raise InputError(f"kerf_m must be >= 0, got {kerf_m!r}")
    if kerf >= hole:
        raise InputError(f"kerf_m = {kerf:g} m is not less than the hole diameter {hole:g} m;"
                         " give a smaller kerf or a larger hole")
    if flat_m is not None:
        flat_m = _positive("flat_m", flat_m)
        if not (0.5 * hole + 0.5 * kerf < flat_m < hole):
            raise InputError(f"axle_flat_m = {flat_m:g} m must lie between half the hole plus half"
                             f" the kerf ({0.5 * (hole + kerf):g} m) and the hole {hole:g} m")
    rim = _positive("ring_rim_m", ring_rim_m)
    margin = _positive("margin_m", margin_m)
    if thickness_m is not None:
        thickness_m = _positive("thickness_m", thickness_m)
    if isinstance(title_lines, str):
        raise InputError("title_lines must be a sequence of strings, not one string; wrap it in a list")
    wheel, hub = pair.wheel, pair.hub
    ring = pair.side == "inside"
    part = "ring" if ring else "hub"
    wr = wheel.extremes()
    hr = hub.extremes()
    for what, rmin in (("wheel", wr[0]),) + ((part, hr[0]),) * (not ring):
        if hole >= 2 * rmin:
            raise InputError(f"hole_m = {hole:g} m does not fit in the {what} (least radius"
                             f" {rmin:g} m); give a smaller hole")
    common = [f"centre distance {pair.centre_distance * 1000:.3f} (hub centre to axle);"
              f" {pair.ratio:.6g} wheel turn(s) per {part} turn",
              "red: cut; blue: score or mark; black: text"]
    if thickness_m is not None:
        common.insert(1, f"plate thickness {thickness_m * 1000:.3f}")
    common += [str(s) for s in title_lines]
    out = Path(out_dir)
    written: list[Path] = []
    k_mm = 0.5 * kerf * 1000
    cut_kw: dict = {"flat_m": flat_m, "kerf_m": kerf, "tol_m": tol}
    wpts = wheel_outline_mm(wheel, tol)
    wcut = offset_closed_mm(wpts, k_mm)
    wl = [f"{name}: wheel, full size 1:1, all dimensions in mm",
          f"radius about the axle: r_min {wr[0] * 1000:.3f}, r_max {wr[1] * 1000:.3f};"
          f" axle hole diameter {hole * 1000:.3f}", *_kerf_lines(kerf, flat_m, "wheel"), *common]
    written.append(write_text_atomic(out / f"{stem}_wheel.svg",
                                     _centre_svg(wheel, wpts, name, "wheel", wl, hole, margin,
                                                 cut_mm=wcut, **cut_kw)))
    written.append(write_text_atomic(out / f"{stem}_wheel.csv", _csv(wpts)))
    if dxf:
        from ridesim.export.dxf import centre_part_dxf

        written.append(centre_part_dxf(out / f"{stem}_wheel.dxf", wcut, hole, wl, **cut_kw))
    hpts = wheel_outline_mm(hub, tol)
    # A ring's rolling outline bounds the cut-out: its waste is inside it.
    hcut = offset_closed_mm(hpts, -k_mm if ring else k_mm)
    outer = (hr[1] + rim) * 1000 if ring else None
    kl = (_kerf_lines(kerf, flat_m, "hub") if not ring else
          ([f"kerf {_mm(kerf)}: red cut lines run {_mm(0.5 * kerf)} into the waste, inside the"
            " rolling outline and outside the disc; the part comes out at the drawn size"]
           if kerf > 0 else ["kerf 0: red lines are the part's edges; the cut centre follows them"]))
    hl = [f"{name}: {part}, full size 1:1, all dimensions in mm",
          f"radius about the centre: {hr[0] * 1000:.3f} .. {hr[1] * 1000:.3f}; {pair.hub_lobes}"
          f" lobe(s); " + (f"outer edge radius {outer:.3f}; the marked centre is the arm's pivot"
                            if ring else f"centre hole diameter {hole * 1000:.3f}"), *kl, *common]
    written.append(write_text_atomic(out / f"{stem}_{part}.svg",
                                     _centre_svg(hub, hpts, name, part, hl, hole, margin, outer,
                                                 cut_mm=hcut, **cut_kw)))
    written.append(write_text_atomic(out / f"{stem}_{part}.csv", _csv(hpts)))
    if dxf:
        written.append(centre_part_dxf(out / f"{stem}_{part}.dxf", hcut, None if ring else hole, hl,
                                       outer, **cut_kw))
    ext = " / .dxf" if dxf else ""
    th_s = float(pair.wheel_angle(0.0))
    timing = (math.degrees((th_s - 0.5 * math.pi) % TWO_PI), -90.0 % 360.0 if ring else 90.0)
    notes = [
        f"{name}: cut files (full size, millimetres)",
        "",
        f"{stem}_wheel.svg / .csv{ext}: wheel outline about its axle; axle hole {hole * 1000:.3f} mm"
        + (f" with a flat {flat_m * 1000:.3f} mm across" if flat_m is not None else "") + ".",
        f"{stem}_{part}.svg / .csv{ext}: {part} outline about its centre; "
        + (f"cut the outline out of a disc of radius {outer:.3f} mm; the arm pivots at the marked"
           " centre." if ring else f"centre hole {hole * 1000:.3f} mm"
           + (f" with a flat {flat_m * 1000:.3f} mm across." if flat_m is not None else ".")),
        f"Kerf {kerf * 1000:.3f} mm: the SVG and DXF cut lines run {kerf * 500:.3f} mm into the waste;"
        " the CSV holds the parts at size.",
        f"Mount the axle {pair.centre_distance * 1000:.3f} mm from the {part}'s centre"
        f" ({'around the hub' if not ring else 'inside the ring'}).",
        f"Timing: assemble with the wheel's ray at {timing[0]:.3f} deg (its drawing) on the {part}'s"
        f" ray at {timing[1]:.3f} deg (its drawing), anticlockwise from +x; the parts touch there.",
        "CSV columns x_mm,y_mm: each part about its own centre.",
        *(["DXF: AutoCAD R2010, millimetres; layers CUT (red), MARK (blue), TEXT."] if dxf else []),
        "Where parts roll on each other, fingers can be drawn in and crushed: guard the nip.",
        *[str(s) for s in title_lines],
        "",
    ]
    written.append(write_text_atomic(out / f"{stem}_cut_list.txt", "\n".join(notes)))
    bore, _ = bore_mm(hole, flat_m, kerf, tol)
    if ring:
        assert outer is not None  # a ring has its disc
        r_out = outer + k_mm  # the disc's cut line, half the kerf outside it
        hub_size, hub_len = [2 * r_out, 2 * r_out], _perimeter(hcut) + TWO_PI * r_out
    else:
        hub_size, hub_len = _bbox(hcut), _perimeter(hcut) + _perimeter(bore)
    parts: list[dict[str, Any]] = [
             {"part": "wheel", "file": f"{stem}_wheel", "count": 1, "size_mm": _bbox(wcut),
              "cut_length_mm": _perimeter(wcut) + _perimeter(bore)},
             {"part": part, "file": f"{stem}_{part}", "count": 1, "size_mm": hub_size,
              "cut_length_mm": hub_len}]
    cut_list = {
        "name": name,
        "units": "mm",
        "material_thickness_m": thickness_m,
        "kerf_m": kerf,
        "axle_hole_m": hole,
        "axle_flat_m": flat_m,
        "chord_tolerance_m": tol,
        "centre_distance_m": float(pair.centre_distance),
        "ratio": float(pair.ratio),
        "side": pair.side,
        "timing_deg": {"wheel": timing[0], part: timing[1]},
        "parts": parts,
        "sheet_area_m2": sum(p["size_mm"][0] * p["size_mm"][1] for p in parts) * 1e-6,
        "total_cut_length_m": sum(p["cut_length_mm"] for p in parts) * 1e-3,
    }
    written.append(write_json_atomic(out / f"{stem}_cut_list.json", cut_list))
    return written


def _bbox(points_mm: np.ndarray) -> list[float]:
    return [float(np.ptp(points_mm[:, 0])), float(np.ptp(points_mm[:, 1]))]


def _perimeter(points_mm: np.ndarray) -> float:
    d = np.diff(np.vstack([points_mm, points_mm[:1]]), axis=0)
    return float(np.hypot(d[:, 0], d[:, 1]).sum())

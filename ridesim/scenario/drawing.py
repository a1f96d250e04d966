"""Outlines read from CAD drawings: DXF (ezdxf) and SVG (svgelements), in metres.

A drawing holds closed shapes. The outline is the shape that holds every other one (the
wheel's rim around its axle hole); several shapes side by side are refused unless
``layer`` (DXF) or ``id`` (SVG) picks one. The axle is the smallest circle inside the
outline drawn like it (on the outline's layer, or with its stroke colour: a cut line, not
a mark), unless the scenario gives ``axle_m``.

* DXF: LWPOLYLINE and POLYLINE (bulges as arcs), SPLINE, ELLIPSE, CIRCLE, and ARC/LINE
  chains joined end to end; units from the header's ``$INSUNITS`` (a unitless drawing is
  refused unless ``units`` is given).
* SVG: ``path``, ``polygon``, ``polyline``, ``rect``, ``circle``, ``ellipse`` with their
  transforms; millimetres from the document's ``width``/``height`` and ``viewBox`` (a user
  unit without them is a CSS pixel, 1/96 in). SVG's y axis points down; it is turned up,
  so the outline is not mirrored.

Curves become points within ``FLATTEN_M`` of the drawn curve; the outline through them is
then smooth between its corners (:meth:`ridesim.model.wheel.Wheel.outline`). Every bad
drawing gets one line naming the key and the fix.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, cast

import numpy as np

from ridesim.errors import ScenarioError
from ridesim.records import record

if TYPE_CHECKING:
    from ezdxf.entities import Polyline

__all__ = ["UNITS_M", "FLATTEN_M", "DrawnOutline", "read_drawing", "read_profile_drawing", "is_drawing"]

#: Length units a ``units`` key may name, in metres.
UNITS_M = {"m": 1.0, "cm": 0.01, "mm": 0.001, "in": 0.0254, "ft": 0.3048}
#: DXF $INSUNITS codes (AutoCAD DXF reference, HEADER section) for those units.
_INSUNITS_M = {1: 0.0254, 2: 0.3048, 4: 0.001, 5: 0.01, 6: 1.0, 14: 0.1}
#: Largest distance [m] of the points read from a drawn curve from the curve.
FLATTEN_M = 1e-6


def is_drawing(path: str | Path) -> bool:
    """True for a ``.dxf`` or ``.svg`` file name (case-insensitive)."""
    return Path(path).suffix.lower() in (".dxf", ".svg")


@record
class DrawnOutline:
    """An outline read from a drawing.

    Attributes
    ----------
    points_m : ndarray, shape (N, 2)
        Outline points [m] in the drawing's frame (y up), no closing repeat.
    axle_m : (float, float) or None
        Centre [m] of the smallest circle inside the outline drawn like it; None if none.
    """

    points_m: np.ndarray
    axle_m: tuple[float, float] | None


@dataclass
class _Shape:
    points: np.ndarray  # (N, 2) in metres, closed (no repeat)
    group: str  # layer (DXF) or stroke (SVG)
    name: str  # what the error messages call it
    circle: tuple[float, float, float] | None = None  # cx, cy, r [m]
    open_run: bool = False  # an open chain (marks; the outline only if nothing is closed)


def _area(p: np.ndarray) -> float:
    return 0.5 * float(np.sum(p[:, 0] * np.roll(p[:, 1], -1) - np.roll(p[:, 0], -1) * p[:, 1]))


def _inside(pt, poly: np.ndarray) -> bool:
    """Even-odd ray test: True when the point lies inside the closed polygon."""
    x, y = pt
    xs, ys = poly[:, 0], poly[:, 1]
    xn, yn = np.roll(xs, -1), np.roll(ys, -1)
    crosses = ((ys > y) != (yn > y)) & (x < (xn - xs) * (y - ys) / np.where(yn != ys, yn - ys, 1.0) + xs)
    return bool(np.count_nonzero(crosses) % 2)


def _segments_cross(p: np.ndarray) -> np.ndarray | None:
    """A point where the closed polyline crosses itself (a vertex near it), or None."""
    n = len(p)
    if n > 4000:  # checked on a thinned copy: a crossing of a dense outline shows there too
        p = p[::int(math.ceil(n / 4000))]
        n = len(p)
    a, b = p, np.roll(p, -1, axis=0)
    lo = np.minimum(a, b)
    hi = np.maximum(a, b)
    order = np.argsort(lo[:, 0])
    for ii, i in enumerate(order):
        for j in order[ii + 1:]:
            if lo[j, 0] > hi[i, 0]:
                break
            if abs(i - j) in (0, 1, n - 1) or lo[j, 1] > hi[i, 1] or hi[j, 1] < lo[i, 1]:
                continue
            d1, d2 = b[i] - a[i], b[j] - a[j]
            den = d1[0] * d2[1] - d1[1] * d2[0]
            if den == 0:
                continue
            w = a[j] - a[i]
            t = (w[0] * d2[1] - w[1] * d2[0]) / den
            u = (w[0] * d1[1] - w[1] * d1[0]) / den
            if 0 < t < 1 and 0 < u < 1:
                return a[i]
    return None


def _pick(shapes: list[_Shape], key: str, path: Path, picker: str) -> DrawnOutline:
    runs = [s for s in shapes if s.open_run]
    shapes = [s for s in shapes if not s.open_run]
    if not shapes and runs:  # the longest open run was meant as the outline: say where it is open
        r = max(runs, key=lambda s: float(np.ptp(s.points)))
        _close(r.points, 0.0, key, path, r.name)
    if not shapes:
        raise ScenarioError(f"{key}: {path.name} holds no closed shape (polyline, spline, circle, path);"
                            " draw the outline as one closed shape")
    outer = [s for s in shapes if not any(o is not s and abs(_area(o.points)) > abs(_area(s.points))
                                          and _inside(s.points[0], o.points) for o in shapes)]
    if len(outer) > 1:
        names = ", ".join(s.name for s in outer[:4])
        raise ScenarioError(f"{key}: {path.name} holds {len(outer)} separate shapes ({names}); pick one"
                            f" with {picker}")
    outline = outer[0]
    q = _segments_cross(outline.points)
    if q is not None:
        q = q * 1000
        raise ScenarioError(f"{key}: the outline {outline.name} in {path.name} crosses itself near"
                            f" ({q[0]:.3f}, {q[1]:.3f}) mm; fix the drawing")
    holes = [s.circle for s in shapes if s is not outline and s.circle is not None
             and s.group == outline.group and _inside(s.circle[:2], outline.points)]
    axle = None
    if holes:
        cx, cy, _ = min(holes, key=lambda c: c[2])
        axle = (float(cx), float(cy))
    return DrawnOutline(points_m=outline.points, axle_m=axle)


def _close(p: np.ndarray, tol: float, key: str, path: Path, name: str) -> np.ndarray:
    """Drop the repeated closing point of a closed run; refuse an open one, saying where the gap is."""
    gap = float(np.hypot(*(p[-1] - p[0])))
    if gap <= tol:
        return p[:-1] if len(p) > 1 and gap <= tol else p
    a, b = p[-1] * 1000, p[0] * 1000
    raise ScenarioError(f"{key}: the outline {name} in {path.name} is open: a gap of {gap * 1000:.4g} mm"
                        f" from ({a[0]:.3f}, {a[1]:.3f}) to ({b[0]:.3f}, {b[1]:.3f}) mm; close it")


# ---------------------------------------------------------------------------------- DXF
def _read_dxf(path: Path, key: str, layer: str | None, units: str | None) -> list[_Shape]:
    try:
        import ezdxf
    except ImportError:
        raise ScenarioError(f'{key}: reading a DXF drawing needs ezdxf: pip install "ridesim[cad]"'
                            " (or pip install ezdxf)") from None
    try:
        doc = ezdxf.readfile(str(path))
    except (OSError, ezdxf.DXFStructureError) as exc:
        raise ScenarioError(f"{key}: {path.name} is not a readable DXF drawing ({exc})") from None
    code = int(doc.header.get("$INSUNITS", 0))
    if units is not None:
        scale = UNITS_M[units]
    elif code in _INSUNITS_M:
        scale = _INSUNITS_M[code]
    else:
        raise ScenarioError(f"{key}: {path.name} does not say its units ($INSUNITS = {code}); give"
                            f" units = one of {', '.join(UNITS_M)} beside file")
    flat = FLATTEN_M / scale
    shapes: list[_Shape] = []
    loose = []  # open pieces (ARC, LINE, open polylines) to chain
    layers = set()
    for e in doc.modelspace():
        kind = e.dxftype()
        lay = e.dxf.get("layer", "0")
        layers.add(lay)
        if layer is not None and lay != layer:
            continue
        name = f"{kind} on layer {lay}"
        if kind == "CIRCLE":
            c = e.dxf.center
            r = float(e.dxf.radius)
            n = max(64, int(math.ceil(math.pi / math.acos(max(-1.0, 1 - flat / r)))))
            a = 2 * math.pi * np.arange(n) / n
            pts = np.column_stack([c.x + r * np.cos(a), c.y + r * np.sin(a)]) * scale
            shapes.append(_Shape(pts, lay, name, (c.x * scale, c.y * scale, r * scale)))
        elif kind in ("LWPOLYLINE", "POLYLINE", "SPLINE", "ELLIPSE", "ARC", "LINE"):
            try:
                pts = _flatten(e, flat) * scale
            except Exception:  # an entity ezdxf cannot flatten (e.g. a 3D polyline mesh)
                continue
            if len(pts) < 2:
                continue
            # An entity of dxftype POLYLINE is an ezdxf Polyline (the modelspace yields DXFGraphic).
            closed = bool(getattr(e, "closed", False)) \
                or (kind == "POLYLINE" and cast("Polyline", e).is_closed) \
                or (kind in ("SPLINE", "ELLIPSE", "LWPOLYLINE", "POLYLINE")
                    and np.hypot(*(pts[-1] - pts[0])) <= 1e-9 * max(1.0, float(np.ptp(pts))))
            if kind == "ELLIPSE" and abs(abs(e.dxf.end_param - e.dxf.start_param) - 2 * math.pi) < 1e-9:
                closed = True
            if closed:
                if np.hypot(*(pts[-1] - pts[0])) <= 1e-9 * float(np.ptp(pts)):
                    pts = pts[:-1]
                shapes.append(_Shape(pts, lay, name))
            else:
                loose.append((pts, lay))
    if layer is not None and layer not in layers:
        raise ScenarioError(f"{key}: {path.name} has no layer {layer!r}; its layers are"
                            f" {', '.join(sorted(layers))}")
    shapes += _chain(loose, key, path)
    return shapes


def _flatten(e, flat: float) -> np.ndarray:
    """Points on a DXF curve (drawing units) within ``flat`` of it, sampled on the true curve.

    Polylines are split into their lines and arcs (bulges) by ezdxf; arcs, ellipses and
    splines are sampled by their own ``flattening`` (points on the curve itself, not on a
    Bezier approximation of it).
    """
    kind = e.dxftype()
    if kind == "LINE":
        return np.array([(e.dxf.start.x, e.dxf.start.y), (e.dxf.end.x, e.dxf.end.y)])
    if kind in ("LWPOLYLINE", "POLYLINE"):
        runs = [_flatten(v, flat) for v in e.virtual_entities()]
        if not runs:
            return np.zeros((0, 2))
        return np.vstack([runs[0]] + [r[1:] for r in runs[1:]])
    return np.array([(v.x, v.y) for v in e.flattening(flat)])


def _chain(loose: list[tuple[np.ndarray, str]], key: str, path: Path) -> list[_Shape]:
    """Join open pieces end to end into closed loops; refuse a loop that does not close."""
    if not loose:
        return []
    size = max(float(np.ptp(np.vstack([p for p, _ in loose]))), 1e-12)
    tol = 1e-6 * size
    pieces = [p for p, _ in loose]
    groups = [g for _, g in loose]
    out = []
    used = [False] * len(pieces)
    for i in range(len(pieces)):
        if used[i]:
            continue
        used[i] = True
        run = [pieces[i]]
        group = groups[i]
        while True:
            end = run[-1][-1]
            best = None
            for j in range(len(pieces)):
                if used[j]:
                    continue
                if np.hypot(*(pieces[j][0] - end)) <= tol:
                    best = (j, pieces[j])
                elif np.hypot(*(pieces[j][-1] - end)) <= tol:
                    best = (j, pieces[j][::-1])
                if best:
                    break
            if best is None:
                break
            used[best[0]] = True
            run.append(best[1][1:])
        pts = np.vstack(run)
        name = f"chain of {len(run)} arcs/lines on layer {group}"
        if np.hypot(*(pts[-1] - pts[0])) > tol:
            out.append(_Shape(pts, group, name, open_run=True))
        else:
            out.append(_Shape(pts[:-1], group, name))
    return out


# ---------------------------------------------------------------------------------- SVG
def _read_svg(path: Path, key: str, ident: str | None) -> list[_Shape]:
    try:
        import svgelements as se
    except ImportError:
        raise ScenarioError(f'{key}: reading SVG needs svgelements: pip install "ridesim[cad]"'
                            " (or pip install svgelements)") from None
    try:
        doc = se.SVG.parse(str(path), reify=True, ppi=96.0)
    except Exception as exc:  # svgelements raises many types on a broken file
        raise ScenarioError(f"{key}: {path.name} is not a readable SVG drawing ({exc})") from None
    # svgelements resolves lengths to pixels; its millimetre is 3.7795296 px (96/25.4 rounded
    # to 7 digits), so millimetre drawings (the usual CAD export) are read back exactly with
    # its own figure (inch drawings then carry its 5e-7 relative rounding).
    px_m = 0.001 / float(se.Length("1mm").value(ppi=96.0))
    shapes = []
    ids = []
    for el in doc.elements():
        if not isinstance(el, se.Shape):
            continue
        eid = el.values.get("id") if hasattr(el, "values") else None
        if eid:
            ids.append(str(eid))
        if ident is not None and eid != ident:
            continue
        stroke = str(el.stroke) if el.stroke is not None else "none"
        name = f"<{type(el).__name__.lower()}{' id=' + repr(eid) if eid else ''}>"
        is_circle = isinstance(el, se.Circle) or (isinstance(el, se.Ellipse)
                                                    and abs(el.rx - el.ry) <= 1e-12 * abs(el.rx))
        opened: list = []
        for sub in _svg_subpaths(se, abs(se.Path(el)), FLATTEN_M / px_m, opened):
            pts = np.asarray(sub) * px_m
            pts[:, 1] *= -1.0
            circle = None
            if is_circle:  # centre and radius as drawn (transforms applied): from the points
                c = pts.mean(axis=0)
                circle = (float(c[0]), float(c[1]), float(np.hypot(*(pts - c).T).mean()))
            if len(pts) >= 3:
                shapes.append(_Shape(pts, stroke, name, circle))
        for sub in opened:
            pts = np.asarray(sub) * px_m
            pts[:, 1] *= -1.0
            shapes.append(_Shape(pts, stroke, name, open_run=True))
    if ident is not None and ident not in ids:
        raise ScenarioError(f"{key}: {path.name} has no shape with id {ident!r}"
                            + (f"; its ids are {', '.join(ids[:8])}" if ids else ""))
    return shapes


def _svg_subpaths(se, p, flat: float, opened: list) -> list[np.ndarray]:
    """Closed runs of points of an svgelements Path (curves within ``flat`` user units)."""
    runs: list[list[tuple[float, float]]] = []
    cur: list[tuple[float, float]] = []
    closed_runs = []
    for seg in p:
        if isinstance(seg, se.Move):
            if cur:
                runs.append(cur)
            cur = [(seg.end.x, seg.end.y)]
        elif isinstance(seg, se.Close):
            if cur:
                closed_runs.append(cur)
            cur = []
        elif isinstance(seg, se.Line):
            cur.append((seg.end.x, seg.end.y))
        else:
            length = float(seg.length(error=1e-6)) if hasattr(seg, "length") else 1.0
            # A chord of length c across a curve of radius R has sagitta c^2 / (8 R); with R at
            # least a tenth of the segment's length, 1 + sqrt(length / (0.8 flat)) chords do.
            n = max(8, int(math.ceil(math.sqrt(max(length, 0.0) / (0.8 * flat)))))
            n = min(n, 4096)
            for t in np.arange(1, n + 1) / n:
                q = seg.point(float(t))
                cur.append((q.x, q.y))
    if cur:
        runs.append(cur)
    out = []
    for r in closed_runs:
        a = np.array(r, dtype=float)
        if len(a) > 1 and np.hypot(*(a[-1] - a[0])) <= 1e-9 * max(1.0, float(np.ptp(a))):
            a = a[:-1]
        out.append(a)
    for r in runs:  # an open run counts when it ends where it starts
        a = np.array(r, dtype=float)
        if len(a) > 3 and np.hypot(*(a[-1] - a[0])) <= 1e-9 * max(1.0, float(np.ptp(a))):
            out.append(a[:-1])
        elif len(a) >= 3:
            opened.append(a)
    return out


# ---------------------------------------------------------------------------------- entry
def read_drawing(path: str | Path, key: str, *, layer: str | None = None, ident: str | None = None,
                 units: str | None = None) -> DrawnOutline:
    """Read one closed outline, and the axle circle inside it, from a DXF or SVG drawing.

    Parameters
    ----------
    path : str or Path
        The drawing (``.dxf`` or ``.svg``).
    key : str
        Scenario key path for messages (``wheel.file``).
    layer : str, optional
        DXF layer to read (only its entities).
    ident : str, optional
        SVG element id to read.
    units : str, optional
        DXF length unit (one of :data:`UNITS_M`) for a drawing whose header gives none.

    Returns
    -------
    DrawnOutline
    """
    p = Path(path)
    if units is not None and units not in UNITS_M:
        raise ScenarioError(f"{key.rsplit('.', 1)[0]}.units must be one of {', '.join(UNITS_M)},"
                            f" got {units!r}")
    if p.suffix.lower() == ".dxf":
        shapes = _read_dxf(p, key, layer, units)
        return _pick(shapes, key, p, "layer = \"...\"")
    shapes = _read_svg(p, key, ident)
    return _pick(shapes, key, p, "id = \"...\"")


def read_profile_drawing(path: str | Path, key: str, *, layer: str | None = None, ident: str | None = None,
                         units: str | None = None) -> np.ndarray:
    """Read one open track profile (one period, left to right) from a DXF or SVG drawing.

    The profile is the one open curve of the drawing (DXF entities on ``layer`` joined end to
    end, or the SVG element ``ident``); closed shapes are ignored.

    Parameters
    ----------
    path : str or Path
        The drawing (``.dxf`` or ``.svg``).
    key : str
        Scenario key path for messages (``track.file``).
    layer : str, optional
        DXF layer to read.
    ident : str, optional
        SVG element id to read.
    units : str, optional
        DXF length unit for a drawing whose header gives none.

    Returns
    -------
    ndarray, shape (N, 2)
        Profile points [m], x increasing.
    """
    p = Path(path)
    if units is not None and units not in UNITS_M:
        raise ScenarioError(f"{key.rsplit('.', 1)[0]}.units must be one of {', '.join(UNITS_M)},"
                            f" got {units!r}")
    if p.suffix.lower() == ".dxf":
        shapes, picker = _read_dxf(p, key, layer, units), 'layer = "..."'
    else:
        shapes, picker = _read_svg(p, key, ident), 'id = "..."'
    runs = [s for s in shapes if s.open_run]
    if not runs:
        raise ScenarioError(f"{key}: {p.name} holds no open curve to read as the track profile; draw one"
                            " period of the profile as one open polyline, spline or path")
    if len(runs) > 1:
        names = ", ".join(s.name for s in runs[:4])
        raise ScenarioError(f"{key}: {p.name} holds {len(runs)} open curves ({names}); pick one"
                            f" with {picker}")
    pts = runs[0].points
    return pts[::-1].copy() if pts[-1, 0] < pts[0, 0] else pts

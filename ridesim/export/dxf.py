"""DXF cut files (AutoCAD R2010 format, millimetres) for laser, router and waterjet shops.

Each drawing is 1:1 in millimetres (``$INSUNITS`` = 4, ``$MEASUREMENT`` = 1, metric) in
the same frames as the SVG and CSV files (wheel: axle frame; track: x along the axle path,
y below the axle line), with three layers:

* ``CUT`` (red, ACI 1): cut lines, already offset by half the kerf into the waste;
* ``MARK`` (blue, ACI 5): score or mark lines (axle cross-hair, cusp and joint ticks);
* ``TEXT`` (white/black, ACI 7): notes to engrave or ignore.

Curves are LWPOLYLINEs whose chords stay within the export's chord tolerance; a circular
wheel and a round axle hole are CIRCLEs and the arc of a D-bore an exact arc (a polyline
bulge).

The files are written here, without ezdxf (whose import alone costs more than the rest of
an export): everything but the entities is the same in every file (header, classes, tables
with the three layers, blocks, objects), written once by ezdxf into
``ridesim/export/dxf_skeleton.py`` (``tools/dxf_skeleton.py``); the entities follow with
the handles, owner, subclass markers, group codes and number formats ezdxf gives them, so
a file is byte for byte the one ezdxf writes for the same drawing (``tests/test_dxf_writer.py``).
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from ridesim.export.results import write_text_atomic

__all__ = ["LAYERS", "Drawing", "dxf_text", "wheel_dxf", "section_dxf", "centre_part_dxf"]

#: Layer name -> AutoCAD colour index (1 red, 5 blue, 7 white/black).
LAYERS = {"CUT": 1, "MARK": 5, "TEXT": 7}
TEXT_MM = 3.5
LINE_MM = 5.0


def _xy(p) -> tuple[float, float]:
    return float(p[0]), float(p[1])


class Drawing:
    """The entities of one drawing, in drawing order, as plain records.

    ``entities`` holds ``("LWPOLYLINE", layer, points, bulges or None, closed)``,
    ``("CIRCLE", layer, centre, radius)``, ``("LINE", layer, start, end)`` and
    ``("TEXT", layer, insert, height, text)``, in millimetres (Python floats).
    """

    def __init__(self) -> None:
        self.entities: list[tuple[Any, ...]] = []

    def polyline(self, points, layer: str, *, bulges: Sequence[float] | None = None,
                 closed: bool = True) -> None:
        """Add an LWPOLYLINE through ``points`` (N x 2), with a bulge per vertex if given."""
        pts = [_xy(p) for p in np.asarray(points, dtype=float).tolist()]
        b = None if bulges is None else [float(v) for v in bulges]
        if b is not None and len(b) != len(pts):
            raise ValueError(f"bulges: one per vertex ({len(pts)}), got {len(b)}")
        self.entities.append(("LWPOLYLINE", layer, pts, b, bool(closed)))

    def circle(self, centre, radius: float, layer: str) -> None:
        """Add a CIRCLE."""
        self.entities.append(("CIRCLE", layer, _xy(centre), float(radius)))

    def line(self, start, end, layer: str) -> None:
        """Add a LINE."""
        self.entities.append(("LINE", layer, _xy(start), _xy(end)))

    def text(self, insert, text: str, layer: str = "TEXT", height: float = TEXT_MM) -> None:
        """Add a one-line TEXT (line breaks and a closing ``^``, which a DXF text cannot hold, dropped)."""
        one_line = str(text).replace("\n", "").replace("\r", "").rstrip("^")
        self.entities.append(("TEXT", layer, _xy(insert), float(height), one_line))


def _entity_text(kind: str, handle: str, owner: str, layer: str, data: tuple) -> str:
    # The tags in ezdxf's order and format ("%3d\n%s\n", floats as Python's repr): handle,
    # owner, AcDbEntity with the layer, then the entity's own subclass; default-valued
    # optional tags (thickness, extrusion, rotation...) are not written.
    head = f"  0\n{kind}\n  5\n{handle}\n330\n{owner}\n100\nAcDbEntity\n  8\n{layer}\n"
    if kind == "LWPOLYLINE":
        points, bulges, closed = data
        parts = [head, f"100\nAcDbPolyline\n 90\n{len(points)}\n 70\n{1 if closed else 0}\n"]
        if bulges is None:
            parts += [f" 10\n{x!r}\n 20\n{y!r}\n" for x, y in points]
        else:
            parts += [f" 10\n{x!r}\n 20\n{y!r}\n" + (f" 42\n{b!r}\n" if b else "")
                      for (x, y), b in zip(points, bulges, strict=True)]
        return "".join(parts)
    if kind == "CIRCLE":
        (x, y), r = data
        return f"{head}100\nAcDbCircle\n 10\n{x!r}\n 20\n{y!r}\n 30\n0.0\n 40\n{r!r}\n"
    if kind == "LINE":
        (x0, y0), (x1, y1) = data
        return (f"{head}100\nAcDbLine\n 10\n{x0!r}\n 20\n{y0!r}\n 30\n0.0\n"
                f" 11\n{x1!r}\n 21\n{y1!r}\n 31\n0.0\n")
    if kind == "TEXT":
        (x, y), h, s = data
        return f"{head}100\nAcDbText\n 10\n{x!r}\n 20\n{y!r}\n 30\n0.0\n 40\n{h!r}\n  1\n{s}\n100\nAcDbText\n"
    raise ValueError(f"unknown DXF entity {kind!r}")


def dxf_text(drawing: Drawing) -> str:
    """The drawing as the text of an R2010 DXF file (identical drawings give identical text).

    Parameters
    ----------
    drawing : Drawing

    Returns
    -------
    str
    """
    from ridesim.export import dxf_skeleton as sk

    first = sk.FIRST_HANDLE
    body = "".join(_entity_text(kind, f"{first + i:X}", sk.OWNER, layer, tuple(data))
                   for i, (kind, layer, *data) in enumerate(drawing.entities))
    after = first + len(drawing.entities)  # handles ezdxf gives out while writing follow the entities

    def fill(part: str) -> str:
        return re.sub(r"@@H\+(\d+)@@", lambda m: f"{after + int(m[1]):X}", part)

    return fill(sk.HEAD) + body + fill(sk.TAIL)


def _text_block(d: Drawing, lines: Sequence[str], x: float, y_top: float) -> None:
    y = y_top
    for s in lines:
        y -= LINE_MM
        d.text((x, y), str(s))


def _save(d: Drawing, path: Path) -> Path:
    """Write the drawing atomically; its bytes depend on its geometry only."""
    return write_text_atomic(path, dxf_text(d))


def _bore(d: Drawing, hole_m: float, flat_m: float | None, kerf_m: float) -> None:
    """Draw a bore on CUT at the origin, its line half the kerf into the hole.

    A circle, or a D: an arc and its flat at the top, one polyline with a bulge.
    """
    r = 0.5 * (hole_m - kerf_m) * 1000
    if flat_m is None:
        d.circle((0.0, 0.0), r, "CUT")
        return
    f = (flat_m - 0.5 * hole_m - 0.5 * kerf_m) * 1000
    w = math.sqrt(r * r - f * f)
    sweep = math.pi + 2 * math.asin(f / r)  # anticlockwise arc under the flat
    d.polyline([(w, f), (-w, f)], "CUT", bulges=[0.0, math.tan(sweep / 4)])


def wheel_dxf(path: str | Path, pair, cut_mm: np.ndarray, hole_m: float, flat_m: float | None,
              kerf_m: float, lines: Sequence[str]) -> Path:
    """Write the wheel's DXF: outline and bore on CUT, cross-hair on MARK, notes on TEXT.

    Parameters
    ----------
    path : str or Path
        File to write (atomically).
    pair : RollingPair
        The solved pair (its wheel).
    cut_mm : ndarray, shape (N, 2)
        Outline cut line [mm], axle frame, kerf already applied.
    hole_m : float
        Bore diameter [m].
    flat_m : float or None
        Width across a D-bore's flat [m]; None: round.
    kerf_m : float
        Cut width [m] (the bore's line moves half of it into the hole).
    lines : sequence of str
        Notes for the TEXT layer.

    Returns
    -------
    Path
    """
    d = Drawing()
    wheel = pair.wheel
    if wheel.kind == "circle":  # a circle stays a circle: its centre and radius, grown by half the kerf
        c = np.asarray(wheel.shape_offset) * 1000
        d.circle(c, (wheel.params["radius_m"] + 0.5 * kerf_m) * 1000, "CUT")
    else:
        d.polyline(cut_mm, "CUT")
    _bore(d, hole_m, flat_m, kerf_m)
    rmin = pair.wheel.extremes()[0] * 1000
    arm = 0.5 * hole_m * 1000 + min(5.0, 0.3 * rmin)
    d.line((-arm, 0.0), (arm, 0.0), "MARK")
    d.line((0.0, -arm), (0.0, arm), "MARK")
    _text_block(d, lines, float(cut_mm[:, 0].min()), float(cut_mm[:, 1].min()) - LINE_MM)
    return _save(d, Path(path))


def section_dxf(path: str | Path, k: int, n: int, prof_mm: np.ndarray, cut_mm: np.ndarray,
                cusps_mm: np.ndarray, joint_mark_mm: float, lines: Sequence[str]) -> Path:
    """Write one track section's DXF: strip on CUT, cusp and joint ticks on MARK, notes on TEXT.

    Parameters
    ----------
    path : str or Path
        File to write (atomically).
    k, n : int
        Section index (from 0) and number of sections.
    prof_mm : ndarray, shape (M, 2)
        Profile [mm] at size, track frame.
    cut_mm : ndarray, shape (M + 2, 2)
        Strip cut line [mm], kerf applied.
    cusps_mm : ndarray, shape (C, 3)
        Cusps ``(x, y, valley)`` [mm] along the whole track.
    joint_mark_mm : float
        Distance [mm] of each joint tick from the joint.
    lines : sequence of str
        Notes for the TEXT layer.

    Returns
    -------
    Path
    """
    d = Drawing()
    d.polyline(cut_mm, "CUT")
    x0, x1 = float(prof_mm[0, 0]), float(prof_mm[-1, 0])
    y_bottom = float(cut_mm[:, 1].min())
    tick = min(4.0, 0.4 * (float(prof_mm[:, 1].min()) - y_bottom))
    for c in cusps_mm:
        if x0 < c[0] < x1:
            d.line((c[0], c[1]), (c[0], float(c[1]) - tick), "MARK")
    ends = []
    if k > 0:
        ends.append((x0 + joint_mark_mm, f"J{k}"))
    if k < n - 1:
        ends.append((x1 - joint_mark_mm, f"J{k + 1}"))
    for xj, label in ends:
        yj = float(np.interp(xj, prof_mm[:, 0], prof_mm[:, 1]))
        d.line((xj, yj), (xj, yj - 1.5 * tick), "MARK")
        d.text((xj - TEXT_MM, yj - 1.5 * tick - LINE_MM), label)
    _text_block(d, lines, x0, y_bottom - LINE_MM)
    return _save(d, Path(path))


def centre_part_dxf(path: str | Path, outline_mm: np.ndarray, hole_m: float | None,
                    lines: Sequence[str], outer_r_mm: float | None = None, *,
                    flat_m: float | None = None, kerf_m: float = 0.0, tol_m: float = 0.0) -> Path:
    """Write a part that turns about a centre (a hub's wheel, a hub, a ring) as a DXF.

    The outline and the centre hole (or, for a ring, the outline cut from a disc of radius
    ``outer_r_mm``) on CUT, a cross-hair at the centre on MARK, notes on TEXT; the centre at
    the origin, in the same frame as the part's SVG and CSV.

    Parameters
    ----------
    path : str or Path
        File to write (atomically).
    outline_mm : ndarray, shape (N, 2)
        Outline cut line [mm] about the centre (kerf already applied), without a closing repeat.
    hole_m : float or None
        Centre hole diameter [m]; None: no hole (the centre is marked only).
    lines : sequence of str
        Notes for the TEXT layer.
    outer_r_mm : float, optional
        Radius [mm] of the disc a ring is cut from, at size (its CUT circle runs half the
        kerf outside it).
    flat_m : float, optional
        Width [m] across a D-bore's flat; None: a round hole.
    kerf_m : float
        Cut width [m]: the hole's line runs half of it into the hole.
    tol_m : float
        Unused (arcs are exact in DXF); kept for the SVG writer's signature.

    Returns
    -------
    Path
    """
    d = Drawing()
    pts = np.asarray(outline_mm, dtype=float)
    d.polyline(pts, "CUT")
    if outer_r_mm is not None:
        d.circle((0.0, 0.0), float(outer_r_mm) + 0.5 * kerf_m * 1000, "CUT")
    rh = 0.0 if hole_m is None else 0.5 * hole_m * 1000
    if hole_m is not None:
        _bore(d, hole_m, flat_m, kerf_m)
    rmin = float(np.min(np.hypot(pts[:, 0], pts[:, 1])))
    arm = rh + min(5.0, 0.3 * rmin)
    d.line((-arm, 0.0), (arm, 0.0), "MARK")
    d.line((0.0, -arm), (0.0, arm), "MARK")
    x_left = -float(outer_r_mm) if outer_r_mm is not None else float(pts[:, 0].min())
    y_low = -float(outer_r_mm) if outer_r_mm is not None else float(pts[:, 1].min())
    _text_block(d, lines, x_left, y_low - LINE_MM)
    return _save(d, Path(path))

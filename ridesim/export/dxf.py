"""DXF cut files (AutoCAD R2010 format, millimetres) for laser, router and waterjet shops.

Written with ezdxf (the ``cad`` extra), imported only here and only when a DXF is asked
for. Each drawing is 1:1 in millimetres (``$INSUNITS`` = 4, ``$MEASUREMENT`` = 1, metric)
in the same frames as the SVG and CSV files (wheel: axle frame; track: x along the axle
path, y below the axle line), with three layers:

* ``CUT`` (red, ACI 1): cut lines, already offset by half the kerf into the waste;
* ``MARK`` (blue, ACI 5): score or mark lines (axle cross-hair, cusp and joint ticks);
* ``TEXT`` (white/black, ACI 7): notes to engrave or ignore.

Curves are LWPOLYLINEs whose chords stay within the export's chord tolerance; a circular
wheel and a round axle hole are CIRCLEs and the arc of a D-bore an exact arc (a polyline
bulge).
"""

from __future__ import annotations

import io
import math
import re
from collections.abc import Sequence
from pathlib import Path

import numpy as np

from ridesim.errors import InputError
from ridesim.export.results import write_text_atomic

__all__ = ["LAYERS", "require_ezdxf", "wheel_dxf", "section_dxf", "centre_part_dxf"]

#: Layer name -> AutoCAD colour index (1 red, 5 blue, 7 white/black).
LAYERS = {"CUT": 1, "MARK": 5, "TEXT": 7}
TEXT_MM = 3.5
LINE_MM = 5.0


def require_ezdxf():
    """Import ezdxf, or say in one line how to install it."""
    try:
        import ezdxf
    except ImportError:
        raise InputError('DXF export needs ezdxf: pip install "ridesim[cad]" (or pip install ezdxf)'
                         ) from None
    return ezdxf


def _new_doc():
    ezdxf = require_ezdxf()
    from ezdxf import units

    doc = ezdxf.new("R2010", setup=False)
    doc.units = units.MM
    doc.header["$MEASUREMENT"] = 1  # metric
    for name, colour in LAYERS.items():
        doc.layers.add(name, color=colour)
    return doc


def _text_block(msp, lines: Sequence[str], x: float, y_top: float) -> None:
    y = y_top
    for s in lines:
        y -= LINE_MM
        msp.add_text(str(s), height=TEXT_MM, dxfattribs={"layer": "TEXT", "insert": (x, y)})


def _save(doc, path: Path) -> Path:
    """Write a drawing whose bytes depend on its geometry only.

    ezdxf stamps the save time and fresh GUIDs into the header unless told to write fixed
    metadata; identical inputs must give identical files (a shop's file comparison, and
    re-exports that change nothing must not look changed).
    """
    import ezdxf

    # The CLASSES section is filled from a set (its order follows Python's string hashing,
    # which changes from process to process): fill it now and order it by name.
    doc.classes.add_required_classes(doc.dxfversion)
    doc.classes.classes = dict(sorted(doc.classes.classes.items(), key=lambda kv: str(kv[0])))
    buf = io.StringIO()
    before = ezdxf.options.write_fixed_meta_data_for_testing
    ezdxf.options.write_fixed_meta_data_for_testing = True
    try:
        doc.write(buf)
    finally:
        ezdxf.options.write_fixed_meta_data_for_testing = before
    # ezdxf's own "created by / written by" markers carry a clock time: keep the version only.
    text = re.sub(r"^(\d+\.\d+\.\d+\S*) @ \d{4}-\d\d-\d\dT[0-9:.+\-]+$", r"\1", buf.getvalue(),
                  flags=re.M)
    return write_text_atomic(path, text)


def _bore(msp, hole_m: float, flat_m: float | None, kerf_m: float) -> None:
    """Draw a bore on CUT at the origin, its line half the kerf into the hole.

    A circle, or a D: an arc and its flat at the top, one polyline with a bulge.
    """
    r = 0.5 * (hole_m - kerf_m) * 1000
    if flat_m is None:
        msp.add_circle((0.0, 0.0), r, dxfattribs={"layer": "CUT"})
        return
    f = (flat_m - 0.5 * hole_m - 0.5 * kerf_m) * 1000
    w = math.sqrt(r * r - f * f)
    sweep = math.pi + 2 * math.asin(f / r)  # anticlockwise arc under the flat
    msp.add_lwpolyline([(w, f, 0.0), (-w, f, math.tan(sweep / 4))], format="xyb", close=True,
                       dxfattribs={"layer": "CUT"})


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
    doc = _new_doc()
    msp = doc.modelspace()
    wheel = pair.wheel
    if wheel.kind == "circle":  # a circle stays a circle: its centre and radius, grown by half the kerf
        c = np.asarray(wheel.shape_offset) * 1000
        msp.add_circle((float(c[0]), float(c[1])), (wheel.params["radius_m"] + 0.5 * kerf_m) * 1000,
                       dxfattribs={"layer": "CUT"})
    else:
        msp.add_lwpolyline([tuple(map(float, p)) for p in cut_mm], close=True, dxfattribs={"layer": "CUT"})
    _bore(msp, hole_m, flat_m, kerf_m)
    rmin = pair.wheel.extremes()[0] * 1000
    arm = 0.5 * hole_m * 1000 + min(5.0, 0.3 * rmin)
    msp.add_line((-arm, 0.0), (arm, 0.0), dxfattribs={"layer": "MARK"})
    msp.add_line((0.0, -arm), (0.0, arm), dxfattribs={"layer": "MARK"})
    _text_block(msp, lines, float(cut_mm[:, 0].min()), float(cut_mm[:, 1].min()) - LINE_MM)
    return _save(doc, Path(path))


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
    doc = _new_doc()
    msp = doc.modelspace()
    msp.add_lwpolyline([tuple(map(float, p)) for p in cut_mm], close=True, dxfattribs={"layer": "CUT"})
    x0, x1 = float(prof_mm[0, 0]), float(prof_mm[-1, 0])
    y_bottom = float(cut_mm[:, 1].min())
    tick = min(4.0, 0.4 * (float(prof_mm[:, 1].min()) - y_bottom))
    for c in cusps_mm:
        if x0 < c[0] < x1:
            msp.add_line((float(c[0]), float(c[1])), (float(c[0]), float(c[1]) - tick),
                         dxfattribs={"layer": "MARK"})
    ends = []
    if k > 0:
        ends.append((x0 + joint_mark_mm, f"J{k}"))
    if k < n - 1:
        ends.append((x1 - joint_mark_mm, f"J{k + 1}"))
    for xj, label in ends:
        yj = float(np.interp(xj, prof_mm[:, 0], prof_mm[:, 1]))
        msp.add_line((xj, yj), (xj, yj - 1.5 * tick), dxfattribs={"layer": "MARK"})
        msp.add_text(label, height=TEXT_MM,
                     dxfattribs={"layer": "TEXT", "insert": (xj - TEXT_MM, yj - 1.5 * tick - LINE_MM)})
    _text_block(msp, lines, x0, y_bottom - LINE_MM)
    return _save(doc, Path(path))


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
    doc = _new_doc()
    msp = doc.modelspace()
    pts = np.asarray(outline_mm, dtype=float)
    msp.add_lwpolyline([tuple(map(float, p)) for p in pts], close=True, dxfattribs={"layer": "CUT"})
    if outer_r_mm is not None:
        msp.add_circle((0.0, 0.0), float(outer_r_mm) + 0.5 * kerf_m * 1000, dxfattribs={"layer": "CUT"})
    rh = 0.0 if hole_m is None else 0.5 * hole_m * 1000
    if hole_m is not None:
        _bore(msp, hole_m, flat_m, kerf_m)
    rmin = float(np.min(np.hypot(pts[:, 0], pts[:, 1])))
    arm = rh + min(5.0, 0.3 * rmin)
    msp.add_line((-arm, 0.0), (arm, 0.0), dxfattribs={"layer": "MARK"})
    msp.add_line((0.0, -arm), (0.0, arm), dxfattribs={"layer": "MARK"})
    x_left = -float(outer_r_mm) if outer_r_mm is not None else float(pts[:, 0].min())
    y_low = -float(outer_r_mm) if outer_r_mm is not None else float(pts[:, 1].min())
    _text_block(msp, lines, x_left, y_low - LINE_MM)
    return _save(doc, Path(path))

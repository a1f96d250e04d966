"""Hub exports honour [export] axle_hole_m, axle_flat_m, kerf_m and chord_tolerance_m.

Measured on the written DXF read back with ezdxf: a cut line runs half the kerf into the
waste (common practice for kerf compensation), so every vertex of a part's outline cut lies
kerf/2 from the true curve, to within the chord tolerance the curve was drawn with; a round
hole's circle has radius (hole - kerf)/2; a D-bore's flat lies flat - hole/2 - kerf/2 above the
centre on a circle of that radius.
"""

import math
from pathlib import Path

import numpy as np
import pytest

from ridesim.cli import main

ezdxf = pytest.importorskip("ezdxf")

SCENARIOS = Path(__file__).resolve().parent.parent / "scenarios"
A, B = 0.06, 0.05
ECC = math.sqrt(A * A - B * B) / A
HOLE, FLAT, KERF, TOL = 0.008, 0.0065, 0.0004, 2e-6


def _scenario(tmp_path, name, flat=True):
    text = (SCENARIOS / f"{name}.toml").read_text()
    text += (f"\n[export]\naxle_hole_m = {HOLE}\nkerf_m = {KERF}\nchord_tolerance_m = {TOL}\n"
             + (f"axle_flat_m = {FLAT}\n" if flat else ""))
    f = tmp_path / f"{name}.toml"
    f.write_text(text)
    return f


def _cut(path):
    doc = ezdxf.readfile(path)
    ents = [e for e in doc.modelspace() if e.dxf.layer == "CUT"]
    polys = sorted((e for e in ents if e.dxftype() == "LWPOLYLINE"), key=lambda e: -len(e))
    circles = [e for e in ents if e.dxftype() == "CIRCLE"]
    return polys, circles


def _dist_to_polyline(p, poly):
    a = poly
    b = np.roll(poly, -1, axis=0)
    ab = b - a
    t = np.clip(np.einsum("mnk,nk->mn", p[:, None, :] - a[None], ab) / np.sum(ab * ab, axis=1), 0, 1)
    foot = a[None] + t[..., None] * ab[None]
    return np.min(np.hypot(*(p[:, None, :] - foot).transpose(2, 0, 1)), axis=1)


def _ellipse_focus(phi_shift):
    # The ellipse about its focus, densely: r = a(1 - e^2)/(1 + e cos(phi - phi_shift)) [mm].
    phi = np.linspace(0, 2 * math.pi, 200_000, endpoint=False)
    r = 1000 * A * (1 - ECC**2) / (1 + ECC * np.cos(phi - phi_shift))
    return np.column_stack([r * np.cos(phi), r * np.sin(phi)])


def _dist_to_dense(p, dense):
    from scipy.spatial import cKDTree

    return cKDTree(dense).query(p)[0]


def test_gear_pair_parts_carry_kerf_hole_and_flat(tmp_path):
    f = _scenario(tmp_path, "elliptic_gear_pair")
    out = tmp_path / "o"
    assert main(["export", str(f), "--out", str(out)]) == 0
    # The wheel: ellipse with its focus at the origin, near vertex along +x (phi_shift 0); the
    # hub: the same ellipse with its far vertex... greatest radius at 90 deg (see
    # tests/test_jobs_hub.py): rho = a(1 - e^2)/(1 - e sin phi), i.e. phi_shift = -90 deg.
    for part, shift in (("wheel", 0.0), ("hub", -0.5 * math.pi)):
        polys, circles = _cut(out / f"elliptic_gear_pair_{part}.dxf")
        outline = np.array([(x, y) for x, y, *_ in polys[0].get_points()])
        d = _dist_to_dense(outline, _ellipse_focus(shift))
        # kerf/2 outside the true curve, to the chord tolerance (plus the dense sampling's
        # 1e-5 mm spacing error)
        np.testing.assert_allclose(d, 500 * KERF, atol=1000 * TOL + 1e-4)
        r_out = np.hypot(outline[:, 0], outline[:, 1])
        phi = np.arctan2(outline[:, 1], outline[:, 0])
        r_true = 1000 * A * (1 - ECC**2) / (1 + ECC * np.cos(phi - shift))
        assert np.all(r_out > r_true)  # outside: the waste side of a plate's edge
        # The D-bore: two vertices on the circle of radius (hole - kerf)/2, the flat at the top.
        bore = np.array([(x, y) for x, y, *_ in polys[1].get_points()])
        assert len(bore) == 2 and not circles
        np.testing.assert_allclose(np.hypot(bore[:, 0], bore[:, 1]), 500 * (HOLE - KERF), rtol=1e-12)
        np.testing.assert_allclose(bore[:, 1], 1000 * (FLAT - 0.5 * HOLE - 0.5 * KERF), rtol=1e-12)


def test_ring_kerf_runs_into_the_cut_out(tmp_path):
    f = _scenario(tmp_path, "drum_carousel", flat=False)
    out = tmp_path / "o"
    assert main(["export", str(f), "--out", str(out)]) == 0
    at_size = np.loadtxt(out / "drum_carousel_ring.csv", delimiter=",", skiprows=1)
    polys, circles = _cut(out / "drum_carousel_ring.dxf")
    cut = np.array([(x, y) for x, y, *_ in polys[0].get_points()])
    # Each cut edge is the at-size edge moved kerf/2 along its normal: its midpoint lies kerf/2
    # from the at-size outline, on the inside (the ring's waste is the cut-out).
    mid = 0.5 * (cut + np.roll(cut, -1, axis=0))
    np.testing.assert_allclose(_dist_to_polyline(mid, at_size), 500 * KERF, atol=1000 * TOL)
    assert np.mean(np.hypot(cut[:, 0], cut[:, 1])) < np.mean(np.hypot(at_size[:, 0], at_size[:, 1]))
    # The disc's edge: kerf/2 outside its radius, as the cut list states it.
    notes = (out / "drum_carousel_cut_list.txt").read_text()
    outer = float(notes.split("disc of radius ")[1].split(" mm")[0])
    assert [c.dxf.radius for c in circles] == [pytest.approx(outer + 500 * KERF, abs=5e-4)]  # 3 decimals
    # The wheel's round axle hole: radius (hole - kerf)/2.
    _, wc = _cut(out / "drum_carousel_wheel.dxf")
    assert [c.dxf.radius for c in wc] == [pytest.approx(500 * (HOLE - KERF), rel=1e-12)]


def test_hub_cut_list_json_sizes_the_parts(tmp_path):
    """The drum carousel's hexagon wheel (apothem 0.25 m): across the flats 2a, across the
    corners 2a / cos 30 deg, cut length the perimeter 12 a tan 30 deg plus the hole's pi d
    (regular hexagon, elementary geometry; kerf 0); the ring is cut from a disc, so its size is
    the disc's diameter. The centre distance is the solved pair's."""
    import json

    out = tmp_path / "out"
    assert main(["export", str(SCENARIOS / "drum_carousel.toml"), "--out", str(out)]) == 0
    cl = json.loads((out / "drum_carousel_cut_list.json").read_text())
    a_mm, hole_mm = 250.0, 1000 * cl["axle_hole_m"]
    wheel, ring = cl["parts"]
    assert wheel["part"] == "wheel" and ring["part"] == "ring"
    assert sorted(wheel["size_mm"]) == pytest.approx([2 * a_mm, 2 * a_mm / math.cos(math.pi / 6)],
                                                     rel=1e-9)
    # The hole is drawn in chords standing at most the chord tolerance t off the circle: each
    # spans at most delta = 2 acos(1 - t/r), and a chord is shorter than its arc by at most
    # delta^2/24 of it (Taylor series of sin), so the drawn hole's length lies in
    # [pi d (1 - delta^2/24), pi d].
    hexagon = 12 * a_mm * math.tan(math.pi / 6)
    r, t = hole_mm / 2, 1000 * cl["chord_tolerance_m"]
    delta = 2 * math.acos(1 - t / r)
    hole_len = wheel["cut_length_mm"] - hexagon
    assert math.pi * hole_mm * (1 - delta**2 / 24) - 1e-9 <= hole_len <= math.pi * hole_mm + 1e-9
    assert ring["size_mm"][0] == ring["size_mm"][1]
    assert cl["total_cut_length_m"] == pytest.approx(
        (wheel["cut_length_mm"] + ring["cut_length_mm"]) / 1000, rel=1e-12)
    solve = json.loads((out / "export.json").read_text())
    assert "drum_carousel_cut_list.json" in solve["files"]
    import ridesim as rs

    pair = rs.hub_for(rs.Wheel.polygon(sides=6, apothem=0.25), ratio=7 / 6, side="inside")
    assert cl["centre_distance_m"] == pytest.approx(pair.centre_distance, rel=1e-9)

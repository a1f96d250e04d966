"""DXF cut files and the cut list (ridesim.export.dxf, ridesim.jobs.export), read back with ezdxf.

Sizes are checked against elementary geometry: a regular hexagon of apothem a has
circumradius a / cos(pi/6) and side 2 a tan(pi/6); an edge offset by d stays parallel at
a + d; the hexagon's track period is 2 a asinh(tan(pi/6)) (Hall & Wagon, "Roads and
Wheels", Mathematics Magazine 65(5), 1992). Arcs and extents are computed by ezdxf from
the entities as written (the reference library reading the file, not the writer).
"""

import json
import math

import numpy as np
import pytest

ezdxf = pytest.importorskip("ezdxf")
from ezdxf import bbox  # noqa: E402

from ridesim.jobs.export import export_scenario  # noqa: E402
from ridesim.scenario.build import solve_scenario  # noqa: E402
from ridesim.scenario.load import scenario_from_dict  # noqa: E402

A = 0.12  # apothem [m]
KERF = 0.0002  # [m]
HOLE, FLAT = 0.008, 0.007  # bore diameter and width across the flat [m]


@pytest.fixture(scope="module")
def hex_export(tmp_path_factory):
    out = tmp_path_factory.mktemp("dxf")
    sc = scenario_from_dict({
        "name": "hex",
        "wheel": {"shape": "polygon", "sides": 6, "apothem_m": A, "thickness_m": 0.018},
        "vehicle": {"axles": 2, "wheelbase_m": 4 * 2 * A * math.asinh(math.tan(math.pi / 6))},
        "export": {"kerf_m": KERF, "axle_hole_m": HOLE, "axle_flat_m": FLAT, "section_length_m": 0.3,
                   "revolutions": 2},
    })
    res = export_scenario(sc, out, dxf=True)
    return out, res


def cut_entities(doc):
    return [e for e in doc.modelspace() if e.dxf.layer == "CUT"]


def test_wheel_dxf_units_layers_and_sizes(hex_export):
    out, _ = hex_export
    doc = ezdxf.readfile(out / "hex_wheel.dxf")
    assert doc.dxfversion >= "AC1024"  # R2010 or later
    assert doc.header["$INSUNITS"] == 4 and doc.units == ezdxf.units.MM  # millimetres
    assert {"CUT", "MARK", "TEXT"} <= {layer.dxf.name for layer in doc.layers}
    assert any(e.dxf.layer == "MARK" for e in doc.modelspace())
    assert any(e.dxftype() == "TEXT" and e.dxf.layer == "TEXT" for e in doc.modelspace())
    polys = [e for e in cut_entities(doc) if e.dxftype() == "LWPOLYLINE"]
    outline = max(polys, key=lambda e: len(e))
    assert outline.closed and len(outline) == 6
    pts = np.array(outline.get_points("xy"))
    # Kerf: each edge moves out by half the kerf, so the apothem is a + k/2 and the corners
    # (mitred) sit at (a + k/2) / cos(pi/6) from the axle.
    a_cut = (A + 0.5 * KERF) * 1000
    np.testing.assert_allclose(np.hypot(pts[:, 0], pts[:, 1]), a_cut / math.cos(math.pi / 6), rtol=1e-12)
    ext = bbox.extents([outline])
    np.testing.assert_allclose([ext.size.x, ext.size.y], [2 * a_cut / math.cos(math.pi / 6), 2 * a_cut],
                               rtol=1e-12)
    # D-bore: an arc of radius HOLE/2 - k/2 about the axle (ezdxf's bulge_to_arc reads the
    # polyline's bulge back) closed by a flat at FLAT - HOLE/2 - k/2 above the axle.
    bore = min(polys, key=lambda e: len(e))
    r = (HOLE - KERF) / 2 * 1000
    f = (FLAT - HOLE / 2 - KERF / 2) * 1000
    (x0, y0, b0), (x1, y1, b1) = bore.get_points("xyb")
    assert bore.closed and b0 == 0.0
    np.testing.assert_allclose([y0, y1], [f, f], atol=1e-12)
    centre, start, end, radius = ezdxf.math.bulge_to_arc((x1, y1), (x0, y0), b1)
    np.testing.assert_allclose([centre.x, centre.y, radius], [0.0, 0.0, r], atol=1e-12)
    # The arc runs under the flat (through the bottom of the hole): it sweeps more than half a turn.
    assert (end - start) % (2 * math.pi) == pytest.approx(math.pi + 2 * math.asin(f / r), rel=1e-12)


def test_track_dxf_sections_cover_two_revolutions(hex_export):
    out, _ = hex_export
    P = 2 * A * math.asinh(math.tan(math.pi / 6)) * 1000  # period [mm]
    files = sorted(out.glob("hex_track_*.dxf"))
    # Two revolutions = 12 periods; 0.3 m pieces hold 2 periods (0.264 m): 6 pieces.
    assert len(files) == 6
    for path in files:
        doc = ezdxf.readfile(path)
        assert doc.units == ezdxf.units.MM
        (strip,) = cut_entities(doc)
        ext = bbox.extents([strip])
        # Both ends move out by half the kerf; the crests (the highest points, y = -a) move up.
        assert ext.size.x == pytest.approx(2 * P + KERF * 1000, abs=1e-6)
        assert ext.extmax.y == pytest.approx(-A * 1000 + 0.5 * KERF * 1000, abs=2e-3)


def test_svg_follows_the_same_settings(hex_export):
    import xml.etree.ElementTree as ET

    out, _ = hex_export
    svg = ET.parse(out / "hex_wheel.svg").getroot()
    ns = "{http://www.w3.org/2000/svg}"
    outline = next(e for e in svg.iter(f"{ns}path") if e.get("id") == "outline")
    nums = [float(v) for v in outline.get("d").replace("M", " ").replace("L", " ").replace("Z", " ")
            .replace(",", " ").split()]
    pts = np.array(nums).reshape(-1, 2)
    a_cut = (A + 0.5 * KERF) * 1000
    np.testing.assert_allclose(np.hypot(pts[:, 0], pts[:, 1]), a_cut / math.cos(math.pi / 6), atol=1e-4)
    text = " ".join(t.text or "" for t in svg.iter(f"{ns}text"))
    assert "kerf 0.200" in text and "into the waste" in text and "D-bore" in text


def test_cut_list_counts_and_lengths(hex_export):
    out, res = hex_export
    data = json.loads((out / "hex_cut_list.json").read_text())
    wheel = data["parts"][0]
    assert wheel["count"] == 4  # two axles, two rails
    assert all(p["count"] == 2 for p in data["parts"][1:]) and len(data["parts"]) == 7
    assert data["material_thickness_m"] == 0.018
    # Hexagon perimeter 12 (a + k/2) tan(pi/6), plus the D: arc r (pi + 2 asin(f/r)) and flat
    # 2 sqrt(r^2 - f^2); the arc is drawn in chords within 0.01 mm.
    a_cut = (A + 0.5 * KERF) * 1000
    r = (HOLE - KERF) / 2 * 1000
    f = (FLAT - HOLE / 2 - KERF / 2) * 1000
    expect = 12 * a_cut * math.tan(math.pi / 6) + r * (math.pi + 2 * math.asin(f / r)) \
        + 2 * math.sqrt(r * r - f * f)
    assert wheel["cut_length_mm"] == pytest.approx(expect, abs=0.05)
    total = sum(p["count"] * p["cut_length_mm"] for p in data["parts"]) / 1000
    assert data["total_cut_length_m"] == pytest.approx(total, rel=1e-12)
    assert data["track_periods"] == pytest.approx(12, rel=1e-9)
    text = (out / "hex_cut_list.txt").read_text()
    assert "4 x wheel" in text and "total cut length" in text
    assert any(f.endswith("hex_wheel.dxf") for f in res["files"])


def test_bad_flat_is_refused(raises_one_line):
    from ridesim.errors import ScenarioError

    raises_one_line(ScenarioError, ["axle_flat_m", "across the flat"], scenario_from_dict,
                    {"wheel": {"shape": "circle", "radius_m": 0.1},
                     "export": {"axle_hole_m": 0.01, "axle_flat_m": 0.004}})


def test_circle_wheel_is_a_dxf_circle_and_smooth_outline_within_tolerance(tmp_path):
    # A circle of radius 0.1 m with its axle 0.02 m off centre: the cut circle has radius
    # R + k/2 about the centre, which sits at -axle in the axle frame.
    sc = scenario_from_dict({"name": "c", "export": {"kerf_m": KERF},
                             "wheel": {"shape": "circle", "radius_m": 0.1, "axle_m": [0.02, 0.0]}})
    export_scenario(sc, tmp_path, dxf=True)
    doc = ezdxf.readfile(tmp_path / "c_wheel.dxf")
    circles = sorted((e for e in cut_entities(doc) if e.dxftype() == "CIRCLE"), key=lambda e: e.dxf.radius)
    hole, rim = circles
    assert rim.dxf.radius == pytest.approx((0.1 + KERF / 2) * 1000, rel=1e-12)
    np.testing.assert_allclose([rim.dxf.center.x, rim.dxf.center.y], [-20.0, 0.0], atol=1e-9)
    assert hole.dxf.radius == pytest.approx((0.010 - KERF) / 2 * 1000, rel=1e-12)
    # An outline through 90 points of an ellipse is drawn from its spline: every drawn point
    # lies on that spline's polar radius (within rounding), chords within the tolerance.
    t = 2 * math.pi * np.arange(90) / 90
    pts = np.column_stack([0.2 * np.cos(t), 0.15 * np.sin(t)])
    sc = scenario_from_dict({"name": "e", "wheel": {"shape": "outline", "points_m": pts.tolist()}})
    export_scenario(sc, tmp_path, dxf=True)
    doc = ezdxf.readfile(tmp_path / "e_wheel.dxf")
    poly = next(e for e in cut_entities(doc) if e.dxftype() == "LWPOLYLINE")
    drawn = np.array(poly.get_points("xy")) / 1000
    w = solve_scenario(sc).wheel
    phi = np.arctan2(drawn[:, 1], drawn[:, 0])
    np.testing.assert_allclose(np.hypot(drawn[:, 0], drawn[:, 1]), w.radius(phi), atol=1e-12)
    mid = 0.5 * (drawn + np.roll(drawn, -1, axis=0))  # chord midpoints: inside the rim by < tol
    gap = w.radius(np.arctan2(mid[:, 1], mid[:, 0])) - np.hypot(mid[:, 0], mid[:, 1])
    assert gap.max() < 1e-5 and gap.min() > -1e-9


def test_sheet_limits_the_pieces_and_flags_what_does_not_fit(tmp_path):
    """Sheet 0.6 x 0.25 m with 10 mm margins: pieces at most 0.58 m, i.e. 4 hexagon periods of
    2 a asinh(tan(pi/6)) = 0.1318 m (Hall & Wagon 1992); the wheel (2 a / cos(pi/6) = 277 mm by
    2 a = 240 mm) does not fit the 230 mm of usable height."""
    sc = scenario_from_dict({"name": "s", "wheel": {"shape": "polygon", "sides": 6, "apothem_m": A},
                             "export": {"sheet_m": [0.6, 0.25], "revolutions": 2}})
    export_scenario(sc, tmp_path, dxf=False)
    data = json.loads((tmp_path / "s_cut_list.json").read_text())
    P = 2 * A * math.asinh(math.tan(math.pi / 6))
    assert len(data["parts"]) == 1 + 3  # 12 periods in pieces of 4
    assert data["parts"][1]["size_mm"][0] == pytest.approx(4 * P * 1000, rel=1e-9)
    assert data["parts"][0]["fits_sheet"] is False and all(p["fits_sheet"] for p in data["parts"][1:])
    assert data["sheets_at_least"] == math.ceil(data["sheet_area_m2"] / (0.6 * 0.25))
    assert "does not fit" in (tmp_path / "s_cut_list.txt").read_text()


def _polyline_radii(doc) -> tuple[float, float]:
    """Least distance from the origin to the CUT polyline's chords, and its greatest vertex radius."""
    (poly,) = [e for e in doc.modelspace().query("LWPOLYLINE") if e.dxf.layer == "CUT"]
    assert poly.closed
    p = np.array([(q[0], q[1]) for q in poly.get_points("xy")])
    q = np.roll(p, -1, axis=0)
    d = q - p
    t = np.clip(-(p * d).sum(axis=1) / (d * d).sum(axis=1), 0.0, 1.0)  # foot of the perpendicular
    foot = p + t[:, None] * d
    return float(np.hypot(foot[:, 0], foot[:, 1]).min()), float(np.hypot(p[:, 0], p[:, 1]).max())


def test_hub_pair_dxf_sizes(tmp_path):
    """The elliptic gear pair cut as DXF: identical ellipses (a, b) about their foci mesh at
    E = 2a, and the hub is the same ellipse, so both outlines run from a - c to a + c about
    their centres, c = sqrt(a^2 - b^2) (classical elliptical gears; Litvin et al. 2009). Read
    back with ezdxf: millimetres ($INSUNITS = 4), layers CUT/MARK/TEXT, a 10 mm centre hole."""
    from ridesim.cli import main

    a, b = 0.06, 0.05
    c = math.sqrt(a * a - b * b)
    scen = __import__("pathlib").Path(__file__).resolve().parent.parent / "scenarios"
    assert main(["export", str(scen / "elliptic_gear_pair.toml"), "--out", str(tmp_path)]) == 0
    cut = (tmp_path / "elliptic_gear_pair_cut_list.txt").read_text()
    assert f"Mount the axle {2 * a * 1000:.3f} mm from the hub's centre" in cut and ".dxf" in cut
    for part in ("wheel", "hub"):
        doc = ezdxf.readfile(tmp_path / f"elliptic_gear_pair_{part}.dxf")
        assert doc.header["$INSUNITS"] == 4 and doc.dxfversion == "AC1024"  # mm, R2010
        assert {"CUT", "MARK", "TEXT"} <= {layer.dxf.name for layer in doc.layers}
        assert doc.layers.get("CUT").color == 1 and doc.layers.get("MARK").color == 5
        lo, hi = _polyline_radii(doc)  # chords within export.chord_tolerance_m (0.01 mm default)
        assert lo == pytest.approx((a - c) * 1000, abs=0.011)
        assert hi == pytest.approx((a + c) * 1000, abs=0.011)
        (hole,) = doc.modelspace().query("CIRCLE")
        assert hole.dxf.layer == "CUT" and hole.dxf.radius == pytest.approx(5.0)
        assert len(doc.modelspace().query('LINE[layer=="MARK"]')) == 2  # the centre cross-hair
        assert any(part in t.dxf.text for t in doc.modelspace().query("TEXT"))


def test_ring_dxf_sizes(tmp_path):
    """The drum's ring as DXF: its outline's radius range is the solved ring's (rho = E + r,
    from r = a / cos(phi) on the hexagon's faces: a + E .. a / cos(pi/6) + E [derived]),
    cut from a disc 30 mm wider than its greatest radius, with no centre hole."""
    from ridesim.scenario.build import solve_hub_scenario
    from ridesim.scenario.load import load_scenario

    scen = __import__("pathlib").Path(__file__).resolve().parent.parent / "scenarios"
    sc = load_scenario(scen / "drum_carousel.toml")
    export_scenario(sc, tmp_path, dxf=True)
    pair = solve_hub_scenario(sc)
    E, apothem = pair.centre_distance, 0.25
    lo, hi = pair.hub.extremes()[:2]
    assert lo == pytest.approx(apothem + E, rel=1e-9)
    assert hi == pytest.approx(apothem / math.cos(math.pi / 6) + E, rel=1e-9)
    doc = ezdxf.readfile(tmp_path / "drum_carousel_ring.dxf")
    assert doc.header["$INSUNITS"] == 4
    near, far = _polyline_radii(doc)  # chords within 0.01 mm (export.chord_tolerance_m); corners kept
    assert near == pytest.approx(lo * 1000, abs=0.011) and far == pytest.approx(hi * 1000, abs=0.011)
    (disc,) = doc.modelspace().query("CIRCLE")
    assert disc.dxf.layer == "CUT" and disc.dxf.radius == pytest.approx((hi + 0.030) * 1000)
    cut = (tmp_path / "drum_carousel_cut_list.txt").read_text()
    assert f"Mount the axle {E * 1000:.3f} mm from the ring's centre" in cut
    again = tmp_path / "again"
    export_scenario(sc, again, dxf=True)
    ring = "drum_carousel_ring.dxf"
    assert (again / ring).read_bytes() == (tmp_path / ring).read_bytes()  # fixed metadata

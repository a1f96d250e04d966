"""Cut files: SVG and CSV coordinates against closed-form geometry and the solver.

Sources of the expected geometry:
- regular polygon with apothem a: circumradius a / cos(pi/n), vertices at the corners
  of the faces (elementary geometry);
- a straight wheel face at distance a from the axle rolls on the arch
  y = -a cosh((x - x_m)/a), one arch per face, period 2 a asinh(tan(pi/n))
  (L. Hall & S. Wagon, "Roads and Wheels", Mathematics Magazine 65(5):283-301, 1992);
- ellipse with semi-axes a, b: foci at distance c = sqrt(a^2 - b^2) from the centre, the
  centroid of the uniform plate at the centre, curvature a b / (a^2 sin^2 t + b^2 cos^2 t)^(3/2)
  in the parametric angle t (any calculus text, e.g. M. P. do Carmo, "Differential Geometry
  of Curves and Surfaces", 1976, section 1-5);
- a chord of length c on a curve of radius rho stands off it by the sagitta
  rho (1 - cos(theta/2)) for the subtended angle theta, ~ c^2 / (8 rho) (elementary geometry).
"""

import csv
import math
import re
import xml.etree.ElementTree as ET

import numpy as np
import pytest

import ridesim as rs
from ridesim.export.drawings import (
    CHORD_TOL_M,
    export_drawings,
    sample_curve,
    track_sections,
    wheel_outline_mm,
)

SVG = "{http://www.w3.org/2000/svg}"
TOL_MM = 0.01  # the brief: coordinates within 0.01 mm; the files carry 1e-4 mm digits
PROMISED_CHORD_MM = 0.005  # chordal deviation promised for smooth outlines


# ---------------------------------------------------------------------------- helpers
def parse_svg(path):
    root = ET.parse(path).getroot()
    assert root.tag == f"{SVG}svg" and root.get("version") == "1.1"
    w, h = root.get("width"), root.get("height")
    assert w.endswith("mm") and h.endswith("mm")
    width, height = float(w[:-2]), float(h[:-2])
    vb = [float(v) for v in root.get("viewBox").split()]
    np.testing.assert_allclose(vb, [0, 0, width, height], atol=0)  # 1 user unit = 1 mm
    layout = root.find(f"{SVG}metadata/{{urn:ridesim:drawing-layout}}layout")
    margins = {k: float(layout.get(f"margin_{k}_mm")) for k in ("left", "right", "top", "bottom")}
    geo = root.find(f"{SVG}g[@id='geometry']")
    m = re.fullmatch(r"translate\(([-\d.]+) ([-\d.]+)\) scale\(1 -1\)", geo.get("transform"))
    tx, ty = float(m.group(1)), float(m.group(2))
    return root, width, height, margins, geo, (tx, ty)


def path_points(el):
    d = el.get("d")
    pts = np.array([[float(a), float(b)] for a, b in re.findall(r"(-?[\d.]+),(-?[\d.]+)", d)])
    return pts, d.strip().endswith("Z")


def by_id(geo, ident):
    found = [e for e in geo if e.get("id") == ident]
    assert len(found) == 1, ident
    return found[0]


def read_csv_mm(path):
    with open(path, newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0] == ["x_mm", "y_mm"]
    return np.array([[float(a), float(b)] for a, b in rows[1:]])


def check_sheet(width, height, margins, pts_model, shift, extent):
    """Declared size = geometry extent + stated margins, and the geometry sits on the margins."""
    tx, ty = shift
    np.testing.assert_allclose(width, extent[0] + margins["left"] + margins["right"], atol=TOL_MM)
    np.testing.assert_allclose(height, extent[1] + margins["top"] + margins["bottom"], atol=TOL_MM)
    sx, sy = tx + pts_model[:, 0], ty - pts_model[:, 1]
    np.testing.assert_allclose([sx.min(), sy.min()], [margins["left"], margins["top"]], atol=TOL_MM)
    np.testing.assert_allclose([sx.max(), sy.max()], [width - margins["right"], height - margins["bottom"]],
                               atol=TOL_MM)


def seg_distance(p, a, b):
    """Distance from points p (M, 2) to the segment a-b."""
    ab = b - a
    t = np.clip(((p - a) @ ab) / (ab @ ab), 0.0, 1.0)
    return np.linalg.norm(p - (a + t[:, None] * ab), axis=1)


# ---------------------------------------------------------------------------- fixtures
@pytest.fixture(scope="module")
def hexagon_files(tmp_path_factory):
    pair = rs.track_for(rs.Wheel.polygon(sides=6, apothem=0.12))
    out = tmp_path_factory.mktemp("hex")
    files = export_drawings(pair, out, name="hex demo", max_section_m=0.3, wheel_thickness_m=0.018,
                            title_lines=["plywood, 18 mm"])
    return pair, out, files


@pytest.fixture(scope="module")
def ellipse_files(tmp_path_factory):
    a, b = 0.05, 0.04
    c = math.sqrt(a * a - b * b)
    pair = rs.track_for(rs.Wheel.ellipse(semi_axes=(a, b), axle=(c, 0.0)))
    out = tmp_path_factory.mktemp("ell")
    files = export_drawings(pair, out, name="ellipse", max_section_m=1.0)
    return pair, out, files, (a, b, c)


# ---------------------------------------------------------------------------- wheel drawings
def test_files_written_and_no_temporaries(hexagon_files):
    pair, out, files = hexagon_files
    names = sorted(f.name for f in files)
    assert names == sorted(p.name for p in out.iterdir())  # nothing else, no .tmp left over
    assert "hex_demo_wheel.svg" in names and "hex_demo_wheel.csv" in names
    assert {f"hex_demo_track_{k:02d}.{e}" for k in (1, 2, 3) for e in ("svg", "csv")} <= set(names)


def test_hexagon_wheel_svg_exact_vertices_and_sheet_size(hexagon_files):
    pair, out, _ = hexagon_files
    a = 120.0  # apothem [mm]
    R = a / math.cos(math.pi / 6)  # circumradius [mm]
    ang = -math.pi / 2 - math.pi / 6 + 2 * math.pi * np.arange(6) / 6  # face at the bottom
    expected = R * np.column_stack([np.cos(ang), np.sin(ang)])
    root, width, height, margins, geo, shift = parse_svg(out / "hex_demo_wheel.svg")
    pts, closed = path_points(by_id(geo, "outline"))
    assert closed and len(pts) == 6
    np.testing.assert_allclose(pts, expected, atol=TOL_MM)
    np.testing.assert_allclose(pts, pair.wheel.vertices * 1000, atol=TOL_MM)
    # Width 2R, height 2a for a face-down hexagon.
    check_sheet(width, height, margins, pts, shift, (2 * R, 2 * a))
    csv_pts = read_csv_mm(out / "hex_demo_wheel.csv")
    np.testing.assert_allclose(csv_pts, expected, atol=TOL_MM)
    hole = by_id(geo, "axle-hole")
    np.testing.assert_allclose([float(hole.get(k)) for k in ("cx", "cy", "r")], [0, 0, 5.0], atol=TOL_MM)
    assert [e for e in geo if e.get("id") == "centre-of-mass"] == []  # centroid on the axle
    text = " ".join(t.text for t in root.iter(f"{SVG}text"))
    assert "apothem 120.000" in text and "circumradius 138.564" in text and "plywood, 18 mm" in text
    assert "100 mm" in text  # scale bar label
    bar = [e for e in root.iter(f"{SVG}line")][0]  # drawn first: the bar itself, 100 mm long
    np.testing.assert_allclose(float(bar.get("x2")) - float(bar.get("x1")), 100.0, atol=1e-9)


def test_wheel_cut_file_reads_back_as_the_same_wheel(hexagon_files, tmp_path):
    """The wheel CSV (mm, header x_mm,y_mm) loads as an outline wheel in metres and rolls on the
    same track: n arches of length 2 a asinh(tan(pi/n)) a revolution, from depth a to the
    circumradius a / cos(pi/n) (Hall & Wagon 1992)."""
    from ridesim.scenario.build import solve_scenario
    from ridesim.scenario.load import scenario_from_dict

    pair, out, files = hexagon_files
    csv_path = next(f for f in files if str(f).endswith("_wheel.csv"))
    sc = scenario_from_dict({"wheel": {"shape": "outline", "file": str(csv_path)}})
    back = solve_scenario(sc)
    a = 0.12
    np.testing.assert_allclose(back.revolution_length, 6 * 2 * a * math.asinh(math.tan(math.pi / 6)),
                               rtol=1e-6)
    x = np.linspace(0.0, back.revolution_length, 2001)
    depth = -back.track.y(x)
    np.testing.assert_allclose([depth.min(), depth.max()], [a, a / math.cos(math.pi / 6)], rtol=1e-6)
    # A header naming another length unit is refused, not read as metres.
    bad = tmp_path / "inches.csv"
    bad.write_text("x_in,y_in\n0,-1\n1,0\n0,1\n-1,0\n", encoding="utf-8")
    with pytest.raises(rs.RidesimError, match="x_mm,y_mm"):
        solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(bad)}}))


def test_ellipse_wheel_outline_within_chord_tolerance(ellipse_files):
    pair, out, _, (a, b, c) = ellipse_files
    A, B, C = a * 1000, b * 1000, c * 1000  # mm
    root, width, height, margins, geo, shift = parse_svg(out / "ellipse_wheel.svg")
    pts, closed = path_points(by_id(geo, "outline"))
    assert closed
    # Ellipse centre at (-c, 0) in the axle frame (axle at the focus).
    X, Y = pts[:, 0] + C, pts[:, 1]
    F = (X / A) ** 2 + (Y / B) ** 2 - 1.0
    grad = 2 * np.hypot(X / A**2, Y / B**2)
    np.testing.assert_allclose(F / grad, 0.0, atol=TOL_MM)  # vertices on the ellipse
    # Radius along each vertex ray agrees with the solver's wheel.
    np.testing.assert_allclose(np.hypot(*pts.T), pair.wheel.radius(np.arctan2(pts[:, 1], pts[:, 0])) * 1000,
                               atol=TOL_MM)
    # Chord midpoints: first-order distance |F|/|grad F| (its error is O(d^2 kappa), ~1e-10 mm here).
    mid = 0.5 * (pts + np.roll(pts, -1, axis=0))
    Xm, Ym = mid[:, 0] + C, mid[:, 1]
    dist = np.abs((Xm / A) ** 2 + (Ym / B) ** 2 - 1.0) / (2 * np.hypot(Xm / A**2, Ym / B**2))
    assert dist.max() < PROMISED_CHORD_MM
    # The whole true arc between consecutive vertices stays within the promise of its chord.
    t = np.unwrap(np.arctan2(Y / B, X / A))
    t_next = np.roll(t, -1)
    t_next[-1] += 2 * math.pi
    worst = 0.0
    for f in np.linspace(0.05, 0.95, 19):
        tt = t + f * (t_next - t)
        arc = np.column_stack([A * np.cos(tt) - C, B * np.sin(tt)])
        d = [seg_distance(arc[i:i + 1], pts[i], pts[(i + 1) % len(pts)])[0] for i in range(len(pts))]
        worst = max(worst, max(d))
    assert worst < PROMISED_CHORD_MM
    # Point count chosen from the curvature: the sagitta law N ~ integral of sqrt(kappa/(8 tol)) ds
    # gives the fewest chords for a tolerance; the drawing is neither sparser than that for the
    # promise nor much denser than that for its own target.
    tq = np.linspace(0, 2 * math.pi, 20001)
    speed = np.sqrt(A**2 * np.sin(tq) ** 2 + B**2 * np.cos(tq) ** 2)
    kappa = A * B / speed**3
    def n_law(tol_mm):
        g = np.sqrt(kappa / (8 * tol_mm)) * speed
        return float(np.sum(0.5 * (g[1:] + g[:-1]) * np.diff(tq)))
    assert 0.95 * n_law(PROMISED_CHORD_MM) <= len(pts) <= 1.5 * n_law(CHORD_TOL_M * 1000)
    # Sheet: extent 2a by 2b.
    check_sheet(width, height, margins, pts, shift, (2 * A, 2 * B))
    np.testing.assert_allclose(read_csv_mm(out / "ellipse_wheel.csv"), pts, atol=1e-4)


def test_rounded_wheel_outline_within_chord_tolerance():
    """A polygon with rounded corners is its edges moved in by r, grown back by r (a Minkowski
    sum with a disk: elementary geometry), so a point inside the inset square lies
    r + (its distance to the inset's edges) below the rim, and a point beyond it
    r - (its distance to the inset). Chords of the drawn outline stay within the promise."""
    a, r = 0.3, 0.015
    pts = wheel_outline_mm(rs.Wheel.polygon(sides=4, apothem=a, corner_radius=r)) / 1000.0
    h = a - r  # half side of the inset square
    f = np.linspace(0.0, 1.0, 33)[:, None, None]
    q = (pts + f * (np.roll(pts, -1, axis=0) - pts)).reshape(-1, 2)  # points along every chord
    ex = np.maximum(np.abs(q) - h, 0.0)  # beyond the inset square, per axis
    outside = np.hypot(ex[:, 0], ex[:, 1])
    inside = np.minimum(h - np.abs(q[:, 0]), h - np.abs(q[:, 1]))
    depth = np.where(outside > 0, r - outside, r + inside)  # distance below the rim [m]
    assert np.all(depth >= -1e-10)  # chords never stand outside the rim (convex outline)
    assert depth.max() * 1000.0 < PROMISED_CHORD_MM
    assert depth.max() <= 1.01 * CHORD_TOL_M


def test_ellipse_centre_of_mass_mark(ellipse_files):
    _, out, _, (a, b, c) = ellipse_files
    _, _, _, _, geo, _ = parse_svg(out / "ellipse_wheel.svg")
    com = by_id(geo, "centre-of-mass")  # the plate's centroid is the ellipse centre, at -c from the focus
    np.testing.assert_allclose([float(com.get("cx")), float(com.get("cy"))], [-c * 1000, 0.0], atol=TOL_MM)


def test_small_wheel_gets_a_10_mm_scale_bar(tmp_path):
    # Square of apothem 20 mm: 40 mm wide, too small for a 100 mm bar to be a useful check.
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=0.02))
    export_drawings(pair, tmp_path, name="small", axle_hole_m=0.005)
    root, width, height, margins, geo, shift = parse_svg(tmp_path / "small_wheel.svg")
    layout = root.find(f"{SVG}metadata/{{urn:ridesim:drawing-layout}}layout")
    assert float(layout.get("scale_bar_mm")) == 10.0
    bar = [e for e in root.iter(f"{SVG}line")][0]
    np.testing.assert_allclose(float(bar.get("x2")) - float(bar.get("x1")), 10.0, atol=1e-9)
    assert any(t.text.startswith("10 mm") for t in root.iter(f"{SVG}text"))
    pts, _ = path_points(by_id(geo, "outline"))
    check_sheet(width, height, margins, pts, shift, (40.0, 40.0))


# ---------------------------------------------------------------------------- track drawings
def test_hexagon_track_sections_cover_one_revolution(hexagon_files):
    pair, out, _ = hexagon_files
    a = 0.12
    P = 2 * a * math.asinh(math.tan(math.pi / 6))  # Hall & Wagon period [m]
    profs = [read_csv_mm(out / f"hex_demo_track_{k:02d}.csv") for k in (1, 2, 3)]
    starts = [p[0, 0] for p in profs]
    ends = [p[-1, 0] for p in profs]
    np.testing.assert_allclose(starts[0], 0.0, atol=TOL_MM)  # starts at a crest
    np.testing.assert_allclose(ends[-1], 6 * P * 1000, atol=TOL_MM)  # one revolution = 6 arches
    np.testing.assert_allclose(starts[1:], ends[:-1], atol=1e-9)  # no gaps, no overlaps
    for p in profs:
        assert p[-1, 0] - p[0, 0] <= 300.0 + 1e-9 and np.all(np.diff(p[:, 0]) > 0)
        x_m = p[:, 0] / 1000
        k = np.round(x_m / P)  # arch centred on k P
        y_cat = -a * np.cosh((x_m - k * P) / a) * 1000
        np.testing.assert_allclose(p[:, 1], y_cat, atol=TOL_MM)
        np.testing.assert_allclose(p[:, 1], pair.track.y(x_m) * 1000, atol=TOL_MM)
        # Each piece starts and ends at a crest, at the apothem below the axle line.
        np.testing.assert_allclose(p[[0, -1], 1], -a * 1000, atol=TOL_MM)
        # Cusps (arch ends) are vertices of the polyline, at the circumradius below the axle line.
        cusp_x = (np.arange(7) + 0.5) * P * 1000
        inner = cusp_x[(cusp_x > p[0, 0]) & (cusp_x < p[-1, 0])]
        for xc in inner:
            j = np.argmin(np.abs(p[:, 0] - xc))
            np.testing.assert_allclose(p[j], [xc, -a / math.cos(math.pi / 6) * 1000], atol=TOL_MM)
        # Chord midpoints against the closed-form arch.
        xm = 0.5 * (x_m[1:] + x_m[:-1])
        km = np.round(xm / P)
        dev = np.abs(0.5 * (p[1:, 1] + p[:-1, 1]) + a * np.cosh((xm - km * P) / a) * 1000)
        assert dev.max() < PROMISED_CHORD_MM


def test_hexagon_track_svg_strip_marks_and_size(hexagon_files):
    pair, out, _ = hexagon_files
    a = 120.0
    R = a / math.cos(math.pi / 6)
    strip = 30.0
    P = 2 * a * math.asinh(math.tan(math.pi / 6))
    for k in (1, 2, 3):
        root, width, height, margins, geo, shift = parse_svg(out / f"hex_demo_track_{k:02d}.svg")
        pts, closed = path_points(by_id(geo, "strip"))
        prof = read_csv_mm(out / f"hex_demo_track_{k:02d}.csv")
        assert closed
        np.testing.assert_allclose(pts[:-2], prof, atol=1e-4)  # the top edge is the profile
        np.testing.assert_allclose(pts[-2:, 1], -R - strip, atol=TOL_MM)  # flat bottom 30 mm below
        np.testing.assert_allclose(pts[-2:, 0], [prof[-1, 0], prof[0, 0]], atol=1e-4)
        check_sheet(width, height, margins, pts, shift, (2 * P, R + strip - a))
        # Cusp ticks: short vertical lines hanging from each cusp inside the piece.
        ticks = [path_points(e)[0] for e in geo if e.get("id") is None and e.tag == f"{SVG}path"]
        tick_x = sorted(t[0, 0] for t in ticks)
        np.testing.assert_allclose(tick_x, [(2 * (k - 1) + 0.5) * P, (2 * (k - 1) + 1.5) * P], atol=TOL_MM)
        labels = [t.text for t in root.iter(f"{SVG}text")]
        # Joint J_j ends piece j and starts piece j + 1; both carry a tick 10 mm from the joint.
        if k > 1:
            assert f"J{k - 1}" in labels
            m = path_points(by_id(geo, f"mark-J{k - 1}-start"))[0]
            np.testing.assert_allclose(m[0, 0], prof[0, 0] + 10.0, atol=TOL_MM)
        if k < 3:
            assert f"J{k}" in labels
            m = path_points(by_id(geo, f"mark-J{k}-end"))[0]
            np.testing.assert_allclose(m[0, 0], prof[-1, 0] - 10.0, atol=TOL_MM)
        assert "J0" not in labels and "J3" not in labels


def test_sections_of_a_long_period_split_each_period(wave_track):
    pair = rs.wheel_for(wave_track, lobes=3)
    secs = track_sections(pair, max_section_m=0.25)  # period 0.3 m > 0.25 m: two pieces per period
    assert len(secs) == 6
    ends = np.array(secs)
    np.testing.assert_allclose(ends[0, 0], 0.0, atol=1e-12)  # the cosine's crest
    np.testing.assert_allclose(ends[-1, 1], 3 * 0.3, rtol=1e-12)
    np.testing.assert_allclose(ends[1:, 0], ends[:-1, 1], rtol=0, atol=0)
    assert np.all(ends[:, 1] - ends[:, 0] <= 0.25)


def test_wave_track_profile_matches_cosine(tmp_path, wave_track):
    pair = rs.wheel_for(wave_track, lobes=3)
    files = export_drawings(pair, tmp_path, name="wave", max_section_m=0.5)
    profs = [read_csv_mm(f) for f in files if f.suffix == ".csv" and "track" in f.name]
    assert len(profs) == 3  # one period (0.3 m) per piece: two would exceed 0.5 m
    x = np.concatenate([p[:, 0] for p in profs]) / 1000
    y = np.concatenate([p[:, 1] for p in profs])
    # f(x) = A cos(2 pi x / lambda), lowered by the solver's closure depth.
    np.testing.assert_allclose(y, (0.02 * np.cos(2 * math.pi * x / 0.3) - pair.depth) * 1000, atol=TOL_MM)
    np.testing.assert_allclose(y, pair.track.y(x) * 1000, atol=TOL_MM)
    wheel = read_csv_mm(tmp_path / "wave_wheel.csv")
    phi = np.arctan2(wheel[:, 1], wheel[:, 0])
    np.testing.assert_allclose(np.hypot(*wheel.T), pair.wheel.radius(phi) * 1000, atol=TOL_MM)


# ---------------------------------------------------------------------------- sampler and errors
@pytest.mark.parametrize("rho", [0.02, 0.3])
def test_sampler_on_a_circle_meets_the_sagitta_law(rho):
    tol = CHORD_TOL_M

    def circle(t):
        return np.column_stack([rho * np.cos(t), rho * np.sin(t)])

    t = sample_curve(circle, [0.0, 2 * math.pi], tol)
    n = len(t) - 1
    n_min = math.pi / math.acos(1 - tol / rho)  # equal chords with sagitta exactly tol
    dev = rho * (1 - np.cos(np.diff(t) / 2))  # exact sagitta of each chord
    assert dev.max() <= tol * (1 + 1e-9)
    assert n_min <= n <= 1.3 * n_min + 2


def test_bad_inputs_raise_one_line(raises_one_line, tmp_path):
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=0.05))
    raises_one_line(rs.InputError, ["max_section_m", "> 0"], export_drawings, pair, tmp_path,
                    name="x", max_section_m=0.0)
    raises_one_line(rs.InputError, ["axle_hole_m", "smaller"], export_drawings, pair, tmp_path,
                    name="x", axle_hole_m=0.2)
    raises_one_line(rs.InputError, ["title_lines"], export_drawings, pair, tmp_path, name="x",
                    title_lines="one string")
    raises_one_line(rs.InputError, ["name"], export_drawings, pair, tmp_path, name="  ")
    raises_one_line(rs.InputError, ["periods", ">= 1"], track_sections, pair, 1.0, 0)

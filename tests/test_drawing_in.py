"""Outlines read from DXF and SVG drawings (ridesim.scenario.drawing): round trips and bad drawings.

A wheel exported to a drawing and read back must roll on the same track within 0.01 mm;
the exact tracks of the shapes come from the solver's closed forms and elliptic-integral
tables tested elsewhere (tests/test_outline.py compares the ellipse with scipy.special).
The DXF test drawings are written here with ezdxf, the reference library for the format.
"""

import math

import numpy as np
import pytest

ezdxf = pytest.importorskip("ezdxf")
pytest.importorskip("svgelements")

from ridesim.errors import RidesimError, ScenarioError  # noqa: E402
from ridesim.jobs.export import export_scenario  # noqa: E402
from ridesim.scenario.build import solve_scenario  # noqa: E402
from ridesim.scenario.load import scenario_from_dict  # noqa: E402

WHEELS = {
    "ellipse": {"shape": "ellipse", "semi_axes_m": [0.2, 0.15]},
    "ellipse-off-axle": {"shape": "ellipse", "semi_axes_m": [0.1, 0.07], "axle_m": [0.02, 0.01]},
    "hexagon": {"shape": "polygon", "sides": 6, "apothem_m": 0.12},
}


def same_track(a, b, tol_m):
    assert b.track.period == pytest.approx(a.track.period, abs=tol_m)
    x = np.linspace(0.0, a.revolution_length, 3001)
    np.testing.assert_allclose(b.track.y(x), a.track.y(x), rtol=0, atol=tol_m)


@pytest.fixture(scope="module")
def exported(tmp_path_factory):
    out = {}
    for name, wheel in WHEELS.items():
        d = tmp_path_factory.mktemp(name)
        sc = scenario_from_dict({"name": name, "wheel": wheel})
        export_scenario(sc, d, dxf=True)
        out[name] = (solve_scenario(sc), d)
    return out


@pytest.mark.parametrize("name", list(WHEELS))
@pytest.mark.parametrize("fmt", ["dxf", "svg"])
def test_round_trip_gives_the_same_track(exported, name, fmt):
    """Exported at the default 0.01 mm chord tolerance, read back with the axle at the drawn
    axle hole (the smallest circle cut inside the outline): the same track within 0.01 mm."""
    pair, d = exported[name]
    back = solve_scenario(scenario_from_dict({"wheel": {"shape": "outline",
                                                        "file": str(d / f"{name}_wheel.{fmt}")}}))
    assert back.wheel.is_polygon == pair.wheel.is_polygon
    assert back.revolution_length == pytest.approx(pair.revolution_length, abs=1e-5)
    x = np.linspace(0.0, pair.revolution_length, 3001)
    np.testing.assert_allclose(back.track.y(x), pair.track.y(x), rtol=0, atol=1e-5)
    if fmt == "dxf":  # full double precision: the symmetry survives, so does the period
        assert back.lobes == pair.lobes
        same_track(pair, back, 1e-5)


def dxf_doc(insunits=4):
    doc = ezdxf.new("R2010")
    if insunits is not None:
        doc.header["$INSUNITS"] = insunits
    return doc


def test_dxf_spline_arc_chain_and_units(tmp_path):
    """A D drawn in inches as an ARC and a LINE: the arc of radius R about the axle rolls a flat
    at -R and the chord at distance R cos(beta) a catenary arch (Hall & Wagon 1992)."""
    R, beta = 4.0, math.pi / 3  # inches, half-angle of the flat
    doc = dxf_doc(insunits=1)
    msp = doc.modelspace()
    a0, a1 = -90 + 60, 270 - 60  # degrees: the arc over the top
    msp.add_arc((0, 0), R, a0, a1)
    p0 = (R * math.cos(math.radians(a0)), R * math.sin(math.radians(a0)))
    p1 = (R * math.cos(math.radians(a1)), R * math.sin(math.radians(a1)))
    msp.add_line(p1, p0)
    msp.add_circle((0, 0), 0.2)
    path = tmp_path / "d.dxf"
    doc.saveas(path)
    pair = solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(path)}}))
    r_m, d_m = R * 0.0254, R * 0.0254 * math.cos(beta)
    half = d_m * math.asinh(math.tan(beta))
    assert len(pair.cusps) == 2
    assert pair.revolution_length == pytest.approx(2 * half + r_m * (2 * math.pi - 2 * beta), abs=1e-6)
    x = np.linspace(-half, half, 101)
    np.testing.assert_allclose(pair.track.y(x), -d_m * np.cosh(x / d_m), atol=1e-6)


def test_dxf_spline_ellipse_with_layer(tmp_path):
    # An ELLIPSE entity on layer WHEEL beside an unrelated square on layer OTHER.
    doc = dxf_doc()
    doc.layers.add("WHEEL")
    doc.layers.add("OTHER")
    msp = doc.modelspace()
    msp.add_ellipse((0, 0), major_axis=(200, 0), ratio=0.75, dxfattribs={"layer": "WHEEL"})
    msp.add_lwpolyline([(300, 0), (400, 0), (400, 100), (300, 100)], close=True,
                       dxfattribs={"layer": "OTHER"})
    path = tmp_path / "two.dxf"
    doc.saveas(path)
    with pytest.raises(ScenarioError, match="separate shapes.*layer"):
        solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(path)}}))
    pair = solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(path),
                                                        "layer": "WHEEL", "axle_m": [0.0, 0.0]}}))
    exact = solve_scenario(scenario_from_dict({"wheel": WHEELS["ellipse"]}))
    same_track(exact, pair, 1e-5)


@pytest.mark.parametrize(
    "build,patterns",
    [
        (lambda msp: [msp.add_line((0, 0), (100, 0)), msp.add_line((100, 0), (100, 100)),
                      msp.add_line((100, 100), (0, 99))], ["open", "gap", "mm"]),
        (lambda msp: msp.add_lwpolyline([(0, 0), (100, 100), (100, 0), (0, 100)], close=True),
         ["crosses itself"]),
    ],
    ids=["open", "self-crossing"],
)
def test_bad_dxf_drawings_are_one_line(tmp_path, raises_one_line, build, patterns):
    doc = dxf_doc()
    build(doc.modelspace())
    path = tmp_path / "bad.dxf"
    doc.saveas(path)
    raises_one_line(ScenarioError, ["wheel.file", *patterns], solve_scenario,
                    scenario_from_dict({"wheel": {"shape": "outline", "file": str(path),
                                                  "axle_m": [0.05, 0.05]}}))


def test_unitless_dxf_needs_units(tmp_path, raises_one_line):
    doc = dxf_doc(insunits=0)
    doc.modelspace().add_circle((0, 0), 100)
    doc.modelspace().add_circle((0, 0), 5)
    path = tmp_path / "nounits.dxf"
    doc.saveas(path)
    sc = scenario_from_dict({"wheel": {"shape": "outline", "file": str(path)}})
    raises_one_line(ScenarioError, ["units", "INSUNITS"], solve_scenario, sc)
    pair = solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(path),
                                                        "units": "mm"}}))
    # A circle of 100 mm about its centre rolls on a flat at -0.1 m.
    np.testing.assert_allclose(pair.track.y(np.linspace(0, 0.5, 11)), -0.1, atol=1e-9)


def test_axle_outside_the_outline_is_refused(tmp_path):
    doc = dxf_doc()
    doc.modelspace().add_lwpolyline([(0, 0), (100, 0), (100, 100), (0, 100)], close=True)
    path = tmp_path / "sq.dxf"
    doc.saveas(path)
    with pytest.raises(RidesimError, match="axle"):
        solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(path),
                                                     "axle_m": [0.2, 0.05]}}))
    with pytest.raises(ScenarioError, match="no circle inside"):
        solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(path)}}))


def test_svg_shapes_and_id(tmp_path):
    """An SVG of width 100 mm with a viewBox of 0..1000 user units (0.1 mm each): an ellipse
    of rx 500, ry 375 user units is 50 x 37.5 mm; a second shape needs an id to pick."""
    svg = tmp_path / "w.svg"
    svg.write_text(
        '<svg xmlns="http://www.w3.org/2000/svg" width="100mm" height="100mm" viewBox="0 0 1000 1000">'
        '<ellipse id="rim" cx="500" cy="500" rx="500" ry="375" stroke="red" fill="none"/>'
        '<circle id="hole" cx="500" cy="500" r="20" stroke="red" fill="none"/>'
        '<polygon id="tag" points="0,900 50,900 50,950" stroke="red" fill="none"/>'
        "</svg>", encoding="utf-8")
    with pytest.raises(ScenarioError, match="separate shapes.*id"):
        solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(svg)}}))
    with pytest.raises(ScenarioError, match="no shape with id"):
        solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(svg), "id": "x"}}))
    pair = solve_scenario(scenario_from_dict({"wheel": {"shape": "outline", "file": str(svg), "id": "rim",
                                                        "axle_m": [0.05, -0.05]}}))
    rmin, rmax, _ = pair.wheel.extremes()
    assert rmin == pytest.approx(0.0375, abs=1e-6) and rmax == pytest.approx(0.05, abs=1e-6)


def test_track_profile_from_a_dxf_spline_and_an_svg_polyline(tmp_path):
    """One period of f = A cos(2 pi x / L) drawn as a fitted SPLINE (DXF, mm) and as an SVG
    polyline of 61 points: the wheel for n lobes closes at D = sqrt((n L / 2 pi)^2 + A^2)
    (the standard integral of 1 / (D - A cos kx); see tests/test_outline.py)."""
    amp, L, n = 20.0, 300.0, 4  # mm
    x = np.linspace(0.0, L, 61)
    y = amp * np.cos(2 * math.pi * x / L)
    exact = math.hypot(n * L / (2 * math.pi), amp) / 1000
    svg = tmp_path / "track.svg"
    pts = " ".join(f"{a:.6f},{-b:.6f}" for a, b in zip(x, y, strict=True))  # SVG y points down
    svg.write_text('<svg xmlns="http://www.w3.org/2000/svg" width="400mm" height="100mm"'
                   ' viewBox="0 -50 400 100">'
                   f'<polyline id="profile" points="{pts}" fill="none" stroke="red"/></svg>',
                   encoding="utf-8")
    pair = solve_scenario(scenario_from_dict({"track": {"shape": "points", "file": str(svg), "lobes": n}}))
    # The drawing's frame sets the heights (here 50 mm down from the viewBox): compare the
    # depth below the profile's crest, D - A.
    top = pair.track.shape_range()[1]
    assert pair.depth - top == pytest.approx(exact - amp / 1000, rel=1e-6)
    doc = dxf_doc()
    doc.modelspace().add_polyline2d(list(zip(x.tolist(), y.tolist(), strict=True)))
    path = tmp_path / "track.dxf"
    doc.saveas(path)
    pair = solve_scenario(scenario_from_dict({"track": {"shape": "points", "file": str(path), "lobes": n}}))
    assert pair.depth == pytest.approx(exact, rel=1e-6)
    assert pair.track.kinks == ()

"""Tests of the scenario schema and loader (ridesim.scenario.load)."""

import copy
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from ridesim.errors import InputError, ScenarioError
from ridesim.scenario.load import (
    DEFAULT_WHEEL_DENSITY_KG_M3,
    DEFAULT_WHEEL_THICKNESS_M,
    DriveSpec,
    RunSpec,
    Scenario,
    SurfaceSpec,
    TrackSpec,
    VehicleSpec,
    WheelSpec,
    load_scenario,
    scenario_from_dict,
)

SCENARIOS = Path(__file__).resolve().parent.parent / "scenarios"
DEMOS = ("hexagon_trolley", "ellipse_pull_toy", "wave_track_sculpture")

HEX = {"wheel": {"shape": "polygon", "sides": 6, "apothem_m": 0.12}}
WAVE = {"track": {"shape": "wave", "amplitude_m": 0.02, "wavelength_m": 0.3}}


def with_keys(base, **sections):
    """Deep copy of ``base`` with section keys merged in (None deletes a key)."""
    out = copy.deepcopy(base)
    for section, keys in sections.items():
        if not isinstance(keys, dict):
            out[section] = keys
            continue
        table = out.setdefault(section, {})
        for key, value in keys.items():
            if value is None:
                table.pop(key, None)
            else:
                table[key] = value
    return out


def raises_at(data, pattern, **kwargs):
    """Assert that validating ``data`` fails with a one-line message matching ``pattern``."""
    with pytest.raises(ScenarioError, match=pattern) as info:
        scenario_from_dict(data, **kwargs)
    message = str(info.value)
    assert "\n" not in message
    return message


# ---------------------------------------------------------------------------
# Demo scenarios
# ---------------------------------------------------------------------------


def test_hexagon_trolley_values():
    sc = load_scenario(SCENARIOS / "hexagon_trolley.toml")
    assert sc.name == "hexagon_trolley"
    assert sc.track is None
    w = sc.wheel
    assert (w.shape, w.sides, w.apothem_m) == ("polygon", 6, 0.12)
    assert w.circumradius_m is None and w.side_m is None and w.vertices_m is None
    assert w.thickness_m == 0.018
    assert w.density_kg_m3 == 600.0
    assert w.axle_m == (0.0, 0.0)
    period = 2 * 0.12 * math.asinh(math.tan(math.pi / 6))
    assert sc.vehicle.axles == 2
    assert sc.vehicle.wheelbase_m == pytest.approx(3 * period, rel=1e-12)
    assert sc.vehicle.body_mass_kg == 8.0
    assert sc.drive.mode == "speed" and sc.drive.speed_m_s == 0.4
    assert sc.surface.friction == 0.7
    assert sc.run.duration_s == 4.0
    assert sc.source == str((SCENARIOS / "hexagon_trolley.toml").resolve())


def test_ellipse_pull_toy_values():
    sc = load_scenario(str(SCENARIOS / "ellipse_pull_toy.toml"))
    w = sc.wheel
    assert w.shape == "ellipse"
    assert w.semi_axes_m == (0.05, 0.04)
    a, b = w.semi_axes_m
    assert w.axle_m == pytest.approx((math.sqrt(a * a - b * b), 0.0), abs=1e-12)
    assert w.thickness_m == 0.012 and w.density_kg_m3 == 700.0
    assert sc.vehicle.axles == 1 and sc.vehicle.body_mass_kg == 0.4
    assert sc.drive.speed_m_s == 0.3
    assert sc.surface.friction == 0.9


def test_wave_track_sculpture_values():
    sc = load_scenario(SCENARIOS / "wave_track_sculpture.toml")
    # Beside [track], [wheel] holds only the plate material of the solved wheel.
    assert sc.wheel.shape is None
    assert (sc.wheel.thickness_m, sc.wheel.density_kg_m3) == (0.01, 2700.0)
    t = sc.track
    assert (t.shape, t.amplitude_m, t.wavelength_m, t.lobes) == ("wave", 0.02, 0.3, 3)
    assert t.depth_m is None
    assert sc.vehicle.axles == 1 and sc.vehicle.body_mass_kg == 2.0
    assert sc.drive.speed_m_s == 0.2


@pytest.mark.parametrize("stem", DEMOS)
def test_demo_files_have_a_comment_header_and_round_trip(stem):
    path = SCENARIOS / f"{stem}.toml"
    assert path.read_text(encoding="utf-8").startswith("#")
    sc = load_scenario(path)
    assert sc.description
    again = scenario_from_dict(sc.to_dict(), base_dir=SCENARIOS, source=str(path))
    assert again == sc
    assert again.to_dict() == sc.to_dict()


# ---------------------------------------------------------------------------
# Defaults and accepted forms
# ---------------------------------------------------------------------------


def test_defaults_of_every_section():
    sc = scenario_from_dict(HEX)
    assert sc.name == "unnamed" and sc.description == ""
    assert sc.wheel.thickness_m == DEFAULT_WHEEL_THICKNESS_M == 0.02
    assert sc.wheel.density_kg_m3 == DEFAULT_WHEEL_DENSITY_KG_M3 == 700.0
    assert sc.wheel.mass_kg is None and sc.wheel.inertia_kg_m2 is None
    assert sc.wheel.corner_radius_m == 0.0
    assert sc.vehicle == VehicleSpec(
        body_mass_kg=10.0, body_inertia_kg_m2=None, axles=1, wheelbase_m=0.0,
        coupled=False, seat_m=(0.0, 0.3), driven_axles=None,
    )
    # A 0.5 mm wheelbase build tolerance: a workshop figure (common practice).
    assert sc.vehicle.wheelbase_periods is None and sc.vehicle.wheelbase_tolerance_m == 5e-4
    assert sc.drive == DriveSpec(
        mode="speed", speed_m_s=0.5, accel_m_s2=0.0, max_torque_Nm=50.0,
        torque_Nm=None, shaft_speed_rad_s=None,
    )
    assert sc.surface == SurfaceSpec(friction=0.8, rolling_resistance=0.0)
    assert sc.run == RunSpec(duration_s=6.0, timestep_s=0.001, settle_s=1.0, iterations=30)


def test_name_defaults_to_source_stem_and_can_be_given():
    assert scenario_from_dict(HEX, source="/some/where/cart.toml").name == "cart"
    assert scenario_from_dict({**HEX, "name": "my cart"}).name == "my cart"


def test_ints_accepted_for_floats_and_converted():
    sc = scenario_from_dict(with_keys(HEX, wheel={"apothem_m": 1}, surface={"friction": 1}))
    assert sc.wheel.apothem_m == 1.0 and type(sc.wheel.apothem_m) is float
    assert type(sc.surface.friction) is float


def test_numpy_values_accepted():
    sc = scenario_from_dict(
        {
            "wheel": {
                "shape": "outline",
                "points_m": np.array([[0.1, 0.0], [0.0, 0.1], [-0.1, 0.0], [0.0, -0.1]]),
            },
            "surface": {"friction": np.float64(0.5)},
            "vehicle": {"axles": np.int64(2), "wheelbase_m": 0.5},
        }
    )
    assert sc.wheel.points_m[1] == (0.0, 0.1)
    assert type(sc.surface.friction) is float and sc.surface.friction == 0.5
    assert type(sc.vehicle.axles) is int and sc.vehicle.axles == 2


def test_lists_become_tuples_and_spec_is_hashable():
    sc = scenario_from_dict(
        with_keys(
            HEX,
            wheel={"apothem_m": None, "sides": None,
                   "vertices_m": [[0.1, 0], [0, 0.1], [-0.1, 0], [0, -0.1]]},
            vehicle={"axles": 3, "wheelbase_m": 0.4, "driven_axles": [2, 0]},
        )
    )
    assert sc.wheel.vertices_m == ((0.1, 0.0), (0.0, 0.1), (-0.1, 0.0), (0.0, -0.1))
    assert isinstance(sc.wheel.vertices_m, tuple)
    assert sc.vehicle.driven_axles == (2, 0)
    assert sc.vehicle.driven_axle_indices == (2, 0)
    assert hash(sc) == hash(scenario_from_dict(sc.to_dict()))


def test_driven_axle_indices_default_to_all():
    sc = scenario_from_dict(with_keys(HEX, vehicle={"axles": 3, "wheelbase_m": 0.4}))
    assert sc.vehicle.driven_axles is None
    assert sc.vehicle.driven_axle_indices == (0, 1, 2)


@pytest.mark.parametrize(
    ("size", "value"), [("apothem_m", 0.1), ("circumradius_m", 0.2), ("side_m", 0.15)]
)
def test_polygon_size_forms(size, value):
    sc = scenario_from_dict({"wheel": {"shape": "polygon", "sides": 4, size: value}})
    assert getattr(sc.wheel, size) == value
    assert sc.wheel.sides == 4


def test_polygon_vertices_with_matching_sides_accepted():
    square = [[0.1, 0.1], [-0.1, 0.1], [-0.1, -0.1], [0.1, -0.1]]
    sc = scenario_from_dict({"wheel": {"shape": "polygon", "sides": 4, "vertices_m": square}})
    assert sc.wheel.sides == 4 and len(sc.wheel.vertices_m) == 4


def test_circle_polar_and_outline_shapes():
    circle = scenario_from_dict({"wheel": {"shape": "circle", "radius_m": 0.1}})
    assert circle.wheel.radius_m == 0.1
    polar = scenario_from_dict(
        {"wheel": {"shape": "polar", "radius_formula": "0.1 + 0.02*cos(3*phi)"}}
    )
    assert polar.wheel.radius_formula == "0.1 + 0.02*cos(3*phi)"
    assert polar.wheel.axle_m == (0.0, 0.0)
    assert "axle_m" not in polar.to_dict()["wheel"]
    assert scenario_from_dict(polar.to_dict()) == polar


def test_harmonic_shape_reads_its_terms_and_round_trips():
    sc = scenario_from_dict({"wheel": {"shape": "harmonic", "mean_radius_m": 0.1,
                                       "harmonics": [[3, 0.05, 0], [6, 0.0, -0.01]]}})
    assert sc.wheel.mean_radius_m == 0.1
    assert sc.wheel.harmonics == ((3, 0.05, 0.0), (6, 0.0, -0.01))
    assert sc.wheel.axle_m == (0.0, 0.0)
    assert "axle_m" not in sc.to_dict()["wheel"]
    assert scenario_from_dict(sc.to_dict()) == sc
    plain = scenario_from_dict({"wheel": {"shape": "harmonic", "mean_radius_m": 0.1}})
    assert plain.wheel.harmonics == ()  # no terms: a circle


def test_track_shapes_and_lobes_or_depth():
    saw = scenario_from_dict({"track": {"shape": "sawtooth", "rise_m": 0.01, "run_m": 0.1}})
    assert (saw.track.rise_m, saw.track.run_m, saw.track.lobes) == (0.01, 0.1, 1)
    formula = scenario_from_dict(
        {"track": {"shape": "formula", "formula": "0.01*sin(x)", "period_m": 0.2,
                   "depth_m": 0.15}}
    )
    assert formula.track.formula == "0.01*sin(x)"
    assert formula.track.depth_m == 0.15 and formula.track.lobes is None
    pts = scenario_from_dict(
        {"track": {"shape": "points", "points_m": [[0, 0], [0.1, 0.01], [0.2, 0]]}}
    )
    assert pts.track.period_m is None
    assert pts.track.points_m[1] == (0.1, 0.01)


def test_vehicle_drive_run_options():
    sc = scenario_from_dict(
        with_keys(
            HEX,
            vehicle={"coupled": True, "seat_m": [0.05, 0.4], "body_inertia_kg_m2": 0.2},
            drive={"mode": "torque", "torque_Nm": 3.0, "accel_m_s2": 0.5},
            surface={"rolling_resistance": 0.01},
            run={"duration_s": 2, "timestep_s": 0.02, "settle_s": 0, "iterations": 1000},
        )
    )
    assert sc.vehicle.coupled is True and sc.vehicle.seat_m == (0.05, 0.4)
    assert sc.drive.mode == "torque" and sc.drive.torque_Nm == 3.0
    assert sc.run.timestep_s == 0.02 and sc.run.iterations == 1000 and sc.run.settle_s == 0.0
    shaft = scenario_from_dict(
        with_keys(HEX, drive={"mode": "shaft_speed", "shaft_speed_rad_s": 2.5})
    )
    assert shaft.drive.shaft_speed_rad_s == 2.5


def test_specs_are_frozen():
    sc = scenario_from_dict(HEX)
    with pytest.raises(AttributeError):
        sc.surface.friction = 0.1
    with pytest.raises(AttributeError):
        sc.wheel = None


def test_scenario_error_is_an_input_and_value_error():
    with pytest.raises(InputError):
        scenario_from_dict({})
    with pytest.raises(ValueError):
        scenario_from_dict({})


# ---------------------------------------------------------------------------
# Error paths: messages start with the key path and name value and fix
# ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("data", "pattern"),
    [
        # range and type
        (with_keys(HEX, wheel={"apothem_m": -0.3}), r"^wheel\.apothem_m must be > 0, got -0\.3$"),
        (with_keys(HEX, wheel={"sides": "four"}),
         r'^wheel\.sides must be an integer, got "four" \(str\)$'),
        (with_keys(HEX, wheel={"sides": 6.0}), r"^wheel\.sides must be an integer, got 6\.0"),
        (with_keys(HEX, wheel={"sides": 2}), r"^wheel\.sides must be >= 3, got 2$"),
        (with_keys(HEX, wheel={"sides": True}), r"^wheel\.sides must be an integer, got true"),
        (with_keys(HEX, wheel={"thickness_m": True}),
         r"^wheel\.thickness_m must be a number, got true \(bool\)$"),
        (with_keys(HEX, wheel={"apothem_m": float("nan")}),
         r"^wheel\.apothem_m must be a finite number, got nan$"),
        (with_keys(HEX, wheel={"density_kg_m3": float("inf")}),
         r"^wheel\.density_kg_m3 must be a finite number, got inf$"),
        (with_keys(HEX, wheel={"density_kg_m3": 0}), r"^wheel\.density_kg_m3 must be > 0"),
        (with_keys(HEX, wheel={"mass_kg": -1}), r"^wheel\.mass_kg must be > 0, got -1\.0$"),
        (with_keys(HEX, wheel={"inertia_kg_m2": 0.0}), r"^wheel\.inertia_kg_m2 must be > 0"),
        (with_keys(HEX, wheel={"corner_radius_m": -0.01}),
         r"^wheel\.corner_radius_m must be >= 0, got -0\.01$"),
        (with_keys(HEX, wheel={"fit_track_to_corners": True}),
         r"^wheel\.fit_track_to_corners = true needs the corners' radius: add wheel\.corner_radius_m"),
        (with_keys(HEX, wheel={"fit_track_to_corners": "yes"}),
         r"^wheel\.fit_track_to_corners must be"),
        (with_keys(HEX, wheel={"axle_m": [0.1]}),
         r"^wheel\.axle_m must be a pair \[x, y\] of numbers, got \[0\.1\]"),
        (with_keys(HEX, wheel={"axle_m": "centre"}),
         r'^wheel\.axle_m must be a pair \[x, y\] of numbers, got "centre" \(str\)$'),
        (with_keys(HEX, wheel={"axle_m": [0.0, "y"]}),
         r'^wheel\.axle_m\[1\] must be a number, got "y" \(str\)$'),
        # unknown keys and did-you-mean
        (with_keys(HEX, wheel={"apothem_m": None, "apothm_m": 0.12}),
         r"^unknown key wheel\.apothm_m; did you mean apothem_m\?"),
        (with_keys(HEX, wheel={"apothem_m": None, "apothem": 0.12}),
         r"^unknown key wheel\.apothem; did you mean apothem_m\? \(key names end in their SI"),
        (with_keys(HEX, wheel={"colour": "red"}), r"^unknown key wheel\.colour; allowed keys: "),
        (with_keys(HEX, surface={"friction_coefficient": 0.5}),
         r"^unknown key surface\.friction_coefficient; did you mean friction\?"),
        (with_keys(HEX, run={"duration": 3}),
         r"^unknown key run\.duration; did you mean duration_s\?"),
        (with_keys(HEX, drive={"torque": 3}),
         r"^unknown key drive\.torque; did you mean torque_Nm\?"),
        (with_keys(HEX, vehicle={"mass_kg": 3}),
         r"^unknown key vehicle\.mass_kg; did you mean body_mass_kg\?"),
        ({**HEX, "whel": {}}, r"^unknown key whel; did you mean wheel\?"),
        ({**HEX, "solver": {}}, r"^unknown key solver; allowed keys: "),
        # shapes
        (with_keys(HEX, wheel={"shape": "hexagon"}),
         r'^wheel\.shape must be one of polygon, ellipse, circle, polar, harmonic, outline, got "hexagon"'
         r'; for a hexagon use shape = "polygon" with sides = 6$'),
        (with_keys(HEX, wheel={"shape": "polygn"}),
         r'^wheel\.shape must be one of .*, got "polygn"; did you mean "polygon"\?$'),
        (with_keys(HEX, wheel={"shape": 6}), r"^wheel\.shape must be one of .*, got 6 \(int\)$"),
        ({"wheel": {"sides": 6, "apothem_m": 0.1}}, r"^wheel\.shape is required; use one of "),
        (with_keys(HEX, wheel={"radius_m": 0.1}),
         r'^wheel\.radius_m is not used by shape "polygon"; '
         r"use one of apothem_m, circumradius_m, side_m, vertices_m$"),
        ({"wheel": {"shape": "circle", "radius_m": 0.1, "sides": 6}},
         r'^wheel\.sides is not used by shape "circle"; use one of radius_m$'),
        ({"wheel": {"shape": "polar", "radius_formula": "0.1", "axle_m": [0.01, 0]}},
         r'^wheel\.axle_m is not used by shape "polar"; the polar radius is measured from'),
        # polygon sizes
        ({"wheel": {"shape": "polygon", "sides": 6}},
         r"^wheel: give exactly one of apothem_m, circumradius_m, side_m, vertices_m "
         r"\(got none\)$"),
        (with_keys(HEX, wheel={"side_m": 0.1}),
         r"^wheel: give exactly one of apothem_m, circumradius_m, side_m, vertices_m "
         r"\(got apothem_m and side_m\)$"),
        ({"wheel": {"shape": "polygon", "apothem_m": 0.1}},
         r'^wheel\.sides is required for shape "polygon" with apothem_m; add e\.g\. sides = 6$'),
        ({"wheel": {"shape": "polygon", "vertices_m": [[0, 0], [1, 0]]}},
         r"^wheel\.vertices_m must list at least 3 \[x, y\] points, got 2$"),
        ({"wheel": {"shape": "polygon", "vertices_m": [[0, 0], [1, 0], [2]]}},
         r"^wheel\.vertices_m\[2\] must be a pair \[x, y\] of numbers"),
        ({"wheel": {"shape": "polygon", "vertices_m": [[0, 0], [1, 1], [2, 2]]}},
         r"^wheel\.vertices_m encloses no area"),
        ({"wheel": {"shape": "polygon", "vertices_m": 3}},
         r"^wheel\.vertices_m must be a list of \[x, y\] points, got 3 \(int\)$"),
        ({"wheel": {"shape": "polygon", "sides": 5,
                    "vertices_m": [[0, 0], [1, 0], [1, 1], [0, 1]]}},
         r"^wheel\.sides must equal the 4 points of vertices_m, got 5; remove sides$"),
        # other wheel shapes
        ({"wheel": {"shape": "ellipse"}}, r'^wheel\.semi_axes_m is required for shape "ellipse"'),
        ({"wheel": {"shape": "ellipse", "semi_axes_m": [0.05, 0]}},
         r"^wheel\.semi_axes_m\[1\] must be > 0, got 0\.0$"),
        ({"wheel": {"shape": "ellipse", "semi_axes_m": [0.05, 0.04, 0.03]}},
         r"^wheel\.semi_axes_m must be a pair \[x, y\] of numbers, got .*\(3 values\)$"),
        ({"wheel": {"shape": "circle"}}, r'^wheel\.radius_m is required for shape "circle"'),
        ({"wheel": {"shape": "circle", "radius_m": 0}}, r"^wheel\.radius_m must be > 0, got 0"),
        ({"wheel": {"shape": "polar"}}, r'^wheel\.radius_formula is required for shape "polar"'),
        ({"wheel": {"shape": "polar", "radius_formula": "  "}},
         r'^wheel\.radius_formula must not be empty, got "  "$'),
        ({"wheel": {"shape": "polar", "radius_formula": 0.1}},
         r"^wheel\.radius_formula must be a string, got 0\.1 \(float\)$"),
        ({"wheel": {"shape": "harmonic"}},
         r'^wheel\.mean_radius_m is required for shape "harmonic"'),
        ({"wheel": {"shape": "harmonic", "mean_radius_m": 0.1, "harmonics": 3}},
         r"^wheel\.harmonics must be a list of \[k, a_k, b_k\] terms"),
        ({"wheel": {"shape": "harmonic", "mean_radius_m": 0.1, "harmonics": [[3, 0.1]]}},
         r"^wheel\.harmonics\[0\] must be \[k, a_k, b_k\] \(three numbers\)"),
        ({"wheel": {"shape": "harmonic", "mean_radius_m": 0.1, "harmonics": [[3.5, 0.1, 0]]}},
         r"^wheel\.harmonics\[0\]\[0\] must be an integer, got 3\.5"),
        ({"wheel": {"shape": "harmonic", "mean_radius_m": 0.1, "harmonics": [[0, 0.1, 0]]}},
         r"^wheel\.harmonics\[0\]\[0\] is the mode number k: a whole number from 1 to 64"),
        ({"wheel": {"shape": "harmonic", "mean_radius_m": 0.1,
                    "harmonics": [[2, 0.1, 0], [2, 0, 0.1]]}},
         r"^wheel\.harmonics\[1\]: mode k = 2 is listed twice"),
        ({"wheel": {"shape": "harmonic", "mean_radius_m": 0.1, "harmonics": [[2, "a", 0]]}},
         r"^wheel\.harmonics\[0\]\[1\] must be a number"),
        ({"wheel": {"shape": "harmonic", "mean_radius_m": 0.1, "axle_m": [0.01, 0]}},
         r'^wheel\.axle_m is not used by shape "harmonic"; the harmonic radius is measured'),
        ({"wheel": {"shape": "outline"}},
         r"^wheel: give exactly one of points_m, file \(got none\)$"),
        ({"wheel": {"shape": "outline", "file": "a.csv",
                    "points_m": [[1, 0], [0, 1], [-1, 0]]}},
         r"^wheel: give exactly one of points_m, file \(got points_m and file\)$"),
        ({"wheel": {"shape": "outline", "points_m": [[1, 0], [0, 1]]}},
         r"^wheel\.points_m must list at least 3"),
        # wheel / track presence and section types
        ({**HEX, **WAVE},
         r"^give either \[wheel\] or \[track\], not both \(the solver derives the other\)"),
        ({}, r"^scenario has neither \[wheel\] nor \[track\]; add one$"),
        ({"vehicle": {"axles": 1}}, r"^scenario has neither \[wheel\] nor \[track\]; add one$"),
        ({"wheel": 3}, r"^wheel must be a table \(a \[wheel\] section\), got 3 \(int\)$"),
        ({**HEX, "run": [1, 2]}, r"^run must be a table"),
        ({**HEX, "name": 3}, r"^name must be a string, got 3 \(int\)$"),
        ({**HEX, "name": ""}, r'^name must not be empty, got ""$'),
        ({**HEX, "description": ["a"]}, r"^description must be a string"),
        # track
        ({"track": {"amplitude_m": 0.1}}, r"^track\.shape is required; use one of wave, "),
        ({"track": {"shape": "sine"}},
         r'^track\.shape must be one of wave, sawtooth, formula, points, got "sine"$'),
        ({"track": {"shape": "wave", "amplitude_m": 0.02}},
         r'^track\.wavelength_m is required for shape "wave"$'),
        (with_keys(WAVE, track={"amplitude_m": -0.02}),
         r"^track\.amplitude_m must be > 0, got -0\.02$"),
        (with_keys(WAVE, track={"rise_m": 0.02}),
         r'^track\.rise_m is not used by shape "wave"; use one of amplitude_m, wavelength_m$'),
        (with_keys(WAVE, track={"wavelenght_m": 0.3, "wavelength_m": None}),
         r"^unknown key track\.wavelenght_m; did you mean wavelength_m\?"),
        ({"track": {"shape": "sawtooth", "rise_m": 0.02, "run_m": 0}},
         r"^track\.run_m must be > 0, got 0"),
        ({"track": {"shape": "formula", "formula": "sin(x)"}},
         r'^track\.period_m is required for shape "formula"$'),
        ({"track": {"shape": "formula", "period_m": 0.1}},
         r'^track\.formula is required for shape "formula"'),
        (with_keys(WAVE, track={"lobes": 2, "depth_m": 0.1}),
         r"^track: give at most one of lobes, depth_m"),
        (with_keys(WAVE, track={"lobes": 0}), r"^track\.lobes must be >= 1, got 0$"),
        (with_keys(WAVE, track={"lobes": 2.5}),
         r"^track\.lobes must be an integer, got 2\.5 \(float\)$"),
        (with_keys(WAVE, track={"depth_m": "deep"}), r"^track\.depth_m must be a number"),
        ({"track": {"shape": "points", "points_m": [[0, 0], [0.2, 0.01], [0.1, 0]]}},
         r"^track\.points_m\[2\] x must be greater than the previous point's x 0\.2, got 0\.1"),
        ({"track": {"shape": "points", "points_m": [[0, 0], [0.1, 0.01], [0.2, 0]],
                    "period_m": 0.15}},
         r"^track\.period_m must be >= the x span of points_m \(0\.2\), got 0\.15$"),
        ({"track": {"shape": "points"}}, r"^track: give exactly one of points_m, file"),
        # vehicle
        (with_keys(HEX, vehicle={"axles": 2}),
         r"^vehicle\.wheelbase_m must be > 0 when axles = 2, got 0\.0; .*wheelbase_periods"),
        (with_keys(HEX, vehicle={"axles": 2, "wheelbase_periods": 0}),
         r"^vehicle\.wheelbase_periods must be > 0, got 0"),
        (with_keys(HEX, vehicle={"wheelbase_tolerance_m": -1e-4}),
         r"^vehicle\.wheelbase_tolerance_m must be >= 0, got -0\.0001$"),
        (with_keys(HEX, vehicle={"axles": 0}), r"^vehicle\.axles must be >= 1, got 0$"),
        (with_keys(HEX, vehicle={"wheelbase_m": -0.1}),
         r"^vehicle\.wheelbase_m must be >= 0, got -0\.1$"),
        (with_keys(HEX, vehicle={"body_mass_kg": -1}),
         r"^vehicle\.body_mass_kg must be >= 0, got -1\.0$"),
        (with_keys(HEX, vehicle={"body_inertia_kg_m2": 0}),
         r"^vehicle\.body_inertia_kg_m2 must be > 0"),
        (with_keys(HEX, vehicle={"coupled": "yes"}),
         r'^vehicle\.coupled must be true or false, got "yes" \(str\)$'),
        (with_keys(HEX, vehicle={"seat_m": [0, 0, 0]}), r"^vehicle\.seat_m must be a pair"),
        (with_keys(HEX, vehicle={"axles": 2, "wheelbase_m": 0.4, "driven_axles": [0, 2]}),
         r"^vehicle\.driven_axles\[1\] must be an axle index 0\.\.1 \(axles = 2\), got 2$"),
        (with_keys(HEX, vehicle={"axles": 2, "wheelbase_m": 0.4, "driven_axles": [-1]}),
         r"^vehicle\.driven_axles\[0\] must be an axle index 0\.\.1"),
        (with_keys(HEX, vehicle={"axles": 2, "wheelbase_m": 0.4, "driven_axles": [1, 1]}),
         r"^vehicle\.driven_axles lists axle 1 twice; list each axle once$"),
        (with_keys(HEX, vehicle={"driven_axles": []}),
         r"^vehicle\.driven_axles must list at least one axle, got \[\]"),
        (with_keys(HEX, vehicle={"driven_axles": 0}),
         r"^vehicle\.driven_axles must be a list of axle indices, got 0 \(int\)$"),
        (with_keys(HEX, vehicle={"driven_axles": [0.0]}),
         r"^vehicle\.driven_axles\[0\] must be an integer, got 0\.0 \(float\)$"),
        # drive
        (with_keys(HEX, drive={"mode": "power"}),
         r'^drive\.mode must be one of speed, shaft_speed, torque, got "power"$'),
        (with_keys(HEX, drive={"mode": "torque"}),
         r'^drive\.torque_Nm is required when drive\.mode = "torque"; add e\.g\. torque_Nm'),
        (with_keys(HEX, drive={"mode": "shaft_speed"}),
         r'^drive\.shaft_speed_rad_s is required when drive\.mode = "shaft_speed"'),
        (with_keys(HEX, drive={"mode": "torque", "torque_Nm": -2}),
         r"^drive\.torque_Nm must be > 0, got -2\.0$"),
        (with_keys(HEX, drive={"speed_m_s": 0}), r"^drive\.speed_m_s must be > 0, got 0\.0$"),
        (with_keys(HEX, drive={"accel_m_s2": -1}), r"^drive\.accel_m_s2 must be >= 0"),
        (with_keys(HEX, drive={"max_torque_Nm": 0}), r"^drive\.max_torque_Nm must be > 0"),
        # surface
        (with_keys(HEX, surface={"friction": 0}), r"^surface\.friction must be > 0, got 0\.0$"),
        (with_keys(HEX, surface={"friction": False}),
         r"^surface\.friction must be a number, got false \(bool\)$"),
        (with_keys(HEX, surface={"rolling_resistance": -0.1}),
         r"^surface\.rolling_resistance must be >= 0, got -0\.1$"),
        # run
        (with_keys(HEX, run={"timestep_s": 0.05}),
         r"^run\.timestep_s must be > 0 and <= 0\.02, got 0\.05$"),
        (with_keys(HEX, run={"timestep_s": 0}), r"^run\.timestep_s must be > 0 and <= 0\.02"),
        (with_keys(HEX, run={"duration_s": 0}), r"^run\.duration_s must be > 0, got 0\.0$"),
        (with_keys(HEX, run={"settle_s": 6}),
         r"^run\.settle_s must be < run\.duration_s \(6\.0\), got 6\.0"),
        (with_keys(HEX, run={"settle_s": -1}), r"^run\.settle_s must be >= 0, got -1\.0$"),
        (with_keys(HEX, run={"iterations": 0}),
         r"^run\.iterations must be >= 1 and <= 1000, got 0$"),
        (with_keys(HEX, run={"iterations": 1001}),
         r"^run\.iterations must be >= 1 and <= 1000, got 1001$"),
        (with_keys(HEX, run={"iterations": 30.0}),
         r"^run\.iterations must be an integer, got 30\.0 \(float\)$"),
    ],
)
def test_error_messages(data, pattern):
    raises_at(data, pattern)


def test_data_must_be_a_mapping():
    raises_at([1, 2], r"^<dict>: a scenario must be a table of keys, got \[1, 2\] \(list\)$")


def test_long_values_are_shortened_in_messages():
    message = raises_at(with_keys(HEX, wheel={"sides": "x" * 500}), r"^wheel\.sides must be")
    assert len(message) < 200


# ---------------------------------------------------------------------------
# Files
# ---------------------------------------------------------------------------


def write(path, text):
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, encoding="utf-8")
    return path


def test_missing_scenario_file(tmp_path):
    missing = tmp_path / "nope.toml"
    with pytest.raises(ScenarioError, match=r"^scenario file not found: .*nope\.toml$"):
        load_scenario(missing)


def test_scenario_path_is_a_folder(tmp_path):
    with pytest.raises(ScenarioError, match=r"^scenario path is a folder, not a file: "):
        load_scenario(tmp_path)


def test_toml_syntax_error_is_one_line(tmp_path):
    bad = write(tmp_path / "bad.toml", '[wheel]\nshape = "polygon"\nsides = = 6\n')
    with pytest.raises(ScenarioError) as info:
        load_scenario(bad)
    message = str(info.value)
    assert message.startswith(f"{bad}: TOML syntax error: ")
    assert "line 3" in message
    assert "\n" not in message


def test_non_utf8_file(tmp_path):
    bad = tmp_path / "latin.toml"
    bad.write_bytes(b'description = "caf\xe9"\n')
    with pytest.raises(ScenarioError, match=r"latin\.toml: not UTF-8 text"):
        load_scenario(bad)


def test_toml_nan_and_inf_rejected(tmp_path):
    nan = write(tmp_path / "nan.toml", "[wheel]\nshape = 'circle'\nradius_m = nan\n")
    with pytest.raises(ScenarioError, match=r"^wheel\.radius_m must be a finite number, got nan$"):
        load_scenario(nan)
    inf = write(tmp_path / "inf.toml", "[wheel]\nshape = 'circle'\nradius_m = 0.1\n"
                "[surface]\nfriction = -inf\n")
    pattern = r"^surface\.friction must be a finite number, got -inf$"
    with pytest.raises(ScenarioError, match=pattern):
        load_scenario(inf)


def test_unit_less_key_in_a_file(tmp_path):
    path = write(tmp_path / "s.toml", "[wheel]\nshape = 'polygon'\nsides = 4\napothem = 0.1\n")
    with pytest.raises(ScenarioError, match=r"^unknown key wheel\.apothem; did you mean apothem_m"):
        load_scenario(path)


def test_outline_file_resolved_relative_to_scenario_folder(tmp_path, monkeypatch):
    folder = tmp_path / "builds"
    write(folder / "shapes" / "cam.csv", "0.1,0\n0,0.1\n-0.1,0\n0,-0.1\n")
    path = write(
        folder / "cam.toml",
        "[wheel]\nshape = 'outline'\nfile = 'shapes/cam.csv'\naxle_m = [0.01, 0.0]\n",
    )
    monkeypatch.chdir(tmp_path)  # a different working directory must not matter
    sc = load_scenario(path)
    assert sc.wheel.file == str((folder / "shapes" / "cam.csv").resolve())
    assert Path(sc.wheel.file).is_absolute()
    assert sc.wheel.points_m is None
    assert sc.base_dir == str(folder.resolve())
    # the stored absolute path round-trips from anywhere
    assert scenario_from_dict(sc.to_dict(), base_dir=tmp_path / "elsewhere") == sc


def test_track_points_file_and_missing_file(tmp_path):
    write(tmp_path / "profile.csv", "0,0\n0.1,0.01\n0.2,0\n")
    data = {"track": {"shape": "points", "file": "profile.csv", "period_m": 0.2}}
    sc = scenario_from_dict(data, base_dir=tmp_path)
    assert sc.track.file == str((tmp_path / "profile.csv").resolve())
    assert sc.track.period_m == 0.2
    data["track"]["file"] = "absent.csv"
    message = raises_at(data, r'^track\.file "absent\.csv" not found \(looked for ',
                        base_dir=tmp_path)
    assert str(tmp_path.resolve()) in message


def test_wheel_file_missing_in_scenario_folder(tmp_path):
    path = write(tmp_path / "s.toml", "[wheel]\nshape = 'outline'\nfile = 'gone.csv'\n")
    with pytest.raises(ScenarioError, match=r'^wheel\.file "gone\.csv" not found'):
        load_scenario(path)


def test_wheel_file_must_be_a_string(tmp_path):
    raises_at({"wheel": {"shape": "outline", "file": 3}},
              r"^wheel\.file must be a string, got 3 \(int\)$", base_dir=tmp_path)


def test_written_toml_from_to_dict_loads_back(tmp_path):
    sc = load_scenario(SCENARIOS / "hexagon_trolley.toml")
    lines = []
    d = sc.to_dict()
    for key in ("name", "description"):
        lines.append(f"{key} = {toml_value(d.pop(key))}")
    for section, table in d.items():
        lines.append(f"[{section}]")
        lines.extend(f"{k} = {toml_value(v)}" for k, v in table.items())
    path = write(tmp_path / "copy.toml", "\n".join(lines) + "\n")
    assert load_scenario(path) == sc


def toml_value(value):
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'
    if isinstance(value, list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    return repr(value)


# ---------------------------------------------------------------------------
# to_dict and replace
# ---------------------------------------------------------------------------


def test_to_dict_is_plain_and_omits_unset_keys():
    sc = scenario_from_dict(HEX)
    d = sc.to_dict()
    assert d["wheel"] == {
        "shape": "polygon", "sides": 6, "apothem_m": 0.12, "axle_m": [0.0, 0.0],
        "thickness_m": 0.02, "density_kg_m3": 700.0, "corner_radius_m": 0.0,
        "scale": 1.0, "axle_error_m": [0.0, 0.0],
    }
    assert "track" not in d
    assert d["vehicle"]["seat_m"] == [0.0, 0.3]
    assert "driven_axles" not in d["vehicle"]
    assert set(d) == {"name", "description", "wheel", "vehicle", "drive", "surface", "run",
                      "duty", "motor", "export"}


def test_to_dict_round_trip_for_many_shapes(tmp_path):
    cases = [
        {"wheel": {"shape": "polygon", "vertices_m": [[1, 0], [0, 1], [-1, 0]],
                   "mass_kg": 0.5, "inertia_kg_m2": 0.01, "corner_radius_m": 0.002}},
        {"wheel": {"shape": "ellipse", "semi_axes_m": [0.05, 0.04], "axle_m": [0.03, 0]}},
        {"wheel": {"shape": "outline", "points_m": [[1, 0], [0, 1], [-1, 0]]}},
        {"track": {"shape": "formula", "formula": "0.01*cos(x)", "period_m": 0.3,
                   "depth_m": -0.05}},
        {"track": {"shape": "points", "points_m": [[0, 0], [1, 0.1], [2, 0]], "period_m": 2}},
        {**WAVE, "vehicle": {"axles": 2, "wheelbase_m": 0.6, "driven_axles": [1],
                             "coupled": True},
         "drive": {"mode": "torque", "torque_Nm": 1.5}},
    ]
    for data in cases:
        sc = scenario_from_dict(data, base_dir=tmp_path)
        again = scenario_from_dict(sc.to_dict(), base_dir=tmp_path)
        assert again == sc, data
        assert again.to_dict() == sc.to_dict()


@given(
    friction=st.floats(min_value=1e-6, max_value=10, allow_nan=False),
    rolling=st.floats(min_value=0, max_value=1),
    duration=st.floats(min_value=0.1, max_value=100),
    settle_fraction=st.floats(min_value=0, max_value=0.99),
    timestep=st.floats(min_value=1e-6, max_value=0.02),
    iterations=st.integers(min_value=1, max_value=1000),
)
def test_round_trip_property(friction, rolling, duration, settle_fraction, timestep, iterations):
    data = with_keys(
        HEX,
        surface={"friction": friction, "rolling_resistance": rolling},
        run={"duration_s": duration, "settle_s": duration * settle_fraction,
             "timestep_s": timestep, "iterations": iterations},
    )
    sc = scenario_from_dict(data)
    assert sc.surface.friction == friction
    assert sc.run.iterations == iterations
    assert scenario_from_dict(sc.to_dict()) == sc


def test_replace_changes_one_value_and_keeps_the_rest():
    sc = load_scenario(SCENARIOS / "hexagon_trolley.toml")
    new = sc.replace("surface.friction", 0.6)
    assert isinstance(new, Scenario)
    assert new.surface.friction == 0.6
    assert sc.surface.friction == 0.7  # original unchanged
    assert new.wheel == sc.wheel and new.vehicle == sc.vehicle and new.run == sc.run
    assert new.source == sc.source and new.name == sc.name
    assert sc.replace("name", "trolley-b").name == "trolley-b"
    assert sc.replace("wheel.sides", 8).wheel.sides == 8


def test_replace_invalid_value_names_the_key():
    sc = scenario_from_dict(HEX)
    with pytest.raises(ScenarioError, match=r"^surface\.friction must be > 0, got -0\.5$"):
        sc.replace("surface.friction", -0.5)
    with pytest.raises(ScenarioError, match=r"^unknown key surface\.frction; did you mean"):
        sc.replace("surface.frction", 0.5)
    with pytest.raises(ScenarioError, match=r"^unknown key surfce; did you mean surface\?"):
        sc.replace("surfce.friction", 0.5)
    with pytest.raises(ScenarioError, match=r"^track\.lobes cannot be given beside \[wheel\]"):
        sc.replace("track.lobes", 2)
    with pytest.raises(ScenarioError, match=r'^wheel\.sides is not used by shape "circle"'):
        sc.replace("wheel.shape", "circle")


@pytest.mark.parametrize(
    ("key", "pattern"),
    [
        ("surface.friction.x", r"^surface\.friction\.x is not a scenario key path"),
        ("surface.", r"^surface\. is not a scenario key path"),
        ("name.x", r"^name\.x is not a scenario key path: name is a top-level key"),
    ],
)
def test_replace_bad_key_paths(key, pattern):
    with pytest.raises(ScenarioError, match=pattern):
        scenario_from_dict(HEX).replace(key, 1)


def test_replace_key_path_must_be_a_string():
    with pytest.raises(ScenarioError, match=r"^key path must be a string"):
        scenario_from_dict(HEX).replace(3, 1)


def test_replace_none_restores_the_default():
    sc = scenario_from_dict(with_keys(HEX, surface={"friction": 0.3}))
    assert sc.replace("surface.friction", None).surface.friction == 0.8


def test_replace_switches_within_exclusive_groups():
    sc = scenario_from_dict(HEX)
    by_side = sc.replace("wheel.side_m", 0.1)
    assert by_side.wheel.side_m == 0.1 and by_side.wheel.apothem_m is None
    square = [[0.1, 0.1], [-0.1, 0.1], [-0.1, -0.1], [0.1, -0.1]]
    by_vertices = sc.replace("wheel.vertices_m", square)
    assert by_vertices.wheel.sides is None and len(by_vertices.wheel.vertices_m) == 4
    wave = scenario_from_dict(WAVE)
    assert wave.track.lobes == 1
    deep = wave.replace("track.depth_m", 0.12)
    assert deep.track.depth_m == 0.12 and deep.track.lobes is None
    assert deep.replace("track.lobes", 4).track == TrackSpec(
        shape="wave", amplitude_m=0.02, wavelength_m=0.3, lobes=4
    )


def test_replace_many_changes_shape_and_section():
    sc = scenario_from_dict(HEX)
    circle = sc.replace_many(
        {"wheel.shape": "circle", "wheel.radius_m": 0.1, "wheel.sides": None,
         "wheel.apothem_m": None}
    )
    assert circle.wheel == WheelSpec(shape="circle", radius_m=0.1)
    as_track = sc.replace_many({"wheel": None, "track": WAVE["track"]})
    assert as_track.wheel is None and as_track.track.amplitude_m == 0.02
    # both members of a group given together are both kept, hence an error
    with pytest.raises(ScenarioError, match=r"^wheel: give exactly one of .*\(got apothem_m"):
        sc.replace_many({"wheel.apothem_m": 0.1, "wheel.side_m": 0.1})


def test_error_message_names_value_for_every_numeric_type_error():
    for value, shown in [(True, "true"), ("0.3", '"0.3"'), ([0.3], r"\[0\.3\]"),
                         ({"a": 1}, r"a table \{a\}")]:
        with pytest.raises(ScenarioError, match=rf"^surface\.friction must be a number, "
                                                rf"got {shown} \("):
            scenario_from_dict(with_keys(HEX, surface={"friction": value}))


def test_material_only_wheel_beside_track():
    base = {"track": {"shape": "wave", "amplitude_m": 0.02, "wavelength_m": 0.3}}
    sc = scenario_from_dict({**base, "wheel": {"thickness_m": 0.01, "density_kg_m3": 2700}})
    assert sc.wheel.shape is None and sc.wheel.thickness_m == 0.01
    with pytest.raises(ScenarioError, match=r"wheel\.sides cannot be given beside \[track\]"):
        scenario_from_dict({**base, "wheel": {"sides": 4}})


def test_as_built_errors_beside_the_other_section():
    # A shape-less [track] beside [wheel] holds only the as-built track errors, and the
    # wheel's own as-built keys (scale, axle_error_m) sit in [wheel].
    sc = scenario_from_dict({**HEX, "track": {"height_error_m": 0.001, "error_seed": 4}})
    assert sc.track.shape is None and sc.track.height_error_m == 0.001
    assert sc.track.error_seed == 4 and sc.track.joint_step_m == 0.0
    again = scenario_from_dict(sc.to_dict())
    assert again == sc
    s2 = scenario_from_dict(HEX).replace("wheel.scale", 1.002)
    assert s2.wheel.scale == 1.002 and s2.track is None
    with pytest.raises(ScenarioError, match=r"^track\.height_error_m must be >= 0"):
        scenario_from_dict({**HEX, "track": {"height_error_m": -1.0}})
    with pytest.raises(ScenarioError, match=r"^wheel\.scale must be > 0"):
        scenario_from_dict(HEX).replace("wheel.scale", 0.0)


def test_wheelbase_in_periods_and_its_replacement():
    sc = scenario_from_dict(with_keys(HEX, vehicle={"axles": 2, "wheelbase_periods": 3,
                                                    "wheelbase_tolerance_m": 1e-3}))
    assert sc.vehicle.wheelbase_periods == 3.0 and sc.vehicle.wheelbase_m == 0.0
    assert sc.vehicle.wheelbase_tolerance_m == 1e-3
    assert scenario_from_dict(sc.to_dict()) == sc
    # Written back (a design's best.toml, a template), the unset length stays out of the file.
    assert "wheelbase_m" not in sc.to_dict()["vehicle"]
    # Setting one form of the wheelbase in a sweep drops the other.
    by_length = sc.replace("vehicle.wheelbase_m", 0.4)
    assert by_length.vehicle.wheelbase_m == 0.4 and by_length.vehicle.wheelbase_periods is None
    back = by_length.replace("vehicle.wheelbase_periods", 2)
    assert back.vehicle.wheelbase_periods == 2.0 and back.vehicle.wheelbase_m == 0.0


def test_scenario_toml_writer_reads_back_through_tomllib():
    """The one TOML writer, checked by Python's own TOML reader (tomllib, TOML 1.0)."""
    import math
    import tomllib

    from ridesim.scenario.toml_text import toml_text, toml_value

    odd = 'quote " backslash \\ tab \t newline \n ünïcode'
    data = {"name": odd, "description": None,
            "run": {"a": 1, "b": 0.1, "c": float("inf"), "d": -float("inf"), "e": True,
                    "f": [[0.0, 1e-300], [2, 3]], "g": None}}
    back = tomllib.loads(toml_text(data, ["a header"]))
    assert back["name"] == odd and "description" not in back and "g" not in back["run"]
    assert back["run"]["c"] == math.inf and back["run"]["d"] == -math.inf
    assert back["run"]["f"] == [[0.0, 1e-300], [2, 3]] and back["run"]["b"] == 0.1
    assert math.isnan(tomllib.loads(f"x = {toml_value(float('nan'))}")["x"])
    with pytest.raises(TypeError):
        toml_value({"a": 1})
    sc = scenario_from_dict(HEX)
    assert scenario_from_dict(tomllib.loads(toml_text(sc.to_dict()))) == sc

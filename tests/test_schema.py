"""The key table (ridesim.scenario.schema): one source for defaults, bounds, units and the reference."""

import copy
import dataclasses
import json
import re
from pathlib import Path

import pytest

from ridesim.cli import main
from ridesim.errors import ScenarioError
from ridesim.scenario import load as scenario_module
from ridesim.scenario.load import load_scenario, scenario_from_dict
from ridesim.scenario.schema import KEY, KEYS, REQUIRED, SECTIONS, markdown_reference

ROOT = Path(__file__).resolve().parent.parent
SCENARIOS = ROOT / "scenarios"
HEX = {"wheel": {"shape": "polygon", "sides": 6, "apothem_m": 0.12}}

SPECS = {
    "wheel": scenario_module.WheelSpec, "track": scenario_module.TrackSpec,
    "vehicle": scenario_module.VehicleSpec, "drive": scenario_module.DriveSpec,
    "surface": scenario_module.SurfaceSpec, "run": scenario_module.RunSpec,
    "duty": scenario_module.DutySpec, "motor": scenario_module.MotorSpec,
    "path": scenario_module.PathSpec,
    "export": scenario_module.ExportSpec,
    "hub": scenario_module.HubSpec, "ratio": scenario_module.RatioSpec,
}

# A valid base scenario for the keys of each wheel or track shape.
BASES = {
    ("wheel", "polygon"): HEX,
    ("wheel", "ellipse"): {"wheel": {"shape": "ellipse", "semi_axes_m": [0.05, 0.04]}},
    ("wheel", "circle"): {"wheel": {"shape": "circle", "radius_m": 0.1}},
    ("wheel", "harmonic"): {"wheel": {"shape": "harmonic", "mean_radius_m": 0.1,
                                      "harmonics": [[3, 0.05, 0.0]]}},
    ("track", "wave"): {"track": {"shape": "wave", "amplitude_m": 0.02, "wavelength_m": 0.3}},
    ("track", "sawtooth"): {"track": {"shape": "sawtooth", "rise_m": 0.02, "run_m": 0.1}},
    ("track", "formula"): {"track": {"shape": "formula", "formula": "0.02*cos(2*pi*x/0.3)",
                                     "period_m": 0.3}},
    ("wheel", "outline"): {"wheel": {"shape": "outline",
                                     "points_m": [[0.1, 0.0], [0.0, 0.1], [-0.1, 0.0], [0.0, -0.1]]}},
    ("track", "points"): {"track": {"shape": "points",
                                    "points_m": [[0.0, 0.0], [0.1, -0.02], [0.3, 0.0]]}},
}


def test_committed_reference_is_the_generated_one():
    # docs/scenario-keys.md is written by `python3 tools/scenario_keys.py`; if this
    # fails, regenerate it rather than editing it.
    committed = (ROOT / "docs" / "scenario-keys.md").read_text(encoding="utf-8")
    assert committed == markdown_reference()


@pytest.mark.parametrize("section", SECTIONS)
def test_every_spec_field_has_one_table_row_and_takes_its_default(section):
    # A key added to a spec without a row (or a row without a field) fails here.
    spec = SPECS[section]
    names = {f.name for f in dataclasses.fields(spec)}
    rows = {k.name for k in KEYS if k.section == section}
    assert names == rows, (
        f"{section}: fields without a row {sorted(names - rows)}, rows without a field "
        f"{sorted(rows - names)}; each key is one Key row in ridesim/scenario/schema.py")
    for f in dataclasses.fields(spec):
        row = KEY[f"{section}.{f.name}"]
        if f.default is dataclasses.MISSING:  # shape: the only field without a default
            assert f.name == "shape" and row.default is REQUIRED
        elif f.name == "fit_track_to_corners":  # stored None for false, to stay out of to_dict
            assert f.default is None and row.default is False
        else:
            assert f.default == (None if row.default is REQUIRED else row.default), f.name


def test_every_default_lies_within_its_bounds_and_its_plausible_range():
    for k in KEYS:
        if k.default in (None, REQUIRED) or isinstance(k.default, (bool, str)):
            continue
        values = k.default if isinstance(k.default, tuple) else (k.default,)
        for v in values:
            for op, bound in k.bounds.items():
                assert {"gt": v > bound, "ge": v >= bound, "lt": v < bound,
                        "le": v <= bound}[op], (k.path, v)
            if k.plausible is not None:
                assert k.plausible[0] <= v <= k.plausible[1], (k.path, v)
        # Every bound and every plausible range is written in the key's unit: ranges that
        # carry a source never leave it empty.
        assert k.plausible is None or k.source


def _base_for(k):
    if k.section == "hub":  # the hub's outline rows are the wheel's: the same bases
        shape = k.shapes[0] if k.shapes else "polygon"
        data = copy.deepcopy(BASES[("wheel", shape)])
        if k.name in ("circumradius_m", "side_m"):
            del data["wheel"]["apothem_m"]
        return {"hub": data["wheel"], "path": {"kind": "hub"}}
    if k.section in ("wheel", "track"):
        shape = k.shapes[0] if k.shapes else ("polygon" if k.section == "wheel" else "wave")
        data = copy.deepcopy(BASES[(k.section, shape)])
        if k.name in ("circumradius_m", "side_m"):
            del data["wheel"]["apothem_m"]
        return data
    return copy.deepcopy(HEX)


_BOUND_CASES = [
    (k, op, bound) for k in KEYS for op, bound in k.bounds.items()
    if k.kind in ("real", "int", "pair", "reals")
]


@pytest.mark.parametrize(("key", "op", "bound"), _BOUND_CASES,
                         ids=[f"{k.path}-{op}" for k, op, _ in _BOUND_CASES])
def test_the_parser_enforces_each_bound_of_the_table(key, op, bound):
    # The value just across each bound of a row is refused, with the message naming the key
    # path and that bound: the parser's checks are the table's.
    bad = {"gt": bound, "ge": bound - 1, "lt": bound, "le": bound + 1}[op]
    if key.kind == "int":
        bad = int(bad)
    value = {"pair": [bad, 0.04], "reals": [bad]}.get(key.kind, bad)
    data = _base_for(key)
    data.setdefault(key.section, {})[key.name] = value
    symbol = {"gt": ">", "ge": ">=", "lt": "<", "le": "<="}[op]
    pattern = (rf"^{re.escape(key.path)}(\[0\])? must be (.* and )?"
               rf"{re.escape(f'{symbol} {bound:g}')}( and .*)?, got ")
    with pytest.raises(ScenarioError, match=pattern):
        scenario_from_dict(data)


def test_bound_messages_keep_their_format():
    # The contract quoted in the module docs and the issue.
    with pytest.raises(ScenarioError, match=r"^wheel\.apothem_m must be > 0, got -0\.3$"):
        scenario_from_dict({"wheel": {"shape": "polygon", "sides": 6, "apothem_m": -0.3}})


def test_demo_scenarios_raise_no_plausibility_warning():
    for path in sorted(SCENARIOS.glob("*.toml")):
        assert load_scenario(path).warnings == (), path.name


def test_implausible_values_are_accepted_with_one_line_each():
    # A wheel of apothem 120 m and a friction coefficient of 70 (issue 11): valid input, most
    # likely unit slips. Each gives one warning line naming the key, the value and the source.
    sc = scenario_from_dict({"wheel": {"shape": "polygon", "sides": 6, "apothem_m": 120},
                             "surface": {"friction": 70}})
    assert sc.wheel.apothem_m == 120 and sc.surface.friction == 70
    assert len(sc.warnings) == 2
    apothem, friction = sc.warnings
    assert apothem.startswith("wheel.apothem_m = 120 m is outside the plausible range")
    assert "common practice" in apothem
    assert friction.startswith("surface.friction = 70 is outside the plausible range 0.1 to 2")
    assert "Serway & Beichner" in friction
    assert all("\n" not in w for w in sc.warnings)


def test_pairs_and_lists_are_checked_number_by_number():
    sc = scenario_from_dict({"wheel": {"shape": "ellipse", "semi_axes_m": [50.0, 0.04]},
                             "motor": {"gear_ratios": [10.0, 5000.0]}})
    assert [w.split(" =")[0] for w in sc.warnings] == ["wheel.semi_axes_m[0]",
                                                       "motor.gear_ratios[1]"]


def test_handbook_friction_and_rolling_figures_lie_inside_the_plausible_ranges():
    # Friction coefficients of real pairs (Serway & Beichner, Physics for Scientists and
    # Engineers, 5th ed., Table 5.2: rubber on dry concrete 1.0 / 0.8; engineering handbook
    # tables: mild steel on steel 0.74 / 0.57, wood on wood 0.25-0.5 / 0.2) warn nothing,
    # nor do rolling resistance coefficients (steel wheel on rail 0.001-0.002, car tyre on
    # concrete 0.01-0.015, engineering tables).
    for mu in (1.0, 0.8, 0.74, 0.57, 0.5, 0.25, 0.2):
        assert scenario_from_dict({**HEX, "surface": {"friction": mu}}).warnings == ()
    for crr in (0.001, 0.002, 0.01, 0.015):
        sc = scenario_from_dict({**HEX, "surface": {"rolling_resistance": crr}})
        assert sc.warnings == ()


def test_replace_recomputes_the_warnings():
    sc = scenario_from_dict(HEX)
    assert sc.warnings == ()
    assert len(sc.replace("drive.speed_m_s", 50.0).warnings) == 1


def test_cli_prints_warnings_on_stderr_and_in_the_json_list(tmp_path, capsys):
    f = tmp_path / "big.toml"
    f.write_text('[wheel]\nshape = "polygon"\nsides = 6\napothem_m = 120\n'
                 '[surface]\nfriction = 70\n')
    assert main(["solve", str(f), "--json"]) == 0
    out, err = capsys.readouterr()
    data = json.loads(out)  # stdout is still exactly one JSON object
    lines = err.strip().splitlines()
    assert len(lines) == 2 and all(line.startswith("warning: ") for line in lines)
    assert data["warnings"] == [line.removeprefix("warning: ") for line in lines]
    assert main(["solve", str(SCENARIOS / "hexagon_trolley.toml"), "--json"]) == 0
    out, err = capsys.readouterr()
    assert json.loads(out)["warnings"] == [] and "warning" not in err


_SUFFIX_UNITS = (  # longest suffix first: the project's key naming rule (DEVELOPERS.md)
    ("_kg_m3", "kg/m^3"), ("_kg_m2", "kg m^2"), ("_rad_s", "rad/s"), ("_m_s2", "m/s^2"),
    ("_m_s", "m/s"), ("_Nm", "N m"), ("_N", "N"), ("_rad", "rad"), ("_deg", "deg"), ("_kg", "kg"),
    ("_s", "s"), ("_m", "m"),
)


def test_each_unit_agrees_with_its_key_name():
    for k in KEYS:
        suffix_unit = next((u for sfx, u in _SUFFIX_UNITS if k.name.endswith(sfx)), None)
        if suffix_unit is not None:
            assert k.unit == suffix_unit, k.path
        elif k.kind in ("real", "int", "reals", "ints"):
            assert k.unit == "-", k.path  # a number without a unit suffix is dimensionless


def test_sweep_warns_once_per_varied_key_and_for_the_base(tmp_path, capsys):
    base = tmp_path / "base.toml"
    base.write_text((SCENARIOS / "hexagon_trolley.toml").read_text()
                    .replace("speed_m_s = 0.4", "speed_m_s = 40.0"))
    sweep = tmp_path / "sweep.toml"
    sweep.write_text('base = "base.toml"\nrun = "solve"\n[vary]\n'
                     '"surface.friction" = [0.7, 70.0, 90.0]\n')
    assert main(["sweep", str(sweep), "--out", str(tmp_path / "out"), "--workers", "1",
                 "--json"]) == 0
    out, err = capsys.readouterr()
    lines = err.strip().splitlines()
    assert [line.split(" =")[0] for line in lines] == ["warning: drive.speed_m_s",
                                                       "warning: surface.friction"]
    assert lines[1].endswith("(in 2 of 3 cases)")
    assert json.loads(out)["warnings"] == [line.removeprefix("warning: ") for line in lines]

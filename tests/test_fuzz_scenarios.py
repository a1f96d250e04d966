"""Malformed scenarios, generated across every section: one clean line, exit 2, no noise.

A valid base scenario (the hexagon trolley's wheel) gets one key of one section replaced by
a value that no row of the key table accepts: a wrong type, a value across a hard bound, a
magnitude beyond a key's limit, a positive value too small to compute with, a non-finite
number, a list too long, nesting too deep, an unknown key or a name with a control
character. Every such file must be refused by ``ridesim check`` the way the README promises
(one ``error:`` line on stderr naming the key, exit code 2), without a traceback, a library
warning or an internal error. The regression cases below are the reproducers of crashes that
once got through (RecursionError, MemoryError, OverflowError, ZeroDivisionError, hangs,
UnicodeDecodeError, divergence reported as a ride).

With ``CI`` set, hypothesis draws the same examples every run (tests/conftest.py).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from ridesim.cli import main
from ridesim.errors import InputError, ScenarioError, SimulationError
from ridesim.scenario.build import read_points_csv
from ridesim.scenario.load import check_nesting, scenario_from_dict
from ridesim.scenario.schema import KEYS, MAX_NESTING, MAX_POINTS, tiny_of

HEX = {"wheel": {"shape": "polygon", "sides": 6, "apothem_m": 0.12}}


# ---------------------------------------------------------------------------- TOML writing
def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return '"' + "".join(c if 32 <= ord(c) < 127 and c not in '"\\' else f"\\u{ord(c):04x}"
                             for c in v) + '"'
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{k} = {_toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def to_toml(data: dict) -> str:
    top = [f"{k} = {_toml_value(v)}" for k, v in data.items() if not isinstance(v, dict)]
    parts = ["\n".join(top)] if top else []
    for k, v in data.items():
        if isinstance(v, dict):
            parts.append(f"[{k}]\n" + "\n".join(f"{n} = {_toml_value(x)}" for n, x in v.items()))
    return "\n\n".join(parts) + "\n"


def _run(tmp_path, text: str, *args: str):
    """Run the command line in-process; return exit code, stderr lines, caught warnings."""
    f = tmp_path / "s.toml"
    f.write_text(text, encoding="utf-8")
    import contextlib
    import io

    err = io.StringIO()
    with warnings.catch_warnings(record=True) as caught, contextlib.redirect_stderr(err), \
            contextlib.redirect_stdout(io.StringIO()):
        warnings.simplefilter("always")
        rc = main([*(args or ("check",)), str(f)])
    return rc, err.getvalue().splitlines(), caught


def assert_clean_refusal(rc, lines, caught, needle: str | None = None):
    # A valid value outside the range of real builds gets its own warning line (schema.py).
    lines = [x for x in lines if not (x.startswith("warning: ") and "plausible range" in x)]
    text = "\n".join(lines)
    assert rc == 2, (rc, text)
    assert len(lines) == 1 and lines[0].startswith("error: "), text
    assert "Traceback" not in text and "internal error" not in text
    assert not [w for w in caught if issubclass(w.category, RuntimeWarning)], caught
    if needle is not None:
        assert needle in lines[0], text


# ---------------------------------------------------------------------------- generated cases
_SECTIONS_BASE = {"wheel": HEX["wheel"], "track": {"shape": "wave", "amplitude_m": 0.02,
                                                     "wavelength_m": 0.3}}


def _base(k):
    if k.section == "track":
        return {"track": {**_SECTIONS_BASE["track"], **({"shape": k.shapes[0]} if k.shapes else {}),
                          "period_m": 0.3} if k.shapes and k.shapes[0] in ("formula", "points")
                else dict(_SECTIONS_BASE["track"])}
    if k.section == "wheel" and k.shapes and k.shapes[0] != "polygon":
        return {"wheel": {"shape": k.shapes[0]}}
    return {"wheel": dict(HEX["wheel"])}


def _bad_values(k):
    """Strategies of values the row ``k`` must refuse."""
    out = [st.sampled_from([{"a": 1}, "text" if k.kind not in ("str", "choice", "file") else 3,
                            [[[[[[[[[[1]]]]]]]]]]])]
    numeric = k.kind in ("real", "int", "pair", "reals")
    wrap = (lambda v: [v, 0.05]) if k.kind == "pair" else (lambda v: [v]) if k.kind == "reals" \
        else (lambda v: v)
    if numeric:
        out.append(st.sampled_from([wrap(math.nan), wrap(math.inf)]) if k.kind != "int"
                   else st.sampled_from([1.5, True]))
        if k.most is not None:
            big = st.floats(min_value=k.most * 1.01, max_value=1e308, allow_infinity=False)
            if k.kind == "int":
                big = st.integers(min_value=int(k.most) + 1, max_value=2**63 - 1)
            out.append(big.map(wrap))
        for op, b in k.bounds.items():
            if op in ("gt", "ge"):
                lo = b - 1.0 if op == "ge" else b
                out.append(st.floats(min_value=-1e308, max_value=lo, allow_infinity=False,
                                     allow_nan=False).filter(lambda x, b=b, op=op: x < b or
                                                             (op == "gt" and x == b))
                           .map(lambda x, k=k: int(x) if k.kind == "int" and abs(x) < 2**62
                                else x).map(wrap))
            else:
                out.append(st.floats(min_value=b + 1e-9 + abs(b) * 1e-9, max_value=1e308,
                                     allow_infinity=False).map(wrap))
        floor = tiny_of(k)
        if floor is not None:
            out.append(st.floats(min_value=5e-324, max_value=floor * 0.99).map(wrap))
    if k.max_len is not None:
        item = [0.01, 0.0] if k.kind == "points" else 1
        out.append(st.just([item] * (k.max_len + 1)))
    return st.one_of(*out)


_KEYS = [k for k in KEYS if k.kind not in ("bool",)]


@st.composite
def malformed(draw):
    what = draw(st.sampled_from(["key"] * 8 + ["unknown", "name", "nesting", "section"]))
    if what == "unknown":
        section = draw(st.sampled_from(["wheel", "vehicle", "drive", "surface", "run", "duty",
                                        "motor"]))
        data = {"wheel": dict(HEX["wheel"])}
        data.setdefault(section, {})["no_such_key_" + draw(st.text("xyz", min_size=1, max_size=3))] = 1
        return data
    if what == "name":
        ch = draw(st.sampled_from([chr(c) for c in [*range(1, 32), 127]]))
        return {"name": "cart" + ch, **HEX}
    if what == "nesting":
        depth = draw(st.integers(min_value=MAX_NESTING, max_value=60))
        v = 0.1
        for _ in range(depth):
            v = [v]
        return {"wheel": {**HEX["wheel"], "axle_m": v}}
    if what == "section":
        section = draw(st.sampled_from(["vehicle", "drive", "surface", "run", "duty", "motor"]))
        return {**HEX, section: draw(st.sampled_from([1, "x", [1, 2]]))}
    k = draw(st.sampled_from(_KEYS))
    data = _base(k)
    data.setdefault(k.section, {})[k.name] = draw(_bad_values(k))
    return data


@settings(max_examples=300, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(data=malformed())
def test_malformed_scenarios_get_one_clean_line(tmp_path, data):
    rc, lines, caught = _run(tmp_path, to_toml(data))
    assert_clean_refusal(rc, lines, caught)


# ---------------------------------------------------------------------------- reproducers
HEXT = '[wheel]\nshape = "polygon"\nsides = 6\napothem_m = 0.12\n'

REPRODUCERS = [
    # nesting: RecursionError while reading or walking the file
    ("a = " + "{b = " * 3000 + "1" + "}" * 3000 + "\n", "nested"),
    ("a = " + "[" * 1000 + "]" * 1000 + "\n", "nested"),
    (HEXT + "axle_m = " + "[" * 500 + "]" * 500 + "\n", "nested"),
    # counts: MemoryError and hangs
    (HEXT + "[vehicle]\naxles = 9223372036854775807\nwheelbase_m = 0.4\n", "vehicle.axles"),
    (HEXT + "[vehicle]\naxles = 1000\nwheelbase_m = 0.4\n", "vehicle.axles"),
    ('[wheel]\nshape = "polygon"\nsides = 100000\napothem_m = 0.12\n', "wheel.sides"),
    ('[track]\nshape = "wave"\namplitude_m = 0.02\nwavelength_m = 0.3\nlobes = 1000000\n',
     "track.lobes"),
    # magnitudes: OverflowError, ZeroDivisionError
    (HEXT + "axle_m = [1e308, 0]\n", "wheel.axle_m[0]"),
    ('[wheel]\nshape = "circle"\nradius_m = 1e-308\n', "wheel.radius_m"),
    ('[wheel]\nshape = "circle"\nradius_m = 1e30\n', "wheel.radius_m"),
    (HEXT + "[drive]\nspeed_m_s = 5e-324\n", "drive.speed_m_s"),
    ('[wheel]\nshape = "outline"\npoints_m = [[0.1, 0], [0, 0.1], [-0.1, 0], [0, -1e200]]\n',
     "wheel.points_m[3][1]"),
    ('[wheel]\nshape = "polar"\nradius_formula = "1e-300 + 1e-301*cos(phi)"\n',
     "wheel.radius_formula"),
    # overlapping wheels; a corner rounded larger than the wheel ("the 999000 mm corner radius")
    (HEXT + "[vehicle]\naxles = 3\nwheelbase_m = 0.001\n", "vehicle.wheelbase_m"),
    (HEXT + "corner_radius_m = 999\n", "wheel.corner_radius_m"),
    # names
    ('name = "a\\u0001b"\n' + HEXT, "name"),
    ('name = "' + "n" * 300 + '"\n' + HEXT, "name"),
]


@pytest.mark.parametrize(("text", "needle"), REPRODUCERS,
                         ids=[f"case{i}" for i in range(len(REPRODUCERS))])
def test_reproducers_are_refused_in_one_line(tmp_path, text, needle):
    rc, lines, caught = _run(tmp_path, text)
    assert_clean_refusal(rc, lines, caught, needle)


def test_deep_data_from_python_is_refused_without_recursion():
    v = 0.1
    for _ in range(10_000):
        v = [v]
    with pytest.raises(ScenarioError, match="nested deeper than the limit"):
        check_nesting({"wheel": {"axle_m": v}})
    with pytest.raises(ScenarioError, match="nested deeper"):
        scenario_from_dict({"wheel": {**HEX["wheel"], "axle_m": v}})


# ---------------------------------------------------------------------------- budgets
@pytest.mark.parametrize(("extra", "needle"), [
    ('[drive]\nmode = "torque"\ntorque_Nm = 1e4\n', "track vertices, beyond the budget of"),
    ("[run]\ntimestep_s = 1e-7\n", "steps, beyond the budget of"),
])
def test_simulation_over_budget_is_refused_with_the_estimate(tmp_path, extra, needle):
    rc, lines, caught = _run(tmp_path, HEXT + extra, "simulate")
    assert_clean_refusal(rc, lines, caught, needle)


def test_duty_cycle_over_budget_is_refused_with_the_estimate(tmp_path):
    rc, lines, caught = _run(tmp_path, HEXT + "[drive]\nspeed_m_s = 100\n[duty]\ncruise_s = 3600\n",
                             "size-motor")
    assert_clean_refusal(rc, lines, caught, "samples, beyond the budget of 2000000")


def test_export_with_too_many_sections_writes_nothing(tmp_path):
    f = tmp_path / "s.toml"
    f.write_text(HEXT)
    out = tmp_path / "out"
    assert main(["export", str(f), "--out", str(out), "--section", "1e-6"]) == 2
    assert not out.exists() or not any(out.iterdir())


# ---------------------------------------------------------------------------- points files
SQUARE = [(0.1, 0.0), (0.0, 0.1), (-0.1, 0.0), (0.0, -0.1)]


def _square_text(sep=",", third=None):
    return "".join(f"{x}{sep}{y}" + ("" if third is None else f"{sep}{third}") + "\n"
                   for x, y in SQUARE)


@pytest.mark.parametrize("data", [
    ("\ufeff" + _square_text()).encode("utf-8"),        # spreadsheet BOM: first point kept
    _square_text().encode("utf-16"),                      # UTF-16 with its BOM
    _square_text("\t").encode(),                          # tab-separated
    _square_text(",", 0).encode(),                        # a constant third column (z = 0)
    b"# caf\xe9 (latin-1 comment)\n" + _square_text().encode(),
], ids=["bom", "utf16", "tabs", "z0", "latin1-comment"])
def test_points_files_read_what_is_unambiguous(tmp_path, data):
    f = tmp_path / "p.csv"
    f.write_bytes(data)
    # The reference is the file's own content: all four points, in order.
    np.testing.assert_array_equal(read_points_csv(f, "wheel.file"), np.array(SQUARE))


@pytest.mark.parametrize(("data", "needle"), [
    (bytes(range(256)) * 4, "not a text file"),
    (_square_text(",", 7).replace(",7\n", ",8\n", 1).encode(), "third column"),
    (b"0.1,0\n\xe9,0.1\n-0.1,0\n0,-0.1\n", "not UTF-8"),
    (b"0,1;5\n1,0;2\n", "not two numbers"),
    (b"0.1,0\n" * (MAX_POINTS + 1), f"more than {MAX_POINTS} points"),
], ids=["binary", "varying-z", "non-utf8-data", "semicolons", "too-many"])
def test_points_files_refuse_the_rest_in_one_line(tmp_path, data, needle):
    f = tmp_path / "p.csv"
    f.write_bytes(data)
    with pytest.raises(ScenarioError, match=needle) as info:
        read_points_csv(f, "wheel.file")
    assert "\n" not in str(info.value) and "wheel.file" in str(info.value)


# ---------------------------------------------------------------------------- divergence
def test_non_finite_or_runaway_figures_are_errors_not_results():
    from ridesim.jobs import check_figures

    sc = scenario_from_dict(HEX)
    with pytest.raises(SimulationError, match="peak_Nm came out nan"):
        check_figures("size-motor", {"torque": {"peak_Nm": float("nan")}}, sc)
    # Closed form: a regular hexagon of apothem a has circumradius a / cos(pi/6) = 0.13856 m;
    # an axle that bounces more than the wheel's greatest radius has left the track.
    r_max = 0.12 / math.cos(math.pi / 6)
    with pytest.raises(SimulationError, match="larger than the wheel"):
        check_figures("simulate", {"axle_bounce_m": 1.01 * r_max}, sc)
    check_figures("simulate", {"axle_bounce_m": 0.99 * r_max}, sc)  # a rough ride, not divergence


def test_numeric_warnings_become_one_line_findings():
    from ridesim.jobs import numeric_warnings

    with numeric_warnings() as lines:
        np.float64(1e308) * 10.0  # overflow: IEEE 754 gives inf and numpy warns
    assert len(lines) == 1 and "overflow" in lines[0] and "unreliable" in lines[0]


def test_budget_error_type_is_bad_input():
    # Budget refusals are bad input (exit 2), not internal errors.
    from ridesim.sim.budget import check_simulation_budget

    sc = scenario_from_dict({**HEX, "run": {"duration_s": 3600, "timestep_s": 1e-4}})

    class _T:
        period = 0.1318

    with pytest.raises(InputError, match="3.6e\\+07 steps, beyond the budget of 5000000"):
        check_simulation_budget(sc, _T(), 0.0, 1.0, 40, 0.12)


def test_a_clip_over_budget_is_refused_before_drawing(tmp_path):
    f = tmp_path / "s.toml"
    f.write_text(HEXT)
    out = tmp_path / "out"
    assert main(["render", str(f), "--out", str(out), "--seconds", "1e6"]) == 2
    assert not any(p.is_file() for p in out.rglob("*"))

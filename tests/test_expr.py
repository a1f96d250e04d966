"""Tests of the safe formula parser ridesim.model.expr."""

import ast
import builtins
import dataclasses
import math
import pickle
import re
import warnings
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

import ridesim.model.expr as expr_module
from ridesim.errors import FormulaError, InputError
from ridesim.model.expr import MAX_FORMULA_LENGTH, MAX_NESTING, Formula, parse

PHI = np.linspace(0.0, 2.0 * np.pi, 97)
X = np.linspace(-2.5, 2.5, 101)
POS = np.linspace(0.05, 3.0, 61)  # strictly positive points
UNIT = np.linspace(-0.95, 0.95, 39)  # inside (-1, 1)


# --------------------------------------------------------------------------
# Values against numpy written directly
# --------------------------------------------------------------------------


def test_wheel_radius_matches_numpy():
    f = parse("0.3+0.05*cos(3*phi)", "phi")
    np.testing.assert_allclose(f(PHI), 0.3 + 0.05 * np.cos(3 * PHI), rtol=1e-15)


def test_track_profile_matches_numpy():
    f = parse("0.5*cos(2*x)", variable="x")
    np.testing.assert_allclose(f(X), 0.5 * np.cos(2 * X), rtol=1e-15)


def test_longer_formula_matches_numpy():
    f = parse("0.3 + 0.05*cos(3*phi) - 0.01*sin(5*phi)^2 + exp(-phi)/10", "phi")
    want = 0.3 + 0.05 * np.cos(3 * PHI) - 0.01 * np.sin(5 * PHI) ** 2 + np.exp(-PHI) / 10
    np.testing.assert_allclose(f(PHI), want, rtol=1e-15)


ONE_ARG = [
    ("sin", np.sin, X),
    ("cos", np.cos, X),
    ("tan", np.tan, X),
    ("arcsin", np.arcsin, UNIT),
    ("asin", np.arcsin, UNIT),
    ("arccos", np.arccos, UNIT),
    ("acos", np.arccos, UNIT),
    ("arctan", np.arctan, X),
    ("atan", np.arctan, X),
    ("sinh", np.sinh, X),
    ("cosh", np.cosh, X),
    ("tanh", np.tanh, X),
    ("arcsinh", np.arcsinh, X),
    ("asinh", np.arcsinh, X),
    ("arccosh", np.arccosh, POS + 1.2),
    ("acosh", np.arccosh, POS + 1.2),
    ("arctanh", np.arctanh, UNIT),
    ("atanh", np.arctanh, UNIT),
    ("exp", np.exp, X),
    ("log", np.log, POS),
    ("log10", np.log10, POS),
    ("sqrt", np.sqrt, POS),
    ("abs", np.abs, X),
]


@pytest.mark.parametrize(("name", "func", "points"), ONE_ARG, ids=[c[0] for c in ONE_ARG])
def test_one_argument_functions(name, func, points):
    f = parse(f"{name}(0.9*x)", "x")
    np.testing.assert_allclose(f(points), func(0.9 * points), rtol=1e-15)


TWO_ARG = [
    ("atan2", np.arctan2),
    ("arctan2", np.arctan2),
    ("min", np.minimum),
    ("max", np.maximum),
    ("hypot", np.hypot),
]


@pytest.mark.parametrize(("name", "func"), TWO_ARG, ids=[c[0] for c in TWO_ARG])
def test_two_argument_functions(name, func):
    f = parse(f"{name}(sin(x), 0.5 - x)", "x")
    np.testing.assert_allclose(f(X), func(np.sin(X), 0.5 - X), rtol=1e-15)


def test_constants_pi_and_e():
    assert parse("pi")(0.0) == np.pi
    assert parse("e")(0.0) == np.e
    np.testing.assert_allclose(parse("2*pi*x/0.3")(X), 2 * np.pi * X / 0.3, rtol=1e-15)
    np.testing.assert_allclose(parse("e^x")(X), np.e**X, rtol=1e-15)


def test_constant_formula_broadcasts_to_input_shape():
    out = parse("0.3", "phi")(PHI)
    assert isinstance(out, np.ndarray)
    assert out.shape == PHI.shape
    assert out.dtype == np.float64
    assert np.all(out == 0.3)


def test_output_keeps_shape_of_2d_input():
    grid = X[:100].reshape(4, 25)
    out = parse("x^2 - 1")(grid)
    assert out.shape == (4, 25)
    np.testing.assert_allclose(out, grid**2 - 1, rtol=1e-15)
    assert parse("1")(grid).shape == (4, 25)


def test_scalar_and_list_input():
    f = parse("3*x + 1")
    assert f(2.0) == 7.0
    assert np.ndim(f(2.0)) == 0
    np.testing.assert_array_equal(f([0, 1, 2]), [1.0, 4.0, 7.0])


def test_identity_formula_returns_a_copy():
    points = np.array([1.0, 2.0, 3.0])
    out = parse("x")(points)
    np.testing.assert_array_equal(out, points)
    out[0] = 99.0
    assert points[0] == 1.0


def test_whitespace_is_free():
    a = parse("0.3+0.05*cos(3*phi)", "phi")
    b = parse("  0.3 +\t0.05 * cos ( 3 * phi )\n", "phi")
    np.testing.assert_array_equal(a(PHI), b(PHI))


def test_evaluation_emits_no_runtime_warnings():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        out = parse("log(x) + 1/x + sqrt(x) + arcsin(x)")(np.array([-1.0, 0.0, 2.0]))
        big = parse("exp(x)^2")(np.array([1e3]))
    assert np.isnan(out[0]) and np.isnan(out[2])
    assert np.isinf(out[1]) or np.isnan(out[1])
    assert np.isinf(big[0])


def test_non_numeric_values_raise_input_error():
    f = parse("x + 1")
    with pytest.raises(InputError, match=r"x values must be real"):
        f(["a", "b"])
    with pytest.raises(InputError, match=r"complex"):
        f(np.array([1j]))


# --------------------------------------------------------------------------
# Numbers, precedence and associativity
# --------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("text", "value"),
    [
        ("2^3^2", 512.0),
        ("2**3**2", 512.0),
        ("(2^3)^2", 64.0),
        ("-2^2", -4.0),
        ("(-2)^2", 4.0),
        ("2^-1", 0.5),
        ("2**-2", 0.25),
        ("2^-1^2", 0.5),
        ("-2^-2", -0.25),
        ("2*3+4", 10.0),
        ("2+3*4", 14.0),
        ("(1+2)*3", 9.0),
        ("8/4/2", 1.0),
        ("8/(4/2)", 4.0),
        ("10-4-3", 3.0),
        ("10-(4-3)", 9.0),
        ("2*-3", -6.0),
        ("1 - -1", 2.0),
        ("--2", 2.0),
        ("+3", 3.0),
        ("-+-3", 3.0),
        ("2*3^2", 18.0),
        ("-3^2*2", -18.0),
        ("1e-3", 1e-3),
        ("1E+2", 100.0),
        ("2.5e2", 250.0),
        (".5", 0.5),
        ("5.", 5.0),
        ("1.e1", 10.0),
        ("007", 7.0),
        ("sqrt(16)^0.5", 2.0),
        ("((((1))))", 1.0),
    ],
)
def test_precedence_and_associativity(text, value):
    assert parse(text)(0.0) == value


def test_unary_minus_binds_looser_than_power_of_the_variable():
    np.testing.assert_allclose(parse("-x^2")(X), -(X**2), rtol=1e-15)
    np.testing.assert_allclose(parse("2^-x")(X), 2.0 ** (-X), rtol=1e-15)
    np.testing.assert_allclose(parse("x^2^0.5")(POS), POS ** (2**0.5), rtol=1e-15)


# --------------------------------------------------------------------------
# Errors
# --------------------------------------------------------------------------


def _error(text, variable="x"):
    with pytest.raises(FormulaError) as info:
        parse(text, variable)
    message = str(info.value)
    assert "\n" not in message
    return message


@pytest.mark.parametrize(
    ("text", "variable", "pattern"),
    [
        (
            "0.3 + foo(phi)",
            "phi",
            r"^formula \"0\.3 \+ foo\(phi\)\": unknown name 'foo' at position 6; "
            r"allowed: phi, pi, e, sin, cos, .*hypot$",
        ),
        (
            "0.3 +",
            "phi",
            r"^formula \"0\.3 \+\": unexpected end of formula at position 5; "
            r"expected a number, phi, a function or '\('$",
        ),
        (
            "2x",
            "x",
            r"^formula \"2x\": unexpected 'x' at position 1 \(write 2\*x: implicit "
            r"multiplication is not allowed\)$",
        ),
        ("x(2)", "x", r"unexpected '\(' at position 1 \(write x\*\(\.\.\.\): implicit"),
        ("pi x", "x", r"unexpected 'x' at position 3 \(write pi\*x: implicit"),
        ("(1+x)(2)", "x", r"unexpected '\(' at position 5 .*implicit multiplication"),
        ("2 3", "x", r"unexpected '3' at position 2 \(write 2\*3"),
        ("0.5*cos(2*x)", "phi", r"unknown name 'x' at position 10; the variable here is phi"),
        ("sin(phi)", "x", r"unknown name 'phi' at position 4; the variable here is x"),
        ("Sin(x)", "x", r"unknown name 'Sin' at position 0 \(did you mean 'sin'\?\)"),
        ("PI*x", "x", r"unknown name 'PI' at position 0 \(did you mean 'pi'\?\)"),
        ("", "x", r"^formula \"\": empty formula at position 0; expected an expression in x"),
        ("   ", "x", r"empty formula"),
        ("(1+x", "x", r"missing '\)' to close the '\(' at position 0; the formula ends at position 4"),
        ("sin(x", "x", r"missing '\)' to close the '\(' at position 3"),
        ("((x)", "x", r"missing '\)' to close the '\(' at position 0"),
        ("1+x)", "x", r"unmatched '\)' at position 3"),
        (")", "x", r"unexpected '\)' at position 0; expected a number, x"),
        ("()", "x", r"unexpected '\)' at position 1; expected a number"),
        ("sin(1, 2)", "x", r"function 'sin' at position 0 takes exactly 1 argument.*got 2"),
        ("sin()", "x", r"function 'sin' at position 0 takes exactly 1 argument.*got 0"),
        ("2*atan2(x)", "x", r"'atan2' at position 2 takes exactly 2 arguments, as in atan2\(y"),
        ("min(1, 2, 3)", "x", r"'min' at position 0 takes exactly 2 arguments.*got 3"),
        ("hypot()", "x", r"'hypot' at position 0 takes exactly 2 arguments.*got 0"),
        ("max(1,)", "x", r"unexpected '\)' at position 6; expected a number"),
        ("sin x", "x", r"function 'sin' at position 0 must be followed by its argument"),
        ("x + cos", "x", r"function 'cos' at position 4 must be .*found the end at position 7"),
        ("1, 2", "x", r"unexpected ',' at position 1; a comma only separates the arguments"),
        ("(1, 2)", "x", r"unexpected ',' at position 2"),
        ("3*/2", "x", r"unexpected '/' at position 2; expected a number, x, a function"),
        ("2***3", "x", r"unexpected '\*' at position 3"),
        ("^2", "x", r"unexpected '\^' at position 0"),
        ("x^", "x", r"unexpected end of formula at position 2"),
        ("2^^3", "x", r"unexpected '\^' at position 2"),
        ("1.2.3", "x", r"malformed number '1\.2\.3' at position 0"),
        ("x + 1e+", "x", r"malformed number '1e\+' at position 4"),
        ("1e999", "x", r"number '1e999' at position 0 is too large"),
        ("x % 2", "x", r"unexpected character '%' at position 2; allowed: numbers"),
        ("x // 2", "x", r"unexpected '/' at position 3"),
        ("x == 1", "x", r"unexpected character '=' at position 2"),
        ("2\u00d7x", "x", r"unexpected character '\u00d7' at position 1 \(write \*\)"),
        ("\u03c0*x", "x", r"unexpected character '\u03c0' at position 0 \(write pi\)"),
    ],
)
def test_error_messages(text, variable, pattern):
    message = _error(text, variable)
    assert message.startswith('formula "')
    assert re.search(pattern, message), message


def test_error_message_escapes_control_characters_on_one_line():
    message = _error("x +\n")
    assert message.startswith('formula "x +\\n": unexpected end of formula at position 4')


@pytest.mark.parametrize("value", [None, 3.0, b"x", ["x"]])
def test_non_string_formula_is_rejected(value):
    with pytest.raises(FormulaError, match=r"a formula must be text \(str\), got " + type(value).__name__):
        parse(value)


@pytest.mark.parametrize(
    ("variable", "pattern"),
    [
        ("pi", r"variable 'pi' is reserved"),
        ("sin", r"variable 'sin' is reserved"),
        ("e", r"variable 'e' is reserved"),
        ("2x", r"variable '2x' is not a valid name"),
        ("", r"variable '' is not a valid name"),
        ("x y", r"variable 'x y' is not a valid name"),
        (3, r"variable must be a name .* got int 3"),
    ],
)
def test_bad_variable_is_rejected(variable, pattern):
    with pytest.raises(FormulaError, match=pattern):
        parse("1", variable)


def test_overlong_formula_is_rejected():
    text = "+".join(["x"] * 1001)
    assert len(text) > MAX_FORMULA_LENGTH
    message = _error(text)
    assert f"too long ({len(text)} characters); at most {MAX_FORMULA_LENGTH}" in message
    # just under the limit is fine
    ok = "+".join(["x"] * 1000)
    assert len(ok) <= MAX_FORMULA_LENGTH
    assert parse(ok)(1.0) == 1000.0


@pytest.mark.parametrize(
    ("template", "opener"),
    [
        (lambda n: "(" * n + "x" + ")" * n, "("),
        (lambda n: "-" * n + "x", "-"),
        (lambda n: "x^" * n + "1", "^"),
        (lambda n: "sin(" * n + "x" + ")" * n, "("),
    ],
    ids=["parentheses", "unary", "power", "calls"],
)
def test_nesting_limit(template, opener):
    assert isinstance(parse(template(MAX_NESTING)), Formula)
    message = _error(template(MAX_NESTING + 1))
    assert re.search(
        rf"nesting deeper than {MAX_NESTING} levels at '{re.escape(opener)}' at position \d+",
        message,
    )


def test_deep_but_allowed_formulas_evaluate():
    assert parse("(" * MAX_NESTING + "x" + ")" * MAX_NESTING)(2.0) == 2.0
    assert parse("-" * MAX_NESTING + "x")(2.0) == 2.0
    assert parse("x^" * MAX_NESTING + "x")(1.0) == 1.0
    np.testing.assert_allclose(
        parse("sin(" * MAX_NESTING + "x" + ")" * MAX_NESTING)(0.5), _nested_sin(0.5, MAX_NESTING)
    )


def _nested_sin(value, n):
    for _ in range(n):
        value = math.sin(value)
    return value


def test_oversized_derivative_is_rejected_not_exploded():
    f = parse("x^" * 99 + "x")
    d = f.derivative()
    assert np.isfinite(d(0.5))
    with pytest.raises(FormulaError, match=r"derivative too large"):
        d.derivative()


# --------------------------------------------------------------------------
# Safety
# --------------------------------------------------------------------------


@pytest.mark.parametrize(
    "attack",
    [
        "__import__('os')",
        "__import__",
        "().__class__",
        "phi.real",
        "x.real",
        "lambda: 1",
        "lambda",
        "exec('1')",
        "eval",
        "open('/etc/passwd')",
        "globals()",
        "x if x else 1",
        "[x for x in ()]",
        "x; 1",
        "x = 1",
        "'x'",
        "{}",
        "x[0]",
        "sin.__call__(x)",
        "getattr(x, 'real')",
        "__builtins__",
        "x @ x",
        "0x10",
        "1_000",
        "os",
        "np",
        "numpy(x)",
        "x\\",
    ],
)
def test_code_injection_is_rejected(attack):
    with pytest.raises(FormulaError) as info:
        parse(attack, "x")
    assert str(info.value).startswith('formula "')


def test_evaluator_never_calls_python_eval(monkeypatch):
    def forbidden(*args, **kwargs):
        raise AssertionError("the formula module must not call eval/exec/compile")

    for name in ("eval", "exec", "compile"):
        monkeypatch.setattr(builtins, name, forbidden)
    f = parse("0.3 + 0.05*cos(3*phi) + atan2(phi, 1)", "phi")
    values = f(PHI)
    d = f.derivative()(PHI)
    monkeypatch.undo()
    want = 0.3 + 0.05 * np.cos(3 * PHI) + np.arctan2(PHI, 1)
    np.testing.assert_allclose(values, want, rtol=1e-15)
    assert d.shape == PHI.shape


def test_module_source_uses_no_python_evaluator():
    tree = ast.parse(Path(expr_module.__file__).read_text())
    banned_calls = {"eval", "exec", "compile", "__import__", "getattr"}
    for node in ast.walk(tree):
        if isinstance(node, ast.Call) and isinstance(node.func, ast.Name):
            assert node.func.id not in banned_calls
        if isinstance(node, ast.Import):
            assert all(alias.name != "ast" for alias in node.names)
        if isinstance(node, ast.ImportFrom):
            assert node.module != "ast"


# --------------------------------------------------------------------------
# Formula object
# --------------------------------------------------------------------------


def test_formula_keeps_text_and_variable():
    f = parse("0.3 + 0.05*cos(3*phi)", variable="phi")
    assert f.text == "0.3 + 0.05*cos(3*phi)"
    assert f.variable == "phi"
    assert str(f) == f.text
    assert repr(f) == "Formula(text='0.3 + 0.05*cos(3*phi)', variable='phi')"


def test_formula_is_frozen_hashable_and_compares_by_text():
    f = parse("0.5*cos(2*x)")
    g = Formula("0.5*cos(2*x)", "x")
    assert f == g and hash(f) == hash(g)
    assert f != parse("0.5*cos(2*x) ")
    assert f != parse("0.5*cos(2*phi)", "phi")
    assert {f: 1}[g] == 1
    with pytest.raises(dataclasses.FrozenInstanceError):
        f.text = "1"
    replaced = dataclasses.replace(f, text="2*x")
    assert replaced(1.5) == 3.0


def test_formula_constructor_validates():
    with pytest.raises(FormulaError, match=r"unknown name 'y' at position 0"):
        Formula("y", "x")


def test_formula_pickles():
    f = parse("0.3 + 0.05*cos(3*phi)", "phi")
    for g in (f, f.derivative()):
        h = pickle.loads(pickle.dumps(g))
        assert h == g
        np.testing.assert_array_equal(h(PHI), g(PHI))


def test_constant_subtrees_are_folded():
    f = parse("2*pi*x + cos(0)^2 + 3*4")
    # 2*pi folds into one constant; the trailing constants are after x and stay
    program = f._program
    consts = [arg for code, arg in program if code == 0]
    assert np.float64(2 * np.pi) in consts
    np.testing.assert_allclose(f(X), 2 * np.pi * X + np.cos(0) ** 2 + 3 * 4, rtol=1e-15)
    assert len(parse("sin(pi/6)*2 + 1")._program) == 1


def test_evaluation_matches_hand_written_numpy_on_a_dense_grid():
    # Speed is measured in benchmarks/, never in a unit test; here only the values.
    points = np.linspace(0.0, 6.0, 100_000)
    f = parse("0.3 + 0.05*cos(3*x) - 0.02*sin(5*x)^2 + x/7")
    by_hand = 0.3 + 0.05 * np.cos(3 * points) - 0.02 * np.sin(5 * points) ** 2 + points / 7
    np.testing.assert_allclose(f(points), by_hand, rtol=1e-15)


# --------------------------------------------------------------------------
# Derivatives
# --------------------------------------------------------------------------

DERIVATIVE_CASES = [
    ("0.3 + 0.05*cos(3*phi)", X),
    ("0.5*cos(2*x) - x^3/7", X),
    ("sin(x)/x", POS),
    ("x^x", POS),
    ("2^x * e^(-x^2)", X),
    ("tan(x/2)", UNIT),
    ("arcsin(x) + arccos(x/2) + arctan(3*x)", UNIT),
    ("sinh(x) * cosh(x/2) - tanh(x)", X),
    ("arcsinh(x) + arccosh(x + 2) + arctanh(x/2)", UNIT),
    ("exp(-x)*log(x) + log10(x^2)", POS),
    ("sqrt(1 + x^2) / (1 + x)", POS),
    ("abs(x - 0.123)^3 + abs(x + 0.5)", POS),
    ("atan2(sin(x), 1.5 + cos(x))", X),
    ("atan2(x + 0.01, -1)", X),
    ("hypot(x, 2*x + 1)", X),
    ("min(x, 1 - x^2) + max(x^2, 0.3)", POS),
    ("1/(x - 3.3) - 2/x/(x + 1)", POS),
    ("(x^2 + 1)^-0.5", X),
    ("-x^2 + --x", X),
]


@pytest.mark.parametrize(("text", "points"), DERIVATIVE_CASES, ids=[c[0] for c in DERIVATIVE_CASES])
def test_derivative_matches_central_difference(text, points):
    variable = "phi" if "phi" in text else "x"
    f = parse(text, variable)
    d = f.derivative()
    assert isinstance(d, Formula)
    assert d.variable == variable
    h = 1e-6
    numeric = (f(points + h) - f(points - h)) / (2 * h)
    np.testing.assert_allclose(d(points), numeric, rtol=1e-6, atol=1e-6)


@pytest.mark.parametrize("text", ["0.3 + 0.05*cos(3*x)", "x^3 - 2*x", "exp(-x^2)", "sin(x)*cos(2*x)"])
def test_second_derivative_matches_central_difference(text):
    f = parse(text)
    dd = f.derivative().derivative()
    h = 1e-4
    numeric = (f(X + h) - 2 * f(X) + f(X - h)) / h**2
    np.testing.assert_allclose(dd(X), numeric, rtol=1e-5, atol=1e-5)


def test_derivative_of_wheel_radius_is_exact():
    d = parse("0.3 + 0.05*cos(3*phi)", "phi").derivative()
    np.testing.assert_allclose(d(PHI), -0.15 * np.sin(3 * PHI), rtol=1e-14, atol=1e-17)
    assert "sin(3*phi)" in str(d)


def test_derivative_of_constant_and_linear():
    zero = parse("0.3*pi").derivative()
    assert str(zero) == "0"
    np.testing.assert_array_equal(zero(X), np.zeros_like(X))
    assert str(parse("2*x + 1").derivative()) == "2"


def test_derivative_folding_keeps_trees_small():
    d = parse("0.3 + 0.05*cos(3*x) + 0*x + 1*x^1").derivative()
    assert str(d) == "-0.15000000000000002*sin(3*x) + 1"


def test_derivative_of_kinks():
    # abs' is sign (0 at the kink); min/max pick the active branch
    np.testing.assert_array_equal(parse("abs(x)").derivative()([-2.0, 0.0, 3.0]), [-1, 0, 1])
    np.testing.assert_array_equal(parse("min(x, 1)").derivative()([0.0, 2.0]), [1.0, 0.0])
    np.testing.assert_array_equal(parse("max(2*x, 1)").derivative()([0.0, 2.0]), [0.0, 2.0])


def test_derivative_text_parses_back():
    for text, points in DERIVATIVE_CASES:
        if any(name in text for name in ("abs", "min", "max")):
            continue
        variable = "phi" if "phi" in text else "x"
        d = parse(text, variable).derivative()
        again = parse(str(d), variable)
        np.testing.assert_allclose(again(points), d(points), rtol=1e-13, atol=1e-300)


# --------------------------------------------------------------------------
# Property test: random trees, rendered as text and as numpy
# --------------------------------------------------------------------------

F1 = {
    "sin": np.sin,
    "cos": np.cos,
    "tan": np.tan,
    "arcsin": np.arcsin,
    "asin": np.arcsin,
    "arccos": np.arccos,
    "acos": np.arccos,
    "arctan": np.arctan,
    "atan": np.arctan,
    "sinh": np.sinh,
    "cosh": np.cosh,
    "tanh": np.tanh,
    "arcsinh": np.arcsinh,
    "asinh": np.arcsinh,
    "arccosh": np.arccosh,
    "acosh": np.arccosh,
    "arctanh": np.arctanh,
    "atanh": np.arctanh,
    "exp": np.exp,
    "log": np.log,
    "log10": np.log10,
    "sqrt": np.sqrt,
    "abs": np.abs,
}
F2 = {
    "atan2": np.arctan2,
    "arctan2": np.arctan2,
    "min": np.minimum,
    "max": np.maximum,
    "hypot": np.hypot,
}
BIN = {
    "+": (1, np.add),
    "-": (1, np.subtract),
    "*": (2, np.multiply),
    "/": (2, np.divide),
    "^": (4, lambda a, b: a**b),
    "**": (4, lambda a, b: a**b),
}
SMOOTH = [name for name in F1 if name != "abs"]

numbers = st.one_of(
    st.integers(0, 20).map(str),
    st.floats(0.0, 50.0, allow_nan=False).map(repr),
    st.sampled_from([".5", "2.", "1e-3", "2.5E+1"]),
)
leaves = st.one_of(
    st.just(("var",)),
    numbers.map(lambda s: ("num", s)),
    st.sampled_from([("const", "pi"), ("const", "e")]),
)


def _trees(function_names, two_arg):
    def extend(children):
        options = [
            children.map(lambda a: ("neg", a)),
            st.tuples(st.sampled_from(sorted(BIN)), children, children).map(lambda t: ("bin", *t)),
            st.tuples(st.sampled_from(function_names), children).map(lambda t: ("f1", *t)),
        ]
        if two_arg:
            options.append(
                st.tuples(st.sampled_from(sorted(F2)), children, children).map(lambda t: ("f2", *t))
            )
        return st.one_of(*options)

    return st.recursive(leaves, extend, max_leaves=12)


def render(tree, variable, full_parens=False):
    """Text of a tree with minimal (or full) parentheses, and its precedence."""
    kind = tree[0]
    if kind == "var":
        return variable, 5
    if kind in ("num", "const"):
        return tree[1], 5
    if kind == "f1":
        return f"{tree[1]}({render(tree[2], variable, full_parens)[0]})", 5
    if kind == "f2":
        a = render(tree[2], variable, full_parens)[0]
        b = render(tree[3], variable, full_parens)[0]
        return f"{tree[1]}({a}, {b})", 5
    if kind == "neg":
        text, prec = render(tree[1], variable, full_parens)
        text = f"({text})" if prec < 3 or full_parens else text
        return "-" + text, 3
    op = tree[1]
    prec = BIN[op][0]
    left, lp = render(tree[2], variable, full_parens)
    right, rp = render(tree[3], variable, full_parens)
    if prec == 4:  # right-associative power: atom base, unary-or-tighter exponent
        left_ok, right_ok = lp >= 5, rp >= 3
    else:  # left-associative: keep the tree shape exactly
        left_ok, right_ok = lp >= prec, rp > prec
        if prec == 2:
            right_ok = rp >= 3
    if full_parens:
        left_ok = right_ok = False
    left = left if left_ok else f"({left})"
    right = right if right_ok else f"({right})"
    return f"{left}{op}{right}", prec


def by_numpy(tree, x):
    """Evaluate a tree with numpy directly (all constants as float64)."""
    kind = tree[0]
    if kind == "var":
        return x
    if kind == "num":
        return np.float64(float(tree[1]))
    if kind == "const":
        return np.float64(np.pi if tree[1] == "pi" else np.e)
    if kind == "neg":
        return -by_numpy(tree[1], x)
    if kind == "f1":
        return F1[tree[1]](by_numpy(tree[2], x))
    if kind == "f2":
        return F2[tree[1]](by_numpy(tree[2], x), by_numpy(tree[3], x))
    return BIN[tree[1]][1](by_numpy(tree[2], x), by_numpy(tree[3], x))


def _assert_same(got, want):
    want = np.broadcast_to(np.asarray(want, dtype=np.float64), got.shape)
    np.testing.assert_allclose(got, want, rtol=1e-13, atol=0, equal_nan=True)


PROPERTY_SETTINGS = settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@PROPERTY_SETTINGS
@given(tree=_trees(sorted(F1), two_arg=True), full_parens=st.booleans())
def test_random_formulas_match_numpy(tree, full_parens):
    text = render(tree, "t", full_parens)[0]
    f = parse(text, "t")
    with np.errstate(all="ignore"):
        want = by_numpy(tree, X)
    _assert_same(f(X), want)


@PROPERTY_SETTINGS
@given(tree=_trees(SMOOTH, two_arg=False))
def test_random_derivative_text_round_trips(tree):
    text = render(tree, "x")[0]
    d = parse(text).derivative()
    assume(len(d.text) <= MAX_FORMULA_LENGTH)
    again = parse(d.text)
    got, want = again(X), np.broadcast_to(d(X), X.shape)
    # Folding may flip the sign of a zero (0*0 vs -0.0), which turns 1/0 into -inf: an
    # infinity's sign carries no information about the derivative, so compare finite values.
    finite = np.isfinite(got) & np.isfinite(want)
    np.testing.assert_array_equal(np.isfinite(got), np.isfinite(want))
    _assert_same(got[finite], want[finite])

"""Tests of the bracketed root finder and bounded minimiser (ridesim.roots).

Each function has a root or minimum known in closed form, written beside it; the
reference library (scipy.optimize.brentq and minimize_scalar(method="bounded"),
both implementations of Brent's methods, R. P. Brent, *Algorithms for
Minimization without Derivatives*, 1973, ch. 4-5) is run on the same problem so
the two can be compared.
"""

import math

import pytest
from scipy.optimize import brentq, minimize_scalar

from ridesim.errors import InputError, RidesimError
from ridesim.roots import ConvergenceError, find_minimum, find_root

# (function, bracket, closed-form root, where the root comes from)
ROOTS = [
    (lambda x: x * x - 2.0, (0.0, 2.0), math.sqrt(2.0)),  # x^2 = 2
    (lambda x: math.cos(x) - x, (0.0, 1.0), 0.7390851332151607),  # Dottie number [memory]
    (lambda x: math.exp(x) - 10.0, (0.0, 5.0), math.log(10.0)),  # e^x = 10
    (lambda x: x**3 - 1e-3, (-1.0, 2.0), 0.1),  # cube root of 1e-3
    (lambda x: x**3 - 3 * x - 2, (1.5, 3.0), 2.0),  # (x + 1)^2 (x - 2)
    (lambda x: math.tan(x) - 1.0, (0.0, 1.2), math.pi / 4),  # tan(pi/4) = 1
    (lambda x: math.atan(1e3 * (x - 0.3)), (-5.0, 5.0), 0.3),  # a near-step
    (lambda x: (x - 1e6) * 1e-6, (0.0, 3e6), 1e6),  # large scale: the relative tolerance matters
    (lambda x: 1.0 / (x - 0.5) + 1.0, (-1.0, 0.45), -0.5),  # pole outside
]


@pytest.mark.parametrize("f, bracket, root", ROOTS)
def test_find_root_meets_the_tolerance_at_closed_form_roots(f, bracket, root):
    xtol, rtol = 1e-13, 1e-14
    got = find_root(f, *bracket, xtol=xtol, rtol=rtol)
    ref = brentq(f, *bracket, xtol=xtol, rtol=rtol)
    # Brent's method stops with the root inside an interval of half-width xtol + rtol |x|
    # around its estimate; both estimates must be that close to the closed form.
    tol = 2 * (xtol + rtol * abs(root)) + 4 * math.ulp(root)
    assert abs(got - root) <= tol
    assert abs(ref - root) <= tol


def test_find_root_needs_no_more_evaluations_than_brentq():
    # Brent guarantees convergence within about (log2(range/tol))^2 evaluations, and on
    # smooth roots superlinear convergence; count evaluations against scipy's on the same f.
    for f, bracket, _ in ROOTS:
        n_ours, n_ref = [0], [0]

        def ours(x, f=f, n_ours=n_ours):
            n_ours[0] += 1
            return f(x)

        def ref(x, f=f, n_ref=n_ref):
            n_ref[0] += 1
            return f(x)

        find_root(ours, *bracket, xtol=1e-13, rtol=1e-14)
        brentq(ref, *bracket, xtol=1e-13, rtol=1e-14)
        assert n_ours[0] <= n_ref[0] + 2


def test_find_root_returns_an_exact_end_and_rejects_a_bracket_without_a_sign_change():
    assert find_root(lambda x: x - 1.0, 1.0, 3.0) == 1.0
    with pytest.raises(InputError, match="same sign"):
        find_root(lambda x: x * x + 1.0, -1.0, 1.0)
    with pytest.raises(ValueError):  # InputError is a ValueError, like scipy's error
        find_root(lambda x: x * x + 1.0, -1.0, 1.0)


def test_find_root_reports_non_convergence():
    # A triple root defeats interpolation: Brent's method is then about as slow as bisection
    # with extra steps, and 100 evaluations do not reach 1e-13 at 0 (brentq fails the same way).
    with pytest.raises(ConvergenceError) as info:
        find_root(lambda x: x**3, -1.0, 2.0, xtol=1e-13, rtol=1e-14, maxiter=100)
    assert isinstance(info.value, RidesimError) and isinstance(info.value, RuntimeError)


# (function, bounds, closed-form minimiser)
MINIMA = [
    (lambda x: (x - 1.0) ** 2, (0.0, 3.0), 1.0),
    (lambda x: math.cos(x), (2.0, 4.5), math.pi),  # cos is least at pi
    (lambda x: x * math.log(x), (0.05, 2.0), math.exp(-1.0)),  # d/dx x ln x = ln x + 1 = 0
    (lambda x: abs(x - 0.3), (0.0, 1.0), 0.3),  # a corner: golden section alone
    (lambda x: x**4 - 3 * x, (0.0, 2.0), (0.75) ** (1.0 / 3.0)),  # 4x^3 = 3
    (lambda x: x, (2.0, 5.0), 2.0),  # least at the lower bound (approached, never evaluated)
]


@pytest.mark.parametrize("f, bounds, xmin", MINIMA)
def test_find_minimum_matches_closed_form_and_scipy(f, bounds, xmin):
    xatol = 1e-10
    got = find_minimum(f, *bounds, xatol=xatol)
    ref = minimize_scalar(f, bounds=bounds, method="bounded", options={"xatol": xatol})
    # The stopping rule (Brent 1973, ch. 5; the same as scipy's fminbound) leaves the minimum
    # within 2 (sqrt(eps) |x| + xatol / 3) of the estimate.
    tol = 2 * (math.sqrt(2.220446049250313e-16) * abs(xmin) + xatol / 3)
    assert abs(got.x - xmin) <= tol
    assert abs(ref.x - xmin) <= tol
    assert got.fun == f(got.x)
    assert got.fun <= ref.fun + 1e-12 * max(1.0, abs(ref.fun))
    assert bounds[0] < got.x < bounds[1]


def test_find_minimum_on_a_point_interval_returns_that_point():
    m = find_minimum(lambda x: (x - 1.0) ** 2, 3.0, 3.0)
    assert (m.x, m.fun, m.evaluations) == (3.0, 4.0, 1)


def test_find_minimum_rejects_bad_bounds_and_reports_non_convergence():
    with pytest.raises(InputError, match="lo <= hi"):
        find_minimum(lambda x: x * x, 1.0, 0.0)
    with pytest.raises(InputError, match="lo <= hi"):
        find_minimum(lambda x: x * x, 0.0, math.inf)
    with pytest.raises(ConvergenceError):
        find_minimum(lambda x: abs(x - 0.3), 0.0, 1.0, xatol=1e-12, maxiter=5)

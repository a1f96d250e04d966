"""Bracketed root finding and bounded minimisation of a scalar function (Brent's methods).

Both are R. P. Brent's algorithms from *Algorithms for Minimization without
Derivatives* (Prentice-Hall, 1973): ch. 4 ("zero", bisection safeguarding
secant and inverse quadratic interpolation) and ch. 5 ("localmin", golden
section safeguarding successive parabolic interpolation). They are written
here in plain Python because ridesim needs only a handful of one-dimensional
searches, and importing ``scipy.optimize`` for them costs more start-up time
than every other import of a light command together. The tests compare them
with ``scipy.optimize.brentq`` and ``scipy.optimize.minimize_scalar`` on
functions with closed-form roots and minima.
"""

from __future__ import annotations

import math
from collections.abc import Callable

from ridesim.errors import InputError, RidesimError
from ridesim.records import record

__all__ = ["ConvergenceError", "Minimum", "find_minimum", "find_root"]

_EPS = 2.220446049250313e-16  # IEEE double machine epsilon
_SQRT_EPS = math.sqrt(_EPS)
_GOLDEN = 0.5 * (3.0 - math.sqrt(5.0))  # 0.381966..., the golden-section fraction


class ConvergenceError(RidesimError, RuntimeError):
    """A search did not meet its tolerance within its iteration limit."""


def find_root(
    f: Callable[[float], float],
    a: float,
    b: float,
    *,
    xtol: float = 2e-12,
    rtol: float = 4 * _EPS,
    maxiter: int = 100,
) -> float:
    """A root of ``f`` in ``[a, b]`` where ``f(a)`` and ``f(b)`` differ in sign (Brent's method).

    Each step tries inverse quadratic interpolation (or the secant when only two
    points are distinct) and falls back to bisection whenever the step would leave
    the bracket or shrink it too slowly, so the bracket always holds a sign change
    and the method converges at least as surely as bisection (Brent 1973, ch. 4).

    Parameters
    ----------
    f : callable
        Continuous function of one float returning a float.
    a, b : float
        Bracket ends; ``f(a) * f(b) <= 0``.
    xtol : float
        Absolute tolerance on the root, in the unit of ``a``.
    rtol : float
        Relative tolerance on the root [-]; the root is accurate to about
        ``xtol + rtol * |root|``.
    maxiter : int
        Greatest number of evaluations of ``f`` after the two ends [-].

    Returns
    -------
    float
        The root, to within the tolerance.

    Raises
    ------
    InputError
        If ``f(a)`` and ``f(b)`` have the same sign (no bracketed root), or a tolerance is not positive.
    ConvergenceError
        If ``maxiter`` evaluations do not meet the tolerance.

    Examples
    --------
    >>> round(find_root(lambda x: x * x - 2.0, 0.0, 2.0), 12)
    1.414213562373
    """
    if not (xtol > 0.0 and rtol > 0.0):
        raise InputError(f"find_root: xtol and rtol must be > 0, got {xtol!r} and {rtol!r}")
    fa, fb = float(f(a)), float(f(b))
    if fa == 0.0:
        return float(a)
    if fb == 0.0:
        return float(b)
    if (fa > 0.0) == (fb > 0.0):
        raise InputError(f"find_root: f(a) = {fa:.6g} and f(b) = {fb:.6g} have the same sign on"
                         f" [{a!r}, {b!r}]; give a bracket across which f changes sign")
    # cur: best estimate; pre: previous estimate; blk: contrapoint (f(cur), f(blk) differ in sign).
    pre, fpre, cur, fcur = float(a), fa, float(b), fb
    blk = fblk = spre = scur = 0.0
    for _ in range(maxiter):
        if (fpre > 0.0) != (fcur > 0.0) and fpre != 0.0:
            blk, fblk = pre, fpre
            spre = scur = cur - pre
        if abs(fblk) < abs(fcur):  # keep the smaller residual in cur
            pre, cur, blk = cur, blk, cur
            fpre, fcur, fblk = fcur, fblk, fcur
        tol = 0.5 * (xtol + rtol * abs(cur))
        sbis = 0.5 * (blk - cur)
        if fcur == 0.0 or abs(sbis) < tol:
            return cur
        if abs(spre) > tol and abs(fcur) < abs(fpre):
            if pre == blk:  # secant through the two points
                stry = -fcur * (cur - pre) / (fcur - fpre)
            else:  # inverse quadratic interpolation through all three
                dpre = (fpre - fcur) / (pre - cur)
                dblk = (fblk - fcur) / (blk - cur)
                stry = -fcur * (fblk * dblk - fpre * dpre) / (dblk * dpre * (fblk - fpre))
            if 2.0 * abs(stry) < min(abs(spre), 3.0 * abs(sbis) - tol):
                spre, scur = scur, stry  # accept the interpolation
            else:
                spre = scur = sbis  # bisect
        else:
            spre = scur = sbis  # bisect
        pre, fpre = cur, fcur
        cur += scur if abs(scur) > tol else math.copysign(tol, sbis)
        fcur = float(f(cur))
    b = cur
    raise ConvergenceError(f"find_root: no convergence to xtol = {xtol:g}, rtol = {rtol:g} in"
                           f" {maxiter} iterations (last estimate {b!r})")


@record
class Minimum:
    """Result of :func:`find_minimum`.

    Attributes
    ----------
    x : float
        Where the least value was found, in the unit of the bounds.
    fun : float
        The function's value there.
    evaluations : int
        Number of evaluations of the function [-].
    """

    x: float
    fun: float
    evaluations: int


def find_minimum(
    f: Callable[[float], float],
    lo: float,
    hi: float,
    *,
    xatol: float = 1e-5,
    maxiter: int = 500,
) -> Minimum:
    """A local minimum of ``f`` on ``[lo, hi]`` (Brent's method, golden section with parabolas).

    Each step fits a parabola through the three best points and steps to its
    vertex when that falls well inside the interval and shrinks the steps fast
    enough; otherwise it takes a golden-section step (Brent 1973, ch. 5). The end
    points themselves are never evaluated. The stopping test is Brent's (the one
    ``scipy.optimize.fminbound`` also uses): the interval is shrunk to about
    ``2 * (sqrt(eps) * |x| + xatol / 3)`` around the estimate.

    Parameters
    ----------
    f : callable
        Function of one float returning a float.
    lo, hi : float
        Bounds, ``lo <= hi`` (equal bounds return ``f(lo)``).
    xatol : float
        Absolute tolerance on the position of the minimum, in the unit of the bounds.
    maxiter : int
        Greatest number of evaluations [-].

    Returns
    -------
    Minimum
        Position, value and evaluation count.

    Raises
    ------
    InputError
        If the bounds are not finite and increasing or ``xatol`` is not positive.
    ConvergenceError
        If ``maxiter`` evaluations do not meet the tolerance.

    Examples
    --------
    >>> m = find_minimum(lambda x: (x - 1.0) ** 2, 0.0, 3.0, xatol=1e-10)
    >>> abs(m.x - 1.0) < 1e-7
    True
    """
    if not (math.isfinite(lo) and math.isfinite(hi) and lo <= hi):
        raise InputError(f"find_minimum: the bounds must be finite with lo <= hi, got {lo!r}, {hi!r}")
    if not xatol > 0.0:
        raise InputError(f"find_minimum: xatol must be > 0, got {xatol!r}")
    if lo == hi:  # a point: nothing to search (as fminbound)
        return Minimum(x=float(lo), fun=float(f(lo)), evaluations=1)
    a, b = float(lo), float(hi)
    x = w = v = a + _GOLDEN * (b - a)
    fx = fw = fv = float(f(x))
    n = 1
    d = e = 0.0
    while True:
        xm = 0.5 * (a + b)
        tol1 = _SQRT_EPS * abs(x) + xatol / 3.0
        tol2 = 2.0 * tol1
        if abs(x - xm) <= tol2 - 0.5 * (b - a):
            return Minimum(x=x, fun=fx, evaluations=n)
        if n >= maxiter:
            raise ConvergenceError(f"find_minimum: no convergence to xatol = {xatol:g} in"
                                   f" {maxiter} evaluations (last estimate {x!r})")
        golden = True
        if abs(e) > tol1:  # try a parabola through x, w, v
            r = (x - w) * (fx - fv)
            q = (x - v) * (fx - fw)
            p = (x - v) * q - (x - w) * r
            q = 2.0 * (q - r)
            if q > 0.0:
                p = -p
            q = abs(q)
            e_prev, e = e, d
            if abs(p) < abs(0.5 * q * e_prev) and q * (a - x) < p < q * (b - x):
                d = p / q
                u = x + d
                if (u - a) < tol2 or (b - u) < tol2:  # too near an end: step by tol1 inwards
                    d = math.copysign(tol1, xm - x)
                golden = False
        if golden:
            e = (b - x) if x < xm else (a - x)
            d = _GOLDEN * e
        u = x + d if abs(d) >= tol1 else x + math.copysign(tol1, d)
        fu = float(f(u))
        n += 1
        if fu <= fx:
            if u < x:
                b = x
            else:
                a = x
            v, fv, w, fw, x, fx = w, fw, x, fx, u, fu
        else:
            if u < x:
                a = u
            else:
                b = u
            if fu <= fw or w == x:
                v, fv, w, fw = w, fw, u, fu
            elif fu <= fv or v == x or v == w:
                v, fv = u, fu

"""Tests of the polynomial tables (ridesim.solve.table): closed forms, and one answer per point.

A table is evaluated by one of several routes chosen by the number and order of the points
(Python floats for a few, cell by cell for ascending runs, per-point gathers otherwise). A
point's value must not depend on the route, or a figure would change with the size of the
array it happens to be evaluated in; each test below compares the routes bit for bit and
checks the values against the closed form of the tabulated function.
"""

import math

import numpy as np

import ridesim as rs
from ridesim.solve.table import _horner, build_map


def _exp_table():
    # g(s) = e^s on [0, 2], G(s) = e^s - 1 (G0 = 0): the antiderivative in closed form.
    return build_map(np.exp, [0.0, 1.0, 2.0], G0=0.0).forward


def test_wrapped_samples_match_closed_form_and_every_route():
    """A period's samples whose last one wrapped round (runs in cell order, not ascending)."""
    tab = _exp_table()
    s = np.linspace(0.0, 2.0, 4097)
    s[-1] = 0.0  # as np.mod(x, period) makes of the closing sample
    G = tab.G(s)
    g, dg = tab.g_and_dg(s)
    # Closed forms: G = e^s - 1, g = e^s, dg = e^s (tail test at 1e-13 of the scale; values within ~3e-12).
    np.testing.assert_allclose(G, np.expm1(s), rtol=0, atol=1e-12 * math.e**2)
    np.testing.assert_allclose(g, np.exp(s), rtol=1e-11)
    np.testing.assert_allclose(dg, np.exp(s), rtol=1e-9)
    # Per-point gathers (the general route) give the same bits.
    idx, t = tab._locate(s)
    assert np.array_equal(G, _horner(tab.G_coef, idx, t))
    assert np.array_equal(g, _horner(tab.g_coef, idx, t))
    assert np.array_equal(g, tab.g(s))
    assert np.array_equal(dg, tab.dg(s))
    # ... and so do a few points at a time (Python floats) and shuffled points (gathers).
    for k in range(0, s.size, 613):
        assert np.array_equal(tab.G(s[k:k + 5]), G[k:k + 5])
    perm = np.random.default_rng(1).permutation(s.size)
    assert np.array_equal(tab.G(s[perm]), G[perm])


def test_solved_track_height_and_slope_in_one_pass():
    """``y_and_slope`` gives ``y`` and ``slope`` exactly, and the slope is ``dy/dx``."""
    pair = rs.track_for(rs.Wheel.ellipse((0.05, 0.04), axle=(0.03, 0.0)))
    tr = pair.track
    x = tr.period * np.linspace(0.0, 1.0, 2049)
    y, m = tr.y_and_slope(x)
    assert np.array_equal(y, tr.y(x))
    assert np.array_equal(m, tr.slope(x))
    # Central difference, error ~ h^2 |y'''| / 6 (definition of the derivative).
    h = 1e-5 * tr.period
    xi = x[1:-1]
    fd = (tr.y(xi + h) - tr.y(xi - h)) / (2 * h)
    np.testing.assert_allclose(m[1:-1], fd, rtol=0, atol=1e-6)


def test_initial_cells_are_numpy_linspace_per_piece():
    # Reference: numpy.linspace over each piece, as the cells were first laid (one call a
    # piece); the vectorised layout must give the same edges to the last bit.
    from ridesim.solve.table import _initial_cells

    rng = np.random.default_rng(7)
    for trial in range(100):
        br = np.sort(rng.uniform(-3.0, 5.0, int(rng.integers(2, 60))))
        if trial % 3 == 0:  # repeated breaks: empty pieces are skipped
            br = np.sort(np.concatenate([br, br[:3]]))
        cells = int(rng.integers(1, 400))
        ref = []
        for a, b in zip(br[:-1], br[1:], strict=True):
            if b <= a:
                continue
            e = np.linspace(a, b, int(np.ceil(max(1, cells * (b - a) / (br[-1] - br[0])))) + 1)
            ref += list(zip(e[:-1].tolist(), e[1:].tolist(), strict=True))
        assert [(lo, hi) for lo, hi, _ in _initial_cells(br, cells)] == ref

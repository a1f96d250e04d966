"""Multi-axle carts: wheel phasing, resting axle heights, chassis pitch and seat bounce.

Each wheel's ideal angle follows from its own position on the track,
``wheel_angle(x + offset_i)``. Uncoupled wheels find that angle by rolling, so
any wheelbase rides level (but their shafts turn at different rates, so each
needs its own drive or a differential). Wheels coupled to one shaft keep the
relative angles they were assembled with; when the wheelbase is not a whole
number of track periods those angles drift from the ideal ones and the cart
bounces and pitches.

The quasi-static model here: the rear wheel's angle follows its ideal one, each
other wheel keeps its assembly angle relative to it (plus any mounting error
``vehicle.phase_offsets_rad``), and every wheel rests on the track at the
lowest axle height that keeps its whole outline on or above the track,
``h = max over rim points (y_track(x + p_x) - p_y)``. The chassis then rests on
those heights as a rigid beam with the least body height (a two-variable linear
programme, solved over the pairs of supporting axles); a wheel below the beam has
lifted off. This ignores the slip and dynamics that the simulation includes.

A wheelbase is judged as a builder measures it: within ``vehicle.wheelbase_tolerance_m``
of a whole number of track periods it is in phase; farther off, coupled wheels are out of
phase only when the cart's bounce, pitch or skid (the slip one shaft angle forces) exceed
those of a wheelbase off by the tolerance, so round wheels are in phase at any wheelbase.
"""

from __future__ import annotations

import math

import numpy as np

from ridesim.assess.clearance import _BoxTree, _LineEnvelope
from ridesim.assess.findings import Finding
from ridesim.errors import InputError
from ridesim.model.vehicle import axle_offsets_m
from ridesim.records import record
from ridesim.solve.pair import RollingPair

__all__ = ["resting_height", "PhasingResult", "cart_phasing", "band_limited_peak_accel",
           "SEAT_BAND_HZ"]

TWO_PI = 2.0 * math.pi

SEAT_BAND_HZ = 80.0
"""Highest frequency [Hz] kept in the seat acceleration estimate: the top of the band that the
ISO 2631-1 weightings cover (0.5-80 Hz). Where a wheel's resting contact jumps (a vertex meets
the next arch) the quasi-static seat height has a kink, an impact whose acceleration is
unbounded; cut at the standard's band the estimate is a finite figure that finer sampling
does not change."""

MAX_SAMPLES = 8192
"""Most chassis positions per revolution for a seat acceleration estimate (about 0.5 s of
work); a slower cart gets a lower band, and says so."""


def band_limited_peak_accel(height_m: np.ndarray, period_s: float, band_hz: float,
                            oversample: int = 4) -> float:
    """Peak ``|d^2 h / dt^2|`` [m/s^2] of a periodic record, keeping harmonics up to ``band_hz``.

    Parameters
    ----------
    height_m : ndarray, shape (n,)
        One period of a height [m], sampled evenly in time (no repeat of the first sample).
    period_s : float
        The period [s].
    band_hz : float
        Highest harmonic frequency [Hz] kept.
    oversample : int
        The acceleration is evaluated on a grid this many times finer (by zero padding), so
        that a peak between samples is not missed.

    Returns
    -------
    float

    Examples
    --------
    >>> t = np.arange(256) / 256.0
    >>> round(band_limited_peak_accel(0.001 * np.cos(2 * np.pi * 3 * t), 1.0, 80.0), 6)
    0.355306
    """
    h = np.asarray(height_m, dtype=float)
    n = h.size
    spec = np.fft.rfft(h)
    f = np.arange(spec.size) / period_s
    acc = -((TWO_PI * f) ** 2) * spec
    acc[f > band_hz] = 0.0
    m = oversample * n
    a = np.fft.irfft(acc, n=m) * (m / n)
    return float(np.max(np.abs(a)))


class _Rim:
    """The rim as a closed curve ``p(u)`` with ``u`` in [0, n).

    Polygon wheels: vertex ``i`` at ``u = i``, straight edges between; smooth wheels: polar
    angle ``2 pi u / n``.
    """

    def __init__(self, pair: RollingPair, n_smooth: int = 720, per_edge: int = 24) -> None:
        w = pair.wheel
        self.wheel = w
        self.v: np.ndarray | None
        if w.is_polygon:
            self.v = np.asarray(w.vertices)
            self.n = len(self.v)
            self.per = per_edge
        else:
            self.v = None
            self.n = n_smooth
            self.per = 1
        self.u = np.arange(self.n * self.per) / self.per

    def points(self, u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        if self.v is not None:
            i = np.floor(u).astype(int) % self.n
            f = u - np.floor(u)
            a, b = self.v[i], self.v[(i + 1) % self.n]
            p = a + f[..., None] * (b - a)
            return p[..., 0], p[..., 1]
        phi = TWO_PI * u / self.n
        r = self.wheel.radius(phi)
        return r * np.cos(phi), r * np.sin(phi)


def _golden(f, lo: np.ndarray, hi: np.ndarray, steps: int) -> np.ndarray:
    """Largest value of ``f`` on ``[lo, hi]`` (elementwise) by golden-section search."""
    gr = 0.5 * (math.sqrt(5.0) - 1.0)
    pc, pd = hi - gr * (hi - lo), lo + gr * (hi - lo)
    fc, fd = f(pc), f(pd)
    for _ in range(steps):
        left = fc > fd  # the maximum lies in [lo, pd]
        hi = np.where(left, pd, hi)
        lo = np.where(left, lo, pc)
        new_pt = np.where(left, hi - gr * (hi - lo), lo + gr * (hi - lo))
        f_new = f(new_pt)
        pd, fd, pc, fc = (np.where(left, pc, new_pt), np.where(left, fc, f_new),
                          np.where(left, new_pt, pd), np.where(left, f_new, fd))
    return np.maximum(np.maximum(fc, fd), np.maximum(f(lo), f(hi)))


def resting_height(pair: RollingPair, x_m, theta_rad, *, chunk: int = 2048,
                   refine: int = 40) -> np.ndarray:
    """Lowest axle height [m] at which the wheel, turned ``theta``, sits on the track at ``x``.

    Parameters
    ----------
    pair : RollingPair
        The solved pair (its track and wheel).
    x_m : array_like
        Axle positions [m].
    theta_rad : array_like
        Clockwise wheel angles [rad] (same shape as ``x_m``).
    chunk : int
        Poses evaluated at once (bounds memory; each pose keeps only a few rim runs).
    refine : int
        Golden-section steps that refine the touching rim point between samples.

    Returns
    -------
    ndarray
        ``max over the rim (y_track(x + p_x) - p_y)`` for each pose; 0 for the ideal pose.

    Notes
    -----
    The best rim sample is found by branch and bound over the rim's hierarchy of boxes
    (see :mod:`ridesim.assess.clearance`): a run of samples is dropped only when a bound
    shows it cannot beat a gap some sample attains, so the result is that of trying every
    sample, at a cost that grows about as the logarithm of the rim size per pose.
    """
    x = np.atleast_1d(np.asarray(x_m, dtype=float))
    th = np.broadcast_to(np.asarray(theta_rad, dtype=float), x.shape)
    rim = _Rim(pair)
    px0, py0 = rim.points(rim.u)
    out = np.empty(x.shape)
    m = px0.size
    # Rim samples in order of polar angle (a star-shaped rim's order, up to where it wraps).
    phi0 = np.mod(np.arctan2(py0, px0), TWO_PI)
    by_angle = np.argsort(phi0, kind="stable")
    phi_sorted = phi0[by_angle]
    tree = _BoxTree(np.column_stack([px0, py0]), edges=False)
    per_rev = max(1, int(round(pair.revolution_length / pair.track.period)))
    lines = _LineEnvelope(pair.track, min(1 << 17, 2 * rim.n // per_rev + 1))

    def gap(xs, c, s, u):
        px, py = rim.points(u)
        # Clockwise rotation by theta: (px, py) -> (c px + s py, -s px + c py).
        X = c * px + s * py
        Y = -s * px + c * py
        return pair.track.y(xs + X) - Y

    def sample_gap(pi, ki, xs, c, s):
        # gap() at rim samples ki for poses pi, element by element.
        X = c[pi] * px0[ki] + s[pi] * py0[ki]
        Y = -s[pi] * px0[ki] + c[pi] * py0[ki]
        return np.asarray(pair.track.y(xs[pi] + X), dtype=float) - Y

    step = max(1, int(chunk))
    for a in range(0, x.size, step):
        xs, ts = x[a:a + step], th[a:a + step]
        nq = len(xs)
        c, s = np.cos(ts), np.sin(ts)
        # The samples either side of the ray straight down touch in the ideal pose: the larger
        # of their gaps is a floor for the best sample, and rim runs whose bound on the gap
        # (see _BoxTree) falls below that floor cannot hold the best sample.
        j = np.searchsorted(phi_sorted, np.mod(ts - 0.5 * math.pi, TWO_PI))
        near = np.stack([by_angle[j % m], by_angle[j - 1]], axis=1)
        q = np.repeat(np.arange(nq), 2)
        floor = sample_gap(q, near.ravel(), xs, c, s).reshape(nq, 2).max(axis=1)
        pi, ki = tree.candidates(xs, c, s, lines, floor, lower=False,
                                 probe=lambda pi, ki, xs=xs, c=c, s=s: sample_gap(pi, ki, xs, c, s))
        # Keep the floor's own samples whatever the bounds say, then order by pose and sample.
        pi = np.concatenate([pi, q])
        ki = np.concatenate([ki, near.ravel()])
        order = np.lexsort((ki, pi))
        pi, ki = pi[order], ki[order]
        dup = np.concatenate(([False], (pi[1:] == pi[:-1]) & (ki[1:] == ki[:-1])))
        pi, ki = pi[~dup], ki[~dup]
        g = sample_gap(pi, ki, xs, c, s)
        # Per pose, the largest gap and (among equal ones) the first sample, as argmax gives.
        order = np.lexsort((ki, -g, pi))
        first = order[np.concatenate(([True], pi[order][1:] != pi[order][:-1]))]
        k = np.empty(nq, dtype=np.int64)
        best = np.empty(nq)
        k[pi[first]] = ki[first]
        best[pi[first]] = g[first]
        # Refine on each side of the best sample (golden section on the rim parameter; each
        # side is smooth, a vertex sits at most at its end), and try the rim point on the
        # ray straight down, which touches exactly in the ideal pose.
        def along(u, xs=xs, cc=c, ss=s):
            return gap(xs, cc, ss, u)

        f1 = _golden(along, rim.u[k] - 1.0 / rim.per, rim.u[k], refine)
        f2 = _golden(along, rim.u[k], rim.u[k] + 1.0 / rim.per, refine)
        r_down = pair.wheel.radius(ts - 0.5 * math.pi)
        f_down = pair.track.y(xs) + r_down
        best = np.maximum(best, f_down)
        out[a:a + step] = np.maximum(best, np.maximum(f1, f2))
    return out


@record
class PhasingResult:
    """How a cart's wheels meet the track over one revolution.

    Attributes
    ----------
    coupled : bool
        Whether the wheels share one shaft angle.
    wheelbase_periods : float
        Wheelbase over the track period (a whole number keeps coupled wheels in phase).
    phase_error_rad : ndarray, shape (axles,)
        Largest angle [rad] by which each wheel departs from its ideal angle.
    x_m : ndarray
        Chassis positions [m] over one revolution.
    axle_height_m : ndarray, shape (axles, n)
        Axle heights [m] (0 for an ideal ride).
    pitch_rad : ndarray
        Chassis pitch [rad], nose up positive.
    seat_height_m : ndarray
        Seat point height [m].
    load_share : ndarray, shape (axles,)
        Fraction of the time-averaged static load carried by each axle.
    lifted : ndarray of bool, shape (axles,)
        True for an axle whose wheel leaves the track somewhere in the cycle.
    bounce_m, pitch_range_rad, seat_bounce_m : float
        Peak-to-peak axle height (worst axle), pitch and seat height.
    seat_accel_peak_m_s2 : float or None
        Peak vertical seat acceleration [m/s^2] at the given speed (``v² d²y/dx²``), keeping
        vibration up to :data:`SEAT_BAND_HZ` (see :func:`band_limited_peak_accel`).
    findings : tuple of Finding
        What the phasing found (codes and figures; :mod:`ridesim.assess.wording` words them).
    whole_periods : int
        The whole number of track periods nearest the wheelbase (at least 1; 0 for one axle).
    wheelbase_error_m : float
        Wheelbase minus ``whole_periods`` track periods [m].
    skid_m : float
        Slip [m] per wheel turn that one shaft angle forces on the worst axle: a wheel turning
        at the rear wheel's rate ``1/r_0`` over a contact at radius ``r_i`` slides
        ``|r_i / r_0 - 1|`` per metre travelled, ``skid = max_i int_0^L |r_i/r_0 - 1| dx``
        (first order: the contacts taken at their ideal points). For uncoupled wheels it is the
        slip a shared shaft would force.
    wheelbase_tolerance_m : float
        Build tolerance [m] the wheelbase is judged against.
    tolerance_cost : dict or None
        ``bounce_m``, ``pitch_range_rad`` and ``skid_m`` of the worse of the wheelbases
        ``whole_periods`` periods plus and minus the tolerance; None when the wheelbase is
        within the tolerance of a whole number of periods (or the cart has one axle).
    out_of_phase : bool
        True for coupled wheels whose wheelbase costs more bounce, pitch or skid than a
        wheelbase off by the build tolerance: the cart will not ride level.
    """

    coupled: bool
    wheelbase_periods: float
    phase_error_rad: np.ndarray
    x_m: np.ndarray
    axle_height_m: np.ndarray
    pitch_rad: np.ndarray
    seat_height_m: np.ndarray
    load_share: np.ndarray
    lifted: np.ndarray
    bounce_m: float
    pitch_range_rad: float
    seat_bounce_m: float
    seat_accel_peak_m_s2: float | None
    findings: tuple[Finding, ...]
    whole_periods: int = 0
    wheelbase_error_m: float = 0.0
    skid_m: float = 0.0
    wheelbase_tolerance_m: float = 0.0
    tolerance_cost: dict | None = None
    out_of_phase: bool = False

    def to_dict(self) -> dict:
        """Summary with units in the keys (JSON-ready).

        Returns
        -------
        dict
        """
        return {
            "coupled": self.coupled,
            "wheelbase_periods": float(self.wheelbase_periods),
            "phase_error_rad": [float(v) for v in self.phase_error_rad],
            "load_share": [float(v) for v in self.load_share],
            "lifted": [bool(v) for v in self.lifted],
            "bounce_m": float(self.bounce_m),
            "pitch_range_rad": float(self.pitch_range_rad),
            "seat_bounce_m": float(self.seat_bounce_m),
            "seat_accel_peak_m_s2": self.seat_accel_peak_m_s2,
            "whole_periods": int(self.whole_periods),
            "wheelbase_error_m": float(self.wheelbase_error_m),
            "skid_m": float(self.skid_m),
            "wheelbase_tolerance_m": float(self.wheelbase_tolerance_m),
            "tolerance_cost": (None if self.tolerance_cost is None
                               else {k: float(v) for k, v in self.tolerance_cost.items()}),
            "out_of_phase": bool(self.out_of_phase),
            "findings": [f.to_dict() for f in self.findings],
        }


def _rest_beam(xa: np.ndarray, h: np.ndarray):
    """Lowest line ``a + b x`` on or above points ``(xa_i, h_i)`` at x = 0, per column."""
    n = len(xa)
    if n == 1:
        return h[0].copy(), np.zeros(h.shape[1])
    best_a = np.full(h.shape[1], np.inf)
    best_b = np.zeros(h.shape[1])
    tol = 1e-12 * max(1.0, float(np.max(np.abs(h))))
    for i in range(n):
        for j in range(i + 1, n):
            b = (h[j] - h[i]) / (xa[j] - xa[i])
            a = h[i] - b * xa[i]
            ok = np.all(a[None, :] + b[None, :] * xa[:, None] >= h - tol, axis=0)
            better = ok & (a < best_a)
            best_a = np.where(better, a, best_a)
            best_b = np.where(better, b, best_b)
    return best_a, best_b


def _skid_m(pair: RollingPair, offs: np.ndarray, x: np.ndarray) -> float:
    """Worst axle's slip [m] per wheel turn at the rear wheel's shaft rate (see PhasingResult)."""
    if len(offs) < 2:
        return 0.0
    r = np.array([pair.contact_radius(x + o) for o in offs])
    slip = np.abs(r[1:] / r[:1] - 1.0)
    return float(np.max(slip.mean(axis=1)) * pair.revolution_length)


def _length_digits(tol_m: float) -> int:
    """Decimals [m] that print a length to within ``tol_m`` (at least 4: 0.1 mm)."""
    if tol_m <= 0:
        return 9
    return int(min(9, max(4, math.ceil(-math.log10(tol_m)))))


def _exceeds(cost: dict, limit: dict, size: float) -> bool:
    """Whether any of bounce, pitch and skid is above the limit (past round-off)."""
    return (cost["bounce_m"] > limit["bounce_m"] * (1 + 1e-6) + 1e-9 * size
            or cost["pitch_range_rad"] > limit["pitch_range_rad"] * (1 + 1e-6) + 1e-9
            or cost["skid_m"] > limit["skid_m"] * (1 + 1e-6) + 1e-9 * size)


def _tolerance_cost(pair: RollingPair, vehicle, wheelbase_m: float, tol: float,
                    samples: int, phase_offsets_rad) -> dict:
    """Bounce, pitch and skid of the worse of ``wheelbase_m`` plus and minus ``tol``.

    The same mounting errors act, so that only the wheelbase differs.
    """
    from dataclasses import replace

    worst = {"bounce_m": 0.0, "pitch_range_rad": 0.0, "skid_m": 0.0}
    for wb in (wheelbase_m - tol, wheelbase_m + tol):
        if wb <= 0:
            continue
        if vehicle.coupled:
            v = replace(vehicle, wheelbase_m=wb, wheelbase_periods=None)
            res = cart_phasing(pair, v, samples=samples, phase_offsets_rad=phase_offsets_rad,
                               _judge=False)
            cost = {"bounce_m": res.bounce_m, "pitch_range_rad": res.pitch_range_rad,
                    "skid_m": res.skid_m}
        else:  # uncoupled wheels ride level: only the shafts' rates differ
            x = np.linspace(0.0, pair.revolution_length, samples, endpoint=False)
            cost = {"bounce_m": 0.0, "pitch_range_rad": 0.0,
                    "skid_m": _skid_m(pair, axle_offsets_m(vehicle.axles, wb), x)}
        worst = {k: max(worst[k], float(cost[k])) for k in worst}
    return worst


def _seat_sampling(rev_length_m: float, speed_m_s: float | None, samples: int) -> tuple[int, float]:
    """Chassis positions over a revolution and the seat band [Hz] they resolve.

    At a speed, four samples a cycle of the band's top harmonic, in a power of two (at most
    ``MAX_SAMPLES``; the band is lowered to what they resolve).
    """
    band = SEAT_BAND_HZ
    if speed_m_s is not None and speed_m_s != 0:
        rev_s = rev_length_m / abs(float(speed_m_s))
        need = 2 ** math.ceil(math.log2(max(8.0, 4.0 * SEAT_BAND_HZ * rev_s)))
        samples = max(samples, min(need, MAX_SAMPLES))
        band = min(SEAT_BAND_HZ, samples / (4.0 * rev_s))
    return samples, band


def _wheel_angles(pair: RollingPair, coupled: bool, offs: np.ndarray, x: np.ndarray,
                  deltas: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each axle's wheel angle [rad] at chassis positions ``x`` [m], and its largest phase error [rad].

    Uncoupled wheels each roll at their own ideal angle; coupled wheels turn together from
    their assembly angles (relative to the rear wheel), plus their mounting errors ``deltas``.
    """
    ideal = np.array([pair.wheel_angle(x + o) for o in offs])
    if coupled:
        start = ideal[:, :1] - ideal[:1, :1]  # assembly angles relative to the rear wheel
        theta = ideal[:1, :] + start + deltas[:, None]
    else:
        theta = ideal.copy()
    err = np.abs((theta - ideal + math.pi) % TWO_PI - math.pi)
    return theta, err.max(axis=1)


def _load_share(offs: np.ndarray, on: np.ndarray) -> np.ndarray:
    """Static load share of each axle, time-averaged: axles on the beam share it by the lever rule.

    ``offs`` are the axle offsets [m] from the load point, ``on[i, k]`` whether axle ``i``
    bears on the chassis beam at position ``k``.
    """
    share = np.zeros(offs.size)
    n = on.shape[1]
    for k in range(n):
        idx = np.flatnonzero(on[:, k])
        if idx.size == 1:
            share[idx[0]] += 1.0
        elif idx.size >= 2:
            lo_, hi_ = idx.min(), idx.max()
            if offs[hi_] > 0 >= offs[lo_] or offs[lo_] < 0 <= offs[hi_]:
                wgt = (offs[hi_] - 0.0) / (offs[hi_] - offs[lo_])
                if idx.size == 2:
                    share[lo_] += wgt
                    share[hi_] += 1.0 - wgt
                else:  # several axles on the beam: equal shares (statically indeterminate)
                    share[idx] += 1.0 / idx.size
            else:
                share[idx] += 1.0 / idx.size
    share /= n
    return share


def _wheelbase_findings(vehicle, P: float, size: float, tol: float, wb_periods: float,
                        whole_n: int, wb_err: float, cost: dict, tol_cost: dict,
                        phase_error_max_rad: float) -> list[Finding]:
    """Findings on a wheelbase off a whole number of periods by more than the tolerance.

    ``cost`` (bounce, pitch range, skid) is the wheelbase's, ``tol_cost`` that of one off by
    the tolerance ``tol`` [m]; the fix offered is the nearer of the whole numbers of periods
    on either side that keeps neighbouring wheels clear of each other (a wheelbase of at
    least 2 r_max, ``size`` [m] being r_max).
    """
    findings: list[Finding] = []
    costly = _exceeds(cost, tol_cost, size)
    fits = [k for k in sorted({math.floor(wb_periods), math.ceil(wb_periods)},
                              key=lambda k: abs(k - wb_periods))
            if k >= 1 and k * P >= 2.0 * size * (1 - 1e-9)]
    k_fix = fits[0] if fits else max(1, math.ceil(2.0 * size / P - 1e-9))
    good = f"{k_fix * P:.{_length_digits(tol)}f} m"
    bounce, skid = cost["bounce_m"], cost["skid_m"]
    if vehicle.coupled and costly:
        findings.append(Finding("wheelbase_out_of_phase", {
            "wheelbase_m": float(vehicle.wheelbase_m), "wheelbase_periods": float(wb_periods),
            "wheelbase_error_m": wb_err, "whole_periods": int(whole_n), "period_m": float(P),
            "wheelbase_tolerance_m": tol, "phase_error_max_rad": phase_error_max_rad,
            "bounce_m": bounce, "pitch_range_rad": float(cost["pitch_range_rad"]),
            "skid_m": float(skid), "tolerance_cost": dict(tol_cost),
            "fix_m": float(k_fix * P), "fix_text": good, "fix_periods": int(k_fix)}))
    if not vehicle.coupled and costly:
        findings.append(Finding("wheelbase_uncoupled_rates", {
            "wheelbase_periods": float(wb_periods), "skid_m": float(skid),
            "fix_m": float(k_fix * P), "fix_text": good, "fix_periods": int(k_fix)}))
    return findings


def cart_phasing(pair: RollingPair, vehicle, *, speed_m_s: float | None = None,
                 phase_offsets_rad=None, samples: int = 720,
                 wheelbase_tolerance_m: float | None = None,
                 _judge: bool = True) -> PhasingResult:
    """Phase errors, axle heights, chassis pitch and seat bounce of a cart over a revolution.

    Parameters
    ----------
    pair : RollingPair
        The solved pair every axle rolls on.
    vehicle : VehicleSpec
        Axles, wheelbase [m], coupling, seat point [m].
    speed_m_s : float, optional
        Speed [m/s] for the seat acceleration estimate.
    phase_offsets_rad : sequence of float, optional
        Mounting error [rad] of each wheel on a shared shaft (coupled wheels only).
    samples : int
        Chassis positions over one revolution.
    wheelbase_tolerance_m : float, optional
        Build tolerance [m] of the wheelbase; default ``vehicle.wheelbase_tolerance_m``.
        A wheelbase within it of a whole number of track periods is in phase; one farther off
        is judged by what it costs: coupled wheels are out of phase when the cart bounces,
        pitches or skids more than on a wheelbase off by the tolerance.

    Returns
    -------
    PhasingResult
    """
    base_samples = samples
    offs = axle_offsets_m(vehicle.axles, vehicle.wheelbase_m)
    n_ax = len(offs)
    deltas = np.zeros(n_ax) if phase_offsets_rad is None else np.asarray(phase_offsets_rad, float)
    if deltas.shape != (n_ax,):
        raise InputError(f"phase_offsets_rad must give one angle per axle ({n_ax}),"
                         f" got {np.shape(phase_offsets_rad)}")
    P, L = pair.track.period, pair.revolution_length
    wb_periods = float(vehicle.wheelbase_m / P) if n_ax > 1 else 0.0
    samples, band = _seat_sampling(L, speed_m_s, samples)
    x = np.linspace(0.0, L, samples, endpoint=False)
    theta, phase_error = _wheel_angles(pair, vehicle.coupled, offs, x, deltas)
    heights = np.array([resting_height(pair, x + o, th) for o, th in zip(offs, theta, strict=True)])
    a, b = _rest_beam(offs, heights)
    beam = a[None, :] + b[None, :] * offs[:, None]
    gap = beam - heights
    size = float(pair.depth_range()[1])
    lifted = np.any(gap > 1e-6 * size, axis=1)
    share = _load_share(offs, gap <= 1e-6 * size)
    pitch = np.arctan(b)
    sx, sy = vehicle.seat_m
    seat = a + b * sx + sy * np.cos(pitch) - sy
    seat_acc = None
    findings: list[Finding] = []
    if speed_m_s is not None and speed_m_s != 0 and samples >= 8:
        # At steady speed v the seat height over time is h(v t); its acceleration within the
        # ISO 2631-1 band.
        seat_acc = band_limited_peak_accel(seat, L / abs(float(speed_m_s)), band)
        if band < SEAT_BAND_HZ:
            findings.append(Finding("seat_band_limited", {
                "band_hz": float(band), "turn_s": float(L / abs(float(speed_m_s)))}))
    bounce = float(np.max(np.ptp(heights, axis=1)))
    tol = float(vehicle.wheelbase_tolerance_m if wheelbase_tolerance_m is None
                else wheelbase_tolerance_m)
    if not tol >= 0 or not math.isfinite(tol):
        raise InputError(f"wheelbase_tolerance_m must be a length >= 0, got {tol!r}")
    skid = _skid_m(pair, offs, x)
    whole_n = max(1, round(wb_periods)) if n_ax > 1 else 0
    wb_err = float(vehicle.wheelbase_m - whole_n * P) if n_ax > 1 else 0.0
    tol_cost = None
    out_of_phase = False
    if n_ax > 1 and _judge and abs(wb_err) > tol:
        # Judge the wheelbase by what it costs against what the build tolerance costs anyway.
        tol_cost = _tolerance_cost(pair, vehicle, whole_n * P, tol, base_samples,
                                   phase_offsets_rad)
        cost = {"bounce_m": bounce, "pitch_range_rad": float(np.ptp(pitch)), "skid_m": skid}
        wb_found = _wheelbase_findings(vehicle, P, size, tol, wb_periods, whole_n, wb_err, cost,
                                       tol_cost, float(phase_error.max()))
        out_of_phase = any(f.code == "wheelbase_out_of_phase" for f in wb_found)
        findings += wb_found
    if n_ax > 1 and np.any(lifted):
        findings.append(Finding("axles_lift", {"axles": [int(i) for i in np.flatnonzero(lifted)]}))
    if vehicle.coupled and np.any(deltas):
        findings.append(Finding("mounting_errors", {
            "offsets_rad": [float(d) for d in deltas], "bounce_m": bounce,
            "pitch_range_rad": float(np.ptp(pitch))}))
    return PhasingResult(
        coupled=bool(vehicle.coupled), wheelbase_periods=wb_periods,
        phase_error_rad=phase_error, x_m=x, axle_height_m=heights, pitch_rad=pitch,
        seat_height_m=seat, load_share=share, lifted=lifted,
        bounce_m=bounce, pitch_range_rad=float(np.ptp(pitch)),
        seat_bounce_m=float(np.ptp(seat)), seat_accel_peak_m_s2=seat_acc, findings=tuple(findings),
        whole_periods=whole_n, wheelbase_error_m=wb_err, skid_m=skid, wheelbase_tolerance_m=tol,
        tolerance_cost=tol_cost, out_of_phase=out_of_phase)

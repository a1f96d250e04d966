"""Ride metrics from probe time series: bounce, slip onset, drive torque, speed.

Every function here is a pure function of a :class:`~ridesim.sim.engine.Probes`
record (or of plain arrays), so any engine that fills the record is measured the
same way. :func:`simulate` runs the rigid-body engine on a scenario and wraps
the probes and metrics in a :class:`SimResult` (the JSON contract of
``ridesim simulate``).

Only the time after ``run.settle_s`` counts: the run starts from the ideal pose
and speed, and the first moments carry the start-up transient.

Torque, shaft speed and power are per motor (:func:`ridesim.model.vehicle.drive_motors`:
one per uncoupled driven axle, one for a coupled train) and by phase: the start-up
(the speed drive's ramp from rest) and the cruise after it, each with its time window;
the windows left out (``run.settle_s`` at the start, :data:`DRIVE_SETTLE_S` after the
ramp) are reported too, with the torque peak inside them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ridesim.assess.findings import Finding
from ridesim.assess.wording import describe
from ridesim.safety import SAFETY_CAUTIONS, caution_lines, with_safety
from ridesim.sim.engine import Probes

__all__ = [
    "TORQUE_FILTER_S",
    "DRIVE_SETTLE_S",
    "torque_windows",
    "SLIP_FILTER_S",
    "SLIP_FLOOR_M_S",
    "SLIP_SPEED_FRACTION",
    "SLIP_MIN_DURATION_S",
    "CONTACT_LOSS_MIN_S",
    "MASS_RATIO_CAUTION",
    "TURN_PER_STEP_CAUTION_RAD",
    "CONTACT_FLICKER_CAUTION",
    "SAFETY_CAUTIONS",
    "SIM_CAUTIONS",
    "moving_average",
    "settled",
    "axle_bounce_m",
    "slip_threshold_m_s",
    "slip_speed_filtered",
    "slip_onset",
    "slip_scrub",
    "torque_stats",
    "speed_stats",
    "contact_lost",
    "drive_stats",
    "PHASE_DRIFT_FINDING_RAD",
    "BOUNCE_GROWTH_MIN_M",
    "BOUNCE_TREND_WINDOWS",
    "CREEP_ITERATIONS",
    "phase_drift_rad",
    "bounce_trend",
    "creep_findings",
    "creeping",
    "AT_LIMIT_FRACTION",
    "STALL_SPEED_FRACTION",
    "SimResult",
]

TORQUE_FILTER_S = 0.010
"""Moving-average window [s] for the filtered torque figures.

The contact solver hands the load from one straight piece of the track (or wheel)
outline to the next with one-step impulses of alternating sign; a 10 ms average
(ten steps at 1 kHz) removes them while keeping anything a motor, its gearing or a
rider would feel (motor peak ratings are given over tens of milliseconds or more,
common practice in motor data sheets). Raw peaks are reported separately.
"""

DRIVE_SETTLE_S = 0.2
"""Time [s] after the end of a speed drive's ramp left out of the cruise torque figures.

The speed drive (:mod:`ridesim.sim.run`) is a PI loop with proportional time constant
``tau_p`` = 10 ms and integral time ``tau_i`` = 50 ms on the vehicle's speed; its closed-loop
characteristic polynomial ``s^2 + s/tau_p + 1/(tau_p tau_i)`` has roots -27.6 and -72.4 1/s
(the PI loop of a pure inertia, e.g. Franklin, Powell & Emami-Naeini, "Feedback Control of
Dynamic Systems", ch. 4 [memory]). When the ramp stops, the torque settles to its cruise value
as ``exp(-27.6 t)``: below 0.5 % of the step after 0.2 s.
"""

SLIP_FILTER_S = 0.005
"""Moving-average window [s] applied to the contact slip speed before thresholding."""

SLIP_FLOOR_M_S = 0.005
"""Least slip speed [m/s] counted as slip.

The solver's numerical creep on a no-slip case (square wheel, apothem 0.3 m, on its
track at 0.5 m/s with friction 2, 1 ms step, 30 iterations) peaks at about 1 mm/s
per step and 0.4 mm/s after the 5 ms average; 5 mm/s is five times the raw creep.
"""

SLIP_SPEED_FRACTION = 0.01
"""Slip threshold as a fraction of the running speed, for fast runs (creep grows with speed)."""

SLIP_MIN_DURATION_S = 0.02
"""Shortest time [s] the filtered slip speed must stay above the threshold to count as slip.

A wheel corner seating in a cusp strikes the next flank and scrubs for a few
milliseconds (measured 4 to 7 ms for square, pentagon and hexagon wheels on their
tracks with friction 1.2 to 3, rounded corners); losing grip lasts as long as the
load stays beyond friction, over a good part of a flank (tens of milliseconds and more).
"""

CONTACT_LOSS_MIN_S = 0.005
"""Shortest time [s] without contact that counts as losing contact.

Single steps without a contact occur when the solver hands the load between track
pieces; a free flight of 5 ms rises at most ``g t^2 / 8`` = 31 micrometres, far below
anything a rider or a build would notice.
"""

TURN_PER_STEP_CAUTION_RAD = 0.01
"""Wheel rotation per step [rad] above which a result carries a time-step caution.

Measured on the ellipse pull toy (0.3 m/s on a 20 mm least radius: 15 mrad per 1 ms step):
contacts chatter in 12 % of the steps and the wheel drifts by 2 mrad/s from its ideal phase,
ten times less at 0.5 ms; the hexagon trolley and the wave sculpture (2 to 3 mrad per step)
keep their phase to within a milliradian over 20 s.
"""

CONTACT_FLICKER_CAUTION = 0.05
"""Share of steps without contact above which a result carries a chatter caution."""

MASS_RATIO_CAUTION = 30.0
"""Body-to-wheel mass ratio above which a result carries a solver caution (the ellipse toy with
a 4 kg body, ratio 76, slips at 30 iterations where the analytic model says it grips)."""

PHASE_DRIFT_FINDING_RAD = 0.01
"""Phase drift [rad] of a wheel against its track above which a run carries a creep finding.

An exact pair rolled without slip keeps its phase: the drift is the wheel's angle less the
angle rolling would give at the same travelled distance. 0.01 rad puts the contact about 1 %
of the rolling radius off its ideal place; a square wheel (apothem 0.15 m) that far out of phase
at its cusps already bounced by 0.2 mm and read its 10 ms torque peak 2 to 6 times too high.
"""

BOUNCE_GROWTH_MIN_M = 1e-4
"""Least rise [m] of the windowed bounce, first window to last, that counts as a growing bounce
(a tenth of a millimetre: above the solver's own jitter on the demo builds, 0.01 to 0.1 mm)."""

BOUNCE_TREND_WINDOWS = 4
"""Most windows the settled record is cut into to follow the bounce over time (each covers at
least one track period of travel)."""

CREEP_ITERATIONS = 100
"""Solver iterations recommended when a wheel creeps: on the square wheel of the creep tests
(apothem 0.15 m, 0.5 rad/s, 1 ms steps) 30 iterations let the phase error grow without bound
while 100 and more held it under 0.5 mrad over two revolutions (tracks built to 1 micrometre);
so did a five times shorter step at 30 iterations (0.1 mrad, torque r.m.s. within 12 %), which
the finding recommends first."""

SIM_CAUTIONS = (
    "Rigid bodies: no tyre or track compliance and no bearing play; contacts are resolved in"
    " time steps, so single-step spikes of force, torque and seat acceleration are the solver's,"
    " not the ride's.",
)
"""Cautions attached to every simulation result, after :data:`ridesim.safety.SAFETY_CAUTIONS`."""


# ----------------------------------------------------------------------------- helpers


def moving_average(x: np.ndarray, n: int) -> np.ndarray:
    """Trailing moving average over ``n`` samples along axis 0, NaN-aware.

    The first ``n - 1`` samples average what is available; NaN samples are left out of
    their windows (a window of NaNs only gives NaN).

    Parameters
    ----------
    x : ndarray, shape (N,) or (N, K)
        Samples.
    n : int
        Window length in samples (>= 1).

    Returns
    -------
    ndarray
        Same shape as ``x``.
    """
    x = np.asarray(x, dtype=float)
    n = max(int(n), 1)
    ok = np.isfinite(x)
    v = np.where(ok, x, 0.0)
    pad = [(1, 0)] + [(0, 0)] * (x.ndim - 1)
    cs = np.cumsum(np.pad(v, pad), axis=0)
    cc = np.cumsum(np.pad(ok.astype(float), pad), axis=0)
    idx = np.arange(1, len(x) + 1)
    lo = np.maximum(idx - n, 0)
    s = cs[idx] - cs[lo]
    c = cc[idx] - cc[lo]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(c > 0, s / np.where(c > 0, c, 1.0), np.nan)


def _window(probes: Probes, seconds: float) -> int:
    return max(1, int(round(seconds / probes.dt_s)))


def settled(probes: Probes) -> np.ndarray:
    """Mask of samples after ``settle_s``.

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    ndarray of bool, shape (N,)
    """
    m = probes.time_s > probes.settle_s + 1e-12
    if not np.any(m):
        m = np.ones(probes.steps, dtype=bool)
    return m


# ----------------------------------------------------------------------------- metrics


def axle_bounce_m(probes: Probes) -> np.ndarray:
    """Peak-to-peak vertical excursion [m] of each axle after settling.

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    ndarray, shape (A,)
    """
    y = probes.axle_y_m[settled(probes)]
    return np.ptp(y, axis=0)


def _reference_speed(probes: Probes) -> float:
    if probes.target_speed_m_s is not None:
        return abs(float(probes.target_speed_m_s))
    return float(np.mean(np.abs(probes.speed_m_s[settled(probes)])))


def slip_threshold_m_s(probes: Probes) -> float:
    """Slip speed [m/s] above which a wheel counts as slipping.

    ``max(SLIP_FLOOR_M_S, SLIP_SPEED_FRACTION * running speed)``.

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    float
    """
    return max(SLIP_FLOOR_M_S, SLIP_SPEED_FRACTION * _reference_speed(probes))


def slip_speed_filtered(probes: Probes) -> np.ndarray:
    """Contact slip speed [m/s] averaged over :data:`SLIP_FILTER_S`, per wheel.

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    ndarray, shape (N, A)
        NaN where a wheel had no contact over the whole window.
    """
    return moving_average(probes.slip_speed_m_s, _window(probes, SLIP_FILTER_S))


def slip_onset(probes: Probes, threshold_m_s: float | None = None,
               min_duration_s: float = SLIP_MIN_DURATION_S) -> tuple[float | None, int | None, float]:
    """First time after settling that a wheel keeps slipping for ``min_duration_s``.

    A wheel slips while its filtered slip speed (:func:`slip_speed_filtered`) exceeds the
    threshold; onset is the start of the first such stretch lasting ``min_duration_s`` or more
    (steps without contact do not break a stretch).

    Parameters
    ----------
    probes : Probes
        Probe record.
    threshold_m_s : float, optional
        Threshold [m/s]; default :func:`slip_threshold_m_s`.
    min_duration_s : float
        Shortest slipping stretch [s] that counts.

    Returns
    -------
    onset_time_s : float or None
        Time [s] at the start of the first slipping stretch, None when no wheel slips.
    axle : int or None
        The axle that slipped first.
    max_slip_speed_m_s : float
        Largest filtered slip speed magnitude [m/s] after settling, short scrubs included
        (0 without contact data).
    """
    thr = slip_threshold_m_s(probes) if threshold_m_s is None else float(threshold_m_s)
    m = settled(probes)
    sl = np.abs(slip_speed_filtered(probes))[m]
    t = probes.time_s[m]
    if sl.size == 0 or not np.any(np.isfinite(sl)):
        return None, None, 0.0
    peak = float(np.nanmax(sl))
    n_min = _window(probes, min_duration_s)
    best: tuple[float, int] | None = None
    for a in range(sl.shape[1]):
        col = sl[:, a]
        over = np.where(np.isfinite(col), col > thr, True)  # no contact: does not break a stretch
        over &= np.isfinite(col) | np.roll(np.isfinite(col), 1)
        d = np.diff(np.concatenate(([0], over.astype(np.int8), [0])))
        starts, ends = np.flatnonzero(d == 1), np.flatnonzero(d == -1)
        long = np.flatnonzero((ends - starts) >= n_min)
        if len(long):
            i0 = int(starts[long[0]])
            if best is None or t[i0] < best[0]:
                best = (float(t[i0]), a)
    if best is None:
        return None, None, peak
    return best[0], best[1], peak


def slip_scrub(probes: Probes, threshold_m_s: float | None = None) -> tuple[float, float]:
    """Brief slips as well as long ones: time and rim travel with the slip above the threshold.

    :func:`slip_onset` counts only slip held for :data:`SLIP_MIN_DURATION_S`; near the grip
    limit a wheel slips in short bursts where the track is steepest (at the cusps), which
    wear the tread and shift the wheel's phase. These figures add up every step after
    settling whose filtered slip speed is above the threshold.

    Parameters
    ----------
    probes : Probes
        Probe record.
    threshold_m_s : float, optional
        Threshold [m/s]; default :func:`slip_threshold_m_s`.

    Returns
    -------
    time_s : float
        Time [s] above the threshold, for the wheel with the most.
    distance_m : float
        Rim travel [m] relative to the track in those steps (sum of ``|slip speed| dt``), for
        the wheel with the most.
    """
    thr = slip_threshold_m_s(probes) if threshold_m_s is None else float(threshold_m_s)
    m = settled(probes)
    if probes.slip_speed_m_s.size == 0 or not np.any(m):
        return 0.0, 0.0
    over = np.nan_to_num(np.abs(slip_speed_filtered(probes))[m]) > thr
    raw = np.nan_to_num(np.abs(probes.slip_speed_m_s[m]))
    dt = probes.dt_s
    return (float(np.max(over.sum(axis=0))) * dt,
            float(np.max(np.where(over, raw, 0.0).sum(axis=0))) * dt)


def torque_windows(probes: Probes) -> tuple[dict, list]:
    """The torque phases of a run and the windows left out of them.

    Parameters
    ----------
    probes : Probes
        Probe record (``probes.info["ramp_end_s"]``: end of a speed drive's ramp from rest).

    Returns
    -------
    phases : dict
        ``startup`` (only with a ramp) and ``cruise`` -> ``{"window_s": [t0, t1],
        "measured_s": [a, b] or None}``: the phase, and the part of it the figures cover.
    skipped : list of dict
        ``{"window_s": [t0, t1], "reason": str}`` for each stretch left out: ``run.settle_s``
        at the start, :data:`DRIVE_SETTLE_S` after the ramp.
    """
    t = probes.time_s
    if t.size == 0:
        return {}, []
    t_end = float(t[-1])
    settle = float(probes.settle_s)
    ramp = float(probes.info.get("ramp_end_s", 0.0) or 0.0)
    ramp = min(ramp, t_end) if ramp > 0 else 0.0
    phases: dict = {}
    measured = []
    if ramp > 0:
        a = settle
        phases["startup"] = {"window_s": [0.0, ramp], "measured_s": [a, ramp] if a < ramp else None}
        c0 = max(settle, ramp + DRIVE_SETTLE_S)
    else:
        c0 = settle
    if ramp < t_end:
        phases["cruise"] = {"window_s": [ramp, t_end],
                            "measured_s": [c0, t_end] if c0 < t_end else None}
    for p in phases.values():
        if p["measured_s"] is not None:
            measured.append(tuple(p["measured_s"]))
    skipped = []
    pos = 0.0
    for a, b in sorted(measured) + [(t_end, t_end)]:
        if a > pos + 1e-12:
            reason = ("run.settle_s: the start transient of the drive and the contacts" if pos == 0.0
                      else "the speed drive settling after its ramp")
            skipped.append({"window_s": [pos, min(a, t_end)], "reason": reason})
        pos = max(pos, b)
    return phases, skipped


def _motor_rate(probes: Probes) -> np.ndarray:
    """Shaft speed [rad/s] of each motor (its first axle's wheel rate), shape (N, S)."""
    axles = [int(ax[0]) for ax in probes.shaft_axles]
    if not axles:
        return np.zeros((probes.steps, 0))
    return probes.wheel_rate_rad_s[:, axles]


def _window_figures(t, flt, raw, rate, window) -> dict:
    """Torque figures of one shaft over ``window`` [s] (None outside any sample)."""
    m = (t >= window[0] - 1e-12) & (t <= window[1] + 1e-12)
    if not np.any(m):
        return {"peak_Nm": None, "rms_Nm": None, "mean_Nm": None, "peak_raw_Nm": None,
                "max_shaft_speed_rad_s": None, "peak_power_W": None}
    f, r, w = flt[m], raw[m], rate[m]
    return {"peak_Nm": float(np.max(np.abs(f))), "rms_Nm": float(np.sqrt(np.mean(f * f))),
            "mean_Nm": float(np.mean(r)), "peak_raw_Nm": float(np.max(np.abs(r))),
            "max_shaft_speed_rad_s": float(np.max(np.abs(w))), "peak_power_W": float(np.max(f * w))}


def torque_stats(probes: Probes) -> list[dict]:
    """Drive torque figures per motor (one per shaft), by phase.

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    list of dict
        Per motor: ``axles`` (tuple of int), ``name``; ``peak_Nm`` (largest magnitude of the
        :data:`TORQUE_FILTER_S` moving average over the measured phases), ``peak_raw_Nm``
        (largest single-step magnitude there), ``rms_Nm`` (RMS of that average) and
        ``mean_Nm`` over the cruise (over the start-up when there is no cruise);
        ``by_phase`` (:func:`torque_windows` phases with these figures, speed and power);
        ``skipped`` (the windows left out, with their peaks).
    """
    from ridesim.model.vehicle import motor_name

    phases, skipped = torque_windows(probes)
    t = probes.time_s
    f = moving_average(probes.shaft_torque_Nm, _window(probes, TORQUE_FILTER_S))
    rate = _motor_rate(probes)
    out = []
    for j, axles in enumerate(probes.shaft_axles):
        raw, flt, w = probes.shaft_torque_Nm[:, j], f[:, j], rate[:, j]
        by = {}
        for name, ph in phases.items():
            win = ph["measured_s"]
            figs = _window_figures(t, flt, raw, w, win) if win is not None else _window_figures(
                t, flt, raw, w, (1.0, 0.0))
            by[name] = {"window_s": list(ph["window_s"]), "measured_s": win, **figs}
        sk = []
        for s_ in skipped:
            # After the ramp, the average's first window still holds ramp samples: start later.
            w0, w1 = s_["window_s"]
            lag = TORQUE_FILTER_S + probes.dt_s if w0 > 0 else 0.0
            figs = _window_figures(t, flt, raw, w, (w0 + lag, w1))
            sk.append({**s_, "peak_Nm": figs["peak_Nm"], "peak_raw_Nm": figs["peak_raw_Nm"]})
        got = [p for p in by.values() if p["peak_Nm"] is not None]
        main = by.get("cruise") if by.get("cruise", {}).get("rms_Nm") is not None else (
            got[0] if got else None)
        out.append({
            "axles": tuple(int(a) for a in axles),
            "name": motor_name(axles),
            "peak_Nm": max((p["peak_Nm"] for p in got), default=0.0),
            "rms_Nm": main["rms_Nm"] if main else 0.0,
            "peak_raw_Nm": max((p["peak_raw_Nm"] for p in got), default=0.0),
            "mean_Nm": main["mean_Nm"] if main else 0.0,
            "by_phase": by,
            "skipped": sk,
        })
    return out


def speed_stats(probes: Probes) -> dict:
    """Ground speed figures after settling.

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    dict
        ``mean_m_s``; ``final_m_s`` (mean over the last :data:`TORQUE_FILTER_S`);
        ``ripple_pct``: peak-to-peak of the :data:`TORQUE_FILTER_S` moving average as a
        percentage of the mean speed (NaN when the mean speed is zero). All after settling
        and, for a speed drive ramping up (``probes.info["ramp_end_s"]``), after the ramp.
    """
    m = settled(probes)
    ramp_end = float(probes.info.get("ramp_end_s", 0.0) or 0.0)
    if ramp_end > 0 and np.any(m & (probes.time_s > ramp_end + TORQUE_FILTER_S)):
        m = m & (probes.time_s > ramp_end + TORQUE_FILTER_S)
    v = probes.speed_m_s
    n = _window(probes, TORQUE_FILTER_S)
    vf = moving_average(v, n)[m]
    mean = float(np.mean(v[m]))
    final = float(np.mean(v[-n:]))
    ripple = 100.0 * float(np.ptp(vf)) / abs(mean) if abs(mean) > 1e-12 else float("nan")
    return {"mean_m_s": mean, "final_m_s": final, "ripple_pct": ripple}


AT_LIMIT_FRACTION = 0.99
"""A shaft counts as at its torque limit when its torque is at least this fraction of it."""

STALL_SPEED_FRACTION = 0.5
"""A speed or shaft-speed drive has stalled when the settled mean speed is below this fraction
of its target: the drive cannot hold the vehicle anywhere near the speed asked of it."""


def drive_stats(probes: Probes) -> dict:
    """How hard the drive worked after settling, and whether the vehicle stalled.

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    dict
        ``mode``; ``torque_limit_Nm`` (the limit of a speed or shaft-speed drive, the constant
        torque of a torque drive); ``at_limit_pct``, the share of settled steps in which some
        motor's torque was at :data:`AT_LIMIT_FRACTION` of that limit or more (None
        for a torque drive, always at it); ``stalled`` and ``stall_reason``: a speed drive
        whose mean ground speed, or a shaft-speed drive whose mean shaft speed, stays below
        :data:`STALL_SPEED_FRACTION` of its target; a torque drive whose vehicle moves less
        than 1 % of the least wheel radius over the settled record.
    """
    info = probes.info
    mode = info.get("drive_mode")
    limit = info.get("max_torque_Nm")
    m = settled(probes)
    T = probes.shaft_torque_Nm[m]
    out = {"mode": mode, "torque_limit_Nm": limit, "at_limit_pct": None, "stalled": False,
           "stall_reason": None}
    if T.shape[1] == 0 or not np.any(m):
        return out
    if mode in ("speed", "shaft_speed") and limit:
        at = np.any(np.abs(T) >= AT_LIMIT_FRACTION * float(limit), axis=1)
        out["at_limit_pct"] = 100.0 * float(np.mean(at))
    if mode == "speed" and probes.target_speed_m_s:
        target = abs(float(probes.target_speed_m_s))
        mean = float(np.mean(probes.speed_m_s[m]))
        if mean < STALL_SPEED_FRACTION * target:
            out["stalled"] = True
            out["stall_reason"] = (f"mean speed {mean:.3g} m/s, {100 * mean / target:.0f} % of the"
                                   f" {target:.3g} m/s target")
    elif mode == "shaft_speed" and info.get("shaft_speed_rad_s"):
        target = abs(float(info["shaft_speed_rad_s"]))
        axle = [ax[0] for ax in probes.shaft_axles]
        rate = float(np.min(np.mean(probes.wheel_rate_rad_s[m][:, axle], axis=0)))
        if rate < STALL_SPEED_FRACTION * target:
            out["stalled"] = True
            out["stall_reason"] = (f"mean shaft speed {rate:.3g} rad/s, {100 * rate / target:.0f} %"
                                   f" of the {target:.3g} rad/s asked")
    elif mode == "torque":
        travel = float(np.max(np.abs(probes.axle_x_m[m][-1] - probes.axle_x_m[m][0])))
        r_min = float(info.get("r_min_m") or 0.0)
        if r_min > 0 and travel < 0.01 * r_min:
            out["stalled"] = True
            out["stall_reason"] = (f"the vehicle moved {1000 * travel:.3g} mm in"
                                   f" {float(np.sum(m)) * probes.dt_s:.3g} s under the drive torque")
    return out


def contact_lost(probes: Probes) -> bool:
    """True when a wheel is off the track for :data:`CONTACT_LOSS_MIN_S` or longer after settling.

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    bool
    """
    m = settled(probes)
    off = ~probes.contact[m]
    n = _window(probes, CONTACT_LOSS_MIN_S)
    if off.shape[0] < n:
        return False
    run = moving_average(off.astype(float), n)
    return bool(np.any(run[n - 1 :] >= 1.0 - 1e-12))


def phase_drift_rad(probes: Probes) -> np.ndarray | None:
    """Each wheel's phase drift [rad] against its track over the run.

    The wheel's angle less the angle that rolling without slip on the ideal pair gives at the
    same axle position (``probes.rolling_angle_rad``), at the end of the run less at its start
    (an as-built start pose may begin off the ideal phase). Negative: the wheel fell behind
    its track (the vehicle travelled further than its wheel turned).

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    ndarray, shape (A,), or None
        None when the engine gives no rolling reference.
    """
    ref = probes.rolling_angle_rad
    if ref is None or probes.steps == 0:
        return None
    ph = np.asarray(probes.wheel_angle_rad, dtype=float) - np.asarray(ref, dtype=float)
    return ph[-1] - ph[0]


def bounce_trend(probes: Probes) -> dict:
    """How the axle bounce develops over the settled record.

    The settled record is cut into up to :data:`BOUNCE_TREND_WINDOWS` equal windows, each at
    least one track period of travel long (``info["track_period_m"]`` over the mean speed); the
    peak-to-peak axle height is taken in each, worst axle, and a straight line fitted through
    them against time.

    Parameters
    ----------
    probes : Probes
        Probe record.

    Returns
    -------
    dict
        ``trend_m_s`` (slope [m/s] of the fitted line, None with fewer than two windows),
        ``window_bounce_m`` (list [m]), ``window_s`` (window length [s] or None) and
        ``growing``: the bounce rose by at least :data:`BOUNCE_GROWTH_MIN_M` and by half from the
        first window to the last, with a rising trend.
    """
    out: dict[str, Any] = {"trend_m_s": None, "window_bounce_m": [], "window_s": None,
                           "growing": False}
    m = settled(probes)
    t = probes.time_s[m]
    y = probes.axle_y_m[m]
    if len(t) < 4:
        return out
    span = float(t[-1] - t[0])
    period = probes.info.get("track_period_m")
    v = float(np.mean(np.abs(probes.speed_m_s[m])))
    if period and v > 0:
        n = int(min(BOUNCE_TREND_WINDOWS, math.floor(span * v / float(period))))
    else:
        n = BOUNCE_TREND_WINDOWS
    if n < 2:
        return out
    edges = np.linspace(t[0], t[-1], n + 1)
    idx = np.clip(np.searchsorted(edges, t, side="right") - 1, 0, n - 1)
    b = np.array([float(np.max(np.ptp(y[idx == k], axis=0))) for k in range(n)])
    mid = 0.5 * (edges[:-1] + edges[1:])
    slope = float(np.polyfit(mid, b, 1)[0])
    out.update(trend_m_s=slope, window_bounce_m=[float(v_) for v_ in b], window_s=span / n,
               growing=bool(slope > 0 and b[-1] - b[0] >= BOUNCE_GROWTH_MIN_M and b[-1] >= 1.5 * b[0]))
    return out


def creeping(drift: np.ndarray | None, trend: dict) -> bool:
    """Whether a run creeps: a wheel's phase drift too large, or a growing bounce.

    The drift limit is :data:`PHASE_DRIFT_FINDING_RAD`; the growth is :func:`bounce_trend`'s.

    Parameters
    ----------
    drift : ndarray or None
        Phase drift [rad] per axle (:func:`phase_drift_rad`).
    trend : dict
        Result of :func:`bounce_trend`.

    Returns
    -------
    bool
    """
    big = drift is not None and drift.size and float(np.max(np.abs(drift))) > PHASE_DRIFT_FINDING_RAD
    return bool(big or trend.get("growing"))


def creep_findings(probes: Probes, drift: np.ndarray | None, trend: dict,
                   slip_onset_s: float | None = None,
                   slip_distance_m: float = 0.0) -> list[Finding]:
    """Findings of a wheel creeping out of phase with its track, with the cause where known.

    A finding is raised when a wheel's phase drift (:func:`phase_drift_rad`) exceeds
    :data:`PHASE_DRIFT_FINDING_RAD` or the bounce grows (:func:`bounce_trend`).

    Parameters
    ----------
    probes : Probes
        Probe record.
    drift : ndarray or None
        Phase drift [rad] per axle.
    trend : dict
        Result of :func:`bounce_trend`.
    slip_onset_s : float or None
        Onset [s] of sustained slip, None when none.
    slip_distance_m : float
        Rim travel [m] above the slip threshold.

    Returns
    -------
    list of Finding
        Empty when the wheels kept their phase; else one ``creep`` finding with its figures
        (worded by :func:`ridesim.assess.wording.describe`).
    """
    if not creeping(drift, trend):
        return []
    big = bool(drift is not None and drift.size
               and float(np.max(np.abs(drift))) > PHASE_DRIFT_FINDING_RAD)
    data: dict[str, Any] = {"drift_limit_rad": PHASE_DRIFT_FINDING_RAD, "drift_exceeds": big,
                            "growing": bool(trend.get("growing"))}
    if drift is not None and drift.size:
        a = int(np.argmax(np.abs(drift)))
        data.update(drift_axle=a, drift_rad=float(drift[a]))
    if trend.get("growing"):
        wb = trend["window_bounce_m"]
        data.update(trend_m_s=float(trend["trend_m_s"]), first_window_bounce_m=float(wb[0]),
                    last_window_bounce_m=float(wb[-1]), window_s=float(trend["window_s"]))
    info = probes.info
    it = int(info.get("iterations") or 0)
    r_roll = 0.5 * float(info.get("r_min_m") or 0.0) + 0.5 * float(info.get("r_max_m") or 0.0)
    creep_m = float(np.max(np.abs(drift))) * r_roll if drift is not None and drift.size else 0.0
    slipped = slip_onset_s is not None or (slip_distance_m > 0 and slip_distance_m >= 0.5 * creep_m)
    cr = float(info.get("corner_radius_m") or 0.0)
    unfitted = (not slipped and cr > 0
                and info.get("corner_radius_source") in ("default", "scenario", "option"))
    data.update(
        cause="slip" if slipped else "contact_changes", slip_scrub_m=float(slip_distance_m),
        creep_m=creep_m, corner_radius_m=cr if unfitted else None,
        iterations=it if (not slipped and it and it < CREEP_ITERATIONS) else None,
        recommended_timestep_s=0.2 * probes.dt_s,
        recommended_iterations=max(CREEP_ITERATIONS, 2 * it),
        recommended_timestep_with_iterations_s=0.5 * probes.dt_s)
    return [Finding("creep", data)]


# ----------------------------------------------------------------------------- result


@dataclass
class SimResult:
    """Probes and ride metrics of one simulation run.

    Attributes
    ----------
    probes : Probes
        The time series.
    name : str
        Scenario name.
    axle_bounce_m : float
        Largest peak-to-peak axle excursion [m] over the axles.
    axle_bounce_per_axle_m : list of float
        Per axle [m].
    slip_threshold_m_s : float
        Slip threshold [m/s] used.
    slip_onset_time_s : float or None
        First slip [s], None when none.
    slip_onset_axle : int or None
        Axle that slipped first.
    max_slip_speed_m_s : float
        Largest filtered slip speed [m/s].
    slip_time_s, slip_distance_m : float
        Time [s] and rim travel [m] above the slip threshold, brief slips included
        (:func:`slip_scrub`).
    torque : list of dict
        Per drive shaft (see :func:`torque_stats`).
    speed : dict
        See :func:`speed_stats`.
    contact_lost : bool
        See :func:`contact_lost`.
    drive : dict
        See :func:`drive_stats`.
    cautions : list of str
        Safety and fidelity notes.
    comfort : dict or None
        ISO 2631-1 ride comfort at the seat point (``weighted_rms_m_s2``, ``vdv_m_s175``,
        ``crest_factor``, ``band`` and extras), or ``{"unavailable": reason}`` when the record
        is too short.
    phase_drift_per_axle_rad : list of float or None
        Each wheel's phase drift [rad] against its track (:func:`phase_drift_rad`).
    bounce_trend : dict
        See :func:`bounce_trend`.
    findings : list of Finding
        Creep findings (:func:`creep_findings`): a wheel out of phase or a growing bounce.
    """

    probes: Probes
    name: str
    axle_bounce_m: float
    axle_bounce_per_axle_m: list
    slip_threshold_m_s: float
    slip_onset_time_s: float | None
    slip_onset_axle: int | None
    max_slip_speed_m_s: float
    torque: list
    speed: dict
    contact_lost: bool
    drive: dict = field(default_factory=dict)
    slip_time_s: float = 0.0
    slip_distance_m: float = 0.0
    cautions: list = field(default_factory=list)
    comfort: dict | None = None
    phase_drift_per_axle_rad: list | None = None
    bounce_trend: dict = field(default_factory=dict)
    findings: list = field(default_factory=list)

    @property
    def creeps(self) -> bool:
        """Whether the run crept (:func:`creeping`; it then carries a creep finding)."""
        d = self.phase_drift_per_axle_rad
        return creeping(None if d is None else np.asarray(d, dtype=float), self.bounce_trend)

    @property
    def phase_drift_rad(self) -> float | None:
        """The largest phase drift [rad] over the wheels, with its sign (None when unknown)."""
        d = self.phase_drift_per_axle_rad
        if not d:
            return None
        return float(max(d, key=abs))

    @classmethod
    def from_probes(cls, probes: Probes, name: str = "", cautions: list | None = None) -> SimResult:
        """Compute every metric of a probe record.

        Parameters
        ----------
        probes : Probes
            Probe record from any engine.
        name : str
            Scenario name.
        cautions : list of str, optional
            Extra notes (the engine's own are taken from ``probes.info``).

        Returns
        -------
        SimResult
        """
        bounce = axle_bounce_m(probes)
        thr = slip_threshold_m_s(probes)
        t_on, ax_on, peak = slip_onset(probes, thr)
        scrub_t, scrub_d = slip_scrub(probes, thr)
        comfort = _comfort(probes)
        drift = phase_drift_rad(probes)
        trend = bounce_trend(probes)
        findings = creep_findings(probes, drift, trend, t_on, scrub_d)
        notes = with_safety(SIM_CAUTIONS, probes.info.get("cautions", []), cautions or [],
                            _model_cautions(probes), comfort.get("cautions", []))
        return cls(
            probes=probes, name=name, axle_bounce_m=float(np.max(bounce)) if bounce.size else 0.0,
            axle_bounce_per_axle_m=[float(b) for b in bounce], slip_threshold_m_s=thr,
            slip_onset_time_s=t_on, slip_onset_axle=ax_on, max_slip_speed_m_s=peak,
            torque=torque_stats(probes), speed=speed_stats(probes), contact_lost=contact_lost(probes),
            drive=drive_stats(probes), slip_time_s=scrub_t, slip_distance_m=scrub_d, cautions=notes,
            comfort={k: v for k, v in comfort.items() if k != "cautions"},
            phase_drift_per_axle_rad=None if drift is None else [float(v) for v in drift],
            bounce_trend=trend, findings=findings,
        )

    def to_dataframe(self):
        """The probe time series as a pandas DataFrame, one row a step (columns as in probes.csv).

        Returns
        -------
        pandas.DataFrame
            Columns such as ``time_s``, ``axle0_y_m``, ``shaft0_torque_Nm`` (units in the names).

        Raises
        ------
        InputError
            pandas is not installed (the ``dataframe`` extra).
        """
        from ridesim.model.display import require_pandas

        pd = require_pandas()
        return pd.DataFrame({k: np.asarray(v) for k, v in self.probes.columns().items()})

    def plot(self, ax=None):
        """Plot each motor's torque [N m] and each axle's height [mm] against time [s].

        Parameters
        ----------
        ax : matplotlib.axes.Axes, optional
            Axes for the torque; the heights go on a twin axis. New axes (pyplot) when None.

        Returns
        -------
        matplotlib.axes.Axes
        """
        if ax is None:
            import matplotlib.pyplot as plt

            _, ax = plt.subplots(figsize=(8, 3.5))
        pr = self.probes
        for j in range(pr.shaft_torque_Nm.shape[1]):
            ax.plot(pr.time_s, pr.shaft_torque_Nm[:, j], lw=0.8, label=f"shaft {j} torque")
        ax.set_xlabel("time [s]")
        ax.set_ylabel("motor torque [N·m]")
        ax2 = ax.twinx()
        for i in range(pr.axle_y_m.shape[1]):
            ax2.plot(pr.time_s, 1000 * pr.axle_y_m[:, i], lw=0.8, ls="--", color=f"C{i + 3}",
                     label=f"axle {i} height")
        ax2.set_ylabel("axle height [mm]")
        ax.set_title(f"{self.name}: torque and axle heights")
        h1, l1 = ax.get_legend_handles_labels()
        h2, l2 = ax2.get_legend_handles_labels()
        ax.legend(h1 + h2, l1 + l2, fontsize=8, loc="upper right")
        return ax

    def _repr_html_(self) -> str:
        """The figures as a table, for Jupyter."""
        from ridesim.model.display import html_table

        return html_table(self.to_dict(), f"simulation: {self.name}")

    def to_dict(self) -> dict:
        """The JSON contract of a simulation result (plain Python types, SI units in key names).

        Values that are not finite (a speed ripple at zero mean speed) are None.

        Returns
        -------
        dict
        """
        tq = self.torque
        top: dict[str, Any] = {
            "per": "motor",
            "peak_Nm": max((t["peak_Nm"] for t in tq), default=0.0),
            "rms_Nm": max((t["rms_Nm"] for t in tq), default=0.0),
            "peak_raw_Nm": max((t["peak_raw_Nm"] for t in tq), default=0.0),
            "filter_window_s": TORQUE_FILTER_S,
            "by_phase": _worst_by_phase(tq),
            "skipped": _worst_skipped(tq),
            "motors": [
                {"name": t["name"], "axles": list(t["axles"]), "peak_Nm": t["peak_Nm"],
                 "rms_Nm": t["rms_Nm"], "peak_raw_Nm": t["peak_raw_Nm"], "mean_Nm": t["mean_Nm"],
                 "by_phase": t["by_phase"]}
                for t in tq
            ],
        }
        seat = corner_seating(self.probes)
        if seat is not None:
            top["corner_torque_per_mm_Nm"] = 1e-3 * seat["torque_per_shift_Nm_m"]
        phases = {k: v for k, v in top["by_phase"].items() if v.get("peak_Nm") is not None}
        top["peak_phase"] = max(phases, key=lambda k: phases[k]["peak_Nm"]) if phases else None
        info = self.probes.info
        return _finite_or_none({
            "name": self.name,
            "engine": info.get("engine", ""),
            "axle_bounce_m": self.axle_bounce_m,
            "axle_bounce_per_axle_m": list(self.axle_bounce_per_axle_m),
            "axle_bounce_trend_m_s": self.bounce_trend.get("trend_m_s"),
            "axle_bounce_windows_m": list(self.bounce_trend.get("window_bounce_m", [])),
            "bounce_growing": bool(self.bounce_trend.get("growing", False)),
            "slip": {
                "onset_time_s": self.slip_onset_time_s,
                "onset_axle": self.slip_onset_axle,
                "max_slip_speed_m_s": self.max_slip_speed_m_s,
                "threshold_m_s": self.slip_threshold_m_s,
                "min_duration_s": SLIP_MIN_DURATION_S,
                "time_over_threshold_s": self.slip_time_s,
                "distance_over_threshold_m": self.slip_distance_m,
                "phase_drift_rad": self.phase_drift_rad,
                "phase_drift_per_axle_rad": (None if self.phase_drift_per_axle_rad is None
                                             else list(self.phase_drift_per_axle_rad)),
                "phase_drift_finding_rad": PHASE_DRIFT_FINDING_RAD,
            },
            "findings": [f.to_dict() for f in self.findings],
            "notes": [describe(f) for f in self.findings],
            "torque": top,
            "speed": dict(self.speed),
            "contact_lost": bool(self.contact_lost),
            "drive": dict(self.drive),
            "comfort": dict(self.comfort) if self.comfort is not None else None,
            "steps": int(self.probes.steps),
            "sim_time_s": float(self.probes.steps * self.probes.dt_s),
            "timestep_s": float(self.probes.dt_s),
            "settle_s": float(self.probes.settle_s),
            "corner_radius_m": info.get("corner_radius_m"),
            "track_polyline_error_m": info.get("track_polyline_error_m"),
            "wheel_polygon_error_m": info.get("wheel_polygon_error_m"),
            "cautions": list(self.cautions),
        })

    def to_text(self) -> str:
        """Readable summary for the command line."""
        d = self.to_dict()
        sl, sp, tq = d["slip"], d["speed"], d["torque"]
        onset = ("none" if sl["onset_time_s"] is None else
                 f"at {sl['onset_time_s']:.3f} s on axle {sl['onset_axle']}")
        if sl["onset_time_s"] is None and d.get("findings"):
            onset = "none held at the contact, yet the wheel crept out of phase (see CREEP)"
        lines = [
            f"{self.name}: simulated {d['sim_time_s']:.3g} s in {d['steps']} steps of"
            f" {1000 * d['timestep_s']:.3g} ms ({d['engine']})",
            f"axle bounce:  {1000 * d['axle_bounce_m']:.3f} mm peak to peak after"
            f" {d['settle_s']:g} s",
            f"slip:         {onset} (largest slip speed {1000 * sl['max_slip_speed_m_s']:.2f} mm/s,"
            f" threshold {1000 * sl['threshold_m_s']:.1f} mm/s held for"
            f" {1000 * sl['min_duration_s']:.0f} ms)"
            + ("" if not sl["time_over_threshold_s"] else
               f"; above the threshold {1000 * sl['time_over_threshold_s']:.0f} ms in all,"
               f" {1000 * sl['distance_over_threshold_m']:.3g} mm of rim scrub"),
        ]
        if sl.get("phase_drift_rad") is not None:
            tr = d.get("axle_bounce_trend_m_s")
            lines.append(
                f"creep:        wheel phase {sl['phase_drift_rad']:+.3g} rad against its track at the end"
                f" (finding above {sl['phase_drift_finding_rad']:g} rad)"
                + ("" if tr is None else f"; bounce trend {1e3 * tr:+.3g} mm/s"
                   + (", GROWING" if d.get("bounce_growing") else "")))
        lines += [
            *_torque_lines(tq),
            f"speed:        mean {sp['mean_m_s']:.4g} m/s, final {sp['final_m_s']:.4g} m/s,"
            f" ripple {sp['ripple_pct'] if sp['ripple_pct'] is None else round(sp['ripple_pct'], 3)} %",
            f"contact lost: {'yes' if d['contact_lost'] else 'no'}",
        ]
        dr = d.get("drive") or {}
        if dr.get("at_limit_pct") is not None:
            line = (f"drive:        at its {dr['torque_limit_Nm']:.4g} N m limit"
                    f" {dr['at_limit_pct']:.0f} % of the time")
        elif dr.get("mode") == "torque":
            line = f"drive:        constant {dr['torque_limit_Nm']:.4g} N m per motor"
        else:
            line = None
        if dr.get("stalled"):
            line = (line + "; " if line else "drive:        ") + f"STALLED: {dr['stall_reason']}"
        if line:
            lines.append(line)
        c = d.get("comfort") or {}
        if "weighted_rms_m_s2" in c:
            lines.append(f"comfort:      seat a_w {c['weighted_rms_m_s2']:.3g} m/s^2 (ISO 2631-1 Wk),"
                         f" VDV {c['vdv_m_s175']:.3g} m/s^1.75, crest factor"
                         f" {c['crest_factor']:.3g}: {c['band']}")
        elif c:
            lines.append(f"comfort:      not evaluated ({c.get('unavailable', '')})")
        lines.extend(f"FINDING: {n}" for n in d.get("notes", []))
        lines.extend(caution_lines(d["cautions"]))
        return "\n".join(lines)

    def probes_csv(self) -> str:
        """The probe time series as CSV text: one header row of column names, then one row a step.

        Write it with :func:`ridesim.export.results.write_text_atomic` (as ``simulate --out``
        does), so a reader never sees half a file.

        Returns
        -------
        str
        """
        import io

        cols = self.probes.columns()
        names = list(cols)
        data = np.column_stack([np.asarray(cols[k], dtype=float) for k in names])
        buf = io.StringIO()
        buf.write(",".join(names) + "\n")
        np.savetxt(buf, data, delimiter=",", fmt="%.9g")
        return buf.getvalue()


def _worst_by_phase(tq: list) -> dict:
    """Each phase's figures, the most loaded motor's.

    The largest of each figure over the motors; the mean is that of the motor with the
    largest r.m.s.
    """
    out: dict = {}
    for t in tq:
        for name, p in t["by_phase"].items():
            cur = out.setdefault(name, {"window_s": p["window_s"], "measured_s": p["measured_s"]})
            for k in ("peak_Nm", "rms_Nm", "peak_raw_Nm", "max_shaft_speed_rad_s", "peak_power_W"):
                if p[k] is not None and (cur.get(k) is None or p[k] > cur[k]):
                    cur[k] = p[k]
                    if k == "rms_Nm":
                        cur["mean_Nm"] = p["mean_Nm"]
                cur.setdefault(k, None)
            cur.setdefault("mean_Nm", None)
    return out


def _worst_skipped(tq: list) -> list:
    """The skipped windows with the largest peak over the motors."""
    if not tq:
        return []
    out = []
    for i, s in enumerate(tq[0]["skipped"]):
        row = {"window_s": s["window_s"], "reason": s["reason"]}
        for k in ("peak_Nm", "peak_raw_Nm"):
            vals = [t["skipped"][i][k] for t in tq if t["skipped"][i][k] is not None]
            row[k] = max(vals) if vals else None
        out.append(row)
    return out


def _torque_lines(tq: dict) -> list[str]:
    """The torque section of the text report: per motor, by phase, windows stated."""
    mot = tq.get("motors") or []
    names = "; ".join(m["name"] for m in mot) or "none"
    head = (f"torque:       per motor ({len(mot)} motor{'s' if len(mot) != 1 else ''}: {names}"
            + ("; the most loaded motor's figures" if len(mot) > 1 else "")
            + f"), {1000 * tq['filter_window_s']:.0f} ms average (raw step peak)")
    lines = [head]
    labels = {"startup": "start-up", "cruise": "cruise"}
    for key, label in labels.items():
        p = (tq.get("by_phase") or {}).get(key)
        if p is None:
            continue
        w0, w1 = p["window_s"]
        if p.get("peak_Nm") is None or p.get("measured_s") is None:
            lines.append(f"  {label:<9} {w0:.3g}-{w1:.3g} s: not measured (all of it skipped)")
            continue
        m0, m1 = p["measured_s"]
        part = f"{m0:.3g}-{m1:.3g} s" + (f" of {w0:.3g}-{w1:.3g} s" if (m0, m1) != (w0, w1) else "")
        lines.append(f"  {label:<9} {part}: peak {p['peak_Nm']:.4g} N m (raw {p['peak_raw_Nm']:.4g}),"
                     f" r.m.s. {p['rms_Nm']:.4g} N m")
    for s in tq.get("skipped") or []:
        w0, w1 = s["window_s"]
        pk = "" if s.get("peak_Nm") is None else f": peak {s['peak_Nm']:.4g} N m there"
        lines.append(f"  skipped   {w0:.3g}-{w1:.3g} s ({s['reason']}){pk}")
    if tq.get("corner_torque_per_mm_Nm") is not None:
        lines.append(f"  corners   ROUGH: the rounded corners seat in valleys fitted to them, where"
                     f" every 0.1 mm the contact wanders is {1e-1 * tq['corner_torque_per_mm_Nm']:.2g}"
                     " N m; peaks there are not the ride's: take corner torques from `ridesim check`"
                     " (see the limits below)")
    return lines


def _comfort(probes: Probes) -> dict:
    """ISO 2631-1 comfort figures of the seat accelerations (vertical Wk, fore-aft Wd)."""
    from ridesim.errors import InputError
    from ridesim.metrics.comfort import comfort_report

    # The simulation starts from its ideal pose, at rest or rolling steadily with the axle
    # level, where the seat does not accelerate (its records exclude gravity): the weighting
    # started at rest is then the rider's true weighted acceleration, so run.settle_s only
    # leaves the launch out of the statistics and need not outlast the filter's 2.6 s decay.
    try:
        rep = comfort_report(probes.seat_ay_m_s2, probes.seat_ax_m_s2, 1.0 / probes.dt_s,
                             settle_s=probes.settle_s, from_rest=True)
    except InputError as exc:
        return {"unavailable": " ".join(str(exc).split())}
    return rep.to_dict()


def _finite_or_none(obj):
    """Replace NaN and infinities by None, recursively (JSON has no NaN)."""
    if isinstance(obj, dict):
        return {k: _finite_or_none(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [_finite_or_none(v) for v in obj]
    if isinstance(obj, float | np.floating) and not math.isfinite(float(obj)):
        return None
    if isinstance(obj, np.floating):
        return float(obj)
    return obj


def corner_seating(probes: Probes) -> dict | None:
    """How finely the contact of rounded corners seated in valleys fitted to them is resolved.

    A rounded corner (radius ``rho``) rolling in a valley solved for it matches the valley's
    curvature to within ``cos(phi)/r`` (Euler-Savary; ``r`` about the corner's distance from the
    axle, REFERENCES.md): a sink ``eps`` closes the gap out to ``s = sqrt(2 eps r)`` either side
    of the contact, and, the two centres of curvature being only about ``rho^2 / r`` apart, a
    phase error ``dx`` turns the contact by ``dx r / rho^2``, moving it ``dx r / rho`` along the
    arc [derived]. The contact's shift under the axle times the wheel's load is shaft torque.

    Parameters
    ----------
    probes : Probes
        Probe record (its ``info`` names the corner radius and where it came from).

    Returns
    -------
    dict or None
        ``contact_spread_m`` (``s`` for 1 micrometre of sink), ``phase_gain`` (``r / rho``)
        and ``torque_per_shift_Nm_m`` (the load on one wheel, body share and wheel, times g);
        None when the wheel's corners do not seat in valleys fitted to them.
    """
    info = probes.info
    if not (info.get("corner_radius_source") == "wheel" and info.get("corner_radius_m")
            and info.get("r_max_m")):
        return None
    from ridesim.sim.world import STANDARD_GRAVITY_M_S2

    r_c, rho = float(info["r_max_m"]), float(info["corner_radius_m"])
    n_ax = max(int(probes.axle_y_m.shape[1]), 1)
    load = (float(info.get("body_mass_kg") or 0.0) / n_ax
            + float(info.get("wheel_mass_kg") or 0.0)) * STANDARD_GRAVITY_M_S2
    return {"contact_spread_m": math.sqrt(2e-6 * r_c), "phase_gain": r_c / rho,
            "torque_per_shift_Nm_m": load}


def _model_cautions(probes: Probes) -> list[str]:
    info = probes.info
    m = settled(probes)
    out = []
    turn = float(np.max(np.abs(probes.wheel_rate_rad_s[m]))) * probes.dt_s if m.any() else 0.0
    if turn > TURN_PER_STEP_CAUTION_RAD:
        out.append(f"A wheel turns up to {1e3 * turn:.3g} mrad per step: contacts chatter and the wheel"
                   " slowly loses its phase on the track; halve run.timestep_s and compare.")
    off = float(np.mean(~probes.contact[m])) if m.any() else 0.0
    if off > CONTACT_FLICKER_CAUTION:
        out.append(f"Wheels were out of contact in {100 * off:.0f} % of the steps (single-step chatter,"
                   " not a hop): normal-force and slip figures are rough; halve run.timestep_s.")
    out += ["Planar model: one wheel per axle; a real axle with a wheel on each side is one wheel here,"
           " so give the pair's mass and inertia, and read torques per axle shaft."]
    if info.get("coupled"):
        out.append("Axles are coupled: one motor turns the whole train (a common shaft, chain or"
                   " gears), and its torque is the train's total.")
    if info.get("corner_radius_source") == "default" and info.get("corner_radius_m"):
        frac = 100 * info["corner_radius_m"] / info["r_min_m"] if info.get("r_min_m") else float("nan")
        out.append(f"Wheel corners are rounded by {1e3 * info['corner_radius_m']:.3g} mm ({frac:.0f} % of"
                   " the least radius; set wheel.corner_radius_m to the real edge radius). A rounded"
                   " corner cannot reach the bottom of a cusp, so the wheel dips slightly there.")
    elif info.get("corner_radius_source") in ("scenario", "option") and info.get("corner_radius_m"):
        out.append(f"The track was solved for sharp corners and the wheel's are rounded by"
                   f" {1e3 * info['corner_radius_m']:.3g} mm: they cannot reach the bottom of the"
                   " cusps, so the wheel dips there and rocks a little out of phase (more the larger"
                   " the radius). For a polygon wheel, wheel.fit_track_to_corners = true solves the"
                   " track for the rounded corners.")
    seat = corner_seating(probes)
    if seat is not None:
        out.append(f"The wheel's rounded corners seat in valleys fitted to them, which they match in"
                   f" curvature to within cos(phi)/r: 1 micrometre of sink spreads the contact there"
                   f" over about +-{1e3 * seat['contact_spread_m']:.2g} mm, and a phase error moves it"
                   f" {seat['phase_gain']:.3g} times as far along the corner (10 micrometres:"
                   f" {1e-2 * seat['phase_gain']:.2g} mm); each millimetre is"
                   f" {1e-3 * seat['torque_per_shift_Nm_m']:.2g} N m of shaft torque, so torque peaks"
                   " at the corners are no finer than that (on a square of apothem 0.15 m at 0.5 rad/s"
                   " the 10 ms peak read 2.2 to 3.2 times the exact 0.13 N m at 0.2 ms steps). Take"
                   " corner torques from the analytic model (ridesim check).")
    if info.get("body_inertia_estimated") and not info.get("pitch_held"):
        out.append("Body inertia was estimated as a box spanning the wheels; give"
                   " vehicle.body_inertia_kg_m2 for pitch figures you rely on.")
    if info.get("pitch_held"):
        out.append("One axle: the body is held level (as by a handle or guide); its reaction to the"
                   " drive torque goes into that guide.")
    mw, mb = info.get("wheel_mass_kg"), info.get("body_mass_kg")
    if mw and mb and mb / mw > MASS_RATIO_CAUTION:
        out.append(f"The body is {mb / mw:.0f} times heavier than a wheel: the iterative contact solver"
                   " may under-resolve friction at such ratios; raise run.iterations (e.g. to 100) and"
                   " check that the figures do not change.")
    out.append("Mean torques read slightly high: the time-stepped contacts lose a little energy, like"
               " a rolling-resistance coefficient of about 0.001 to 0.006 on the demo builds; the loss"
               " halves when run.timestep_s is halved.")
    if not info.get("torque_sign_known", True):
        out.append("Torque sign unknown in this pymunk build: figures are magnitudes.")
    return out

"""Work and memory a simulation will need, estimated before anything is allocated.

A run's cost has two parts that grow without bound with the inputs: the track built for
the reach of the drive (its polyline vertices: travel over the track period times the
vertices of one period) and the stepping (steps and the probe buffers recorded per step).
:func:`check_simulation_budget` estimates both from the scenario and refuses, with the
estimate, the limit and the key to change, a run beyond :data:`MAX_TRACK_VERTICES`,
:data:`MAX_STEPS` or :data:`MAX_PROBE_BYTES`.
"""

from __future__ import annotations

from ridesim.errors import InputError

__all__ = ["MAX_TRACK_VERTICES", "MAX_STEPS", "MAX_PROBE_BYTES", "check_simulation_budget"]

MAX_TRACK_VERTICES = 200_000
"""Most track polyline vertices a simulation builds (a few kilometres of track for wheels of
a few centimetres; the step cost grows with the vertices under a wheel, ENGINE-NOTES)."""

MAX_STEPS = 5_000_000
"""Most steps a simulation takes: over 100 s of wall time at the 46k steps/s a two-axle cart
reaches on this machine class (ENGINE-NOTES), and memory grows with them."""

MAX_PROBE_BYTES = 2 * 1024**3
"""Largest memory [bytes] the per-step probe and contact buffers may take (2 GiB)."""

_BODY_COLS = 6  # x, y, angle, vx, vy, w recorded per body per step (sim/run.py)
_ARB_WORDS = 12 + 3  # floats and ints recorded per contact per step (sim/run.py)


def _drive_key(scenario) -> str:
    d = scenario.drive
    if d.mode == "speed":
        return f"drive.speed_m_s = {d.speed_m_s:g}"
    if d.mode == "shaft_speed":
        return f"drive.shaft_speed_rad_s = {d.shaft_speed_rad_s:g}"
    return f"drive.torque_Nm = {d.torque_Nm:g}"


def check_simulation_budget(scenario, track, x_lo: float, x_hi: float, vertices_per_period: int,
                            r_min_m: float) -> dict:
    """Refuse a simulation whose track, steps or probe memory exceed the budget.

    Parameters
    ----------
    scenario : Scenario
        The scenario (run, drive and vehicle sections).
    track : ridesim.model.track.Track
        The track rolled on (its period [m]).
    x_lo, x_hi : float
        Range [m] of the track the run's reach needs.
    vertices_per_period : int
        Polyline vertices of one track period at the run's tolerance.
    r_min_m : float
        Least rim radius [m] (named when it is the cause).

    Returns
    -------
    dict
        The estimates: ``track_m``, ``track_vertices``, ``steps``, ``probe_bytes``.

    Raises
    ------
    InputError
        One line with the estimate, the limit and the keys to change.
    """
    run = scenario.run
    length = float(x_hi - x_lo)
    period = float(track.period)
    n_vert = (length / period + 3.0) * max(int(vertices_per_period), 1)
    if not n_vert <= MAX_TRACK_VERTICES:
        per_m = vertices_per_period / period
        if length > 100.0:  # the reach is the cause (a fine track of normal length is not)
            cause = (f"the drive's reach ({_drive_key(scenario)} over run.duration_s ="
                     f" {run.duration_s:g} s) needs {length:.4g} m of track")
            fix = "lower the drive or shorten run.duration_s"
        else:  # the fineness is the cause
            cause = (f"{length:.4g} m of track at {per_m:.4g} vertices per metre (least wheel"
                     f" radius {r_min_m:.3g} m)")
            fix = "use a larger wheel or a shorter run.duration_s"
        raise InputError(f"simulate: {cause}: about {n_vert:.3g} track vertices, beyond the"
                         f" budget of {MAX_TRACK_VERTICES}; {fix}")
    steps = float(run.duration_s) / float(run.timestep_s)
    if not steps <= MAX_STEPS:
        raise InputError(f"simulate: run.duration_s = {run.duration_s:g} s at run.timestep_s ="
                         f" {run.timestep_s:g} s is {steps:.3g} steps, beyond the budget of"
                         f" {MAX_STEPS}; shorten duration_s or lengthen timestep_s")
    axles = int(scenario.vehicle.axles)
    per_step = 8 * ((axles + 2) * _BODY_COLS + (2 * axles + 1) * _ARB_WORDS)
    probe = steps * per_step
    if not probe <= MAX_PROBE_BYTES:
        raise InputError(f"simulate: {steps:.3g} steps of {axles} axles record about"
                         f" {probe / 1024**3:.3g} GiB of probes, beyond the budget of"
                         f" {MAX_PROBE_BYTES / 1024**3:g} GiB; shorten run.duration_s or"
                         " lengthen run.timestep_s")
    return {"track_m": length, "track_vertices": int(n_vert), "steps": int(steps),
            "probe_bytes": int(probe)}

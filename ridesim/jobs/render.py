"""All the pictures of one scenario: solver plots, analytic loads, simulation traces, a clip.

Used by ``ridesim render``. The simulation is optional (``simulate=True``); the
clip then replays the simulated motion, else it shows the ideal kinematics.
"""

from __future__ import annotations

import os
import threading
import warnings
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

from ridesim.errors import InputError

__all__ = ["render_scenario"]


def render_scenario(sc, out_dir: str | Path, *, svg: bool = False, simulate: bool = False,
                    clip: bool = True, clip_s: float = 4.0, fps: int = 25,
                    size: tuple[int, int] = (640, 360), follow: bool = True,
                    progress=None, sim_result=None, workers: int | None = None,
                    alongside: Callable[[], Any] | None = None) -> list[tuple[Path, str]]:
    """Write a scenario's pictures into ``out_dir`` with a captioned ``index.md``.

    Parameters
    ----------
    sc : Scenario
        Validated scenario.
    out_dir : str or Path
        Output folder (created).
    svg : bool
        Also write SVG copies of the plots.
    simulate : bool
        Run the rigid-body simulation and plot its torque, bounce and comfort spectrum.
    clip : bool
        Write ``clip.gif``.
    clip_s : float
        Clip length [s].
    fps : int
        Clip frame rate [1/s].
    size : (int, int)
        Clip size [px].
    follow : bool
        Camera follows the cart.
    progress : callable, optional
        ``progress(fraction)`` while the clip is drawn.
    sim_result : SimResult, optional
        A simulation already run for this scenario (reused instead of running again).
    workers : int, optional
        Cores drawing the still pictures side by side, this process's included (default: the
        idle cores; 1 draws them one by one in this process). The pictures are the same bytes
        either way.
    alongside : callable, optional
        The caller's own work (the report's check, motor sizing and simulation), called once,
        with no argument, in this process while the pictures that need no simulation are
        drawn. What it returns, unless None, is the simulation plotted with ``simulate=True``
        (in place of ``sim_result``).

    Returns
    -------
    list of (Path, str)
        Each file and its one-line caption.
    """
    from ridesim.assess.analytic import analyze_cycle
    from ridesim.assess.friction import friction_demand
    from ridesim.model.vehicle import axle_offsets_m
    from ridesim.render.clip import render_clip
    from ridesim.render.plots import plot_series, solver_plot_calls, write_index
    from ridesim.scenario.build import resolve_wheelbase, solve_track_scenario, wheel_mass

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    if sc.path.is_hub:  # a wheel around a hub: its own plot and clip
        from ridesim.jobs.hub import render_hub

        if alongside is not None:
            alongside()
        return render_hub(sc, out, svg=svg, clip=clip, clip_s=clip_s, fps=fps, size=size,
                          progress=progress)
    pair = solve_track_scenario(sc)
    sc = resolve_wheelbase(sc, pair)
    mp = wheel_mass(sc, pair.wheel)
    # The still pictures are gathered as calls, to be drawn side by side.
    items: list = list(solver_plot_calls(pair, out, mass=mp, svg=svg))
    steady = analyze_cycle(pair, vehicle=sc.vehicle, surface=sc.surface, wheel_mass=mp,
                           drive=sc.drive, accel_m_s2=0.0)
    v = steady.speed_m_s
    n_ax = sc.vehicle.axles
    fr = friction_demand(pair, speed_m_s=v, wheel_mass=mp,
                         wheel_load_N=9.80665 * (sc.vehicle.body_mass_kg / n_ax + mp.mass_kg),
                         rolling_resistance=sc.surface.rolling_resistance)
    xs = np.asarray(fr.x_m) * 1000.0
    items.append(_call(
        plot_series, xs, {"required friction": np.asarray(fr.mu),
             "limit: surface friction": np.full(xs.shape, sc.surface.friction)},
        out / "friction.png", "friction coefficient [-]",
        f"Friction the contact needs at a steady {v:.3g} m/s against the surface's"
        f" {sc.surface.friction:g}",
        xlabel="axle position on the track [mm]", svg=svg,
        caption=f"Friction demand over one revolution at a steady {v:.3g} m/s (cruise): peak"
                f" {fr.peak:.3f} at x = {fr.at_x_m:.3f} m, surface {sc.surface.friction:g}."
                " `ridesim check` also gives the peak while the drive accelerates."))
    from ridesim.model.vehicle import motor_name

    tq = {}
    motor_torque = steady.motor_torque_Nm
    if motor_torque is None:
        raise InputError("analyze_cycle gave no torque per motor to plot")
    for k, axles in enumerate(steady.motors):
        tq[f"analytic: {motor_name(axles)}"] = (steady.t_s, motor_torque[k])
    items.append(_call(
        plot_series, None, tq, out / "torque_analytic.png", "motor torque [N·m]",
        f"Torque per motor at a steady {v:.3g} m/s (analytic)", svg=svg,
        caption=f"Analytic torque per motor over one revolution at a steady {v:.3g} m/s (cruise):"
                f" peak {steady.torque_peak_Nm:.4g} N·m, r.m.s. {steady.torque_rms_Nm:.4g} N·m."))
    # The pictures so far are drawn side by side (on the idle cores) while this process goes
    # on: the caller's own work, the simulation and its pictures, then the clip.
    drawing = _Drawing(idle_cores() if workers is None else max(1, int(workers)))
    try:
        drawing.start(items)
        got = alongside() if alongside is not None else None
        frames = None
        if simulate:
            if got is not None:
                sim_result = got
            items_sim, frames = _sim_plots(sc, steady, out, svg, sim_result, pair, mp)
            for item in items_sim:
                drawing.add(item)
        if clip:
            offsets = tuple(float(o) for o in axle_offsets_m(n_ax, sc.vehicle.wheelbase_m))
            drawing.add(render_clip(pair, out / "clip.gif", frames_data=frames, duration_s=clip_s,
                                    fps=fps, size=size, follow=follow, speed_m_s=v,
                                    axle_offsets_m=offsets, progress=progress, title=sc.name))
        items = drawing.finish()
    finally:
        drawing.close()
    write_index(out, items, title=f"ridesim pictures: {sc.name}")
    return items


def _call(fn, *args, **kw) -> tuple:
    """One picture as a call undone: ``(fn, args, kw)``."""
    return fn, args, kw


# The calls of the pictures being drawn: the drawing processes are forked from this one
# while it is set, so they find the calls here and receive only an index (nothing pickled).
_CALLS: list = []
# One flag a picture, in memory shared with the drawing processes (made before the fork):
# whoever sets a picture's flag first draws it (see _Drawing).
_CLAIMS: Any = None


def _claim(i: int) -> bool:
    """Take picture ``i`` to draw, unless this or another process has taken it already."""
    with _CLAIMS.get_lock():
        if _CLAIMS[i]:
            return False
        _CLAIMS[i] = 1
        return True


def _draw_one(i: int) -> tuple | None:
    """Draw call ``i`` of :data:`_CALLS` in a drawing process: its item and its warnings (None if taken)."""
    fn, args, kw = _CALLS[i]
    return _draw_sent(i, fn, args, kw)


def _can_fork() -> bool:
    """Whether a pool of forked processes is safe here.

    Fork must exist, no other thread may run, and this process must be allowed children
    (a daemonic worker of a pool is not).
    """
    import multiprocessing as mp

    return ("fork" in mp.get_all_start_methods() and threading.active_count() == 1
            and not mp.current_process().daemon)


def idle_cores() -> int:
    """Cores the 1-minute load average leaves idle, this process's own share taken off (at least 1).

    On a machine already busy the drawing processes would only queue behind the other
    work and add their start-up: on 2 cores at a load of 1.6-4.8 from other work, drawing
    side by side was 15-25 % slower in wall time than one by one, and 1.5-1.7x faster on
    a quiet machine (benchmarks/bench_render.py). This process's own share of the load is
    estimated from its CPU time so far (the load average is an exponential average over
    60 s), so that a long-running caller does not count itself as other work.
    """
    import math
    import time

    cores = os.cpu_count() or 1
    try:
        load = os.getloadavg()[0]
    except (AttributeError, OSError):
        return 1
    own = 1.0 - math.exp(-time.process_time() / 60.0)
    return max(1, min(cores, int(cores - max(0.0, load - own) + 0.5)))


def _draw_sent(i: int, fn, args: tuple, kw: dict) -> tuple | None:
    """Draw call ``i``, sent to a drawing process (pickled; made after the fork): as :func:`_draw_one`."""
    if not _claim(i):
        return None
    with warnings.catch_warnings(record=True) as caught:
        item = fn(*args, **kw)
    return item, [(str(w.message), w.category, w.filename, w.lineno) for w in caught]


class _Drawing:
    """Pictures drawn side by side while this process goes on with its own work.

    The first calls given to :meth:`start` are inherited by the drawing processes at their
    fork (only an index is sent); calls added later with :meth:`add` are sent pickled (they
    hold arrays and words only). Every picture goes to the drawing processes, which take them
    from the front; once its own work is done this process draws from the back those not yet
    taken (:meth:`finish`), so ``cores`` cores need ``cores - 1`` drawing processes. Who draws
    a picture is settled by a flag in shared memory, set by whoever takes it first: a picture
    queued for a drawing process is still this process's to take until one begins it (a pool
    that queued pictures ahead left this process idle at the end, and handing them out one
    at a time from here waited on this process's busy thread). With fewer than two cores, or
    where a fork is not safe, every picture is drawn here.
    """

    def __init__(self, cores: int):
        self.cores = cores
        self.pool: Any = None
        self.items: list = []
        self.futures: dict = {}
        self.n_inherited = 0
        self.gc_frozen = False

    def start(self, calls: list) -> None:
        """Take the first calls (``(fn, args, kw)`` or a ready item each) and start drawing them."""
        self.items = list(calls)
        todo = [i for i, c in enumerate(calls) if _undone(c)]
        n = min(len(todo), self.cores - 1)
        if n < 1 or not _can_fork():
            return
        import gc
        import multiprocessing as mp
        from concurrent.futures import ProcessPoolExecutor

        # Import the drawing machinery once here, before the fork, rather than once per process.
        import matplotlib.backends.backend_agg  # noqa: F401
        import matplotlib.figure  # noqa: F401
        import matplotlib.patches  # noqa: F401
        import matplotlib.ticker  # noqa: F401

        global _CALLS, _CLAIMS
        ctx = mp.get_context("fork")
        _CALLS = list(calls)
        _CLAIMS = ctx.Array("b", _CLAIM_SLOTS + len(calls))
        self.n_inherited = len(calls)
        # Objects that exist at the fork are left out of the children's garbage collection, so
        # that it does not touch (and so copy) every page of this process in each of them.
        gc.freeze()
        self.gc_frozen = True
        self.pool = ProcessPoolExecutor(max_workers=n, mp_context=ctx)
        self.futures = {i: self.pool.submit(_draw_one, i) for i in todo}

    def add(self, call) -> None:
        """One more picture call (or ready item), drawn after those already given."""
        self.items.append(call)
        i = len(self.items) - 1
        if self.pool is not None and _undone(call) and i < len(_CLAIMS):
            self.futures[i] = self.pool.submit(_draw_sent, i, *call)

    def finish(self) -> list:
        """Draw here what no drawing process has taken, collect the rest; the items in order."""
        try:
            for i in reversed(range(len(self.items))):  # the drawing processes take from the front
                call = self.items[i]
                if _undone(call) and (i not in self.futures or _claim(i)):
                    self.items[i] = call[0](*call[1], **call[2])
            for i, fut in self.futures.items():
                got = fut.result()
                if got is None:  # drawn here
                    continue
                self.items[i], caught = got
                for message, category, filename, lineno in caught:
                    warnings.warn_explicit(message, category, filename, lineno)
            return self.items
        finally:
            self.close()

    def close(self) -> None:
        """Stop the drawing processes (cancelling what they have not begun)."""
        global _CALLS, _CLAIMS
        if self.pool is not None:
            self.pool.shutdown(wait=True, cancel_futures=True)
            self.pool = None
        if self.gc_frozen:
            import gc

            gc.unfreeze()
            self.gc_frozen = False
        _CALLS = []
        _CLAIMS = None


#: Flags for pictures added after the fork (a report adds four simulation pictures and the
#: clip); any beyond them are drawn in this process.
_CLAIM_SLOTS = 32


def _undone(call) -> bool:
    """Whether ``call`` is a picture call ``(fn, args, kw)`` rather than a ready item."""
    return len(call) == 3 and callable(call[0])


def _sim_plots(sc, steady, out: Path, svg: bool, res, pair, mp):
    """Simulated torque against the analytic model, axle heights, seat accelerations, comfort."""
    from ridesim.errors import InputError
    from ridesim.jobs.simulate import simulate
    from ridesim.metrics import comfort as cf
    from ridesim.render.plots import plot_series

    if res is None:
        res = simulate(sc)
    pr = res.probes
    t = pr.time_s
    from ridesim.model.vehicle import motor_name

    items = []
    series = {}
    for j, axles in enumerate(pr.shaft_axles):
        series[f"simulated: {motor_name(axles)}"] = (t, pr.shaft_torque_Nm[:, j])
    if steady.driven:
        # The analytic model along the simulated motion: its torque at the chassis's own
        # position, speed and commanded acceleration (T0 + v^2 T2 + a T1, see assess.analytic).
        from ridesim.assess.analytic import TorqueModel

        v_cmd = float(sc.drive.speed_m_s)
        acc = float(sc.drive.accel_m_s2)
        model = TorqueModel(pair, sc, mp, v_cmd, acc if acc > 0 else 0.1)
        x_ch = pr.axle_x_m.mean(axis=1)
        a_cmd = np.where(t < v_cmd / acc, acc, 0.0) if acc > 0 else np.zeros_like(t)
        tq_an, _ = model.along(x_ch, pr.speed_m_s, a_cmd)
        for k, axles in enumerate(model.motors):
            series[f"analytic: {motor_name(axles)}"] = (
                t, tq_an[k])
    d_tq = res.to_dict()["torque"]
    spans = [(s["window_s"][0], s["window_s"][1], "left out of the figures")
             for s in d_tq.get("skipped") or []]
    phases = "; ".join(f"{k} {p['peak_Nm']:.4g} N·m" for k, p in (d_tq.get("by_phase") or {}).items()
                       if p.get("peak_Nm") is not None)
    items.append(_call(
        plot_series, None, series, out / "torque.png", "motor torque [N·m]",
        "Torque per motor: simulation against the analytic model", svg=svg, spans=spans,
        caption=f"Simulated torque per motor (raw steps) against the analytic model (dashed) along"
                f" the same motion; 10 ms average peaks by phase: {phases}. Shaded: windows left"
                " out of the figures (run.settle_s at the start, the drive settling after its"
                " ramp)."))
    heights = {f"axle {i}": (t, 1000 * pr.axle_y_m[:, i]) for i in range(pr.axle_y_m.shape[1])}
    items.append(_call(
        plot_series, None, heights, out / "bounce.png", "axle height [mm]",
        "Axle heights in the simulation (0 = the ideal axle line)", svg=svg,
        caption=f"Axle heights over time: bounce {1000 * res.axle_bounce_m:.3f} mm peak to peak"
                f" after {pr.settle_s:g} s."))
    # Single-step contact chatter (a light wheel under a heavy body touching and leaving the
    # track from one step to the next) shows as spikes in the raw 1 kHz record; a 10 ms
    # average shows what a rider feels below about 50 Hz. The comfort figures weight the raw
    # record with ISO 2631-1 Wk, which itself rolls off above 12.5 Hz.
    n_avg = max(1, int(round(0.010 / pr.dt_s)))
    avg = np.convolve(pr.seat_ay_m_s2, np.ones(n_avg) / n_avg, mode="same")
    avg_x = np.convolve(pr.seat_ax_m_s2, np.ones(n_avg) / n_avg, mode="same")
    items.append(_call(
        plot_series, None,
        {"vertical, raw steps": (t, pr.seat_ay_m_s2), "vertical, 10 ms average": (t, avg),
         "fore-aft, 10 ms average": (t, avg_x)},
        out / "seat.png", "seat acceleration [m/s²]", "Seat-point acceleration (simulated)",
        kinds={"vertical, raw steps": "raw"}, svg=svg,
        caption="Seat-point acceleration, gravity excluded: the raw 1 kHz record (faint; its"
                " single-step spikes are contact chatter) and 10 ms averages; the axis shows the"
                " bulk of the record and triangles on its edge mark the samples beyond it."))
    try:
        spec = cf.spectrum(pr.seat_ay_m_s2, 1.0 / pr.dt_s, "k", settle_s=pr.settle_s)
        items.append(_call(
            _comfort_plot, spec.centre_hz,
            {"unweighted": spec.rms_m_s2, "Wk weighted": spec.weighted_rms_m_s2},
            out / "comfort.png", ylabel="r.m.s. acceleration [m/s²]",
            title="Seat vibration in one-third octave bands (ISO 2631-1 Wk)", svg=svg,
            caption="Vertical seat vibration by one-third octave band, unweighted and Wk weighted."))
    except InputError as exc:
        items.append((out / "comfort.png", f"no comfort spectrum: {' '.join(str(exc).split())}"))
    frames = {"t_s": t, "axle_x_m": pr.axle_x_m, "axle_y_m": pr.axle_y_m,
              "wheel_angle_rad": pr.wheel_angle_rad, "pitch_rad": pr.pitch_rad,
              "speed_m_s": pr.speed_m_s, "torque_Nm": pr.shaft_torque_Nm[:, 0]}
    return items, frames


def _comfort_plot(freq_hz, values, path: Path, **kw) -> tuple[Path, str]:
    """The comfort spectrum plot, or its line saying why there is none."""
    from ridesim.render.plots import plot_spectrum

    try:
        return plot_spectrum(freq_hz, values, path, **kw)
    except InputError as exc:
        return path, f"no comfort spectrum: {' '.join(str(exc).split())}"

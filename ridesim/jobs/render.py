"""All the pictures of one scenario: solver plots, analytic loads, simulation traces, a clip.

Used by ``ridesim render``. The simulation is optional (``simulate=True``); the
clip then replays the simulated motion, else it shows the ideal kinematics.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ridesim.errors import InputError

__all__ = ["render_scenario"]


def render_scenario(sc, out_dir: str | Path, *, svg: bool = False, simulate: bool = False,
                    clip: bool = True, clip_s: float = 4.0, fps: int = 25,
                    size: tuple[int, int] = (640, 360), follow: bool = True,
                    progress=None, sim_result=None) -> list[tuple[Path, str]]:
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

    Returns
    -------
    list of (Path, str)
        Each file and its one-line caption.
    """
    from ridesim.assess.analytic import analyze_cycle
    from ridesim.assess.friction import friction_demand
    from ridesim.model.vehicle import axle_offsets_m
    from ridesim.render.clip import render_clip
    from ridesim.render.plots import plot_series, render_solver_plots, write_index
    from ridesim.scenario.build import resolve_wheelbase, solve_track_scenario, wheel_mass

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    if sc.path.is_hub:  # a wheel around a hub: its own plot and clip
        from ridesim.jobs.hub import render_hub

        return render_hub(sc, out, svg=svg, clip=clip, clip_s=clip_s, fps=fps, size=size,
                          progress=progress)
    pair = solve_track_scenario(sc)
    sc = resolve_wheelbase(sc, pair)
    mp = wheel_mass(sc, pair.wheel)
    items = list(render_solver_plots(pair, out, mass=mp, svg=svg))
    steady = analyze_cycle(pair, vehicle=sc.vehicle, surface=sc.surface, wheel_mass=mp,
                           drive=sc.drive, accel_m_s2=0.0)
    v = steady.speed_m_s
    n_ax = sc.vehicle.axles
    fr = friction_demand(pair, speed_m_s=v, wheel_mass=mp,
                         wheel_load_N=9.80665 * (sc.vehicle.body_mass_kg / n_ax + mp.mass_kg),
                         rolling_resistance=sc.surface.rolling_resistance)
    xs = np.asarray(fr.x_m) * 1000.0
    items.append(plot_series(
        xs, {"required friction": np.asarray(fr.mu),
             "limit: surface friction": np.full(xs.shape, sc.surface.friction)},
        out / "friction.png", "friction coefficient [-]",
        f"Friction the contact needs at {v:.3g} m/s against the surface's {sc.surface.friction:g}",
        xlabel="axle position on the track [mm]", svg=svg,
        caption=f"Friction demand over one revolution: peak {fr.peak:.3f} at x = {fr.at_x_m:.3f} m,"
                f" surface {sc.surface.friction:g}."))
    from ridesim.model.vehicle import motor_name

    tq = {}
    motor_torque = steady.motor_torque_Nm
    if motor_torque is None:
        raise InputError("analyze_cycle gave no torque per motor to plot")
    for k, axles in enumerate(steady.motors):
        tq[f"analytic: {motor_name(axles)}"] = (steady.t_s, motor_torque[k])
    items.append(plot_series(
        None, tq, out / "torque_analytic.png", "motor torque [N·m]",
        f"Torque per motor at a steady {v:.3g} m/s (analytic)", svg=svg,
        caption=f"Analytic torque per motor over one revolution at a steady {v:.3g} m/s (cruise):"
                f" peak {steady.torque_peak_Nm:.4g} N·m, r.m.s. {steady.torque_rms_Nm:.4g} N·m."))
    frames = None
    if simulate:
        items_sim, frames = _sim_plots(sc, steady, out, svg, sim_result, pair, mp)
        items += items_sim
    if clip:
        offsets = tuple(float(o) for o in axle_offsets_m(n_ax, sc.vehicle.wheelbase_m))
        items.append(render_clip(pair, out / "clip.gif", frames_data=frames, duration_s=clip_s,
                                 fps=fps, size=size, follow=follow, speed_m_s=v,
                                 axle_offsets_m=offsets, progress=progress, title=sc.name))
    write_index(out, items, title=f"ridesim pictures: {sc.name}")
    return items


def _sim_plots(sc, steady, out: Path, svg: bool, res, pair, mp):
    """Simulated torque against the analytic model, axle heights, seat accelerations, comfort."""
    from ridesim.errors import InputError
    from ridesim.jobs.simulate import simulate
    from ridesim.metrics import comfort as cf
    from ridesim.render.plots import plot_series, plot_spectrum

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
    items.append(plot_series(
        None, series, out / "torque.png", "motor torque [N·m]",
        "Torque per motor: simulation against the analytic model", svg=svg, spans=spans,
        caption=f"Simulated torque per motor (raw steps) against the analytic model (dashed) along"
                f" the same motion; 10 ms average peaks by phase: {phases}. Shaded: windows left"
                " out of the figures (run.settle_s at the start, the drive settling after its"
                " ramp)."))
    heights = {f"axle {i}": (t, 1000 * pr.axle_y_m[:, i]) for i in range(pr.axle_y_m.shape[1])}
    items.append(plot_series(
        None, heights, out / "bounce.png", "axle height [mm]",
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
    items.append(plot_series(
        None, {"vertical, raw steps": (t, pr.seat_ay_m_s2), "vertical, 10 ms average": (t, avg),
               "fore-aft, 10 ms average": (t, avg_x)},
        out / "seat.png", "seat acceleration [m/s²]", "Seat-point acceleration (simulated)",
        kinds={"vertical, raw steps": "raw"}, svg=svg,
        caption="Seat-point acceleration, gravity excluded: the raw 1 kHz record (faint; its"
                " single-step spikes are contact chatter) and 10 ms averages; the axis shows the"
                " bulk of the record and triangles on its edge mark the samples beyond it."))
    try:
        spec = cf.spectrum(pr.seat_ay_m_s2, 1.0 / pr.dt_s, "k", settle_s=pr.settle_s)
        items.append(plot_spectrum(
            spec.centre_hz, {"unweighted": spec.rms_m_s2, "Wk weighted": spec.weighted_rms_m_s2},
            out / "comfort.png", ylabel="r.m.s. acceleration [m/s²]",
            title="Seat vibration in one-third octave bands (ISO 2631-1 Wk)", svg=svg,
            caption="Vertical seat vibration by one-third octave band, unweighted and Wk weighted."))
    except InputError as exc:
        items.append((out / "comfort.png", f"no comfort spectrum: {' '.join(str(exc).split())}"))
    frames = {"t_s": t, "axle_x_m": pr.axle_x_m, "axle_y_m": pr.axle_y_m,
              "wheel_angle_rad": pr.wheel_angle_rad, "pitch_rad": pr.pitch_rad,
              "speed_m_s": pr.speed_m_s, "torque_Nm": pr.shaft_torque_Nm[:, 0]}
    return items, frames

"""All the pictures of one scenario: solver plots, analytic loads, simulation traces, a clip.

Used by ``ridesim render``. The simulation is optional (``simulate=True``); the
clip then replays the simulated motion, else it shows the ideal kinematics.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

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
    from ridesim.io.build import solve_scenario, wheel_mass
    from ridesim.model.vehicle import axle_offsets_m
    from ridesim.render.clip import render_clip
    from ridesim.render.plots import plot_series, render_solver_plots, write_index

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    pair = solve_scenario(sc)
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
    tq = {}
    for i in steady.driven:
        tq[f"analytic: axle {i}"] = (steady.t_s, steady.torque_Nm[i])
    items.append(plot_series(
        None, tq, out / "torque_analytic.png", "shaft torque [N·m]",
        f"Shaft torque per driven wheel at a steady {v:.3g} m/s (analytic)", svg=svg,
        caption=f"Analytic shaft torque per driven wheel over one revolution at {v:.3g} m/s:"
                f" peak {steady.torque_peak_Nm:.4g} N·m, r.m.s. {steady.torque_rms_Nm:.4g} N·m."))
    frames = None
    if simulate:
        items_sim, frames = _sim_plots(sc, steady, out, svg, sim_result)
        items += items_sim
    if clip:
        offsets = tuple(float(o) for o in axle_offsets_m(n_ax, sc.vehicle.wheelbase_m))
        items.append(render_clip(pair, out / "clip.gif", frames_data=frames, duration_s=clip_s,
                                 fps=fps, size=size, follow=follow, speed_m_s=v,
                                 axle_offsets_m=offsets, progress=progress, title=sc.name))
    write_index(out, items, title=f"ridesim pictures: {sc.name}")
    return items


def _sim_plots(sc, steady, out: Path, svg: bool, res=None):
    """Simulated torque against the analytic model, axle and seat bounce, comfort spectrum."""
    from ridesim.metrics import comfort as cf
    from ridesim.render.plots import plot_series, plot_spectrum
    from ridesim.sim.run import simulate

    if res is None:
        res = simulate(sc)
    pr = res.probes
    t = pr["t_s"]
    items = []
    series = {}
    for k, i in enumerate(steady.driven):
        series[f"simulated: axle {i}"] = (t, pr["torque_Nm"][:, k])
    tl = steady.t_s
    reps = int(np.ceil(t[-1] / tl[-1])) + 1 if tl[-1] > 0 else 1
    t_rep = np.concatenate([tl + m * tl[-1] for m in range(reps)])
    series["analytic (steady speed)"] = (t_rep, np.tile(steady.torque_Nm[steady.driven[0]], reps))
    items.append(plot_series(None, series, out / "torque.png", "shaft torque [N·m]",
                             "Shaft torque: simulation against the analytic model", svg=svg))
    items.append(plot_series(
        t, {f"axle {i}": 1000 * pr["axle_y_m"][:, i] for i in range(pr["axle_y_m"].shape[1])}
        | {"seat": 1000 * (pr["seat_y_m"] - pr["seat_y_m"][0])},
        out / "bounce.png", "height [mm]", "Axle and seat heights (simulated)", svg=svg))
    fs = 1.0 / sc.run.timestep_s
    try:
        spec = cf.spectrum(pr["seat_accel_y_m_s2"], fs, "k", settle_s=sc.run.settle_s)
        items.append(plot_spectrum(spec.centre_hz, spec.weighted_m_s2, out / "comfort.png",
                                   title="Seat vibration, one-third octaves, Wk weighted",
                                   svg=svg))
    except Exception as exc:  # too short a record for a spectrum: say so in the index
        items.append((out / "comfort.png", f"no comfort spectrum: {exc}"))
    frames = {"t_s": t, "axle_x_m": pr["axle_x_m"], "axle_y_m": pr["axle_y_m"],
              "wheel_angle_rad": pr["wheel_angle_rad"], "pitch_rad": pr["pitch_rad"],
              "speed_m_s": pr["speed_m_s"]}
    return items, frames

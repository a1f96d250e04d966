"""GIF clip speed: ridesim's Pillow renderer against a fair matplotlib baseline, same run.

Both draw the same scene (track, ground, cart body, two hexagon wheels, axle marks, struts,
readout) for the same frames of the hexagon trolley demo, and both write a GIF; the times
include the file. The baseline is matplotlib used well: ONE figure (pyplot-free, on the Agg
canvas) whose artists are made once and only moved per frame (``set_data``/``set_xy``),
each frame quantised by Pillow to one palette made from the first frame, and the GIF
written by Pillow. The old baseline (a new pyplot figure per frame, written by imageio)
can still be run with ``--naive`` for reference. The two renderers are timed in paired,
alternated repeats; medians of wall time.

Targets: whole clip (frames + file) at least 5x faster than the old per-frame-figure
baseline, and a 10 s 640x360 clip at 25 fps (250 frames) in under 3 s on a 2-core machine.

Usage: python3 benchmarks/bench_clip.py [--frames N] [--repeat R] [--naive]
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from ridesim.model.vehicle import axle_offsets_m  # noqa: E402
from ridesim.render.clip import render_clip  # noqa: E402
from ridesim.render.plots import posed_outline  # noqa: E402
from ridesim.scenario.build import solve_scenario  # noqa: E402
from ridesim.scenario.load import load_scenario  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
W, H, FPS = 640, 360, 25


def naive_clip(pair, offsets, speed, n_frames, path):
    """New matplotlib figure per frame, then imageio's default GIF writer."""
    import imageio.v3 as iio
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    rmax = pair.wheel.extremes()[1]
    pts = pair.wheel.outline_points(256)
    frames = []
    for f in range(n_frames):
        t = f / FPS
        xs = 0.0 + speed * t + offsets
        cam = float(xs.mean())
        fig = plt.figure(figsize=(W / 100, H / 100), dpi=100)
        ax = fig.add_axes([0, 0, 1, 1])
        half = 0.5 * W / H * 3.2 * rmax
        prof = pair.track.polyline(cam - half, cam + half, 400)
        ax.fill_between(prof[:, 0], prof[:, 1], -2 * rmax, color="#d8c7a6")
        ax.plot(prof[:, 0], prof[:, 1], color="#6e5634")
        ax.plot([cam - half, cam + half], [0, 0], color="#c4cad2")
        ax.add_patch(plt.Rectangle((xs[0] - 0.55 * rmax, 1.12 * rmax), xs[-1] - xs[0] + 1.1 * rmax,
                                   0.3 * rmax, fc="#dee2e8", ec="#59636e"))
        for x in xs:
            wp = posed_outline(pts, float(x), float(pair.wheel_angle(x)))
            ax.fill(wp[:, 0], wp[:, 1], fc="#a9c8e2", ec="#1f4e79")
            ax.plot([x], [0], "o", color="#1d2530")
            ax.plot([x, x], [0, 1.12 * rmax], color="#59636e")
        ax.text(0.01, 0.97, f"t = {t:.2f} s   v = {speed:.3f} m/s", transform=ax.transAxes, va="top")
        ax.set_xlim(cam - half, cam + half)
        ax.set_ylim(-1.4 * rmax, 1.8 * rmax)
        ax.axis("off")
        fig.canvas.draw()
        frames.append(np.asarray(fig.canvas.buffer_rgba())[..., :3].copy())
        plt.close(fig)
    iio.imwrite(path, np.stack(frames), duration=1000 / FPS, loop=0)


def reused_figure_clip(pair, offsets, speed, n_frames, path):
    """One matplotlib figure for every frame (artists moved, not redrawn), Pillow GIF, one palette."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.patches import Polygon, Rectangle
    from PIL import Image

    rmax = pair.wheel.extremes()[1]
    pts = pair.wheel.outline_points(256)
    half = 0.5 * W / H * 3.2 * rmax
    fig = Figure(figsize=(W / 100, H / 100), dpi=100)
    canvas = FigureCanvasAgg(fig)
    ax = fig.add_axes((0, 0, 1, 1))
    ax.axis("off")
    ax.set_ylim(-1.4 * rmax, 1.8 * rmax)
    ground = ax.add_patch(Polygon(np.zeros((3, 2)), closed=True, fc="#d8c7a6", ec="none"))
    (track,) = ax.plot([], [], color="#6e5634")
    (axle_line,) = ax.plot([], [], color="#c4cad2")
    body = ax.add_patch(Rectangle((0, 1.12 * rmax), 1.0, 0.3 * rmax, fc="#dee2e8", ec="#59636e"))
    wheels = [ax.add_patch(Polygon(pts, closed=True, fc="#a9c8e2", ec="#1f4e79")) for _ in offsets]
    struts = [ax.plot([], [], color="#59636e")[0] for _ in offsets]
    (axles,) = ax.plot([], [], "o", color="#1d2530")
    text = ax.text(0.01, 0.97, "", transform=ax.transAxes, va="top")
    frames = []
    palette = None
    for f in range(n_frames):
        t = f / FPS
        xs = 0.0 + speed * t + offsets
        cam = float(xs.mean())
        prof = pair.track.polyline(cam - half, cam + half, 400)
        ground.set_xy(np.vstack([prof, [[cam + half, -2 * rmax], [cam - half, -2 * rmax]]]))
        track.set_data(prof[:, 0], prof[:, 1])
        axle_line.set_data([cam - half, cam + half], [0, 0])
        body.set_x(xs[0] - 0.55 * rmax)
        body.set_width(xs[-1] - xs[0] + 1.1 * rmax)
        for k, x in enumerate(xs):
            wheels[k].set_xy(posed_outline(pts, float(x), float(pair.wheel_angle(x))))
            struts[k].set_data([x, x], [0, 1.12 * rmax])
        axles.set_data(xs, np.zeros_like(xs))
        text.set_text(f"t = {t:.2f} s   v = {speed:.3f} m/s")
        ax.set_xlim(cam - half, cam + half)
        canvas.draw()
        im = Image.fromarray(np.asarray(canvas.buffer_rgba())[..., :3])
        if palette is None:
            palette = im.quantize(colors=255, method=Image.Quantize.MEDIANCUT, dither=Image.Dither.NONE)
        frames.append(im.quantize(palette=palette, dither=Image.Dither.NONE))
    frames[0].save(path, format="GIF", save_all=True, append_images=frames[1:],
                   duration=int(1000 / FPS), loop=0)


def timed(fn, repeat):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--frames", type=int, default=250, help="frames per clip (default 250 = 10 s at 25 fps)")
    ap.add_argument("--repeat", type=int, default=3, help="paired repeats (median reported)")
    ap.add_argument("--naive", action="store_true", help="also time the old new-figure-per-frame baseline")
    args = ap.parse_args()
    sc = load_scenario(ROOT / "scenarios" / "hexagon_trolley.toml")
    pair = solve_scenario(sc)
    off = axle_offsets_m(sc.vehicle.axles, sc.vehicle.wheelbase_m)
    speed = sc.drive.speed_m_s
    n = args.frames
    dur = n / FPS
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()},"
          f" load average {os.getloadavg()[0]:.1f}")
    print(f"scene: hexagon trolley, 2 axles, {n} frames of {W}x{H} at {FPS} fps ({dur:g} s)")
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        # Warm up imports and caches once (not timed).
        render_clip(pair, tmp / "warm.gif", duration_s=0.2, axle_offsets_m=off, speed_m_s=speed)
        reused_figure_clip(pair, off, speed, 3, tmp / "warm_fig.gif")
        fast_t, fig_t = [], []
        for _ in range(args.repeat):  # paired, alternated
            fast_t.append(timed(lambda: render_clip(pair, tmp / "fast.gif", duration_s=dur, fps=FPS,
                                                    size=(W, H), axle_offsets_m=off, speed_m_s=speed), 1))
            fig_t.append(timed(lambda: reused_figure_clip(pair, off, speed, n, tmp / "figure.gif"), 1))
        fast, fig = statistics.median(fast_t), statistics.median(fig_t)
        smooth = timed(lambda: render_clip(pair, tmp / "aa.gif", duration_s=dur, fps=FPS, size=(W, H),
                                           axle_offsets_m=off, speed_m_s=speed, antialias=True), 1)
        rows = [("ridesim Pillow, fixed palette (default)", fast, "fast"),
                ("ridesim Pillow, antialias=True", smooth, "aa"),
                ("matplotlib, one reused figure + Pillow", fig, "figure")]
        if args.naive:
            naive_clip(pair, off, speed, 3, tmp / "warm_naive.gif")
            naive = timed(lambda: naive_clip(pair, off, speed, n, tmp / "naive.gif"), 1)
            rows.append(("old: pyplot figure/frame + imageio", naive, "naive"))
        sizes = {key: (tmp / f"{key}.gif").stat().st_size / 1e6 for _, _, key in rows}
    print()
    print(f"{'renderer':<44}{'total [s]':>10}{'frames/s':>10}{'file [MB]':>11}")
    for label, sec, key in rows:
        print(f"{label:<44}{sec:>10.3f}{n / sec:>10.1f}{sizes[key]:>11.2f}")
    print()
    print(f"speed-up over one reused matplotlib figure (whole clip, frames + file): {fig / fast:.1f}x")
    print(f"antialiased speed-up over the reused figure: {fig / smooth:.1f}x")
    if args.naive:
        print(f"speed-up over the old per-frame-figure baseline: {naive / fast:.1f}x   target >= 5x:"
              f" {'met' if naive / fast >= 5 else 'NOT met'}")
    per250 = fast * 250 / n
    print(f"250 frames (10 s clip) take {per250:.2f} s   target < 3 s: {'met' if per250 < 3 else 'NOT met'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

"""Pictures of a wheel rolling around a hub: the rolling clip and the speed-ratio plot.

The clip draws the carousel view (the hub fixed, the arm turning about its centre) from
the ideal kinematics (:meth:`ridesim.solve.hub.HubPair.poses`) with Pillow, one palette
for all frames (fast to write, see ENGINE-NOTES); the plot is matplotlib.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ridesim.render.clip import clip_settings, draw_scale_bar, gif_durations, palette_frames, write_gif

__all__ = ["render_hub_clip", "plot_hub_ratio"]

TWO_PI = 2.0 * math.pi
_BG, _HUB, _WHEEL, _ARM, _MARK = (250, 250, 247), (120, 120, 128), (200, 80, 40), (40, 90, 170), (20, 20, 20)


def _rim(body, n: int = 720) -> np.ndarray:
    phi = np.linspace(0.0, TWO_PI, n, endpoint=False)
    if body.kinks:
        phi = np.sort(np.concatenate([phi, np.mod(body.kinks, TWO_PI)]))
    r = body.radius(phi)
    return np.column_stack([r * np.cos(phi), r * np.sin(phi)])


def render_hub_clip(pair, path: str | Path, *, duration_s: float = 4.0, fps: float = 25,
                    size: tuple[int, int] = (640, 360), wheel_turns: float = 1.0,
                    progress=None) -> tuple[Path, str]:
    """Write a GIF of the wheel rolling around (or inside) the fixed hub.

    Parameters
    ----------
    pair : HubPair
        A closed pair.
    path : str or Path
        The GIF to write (atomically).
    duration_s : float
        Clip length [s].
    fps : float
        Frame rate [1/s].
    size : (int, int)
        Width and height [px].
    wheel_turns : float
        Wheel turns (relative to the arm) shown over the clip, at constant speed.
    progress : callable, optional
        ``progress(fraction)`` while drawing.

    Returns
    -------
    (Path, str)
        The GIF and a one-line caption.
    """
    from PIL import Image, ImageDraw

    W, H, duration_s, fps = clip_settings(size, duration_s, fps)
    n = max(2, int(round(duration_s * fps)))
    hub = _rim(pair.hub)
    wheel = _rim(pair.wheel)
    E = pair.centre_distance
    reach = E + float(np.max(np.hypot(wheel[:, 0], wheel[:, 1])))
    reach = max(reach, float(np.max(np.hypot(hub[:, 0], hub[:, 1]))))
    scale = 0.9 * min(W, H) / (2 * reach)
    cx, cy = W / 2, H / 2

    def px(xy: np.ndarray) -> list[tuple[float, float]]:
        return [(cx + scale * x, cy - scale * y) for x, y in xy]

    th0 = float(pair.wheel_angle(0.0))
    thetas = th0 + TWO_PI * wheel_turns * np.arange(n) / n
    arm, axle, spin = pair.poses(thetas)
    base = Image.new("RGB", (W, H), _BG)
    fill = None if pair.side == "inside" else (225, 225, 228)
    ImageDraw.Draw(base).polygon(px(hub), outline=_HUB, fill=fill)
    frames = []
    for i in range(n):
        im = base.copy()
        d = ImageDraw.Draw(im)
        c, s = math.cos(spin[i]), math.sin(spin[i])
        pts = np.column_stack([axle[i, 0] + c * wheel[:, 0] + s * wheel[:, 1],
                               axle[i, 1] - s * wheel[:, 0] + c * wheel[:, 1]])
        d.polygon(px(pts), outline=_WHEEL, fill=(240, 200, 180))
        mark = np.array([[axle[i, 0], axle[i, 1]],
                         [axle[i, 0] + c * wheel[0, 0] + s * wheel[0, 1],
                          axle[i, 1] - s * wheel[0, 0] + c * wheel[0, 1]]])
        d.line(px(mark), fill=_MARK, width=1)  # a spoke to see the wheel turn
        d.line(px(np.array([[0.0, 0.0], axle[i]])), fill=_ARM, width=3)
        d.ellipse([cx - 3, cy - 3, cx + 3, cy + 3], fill=_ARM)
        d.text((8, 6), f"t = {i / fps:.2f} s   wheel turn {thetas[i] - th0:.2f} rad", fill=_MARK)
        draw_scale_bar(d, H, W / scale, scale, ink=_MARK, back=_BG)
        frames.append(im)
        if progress is not None and i % 10 == 0:
            progress(i / n)
    out = write_gif(path, palette_frames(frames), gif_durations(n, fps))
    where = "around the fixed hub" if pair.side == "outside" else "inside the fixed ring"
    caption = (f"{n} frames at {fps:g} fps: the wheel rolling {where} for {wheel_turns:g} turn(s),"
               f" its axle on an arm at {E:.4g} m from the centre (ideal kinematics).")
    return out, caption


def plot_hub_ratio(pair, path: str | Path) -> tuple[Path, str]:
    """Plot the speed ratio and the contact radii over a wheel turn (PNG or SVG by suffix).

    Parameters
    ----------
    pair : HubPair
        A closed pair.
    path : str or Path
        Picture to write (atomically).

    Returns
    -------
    (Path, str)
        The picture and a one-line caption.
    """
    from ridesim.render.plots import _save
    from ridesim.render.style import SERIES_COLOURS, new_figure, style_context

    th = np.linspace(0.0, TWO_PI, 721)
    part = "ring" if pair.side == "inside" else "hub"
    with style_context():  # the house style on a figure of its own: the caller's backend is untouched
        fig = new_figure((1100, 760))
        a1, a2 = fig.subplots(2, 1, sharex=True)
        a1.plot(th, pair.speed_ratio(th), color=SERIES_COLOURS[0], label=f"{part} / wheel speed")
        a1.axhline(1.0 / pair.ratio, color="0.6", lw=0.8, ls="--", label="mean (1 / ratio)")
        a1.set_ylabel(f"{part} / wheel speed [-]")
        a1.set_title(f"Wheel {'inside a ring' if part == 'ring' else 'around a hub'}:\ncentre distance"
                     f" {pair.centre_distance * 1000:.1f} mm, {pair.ratio:.4g} wheel turn(s) per {part} turn",
                     loc="left")
        a1.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0))
        a2.plot(th, pair.wheel_radius(th) * 1000, label="wheel r", color=SERIES_COLOURS[1])
        a2.plot(th, pair.hub_radius(th) * 1000, label=f"{part} ρ", color=SERIES_COLOURS[2])
        a2.set_ylabel("contact radius [mm]")
        a2.set_xlabel("wheel angle θ [rad]")
        a2.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0))
        out = _save(fig, path, svg=Path(path).suffix.lower() == ".svg")
    return out, ("Speed ratio dψ/dθ = r/ρ of the hub against the wheel (dashed: its mean, 1/ratio)"
                 " and the contact radii, over one wheel turn.")

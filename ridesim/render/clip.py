"""GIF clips of a wheel (or a cart on several wheels) rolling along its track.

Frames are drawn directly with Pillow onto palette images that all share one fixed
palette, so nothing is quantised per frame and the GIF writer copies indices
straight through. With ``antialias=True`` frames are drawn at twice the size,
box-filtered down, and mapped onto one palette made from sample frames.

Motion comes either from the ideal kinematics of the solved pair (axle on the line
``y = 0`` moving at a constant ground speed, wheel angle ``pair.wheel_angle(x)``) or
from simulation records given as ``frames_data``.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ridesim.errors import InputError
from ridesim.export.results import write_bytes_atomic

__all__ = ["render_clip", "PALETTE"]

PALETTE = (
    ("sky", (246, 248, 251)),
    ("ground", (216, 199, 166)),
    ("ground_edge", (110, 86, 52)),
    ("axle_line", (196, 202, 210)),
    ("wheel", (169, 200, 226)),
    ("wheel_edge", (31, 78, 121)),
    ("ink", (29, 37, 48)),
    ("body", (222, 226, 232)),
    ("body_edge", (89, 99, 110)),
    ("trail", (208, 103, 42)),
    ("contact", (184, 50, 58)),
    ("panel", (255, 255, 255)),
    ("cusp", (184, 50, 58)),
    ("grid", (230, 234, 239)),
)
"""Named colours of the clip, in palette order (index = position)."""

_IDX = {name: i for i, (name, _) in enumerate(PALETTE)}
_TWO_PI = 2.0 * math.pi


@dataclass
class _Motion:
    """Per-frame state: time [s], axle x/y [m] and wheel angle [rad] per axle, pitch [rad]."""

    t: np.ndarray
    x: np.ndarray  # (F, A)
    y: np.ndarray  # (F, A)
    theta: np.ndarray  # (F, A)
    pitch: np.ndarray  # (F,)
    speed: np.ndarray | None  # (F,)
    torque: np.ndarray | None  # (F, K)
    offsets: np.ndarray  # (A,) chassis-frame axle x [m]
    source: str


# ---------------------------------------------------------------------------- input checks
def _pos(name: str, v, lo: float = 0.0, hi: float = math.inf, unit: str = "") -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float, np.integer, np.floating)):
        raise InputError(f"{name} must be a number{unit}, got {v!r}")
    f = float(v)
    if not math.isfinite(f) or not lo < f <= hi:
        raise InputError(f"{name} must be > {lo:g} and <= {hi:g}{unit}, got {v!r}")
    return f


def _offsets(axle_offsets_m) -> np.ndarray:
    try:
        off = np.atleast_1d(np.asarray(axle_offsets_m, dtype=float))
    except (TypeError, ValueError):
        raise InputError(f"axle_offsets_m must be a list of numbers in m, got {axle_offsets_m!r}") from None
    if off.ndim != 1 or off.size < 1 or off.size > 16 or not np.all(np.isfinite(off)):
        raise InputError(f"axle_offsets_m must be 1 to 16 finite positions in m, got {axle_offsets_m!r}")
    return np.sort(off)


def _column(data: Mapping, key: str, n: int, axles: int | None, required: bool) -> np.ndarray | None:
    if key not in data or data[key] is None:
        if required:
            raise InputError(f"frames_data needs {key!r}: give it as an array with one row per sample")
        return None
    a = np.asarray(data[key], dtype=float)
    if a.ndim == 1:
        a = a[:, None]
    if a.ndim != 2 or a.shape[0] != n or (axles is not None and a.shape[1] != axles):
        want = f"({n},) or ({n}, {axles})" if axles is not None else f"({n},) or ({n}, k)"
        raise InputError(f"frames_data[{key!r}] has shape {np.shape(data[key])}; expected {want}")
    return a


def _required_column(data: Mapping, key: str, n: int, axles: int | None) -> np.ndarray:
    a = _column(data, key, n, axles, True)
    if a is None:  # _column raises for a missing required column; stated for the type checker
        raise InputError(f"frames_data needs {key!r}: give it as an array with one row per sample")
    return a


def _motion_from_data(data: Mapping, duration_s: float, fps: float, offsets: np.ndarray | None) -> _Motion:
    if not isinstance(data, Mapping):
        raise InputError("frames_data must be a dict of arrays (t_s, axle_x_m, axle_y_m,"
                         " wheel_angle_rad, ...)")
    t = np.asarray(data.get("t_s"), dtype=float) if data.get("t_s") is not None else None
    if t is None or t.ndim != 1 or t.size < 2 or not np.all(np.diff(t) > 0):
        raise InputError("frames_data['t_s'] must be at least two increasing times in s")
    n = t.size
    x = _required_column(data, "axle_x_m", n, None)
    A = x.shape[1]
    y = _required_column(data, "axle_y_m", n, A)
    th = _required_column(data, "wheel_angle_rad", n, A)
    pitch = _column(data, "pitch_rad", n, 1, False)
    speed = _column(data, "speed_m_s", n, 1, False)
    torque = _column(data, "torque_Nm", n, None, False)
    span = float(t[-1] - t[0])
    count = max(2, min(int(round(duration_s * fps)), int(math.floor(span * fps + 1e-9)) + 1))
    tf = t[0] + np.arange(count) / fps

    def at(a: np.ndarray) -> np.ndarray:
        return np.column_stack([np.interp(tf, t, a[:, j]) for j in range(a.shape[1])])

    xf, yf, thf = at(x), at(y), at(th)
    if pitch is not None:
        pf = at(pitch)[:, 0]
    elif A > 1:
        pf = np.arctan2(yf[:, -1] - yf[:, 0], xf[:, -1] - xf[:, 0])
    else:
        pf = np.zeros(count)
    if offsets is None or offsets.size != A:
        offsets = np.sort(x[0] - 0.5 * (x[0].min() + x[0].max()))
    order = np.argsort(x[0])
    return _Motion(tf, xf[:, order], yf[:, order], thf[:, order], pf,
                   None if speed is None else at(speed)[:, 0], None if torque is None else at(torque),
                   offsets, "simulation")


def _motion_ideal(pair, duration_s: float, fps: float, speed_m_s: float, offsets: np.ndarray,
                  x_start_m: float) -> _Motion:
    count = max(2, int(round(duration_s * fps)))
    t = np.arange(count) / fps
    xref = x_start_m + speed_m_s * t
    x = xref[:, None] + offsets[None, :]
    theta = pair.wheel_angle(x)
    return _Motion(t, x, np.zeros_like(x), theta, np.zeros(count), np.full(count, speed_m_s), None,
                   offsets, "ideal")


def _round_length(target_m: float) -> float:
    """The largest of 1, 2 and 5 times a power of ten not above ``target_m`` [m].

    Examples
    --------
    >>> _round_length(0.137), _round_length(2.4), _round_length(0.05)
    (0.1, 2.0, 0.05)
    """
    p = 10.0 ** math.floor(math.log10(target_m))
    for f in (5.0, 2.0, 1.0):
        if f * p <= target_m * (1 + 1e-9):
            return round(f * p, 12)
    return p


def clip_settings(size, duration_s, fps) -> tuple[int, int, float, float]:
    """Checked frame size [px], length [s] and frame rate [1/s] of a clip (every clip's rules).

    Raises
    ------
    InputError
        One line naming the argument and its limits.
    """
    try:
        W, H = (int(v) for v in size)
    except (TypeError, ValueError):
        raise InputError(f"size must be (width, height) in pixels, got {size!r}") from None
    if not (64 <= W <= 4096 and 64 <= H <= 4096):
        raise InputError(f"size must be 64 to 4096 pixels each, got {size!r}")
    duration_s = _pos("duration_s", duration_s, 0.0, 600.0, " s")
    fps = _pos("fps", fps, 0.0, 50.0, " (GIF viewers slow down frames shorter than 20 ms)")
    return W, H, duration_s, fps


def gif_durations(n: int, fps: float) -> list[int]:
    """Frame durations [ms] in whole centiseconds (the GIF unit).

    Rounded cumulatively, so that the total is the clip's length.
    """
    stamps = np.round(np.arange(n + 1) * 100.0 / fps) * 10
    return [int(v) for v in np.diff(stamps)]


def palette_frames(rgb: list) -> list:
    """RGB frames mapped onto one adaptive palette made from a strip of sample frames."""
    from PIL import Image

    n = len(rgb)
    W, H = rgb[0].size
    picks = sorted({0, n // 3, (2 * n) // 3, n - 1})
    strip = Image.new("RGB", (W, H * len(picks)))
    for i, p in enumerate(picks):
        strip.paste(rgb[p], (0, i * H))
    pal = strip.quantize(colors=255, method=Image.Quantize.MEDIANCUT, dither=Image.Dither.NONE)
    return [im.quantize(palette=pal, dither=Image.Dither.NONE) for im in rgb]


def write_gif(path: str | Path, frames: list, durations: list[int]) -> Path:
    """Write palette frames as a looping GIF, atomically."""
    import io

    buf = io.BytesIO()
    frames[0].save(buf, format="GIF", save_all=True, append_images=frames[1:], duration=durations,
                   loop=0, optimize=False)
    return write_bytes_atomic(Path(path), buf.getvalue())


def draw_scale_bar(d, H: int, view_m: float, px_per_m: float, *, ink, back, k: int = 1,
                   font=None) -> None:
    """A scale bar at a frame's bottom left: a round length near a fifth of the view's width.

    ``view_m`` is the frame's width in metres, ``px_per_m`` its scale, ``ink`` and ``back``
    the colours (palette indices or RGB), ``k`` the drawing's supersampling factor.
    """
    length = _round_length(0.2 * view_m)
    x0, y = 10 * k, H - 10 * k
    x1 = x0 + length * px_per_m
    d.rectangle([x0 - 3 * k, y - 20 * k, x1 + 3 * k, y + 5 * k], fill=back)
    d.line([x0, y, x1, y], fill=ink, width=2 * k)
    for x in (x0, x1):
        d.line([x, y - 4 * k, x, y + 3 * k], fill=ink, width=k)
    text = f"{length * 1000:g} mm" if length < 1.0 else f"{length:g} m"
    d.text((0.5 * (x0 + x1), y - 5 * k), text, fill=ink, font=font, anchor="mb")


# ---------------------------------------------------------------------------- drawing
class _Painter:
    """Draws frames of one clip; all geometry prepared once, per frame only transforms."""

    def __init__(self, pair, motion: _Motion, size: tuple[int, int], follow: bool, scale_px: int,
                 title: str | None) -> None:
        from PIL import Image, ImageDraw, ImageFont

        self.pair, self.m, self.follow = pair, motion, follow
        self.k = scale_px
        W, H = size[0] * scale_px, size[1] * scale_px
        self.W, self.H = W, H
        w = pair.wheel
        rmin, rmax, _ = w.extremes()
        self.rmax = rmax
        self.outline = w.outline_points(256)  # vertices for polygons
        phi = np.linspace(0.0, _TWO_PI, 720, endpoint=False)
        r = w.radius(phi)
        self.dense = np.column_stack([r * np.cos(phi), r * np.sin(phi)])  # for the contact search
        self.ref = self.outline[0]  # spoke end: shows the rotation
        A = motion.x.shape[1]
        self.cart = A > 1
        span = float(motion.offsets[-1] - motion.offsets[0])
        self.body_lo = rmax * 1.12
        self.body_hi = self.body_lo + max(0.3 * rmax, 0.06 * span)
        over = 0.55 * rmax
        xl, xr = motion.offsets[0] - over, motion.offsets[-1] + over
        self.body = np.array([[xl, self.body_lo], [xr, self.body_lo], [xr, self.body_hi], [xl, self.body_hi]])
        # Vertical extent [m] and scale [px/m].
        y_low = float(pair.track.polyline(0.0, pair.track.period, 512)[:, 1].min())
        top = (self.body_hi if self.cart else rmax) + 0.12 * rmax + float(motion.y.max())
        bot = y_low - 0.3 * rmax + min(0.0, float(motion.y.min()))
        band = 30 * scale_px  # readout strip at the top [px]
        s = (H - band) / (top - bot)
        xmin, xmax = float(motion.x.min()), float(motion.x.max())
        body_w = (span + 2 * over) if self.cart else 0.0
        if follow:
            s = min(s, 0.9 * W / (max(body_w, span + 2 * rmax)))
        else:
            s = min(s, 0.96 * W / (xmax - xmin + 2 * rmax + (2 * over if self.cart else 0.0)))
            self.cam_fixed = 0.5 * (xmin + xmax)
        self.s = s
        free = max(0.0, H - band - (top - bot) * s)  # left over when the width limits the scale
        self.y0 = band + 0.5 * free + top * s  # pixel row of the axle line
        half = 0.5 * W / s
        # Track polyline over everything the camera will see, about one point per 2 px.
        x0, x1 = xmin - half - 2 * rmax, xmax + half + 2 * rmax
        n = int(min(200000, max(400, (x1 - x0) * s / (2.0 * scale_px))))
        prof = pair.track.polyline(x0, x1, n)
        self.tx, self.ty = prof[:, 0], prof[:, 1]
        self.ty_px = self.y0 - self.ty * s
        rev = pair.revolution_length
        cusps = []
        for c in pair.cusps:
            if c.kind != "valley":  # the clip marks where corners seat; crests show themselves
                continue
            for j in range(math.floor((x0 - c.x_m) / rev), math.ceil((x1 - c.x_m) / rev) + 1):
                xc = c.x_m + j * rev
                if x0 <= xc <= x1:
                    cusps.append((xc, float(pair.track.y(xc))))
        self.cusps = np.array(sorted(cusps)) if cusps else np.zeros((0, 2))
        self.font = ImageFont.load_default(size=13 * scale_px)
        self.small = ImageFont.load_default(size=11 * scale_px)
        self.title = title
        self.contact, self.gap = self._contacts()
        fps = 1.0 / float(motion.t[1] - motion.t[0])
        self.t_dec = max(2, math.ceil(math.log10(fps) - 1e-9))
        flat = [c for _, rgb in PALETTE for c in rgb]
        self.blank = Image.new("P", (W, H), _IDX["sky"])
        self.blank.putpalette(flat + [0] * (768 - len(flat)))
        # What never changes is drawn once: the readout panel and the label.
        d = ImageDraw.Draw(self.blank)
        d.rectangle([0, 0, W, 24 * scale_px], fill=_IDX["panel"])
        d.line([0, 24 * scale_px, W, 24 * scale_px], fill=_IDX["grid"], width=scale_px)
        label = (title + "  ·  " if title else "") + (
            "ideal kinematics" if motion.source == "ideal" else "simulation")
        d.text((W - 8 * scale_px, 6 * scale_px), label, fill=_IDX["body_edge"], font=self.small, anchor="ra")

    def _contacts(self) -> tuple[np.ndarray, np.ndarray]:
        """Per frame and axle: world point [m] of least clearance and that clearance [m]."""
        m = self.m
        F, A = m.x.shape
        c, s = np.cos(m.theta), np.sin(m.theta)  # (F, A)
        px, py = self.dense[:, 0], self.dense[:, 1]
        wx = m.x[..., None] + c[..., None] * px + s[..., None] * py
        wy = m.y[..., None] - s[..., None] * px + c[..., None] * py
        gap = wy - self.pair.track.y(wx)
        j = np.argmin(gap, axis=-1)
        pick = np.take_along_axis
        cx = pick(wx, j[..., None], -1)[..., 0]
        cy = pick(wy, j[..., None], -1)[..., 0]
        g = pick(gap, j[..., None], -1)[..., 0]
        if m.source == "ideal":  # exact: the contact is straight below the axle
            cx, cy, g = m.x, self.pair.track.y(m.x), np.zeros_like(m.x)
        return np.stack([cx, cy], axis=-1), g

    def _px(self, x: np.ndarray, y: np.ndarray, cam: float) -> np.ndarray:
        out = np.empty((np.size(x), 2))
        out[:, 0] = (np.ravel(x) - cam) * self.s + 0.5 * self.W
        out[:, 1] = self.y0 - np.ravel(y) * self.s
        return out

    def frame(self, f: int):
        """Frame ``f`` as a palette ("P") image of the (possibly supersampled) size."""
        from PIL import ImageDraw

        m, k, W, H, s = self.m, self.k, self.W, self.H, self.s
        im = self.blank.copy()  # shares the one fixed palette
        d = ImageDraw.Draw(im)
        cam = float(m.x[f].mean()) if self.follow else self.cam_fixed
        half = 0.5 * W / s
        # Axle line and ground.
        d.line([0, self.y0, W, self.y0], fill=_IDX["axle_line"], width=k)
        i0 = max(0, int(np.searchsorted(self.tx, cam - half)) - 1)
        i1 = min(len(self.tx), int(np.searchsorted(self.tx, cam + half)) + 1)
        gx = (self.tx[i0:i1] - cam) * s + 0.5 * W
        gy = self.ty_px[i0:i1]
        edge = np.column_stack([gx, gy]).ravel().tolist()
        d.polygon([gx[0], H + 1] + edge + [gx[-1], H + 1], fill=_IDX["ground"])
        d.line(edge, fill=_IDX["ground_edge"], width=2 * k)
        if len(self.cusps):
            vis = self.cusps[(self.cusps[:, 0] > cam - half) & (self.cusps[:, 0] < cam + half)]
            for cx, cy in self._px(vis[:, 0], vis[:, 1], cam):
                h = 5 * k
                d.polygon([cx, cy + 1.5 * h, cx - h, cy + 3.2 * h, cx + h, cy + 3.2 * h], fill=_IDX["cusp"])
        # Axle trails (the path so far).
        if f > 0:
            for a in range(m.x.shape[1]):
                tr = self._px(m.x[:f + 1, a], m.y[:f + 1, a], cam)
                tr = tr[tr[:, 0] > -10 * k]
                if len(tr) > 1:
                    d.line(tr.ravel().tolist(), fill=_IDX["trail"], width=2 * k)
        # Cart body (several axles).
        if self.cart:
            ang = float(m.pitch[f])
            ca, sa = math.cos(ang), math.sin(ang)
            ox = 0.5 * (m.x[f, 0] + m.x[f, -1]) - (0.5 * (m.offsets[0] + m.offsets[-1])) * ca
            oy = 0.5 * (m.y[f, 0] + m.y[f, -1]) - (0.5 * (m.offsets[0] + m.offsets[-1])) * sa
            bx = ox + ca * self.body[:, 0] - sa * self.body[:, 1]
            by = oy + sa * self.body[:, 0] + ca * self.body[:, 1]
            for a in range(m.x.shape[1]):
                top = self._px(np.array([ox + ca * m.offsets[a] - sa * self.body_lo]),
                               np.array([oy + sa * m.offsets[a] + ca * self.body_lo]), cam)[0]
                ax, ay = self._px(m.x[f, a:a + 1], m.y[f, a:a + 1], cam)[0]
                d.line([ax, ay, top[0], top[1]], fill=_IDX["body_edge"], width=3 * k)
            d.polygon(self._px(bx, by, cam).ravel().tolist(), fill=_IDX["body"], outline=_IDX["body_edge"],
                      width=2 * k)
        # Wheels.
        for a in range(m.x.shape[1]):
            th = float(m.theta[f, a])
            c, sn = math.cos(th), math.sin(th)
            xa, ya = float(m.x[f, a]), float(m.y[f, a])
            wx = xa + c * self.outline[:, 0] + sn * self.outline[:, 1]
            wy = ya - sn * self.outline[:, 0] + c * self.outline[:, 1]
            d.polygon(self._px(wx, wy, cam).ravel().tolist(), fill=_IDX["wheel"], outline=_IDX["wheel_edge"],
                      width=2 * k)
            axp = self._px(np.array([xa]), np.array([ya]), cam)[0]
            rx = xa + c * self.ref[0] + sn * self.ref[1]
            ry = ya - sn * self.ref[0] + c * self.ref[1]
            rp = self._px(np.array([rx]), np.array([ry]), cam)[0]
            d.line([axp[0], axp[1], rp[0], rp[1]], fill=_IDX["wheel_edge"], width=k)
            r = 3.5 * k
            d.ellipse([axp[0] - r, axp[1] - r, axp[0] + r, axp[1] + r], fill=_IDX["ink"])
            if self.gap[f, a] <= max(1e-3, 0.01 * self.rmax):  # touching (within 1 mm or 1 % of r_max)
                cp = self._px(self.contact[f, a, :1], self.contact[f, a, 1:], cam)[0]
                r = 4 * k
                d.ellipse([cp[0] - r, cp[1] - r, cp[0] + r, cp[1] + r], outline=_IDX["contact"], width=2 * k)
        # Readout.
        parts = [f"t = {m.t[f]:.{self.t_dec}f} s"]
        if m.speed is not None:
            parts.append(f"v = {m.speed[f]:.3f} m/s")
        if m.torque is not None:
            vals = [v for v in m.torque[f] if math.isfinite(v)]
            if vals:
                parts.append("T = " + " / ".join(f"{v:.2f}" for v in vals) + " N·m")
        d.text((8 * k, 5 * k), "   ".join(parts), fill=_IDX["ink"], font=self.font)
        self._scale_bar(d)
        return im

    def _scale_bar(self, d) -> None:
        """A scale bar at the bottom left: a round length near a fifth of the frame's width."""
        draw_scale_bar(d, self.H, self.W / self.s, self.s, ink=_IDX["ink"], back=_IDX["sky"],
                       k=self.k, font=self.small)


def _render_frames(pair, *, frames_data, duration_s, fps, size, follow, speed_m_s, axle_offsets_m, x_start_m,
                   antialias, title, progress) -> tuple[list, list[int], _Motion]:
    """Palette frames, their durations [ms] and the motion drawn (arguments as :func:`render_clip`)."""
    W, H, duration_s, fps = clip_settings(size, duration_s, fps)
    off = _offsets(axle_offsets_m)
    if frames_data is None:
        speed_m_s = _pos("speed_m_s", speed_m_s, 0.0, 1e3, " m/s")
        motion = _motion_ideal(pair, duration_s, fps, speed_m_s, off, float(x_start_m))
    else:
        given = None if tuple(np.atleast_1d(axle_offsets_m)) == (0.0,) else off
        motion = _motion_from_data(frames_data, duration_s, fps, given)
    k = 2 if antialias else 1
    painter = _Painter(pair, motion, (W, H), bool(follow), k, title)
    n = len(motion.t)
    frames = []
    if antialias:
        rgb = []
        for f in range(n):
            rgb.append(painter.frame(f).convert("RGB").reduce(2))
            if progress is not None:
                progress(0.9 * (f + 1) / n)
        frames = palette_frames(rgb)
    else:
        for f in range(n):
            frames.append(painter.frame(f))
            if progress is not None:
                progress(0.9 * (f + 1) / n)
    return frames, gif_durations(n, fps), motion


def render_clip(pair, path: str | Path, *, frames_data: Mapping | None = None, duration_s: float = 4.0,
                fps: float = 25, size: Sequence[int] = (640, 360), follow: bool = True,
                speed_m_s: float = 0.3, progress: Callable[[float], None] | None = None,
                axle_offsets_m: Sequence[float] = (0.0,), x_start_m: float = 0.0, antialias: bool = False,
                title: str | None = None) -> tuple[Path, str]:
    """Write a looping GIF of the wheel (or cart) rolling along its track.

    Each frame shows the track (cusps marked), the axle line, the wheel(s) with a spoke
    that shows the rotation, the axle trail, the contact point (while touching), a cart
    body when there are several axles, and a readout of time [s], speed [m/s] and
    torque [N·m] when known.

    Parameters
    ----------
    pair : RollingPair
        The solved pair.
    path : str or Path
        GIF file to write (atomically).
    frames_data : dict, optional
        Simulation records, one row per sample: ``t_s`` (N,), ``axle_x_m``, ``axle_y_m``,
        ``wheel_angle_rad`` (N,) or (N, axles) -- wheel angle clockwise as in
        ``pair.wheel_angle`` --, and optionally ``pitch_rad`` (N,) (chassis, anticlockwise =
        front up; default from the first and last axle), ``speed_m_s`` (N,) and
        ``torque_Nm`` (N,) or (N, k) per motor. Resampled linearly at ``fps``.
        Without it the ideal kinematics of the pair are drawn.
    duration_s : float
        Clip length [s] (with ``frames_data``, at most the recorded span).
    fps : float
        Frames per second (1 to 50).
    size : (int, int)
        Frame width and height [px].
    follow : bool
        Camera follows the vehicle (else fixed, showing the whole run).
    speed_m_s : float
        Constant ground speed [m/s] of the ideal kinematics.
    progress : callable, optional
        Called with the fraction done, from 0 to 1 (1 once the file is written).
    axle_offsets_m : sequence of float
        Chassis-frame x [m] of each axle (e.g. ``ridesim.model.vehicle.axle_offsets_m``).
    x_start_m : float
        Chassis reference position [m] at t = 0 (ideal kinematics).
    antialias : bool
        Smoother edges at about three times the drawing cost.
    title : str, optional
        Short label drawn in the top right corner (e.g. the scenario name).

    Returns
    -------
    (Path, str)
        The GIF and a one-line caption.
    """
    frames, durations, motion = _render_frames(
        pair, frames_data=frames_data, duration_s=duration_s, fps=fps, size=size, follow=follow,
        speed_m_s=speed_m_s, axle_offsets_m=axle_offsets_m, x_start_m=x_start_m, antialias=antialias,
        title=title, progress=progress)
    out = write_gif(path, frames, durations)
    if progress is not None:
        progress(1.0)
    n = len(frames)
    axles = motion.x.shape[1]
    what = f"ideal rolling at {speed_m_s:g} m/s" if motion.source == "ideal" else "simulated motion"
    who = f"cart on {axles} axles" if axles > 1 else "wheel"
    caption = (f"{n} frames at {fps:g} fps ({sum(durations) / 1000:.2f} s) of the {who} on its track,"
               f" {what}; camera {'following' if follow else 'fixed'}.")
    return out, caption

"""Pictures and clips: valid files of the requested size, honest frame counts, true geometry.

Outside facts used:
- PNG files start with the 8-byte signature 89 50 4E 47 0D 0A 1A 0A and carry their
  size in the IHDR chunk (W3C, "Portable Network Graphics (PNG) Specification", 2nd ed., 2003);
- GIF frame delays are stored in hundredths of a second (CompuServe, "Graphics Interchange
  Format Version 89a", 1990), so every frame duration is a multiple of 10 ms;
- a regular hexagon with apothem a is 2a/cos(30 deg) wide across its corners and 2a tall across
  its faces (elementary geometry), and a catenary arch y = -a cosh(x/a) of the hexagon's track
  (L. Hall & S. Wagon, "Roads and Wheels", Mathematics Magazine 65(5), 1992) spans its period
  2 a asinh(tan 30 deg) while rising a (1/cos 30 deg - 1) from the cusps to the crest.
"""

import math
import re
import struct
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from PIL import Image

import ridesim as rs
from ridesim.model.vehicle import axle_offsets_m
from ridesim.render import plots
from ridesim.render.clip import render_clip
from ridesim.render.plots import (
    plot_roll,
    plot_series,
    plot_spectrum,
    plot_track,
    plot_wheel,
    render_solver_plots,
    write_index,
)

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


@pytest.fixture(scope="module")
def hexagon_pair():
    return rs.track_for(rs.Wheel.polygon(sides=6, apothem=0.12))


def png_size(path):
    data = path.read_bytes()
    assert data[:8] == PNG_SIGNATURE
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def assert_nontrivial(path, size):
    assert png_size(path) == size
    with Image.open(path) as im:
        im.verify()
    with Image.open(path) as im:
        rgb = np.asarray(im.convert("RGB"))
    packed = (rgb[..., 0].astype(np.uint32) << 16) | (rgb[..., 1].astype(np.uint32) << 8) | rgb[..., 2]
    colours = np.unique(packed)
    assert len(colours) > 16  # lines, fills, antialiased text
    not_white = np.any(rgb < 245, axis=-1).mean()
    assert 0.03 < not_white < 0.97  # neither blank nor a solid block


def svg_path_points(svg_file, gid):
    """Display coordinates of the first path inside the group with id ``gid`` (matplotlib SVG)."""
    root = ET.parse(svg_file).getroot()
    ns = "{http://www.w3.org/2000/svg}"
    group = next(g for g in root.iter(f"{ns}g") if g.get("id") == gid)
    d = next(group.iter(f"{ns}path")).get("d")
    nums = [float(v) for v in re.findall(r"-?\d+(?:\.\d+)?(?:e-?\d+)?", d)]
    return np.array(nums).reshape(-1, 2)


# ---------------------------------------------------------------------------- clip
def gif_frames(path):
    with Image.open(path) as im:
        n = im.n_frames
        size = im.size
        frames, durations = [], []
        for i in range(n):
            im.seek(i)
            frames.append(np.asarray(im.convert("RGB")))
            durations.append(im.info["duration"])
        loop = im.info.get("loop")
    return n, size, frames, durations, loop


def test_clip_frame_count_size_and_distinct_frames(tmp_path, hexagon_pair):
    off = axle_offsets_m(2, 0.3955)
    seen = []
    out, caption = render_clip(hexagon_pair, tmp_path / "c.gif", duration_s=1.2, fps=25, size=(320, 180),
                               axle_offsets_m=off, speed_m_s=0.4, progress=seen.append)
    n, size, frames, durations, loop = gif_frames(out)
    assert n == 30 and size == (320, 180)  # 1.2 s at 25 fps, no frame merged away
    assert loop == 0
    assert all(d == 40 for d in durations)  # 1/25 s, a whole number of GIF hundredths
    for a, b in zip(frames[:-1], frames[1:], strict=True):
        assert np.any(a != b)
    assert seen[-1] == 1.0 and all(b >= a for a, b in zip(seen[:-1], seen[1:], strict=True))
    assert "30 frames" in caption and "\n" not in caption


def test_clip_durations_whole_hundredths_and_total(tmp_path, hexagon_pair):
    out, _ = render_clip(hexagon_pair, tmp_path / "c30.gif", duration_s=1.0, fps=30, size=(160, 90))
    n, _, _, durations, _ = gif_frames(out)
    assert n == 30
    assert all(d % 10 == 0 and d >= 20 for d in durations)
    assert sum(durations) == 1000  # 30 frames of 1/30 s


def test_clip_from_simulation_records(tmp_path, hexagon_pair):
    t = np.linspace(0.0, 2.0, 2001)
    x = 0.05 + 0.3 * t
    data = {
        "t_s": t,
        "axle_x_m": x,
        "axle_y_m": 0.003 * np.sin(2 * np.pi * 2 * t),
        "wheel_angle_rad": hexagon_pair.wheel_angle(x),
        "speed_m_s": np.full_like(t, 0.3),
        "torque_Nm": 0.5 + 0.1 * np.sin(9 * t),
    }
    out, caption = render_clip(hexagon_pair, tmp_path / "s.gif", frames_data=data, duration_s=1.0, fps=20,
                               size=(200, 120), follow=False)
    n, size, frames, _, _ = gif_frames(out)
    assert n == 20 and size == (200, 120)
    assert "simulated" in caption
    # Records shorter than the clip: the clip stops at the last record (2 s at 20 fps + the end).
    out, _ = render_clip(hexagon_pair, tmp_path / "s2.gif", frames_data=data, duration_s=5.0, fps=20,
                         size=(200, 120))
    assert gif_frames(out)[0] == 41


def test_clip_rejects_bad_input(raises_one_line, tmp_path, hexagon_pair):
    raises_one_line(rs.InputError, ["fps", "50"], render_clip, hexagon_pair, tmp_path / "x.gif", fps=60)
    raises_one_line(rs.InputError, ["size"], render_clip, hexagon_pair, tmp_path / "x.gif", size=(10, 10))
    raises_one_line(rs.InputError, ["frames_data", "axle_y_m"], render_clip, hexagon_pair, tmp_path / "x.gif",
                    frames_data={"t_s": [0.0, 1.0], "axle_x_m": [0.0, 0.1], "wheel_angle_rad": [0, 1]})
    assert not (tmp_path / "x.gif").exists()


# ---------------------------------------------------------------------------- plots
def test_solver_plots_are_valid_pictures_with_index(tmp_path, hexagon_pair):
    mass = hexagon_pair.wheel.mass_properties(0.018, 600.0)
    items = render_solver_plots(hexagon_pair, tmp_path, mass=mass)
    assert [p.name for p, _ in items] == ["wheel.png", "track.png", "roll.png"]
    for p, cap in items:
        w, h = png_size(p)
        assert_nontrivial(p, (w, h))
        assert cap and "\n" not in cap
    assert png_size(tmp_path / "wheel.png") == (1300, 1000)
    assert png_size(tmp_path / "roll.png") == (1400, 800)
    index = write_index(tmp_path, items)
    lines = index.read_text().splitlines()
    entries = [ln for ln in lines if ln.startswith("- ")]
    assert len(entries) == 3
    for (p, cap), line in zip(items, entries, strict=True):
        assert f"[{p.name}]({p.name})" in line and cap in line


def test_wheel_plot_has_equal_aspect(tmp_path, hexagon_pair):
    png, caption = plot_wheel(hexagon_pair, tmp_path / "w.png", size_px=(900, 700), svg=True)
    assert_nontrivial(png, (900, 700))
    pts = svg_path_points(tmp_path / "w.svg", "wheel-outline")
    width, height = np.ptp(pts, axis=0)
    # Across corners over across faces: (2a / cos 30) / (2a) = 1 / cos 30 deg.
    np.testing.assert_allclose(width / height, 1 / math.cos(math.pi / 6), rtol=2e-3)  # SVG digits
    assert "r_min 120.0 mm" in caption and "r_max 138.6 mm" in caption


def test_track_plot_has_equal_aspect_and_requested_size(tmp_path, hexagon_pair):
    png, caption = plot_track(hexagon_pair, tmp_path / "t.png", periods=2, poses=3, size_px=(1200, 600),
                              svg=True)
    assert_nontrivial(png, (1200, 600))
    # Each posed hexagon keeps six equal sides on screen only if x and y share one scale: a
    # rotated regular hexagon stretched along one axis has unequal sides at any rotation.
    for k in range(3):
        pts = svg_path_points(tmp_path / "t.svg", f"wheel-pose-{k}")[:7]
        np.testing.assert_allclose(pts[0], pts[6], atol=1e-3)  # closed
        sides = np.hypot(*np.diff(pts, axis=0).T)
        np.testing.assert_allclose(sides, sides.mean(), rtol=2e-3)  # SVG keeps 6 significant digits
    assert "3 poses" in caption


def test_series_and_spectrum_plots(tmp_path):
    t = np.linspace(0.0, 2.0, 500)
    png, cap = plot_series(t, {"simulated torque": np.sin(5 * t), "analytic torque": (t, 0.9 * np.sin(5 * t)),
                               "limit": np.full_like(t, 1.2)},
                           tmp_path / "s.png", "torque per wheel [N·m]", "Drive torque", size_px=(800, 500))
    assert_nontrivial(png, (800, 500))
    assert cap.startswith("Drive torque")
    f = 2.0 ** (np.arange(-3, 16) / 3)  # one-third octave centres
    png, cap = plot_spectrum(f, {"seat": np.exp(-np.log(f / 4) ** 2)}, tmp_path / "f.png", size_px=(700, 400),
                             svg=True)
    assert_nontrivial(png, (700, 400))
    ET.parse(tmp_path / "f.svg")  # well-formed SVG beside the PNG
    png, _ = plot_spectrum(f, np.exp(-np.log(f / 4) ** 2), tmp_path / "g.png", kind="line",
                           size_px=(700, 400))
    assert_nontrivial(png, (700, 400))


def test_placed_figures_keep_their_text_inside_and_apart(tmp_path, hexagon_pair, monkeypatch):
    # Layout (common practice): every axes' text inside the picture, the figure legend clear of
    # the axes and their titles, rows of axes clear of each other.
    figs = []
    save = plots._save
    monkeypatch.setattr(plots, "_save", lambda fig, path, svg: (figs.append(fig), save(fig, path, svg))[1])
    t = np.linspace(0.0, 2.0, 500)
    plot_series(t, {f"simulated: a series with a long label {k}": (k + 1) * 1e-3 * np.sin(5 * t)
                    for k in range(7)}, tmp_path / "s.png", "torque per wheel [N·m]",
                "Seat-point acceleration (simulated)")
    plot_roll(hexagon_pair, tmp_path / "r.png")
    plot_spectrum(2.0 ** (np.arange(-3, 16) / 3), {"a": np.ones(19), "b": np.ones(19)}, tmp_path / "f.png")
    plot_track(hexagon_pair, tmp_path / "t.png")
    assert len(figs) == 4
    for fig in figs:
        r = fig.canvas.get_renderer()
        W, H = fig.bbox.width, fig.bbox.height
        frames = [ax.get_window_extent(r) for ax in fig.axes]
        for ax in fig.axes:
            tb = ax.get_tightbbox(r)
            assert tb.x0 >= 0 and tb.y0 >= 0 and tb.x1 <= W and tb.y1 <= H, (fig.axes[0].get_title(), tb)
        for leg in fig.legends:
            lb = leg.get_window_extent(r)
            assert lb.x0 >= 0 and lb.y0 >= 0 and lb.x1 <= W and lb.y1 <= H
            for ax, frame in zip(fig.axes, frames, strict=True):
                assert not lb.overlaps(frame)
                if ax.get_title():
                    assert not lb.overlaps(ax.title.get_window_extent(r))
        rows = sorted({(round(f.y0), round(f.y1)) for f in frames})
        assert all(a[1] < b[0] for a, b in zip(rows, rows[1:], strict=False))


def test_plots_reject_bad_input(raises_one_line, tmp_path, hexagon_pair):
    raises_one_line(rs.InputError, ["periods", ">= 2"], plot_track, hexagon_pair, tmp_path / "x.png",
                    periods=1)
    raises_one_line(rs.InputError, ["series"], plot_series, [0, 1], {}, tmp_path / "x.png", "y [m]", "t")
    raises_one_line(rs.InputError, ["as long"], plot_series, [0, 1, 2], {"a": [1, 2]}, tmp_path / "x.png",
                    "y [m]", "t")
    raises_one_line(rs.InputError, ["freq_hz"], plot_spectrum, [0.0, 1.0], [1, 2], tmp_path / "x.png")
    raises_one_line(rs.InputError, ["size_px"], plot_wheel, hexagon_pair, tmp_path / "x.png", size_px=(5, 5))


def test_series_plot_shades_the_windows_left_out(tmp_path):
    # A window left out of the figures is shaded: the plot area over it is darker than the same
    # area outside it (the same flat series on both halves, grey fill over the left one).
    from PIL import Image

    t = np.linspace(0.0, 10.0, 200)
    png, _ = plot_series(t, {"simulated": np.zeros_like(t)}, tmp_path / "s.png", "torque [N·m]",
                         "Shaded", size_px=(800, 500), spans=[(0.0, 5.0, "left out")])
    img = np.asarray(Image.open(png).convert("L"), dtype=float)
    h, w = img.shape
    rows = slice(int(0.3 * h), int(0.4 * h))  # above the zero line, below the legend
    left, right = img[rows, int(0.25 * w):int(0.3 * w)], img[rows, int(0.75 * w):int(0.8 * w)]
    assert np.median(left) < np.median(right) - 5


def test_hub_ratio_plot_keeps_the_callers_backend(tmp_path):
    # The speed-ratio plot draws on a figure of its own (the caller's matplotlib backend is left
    # alone, DEVELOPERS.md); its mean line is 1/ratio: two identical ellipses about their foci
    # turn one for one (Litvin et al., Noncircular Gears, 2009).
    import struct

    import matplotlib

    import ridesim as rs
    from ridesim.render.hub import plot_hub_ratio

    pair = rs.hub_for(rs.Wheel.ellipse(semi_axes=(0.06, 0.05), axle=(0.033166247903554, 0.0)), ratio=1)
    before = matplotlib.get_backend()
    try:
        matplotlib.use("pdf")
        out, caption = plot_hub_ratio(pair, tmp_path / "hub_ratio.png")
        assert matplotlib.get_backend().lower() == "pdf"
    finally:
        matplotlib.use(before)
    data = out.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (ISO/IEC 15948, 5.2)
    assert struct.unpack(">II", data[16:24]) == (1100, 760)
    assert pair.ratio == 1.0 and "1/ratio" in caption


def test_hub_clip_follows_the_clip_rules(tmp_path):
    """The hub clip takes the line clip's checks and timing: a bad size is one clear error, and
    frame delays, whole centiseconds (the GIF89a delay unit), add up to the clip's length."""
    from PIL import Image

    import ridesim as rs
    from ridesim.errors import InputError
    from ridesim.render.hub import render_hub_clip

    pair = rs.hub_for(rs.Wheel.ellipse(semi_axes=(0.06, 0.05), axle=(0.033166247903554, 0.0)),
                      ratio=1)
    with pytest.raises(InputError, match=r"^size must be 64 to 4096 pixels each"):
        render_hub_clip(pair, tmp_path / "bad.gif", size=(10, 10))
    assert not (tmp_path / "bad.gif").exists()
    path, _ = render_hub_clip(pair, tmp_path / "hub.gif", duration_s=1.5, fps=30, size=(200, 120))
    with Image.open(path) as im:
        delays = []
        for i in range(im.n_frames):
            im.seek(i)
            delays.append(im.info["duration"])
    assert len(delays) == 45 and sum(delays) == 1500
    assert all(d % 10 == 0 for d in delays)

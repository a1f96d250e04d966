"""``render`` and ``report`` speed: the current pictures against the previous code path, one run.

The previous path is kept here as a copy of the two functions it differed in:
``_save`` wrote every PNG with ``Figure.savefig`` (matplotlib's RGBA PNG at
Pillow's default zlib level 6) and the geometry plots filled polygons with
``Axes.fill`` (which walks each polygon segment by segment in Python to update
the data limits). Everything else (figures, layout, the clip, the simulation of
the report) is shared, so the ratio isolates what changed. The two paths are
timed in paired, alternated repeats (previous, current, previous, current, ...)
so that load on a shared machine hits both alike; each figure is the median,
in process CPU seconds and in wall seconds. The PNGs of both paths are compared
pixel by pixel.

Usage: python3 benchmarks/bench_render.py [--repeat N] [--scenario FILE]
"""

from __future__ import annotations

import argparse
import io
import os
import platform
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from ridesim.jobs.render import render_scenario  # noqa: E402
from ridesim.jobs.report import write_report  # noqa: E402
from ridesim.render import plots  # noqa: E402
from ridesim.scenario.load import load_scenario  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]


# ---------------------------------------------------------------- the previous code path
def previous_save(fig, path, svg):
    """The previous ``plots._save``: ``savefig`` to an RGBA PNG at zlib level 6."""
    from ridesim.export.results import write_bytes_atomic

    path = Path(path)
    png = path if path.suffix.lower() == ".png" else path.with_suffix(".png")
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=fig.dpi)
    write_bytes_atomic(png, buf.getvalue())
    if svg:
        buf = io.BytesIO()
        fig.savefig(buf, format="svg")
        write_bytes_atomic(png.with_suffix(".svg"), buf.getvalue())
    return png


def previous_fill(ax, x, y, **kw):
    """The previous polygon fill: ``Axes.fill``, which also updates the data limits."""
    return ax.fill(x, y, **kw)[0]


class Path_:
    """Switch ``ridesim.render.plots`` between the previous and the current code path."""

    current = (plots._save, plots._fill)
    previous = (previous_save, previous_fill)

    @staticmethod
    def use(which):
        plots._save, plots._fill = which


def timed(fn):
    c0, w0 = time.process_time(), time.perf_counter()
    fn()
    return time.process_time() - c0, time.perf_counter() - w0


def compare_pngs(a: Path, b: Path) -> tuple[int, int]:
    """Number of PNGs compared and how many differ in any pixel (RGB)."""
    from PIL import Image

    n = diff = 0
    for pa in sorted(a.rglob("*.png")):
        pb = b / pa.relative_to(a)
        ia = np.asarray(Image.open(pa).convert("RGB"))
        ib = np.asarray(Image.open(pb).convert("RGB"))
        n += 1
        diff += int(ia.shape != ib.shape or bool(np.any(ia != ib)))
    return n, diff


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5, help="paired repeats per command (median reported)")
    ap.add_argument("--scenario", default=str(ROOT / "scenarios" / "hexagon_trolley.toml"))
    args = ap.parse_args()
    sc = load_scenario(args.scenario)
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()},"
          f" load average {os.getloadavg()[0]:.1f}")
    print(f"scenario: {sc.name}; {args.repeat} paired repeats, alternated; medians")
    jobs = {
        "render (5 plots + 4 s clip)": ("render", lambda out: render_scenario(sc, out)),
        "report (check, motor, simulation, 9 plots, clip)": ("report", lambda out: write_report(sc, out)),
    }
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        for which in (Path_.previous, Path_.current):  # warm imports and caches (not timed)
            Path_.use(which)
            render_scenario(sc, tmp / "warm", clip_s=0.2)
        print()
        print(f"{'command':<50}{'previous':>18}{'current':>18}{'speed-up':>16}")
        print(f"{'':<50}{'CPU / wall [s]':>18}{'CPU / wall [s]':>18}{'CPU / wall':>16}")
        for label, (short, job) in jobs.items():
            t = {"previous": [], "current": []}
            for r in range(args.repeat):
                for key, which in (("previous", Path_.previous), ("current", Path_.current)):
                    Path_.use(which)
                    out = tmp / short / f"{key}{r}"
                    t[key].append(timed(lambda job=job, out=out: job(out)))
            med = {k: (statistics.median(c for c, _ in v), statistics.median(w for _, w in v))
                   for k, v in t.items()}
            (pc, pw), (cc, cw) = med["previous"], med["current"]
            print(f"{label:<50}{pc:>8.2f} / {pw:<7.2f}{cc:>10.2f} / {cw:<7.2f}"
                  f"{pc / cc:>8.2f}x / {pw / cw:.2f}x")
            n, diff = compare_pngs(tmp / short / "previous0", tmp / short / "current0")
            print(f"{'':<50}PNGs compared: {n}, differing in any pixel: {diff}")
        Path_.use(Path_.current)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

"""``render`` and ``report`` speed: the current pictures against the earlier code paths, one run.

Three paths are timed. *one by one* is today's drawing done in the calling process, each
still picture after the other, the report's check, motor sizing and simulation before them.
*concurrent* is what ``render``/``report`` do on a machine with idle cores: the still
pictures are drawn by forked processes (one core fewer than the cores used) and by this
process once its own work is done; the report's check, motor sizing and simulation run
while the pictures that need no simulation are drawn, then the clip (on a busy machine
they draw one by one).
*previous* is the path before both, kept here as a copy of the functions it differed in:
``_save`` wrote every PNG with ``Figure.savefig`` (matplotlib's RGBA PNG at Pillow's
default zlib level 6), the geometry plots filled polygons with ``Axes.fill`` (which
walks each polygon segment by segment in Python to update the data limits), and the plots
were placed by matplotlib's constrained layout (which measures every text twice before
the draw; ``_place`` measures once); it also draws one by one. Everything else (figures,
the clip, the simulation of the report) is shared, so the ratios isolate what changed.
The paths are timed in alternated repeats (previous, one by one, concurrent, previous,
...) so that load on a shared machine hits all alike; each figure is the median, in CPU
seconds (this process and its drawing processes) and in wall seconds; the fastest repeat of
each path (the least disturbed) is printed beside, for information. Imports are warmed
before timing. The PNGs of every path are compared byte by byte and pixel by pixel with
the concurrent path's (the previous path's differ a little in layout).

Usage: python3 benchmarks/bench_render.py [--repeat N] [--scenario FILE]
"""

from __future__ import annotations

import argparse
import io
import os
import platform
import resource
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from ridesim.jobs import render as render_job  # noqa: E402
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


def previous_place(fig):
    """The previous layout: matplotlib's constrained layout (two measuring passes at the draw)."""
    fig.set_layout_engine("constrained")


def one_by_one() -> bool:
    """Never fork: every picture is then drawn in the calling process."""
    return False


def every_core() -> int:
    """Draw on every core, whatever the load (the job's default takes only idle ones)."""
    return os.cpu_count() or 1


class Path_:
    """Switch ``ridesim.render.plots`` and ``ridesim.jobs.render`` between the code paths."""

    concurrent = (plots._save, plots._fill, plots._place, render_job._can_fork, every_core)
    serial = (plots._save, plots._fill, plots._place, one_by_one, render_job.idle_cores)
    previous = (previous_save, previous_fill, previous_place, one_by_one, render_job.idle_cores)

    @staticmethod
    def use(which):
        (plots._save, plots._fill, plots._place, render_job._can_fork,
         render_job.idle_cores) = which


def cpu_s() -> float:
    """CPU seconds of this process and of its finished children (the drawing processes)."""
    ch = resource.getrusage(resource.RUSAGE_CHILDREN)
    return time.process_time() + ch.ru_utime + ch.ru_stime


def timed(fn):
    c0, w0 = cpu_s(), time.perf_counter()
    fn()
    return cpu_s() - c0, time.perf_counter() - w0


def compare_pngs(a: Path, b: Path) -> tuple[int, int, int]:
    """Number of PNGs compared, how many differ in any byte, and in any pixel (RGB)."""
    from PIL import Image

    n = nbytes = npix = 0
    for pa in sorted(a.rglob("*.png")):
        pb = b / pa.relative_to(a)
        ia = np.asarray(Image.open(pa).convert("RGB"))
        ib = np.asarray(Image.open(pb).convert("RGB"))
        n += 1
        nbytes += int(pa.read_bytes() != pb.read_bytes())
        npix += int(ia.shape != ib.shape or bool(np.any(ia != ib)))
    return n, nbytes, npix


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5, help="alternated repeats per command (median reported)")
    ap.add_argument("--scenario", default=str(ROOT / "scenarios" / "hexagon_trolley.toml"))
    args = ap.parse_args()
    sc = load_scenario(args.scenario)
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()},"
          f" load average {os.getloadavg()[0]:.1f}")
    print(f"idle cores by the load average (what render/report would use): {render_job.idle_cores()};"
          f" the concurrent path below uses all {os.cpu_count()}")
    print(f"scenario: {sc.name}; {args.repeat} alternated repeats; medians")
    jobs = {
        "render (5 plots + 4 s clip)": ("render", lambda out: render_scenario(sc, out)),
        "report (check, motor, simulation, 9 plots, clip)": ("report", lambda out: write_report(sc, out)),
    }
    paths = {"previous": Path_.previous, "one by one": Path_.serial, "concurrent": Path_.concurrent}
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        for which in paths.values():  # warm imports and caches (not timed)
            Path_.use(which)
            render_scenario(sc, tmp / "warm", clip_s=0.2)
        print()
        print(f"{'command':<50}" + "".join(f"{k:>16}" for k in paths)
              + f"{'concurrent vs':>18}{'concurrent vs':>18}")
        print(f"{'':<50}" + f"{'CPU / wall [s]':>16}" * len(paths)
              + f"{'previous':>18}{'one by one':>18}")
        for label, (short, job) in jobs.items():
            t: dict[str, list[tuple[float, float]]] = {k: [] for k in paths}
            for r in range(args.repeat):
                for key, which in paths.items():
                    Path_.use(which)
                    out = tmp / short / f"{key}{r}"
                    t[key].append(timed(lambda job=job, out=out: job(out)))
            med = {k: (statistics.median(c for c, _ in v), statistics.median(w for _, w in v))
                   for k, v in t.items()}
            cc, cw = med["concurrent"]
            row = "".join(f"{c:>8.2f} / {w:<5.2f}" for c, w in med.values())
            ratios = "".join(f"{med[k][0] / cc:>8.2f}x / {med[k][1] / cw:.2f}x"
                             for k in ("previous", "one by one"))
            print(f"{label:<50}{row}{ratios}  (CPU / wall)")
            # The fastest repeat of each path: the one least disturbed by other work on a
            # shared machine (for information; the medians above are the figures).
            best = {k: min(w for _, w in v) for k, v in t.items()}
            print(f"{'':<50}fastest repeat, wall: " + ", ".join(f"{k} {w:.2f} s" for k, w in best.items())
                  + f"; concurrent vs previous {best['previous'] / best['concurrent']:.2f}x,"
                  f" vs one by one {best['one by one'] / best['concurrent']:.2f}x")
            for key in ("previous", "one by one"):
                n, nbytes, npix = compare_pngs(tmp / short / f"{key}0", tmp / short / "concurrent0")
                print(f"{'':<50}PNGs {key} vs concurrent: {n} compared, {nbytes} differ in bytes,"
                      f" {npix} in pixels")
        Path_.use(Path_.concurrent)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

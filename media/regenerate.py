"""Regenerate the README's pictures and clip from the demo scenarios.

Run from the project root: ``python3 media/regenerate.py``. Everything in
``media/`` except this script is written by it.
"""

from __future__ import annotations

import os
import shutil
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tools"))
# The simulated torque picture is drawn on numpy's AVX2 kernels, as the README's examples are
# (tools/readme_examples.py says why): set before numpy is imported.
from readme_examples import AVX2_KERNELS  # noqa: E402

os.environ.setdefault("NPY_DISABLE_CPU_FEATURES", AVX2_KERNELS)

from ridesim.jobs.render import render_scenario  # noqa: E402
from ridesim.model.vehicle import axle_offsets_m  # noqa: E402
from ridesim.render.clip import render_clip  # noqa: E402
from ridesim.scenario.build import solve_scenario  # noqa: E402
from ridesim.scenario.load import load_scenario  # noqa: E402

MEDIA = ROOT / "media"


def main() -> None:
    """Write the pictures and the clip into media/ and list their sizes."""
    hexa = load_scenario(ROOT / "scenarios" / "hexagon_trolley.toml")
    with tempfile.TemporaryDirectory() as tmp:
        items = render_scenario(hexa, tmp, clip=False, simulate=True)
        for path, _ in items:
            if path.name in ("track.png", "friction.png", "wheel.png", "torque.png"):
                shutil.copy(path, MEDIA / f"hexagon_trolley_{path.name}")
    pair = solve_scenario(hexa)
    offsets = tuple(float(o) for o in axle_offsets_m(hexa.vehicle.axles, hexa.vehicle.wheelbase_m))
    render_clip(pair, MEDIA / "hexagon_trolley_clip.gif", duration_s=3.0, fps=20, size=(480, 270),
                speed_m_s=hexa.drive.speed_m_s, axle_offsets_m=offsets, title=hexa.name)
    toy = load_scenario(ROOT / "scenarios" / "ellipse_pull_toy.toml")
    with tempfile.TemporaryDirectory() as tmp:
        for path, _ in render_scenario(toy, tmp, clip=False):
            if path.name == "track.png":
                shutil.copy(path, MEDIA / "ellipse_pull_toy_track.png")
    for f in sorted(MEDIA.iterdir()):
        print(f"{f.name}: {f.stat().st_size / 1000:.0f} kB")


if __name__ == "__main__":
    main()

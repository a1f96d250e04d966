"""The committed pictures in media/ are what media/regenerate.py makes from today's code.

The still pictures are redrawn in this process; the clip (ideal kinematics) frame by frame;
the torque picture, which needs the simulation, in a child process on numpy's AVX2 kernels, as
media/regenerate.py draws it (tools/readme_examples.py: the AVX-512 kernels round sines and
cosines differently in the last bit, which the contact solver carries into the figures).
"""

import importlib.util
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from ridesim.jobs.render import render_scenario
from ridesim.scenario.load import load_scenario

ROOT = Path(__file__).resolve().parent.parent
MEDIA = ROOT / "media"


def _pixels(path: Path) -> np.ndarray:
    from PIL import Image

    return np.asarray(Image.open(path).convert("L"), dtype=float)


@pytest.mark.parametrize("scenario, names", [
    ("hexagon_trolley", ("track.png", "friction.png", "wheel.png")),
    ("ellipse_pull_toy", ("track.png",)),
])
def test_committed_pictures_match_the_generator(scenario, names, tmp_path):
    sc = load_scenario(ROOT / "scenarios" / f"{scenario}.toml")
    items = render_scenario(sc, tmp_path, clip=False, simulate=False)
    made = {p.name: p for p, _ in items}
    for name in names:
        committed = MEDIA / f"{scenario}_{name}"
        a, b = _pixels(committed), _pixels(made[name])
        assert a.shape == b.shape, f"{committed.name}: size {a.shape} != {b.shape}; run media/regenerate.py"
        # Tolerance: font hinting and anti-aliasing may differ between machines by a few grey
        # levels on edges; a changed line, label or pose moves far more (common practice).
        changed = np.mean(np.abs(a - b) > 32)
        assert changed < 0.002, (f"{committed.name} differs from the generator on"
                                 f" {100 * changed:.2f} % of pixels; run media/regenerate.py")


def _same_picture(a: np.ndarray, b: np.ndarray, name: str) -> None:
    assert a.shape == b.shape, f"{name}: size {a.shape} != {b.shape}; run media/regenerate.py"
    # Tolerance as above (common practice).
    changed = np.mean(np.abs(a - b) > 32)
    assert changed < 0.002, (f"{name} differs from the generator on {100 * changed:.2f} % of"
                             " pixels; run media/regenerate.py")


def test_committed_clip_matches_the_generator(tmp_path):
    from PIL import Image, ImageSequence

    from ridesim.model.vehicle import axle_offsets_m
    from ridesim.render.clip import render_clip
    from ridesim.scenario.build import solve_scenario

    hexa = load_scenario(ROOT / "scenarios" / "hexagon_trolley.toml")
    pair = solve_scenario(hexa)
    offsets = tuple(float(o) for o in axle_offsets_m(hexa.vehicle.axles, hexa.vehicle.wheelbase_m))
    made = tmp_path / "clip.gif"
    render_clip(pair, made, duration_s=3.0, fps=20, size=(480, 270),
                speed_m_s=hexa.drive.speed_m_s, axle_offsets_m=offsets, title=hexa.name)
    with Image.open(MEDIA / "hexagon_trolley_clip.gif") as ca, Image.open(made) as cb:
        fa = [np.asarray(f.convert("L"), dtype=float) for f in ImageSequence.Iterator(ca)]
        fb = [np.asarray(f.convert("L"), dtype=float) for f in ImageSequence.Iterator(cb)]
    assert len(fa) == len(fb) > 1
    for k, (a, b) in enumerate(zip(fa, fb, strict=True)):
        _same_picture(a, b, f"hexagon_trolley_clip.gif frame {k}")


def _avx2_kernels() -> str:
    spec = importlib.util.spec_from_file_location("readme_examples", ROOT / "tools" / "readme_examples.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod.AVX2_KERNELS


def _has_avx2() -> bool:
    try:
        from numpy._core._multiarray_umath import __cpu_features__ as feats
    except ImportError:  # numpy before 2.0
        from numpy.core._multiarray_umath import __cpu_features__ as feats
    return bool(feats.get("AVX2"))


@pytest.mark.skipif(not _has_avx2(), reason="the committed torque picture is drawn on numpy's"
                    " AVX2 kernels, which this processor lacks")
def test_committed_torque_picture_matches_the_simulation(tmp_path):
    code = ("import sys; from ridesim.jobs.render import render_scenario;"
            " from ridesim.scenario.load import load_scenario;"
            " render_scenario(load_scenario(sys.argv[1]), sys.argv[2], clip=False, simulate=True)")
    env = {**os.environ, "NPY_DISABLE_CPU_FEATURES": _avx2_kernels(),
           "PYTHONPATH": str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", "")}
    subprocess.run([sys.executable, "-c", code, str(ROOT / "scenarios" / "hexagon_trolley.toml"),
                    str(tmp_path)], env=env, check=True, capture_output=True, timeout=600)
    _same_picture(_pixels(MEDIA / "hexagon_trolley_torque.png"), _pixels(tmp_path / "torque.png"),
                  "hexagon_trolley_torque.png")

"""The committed pictures in media/ are what media/regenerate.py makes from today's code.

Only the pictures that need no simulation are redrawn here (a few seconds); the torque
picture and the clip are redrawn by ``python3 media/regenerate.py``.
"""

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

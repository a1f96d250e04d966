"""The scenario template of `ridesim new` (ridesim.scenario.template): it loads as written and lists
every key of its sections from the one key table, with unit, default and ranges."""

import re
import tomllib

import pytest

from ridesim.cli import main
from ridesim.scenario.build import solve_scenario
from ridesim.scenario.load import scenario_from_dict
from ridesim.scenario.schema import KEYS, SECTIONS, TRACK_SHAPES, WHEEL_SHAPES
from ridesim.scenario.template import scenario_template

CASES = ([("wheel", s) for s in WHEEL_SHAPES] + [("track", s) for s in TRACK_SHAPES]
         + [("hub", s) for s in WHEEL_SHAPES] + [("ratio", None)])


@pytest.mark.parametrize("part,shape", CASES, ids=[f"{p}-{s}" for p, s in CASES])
def test_template_loads_solves_and_lists_every_key(part, shape):
    text = scenario_template("demo", **({part: shape} if part != "ratio" else {"ratio": True}))
    sc = scenario_from_dict(tomllib.loads(text))
    if part != "ratio":
        assert getattr(sc, part).shape == shape
    else:
        assert sc.ratio.formula is not None
    if part in ("hub", "ratio"):
        assert sc.path.kind == "hub" and sc.track is None
    solve_scenario(sc)
    for k in KEYS:
        if k.section == part and (k.shapes and shape not in k.shapes or k.name == "shape"):
            continue
        if k.section in ("wheel", "track", "hub", "ratio") and k.section != part:
            continue  # the other part is solved: only its material or as-built keys appear
        if k.path in ("wheel.axle_m", "hub.axle_m") and shape in ("polar", "harmonic"):
            continue  # measured from the axle (the hub's centre)
        if k.path == "hub.lobes" and shape == "circle":
            continue
        block = text.split(f"[{k.section}]\n", 1)[1].split("\n[", 1)[0]
        line = re.search(rf"^(# )?{re.escape(k.name)} =", block, flags=re.M)
        assert line, f"{k.path} missing"
        comment = block[:line.start()].rstrip("\n").rsplit("\n", 1)[-1]
        assert comment.startswith("# ") and k.doc in comment, k.path
        if k.unit not in ("", "-"):
            assert comment.startswith(f"# {k.unit};"), k.path
    for section in SECTIONS:
        given = section == part or section not in ("hub", "ratio", "track")
        assert (f"[{section}]" in text) == (given or section == "track" and part == "wheel"), section


def test_new_writes_the_file_once(tmp_path, capsys):
    assert main(["new", "cart", "--wheel", "ellipse", "--out", str(tmp_path)]) == 0
    path = tmp_path / "cart.toml"
    assert scenario_from_dict(tomllib.loads(path.read_text())).wheel.semi_axes_m == (0.2, 0.15)
    before = path.read_text()
    assert main(["new", "cart", "--out", str(tmp_path)]) == 2  # never overwrites
    assert path.read_text() == before
    assert main(["new", "x", "--wheel", "blob", "--out", str(tmp_path)]) == 2
    assert main(["new", "x", "--wheel", "circle", "--track", "wave", "--out", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert err.count("error:") == 3 and "already exists" in err and "polygon" in err

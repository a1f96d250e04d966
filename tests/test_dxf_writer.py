"""ridesim's own DXF writer (ridesim.export.dxf) held to ezdxf, the reference library for the format.

Every drawing of every demo scenario (lines and hub pairs), and drawings with a D-bore, a
kerf, an off-centre circle and awkward notes, is written twice: by ridesim, and through
ezdxf's model space (``tools/dxf_skeleton.py``'s ``reference_dxf``, the calls ridesim made
before it wrote DXF itself). The files must be byte-identical. Whatever the installed ezdxf's
version, it must read every file with ``audit()`` finding no error and fixing nothing.
"""

import importlib.util
import subprocess
import sys
from pathlib import Path

import pytest

import ridesim.export.dxf as dxf_mod
from ridesim.export import dxf_skeleton
from ridesim.jobs.export import export_scenario
from ridesim.scenario.load import load_scenario, scenario_from_dict

try:
    import ezdxf
except ImportError:  # the writer needs no ezdxf; only the checks against it are skipped
    ezdxf = None

ROOT = Path(__file__).resolve().parent.parent
SCENARIOS = sorted((ROOT / "scenarios").glob("*.toml"))
needs_ezdxf = pytest.mark.skipif(ezdxf is None, reason="ezdxf (the reference reader) is not installed")
needs_same_ezdxf = pytest.mark.skipif(
    ezdxf is None or ezdxf.__version__ != dxf_skeleton.EZDXF_VERSION,
    reason=f"the DXF skeleton was written by ezdxf {dxf_skeleton.EZDXF_VERSION}, and "
           f"{'no ezdxf' if ezdxf is None else 'ezdxf ' + ezdxf.__version__} is installed:"
           " run python3 tools/dxf_skeleton.py and review the difference")


def _tool():
    spec = importlib.util.spec_from_file_location("dxf_skeleton_tool", ROOT / "tools" / "dxf_skeleton.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


EXTRA = {
    # A hexagon with a D-bore (an arc as a polyline bulge) and a kerf, in several track pieces.
    "hex_dbore": {"name": "hex", "wheel": {"shape": "polygon", "sides": 6, "apothem_m": 0.12},
                  "vehicle": {"axles": 2, "wheelbase_m": 0.5},
                  "export": {"kerf_m": 0.0002, "axle_hole_m": 0.008, "axle_flat_m": 0.007,
                             "section_length_m": 0.3, "revolutions": 2}},
    # A circle off its axle (a CIRCLE entity), and notes with a line break, a closing caret and
    # characters beyond ASCII, which ezdxf stores on one line without the caret.
    "circle_notes": {"name": "c", "description": "Müller's cart, Ø 200 mm\nsecond line^",
                     "wheel": {"shape": "circle", "radius_m": 0.1, "axle_m": [0.02, 0.0]},
                     "export": {"kerf_m": 0.0002}},
}


def _scenarios():
    for path in SCENARIOS:
        yield path.stem, load_scenario(path)
    for name, data in EXTRA.items():
        yield name, scenario_from_dict(data)


@pytest.fixture(scope="module")
def exported(tmp_path_factory, monkeypatch_module):
    """Every drawing written by ridesim: (file, the Drawing it was written from)."""
    drawings: list[tuple[Path, dxf_mod.Drawing]] = []
    save = dxf_mod._save

    def recording_save(d, path):
        drawings.append((Path(path), d))
        return save(d, path)

    monkeypatch_module.setattr(dxf_mod, "_save", recording_save)
    root = tmp_path_factory.mktemp("dxfw")
    for name, sc in _scenarios():
        export_scenario(sc, root / name)
    return drawings


@pytest.fixture(scope="module")
def monkeypatch_module():
    mp = pytest.MonkeyPatch()
    yield mp
    mp.undo()


@needs_ezdxf  # the drawn demo reads its outline from a DXF drawing
def test_every_demo_drawing_was_written(exported):
    names = {p.name for p, _ in exported}
    for path in SCENARIOS:  # every demo scenario writes its wheel (line or hub) as DXF
        assert f"{load_scenario(path).name}_wheel.dxf" in names
    kinds = {e[0] for _, d in exported for e in d.entities}
    assert kinds == {"LWPOLYLINE", "CIRCLE", "LINE", "TEXT"}
    assert any(e[0] == "LWPOLYLINE" and e[3] is not None and any(e[3])  # a bulge (the D-bore's arc)
               for _, d in exported for e in d.entities)


@needs_same_ezdxf
def test_files_are_byte_identical_to_ezdxf(exported):
    tool = _tool()
    for path, d in exported:
        mine = path.read_bytes()
        ref = tool.reference_dxf(d).encode("utf-8")
        assert mine == ref, f"{path.name} differs from ezdxf's file"


@needs_same_ezdxf
def test_committed_skeleton_is_what_ezdxf_writes():
    text = (ROOT / "ridesim" / "export" / "dxf_skeleton.py").read_text(encoding="utf-8")
    assert text == _tool().skeleton_module(), "stale skeleton: run python3 tools/dxf_skeleton.py"


@needs_ezdxf
def test_ezdxf_reads_every_file_and_audit_finds_nothing(exported):
    for path, d in exported:
        doc = ezdxf.readfile(path)
        auditor = doc.audit()
        assert not auditor.has_errors and not auditor.has_fixes, (path.name, auditor.errors, auditor.fixes)
        assert doc.dxfversion == "AC1024" and doc.header["$INSUNITS"] == 4  # R2010, millimetres
        assert {layer.dxf.name: layer.color for layer in doc.layers if layer.dxf.name in dxf_mod.LAYERS} \
            == dxf_mod.LAYERS
        ents = list(doc.modelspace())
        assert len(ents) == len(d.entities)
        # What ezdxf reads back is what was drawn, to the last digit (Python's repr round-trips).
        for e, (kind, layer, *data) in zip(ents, d.entities, strict=True):
            assert (e.dxftype(), e.dxf.layer) == (kind, layer)
            if kind == "LWPOLYLINE":
                points, bulges, closed = data
                assert e.closed == closed
                got = e.get_points("xyb")
                assert [(x, y) for x, y, _ in got] == points
                assert [b for *_, b in got] == (bulges or [0.0] * len(points))
            elif kind == "CIRCLE":
                assert (tuple(e.dxf.center), e.dxf.radius) == ((*data[0], 0.0), data[1])
            elif kind == "LINE":
                assert (tuple(e.dxf.start), tuple(e.dxf.end)) == ((*data[0], 0.0), (*data[1], 0.0))
            else:
                assert (tuple(e.dxf.insert), e.dxf.height, e.dxf.text) == ((*data[0], 0.0), data[1], data[2])
        # handles are unique and $HANDSEED lies beyond every one of them (a reader adds from there)
        handles = [int(e.dxf.handle, 16) for e in doc.entitydb.values()]
        assert len(handles) == len(set(handles))
        assert int(doc.header["$HANDSEED"], 16) > max(handles)


@needs_ezdxf
def test_notes_are_kept_on_one_line(exported):
    (d,) = [d for p, d in exported if p.name == "c_wheel.dxf"]
    texts = [e[4] for e in d.entities if e[0] == "TEXT"]
    assert "Müller's cart, Ø 200 mmsecond line" in texts  # as ezdxf stores it: no break, no caret


def test_export_does_not_import_ezdxf(tmp_path):
    scen = str(ROOT / "scenarios" / "hexagon_trolley.toml")
    code = ("import sys; from ridesim.cli import main; "
            f"rc = main(['export', {scen!r}, '--out', {str(tmp_path)!r}]); "
            "print(rc, 'ezdxf' in sys.modules, any(m.startswith('ezdxf') for m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True)
    assert out.stdout.split()[-3:] == ["0", "False", "False"], out.stdout + out.stderr
    assert (tmp_path / "hexagon_trolley_wheel.dxf").stat().st_size > 0


def test_export_writes_dxf_where_ezdxf_cannot_be_imported(tmp_path):
    # sys.modules[name] = None makes every import of that name fail, as if it were not installed.
    scen = str(ROOT / "scenarios" / "elliptic_gear_pair.toml")
    code = ("import sys; sys.modules['ezdxf'] = None; from ridesim.cli import main; "
            f"sys.exit(main(['export', {scen!r}, '--out', {str(tmp_path)!r}]))")
    subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True)
    for part in ("wheel", "hub"):
        text = (tmp_path / f"elliptic_gear_pair_{part}.dxf").read_text(encoding="utf-8")
        # R2010 ($ACADVER AC1024), millimetres ($INSUNITS 4), and the part's outline on CUT
        assert "$ACADVER\n  1\nAC1024\n" in text and "$INSUNITS\n 70\n4\n" in text
        assert "  0\nLWPOLYLINE\n" in text and "  8\nCUT\n" in text

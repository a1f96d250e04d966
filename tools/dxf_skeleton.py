"""Write ridesim/export/dxf_skeleton.py: the fixed part of ridesim's DXF files, made with ezdxf.

ridesim writes its DXF files (AutoCAD R2010, millimetres, layers CUT, MARK and TEXT) without
importing ezdxf: the header, classes, tables, blocks and objects are the same in every file
but for four handles, so ezdxf writes them once, here, for an empty drawing, and
``ridesim.export.dxf`` adds the entities. The handles ezdxf gives out while writing (two
APPID records, the "written by" variable and ``$HANDSEED``) follow the entities; they are
stored as ``@@H+k@@``: the handle k places after the one that follows the last entity's.

This module is also the reference the tests hold the writer to: :func:`reference_dxf` draws
a :class:`ridesim.export.dxf.Drawing` through ezdxf (``msp.add_lwpolyline`` and the rest,
as ridesim did before it wrote DXF itself), and the files must be byte-identical.

Usage: ``python3 tools/dxf_skeleton.py`` (rewrites the module); ``--check`` only compares
(exit 1 when the committed module differs from what the installed ezdxf gives).
"""

from __future__ import annotations

import io
import re
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from ridesim.export.dxf import LAYERS, Drawing  # noqa: E402

MODULE = ROOT / "ridesim" / "export" / "dxf_skeleton.py"
#: DXF group codes whose values are handles (own handle, owner, soft and hard pointers).
HANDLE_CODES = {5, 105, 330, 340, 350, 360}


def new_doc():
    """An empty R2010 drawing in millimetres with the layers CUT, MARK and TEXT."""
    import ezdxf
    from ezdxf import units

    doc = ezdxf.new("R2010", setup=False)
    doc.units = units.MM
    doc.header["$MEASUREMENT"] = 1  # metric
    for name, colour in LAYERS.items():
        doc.layers.add(name, color=colour)
    return doc


def doc_text(doc) -> str:
    """The drawing as DXF text whose bytes depend on its content only.

    ezdxf stamps the save time and fresh GUIDs into the header unless told to write fixed
    metadata, and fills the CLASSES section from a set (in an order that follows Python's
    string hashing, which changes from process to process): both are fixed here.
    """
    import ezdxf

    doc.classes.add_required_classes(doc.dxfversion)
    doc.classes.classes = dict(sorted(doc.classes.classes.items(), key=lambda kv: str(kv[0])))
    buf = io.StringIO()
    before = ezdxf.options.write_fixed_meta_data_for_testing
    ezdxf.options.write_fixed_meta_data_for_testing = True
    try:
        doc.write(buf)
    finally:
        ezdxf.options.write_fixed_meta_data_for_testing = before
    # ezdxf's own "created by / written by" markers carry a clock time: keep the version only.
    return re.sub(r"^(\d+\.\d+\.\d+\S*) @ \d{4}-\d\d-\d\dT[0-9:.+\-]+$", r"\1", buf.getvalue(),
                  flags=re.M)


def reference_dxf(drawing: Drawing) -> str:
    """Draw ``drawing`` through ezdxf's model space and return the DXF text ezdxf writes."""
    doc = new_doc()
    msp = doc.modelspace()
    for kind, layer, *data in drawing.entities:
        attribs = {"layer": layer}
        if kind == "LWPOLYLINE":
            points, bulges, closed = data
            if bulges is None:
                msp.add_lwpolyline(points, close=closed, dxfattribs=attribs)
            else:
                msp.add_lwpolyline([(x, y, b) for (x, y), b in zip(points, bulges, strict=True)],
                                   format="xyb", close=closed, dxfattribs=attribs)
        elif kind == "CIRCLE":
            centre, radius = data
            msp.add_circle(centre, radius, dxfattribs=attribs)
        elif kind == "LINE":
            start, end = data
            msp.add_line(start, end, dxfattribs=attribs)
        elif kind == "TEXT":
            insert, height, text = data
            msp.add_text(text, height=height, dxfattribs={**attribs, "insert": insert})
        else:
            raise ValueError(f"unknown entity {kind!r}")
    return doc_text(doc)


def _pairs(text: str) -> list[tuple[str, str]]:
    lines = text.split("\n")
    if len(lines) % 2 != 1 or lines[-1] != "":
        raise ValueError("DXF text is not a sequence of code/value line pairs ending in a newline")
    return list(zip(lines[0:-1:2], lines[1:-1:2], strict=True))


def skeleton_module() -> str:
    """The source of ridesim/export/dxf_skeleton.py for the installed ezdxf."""
    import ezdxf

    doc = new_doc()
    first = int(str(doc.entitydb.handles), 16)  # the handle the first entity would get
    owner = doc.modelspace().block_record_handle
    pairs = _pairs(doc_text(doc))
    start = pairs.index(("  2", "ENTITIES")) + 1
    if pairs[start] != ("  0", "ENDSEC"):
        raise ValueError("the empty drawing's ENTITIES section is not empty")
    out = []
    for code, value in pairs:
        if int(code) in HANDLE_CODES and int(value, 16) >= first:
            value = f"@@H+{int(value, 16) - first}@@"  # given out while writing: after the entities
        out.append(f"{code}\n{value}\n")
    head, tail = "".join(out[:start]), "".join(out[start:])
    for part in (head, tail):
        if "\\" in part or '"""' in part or any(s != s.rstrip() for s in part.split("\n")):
            raise ValueError("the skeleton holds a backslash, triple quotes or trailing blanks")
    return (
        '"""The fixed part of every DXF file ridesim writes (R2010, millimetres, layers CUT, MARK, TEXT).\n'
        "\n"
        f"Written by ``python3 tools/dxf_skeleton.py`` with ezdxf {ezdxf.__version__}; do not edit.\n"
        "``HEAD`` runs up to the entities, ``TAIL`` from their end; ``@@H+k@@`` is the handle\n"
        "k places after the one that follows the last entity's.\n"
        '"""\n\n'
        f"EZDXF_VERSION = {ezdxf.__version__!r}\n"
        f"FIRST_HANDLE = 0x{first:X}  # the first entity's handle\n"
        f"OWNER = {owner!r}  # handle of the model space's block record, every entity's owner\n"
        f'HEAD = """{head}"""\n'
        f'TAIL = """{tail}"""\n'
    )


def main(argv: list[str]) -> int:
    """Rewrite the skeleton module, or with ``--check`` compare it (exit 1 when it differs)."""
    text = skeleton_module()
    if "--check" in argv:
        same = MODULE.read_text(encoding="utf-8") == text
        print(f"{MODULE.relative_to(ROOT)} {'matches' if same else 'differs from'} the installed ezdxf's")
        return 0 if same else 1
    MODULE.write_text(text, encoding="utf-8")
    print(f"wrote {MODULE.relative_to(ROOT)}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))

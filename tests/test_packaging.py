"""Packaging promises: the declared dependencies are exactly what the package imports.

A package's metadata is what pip installs from (PEP 621, "Storing project metadata in
pyproject.toml"): an import that is not declared works only by accident of what else is
installed, and a declared dependency that is never imported costs every user an install.
"""

import ast
import re
import sys
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

# Distribution name (as declared) -> the top-level module it installs (common practice:
# most distributions install a module of their own name; these do not).
IMPORT_NAME = {"pillow": "PIL", "dask": "dask"}


def _declared(reqs):
    names = set()
    for r in reqs:
        dist = re.match(r"[A-Za-z0-9_.-]+", r).group(0).lower()
        names.add(IMPORT_NAME.get(dist, dist.replace("-", "_")))
        if "[distributed]" in r:
            names.add("distributed")
    return names


def _imported():
    mods = set()
    for f in (ROOT / "ridesim").rglob("*.py"):
        for node in ast.walk(ast.parse(f.read_text(), str(f))):
            if isinstance(node, ast.Import):
                mods |= {a.name.split(".")[0] for a in node.names}
            elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
                mods.add(node.module.split(".")[0])
    return {m for m in mods if m not in sys.stdlib_module_names and m not in ("ridesim", "__future__")}


def test_dependencies_are_what_the_package_imports():
    meta = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]
    runtime = _declared(meta["dependencies"])
    optional = set()
    for extra, reqs in meta["optional-dependencies"].items():
        if extra != "test":
            optional |= _declared(reqs)
    imported = _imported()
    assert imported - runtime - optional == set(), "imported but not declared"
    assert runtime - imported == set(), "declared but never imported"


def test_license_file_matches_the_metadata():
    meta = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]
    assert meta["license"]["text"] == "MIT"
    assert (ROOT / "LICENSE").read_text().startswith("MIT License")

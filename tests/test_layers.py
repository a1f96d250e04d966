"""The layer map of DEVELOPERS.md holds: each module imports only its own layer and those below.

Data flows scenario -> model -> solve -> assess -> sim -> metrics -> outputs, and the jobs
orchestrate them from above (project convention, DEVELOPERS.md). Every import is checked,
including the ones deferred into functions, so a lazy import cannot hide an arrow that
runs back up.
"""

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent / "ridesim"

# Rank of each layer: a module may import modules of the same or a lower rank.
LAYERS = [
    ("base", ["ridesim._version", "ridesim.errors", "ridesim.safety", "ridesim.roots", "ridesim.arrays",
              "ridesim.validate", "ridesim.records"]),
    ("input records", ["ridesim.scenario.schema", "ridesim.scenario.load", "ridesim.scenario.toml_text",
                       "ridesim.scenario"]),
    ("model", ["ridesim.model"]),
    ("solve", ["ridesim.solve"]),
    ("build", ["ridesim.scenario.build"]),
    ("assess", ["ridesim.assess"]),
    ("sim", ["ridesim.sim"]),
    ("metrics", ["ridesim.metrics"]),
    ("outputs", ["ridesim.export", "ridesim.render"]),
    ("jobs", ["ridesim.jobs"]),
    ("shell", ["ridesim.cli", "ridesim.__main__"]),
]


def rank(module: str) -> int:
    best, best_len = None, -1
    for i, (_, prefixes) in enumerate(LAYERS):
        for p in prefixes:
            if (module == p or module.startswith(p + ".")) and len(p) > best_len:
                best, best_len = i, len(p)
    if best is None:
        raise KeyError(module)
    return best


def modules():
    for f in sorted(ROOT.rglob("*.py")):
        parts = list(f.relative_to(ROOT.parent).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        name = ".".join(parts)
        if name != "ridesim":
            yield name, f


def imports_of(path: Path, name: str):
    pkg = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    for node in ast.walk(ast.parse(path.read_text(), str(path))):
        if isinstance(node, ast.Import):
            yield from (a.name for a in node.names if a.name.startswith("ridesim"))
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = pkg.split(".")
                base = base[: len(base) - node.level + 1]
                mod = ".".join(base + ([node.module] if node.module else []))
            else:
                mod = node.module or ""
            if mod.startswith("ridesim"):
                for a in node.names:  # `from ridesim.x import y` may name a module y
                    yield f"{mod}.{a.name}" if _is_module(f"{mod}.{a.name}") else mod


def _is_module(name: str) -> bool:
    p = ROOT.parent.joinpath(*name.split("."))
    return p.with_suffix(".py").exists() or (p / "__init__.py").exists()


@pytest.mark.parametrize("name,path", list(modules()), ids=lambda v: str(v))
def test_imports_run_down_the_layers(name, path):
    if name == "ridesim.scenario":  # the package face only documents its modules
        return
    mine = rank(name)
    upward = [m for m in imports_of(path, name) if m != "ridesim" and rank(m) > mine]
    assert not upward, f"{name} ({LAYERS[mine][0]}) imports from a higher layer: {upward}"


def test_every_module_has_a_layer():
    for name, _ in modules():
        rank(name)

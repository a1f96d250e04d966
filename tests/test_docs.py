"""The documentation builds without warnings, its key reference is current, its notebook runs."""

import importlib.util
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
DOCS = ROOT / "docs"


def test_scenario_key_reference_is_generated_from_the_schema():
    out = subprocess.run([sys.executable, "tools/scenario_keys.py"],
                         capture_output=True, text=True, cwd=ROOT, check=True).stdout
    assert (DOCS / "scenario-keys.md").read_text(encoding="utf-8") == out, (
        "docs/scenario-keys.md is stale: python3 tools/scenario_keys.py > docs/scenario-keys.md")


@pytest.mark.skipif(importlib.util.find_spec("sphinx") is None
                    or importlib.util.find_spec("myst_parser") is None,
                    reason="sphinx and myst-parser (the test extra) are not installed here")
def test_docs_build_without_warnings(tmp_path):
    run = subprocess.run([sys.executable, "-m", "sphinx", "-W", "-q", "-b", "html", str(DOCS),
                          str(tmp_path / "html")], capture_output=True, text=True, cwd=ROOT,
                         timeout=300)
    assert run.returncode == 0, run.stderr[-3000:]
    page = (tmp_path / "html" / "jobs" / "report.html").read_text(encoding="utf-8")
    assert "write_report" in page  # the job's docstrings are in its page


@pytest.mark.skipif(importlib.util.find_spec("nbclient") is None
                    or importlib.util.find_spec("ipykernel") is None,
                    reason="nbclient and ipykernel (the test extra) are not installed here")
def test_example_notebook_runs(monkeypatch):
    import nbformat
    from nbclient import NotebookClient

    # The kernel imports this checkout's ridesim, whatever is installed.
    monkeypatch.setenv("PYTHONPATH", str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    monkeypatch.setenv("MPLBACKEND", "Agg")
    path = DOCS / "examples" / "first-build.ipynb"
    nb = nbformat.read(path, as_version=4)
    NotebookClient(nb, timeout=120, kernel_name="python3",
                   resources={"metadata": {"path": str(path.parent)}}).execute()
    outputs = [o for c in nb.cells if c.cell_type == "code" for o in c.get("outputs", [])]
    assert not [o for o in outputs if o.get("output_type") == "error"]
    kinds = {k for o in outputs for k in o.get("data", {})}
    assert {"image/svg+xml", "text/html", "image/png"} <= kinds  # drawings, tables, plots

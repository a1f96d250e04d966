"""The package type-checks cleanly under mypy (configured in pyproject.toml, [tool.mypy]).

ridesim ships ``py.typed`` (PEP 561), which promises its users that its annotations are
correct and checked: this test keeps that promise by running mypy on the whole package.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

def test_mypy_reports_no_errors():
    """mypy (the checker PEP 561 packages are written for) finds no error in ridesim."""
    api = pytest.importorskip("mypy.api")
    cwd = os.getcwd()
    os.chdir(ROOT)  # mypy reads [tool.mypy] (packages = ["ridesim"]) from the project root
    try:
        out, err, _status = api.run([])
    finally:
        os.chdir(cwd)
    errors = [line for line in out.splitlines() if re.match(r".+?\.py:\d+: error:", line)]
    assert not err.strip(), f"mypy could not run:\n{err}"
    assert not errors and _status == 0, "mypy reports errors:\n" + out

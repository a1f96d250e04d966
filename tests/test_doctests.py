"""The runnable examples in the docstrings (numpydoc Examples sections) stay correct."""

import doctest
import importlib

import pytest

MODULES = [
    "ridesim.model.wheel",
    "ridesim.model.track",
    "ridesim.solve.forward",
    "ridesim.jobs.check",
    "ridesim.scenario.load",
    "ridesim.scenario.schema",
    "ridesim.assess.clearance",
    "ridesim.assess.friction",
    "ridesim.metrics.comfort",
    "ridesim.model.expr",
    "ridesim.model.tolerance",
    "ridesim.export.results",
    "ridesim.validate",
    "ridesim.assess.findings",
    "ridesim.assess.wording",
    "ridesim.roots",
    "ridesim.render.report",
    "ridesim.render.clip",
    "ridesim.model.display",
]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    mod = importlib.import_module(name)
    result = doctest.testmod(mod, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert result.attempted > 0, f"{name} has no examples"
    assert result.failed == 0

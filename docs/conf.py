"""Sphinx configuration of the ridesim documentation (build: sphinx-build -W -b html docs out)."""

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))  # this checkout's ridesim

from ridesim import __version__  # noqa: E402

project = "ridesim"
author = "the ridesim authors"
release = version = __version__
extensions = [
    "sphinx.ext.autodoc",
    "sphinx.ext.napoleon",  # numpydoc-style docstrings (Parameters, Returns, Examples)
    "sphinx.ext.mathjax",
    "myst_parser",
]
source_suffix = {".md": "markdown", ".rst": "restructuredtext"}
myst_enable_extensions = ["dollarmath"]
myst_heading_anchors = 3
napoleon_google_docstring = False
napoleon_numpy_docstring = True
napoleon_use_rtype = False
napoleon_use_ivar = True  # attributes as fields: no duplicate descriptions beside autodoc members
autodoc_member_order = "bysource"
autodoc_typehints = "none"
exclude_patterns = ["_build", "examples/*.ipynb_checkpoints"]
html_theme = "alabaster"
html_title = f"ridesim {release}"
# The notebook is executed by the test suite (tests/test_docs.py), not by the build.
suppress_warnings = ["myst.header"]

"""Design to a brief: search the varied scenario keys for the designs that meet the requirements.

``ridesim design BRIEF.toml [--json] [--out DIR] [--workers N] [--cluster local|ADDRESS]``.
Each design is a scenario run through the same jobs as the commands
(:func:`ridesim.jobs.run_job`), cheapest first; see :mod:`ridesim.jobs.design.search` for the
method and :mod:`ridesim.jobs.design.brief` for the brief's format.
"""

from ridesim.jobs.design.brief import Brief, load_brief
from ridesim.jobs.design.result import DesignResult, run_design

__all__ = ["Brief", "DesignResult", "load_brief", "run_design"]

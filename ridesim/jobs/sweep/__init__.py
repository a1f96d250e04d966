"""Design sweeps and tolerance studies: a process pool by default, a Dask cluster on request."""

from ridesim.jobs.sweep.plan import Case, SweepPlan, load_sweep
from ridesim.jobs.sweep.run import run_sweep
from ridesim.jobs.sweep.summary import read_results

__all__ = ["Case", "SweepPlan", "load_sweep", "run_sweep", "read_results"]

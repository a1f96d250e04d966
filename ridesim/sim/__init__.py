"""Rigid-body simulation of a build: the pymunk world, stepping, probes and guard rails.

The engine interface (:class:`Engine`, :class:`Probes`) lets another engine be
measured by the same ride metrics (:mod:`ridesim.metrics.ride`, whose
:func:`~ridesim.jobs.simulate.simulate` is the usual entry point). The pymunk
parts (:class:`PymunkEngine`, :func:`build_world`, ...) are imported on first
use, so that reading probe records does not load pymunk.
"""

from ridesim.sim.engine import Engine, Probes

__all__ = ["Engine", "Probes", "PymunkEngine", "World", "WorldOptions", "build_world"]

_LAZY = {"PymunkEngine": "ridesim.sim.run", "World": "ridesim.sim.world",
         "WorldOptions": "ridesim.sim.world", "build_world": "ridesim.sim.world"}


def __getattr__(name: str):
    """Import the pymunk-backed names on first access (PEP 562)."""
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'ridesim.sim' has no attribute {name!r}")

"""Rigid-body simulation of a build: the pymunk world, stepping, probes and guard rails.

The engine interface (:class:`Engine`, :class:`Probes`) lets another engine be
measured by the same ride metrics (:mod:`ridesim.metrics.ride`, whose
:func:`~ridesim.metrics.ride.simulate` is the usual entry point).
"""

from ridesim.sim.engine import Engine, Probes
from ridesim.sim.run import PymunkEngine
from ridesim.sim.world import World, WorldOptions, build_world

__all__ = ["Engine", "Probes", "PymunkEngine", "World", "WorldOptions", "build_world"]

"""Ride metrics from probe time series; the simulation job is :func:`ridesim.jobs.simulate.simulate`."""

from ridesim.metrics.ride import (
    SimResult,
    axle_bounce_m,
    contact_lost,
    slip_onset,
    slip_threshold_m_s,
    speed_stats,
    torque_stats,
)

__all__ = [
    "SimResult",
    "axle_bounce_m",
    "contact_lost",
    "slip_onset",
    "slip_threshold_m_s",
    "speed_stats",
    "torque_stats",
]

"""Ride metrics from probe time series, and the simulation entry point :func:`simulate`."""

from ridesim.metrics.ride import (
    SimResult,
    axle_bounce_m,
    contact_lost,
    simulate,
    slip_onset,
    slip_threshold_m_s,
    speed_stats,
    torque_stats,
)

__all__ = [
    "SimResult",
    "axle_bounce_m",
    "contact_lost",
    "simulate",
    "slip_onset",
    "slip_threshold_m_s",
    "speed_stats",
    "torque_stats",
]

"""Ride comfort at the seat point (ISO 2631-1:1997 weighting), as ``ridesim.comfort``.

A thin public face over :mod:`ridesim.metrics.comfort`; see that module for the
weighting formulas, how they are applied, and the limits of the figures.

Examples
--------
>>> import numpy as np
>>> import ridesim.comfort as rc
>>> t = np.arange(20000) / 1000.0
>>> a = 0.5 * np.sin(2 * np.pi * 5.0 * t)      # 0.5 m/s^2 at 5 Hz, vertical
>>> round(rc.weighted_rms(a, 1000.0, "k", settle_s=10.0), 3)   # 0.5/sqrt(2) * |Wk(5 Hz)|
0.367
"""

from ridesim.metrics.comfort import (
    COMFORT_REACTIONS,
    FILTER_SETTLE_S,
    MIN_RECORD_S,
    MIN_SAMPLE_RATE_HZ,
    WEIGHTINGS,
    ComfortReport,
    ComfortSpectrum,
    WeightingSpec,
    comfort_band,
    comfort_report,
    crest_factor,
    spectrum,
    vdv,
    weight,
    weighted_rms,
    weighting_gain,
    weighting_response,
)

__all__ = [
    "COMFORT_REACTIONS",
    "ComfortReport",
    "ComfortSpectrum",
    "FILTER_SETTLE_S",
    "MIN_RECORD_S",
    "MIN_SAMPLE_RATE_HZ",
    "WEIGHTINGS",
    "WeightingSpec",
    "comfort_band",
    "comfort_report",
    "crest_factor",
    "spectrum",
    "vdv",
    "weight",
    "weighted_rms",
    "weighting_gain",
    "weighting_response",
]

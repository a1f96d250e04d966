"""Ride comfort at the seat point: frequency-weighted acceleration after ISO 2631-1:1997.

The standard grades whole-body vibration of a seated person by the r.m.s. of the
acceleration after a frequency weighting: ``Wk`` for the vertical axis (z) and
``Wd`` for the horizontal axes (x fore-aft, y lateral). Each weighting is a
product of analogue transfer functions (ISO 2631-1:1997, Annex A [memory]; the
parameter values are in ``WEIGHTINGS``):

* band limiting, a second-order Butterworth high-pass at ``f1`` and low-pass at
  ``f2`` (``Q = 1/sqrt(2)``)::

      H_h(s) = 1 / (1 + w1/(Q1 s) + w1^2/s^2)
      H_l(s) = 1 / (1 + s/(Q1 w2) + s^2/w2^2)

* the acceleration-velocity transition::

      H_t(s) = (1 + s/w3) / (1 + s/(Q4 w4) + s^2/w4^2)

* the upward step (``Wk`` only)::

      H_s(s) = (1 + s/(Q5 w5) + s^2/w5^2) / (1 + s/(Q6 w6) + s^2/w6^2) * (w5/w6)^2

with ``w = 2 pi f`` and ``s = j w``. The factor ``(w5/w6)^2`` makes ``H_s`` tend to 1
at high frequency and to ``(2.37/3.35)^2 = 0.50`` at low frequency; with it the
overall gain reproduces the standard's table of weighting factors (``Wk``
0.482 at 1 Hz, 1.054 at 6.3 Hz; ``Wd`` 1.011 at 1 Hz) to within one unit of its
last digit at every tabulated frequency but one: ``Wd`` at 10 Hz is printed 0.212
[memory] where the formula gives 0.202 (0.4 dB); the formula is used. Scaling the
step to unit gain at 0 Hz instead would double ``Wk`` below about 2 Hz.

How the weighting is applied
----------------------------
:func:`weight` multiplies the discrete Fourier transform of the record by the
exact analogue response ``W(j 2 pi f)`` at every frequency bin up to the Nyquist
frequency, after padding the record with 16 s of zeros, and transforms back.
That is the linear (not circular) convolution of the record with the
weighting's impulse response, i.e. the output of the analogue filter started at
rest at the first sample (the record's mean is removed first: the weighting has
zero gain at 0 Hz, so the mean only adds a start-up step). The padding exceeds
the decay of the slowest pole (the 0.4 Hz high-pass decays as ``exp(-1.78 t)``,
to 1e-12 in 16 s), so the tail does not wrap onto the start.

Why not a recursive digital filter: at the simulator's 1 kHz sampling, a
bilinear transform without pre-warping is 3.4 % low at 80 Hz and 6.6 % low at
100 Hz; pre-warping at 100 Hz moves the error to 2-3.5 % across 4-80 Hz. The
frequency-domain product is exact in gain and phase at every bin; the only
departure from the analogue filter is the band limit at ``fs/2``, where
``|Wk| = 1.0e-3`` and ``|Wd| = 1.6e-4`` at 1 kHz, so the effect on any r.m.s. is
below 1e-6 relative and near the record ends a point value may be off by that
order of the input amplitude.

Records and limits
------------------
Records must span at least ``MIN_RECORD_S`` = 2 s after any settling time: one
period of 0.5 Hz, the lowest frequency of the standard's range for health and
comfort (0.5-80 Hz). The weighting starts at rest, so its own transient lasts
about ``FILTER_SETTLE_S`` = 2.6 s (the 0.4 Hz high-pass decays to 1 %); pass
``settle_s`` to leave the start out of the statistics. Sample rates below
``MIN_SAMPLE_RATE_HZ`` = 16 Hz cannot represent the 4-8 Hz band where ``Wk`` peaks
and are refused; below 160 Hz the report cautions that content up to 80 Hz is
not represented.

Comfort is personal and the figures are engineering estimates: see the
``cautions`` of :func:`comfort_report`.
"""

from __future__ import annotations

import math
from types import MappingProxyType
from typing import Any

import numpy as np

from ridesim.errors import InputError
from ridesim.records import record
from ridesim.safety import with_safety
from ridesim.validate import is_number

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


@record
class WeightingSpec:
    """Parameters of one ISO 2631-1 frequency weighting.

    Attributes
    ----------
    name : str
        ``"k"`` (vertical, ``Wk``) or ``"d"`` (horizontal, ``Wd``).
    f1_hz, f2_hz : float
        Band-limiting high-pass and low-pass corner frequencies [Hz].
    q1 : float
        Quality factor of both band-limiting stages (Butterworth, ``1/sqrt(2)``).
    f3_hz, f4_hz : float
        Acceleration-velocity transition frequencies [Hz].
    q4 : float
        Quality factor of the transition.
    f5_hz, f6_hz : float or None
        Upward-step frequencies [Hz]; None when the weighting has no step.
    q5, q6 : float or None
        Quality factors of the upward step.
    """

    name: str
    f1_hz: float
    f2_hz: float
    q1: float
    f3_hz: float
    f4_hz: float
    q4: float
    f5_hz: float | None = None
    q5: float | None = None
    f6_hz: float | None = None
    q6: float | None = None


_Q_BUTTERWORTH = 1.0 / math.sqrt(2.0)

#: The weightings by name (ISO 2631-1:1997 Annex A parameter values).
WEIGHTINGS = MappingProxyType(
    {
        "k": WeightingSpec("k", 0.4, 100.0, _Q_BUTTERWORTH, 12.5, 12.5, 0.63, 2.37, 0.91, 3.35, 0.91),
        "d": WeightingSpec("d", 0.4, 100.0, _Q_BUTTERWORTH, 2.0, 2.0, 0.63),
    }
)

#: Shortest analysed record [s]: one period of 0.5 Hz, the standard's lowest comfort frequency.
MIN_RECORD_S = 2.0
#: Lowest accepted sample rate [Hz]: twice 8 Hz, the top of the band where ``Wk`` peaks.
MIN_SAMPLE_RATE_HZ = 16.0
#: Sample rate [Hz] below which content up to 80 Hz (top of the comfort range) is lost.
FULL_RANGE_SAMPLE_RATE_HZ = 160.0
#: Time [s] for the weighting's start-up transient to fall to 1 %: ln(100) / (Q1-damped 0.4 Hz pole rate).
FILTER_SETTLE_S = math.log(100.0) / (2.0 * math.pi * 0.4 / (2.0 * _Q_BUTTERWORTH))
#: Zero padding [s] behind a record before the transform: slowest pole decays to ~1e-12 in it.
_PAD_S = 16.0

#: Comfort reactions of ISO 2631-1:1997, Annex C (informative): (lower, upper, text) in m/s^2.
#: The ranges overlap as in the standard; the first is ``a < 0.315`` and the last ``a > 2``.
COMFORT_REACTIONS: tuple[tuple[float, float, str], ...] = (
    (0.0, 0.315, "not uncomfortable"),
    (0.315, 0.63, "a little uncomfortable"),
    (0.5, 1.0, "fairly uncomfortable"),
    (0.8, 1.6, "uncomfortable"),
    (1.25, 2.5, "very uncomfortable"),
    (2.0, math.inf, "extremely uncomfortable"),
)


# ----------------------------------------------------------------------------- validation


def _spec(weighting: str) -> WeightingSpec:
    if not isinstance(weighting, str) or weighting not in WEIGHTINGS:
        raise InputError(
            f"weighting must be one of {sorted(WEIGHTINGS)} ('k' vertical Wk, 'd' horizontal Wd), "
            f"got {weighting!r}"
        )
    return WEIGHTINGS[weighting]


def _sample_rate(sample_rate_hz: Any) -> float:
    if not is_number(sample_rate_hz):
        raise InputError(f"sample_rate_hz must be a number in Hz, got {sample_rate_hz!r}")
    fs = float(sample_rate_hz)
    if not math.isfinite(fs) or fs < MIN_SAMPLE_RATE_HZ:
        raise InputError(
            f"sample_rate_hz must be finite and >= {MIN_SAMPLE_RATE_HZ:g} Hz (to represent the 4-8 Hz "
            f"band where Wk peaks; 160 Hz or more covers the full 0.5-80 Hz range), got {sample_rate_hz!r}"
        )
    return fs


def _signal(name: str, accel_m_s2: Any) -> np.ndarray:
    try:
        x = np.asarray(accel_m_s2, dtype=float)
    except (TypeError, ValueError):
        raise InputError(
            f"{name} must be a 1-D array of accelerations in m/s^2, got {accel_m_s2!r:.60}"
        ) from None
    if x.ndim != 1:
        raise InputError(f"{name} must be a 1-D array of accelerations in m/s^2, got shape {x.shape}")
    bad = ~np.isfinite(x)
    if bad.any():
        i = int(np.argmax(bad))
        raise InputError(
            f"{name} must be finite, got {float(x[i])!r} at sample {i} "
            f"({int(bad.sum())} non-finite samples): remove or repair them before weighting"
        )
    return x


def _settle(settle_s: Any) -> float:
    if not is_number(settle_s):
        raise InputError(f"settle_s must be a number of seconds >= 0, got {settle_s!r}")
    v = float(settle_s)
    if not math.isfinite(v) or v < 0:
        raise InputError(f"settle_s must be finite and >= 0 s, got {settle_s!r}")
    return v


def _first_sample(n: int, fs: float, settle_s: float, name: str) -> int:
    """Index of the first analysed sample; checks the analysed span is long enough."""
    i0 = math.ceil(settle_s * fs - 1e-9)
    span_s = (n - i0) / fs
    if span_s < MIN_RECORD_S - 1e-12:
        raise InputError(
            f"{name} spans {n / fs:.3g} s of which {max(span_s, 0.0):.3g} s remain after settle_s = "
            f"{settle_s:g} s; at least {MIN_RECORD_S:g} s are needed (one period of 0.5 Hz): "
            "record longer or settle less"
        )
    return i0


# ----------------------------------------------------------------------------- weightings


def weighting_response(freq_hz: Any, weighting: str = "k") -> np.ndarray:
    """Complex frequency response ``W(j 2 pi f)`` of an ISO 2631-1 weighting.

    Parameters
    ----------
    freq_hz : array_like
        Frequencies [Hz], >= 0 (0 Hz gives 0: the weighting blocks a constant).
    weighting : {"k", "d"}
        ``"k"`` for ``Wk`` (vertical), ``"d"`` for ``Wd`` (horizontal).

    Returns
    -------
    ndarray of complex
        The response, same shape as ``freq_hz`` (dimensionless).

    Raises
    ------
    InputError
        Unknown weighting, or a negative or non-finite frequency.
    """
    w = _spec(weighting)
    f = np.asarray(freq_hz, dtype=float)
    if not np.all(np.isfinite(f)) or np.any(f < 0):
        raise InputError(f"freq_hz must be finite and >= 0 Hz, got {freq_hz!r:.60}")
    two_pi = 2.0 * math.pi
    out = np.zeros(f.shape, dtype=complex)
    pos = f > 0
    s = 1j * two_pi * f[pos]
    w1, w2, w3, w4 = (two_pi * v for v in (w.f1_hz, w.f2_hz, w.f3_hz, w.f4_hz))
    h = 1.0 / (1.0 + w1 / (w.q1 * s) + w1**2 / s**2)  # high-pass
    h = h / (1.0 + s / (w.q1 * w2) + s**2 / w2**2)  # low-pass
    h = h * (1.0 + s / w3) / (1.0 + s / (w.q4 * w4) + s**2 / w4**2)  # acceleration-velocity transition
    if w.f5_hz is not None and w.f6_hz is not None and w.q5 is not None and w.q6 is not None:
        w5, w6 = two_pi * w.f5_hz, two_pi * w.f6_hz
        h = (
            h
            * (1.0 + s / (w.q5 * w5) + s**2 / w5**2)
            / (1.0 + s / (w.q6 * w6) + s**2 / w6**2)
            * (w5 / w6) ** 2
        )
    out[pos] = h
    return out


def weighting_gain(freq_hz: Any, weighting: str = "k") -> np.ndarray:
    """Gain ``|W(f)|`` of an ISO 2631-1 weighting (the standard's weighting factor / 1000).

    Parameters
    ----------
    freq_hz : array_like
        Frequencies [Hz], >= 0.
    weighting : {"k", "d"}
        ``"k"`` for ``Wk`` (vertical), ``"d"`` for ``Wd`` (horizontal).

    Returns
    -------
    ndarray
        Dimensionless gain, same shape as ``freq_hz``.

    Examples
    --------
    >>> from ridesim.metrics.comfort import weighting_gain
    >>> round(float(weighting_gain(1.0, "k")), 3), round(float(weighting_gain(1.0, "d")), 3)
    (0.482, 1.011)
    """
    return np.abs(weighting_response(freq_hz, weighting))


def weight(accel_m_s2: Any, sample_rate_hz: float, weighting: str = "k", *,
           remove_mean: bool = True) -> np.ndarray:
    """Frequency-weighted acceleration ``a_w(t)``: the record through ``Wk`` or ``Wd``.

    The record's mean is removed, then the record is weighted in the frequency
    domain with the exact analogue response (see the module notes): the result is
    the analogue filter's output started at rest at the first sample.

    Parameters
    ----------
    accel_m_s2 : array_like, shape (N,)
        Acceleration [m/s^2] sampled uniformly; a constant such as gravity may be included.
    sample_rate_hz : float
        Sample rate [Hz], >= 16.
    weighting : {"k", "d"}
        ``"k"`` for ``Wk`` (vertical), ``"d"`` for ``Wd`` (horizontal).
    remove_mean : bool
        Remove the record's mean first (for a record cut from a longer motion). False for a
        record that starts from rest, where the filter started at rest is the true response.

    Returns
    -------
    ndarray, shape (N,)
        Weighted acceleration [m/s^2], on the same clock.

    Raises
    ------
    InputError
        Bad sample rate, weighting name, non-finite samples, or a record shorter than 2 s.
    """
    from scipy import fft

    fs = _sample_rate(sample_rate_hz)
    x = _signal("accel_m_s2", accel_m_s2)
    _first_sample(x.size, fs, 0.0, "accel_m_s2")
    spec = _spec(weighting)
    n = x.size
    m = fft.next_fast_len(n + math.ceil(_PAD_S * fs), real=True)
    f = fft.rfftfreq(m, d=1.0 / fs)
    resp = weighting_response(f, spec.name)
    y = fft.irfft(fft.rfft(x - x.mean() if remove_mean else x, m) * resp, m)
    return y[:n]


def _analysed(
    accel_m_s2: Any, sample_rate_hz: float, weighting: str, settle_s: float
) -> tuple[np.ndarray, float]:
    fs = _sample_rate(sample_rate_hz)
    x = _signal("accel_m_s2", accel_m_s2)
    i0 = _first_sample(x.size, fs, _settle(settle_s), "accel_m_s2")
    return weight(x, fs, weighting)[i0:], fs


def weighted_rms(
    accel_m_s2: Any, sample_rate_hz: float, weighting: str = "k", *, settle_s: float = 0.0
) -> float:
    """Overall frequency-weighted r.m.s. acceleration ``a_w``.

    Parameters
    ----------
    accel_m_s2 : array_like, shape (N,)
        Acceleration [m/s^2] sampled uniformly.
    sample_rate_hz : float
        Sample rate [Hz], >= 16.
    weighting : {"k", "d"}
        ``"k"`` for ``Wk`` (vertical), ``"d"`` for ``Wd`` (horizontal).
    settle_s : float
        Time [s] at the start left out of the statistic (weighting transient, launch).

    Returns
    -------
    float
        ``a_w = sqrt(mean(a_w(t)^2))`` over the analysed span [m/s^2].
    """
    aw, _ = _analysed(accel_m_s2, sample_rate_hz, weighting, settle_s)
    return float(np.sqrt(np.mean(aw**2)))


def vdv(accel_m_s2: Any, sample_rate_hz: float, weighting: str = "k", *, settle_s: float = 0.0) -> float:
    """Vibration dose value ``VDV = (integral of a_w(t)^4 dt)^(1/4)``.

    The integral is the sum of samples times ``1/fs`` over the analysed span. For a
    sine ``a_w = A sin(w t)`` over a whole number of periods of total length ``T``,
    ``sin^4 = (3 - 4 cos 2wt + cos 4wt) / 8`` and the cosines integrate to zero, so
    ``integral = 3 A^4 T / 8`` and ``VDV = (3T/8)^(1/4) A``. The VDV grows with
    exposure time; the r.m.s. does not.

    Parameters
    ----------
    accel_m_s2 : array_like, shape (N,)
        Acceleration [m/s^2] sampled uniformly.
    sample_rate_hz : float
        Sample rate [Hz], >= 16.
    weighting : {"k", "d"}
        ``"k"`` for ``Wk`` (vertical), ``"d"`` for ``Wd`` (horizontal).
    settle_s : float
        Time [s] at the start left out of the integral.

    Returns
    -------
    float
        Vibration dose value [m/s^1.75].
    """
    aw, fs = _analysed(accel_m_s2, sample_rate_hz, weighting, settle_s)
    return float(np.sum(aw**4) / fs) ** 0.25


def crest_factor(
    accel_m_s2: Any, sample_rate_hz: float, weighting: str = "k", *, settle_s: float = 0.0
) -> float:
    """Crest factor: peak ``|a_w(t)|`` over the weighted r.m.s.

    A sine has ``sqrt(2)``; above 9 the standard prefers the vibration dose value.

    Parameters
    ----------
    accel_m_s2 : array_like, shape (N,)
        Acceleration [m/s^2] sampled uniformly.
    sample_rate_hz : float
        Sample rate [Hz], >= 16.
    weighting : {"k", "d"}
        ``"k"`` for ``Wk`` (vertical), ``"d"`` for ``Wd`` (horizontal).
    settle_s : float
        Time [s] at the start left out.

    Returns
    -------
    float
        Dimensionless crest factor; NaN when the weighted signal is exactly zero.
    """
    aw, _ = _analysed(accel_m_s2, sample_rate_hz, weighting, settle_s)
    return _crest(aw)


def _crest(aw: np.ndarray) -> float:
    rms = float(np.sqrt(np.mean(aw**2)))
    return float(np.max(np.abs(aw)) / rms) if rms > 0 else math.nan


# ----------------------------------------------------------------------------- comfort bands


def comfort_band(a_w_rms: float) -> str:
    """Likely comfort reaction for a weighted r.m.s. (ISO 2631-1:1997, Annex C, informative).

    The standard's ranges overlap; a value in two of them gets both, joined by
    "to". Interior ranges include both ends; "not uncomfortable" is ``a < 0.315``
    and "extremely uncomfortable" ``a > 2`` (both strict), as the annex words them.

    Parameters
    ----------
    a_w_rms : float
        Weighted r.m.s. or vibration total value [m/s^2], >= 0.

    Returns
    -------
    str
        For example ``"not uncomfortable"`` or ``"fairly uncomfortable to uncomfortable"``.

    Examples
    --------
    >>> from ridesim.metrics.comfort import comfort_band
    >>> comfort_band(0.9)
    'fairly uncomfortable to uncomfortable'
    """
    if not is_number(a_w_rms):
        raise InputError(f"a_w_rms must be a number in m/s^2, got {a_w_rms!r}")
    a = float(a_w_rms)
    if not math.isfinite(a) or a < 0:
        raise InputError(f"a_w_rms must be finite and >= 0 m/s^2, got {a_w_rms!r}")
    last = len(COMFORT_REACTIONS) - 1
    names = []
    for i, (lo, hi, text) in enumerate(COMFORT_REACTIONS):
        above = a > lo if i == last else a >= lo
        below = a < hi if i == 0 else a <= hi
        if above and below:
            names.append(text)
    return " to ".join(names)


# ----------------------------------------------------------------------------- report

_STANDING_CAUTIONS = (
    "Comfort depends on the rider (age, size, health, expectation), posture, seat and exposure time; "
    "the bands of ISO 2631-1 Annex C are informative, not limits.",
    "ISO 2631-1 applies its health and comfort weightings to 0.5-80 Hz; accelerations from the "
    "rigid-body simulation omit seat cushion and body dynamics, so the figures are engineering estimates.",
    "A short record gives an indicative value only; measure the built ride over a representative run.",
    "A comfort grade is not a safety assessment.",
)


@record
class ComfortReport:
    """Ride comfort at the seat point.

    Attributes
    ----------
    weighted_rms_m_s2 : float
        Vertical ``Wk``-weighted r.m.s. acceleration ``a_wz`` [m/s^2].
    weighted_rms_horizontal_m_s2 : float or None
        Fore-aft ``Wd``-weighted r.m.s. ``a_wx`` [m/s^2]; None without a horizontal record.
    total_value_m_s2 : float
        Vibration total value ``a_v = sqrt(sum k^2 a_w^2)`` with ``k = 1`` at the seat
        surface for comfort [m/s^2] (the lateral axis is not modelled).
    vdv_m_s175 : float
        Vertical vibration dose value [m/s^1.75].
    vdv_horizontal_m_s175 : float or None
        Fore-aft vibration dose value [m/s^1.75].
    crest_factor : float
        Vertical crest factor (NaN for a zero signal).
    crest_factor_horizontal : float or None
        Fore-aft crest factor.
    vdv_ratio : float
        Vertical ``VDV / (a_w T^(1/4))`` (a sine gives ``sqrt(2) (3/8)^(1/4) = 1.107``);
        above 1.75 the r.m.s. may underrate shocks.
    band : str
        Comfort reaction for ``total_value_m_s2`` (:func:`comfort_band`).
    duration_s : float
        Analysed span [s] (after ``settle_s``).
    settle_s : float
        Time [s] left out at the start.
    sample_rate_hz : float
        Sample rate [Hz].
    cautions : tuple of str
        What the figures do not say.
    """

    weighted_rms_m_s2: float
    weighted_rms_horizontal_m_s2: float | None
    total_value_m_s2: float
    vdv_m_s175: float
    vdv_horizontal_m_s175: float | None
    crest_factor: float
    crest_factor_horizontal: float | None
    vdv_ratio: float
    band: str
    duration_s: float
    settle_s: float
    sample_rate_hz: float
    cautions: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready dict; NaN becomes None.

        Returns
        -------
        dict
            Keys ``weighted_rms_m_s2``, ``vdv_m_s175``, ``crest_factor``, ``band``,
            ``weighted_rms_horizontal_m_s2``, ``total_value_m_s2``,
            ``vdv_horizontal_m_s175``, ``crest_factor_horizontal``, ``vdv_ratio``,
            ``duration_s``, ``settle_s``, ``sample_rate_hz``, ``cautions`` (list).
        """

        def num(v: float | None) -> float | None:
            return None if v is None or not math.isfinite(v) else float(v)

        return {
            "weighted_rms_m_s2": num(self.weighted_rms_m_s2),
            "vdv_m_s175": num(self.vdv_m_s175),
            "crest_factor": num(self.crest_factor),
            "band": self.band,
            "weighted_rms_horizontal_m_s2": num(self.weighted_rms_horizontal_m_s2),
            "total_value_m_s2": num(self.total_value_m_s2),
            "vdv_horizontal_m_s175": num(self.vdv_horizontal_m_s175),
            "crest_factor_horizontal": num(self.crest_factor_horizontal),
            "vdv_ratio": num(self.vdv_ratio),
            "duration_s": self.duration_s,
            "settle_s": self.settle_s,
            "sample_rate_hz": self.sample_rate_hz,
            "cautions": list(self.cautions),
        }


def comfort_report(
    seat_vertical_m_s2: Any,
    seat_horizontal_m_s2: Any,
    sample_rate_hz: float,
    settle_s: float = 0.0,
    *,
    from_rest: bool = False,
) -> ComfortReport:
    """Grade ride comfort at the seat point from its vertical and fore-aft accelerations.

    Parameters
    ----------
    seat_vertical_m_s2 : array_like, shape (N,)
        Vertical seat acceleration [m/s^2] (gravity may be included: it is removed).
    seat_horizontal_m_s2 : array_like, shape (N,), or None
        Fore-aft seat acceleration [m/s^2] on the same clock; None to grade vertical only.
    sample_rate_hz : float
        Sample rate [Hz], >= 16 (160 or more covers the standard's 0.5-80 Hz range).
    settle_s : float
        Time [s] at the start left out (launch, weighting transient of about 2.6 s).
    from_rest : bool
        The record starts from a state with no seat acceleration (a simulation started at
        rest or rolling steadily in its ideal pose), gravity excluded. The weighting then
        starts at rest exactly as the analogue filter would: the mean is not removed and
        its response to the first seconds is the rider's, not a start-up transient, so no
        caution about ``settle_s`` applies.

    Returns
    -------
    ComfortReport
        Weighted r.m.s. per axis, total value, VDV, crest factors, comfort band, cautions.

    Raises
    ------
    InputError
        Bad sample rate or settling time, non-finite samples, unequal lengths, or
        fewer than 2 s left to analyse.
    """
    fs = _sample_rate(sample_rate_hz)
    settle = _settle(settle_s)
    z = _signal("seat_vertical_m_s2", seat_vertical_m_s2)
    i0 = _first_sample(z.size, fs, settle, "seat_vertical_m_s2")
    x = None
    if seat_horizontal_m_s2 is not None:
        x = _signal("seat_horizontal_m_s2", seat_horizontal_m_s2)
        if x.size != z.size:
            raise InputError(
                f"seat_horizontal_m_s2 has {x.size} samples but seat_vertical_m_s2 has {z.size}: "
                "give both on the same clock"
            )
    awz = weight(z, fs, "k", remove_mean=not from_rest)[i0:]
    span_s = awz.size / fs
    rms_z = float(np.sqrt(np.mean(awz**2)))
    vdv_z = float(np.sum(awz**4) / fs) ** 0.25
    crest_z = _crest(awz)
    rms_x = vdv_x = crest_x = None
    if x is not None:
        awx = weight(x, fs, "d", remove_mean=not from_rest)[i0:]
        rms_x = float(np.sqrt(np.mean(awx**2)))
        vdv_x = float(np.sum(awx**4) / fs) ** 0.25
        crest_x = _crest(awx)
    total = math.sqrt(rms_z**2 + (rms_x or 0.0) ** 2)
    ratio = vdv_z / (rms_z * span_s**0.25) if rms_z > 0 else math.nan

    cautions = with_safety(_STANDING_CAUTIONS)
    if settle < FILTER_SETTLE_S and not from_rest:
        cautions.append(
            f"settle_s = {settle:g} s is shorter than the weighting's {FILTER_SETTLE_S:.1f} s start-up "
            "transient; the figures include it"
        )
    if fs < FULL_RANGE_SAMPLE_RATE_HZ:
        cautions.append(
            f"sample rate {fs:g} Hz represents content only up to {fs / 2:g} Hz, not the full 0.5-80 Hz range"
        )
    crests = [c for c in (crest_z, crest_x) if c is not None and math.isfinite(c)]
    if any(c > 9.0 for c in crests) or (math.isfinite(ratio) and ratio > 1.75):
        cautions.append(
            "shocks present (crest factor > 9 or VDV ratio > 1.75): the r.m.s. underrates them; judge by the "
            "vibration dose value, and check single-step contact spikes in the simulation"
        )
    if x is not None:
        cautions.append(
            "the lateral (y) axis is not modelled; the total value combines vertical and fore-aft only"
        )
    return ComfortReport(
        weighted_rms_m_s2=rms_z,
        weighted_rms_horizontal_m_s2=rms_x,
        total_value_m_s2=total,
        vdv_m_s175=vdv_z,
        vdv_horizontal_m_s175=vdv_x,
        crest_factor=crest_z,
        crest_factor_horizontal=crest_x,
        vdv_ratio=ratio,
        band=comfort_band(total),
        duration_s=span_s,
        settle_s=settle,
        sample_rate_hz=fs,
        cautions=tuple(cautions),
    )


# ----------------------------------------------------------------------------- spectrum

# Nominal one-third-octave centre frequencies [Hz] of ISO 2631-1's tables, band numbers -10..26
# (exact centres 10^(n/10) Hz, base-10 bands).
_NOMINAL_HZ = (
    0.1, 0.125, 0.16, 0.2, 0.25, 0.315, 0.4, 0.5, 0.63, 0.8, 1.0, 1.25, 1.6, 2.0, 2.5, 3.15, 4.0,
    5.0, 6.3, 8.0, 10.0, 12.5, 16.0, 20.0, 25.0, 31.5, 40.0, 50.0, 63.0, 80.0, 100.0, 125.0, 160.0,
    200.0, 250.0, 315.0, 400.0,
)  # fmt: skip
_FIRST_BAND = -10


@record
class ComfortSpectrum:
    """One-third-octave band r.m.s. of a record, unweighted and weighted.

    Attributes
    ----------
    centre_hz : ndarray
        Nominal band centre frequencies [Hz] (0.5, 0.63, 0.8, 1, ...).
    lower_hz, upper_hz : ndarray
        Band edges [Hz]: ``10^((n -/+ 1/2)/10)`` for band number ``n``.
    rms_m_s2 : ndarray
        Band r.m.s. acceleration [m/s^2]; NaN where no frequency bin falls in the band.
    weighted_rms_m_s2 : ndarray
        Band r.m.s. after the weighting, bin by bin [m/s^2]; NaN as above.
    bins : ndarray of int
        Number of frequency bins in each band.
    resolution_hz : float
        Bin spacing ``1/T`` [Hz] of the analysed span.
    weighting : str
        ``"k"`` or ``"d"``.
    """

    centre_hz: np.ndarray
    lower_hz: np.ndarray
    upper_hz: np.ndarray
    rms_m_s2: np.ndarray
    weighted_rms_m_s2: np.ndarray
    bins: np.ndarray
    resolution_hz: float
    weighting: str

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready dict of lists; NaN becomes None.

        Returns
        -------
        dict
            Keys ``centre_hz``, ``lower_hz``, ``upper_hz``, ``rms_m_s2``,
            ``weighted_rms_m_s2``, ``bins``, ``resolution_hz``, ``weighting``.
        """

        def lst(a: np.ndarray) -> list:
            return [None if not math.isfinite(v) else float(v) for v in np.asarray(a, dtype=float)]

        return {
            "centre_hz": lst(self.centre_hz),
            "lower_hz": lst(self.lower_hz),
            "upper_hz": lst(self.upper_hz),
            "rms_m_s2": lst(self.rms_m_s2),
            "weighted_rms_m_s2": lst(self.weighted_rms_m_s2),
            "bins": [int(b) for b in self.bins],
            "resolution_hz": self.resolution_hz,
            "weighting": self.weighting,
        }


def spectrum(
    accel_m_s2: Any,
    sample_rate_hz: float,
    weighting: str = "k",
    *,
    settle_s: float = 0.0,
    low_hz: float = 0.5,
    high_hz: float = 80.0,
) -> ComfortSpectrum:
    """One-third-octave band r.m.s. of a record, for a comfort-spectrum plot.

    The analysed span (mean removed, no window) is transformed once; each bin's
    one-sided power ``2 |X_k|^2 / N^2`` (``|X_k|^2 / N^2`` at the Nyquist bin) is
    summed over the bins in a band, so the band powers add up to the record's
    variance (Parseval). The weighted bands multiply each bin's power by
    ``|W(f_k)|^2``. A sine of amplitude ``A`` filling whole periods of the span
    shows ``A/sqrt(2)`` in its band and ``A |W(f)| / sqrt(2)`` weighted.

    Parameters
    ----------
    accel_m_s2 : array_like, shape (N,)
        Acceleration [m/s^2] sampled uniformly.
    sample_rate_hz : float
        Sample rate [Hz], >= 16.
    weighting : {"k", "d"}
        ``"k"`` for ``Wk`` (vertical), ``"d"`` for ``Wd`` (horizontal).
    settle_s : float
        Time [s] at the start left out.
    low_hz, high_hz : float
        Bands with nominal centres in ``[low_hz, high_hz]`` [Hz] (0.1-400 Hz available).

    Returns
    -------
    ComfortSpectrum
        Band centres, edges, r.m.s. unweighted and weighted.
    """
    from scipy import fft

    fs = _sample_rate(sample_rate_hz)
    spec = _spec(weighting)
    x = _signal("accel_m_s2", accel_m_s2)
    i0 = _first_sample(x.size, fs, _settle(settle_s), "accel_m_s2")
    for name, v in (("low_hz", low_hz), ("high_hz", high_hz)):
        if not is_number(v) or not (_NOMINAL_HZ[0] <= float(v) <= _NOMINAL_HZ[-1]):
            raise InputError(f"{name} must be a frequency in Hz within 0.1-400, got {v!r}")
    if float(low_hz) > float(high_hz):
        raise InputError(f"low_hz must be <= high_hz, got low_hz = {low_hz!r} and high_hz = {high_hz!r}")

    seg = x[i0:] - x[i0:].mean()
    n = seg.size
    power = np.abs(fft.rfft(seg)) ** 2 / n**2
    power[1:] *= 2.0
    if n % 2 == 0:
        power[-1] /= 2.0  # the Nyquist bin has no mirror
    power[0] = 0.0
    f = fft.rfftfreq(n, d=1.0 / fs)
    wpower = power * np.abs(weighting_response(f, spec.name)) ** 2

    nums = [i + _FIRST_BAND for i, c in enumerate(_NOMINAL_HZ) if float(low_hz) <= c <= float(high_hz)]
    nums_a = np.array(nums, dtype=float)
    lower = 10.0 ** ((nums_a - 0.5) / 10.0)
    upper = 10.0 ** ((nums_a + 0.5) / 10.0)
    idx_lo = np.searchsorted(f, lower, side="left")
    idx_hi = np.searchsorted(f, upper, side="left")
    bins = idx_hi - idx_lo
    rms = np.full(bins.size, np.nan)
    wrms = np.full(bins.size, np.nan)
    for j, (a, b) in enumerate(zip(idx_lo, idx_hi, strict=True)):
        if b > a:  # summed band by band: a running sum would cancel small bands against big ones
            rms[j] = math.sqrt(float(np.sum(power[a:b])))
            wrms[j] = math.sqrt(float(np.sum(wpower[a:b])))
    return ComfortSpectrum(
        centre_hz=np.array([_NOMINAL_HZ[k - _FIRST_BAND] for k in nums]),
        lower_hz=lower,
        upper_hz=upper,
        rms_m_s2=rms,
        weighted_rms_m_s2=wrms,
        bins=bins.astype(int),
        resolution_hz=fs / n,
        weighting=spec.name,
    )

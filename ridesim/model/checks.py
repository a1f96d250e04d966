"""Argument checks shared by the model constructors (one-line errors naming the parameter)."""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from ridesim.errors import InputError
from ridesim.validate import is_number

__all__ = ["positive", "point", "finite"]


def positive(name: str, value: float, unit: str = " in metres") -> float:
    """Return ``value`` as a float after checking it is a finite number > 0.

    Parameters
    ----------
    name : str
        Parameter name for the message.
    value : float
        The value (a length [m] or another positive quantity).
    unit : str
        How the message names the unit after "a number" (empty for a ratio).

    Returns
    -------
    float
    """
    if not is_number(value):
        raise InputError(f"{name} must be a number{unit}, got {value!r}")
    v = float(value)
    if not math.isfinite(v) or v <= 0:
        raise InputError(f"{name} must be > 0, got {value!r}")
    return v


def point(name: str, value: Sequence[float]) -> np.ndarray:
    """Return ``value`` as a finite ``[x, y]`` array [m].

    Parameters
    ----------
    name : str
        Parameter name for the message.
    value : pair of float
        The point [m].

    Returns
    -------
    ndarray, shape (2,)
    """
    try:
        p = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a pair [x, y] in metres, got {value!r}") from None
    if p.shape != (2,) or not np.all(np.isfinite(p)):
        raise InputError(f"{name} must be a pair [x, y] of finite numbers in metres, got {value!r}")
    return p


def finite(name: str, value, *, ge: float | None = None, gt: float | None = None) -> float:
    """Return ``value`` as a float after checking it is finite and within the bounds.

    Parameters
    ----------
    name : str
        Parameter name for the message.
    value : float
        The value, in the unit its name says.
    ge, gt : float, optional
        Lower bounds (inclusive, exclusive).

    Returns
    -------
    float
    """
    if not is_number(value):
        raise InputError(f"{name} must be a number, got {value!r}")
    v = float(value)
    if not math.isfinite(v):
        raise InputError(f"{name} must be finite, got {value!r}")
    if ge is not None and v < ge:
        raise InputError(f"{name} must be >= {ge:g}, got {value!r}")
    if gt is not None and v <= gt:
        raise InputError(f"{name} must be > {gt:g}, got {value!r}")
    return v

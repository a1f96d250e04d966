"""Vehicle geometry shared by the analytic model and the simulator.

Chassis frame: origin midway between the first and the last axle, on the axle
line; +x forward (the direction of travel), +y up. Axles are evenly spaced by
the wheelbase [m]; axle 0 is the rearmost.
"""

from __future__ import annotations

import math

import numpy as np

from ridesim.errors import InputError

__all__ = ["axle_offsets_m", "drive_motors", "motor_name", "whole_period_wheelbases_m"]


def axle_offsets_m(axles: int, wheelbase_m: float) -> np.ndarray:
    """Chassis-frame x [m] of each axle, rear to front.

    Parameters
    ----------
    axles : int
        Number of axles (>= 1).
    wheelbase_m : float
        Distance between neighbouring axles [m] (ignored for one axle).

    Returns
    -------
    ndarray, shape (axles,)
        Offsets [m], symmetric about 0.
    """
    n = int(axles)
    if n == 1:
        return np.zeros(1)
    wb = float(wheelbase_m)
    if not wb > 0 or not math.isfinite(wb):
        raise InputError(
            f"wheelbase_m must be a positive length for {n} axles, got {wb!r}; a wheelbase given"
            " as vehicle.wheelbase_periods is set by ridesim.scenario.build.resolve_wheelbase"
        )
    return (np.arange(n) - 0.5 * (n - 1)) * wb


def whole_period_wheelbases_m(period_m: float, lo_m: float, hi_m: float) -> list[tuple[int, float]]:
    """Wheelbases [m] that are whole numbers of track periods, from ``lo_m`` to ``hi_m``.

    Wheels coupled to one shaft meet the track in the same phase only on such a wheelbase.

    Parameters
    ----------
    period_m : float
        Track period [m].
    lo_m, hi_m : float
        Range [m] (inclusive).

    Returns
    -------
    list of (int, float)
        ``(k, k * period_m)`` for every whole ``k >= 1`` in the range.

    Examples
    --------
    >>> whole_period_wheelbases_m(0.25, 0.3, 1.0)
    [(2, 0.5), (3, 0.75), (4, 1.0)]
    """
    P = float(period_m)
    if not P > 0 or not math.isfinite(P):
        raise InputError(f"period_m must be a positive length, got {period_m!r}")
    lo, hi = float(lo_m), float(hi_m)
    if not (math.isfinite(lo) and math.isfinite(hi)) or lo > hi:
        raise InputError(f"the wheelbase range must be two finite lengths MIN <= MAX, got {lo_m!r},"
                         f" {hi_m!r}")
    k0 = max(1, math.ceil(lo / P - 1e-9))
    k1 = math.floor(hi / P + 1e-9)
    return [(k, k * P) for k in range(k0, k1 + 1)]


def motor_name(axles) -> str:
    """Name of the motor that turns ``axles``: its shaft and the axles on it.

    Parameters
    ----------
    axles : sequence of int
        The axles the motor turns (several on a coupled train).

    Returns
    -------
    str
        ``"axle 0 shaft"`` for one axle, ``"coupled train, axles 0+1"`` for several.

    Examples
    --------
    >>> motor_name((1,)), motor_name((0, 1))
    ('axle 1 shaft', 'coupled train, axles 0+1')
    """
    ax = [int(a) for a in axles]
    if len(ax) == 1:
        return f"axle {ax[0]} shaft"
    return "coupled train, axles " + "+".join(str(a) for a in ax)


def drive_motors(axles: int, coupled: bool, driven_axles) -> tuple[tuple[int, ...], ...]:
    """The motors of a vehicle, each as the axles it turns.

    Motors sit on shafts: each uncoupled driven axle has its own motor; a coupled train (one
    chain or gear train turning every axle) has one motor, which turns all the axles.

    Parameters
    ----------
    axles : int
        Number of axles (>= 1).
    coupled : bool
        True when one chain or gear train turns every axle.
    driven_axles : sequence of int
        Indices of the driven axles (of an uncoupled vehicle).

    Returns
    -------
    tuple of tuple of int
        One entry per motor: the axles it turns, in increasing order.

    Examples
    --------
    >>> drive_motors(2, False, (0, 1)), drive_motors(2, True, (0, 1))
    (((0,), (1,)), ((0, 1),))
    """
    n = int(axles)
    if coupled and n > 1:
        return (tuple(range(n)),)
    return tuple((int(i),) for i in driven_axles)

"""Array helpers shared by every layer.

:func:`unique_sorted` is ``np.unique(a)`` for plain arrays: numpy 2's ``np.unique`` asks
``np.ma`` whether its argument is masked, and that first question imports ``numpy.ma``
(about 10-20 ms, a tenth of a light command's start-up).
"""

from __future__ import annotations

import numpy as np

__all__ = ["unique_sorted"]


def unique_sorted(a) -> np.ndarray:
    """The distinct values of ``a``, ascending; NaNs (last) count as one, as in ``np.unique``.

    Parameters
    ----------
    a : array_like
        Numbers (flattened).

    Returns
    -------
    ndarray
    """
    s = np.sort(np.asarray(a).ravel())
    if s.size == 0:
        return s
    keep = np.empty(s.size, dtype=bool)
    keep[0] = True
    np.not_equal(s[1:], s[:-1], out=keep[1:])
    if s.dtype.kind in "fc":
        nan = np.isnan(s)
        keep[1:] &= ~(nan[1:] & nan[:-1])  # the first NaN stands for all
    return s[keep]

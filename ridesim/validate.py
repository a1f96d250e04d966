"""The two type predicates every argument check uses: a real number, an integer (never a bool).

``True`` is an ``int`` to Python, so ``isinstance(x, int)`` alone would accept ``sides = true``
from a TOML file; these predicates are the one place that says so.

Examples
--------
>>> is_number(0.5), is_number(True), is_integer(3), is_integer(3.0)
(True, False, True, False)
"""

from __future__ import annotations

import numbers
from typing import Any

__all__ = ["is_number", "is_integer"]


def is_number(value: Any) -> bool:
    """True for a real number (Python or numpy), False for a bool or anything else.

    Parameters
    ----------
    value : object
        The value to test.

    Returns
    -------
    bool
    """
    return isinstance(value, numbers.Real) and not isinstance(value, bool)


def is_integer(value: Any) -> bool:
    """True for an integer (Python or numpy), False for a bool, a float or anything else.

    Parameters
    ----------
    value : object
        The value to test.

    Returns
    -------
    bool
    """
    return isinstance(value, numbers.Integral) and not isinstance(value, bool)

"""Vehicle geometry shared by the analytic model and the simulator.

Chassis frame: origin midway between the first and the last axle, on the axle
line; +x forward (the direction of travel), +y up. Axles are evenly spaced by
the wheelbase [m]; axle 0 is the rearmost.
"""

from __future__ import annotations

import numpy as np

__all__ = ["axle_offsets_m"]


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
    return (np.arange(n) - 0.5 * (n - 1)) * float(wheelbase_m)

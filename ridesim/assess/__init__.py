"""Assessment layer: will a solved pair roll, where does it slip, and what does it need.

* :mod:`ridesim.assess.clearance`: the whole outline against the track over a full roll,
  and corner seating at cusps.
* :mod:`ridesim.assess.friction`: the planar force balance on one wheel and the friction
  the surface must supply.
* :mod:`ridesim.assess.analytic`: per-wheel loads; torque, shaft speed and power per motor
  along a revolution and along a duty cycle, by phase; speed ripple of other drives,
  lift-off speed.
* :mod:`ridesim.assess.phasing`: how the axles of a cart share the track (wheelbase, phase).

The verdict for a whole scenario is a job: :mod:`ridesim.jobs.check`.
"""

from ridesim.assess.analytic import AnalyticResult, analyze_cycle
from ridesim.assess.clearance import (
    CONTACT_EXCLUSION_RAD,
    INTERFERENCE_TOL_REL,
    ClearanceResult,
    CuspSeat,
    clearance,
    cusp_seating,
)
from ridesim.assess.friction import (
    G_STANDARD_M_S2,
    ContactLoads,
    FrictionResult,
    contact_loads,
    cycle_nodes,
    friction_demand,
)

__all__ = [
    "AnalyticResult",
    "CONTACT_EXCLUSION_RAD",
    "ClearanceResult",
    "ContactLoads",
    "CuspSeat",
    "FrictionResult",
    "G_STANDARD_M_S2",
    "INTERFERENCE_TOL_REL",
    "analyze_cycle",
    "clearance",
    "contact_loads",
    "cusp_seating",
    "cycle_nodes",
    "friction_demand",
]

"""The size-motor job: a scenario's drive sized over its duty cycle, per motor.

Solves the pair, resolves the wheelbase and the wheel's mass, then hands them to
:func:`ridesim.metrics.motor.motor_sizing`.
"""

from __future__ import annotations

from ridesim.metrics.hub_motor import HubMotorSizing
from ridesim.metrics.motor import MotorSizing
from ridesim.scenario.load import Scenario

__all__ = ["size_motor"]


def size_motor(sc: Scenario, *, dt_s: float | None = None) -> MotorSizing | HubMotorSizing:
    """Size the drive for a scenario's duty cycle (per motor).

    Parameters
    ----------
    sc : Scenario
        Validated scenario: drive speed and acceleration, ``[duty]``, ``[motor]``.
    dt_s : float, optional
        Time step [s]; default resolves each track period with at least 64 samples.

    Returns
    -------
    MotorSizing or HubMotorSizing
        A :class:`~ridesim.metrics.hub_motor.HubMotorSizing` (steady speed) for
        ``path.kind = "hub"``.
    """
    if sc.path.is_hub:
        from ridesim.jobs.hub import size_motor_hub

        return size_motor_hub(sc)
    from ridesim.metrics.motor import motor_sizing
    from ridesim.scenario.build import resolve_wheelbase, solve_track_scenario, wheel_mass

    pair = solve_track_scenario(sc)
    sc = resolve_wheelbase(sc, pair)
    return motor_sizing(pair, sc, wheel_mass(sc, pair.wheel), dt_s=dt_s)

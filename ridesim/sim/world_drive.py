"""Building the world, part four: the drive (one motor per drive shaft).

See :mod:`ridesim.sim.world` for the modelling choices.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import pymunk
import pymunk.autogeometry

_HUGE_RATE_RAD_S = 1e6  # torque-mode motor target: never reached, so the motor stays saturated


@dataclass
class Drive:
    """How the wheels are driven in the built world.

    Attributes
    ----------
    mode : str
        ``speed``, ``shaft_speed`` or ``torque``.
    motors : list of pymunk.SimpleMotor
        One motor per drive shaft (chassis is body ``a``, wheel body ``b``).
    shaft_axles : list of tuple of int
        Axles turned by each shaft (several when the axles are coupled).
    motor_axle : list of int
        Axle whose wheel each motor acts on.
    max_torque_Nm : float
        Motor torque limit [N m] per shaft.
    """

    mode: str
    motors: list = field(default_factory=list)
    shaft_axles: list = field(default_factory=list)
    motor_axle: list = field(default_factory=list)
    max_torque_Nm: float = 0.0



def add_drive(space: pymunk.Space, scenario, chassis: pymunk.Body, wheels: list) -> Drive:
    """Add one motor per drive shaft between the chassis and its wheel.

    Parameters
    ----------
    space : pymunk.Space
        The space.
    scenario : Scenario
        Validated scenario (vehicle and drive sections are used).
    chassis : pymunk.Body
        The chassis (the motors sit on it, so their reaction acts on the body).
    wheels : list of pymunk.Body
        The wheel bodies in axle order.

    Returns
    -------
    Drive
    """
    veh, drv = scenario.vehicle, scenario.drive
    n_ax = len(wheels)
    driven = list(veh.driven_axle_indices)
    drive = Drive(mode=drv.mode)
    if veh.coupled and n_ax > 1:
        shafts = [(driven[0], tuple(range(n_ax)))] if driven else []
    else:
        shafts = [(i, (i,)) for i in driven]
    if drv.mode == "torque":
        tq = float(drv.torque_Nm or 0.0)
        rate, limit = math.copysign(_HUGE_RATE_RAD_S, tq), abs(tq)
    elif drv.mode == "shaft_speed":
        rate, limit = float(drv.shaft_speed_rad_s or 0.0), float(drv.max_torque_Nm)
    else:
        # Speed drive: a torque command set every step by the stepper's speed controller.
        rate, limit = _HUGE_RATE_RAD_S, float(drv.max_torque_Nm)
    for ax, axles in shafts:
        # SimpleMotor holds a.w - b.w = rate with a = chassis, b = wheel: a positive rate turns
        # the wheel clockwise relative to the body, i.e. drives the vehicle forward.
        mot = pymunk.SimpleMotor(chassis, wheels[ax], rate)
        mot.max_force = limit  # a torque limit [N m] for a rotary constraint
        space.add(mot)
        drive.motors.append(mot)
        drive.shaft_axles.append(axles)
        drive.motor_axle.append(ax)
    drive.max_torque_Nm = limit
    return drive

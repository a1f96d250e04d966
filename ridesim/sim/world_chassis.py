"""Building the world, part three: the chassis, its masses, pitch hold, gears and brakes.

The chassis body, the masses and inertias of the build, the hold that keeps a one-axle
body level, the gears of coupled axles and the rolling-resistance brakes.

See :mod:`ridesim.sim.world` for the modelling choices.
"""

from __future__ import annotations

import numpy as np
import pymunk
import pymunk.autogeometry

from ridesim.errors import InputError
from ridesim.model.tolerance import AsBuilt
from ridesim.model.vehicle import axle_offsets_m
from ridesim.records import record


@record
class Masses:
    """Masses of the build.

    Attributes
    ----------
    wheel_kg : float
        Mass of one wheel.
    wheel_axle_kg_m2 : float
        A wheel's moment of inertia about its axle [kg m^2].
    wheel_com_m : tuple of float
        A wheel's centre of mass [m] in its frame.
    wheel_cg_kg_m2 : float
        A wheel's moment of inertia about its centre of mass [kg m^2].
    body_kg : float
        Mass of the chassis (a thousandth of a wheel's when the scenario gives 0).
    body_kg_m2 : float
        The chassis' moment of inertia [kg m^2].
    body_inertia_estimated : bool
        Whether it was estimated (a box spanning the wheels).
    total_kg : float
        Chassis and wheels.
    offsets_m : numpy.ndarray
        Axle offsets [m] along the chassis.
    """

    wheel_kg: float
    wheel_axle_kg_m2: float
    wheel_com_m: tuple[float, float]
    wheel_cg_kg_m2: float
    body_kg: float
    body_kg_m2: float
    body_inertia_estimated: bool
    total_kg: float
    offsets_m: np.ndarray


def vehicle_masses(veh, mass, r_hi: float) -> Masses:
    """Masses and inertias of the wheels and chassis.

    Parameters
    ----------
    veh : VehicleSpec
        The scenario's vehicle section.
    mass : MassProperties
        Mass properties of one wheel as built.
    r_hi : float
        Largest wheel radius [m] as built (sizes the estimated chassis box).

    Returns
    -------
    Masses
    """
    n_ax = int(veh.axles)
    m_w, j_axle = float(mass.mass_kg), float(mass.inertia_kg_m2)
    com = (float(mass.com_m[0]), float(mass.com_m[1]))
    j_cg = j_axle - m_w * (com[0] ** 2 + com[1] ** 2)  # parallel-axis theorem
    if not (m_w > 0 and j_cg > 0):
        raise InputError(
            f"wheel mass {m_w:g} kg and inertia {j_axle:g} kg m^2 about the axle give a non-positive"
            " inertia about the centre of mass; check wheel.mass_kg and wheel.inertia_kg_m2"
        )
    m_b = float(veh.body_mass_kg)
    if m_b <= 0:
        # A massless body cannot be a pymunk body: give it a thousandth of a wheel's mass.
        m_b = 1e-3 * m_w
    offsets = axle_offsets_m(n_ax, veh.wheelbase_m)
    if veh.body_inertia_kg_m2 is not None:
        j_b, j_est = float(veh.body_inertia_kg_m2), False
    else:
        # Estimate: a uniform box spanning the wheels, length wheelbase span + 2 r_max,
        # height 2 r_max: J = m (L^2 + H^2) / 12.
        L = float(offsets[-1] - offsets[0]) + 2 * r_hi
        j_b, j_est = m_b * (L * L + 4 * r_hi * r_hi) / 12.0, True
    total_mass = m_b + n_ax * m_w
    return Masses(wheel_kg=m_w, wheel_axle_kg_m2=j_axle, wheel_com_m=com, wheel_cg_kg_m2=j_cg,
                  body_kg=m_b, body_kg_m2=j_b, body_inertia_estimated=j_est, total_kg=total_mass,
                  offsets_m=offsets)


def add_chassis(space: pymunk.Space, masses: Masses, pose, v0: float) -> pymunk.Body:
    """Add the chassis body (no collision shapes) at its start pose and speed.

    Parameters
    ----------
    space : pymunk.Space
        The space.
    masses : Masses
        The build's masses.
    pose : tuple or None
        The as-built start pose (its items 3 and 4: chassis height [m] and pitch [rad]), or None
        for the ideal roll.
    v0 : float
        Start speed [m/s].

    Returns
    -------
    pymunk.Body
    """
    chassis = pymunk.Body(masses.body_kg, masses.body_kg_m2)
    if pose is None:
        chassis.position = (0.0, 0.0)
    else:
        chassis.angle = pose[4]
        chassis.position = (0.0, pose[3])
    chassis.velocity = (v0, 0.0)
    space.add(chassis)
    return chassis


def add_pitch_hold_and_gears(space: pymunk.Space, veh, chassis: pymunk.Body, wheels: list) -> bool:
    """Hold a one-axle vehicle's body level, and gear coupled axles together.

    Parameters
    ----------
    space : pymunk.Space
        The space.
    veh : VehicleSpec
        The scenario's vehicle section.
    chassis : pymunk.Body
        The chassis.
    wheels : list of pymunk.Body
        The wheel bodies in axle order.

    Returns
    -------
    bool
        Whether the pitch is held.
    """
    n_ax = len(wheels)
    pitch_held = n_ax == 1
    if pitch_held:
        hold = pymunk.RotaryLimitJoint(space.static_body, chassis, 0.0, 0.0)
        space.add(hold)

    if veh.coupled and n_ax > 1:
        for i in range(1, n_ax):
            gear = pymunk.GearJoint(wheels[0], wheels[i], wheels[i].angle - wheels[0].angle, 1.0)
            space.add(gear)
    return pitch_held


def add_rolling_resistance(space: pymunk.Space, pair, ab: AsBuilt, srf, total_mass_kg: float,
                           gravity_m_s2: float, chassis: pymunk.Body, wheels: list) -> float:
    """Add a rolling-resistance brake on each axle; return its torque [N m].

    The torque is ``c_rr N r`` about each axle, ``N`` the static share of the weight and ``r``
    the mean contact radius, opposing rotation relative to the chassis.

    Parameters
    ----------
    space : pymunk.Space
        The space.
    pair : RollingPair
        The solved pair.
    ab : AsBuilt
        The build's manufacturing errors (the wheel scale is used).
    srf : SurfaceSpec
        The scenario's surface section.
    total_mass_kg : float
        Chassis and wheels.
    gravity_m_s2 : float
        Magnitude of gravity.
    chassis : pymunk.Body
        The chassis.
    wheels : list of pymunk.Body
        The wheel bodies.

    Returns
    -------
    float
    """
    n_ax = len(wheels)
    xs = np.linspace(0.0, pair.revolution_length, 1025)
    r_mean = float(np.mean(pair.contact_radius(xs[:-1])))
    if not ab.wheel_is_nominal:
        r_mean *= ab.scale
    rr_torque = float(srf.rolling_resistance) * total_mass_kg * gravity_m_s2 / n_ax * r_mean
    if rr_torque > 0:
        for body in wheels:
            brake = pymunk.SimpleMotor(chassis, body, 0.0)
            brake.max_force = rr_torque
            space.add(brake)
    return rr_torque

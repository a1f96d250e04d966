"""A non-circular gear pair in pymunk: both members on pivots, rolling on their pitch curves.

The hub (driven) turns on a fixed pivot at the origin against a load torque (a
Coulomb brake: a motor held at rest with its torque limited to the load). The wheel
(driver) turns on a pivot carried by a carriage that slides along the line of centres
(a groove at ``(0, E)``) and is pressed towards the hub by a constant force, the preload a
friction-driven pair needs; a motor turns the wheel at a constant speed relative to the
carriage. Both bodies are made of convex fan pieces about their centres (a star-shaped
outline splits into such pieces exactly), and their centres of mass sit on their pivots.

:func:`run_gear_pair` records the angles, so that the driven speed over the driving
speed can be compared with the analytic ``dψ/dθ = r/ρ``
(:meth:`ridesim.solve.hub.HubPair.speed_ratio`).
"""

from __future__ import annotations

import math

import numpy as np

from ridesim.errors import InputError, SimulationError
from ridesim.records import record

__all__ = ["GearRun", "CarouselRun", "run_gear_pair", "run_carousel"]

TWO_PI = 2.0 * math.pi
G = 9.80665


@record
class GearRun:
    """Record of a simulated gear pair.

    Attributes
    ----------
    t_s : ndarray
        Time [s].
    theta_rad : ndarray
        Wheel (driver) turn [rad], clockwise, in the pair's convention.
    psi_rad : ndarray
        Hub (driven) turn [rad], anticlockwise, in the pair's convention.
    centre_distance_m : ndarray
        Measured distance [m] between the pivots (the carriage rides on the contact).
    load_torque_Nm : float
        Brake torque on the hub [N m].
    """

    t_s: np.ndarray
    theta_rad: np.ndarray
    psi_rad: np.ndarray
    centre_distance_m: np.ndarray
    load_torque_Nm: float

    def speed_ratio(self, window: int = 5) -> tuple[np.ndarray, np.ndarray]:
        """Driven over driving speed, ``Δψ/Δθ`` over ``2 window`` steps, and the wheel angle.

        Returns
        -------
        theta : ndarray
            Wheel angle [rad] at the middle of each window.
        ratio : ndarray
            Measured ``dψ/dθ``.
        """
        w = int(window)
        th, ps = self.theta_rad, self.psi_rad
        return th[w:-w], (ps[2 * w:] - ps[:-2 * w]) / (th[2 * w:] - th[:-2 * w])


def _fan(v: np.ndarray, max_edges: int = 12) -> list[np.ndarray]:
    """Split a star-shaped polygon (about the origin, anticlockwise) into convex fan pieces.

    Each piece is the origin and a run of consecutive vertices, grown while it stays convex
    (one edge with the origin is a triangle, always convex for a star-shaped outline).
    """
    n = len(v)
    pieces, start = [], 0
    while start < n:
        stop = start + 1  # the piece holds vertices start..stop
        while stop - start < max_edges and stop < n:
            idx = [(start + k) % n for k in range(stop - start + 2)]  # try one more
            if not _convex(np.vstack([[0.0, 0.0], v[idx]])):
                break
            stop += 1
        idx = [(start + k) % n for k in range(stop - start + 1)]
        pieces.append(np.vstack([[0.0, 0.0], v[idx]]))
        start = stop
    return pieces


def _convex(p: np.ndarray) -> bool:
    d = np.diff(np.vstack([p, p[:1]]), axis=0)
    cross = d[:, 0] * np.roll(d[:, 1], -1) - d[:, 1] * np.roll(d[:, 0], -1)
    return bool(np.all(cross > -1e-15))


def _rim(body, n: int) -> np.ndarray:
    if body.is_polygon:
        return np.array(body.vertices, dtype=float)
    phi = np.linspace(0.0, TWO_PI, int(n), endpoint=False)
    if body.kinks:
        phi = np.unique(np.concatenate([phi, np.mod(body.kinks, TWO_PI)]))
    r = body.radius(phi)
    return np.column_stack([r * np.cos(phi), r * np.sin(phi)])


def run_gear_pair(pair, *, driver_speed_rad_s: float = 2.0, turns: float = 1.0,
                  timestep_s: float = 5e-4, friction: float = 1.5, load_torque_Nm: float = 0.5,
                  preload_N: float = 200.0, inertia_kg_m2: tuple[float, float] = (0.05, 0.05),
                  mass_kg: tuple[float, float] = (1.0, 1.0),
                  iterations: int = 30, slop_m: float = 1e-4, rim_points: int = 360,
                  max_drive_torque_Nm: float | None = None) -> GearRun:
    """Simulate a closed outside hub pair as gears: the driver at constant speed, the driven braked.

    Parameters
    ----------
    pair : HubPair
        A closed pair with ``side = "outside"``.
    driver_speed_rad_s : float
        Wheel speed [rad/s] (clockwise).
    turns : float
        Wheel turns to simulate.
    timestep_s : float
        Step [s].
    friction : float
        Coulomb coefficient at the contact.
    load_torque_Nm : float
        Brake torque on the hub [N m].
    preload_N : float
        Force [N] pressing the wheel's carriage towards the hub (a spring's or a weight's;
        applied as a constant force on a carriage as heavy as the wheel).
    inertia_kg_m2 : pair of float
        Moments of inertia of wheel and hub about their pivots [kg m^2].
    mass_kg : pair of float
        Masses of wheel and hub [kg] (centres of mass on the pivots).
    iterations : int
        Constraint solver iterations per step.
    slop_m : float
        Allowed contact overlap [m].
    rim_points : int
        Polygon vertices of a smooth rim.
    max_drive_torque_Nm : float, optional
        Torque limit [N m] of the driving motor; None: unlimited.

    Returns
    -------
    GearRun
    """
    import pymunk

    if pair.side != "outside":
        raise InputError("run_gear_pair simulates a pair outside each other (side = 'outside')")
    for name, v in (("driver_speed_rad_s", driver_speed_rad_s), ("turns", turns),
                    ("timestep_s", timestep_s), ("friction", friction), ("preload_N", preload_N)):
        if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
            raise InputError(f"{name} must be a number > 0, got {v!r}")
    E = pair.centre_distance
    space = pymunk.Space()
    space.iterations = int(iterations)
    space.gravity = (0.0, 0.0)  # the preload is a force; centres of mass sit on the pivots
    space.collision_slop = float(slop_m)
    space.collision_persistence = 1
    static = space.static_body

    hub = pymunk.Body(float(mass_kg[1]), float(inertia_kg_m2[1]))  # centre of mass on the pivot
    wheel = pymunk.Body(float(mass_kg[0]), float(inertia_kg_m2[0]))
    carriage = pymunk.Body(float(mass_kg[0]), float("inf"))
    push = (0.0, -float(preload_N))
    hub.position = (0.0, 0.0)
    carriage.position = (0.0, E)
    wheel.position = (0.0, E)
    th0 = float(pair.wheel_angle(0.0))  # ψ = 0 here
    wheel.angle = -th0  # the wheel frame turned clockwise by θ
    w0 = float(driver_speed_rad_s)
    wheel.angular_velocity = -w0
    hub.angular_velocity = w0 * float(pair.speed_ratio(th0))
    mu = math.sqrt(float(friction))  # pymunk multiplies the two shapes' coefficients
    shapes = []
    for body, rim in ((wheel, _rim(pair.wheel, rim_points)), (hub, _rim(pair.hub, rim_points))):
        for piece in _fan(rim):
            sh = pymunk.Poly(body, [(float(x), float(y)) for x, y in piece])
            sh.friction = mu
            shapes.append(sh)
    groove = pymunk.GrooveJoint(static, carriage, (0.0, 0.5 * E), (0.0, 1.5 * E), (0.0, 0.0))
    axle = pymunk.PivotJoint(carriage, wheel, (0.0, 0.0), (0.0, 0.0))
    pin = pymunk.PivotJoint(static, hub, (0.0, 0.0), (0.0, 0.0))
    drive = pymunk.SimpleMotor(carriage, wheel, w0)
    if max_drive_torque_Nm is not None:
        drive.max_force = float(max_drive_torque_Nm)
    brake = pymunk.SimpleMotor(static, hub, 0.0)
    brake.max_force = float(load_torque_Nm)
    space.add(hub, wheel, carriage, *shapes, groove, axle, pin, drive, brake)

    n = int(math.ceil(turns * TWO_PI / w0 / timestep_s))
    t = np.empty(n + 1)
    th = np.empty(n + 1)
    ps = np.empty(n + 1)
    cd = np.empty(n + 1)
    a_w0, a_h0 = wheel.angle, hub.angle
    for i in range(n + 1):
        t[i] = i * timestep_s
        th[i] = th0 - (wheel.angle - a_w0)
        ps[i] = hub.angle - a_h0
        cd[i] = carriage.position.y
        if i < n:
            carriage.apply_force_at_local_point(push, (0.0, 0.0))
            space.step(timestep_s)
    if not np.all(np.isfinite(cd)) or np.max(np.abs(cd - E)) > 0.25 * E:
        raise SimulationError("the gear pair flew apart in the simulation (pivot distance off by"
                              " more than a quarter of E); reduce the step or raise the preload")
    return GearRun(t_s=t, theta_rad=th, psi_rad=ps, centre_distance_m=cd,
                   load_torque_Nm=float(load_torque_Nm))


@record
class CarouselRun:
    """Record of a simulated carousel: the hub fixed, the wheel on an arm about its centre.

    Attributes
    ----------
    t_s : ndarray
        Time [s].
    theta_rad : ndarray
        Wheel turn relative to the arm [rad] (clockwise), in the pair's convention.
    arm_rad : ndarray
        Arm angle [rad], anticlockwise from +x in the hub's frame.
    axle_radius_m : ndarray
        Distance [m] from the hub's centre to the axle.
    """

    t_s: np.ndarray
    theta_rad: np.ndarray
    arm_rad: np.ndarray
    axle_radius_m: np.ndarray


def run_carousel(pair, *, wheel_speed_rad_s: float = 2.0, turns: float = 1.0,
                 timestep_s: float = 5e-4, friction: float = 1.5, preload_N: float = 200.0,
                 mass_kg: float = 1.0, inertia_kg_m2: float = 0.05, arm_inertia_kg_m2: float = 0.05,
                 iterations: int = 30, slop_m: float = 1e-4, rim_points: int = 360,
                 gravity_m_s2: float = 0.0, max_drive_torque_Nm: float | None = None) -> CarouselRun:
    """Simulate a carousel or drum: the hub (or ring) fixed, an arm pivoted at its centre.

    The wheel's axle rides in a radial groove on the arm and is pressed against the hub
    (outwards against a ring) by ``preload_N``; a motor on the arm turns the wheel at a
    constant speed relative to the arm, and the arm swings round as the wheel rolls. With
    ``gravity_m_s2 = 0`` (a horizontal carousel) the preload stands for a spring; otherwise
    gravity acts on the wheel along -y in the plane (a vertical drum), its centre of mass on
    its axle, while the arm and the carriage are balanced on their pivots.

    Parameters
    ----------
    pair : HubPair
        A closed pair, either side.
    wheel_speed_rad_s : float
        Wheel speed relative to the arm [rad/s] (clockwise).
    turns : float
        Wheel turns relative to the arm to simulate.
    timestep_s : float
        Step [s].
    friction : float
        Coulomb coefficient at the contact.
    preload_N : float
        Force [N] pressing the axle towards the hub's centre (outside) or away from it (inside).
    mass_kg : float
        Wheel mass [kg] (and its carriage's).
    inertia_kg_m2 : float
        Wheel moment of inertia about its axle [kg m^2].
    arm_inertia_kg_m2 : float
        Arm moment of inertia about the hub's centre [kg m^2].
    iterations : int
        Constraint solver iterations per step.
    slop_m : float
        Allowed contact overlap [m].
    rim_points : int
        Polygon vertices of a smooth rim.
    gravity_m_s2 : float
        Gravity [m/s^2] in the plane, along -y, on the wheel; 0: a horizontal carousel.
    max_drive_torque_Nm : float, optional
        Torque limit [N m] of the motor turning the wheel on the arm; None: unlimited.

    Returns
    -------
    CarouselRun
    """
    import pymunk

    for name, v in (("wheel_speed_rad_s", wheel_speed_rad_s), ("turns", turns),
                    ("timestep_s", timestep_s), ("friction", friction), ("preload_N", preload_N)):
        if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
            raise InputError(f"{name} must be a number > 0, got {v!r}")
    if not (isinstance(gravity_m_s2, (int, float)) and math.isfinite(gravity_m_s2) and gravity_m_s2 >= 0):
        raise InputError(f"gravity_m_s2 must be a number >= 0, got {gravity_m_s2!r}")
    E = pair.centre_distance
    inside = pair.side == "inside"
    space = pymunk.Space()
    space.iterations = int(iterations)
    space.gravity = (0.0, 0.0)
    space.collision_slop = float(slop_m)
    space.collision_persistence = 1
    static = space.static_body
    th0 = float(pair.wheel_angle(0.0))
    arm0, axle0, spin0 = pair.poses(th0)
    arm0, spin0 = float(arm0), float(spin0)

    arm = pymunk.Body(1.0, float(arm_inertia_kg_m2))
    carriage = pymunk.Body(float(mass_kg), float(inertia_kg_m2))
    wheel = pymunk.Body(float(mass_kg), float(inertia_kg_m2))
    arm.position = (0.0, 0.0)
    arm.angle = arm0
    carriage.position = wheel.position = (float(axle0[0]), float(axle0[1]))
    carriage.angle = arm0
    wheel.angle = -spin0
    mu = math.sqrt(float(friction))
    shapes: list[pymunk.Shape] = []
    for piece in _fan(_rim(pair.hub, rim_points)):
        if inside:  # a ring: its rim as segments, the inside open
            continue
        sh = pymunk.Poly(static, [(float(x), float(y)) for x, y in piece])
        sh.friction = mu
        shapes.append(sh)
    if inside:
        rim = _rim(pair.hub, 4 * rim_points)
        for p, q in zip(rim, np.roll(rim, -1, axis=0), strict=True):
            seg = pymunk.Segment(static, (float(p[0]), float(p[1])), (float(q[0]), float(q[1])), 0.0)
            seg.friction = mu
            shapes.append(seg)
    for piece in _fan(_rim(pair.wheel, rim_points)):
        sh = pymunk.Poly(wheel, [(float(x), float(y)) for x, y in piece])
        sh.friction = mu
        shapes.append(sh)
    # In the arm's frame the arm points along +x.
    pin = pymunk.PivotJoint(static, arm, (0.0, 0.0), (0.0, 0.0))
    groove = pymunk.GrooveJoint(arm, carriage, (0.5 * E if not inside else 0.0, 0.0),
                                (1.5 * E + (0.5 * E if inside else 0.0), 0.0), (0.0, 0.0))
    lock = pymunk.GearJoint(arm, carriage, 0.0, 1.0)  # the carriage turns with the arm
    axle = pymunk.PivotJoint(carriage, wheel, (0.0, 0.0), (0.0, 0.0))
    drive = pymunk.SimpleMotor(carriage, wheel, float(wheel_speed_rad_s))
    if max_drive_torque_Nm is not None:
        drive.max_force = float(max_drive_torque_Nm)
    space.add(arm, carriage, wheel, *shapes, pin, groove, lock, axle, drive)
    weight = (0.0, -float(mass_kg) * float(gravity_m_s2))  # on the wheel only, at its axle

    n = int(math.ceil(turns * TWO_PI / wheel_speed_rad_s / timestep_s))
    t, th, am, rr = (np.empty(n + 1) for _ in range(4))
    sign = -1.0 if inside else 1.0  # towards the centre outside, away from it inside
    for i in range(n + 1):
        t[i] = i * timestep_s
        am[i] = arm.angle
        th[i] = th0 - (wheel.angle - carriage.angle - (-spin0 - arm0))
        rr[i] = math.hypot(*carriage.position)
        if i < n:
            d = carriage.position / max(carriage.position.length, 1e-12)
            carriage.apply_force_at_world_point(-sign * float(preload_N) * d, carriage.position)
            if gravity_m_s2 > 0:
                wheel.apply_force_at_world_point(weight, wheel.position)
            space.step(timestep_s)
    if not np.all(np.isfinite(rr)) or np.max(np.abs(rr - E)) > 0.25 * E:
        raise SimulationError("the carousel's wheel left the hub in the simulation (axle off its"
                              " circle by more than a quarter of E); reduce the step or raise the preload")
    return CarouselRun(t_s=t, theta_rad=th, arm_rad=np.unwrap(am), axle_radius_m=rr)

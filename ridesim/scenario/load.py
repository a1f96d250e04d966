"""Scenario files: the TOML schema of one build and its validating loader.

A scenario describes one build: either its wheel (``[wheel]``) or its track
(``[track]``) -- the solver derives the other -- plus the ``[vehicle]``,
``[drive]``, ``[surface]`` and ``[run]`` settings, all of which have defaults.
Every dimensional key name ends in its SI unit (``_m``, ``_kg``, ``_s``,
``_Nm``, ...).

Loading only validates data; it builds no model objects. Every problem raises
:class:`ridesim.errors.ScenarioError` with a one-line message that starts with
the dotted key path, names the offending value and says how to fix it, for
example ``wheel.apothem_m must be > 0, got -0.3``. Types, defaults and bounds
come from the one key table in :mod:`ridesim.scenario.schema`; a value that is valid
but outside the range of real builds is kept and reported in
:attr:`Scenario.warnings`.

Examples
--------
>>> sc = scenario_from_dict({"wheel": {"shape": "circle", "radius_m": 0.1}})
>>> sc.wheel.radius_m
0.1
>>> sc.replace("surface.friction", 0.6).surface.friction
0.6
"""

from __future__ import annotations

import json
import math
import numbers
import re
import tomllib
from collections.abc import Iterable, Mapping
from dataclasses import field, fields
from pathlib import Path
from typing import Any

from ridesim.errors import ScenarioError
from ridesim.records import record
from ridesim.scenario import schema as _schema
from ridesim.scenario.schema import (
    DRIVE_MODES,
    KEY,
    MAX_DESCRIPTION_CHARS,
    MAX_FILE_BYTES,
    MAX_HARMONIC,
    MAX_NAME_CHARS,
    MAX_NESTING,
    MAX_TIMESTEP_S,
    SECTIONS,
    TRACK_SHAPES,
    WHEEL_SHAPES,
    default_of,
    plausibility_warnings,
    section_keys,
)
from ridesim.validate import is_integer, is_number

__all__ = [
    "WHEEL_SHAPES",
    "TRACK_SHAPES",
    "DRIVE_MODES",
    "DEFAULT_WHEEL_THICKNESS_M",
    "DEFAULT_WHEEL_DENSITY_KG_M3",
    "MAX_TIMESTEP_S",
    "WheelSpec",
    "OutlineSpec",
    "HubSpec",
    "RatioSpec",
    "TrackSpec",
    "ExportSpec",
    "VehicleSpec",
    "DriveSpec",
    "SurfaceSpec",
    "RunSpec",
    "DutySpec",
    "MotorSpec",
    "PathSpec",
    "Scenario",
    "load_scenario",
    "scenario_from_dict",
    "scenario_keys",
    "check_nesting",
]

DEFAULT_WHEEL_THICKNESS_M = default_of("wheel.thickness_m")
"""Wheel plate thickness in m used when none is given (also for derived wheels)."""

DEFAULT_WHEEL_DENSITY_KG_M3 = default_of("wheel.density_kg_m3")
"""Wheel material density in kg/m^3 used when none is given (also for derived wheels)."""

Point = tuple[float, float]

_POLYGON_SIZES = ("apothem_m", "circumradius_m", "side_m", "vertices_m")
# Wheel shapes whose radius is measured from the axle (no axle_m).
_AXLE_AT_ORIGIN = ("polar", "harmonic")
# Which keys each shape uses, from the key table (ridesim/scenario/schema.py).
_WHEEL_SHAPE_KEYS: dict[str, tuple[str, ...]] = {
    shape: section_keys("wheel", shape) for shape in WHEEL_SHAPES
}
_WHEEL_COMMON = tuple(k for k in section_keys("wheel") if not KEY[f"wheel.{k}"].shapes)
_HUB_SHAPE_KEYS: dict[str, tuple[str, ...]] = {
    shape: section_keys("hub", shape) for shape in WHEEL_SHAPES
}
_HUB_COMMON = tuple(k for k in section_keys("hub") if not KEY[f"hub.{k}"].shapes)
_TRACK_SHAPE_KEYS: dict[str, tuple[str, ...]] = {
    shape: section_keys("track", shape) for shape in TRACK_SHAPES
}
_TRACK_BUILD = ("height_error_m", "error_seed", "joint_step_m", "section_length_m")
_TRACK_COMMON = tuple(k for k in section_keys("track") if not KEY[f"track.{k}"].shapes)
_SECTIONS = SECTIONS
_TOP_KEYS = ("name", "description") + _SECTIONS

# Groups of keys of which at most one may be given. ``Scenario.replace`` drops
# the other members of a group when one member is set, so that a sweep can
# switch e.g. from apothem_m to side_m with a single change. (The wheelbase may be
# given both ways when the two agree; a change of one still replaces the other.)
_EXCLUSIVE: dict[str, tuple[tuple[str, ...], ...]] = {
    "wheel": (_POLYGON_SIZES, ("points_m", "file")),
    "track": (("points_m", "file"), ("lobes", "depth_m")),
    "vehicle": (("wheelbase_m", "wheelbase_periods"),),
    "path": (("centre_distance_m", "ratio"),),
    "hub": (_POLYGON_SIZES, ("points_m", "file")),
    "ratio": (("formula", "points_rad"),),
}

_POLYGON_NAMES = {
    "triangle": 3,
    "square": 4,
    "pentagon": 5,
    "hexagon": 6,
    "heptagon": 7,
    "octagon": 8,
    "nonagon": 9,
    "decagon": 10,
}

_MISSING: Any = object()


# ----------------------------------------------------------------------------
# Specs
# ----------------------------------------------------------------------------
# Every field's default, bounds, plausible range and unit are one row of the key
# table in ridesim/scenario/schema.py (KEYS): a new key is a row there, a field here
# with default_of("section.key"), and t.get("key") in the section's parser.


@record
class OutlineSpec:
    """A validated outline: the shape keys a ``[wheel]`` and a ``[hub]`` share.

    See :class:`WheelSpec` for the fields; a hub's ``axle_m`` is its centre (pivot).
    """

    shape: str | None
    sides: int | None = default_of("wheel.sides")
    apothem_m: float | None = default_of("wheel.apothem_m")
    circumradius_m: float | None = default_of("wheel.circumradius_m")
    side_m: float | None = default_of("wheel.side_m")
    vertices_m: tuple[Point, ...] | None = default_of("wheel.vertices_m")
    semi_axes_m: Point | None = default_of("wheel.semi_axes_m")
    radius_m: float | None = default_of("wheel.radius_m")
    radius_formula: str | None = default_of("wheel.radius_formula")
    mean_radius_m: float | None = default_of("wheel.mean_radius_m")
    harmonics: tuple[tuple[int, float, float], ...] | None = default_of("wheel.harmonics")
    points_m: tuple[Point, ...] | None = default_of("wheel.points_m")
    file: str | None = default_of("wheel.file")
    layer: str | None = default_of("wheel.layer")
    id: str | None = default_of("wheel.id")
    units: str | None = default_of("wheel.units")
    corner_angle_deg: float | None = default_of("wheel.corner_angle_deg")
    corners: str | tuple[int, ...] | None = default_of("wheel.corners")
    axle_m: Point | None = default_of("wheel.axle_m")


@record
class HubSpec(OutlineSpec):
    """Validated ``[hub]`` section: the given hub (or ring) outline; the wheel is solved for it.

    The outline fields are those of :class:`WheelSpec` (``axle_m`` is the hub's centre).

    Attributes
    ----------
    lobes : int or None
        The solved wheel's lobes: hub pattern repeats per wheel turn (>= 1). None for a
        circle hub, whose wheel is sized by ``path.ratio`` or ``path.centre_distance_m``.
    """

    lobes: int | None = default_of("hub.lobes")


@record
class RatioSpec:
    """Validated ``[ratio]`` section: a gear pair's required speed ratio (both curves solved).

    Attributes
    ----------
    formula : str or None
        Driven over driving speed as a formula in ``theta`` [rad] (stored unparsed).
    points_rad : tuple of (float, float) or None
        The same as rows ``(theta_rad, ratio)``, theta rising over at most one turn.
    """

    formula: str | None = default_of("ratio.formula")
    points_rad: tuple[Point, ...] | None = default_of("ratio.points_rad")

    @property
    def given(self) -> str | tuple[Point, ...]:
        """The formula, or the table rows: what :func:`ridesim.solve.hub.gears_for_ratio` takes."""
        if self.formula is not None:
            return self.formula
        if self.points_rad is None:  # not reached for a parsed section
            raise ScenarioError("ratio: give ratio.formula or ratio.points_rad")
        return self.points_rad


@record
class WheelSpec(OutlineSpec):
    """Validated ``[wheel]`` section: the wheel outline and its mass properties.

    Only the fields of the chosen ``shape`` are set; the others are None.
    Coordinates are in the wheel frame, in m.

    Attributes
    ----------
    shape : str or None
        One of :data:`WHEEL_SHAPES`; None for a material-only section beside
        ``[track]`` (the wheel's outline is then solved from the track).
    sides : int or None
        Polygon: number of sides (>= 3). None when ``vertices_m`` is given
        without ``sides``.
    apothem_m, circumradius_m, side_m : float or None
        Polygon of ``sides`` equal sides: exactly one size, in m.
    vertices_m : tuple of (float, float) or None
        Polygon given by its corners [x, y] in m, at least 3.
    semi_axes_m : (float, float) or None
        Ellipse: semi-axes (a, b) in m, a along x.
    radius_m : float or None
        Circle: radius in m.
    radius_formula : str or None
        Polar: radius in m as a formula in the polar angle ``phi`` (rad),
        measured from the axle. Stored unparsed.
    mean_radius_m : float or None
        Harmonic: ``r0`` in m of ``r(phi) = r0 (1 + sum a_k cos(k phi) + b_k sin(k phi))``
        about the axle, the radius averaged over the polar angle.
    harmonics : tuple of (int, float, float) or None
        Harmonic: the terms ``(k, a_k, b_k)``, coefficients as fractions of ``r0``; ``()``
        for a circle.
    points_m : tuple of (float, float) or None
        Outline given inline: points [x, y] in m, at least 3.
    file : str or None
        Outline given as a file: CSV points x, y (m, or mm under an ``x_mm,y_mm`` header), or
        a DXF or SVG drawing; resolved absolute path.
    layer, id : str or None
        DXF layer or SVG element id of the outline, when the drawing holds several shapes.
    units : str or None
        Length unit of a DXF drawing whose header gives none (m, cm, mm, in, ft).
    corner_angle_deg : float or None
        Outline: a point is a corner where the outline turns by more than this (deg);
        None: 10.
    corners : str, tuple of int or None
        Outline: "all", "none" or point indices overriding ``corner_angle_deg``.
    axle_m : (float, float) or None
        Axle position [x, y] in m in the coordinates of the outline. Always
        (0, 0) for ``polar`` and ``harmonic``, whose radius is measured from the axle. None for a
        drawn outline without it: the smallest circle inside the outline.
    thickness_m : float
        Plate thickness in m.
    density_kg_m3 : float
        Material density in kg/m^3.
    mass_kg : float or None
        Wheel mass in kg; None: area * thickness * density.
    inertia_kg_m2 : float or None
        Moment of inertia about the axle in kg*m^2; None: from the outline
        as a uniform plate.
    corner_radius_m : float
        Radius in m to which sharp corners are rounded in the simulation
        (0: the simulation rounds them by 2 % of the least rim radius).
    fit_track_to_corners : bool or None
        Polygon wheels: the corners really are rounded to ``corner_radius_m`` and the track
        is solved for the rounded wheel (smooth valleys instead of cusps), for the check, the
        cut files and the simulation alike. None (false): the track is solved for sharp
        corners.
    scale : float
        As-built size over nominal size (dimensionless, e.g. 1.002 for a wheel
        cut 0.2 % large); the simulation rolls the scaled wheel on the nominal
        track.
    axle_error_m : (float, float)
        As-built axle hole position minus the nominal one [x, y] in m.
    """

    thickness_m: float = default_of("wheel.thickness_m")
    density_kg_m3: float = default_of("wheel.density_kg_m3")
    mass_kg: float | None = default_of("wheel.mass_kg")
    inertia_kg_m2: float | None = default_of("wheel.inertia_kg_m2")
    corner_radius_m: float = default_of("wheel.corner_radius_m")
    scale: float = default_of("wheel.scale")
    axle_error_m: Point = default_of("wheel.axle_error_m")
    fit_track_to_corners: bool | None = None  # stored None when false (left out of to_dict)


@record
class TrackSpec:
    """Validated ``[track]`` section: the track profile y(x) the wheel must fit.

    Only the fields of the chosen ``shape`` are set; the others are None.

    Attributes
    ----------
    shape : str or None
        One of :data:`TRACK_SHAPES`; None for a shape-less section beside
        ``[wheel]`` that holds only the as-built errors.
    amplitude_m, wavelength_m : float or None
        Wave: amplitude and wavelength in m.
    rise_m, run_m : float or None
        Sawtooth: tooth height and horizontal length in m.
    formula : str or None
        Formula: height in m as a formula in ``x`` (m). Stored unparsed.
    period_m : float or None
        Formula: period in m (required). Points: period in m, or None for
        the x span of the points (computed by the model layer, because a
        ``file`` is not read here).
    points_m : tuple of (float, float) or None
        Points given inline: [x, y] in m, at least 3, x strictly increasing.
    file : str or None
        Points given as a CSV file of x, y in m (in mm under an ``x_mm,y_mm`` header):
        resolved absolute path.
    layer, id : str or None
        DXF layer or SVG element id of a drawn profile, when the drawing holds several curves.
    units : str or None
        Length unit of a DXF drawing whose header gives none (m, cm, mm, in, ft).
    corner_angle_deg : float or None
        Points: a point is a corner where the profile turns by more than this (deg); None: 10.
    corners : str, tuple of int or None
        Points: "all", "none" or point indices overriding ``corner_angle_deg``.
    lobes : int or None
        Track periods per wheel revolution (>= 1). None when ``depth_m`` is
        given instead; 1 when neither is given.
    depth_m : float or None
        Depth in m of the axle path below which the wheel is closed, given
        instead of ``lobes``.
    height_error_m : float
        As-built track: standard deviation in m of the random height error of
        each track section (constant along a section of ``section_length_m``
        starting at x = 0, seeded by ``error_seed``; used by the simulation).
    error_seed : int
        Seed of the height error draws (same seed, same track).
    joint_step_m : float
        As-built track: height step in m at every joint between sections
        (alternately up and down).
    section_length_m : float
        Length in m of the track sections between joints.
    """

    shape: str | None
    amplitude_m: float | None = default_of("track.amplitude_m")
    wavelength_m: float | None = default_of("track.wavelength_m")
    rise_m: float | None = default_of("track.rise_m")
    run_m: float | None = default_of("track.run_m")
    formula: str | None = default_of("track.formula")
    period_m: float | None = default_of("track.period_m")
    points_m: tuple[Point, ...] | None = default_of("track.points_m")
    file: str | None = default_of("track.file")
    layer: str | None = default_of("track.layer")
    id: str | None = default_of("track.id")
    units: str | None = default_of("track.units")
    corner_angle_deg: float | None = default_of("track.corner_angle_deg")
    corners: str | tuple[int, ...] | None = default_of("track.corners")
    lobes: int | None = default_of("track.lobes")
    depth_m: float | None = default_of("track.depth_m")
    height_error_m: float = default_of("track.height_error_m")
    error_seed: int = default_of("track.error_seed")
    joint_step_m: float = default_of("track.joint_step_m")
    section_length_m: float = default_of("track.section_length_m")


@record
class VehicleSpec:
    """Validated ``[vehicle]`` section: the body carried by the axles.

    Attributes
    ----------
    body_mass_kg : float
        Body mass in kg (without wheels).
    body_inertia_kg_m2 : float or None
        Body moment of inertia about its centre of mass in kg*m^2; None: the
        simulator estimates one.
    axles : int
        Number of axles (>= 1), each with one wheel profile.
    wheelbase_m : float
        Distance between neighbouring axles in m; > 0 when ``axles`` > 1 (unless
        ``wheelbase_periods`` gives it), ignored when ``axles`` = 1.
    coupled : bool
        True when all axles are forced to turn together (chain or gears).
    seat_m : (float, float)
        Seat (rider) point [x, y] in m in the body frame, whose motion the
        ride metrics report.
    driven_axles : tuple of int or None
        0-based indices of the driven axles; None: all axles.
    phase_offsets_rad : tuple of float or None
        Mounting error of each wheel on a shared shaft [rad] (clockwise positive), one per
        axle; used when ``coupled`` (uncoupled wheels find their own angle by rolling).
    wheelbase_periods : float or None
        The wheelbase as a number of track periods (the period is known once the pair is
        solved: :func:`ridesim.scenario.build.resolve_wheelbase` sets ``wheelbase_m``). Given with
        ``wheelbase_m``, the two must agree within ``wheelbase_tolerance_m`` and
        ``wheelbase_m`` (the measured length) is the one used.
    wheelbase_tolerance_m : float
        Build tolerance of the wheelbase [m] (default 0.5 mm, a workshop figure for a drilled
        or jig-built chassis: common practice): a coupled cart's wheelbase is judged by what
        it costs (bounce, pitch, skid) against a wheelbase off by this much.
    """

    body_mass_kg: float = default_of("vehicle.body_mass_kg")
    body_inertia_kg_m2: float | None = default_of("vehicle.body_inertia_kg_m2")
    axles: int = default_of("vehicle.axles")
    wheelbase_m: float = default_of("vehicle.wheelbase_m")
    coupled: bool = default_of("vehicle.coupled")
    seat_m: Point = default_of("vehicle.seat_m")
    driven_axles: tuple[int, ...] | None = default_of("vehicle.driven_axles")
    phase_offsets_rad: tuple[float, ...] | None = default_of("vehicle.phase_offsets_rad")
    wheelbase_periods: float | None = default_of("vehicle.wheelbase_periods")
    wheelbase_tolerance_m: float = default_of("vehicle.wheelbase_tolerance_m")

    @property
    def driven_axle_indices(self) -> tuple[int, ...]:
        """Indices of the driven axles, with None expanded to all axles.

        Returns
        -------
        tuple of int
            0-based axle indices in increasing order of appearance.
        """
        if self.driven_axles is None:
            return tuple(range(self.axles))
        return self.driven_axles


@record
class DriveSpec:
    """Validated ``[drive]`` section: how the wheels are driven.

    Attributes
    ----------
    mode : str
        One of :data:`DRIVE_MODES`: ``speed`` holds the vehicle speed,
        ``shaft_speed`` holds the axle angular speed, ``torque`` applies a
        constant axle torque.
    speed_m_s : float
        Target vehicle speed in m/s (mode ``speed``).
    accel_m_s2 : float
        Ramp-up acceleration in m/s^2 towards the target; 0: start at the
        target.
    max_torque_Nm : float
        Largest torque in N*m each motor may apply to hold its target (per motor: one
        per uncoupled driven axle, one for a coupled train).
    torque_Nm : float or None
        Constant torque in N*m of each motor (required for mode ``torque``).
    shaft_speed_rad_s : float or None
        Target axle angular speed in rad/s (required for mode
        ``shaft_speed``).
    """

    mode: str = default_of("drive.mode")
    speed_m_s: float = default_of("drive.speed_m_s")
    accel_m_s2: float = default_of("drive.accel_m_s2")
    max_torque_Nm: float = default_of("drive.max_torque_Nm")
    torque_Nm: float | None = default_of("drive.torque_Nm")
    shaft_speed_rad_s: float | None = default_of("drive.shaft_speed_rad_s")


@record
class SurfaceSpec:
    """Validated ``[surface]`` section: contact between wheel and track.

    Attributes
    ----------
    friction : float
        Coulomb friction coefficient (dimensionless, > 0).
    rolling_resistance : float
        Rolling resistance coefficient (dimensionless, >= 0).
    """

    friction: float = default_of("surface.friction")
    rolling_resistance: float = default_of("surface.rolling_resistance")


@record
class RunSpec:
    """Validated ``[run]`` section: simulation length and solver settings.

    Attributes
    ----------
    duration_s : float
        Simulated time in s.
    timestep_s : float
        Integration step in s (at most :data:`MAX_TIMESTEP_S`).
    settle_s : float
        Initial time in s left out of the ride metrics; < ``duration_s``.
    iterations : int
        Constraint solver iterations per step (1 to 1000).
    """

    duration_s: float = default_of("run.duration_s")
    timestep_s: float = default_of("run.timestep_s")
    settle_s: float = default_of("run.settle_s")
    iterations: int = default_of("run.iterations")


@record
class DutySpec:
    """Validated ``[duty]`` section: the duty cycle used to size the motor.

    The cycle starts from rest, accelerates at ``drive.accel_m_s2`` to
    ``drive.speed_m_s``, cruises, then brakes to rest.

    Attributes
    ----------
    cruise_s : float
        Time at the target speed in s.
    brake_m_s2 : float or None
        Braking deceleration in m/s^2 (> 0); None: the same as the acceleration.
    grade_rad : float
        Grade of the whole run in rad (positive uphill), added as a slope force.
    rest_s : float
        Standstill at the end of the cycle in s (counts in the r.m.s. torque).
    """

    cruise_s: float = default_of("duty.cruise_s")
    brake_m_s2: float | None = default_of("duty.brake_m_s2")
    grade_rad: float = default_of("duty.grade_rad")
    rest_s: float = default_of("duty.rest_s")


@record
class MotorSpec:
    """Validated ``[motor]`` section: an optional motor and gear ratios to check.

    Attributes
    ----------
    gear_ratios : tuple of float
        Candidate reductions (motor turns per wheel turn, > 0); empty: none given.
    rated_torque_Nm : float or None
        Motor's continuous torque rating in N*m (compared with the r.m.s. torque).
    peak_torque_Nm : float or None
        Motor's intermittent (peak) torque rating in N*m; None: 2 x rated.
    rated_speed_rad_s : float or None
        Motor's rated speed in rad/s (compared with the top shaft speed).
    efficiency : float
        Gear efficiency (0, 1].
    safety_factor : float
        Margin the ratings must keep over the duty (>= 1).
    inertia_kg_m2 : float
        Motor rotor inertia in kg*m^2 (reflected to the wheel as i^2 J).
    """

    gear_ratios: tuple[float, ...] = default_of("motor.gear_ratios")
    rated_torque_Nm: float | None = default_of("motor.rated_torque_Nm")
    peak_torque_Nm: float | None = default_of("motor.peak_torque_Nm")
    rated_speed_rad_s: float | None = default_of("motor.rated_speed_rad_s")
    efficiency: float = default_of("motor.efficiency")
    safety_factor: float = default_of("motor.safety_factor")
    inertia_kg_m2: float = default_of("motor.inertia_kg_m2")


@record
class PathSpec:
    """Validated ``[path]`` section: where the axle runs.

    Attributes
    ----------
    kind : str
        ``"line"`` (a straight line over a track) or ``"hub"`` (a circle about a hub's centre).
    side : str
        Hub only: ``"outside"`` (around the hub) or ``"inside"`` (inside a ring).
    centre_distance_m : float or None
        Hub only: hub centre to axle in m, when given.
    ratio : float or None
        Hub only: wheel turns per hub turn, when given (the centre distance is then solved).
    load_torque_Nm : float
        Hub only, simulate: brake torque on the driven hub in N*m.
    preload_N : float or None
        Hub only, simulate: force in N pressing the wheel's axle towards the hub; None: the
        wheel's weight (twice it with ``gravity_in_plane``).
    view : str or None
        Hub only, simulate: ``"gears"`` or ``"carousel"``; None: by :attr:`sim_view`.
    gravity_in_plane : bool
        Hub only, simulate, carousel view: gravity in the plane of the roll (a vertical drum).
    """

    kind: str = default_of("path.kind")
    side: str = default_of("path.side")
    centre_distance_m: float | None = default_of("path.centre_distance_m")
    ratio: float | None = default_of("path.ratio")
    load_torque_Nm: float = default_of("path.load_torque_Nm")
    preload_N: float | None = default_of("path.preload_N")
    view: str | None = default_of("path.view")
    gravity_in_plane: bool = default_of("path.gravity_in_plane")

    @property
    def sim_view(self) -> str:
        """How ``simulate`` runs a hub pair: ``view``, or gears outside and carousel inside."""
        if self.view is not None:
            return self.view
        return "gears" if self.side == "outside" else "carousel"

    @property
    def is_hub(self) -> bool:
        """True for an axle on a circle about a hub."""
        return self.kind == "hub"


@record
class ExportSpec:
    """Validated ``[export]`` section: what the cut files hold and how they are drawn.

    Attributes
    ----------
    section_length_m : float
        Longest track piece in m.
    track_length_m : float or None
        Track length to draw in m (whole periods, rounded up); None: ``revolutions``.
    revolutions : float or None
        Wheel revolutions of track to draw; None with ``track_length_m`` unset: 1.
    chord_tolerance_m : float
        Largest chord-to-curve distance in m.
    axle_hole_m : float
        Axle hole diameter in m.
    axle_flat_m : float or None
        Width across the flat of a D-bore in m; None: a round hole.
    kerf_m : float
        Cut width in m (lines offset by half of it into the waste).
    sheet_m : (float, float) or None
        Sheet size [width, height] in m; None: no sheet.
    rails : int
        Rails: wheels per axle and strips per track piece.
    """

    section_length_m: float = default_of("export.section_length_m")
    track_length_m: float | None = default_of("export.track_length_m")
    revolutions: float | None = default_of("export.revolutions")
    chord_tolerance_m: float = default_of("export.chord_tolerance_m")
    axle_hole_m: float = default_of("export.axle_hole_m")
    axle_flat_m: float | None = default_of("export.axle_flat_m")
    kerf_m: float = default_of("export.kerf_m")
    sheet_m: Point | None = default_of("export.sheet_m")
    rails: int = default_of("export.rails")


@record
class Scenario:
    """A validated scenario: one build and how to run it.

    Build one with :func:`load_scenario` or :func:`scenario_from_dict`;
    constructing it directly skips validation. Exactly one of ``wheel`` and
    ``track`` is set. ``source`` and ``base_dir`` do not take part in
    equality, so two scenarios with the same values compare equal.

    Attributes
    ----------
    name : str
        Short name (default: the file stem).
    description : str
        Free text.
    wheel : WheelSpec or None
        The given wheel, or None when the track is given.
    track : TrackSpec or None
        The given track, or None when the wheel is given.
    vehicle : VehicleSpec
        Body and axles.
    drive : DriveSpec
        Drive mode and targets.
    surface : SurfaceSpec
        Contact coefficients.
    run : RunSpec
        Simulation settings.
    source : str
        Where the scenario came from: the absolute file path, or a label
        such as ``"<dict>"``.
    base_dir : str
        Absolute folder against which relative ``file`` keys are resolved.
    hub : HubSpec or None
        The given hub (or ring) of a hub path, its wheel solved; None otherwise.
    ratio : RatioSpec or None
        The required speed ratio of a gear pair, both pitch curves solved; None otherwise.
    warnings : tuple of str
        One line per value outside the plausible range of real builds (see
        :attr:`warnings`).
    """

    name: str
    description: str
    wheel: WheelSpec | None
    track: TrackSpec | None
    vehicle: VehicleSpec
    drive: DriveSpec
    surface: SurfaceSpec
    run: RunSpec
    duty: DutySpec = DutySpec()
    motor: MotorSpec = MotorSpec()
    path: PathSpec = PathSpec()
    export: ExportSpec = ExportSpec()
    hub: HubSpec | None = None
    ratio: RatioSpec | None = None
    source: str = field(default="<dict>", compare=False)
    base_dir: str = field(default=".", compare=False)

    @property
    def warnings(self) -> tuple[str, ...]:
        """One line per value that is valid but outside the range of real builds.

        A wheel of apothem 120 m or a friction coefficient of 70 is accepted (it may be
        meant), but most likely a unit slip. The plausible ranges and their sources are in
        the key table (``ridesim/scenario/schema.py``, ``docs/scenario-keys.md``). The command
        line prints these lines on stderr and adds them to its JSON output as
        ``warnings``; from Python, read them here (nothing is raised or emitted).

        Returns
        -------
        tuple of str
            Messages naming the key, the value, the plausible range and its source.
        """
        out: list[str] = []
        for section in _SECTIONS:
            out += plausibility_warnings(section, getattr(self, section))
        return tuple(out)

    def to_dict(self) -> dict[str, Any]:
        """Return the validated values as plain, TOML-compatible data.

        Keys left unset (None) are omitted and tuples become lists, so the
        result can be written as TOML or passed back to
        :func:`scenario_from_dict`, which yields an equal scenario.

        Returns
        -------
        dict
            ``name``, ``description`` and one sub-dict per section.
        """
        out: dict[str, Any] = {"name": self.name, "description": self.description}
        if self.wheel is not None:
            wheel = _spec_dict(self.wheel)
            if self.wheel.shape in (*_AXLE_AT_ORIGIN, None):
                del wheel["axle_m"]
            out["wheel"] = wheel
        if self.track is not None:
            out["track"] = _spec_dict(self.track)
        out["vehicle"] = _spec_dict(self.vehicle)
        if self.vehicle.wheelbase_periods is not None and self.vehicle.wheelbase_m == 0.0:
            del out["vehicle"]["wheelbase_m"]  # unset: solved from the periods
        out["drive"] = _spec_dict(self.drive)
        out["surface"] = _spec_dict(self.surface)
        out["run"] = _spec_dict(self.run)
        out["duty"] = _spec_dict(self.duty)
        out["motor"] = _spec_dict(self.motor)
        if self.hub is not None:
            hub = _spec_dict(self.hub)
            if self.hub.shape == "polar":
                del hub["axle_m"]
            out["hub"] = hub
        if self.ratio is not None:
            out["ratio"] = _spec_dict(self.ratio)
        if self.path != PathSpec():
            out["path"] = _spec_dict(self.path)
        out["export"] = _spec_dict(self.export)
        return out

    def replace(self, key: str, value: Any) -> Scenario:
        """Return a copy with one dotted key changed, validated again.

        Parameters
        ----------
        key : str
            ``"section.key"`` such as ``"surface.friction"``, a top-level key
            (``"name"``, ``"description"``), a whole section (``"track"``,
            with a dict as value), or one number of a list key by its indexes
            counted from 0 (``"wheel.harmonics[0][1]"``: the first term's a_k).
        value : object
            New value in the key's unit; None removes the key so that its
            default applies. Setting one key of a mutually exclusive group
            (``apothem_m``/``circumradius_m``/``side_m``/``vertices_m``,
            ``points_m``/``file``, ``lobes``/``depth_m``) removes the others.

        Returns
        -------
        Scenario
            The new scenario; this one is unchanged.

        Raises
        ------
        ScenarioError
            If the key path is malformed or the changed scenario is invalid.
        """
        return self.replace_many({key: value})

    def replace_many(self, changes: Mapping[str, Any]) -> Scenario:
        """Return a copy with several dotted keys changed, validated once.

        Use this when the changes are only valid together, e.g.
        ``{"wheel.shape": "circle", "wheel.radius_m": 0.1, "wheel.sides": None,
        "wheel.apothem_m": None}``.

        Parameters
        ----------
        changes : mapping of str to object
            Dotted key paths and their new values, as in :meth:`replace`.

        Returns
        -------
        Scenario
            The new scenario; this one is unchanged.

        Raises
        ------
        ScenarioError
            If a key path is malformed or the changed scenario is invalid.
        """
        data = self.to_dict()
        items = [(k, v) for k, v in changes.items() if not (isinstance(k, str) and "[" in k)]
        indexed = [(split_indexed_key(k), v) for k, v in changes.items()
                   if isinstance(k, str) and "[" in k]
        parsed = [(_split_key_path(k), v) for k, v in items]
        changed = {parts for parts, _ in parsed}
        for parts, _ in parsed:
            if len(parts) == 2:
                section, name = parts
                for group in _EXCLUSIVE.get(section, ()):
                    if name not in group:
                        continue
                    siblings = [g for g in group if g != name]
                    if section in ("wheel", "hub") and name == "vertices_m":
                        siblings.append("sides")
                    for sibling in siblings:
                        if (section, sibling) not in changed:
                            data.get(section, {}).pop(sibling, None)
        for parts, value in parsed:
            if len(parts) == 1:
                data[parts[0]] = value
            else:
                section, name = parts
                table = data.get(section)
                if not isinstance(table, dict):
                    table = {}
                    data[section] = table
                table[name] = value
        for (key, index), value in indexed:  # one number of a list, after the whole keys
            section, name = key.split(".")
            table = data.get(section)
            if not isinstance(table, dict) or name not in table:
                raise ScenarioError(f"{key}{_index_text(index)}: {key} is not set in this scenario;"
                                    f" set the whole list ({key} = [...]) first")
            table[name] = set_item(key, table[name], index, value)
        return scenario_from_dict(data, base_dir=self.base_dir, source=self.source)


def _spec_dict(spec: Any) -> dict[str, Any]:
    """Turn a spec dataclass into a plain dict without None values."""
    return {
        f.name: _plain(getattr(spec, f.name))
        for f in fields(spec)
        if getattr(spec, f.name) is not None
    }


def _plain(value: Any) -> Any:
    """Turn nested tuples into lists."""
    if isinstance(value, tuple):
        return [_plain(v) for v in value]
    return value


#: Scenario key kinds whose value is a list (of numbers or of lists), whose single numbers
#: a key path with indexes names (``"wheel.harmonics[0][1]"``).
LIST_KINDS = ("pair", "points", "reals", "ints", "terms")

_INDEXED = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*\.[A-Za-z_][A-Za-z0-9_]*)((?:\[\d+\])+)$")


def _index_text(index: tuple[int, ...]) -> str:
    return "".join(f"[{i}]" for i in index)


def split_indexed_key(key: str) -> tuple[str, tuple[int, ...]]:
    """Split ``"wheel.harmonics[0][1]"`` into the key and its indexes, ``("wheel.harmonics", (0, 1))``.

    Indexes count from 0. The key must be a list key of the table (:data:`LIST_KINDS`).

    Parameters
    ----------
    key : str
        A dotted key path followed by one or more ``[i]``.

    Returns
    -------
    tuple
        The dotted key and the indexes.

    Raises
    ------
    ScenarioError
        A malformed path, an unknown key, or a key whose value is not a list.
    """
    m = _INDEXED.match(key)
    if m is None:
        raise ScenarioError(f"{key} is not a key path with indexes; write e.g."
                            " \"wheel.harmonics[0][1]\" (indexes count from 0)")
    base, index = m.group(1), tuple(int(i) for i in re.findall(r"\d+", m.group(2)))
    row = KEY.get(base)
    if row is None:
        raise ScenarioError(f"{key}: unknown scenario key {base}; docs/scenario-keys.md lists them")
    if row.kind not in LIST_KINDS:
        raise ScenarioError(f"{key}: {base} is not a list key (it holds one {row.kind}); name it"
                            " without an index")
    return base, index


def item_at(key: str, value: Any, index: tuple[int, ...]) -> Any:
    """The item of a list key's ``value`` at ``index`` (one line naming a bad index).

    Parameters
    ----------
    key : str
        The dotted key, for the message.
    value : object
        The key's value (nested lists or tuples).
    index : tuple of int
        Indexes from 0, outermost first.

    Returns
    -------
    object
        The item.
    """
    node = value
    for depth, i in enumerate(index):
        if not isinstance(node, (list, tuple)):
            raise ScenarioError(f"{key}{_index_text(index)}: {key}{_index_text(index[:depth])} is a"
                                f" number, not a list; use fewer indexes")
        if i >= len(node):
            raise ScenarioError(f"{key}{_index_text(index)}: index {i} is outside"
                                f" {key}{_index_text(index[:depth])}, which has {len(node)} items"
                                f" (0 to {len(node) - 1})")
        node = node[i]
    return node


def set_item(key: str, value: Any, index: tuple[int, ...], item: Any) -> list:
    """A copy of a list key's ``value`` (nested lists) with the item at ``index`` replaced.

    Parameters
    ----------
    key : str
        The dotted key, for the message.
    value : list or tuple
        The key's value.
    index : tuple of int
        Indexes from 0, outermost first (at least one).
    item : object
        The new item.

    Returns
    -------
    list
        The new value, as lists.
    """
    item_at(key, value, index)  # refuses a bad index in one line

    def lists(v: Any) -> Any:
        return [lists(x) for x in v] if isinstance(v, (list, tuple)) else v

    out = lists(value)
    node = out
    for i in index[:-1]:
        node = node[i]
    node[index[-1]] = item
    return out


def _split_key_path(key: Any) -> tuple[str, ...]:
    """Split and check a dotted key path for :meth:`Scenario.replace`."""
    if not isinstance(key, str):
        raise ScenarioError(
            f"key path must be a string such as \"surface.friction\", got {_show(key)} "
            f"({_type(key)})"
        )
    parts = tuple(key.split("."))
    if len(parts) > 2 or not all(parts):
        raise ScenarioError(
            f"{key} is not a scenario key path; use \"section.key\" such as "
            f"\"surface.friction\", or a top-level key such as \"name\""
        )
    if parts[0] not in _TOP_KEYS:
        raise _unknown("", parts[0], _TOP_KEYS)
    if len(parts) == 2 and parts[0] not in _SECTIONS:
        raise ScenarioError(
            f"{key} is not a scenario key path: {parts[0]} is a top-level key, not a section; "
            f"use \"{parts[0]}\""
        )
    return parts


# ----------------------------------------------------------------------------
# Loading
# ----------------------------------------------------------------------------


def scenario_keys() -> frozenset[str]:
    """Every dotted key a scenario may hold (``"wheel.sides"``, ``"surface.friction"``, ...).

    Returns
    -------
    frozenset of str
        Top-level keys and ``section.key`` paths for all shapes and sections.
    """
    return frozenset({"name", "description"} | set(KEY))


def load_scenario(path: str | Path) -> Scenario:
    """Read and validate a TOML scenario file.

    Parameters
    ----------
    path : str or path-like
        The ``.toml`` file. Relative ``file`` keys inside it are resolved
        against the folder that holds it.

    Returns
    -------
    Scenario
        The validated scenario; its name defaults to the file stem.

    Raises
    ------
    ScenarioError
        If the file is missing, unreadable, not valid TOML, or any key is
        missing, unknown or out of range.
    """
    p = Path(path)
    if not p.exists():
        raise ScenarioError(f"scenario file not found: {p}")
    if p.is_dir():
        raise ScenarioError(f"scenario path is a folder, not a file: {p}")
    try:
        size = p.stat().st_size
        if size > MAX_FILE_BYTES:
            raise ScenarioError(f"{p}: scenario file of {size} bytes is larger than the limit of"
                                f" {MAX_FILE_BYTES} bytes; give long point lists in a points file")
        with p.open("rb") as fh:
            data = tomllib.load(fh)
    except RecursionError:
        raise ScenarioError(f"{p}: tables or lists nested too deep to read; a scenario nests at"
                            f" most {MAX_NESTING} deep") from None
    except tomllib.TOMLDecodeError as exc:
        raise ScenarioError(f"{p}: TOML syntax error: {_one_line(str(exc))}") from exc
    except UnicodeDecodeError as exc:
        raise ScenarioError(
            f"{p}: not UTF-8 text ({exc.reason} at byte {exc.start}); save the file as UTF-8"
        ) from exc
    except OSError as exc:
        raise ScenarioError(f"{p}: cannot read scenario file ({exc.strerror})") from exc
    resolved = p.resolve()
    return scenario_from_dict(data, base_dir=resolved.parent, source=str(resolved))


def scenario_from_dict(
    data: Mapping[str, Any],
    base_dir: str | Path | None = None,
    source: str = "<dict>",
) -> Scenario:
    """Validate scenario data given as nested dicts (as parsed from TOML).

    Parameters
    ----------
    data : mapping
        Top-level keys ``name``, ``description`` and the sections
        ``wheel`` or ``track``, ``vehicle``, ``drive``, ``surface``, ``run``.
        None values count as not given. Ints are accepted for floats, lists,
        tuples and arrays for point lists.
    base_dir : str or path-like, optional
        Folder against which relative ``file`` keys are resolved; default:
        the current working directory.
    source : str, optional
        Label of where the data came from. When it is a path, its stem is
        the default name.

    Returns
    -------
    Scenario
        The validated scenario.

    Raises
    ------
    ScenarioError
        If any key is missing, unknown, of the wrong type or out of range.
    """
    base = Path(base_dir if base_dir is not None else ".").resolve()
    if not isinstance(data, Mapping):
        raise ScenarioError(
            f"{source}: a scenario must be a table of keys, got {_show(data)} ({_type(data)})"
        )
    check_nesting(data, source)
    data = _drop_none(data)
    for key in data:
        if key not in _TOP_KEYS:
            raise _unknown("", str(key), _TOP_KEYS)

    default_name = "unnamed" if source.startswith("<") else Path(source).stem
    name = _check_text("name", _as_str("name", data.get("name", default_name), nonempty=True),
                       MAX_NAME_CHARS, allow="")
    description = _check_text(
        "description", _as_str("description", data.get("description", ""), nonempty=False),
        MAX_DESCRIPTION_CHARS, allow="\n\t")

    has_wheel, has_track = "wheel" in data, "track" in data
    given_pair = [s for s in ("hub", "ratio") if s in data]  # the given side of a hub pair
    if len(given_pair) > 1:
        raise ScenarioError("give [hub] or [ratio], not both: [hub] is a given hub (the wheel is"
                            " solved), [ratio] a required speed ratio (both curves are solved)")
    if given_pair:
        return _hub_given_scenario(data, given_pair[0], base, source, name, description)
    material_only = (
        has_wheel and has_track and isinstance(data["wheel"], Mapping)
        and "shape" not in data["wheel"]
    )
    build_only = (
        has_wheel and has_track and isinstance(data["track"], Mapping)
        and "shape" not in data["track"] and not material_only
    )
    if has_wheel and has_track and not (material_only or build_only):
        raise ScenarioError(
            "give either [wheel] or [track], not both (the solver derives the other);"
            " beside [track], [wheel] may only hold material keys such as thickness_m, and"
            " beside [wheel], [track] only as-built errors such as height_error_m"
        )
    if not has_wheel and not has_track:
        raise ScenarioError("scenario has neither [wheel] nor [track]; add one")

    path = _parse_path(data.get("path", {}))
    if path.is_hub and not has_wheel:
        raise ScenarioError(
            "path.kind = \"hub\" needs a [wheel] (the hub is solved for it), a [hub] or a"
            " [ratio]; a [track] belongs to a straight path: remove [path] or give the wheel"
        )
    if path.is_hub and path.side == "inside" and path.centre_distance_m is None and path.ratio is None:
        raise ScenarioError("path.side = \"inside\" needs path.ratio (> 1) or path.centre_distance_m")
    if path.is_hub and has_track:
        raise ScenarioError("path.kind = \"hub\": the hub replaces the track; remove [track]")
    wheel: WheelSpec | None
    track: TrackSpec | None
    if material_only:
        wheel = _parse_wheel_material(data["wheel"])
    else:
        wheel = _parse_wheel(data["wheel"], base) if has_wheel else None
    if build_only:
        track = _parse_track_build(data["track"])
    else:
        track = _parse_track(data["track"], base) if has_track else None
    return Scenario(
        name=name,
        description=description,
        wheel=wheel,
        track=track,
        path=path,
        **_shared_sections(data),
        source=source,
        base_dir=str(base),
    )


def _hub_given_scenario(data: Mapping[str, Any], given: str, base: Path, source: str, name: str,
                        description: str) -> Scenario:
    """A hub scenario whose given side is ``[hub]`` (the wheel solved) or ``[ratio]`` (both).

    ``[wheel]`` may then hold its material only (the hub's too, for the simulation); a wheel
    shape, a ``[track]`` or a straight path is refused with one line.
    """
    other = "the wheel is solved for the hub" if given == "hub" else "both pitch curves are solved"
    if "track" in data:
        raise ScenarioError(f"[{given}] belongs to a hub path ({other}); remove [track]")
    path = _parse_path(data.get("path", {}))
    if not path.is_hub:
        raise ScenarioError(f"[{given}] needs path.kind = \"hub\" ({other}); add [path] with"
                            " kind = \"hub\"")
    raw_wheel = data.get("wheel", {})
    if isinstance(raw_wheel, Mapping) and "shape" in raw_wheel:
        raise ScenarioError(
            f"give the wheel's shape or [{given}], not both ({other}); remove wheel.shape and its"
            f" size keys, [wheel] may then hold only {', '.join(_WHEEL_MATERIAL)}"
        )
    wheel = _parse_wheel_material(raw_wheel, beside=f"[{given}]") if "wheel" in data else None
    hub: HubSpec | None = None
    ratio: RatioSpec | None = None
    if given == "hub":
        hub = _parse_hub(data["hub"], base)
        if hub.shape == "circle":
            if path.side == "inside" and path.centre_distance_m is None and path.ratio is None:
                raise ScenarioError("path.side = \"inside\" with a circle hub needs path.ratio"
                                    " (> 1) or path.centre_distance_m to size the wheel")
        else:
            for k in ("ratio", "centre_distance_m"):
                if getattr(path, k) is not None:
                    raise ScenarioError(
                        f"path.{k} cannot be given with a [hub] of shape \"{hub.shape}\": the"
                        " hub and hub.lobes set the centre distance and the ratio; remove"
                        f" path.{k}")
    else:
        ratio = _parse_ratio(data["ratio"])
        if path.ratio is not None:
            raise ScenarioError("path.ratio cannot be given with [ratio] (the required speed ratio"
                                " sets the turns); give path.centre_distance_m instead")
        if path.centre_distance_m is None:
            raise ScenarioError("[ratio] needs path.centre_distance_m (the distance between the"
                                " gear centres); add e.g. centre_distance_m = 0.1 to [path]")
    return Scenario(
        name=name,
        description=description,
        wheel=wheel,
        track=None,
        path=path,
        **_shared_sections(data),
        hub=hub,
        ratio=ratio,
        source=source,
        base_dir=str(base),
    )


# ----------------------------------------------------------------------------
# Sections
# ----------------------------------------------------------------------------


def _shared_sections(data: Mapping[str, Any]) -> dict[str, Any]:
    """The sections every scenario reads alike, whichever side of the pair it gives."""
    return {
        "vehicle": _parse_vehicle(data.get("vehicle", {})),
        "drive": _parse_drive(data.get("drive", {})),
        "surface": _parse_surface(data.get("surface", {})),
        "run": _parse_run(data.get("run", {})),
        "duty": _parse_duty(data.get("duty", {})),
        "motor": _parse_motor(data.get("motor", {})),
        "export": _parse_export(data.get("export", {})),
    }


def _parse_outline(t: _Table, base: Path) -> dict[str, Any]:
    """Read an outline's shape and shape keys (``[wheel]`` or ``[hub]``, same keys and checks).

    Returns the spec values of the shape keys and ``axle_m``; the caller reads the rest.
    """
    sec = t.path
    shape_keys = _HUB_SHAPE_KEYS if sec == "hub" else _WHEEL_SHAPE_KEYS
    common = _HUB_COMMON if sec == "hub" else _WHEEL_COMMON
    if not t.has("shape"):
        raise ScenarioError(f"{sec}.shape is required; use one of {', '.join(WHEEL_SHAPES)}")
    shape = t.get("shape", hint=_polygon_name_hint)
    own = shape_keys[shape]
    allowed = set(common) | set(own)
    if shape in _AXLE_AT_ORIGIN:
        allowed.discard("axle_m")
    every = set(common).union(*shape_keys.values())
    for key in t.keys():
        if key in allowed:
            continue
        if key in every:
            if key == "axle_m":
                centre = "the axle" if sec == "wheel" else "the hub's centre"
                if shape == "polar":
                    fix = f"the polar radius is measured from {centre}; shift the formula instead"
                else:
                    fix = (f"the harmonic radius is measured from {centre}; a k = 1 term shifts"
                           " the rim instead")
            elif key == "fit_track_to_corners":
                fix = "it applies to polygon wheels only; remove it"
            else:
                fix = ("use one of "
                       + ", ".join(k for k in own if k not in ("sides", "fit_track_to_corners")))
            raise ScenarioError(f"{sec}.{key} is not used by shape \"{shape}\"; {fix}")
        raise _unknown(sec, key, sorted(allowed), sorted(every))

    values: dict[str, Any] = {"shape": shape}
    if shape == "polygon":
        sizes = [k for k in _POLYGON_SIZES if t.has(k)]
        if len(sizes) != 1:
            raise ScenarioError(
                f"{sec}: give exactly one of {', '.join(_POLYGON_SIZES)}" + _got_keys(sizes)
            )
        if sizes == ["vertices_m"]:
            vertices = t.points("vertices_m")
            _check_area(f"{sec}.vertices_m", vertices)
            values["vertices_m"] = vertices
            sides = t.get("sides")
            if sides is not None and sides != len(vertices):
                raise ScenarioError(
                    f"{sec}.sides must equal the {len(vertices)} points of vertices_m, "
                    f"got {sides}; remove sides"
                )
            values["sides"] = sides
        else:
            size = sizes[0]
            values["sides"] = t.get(
                "sides", required=f"for shape \"polygon\" with {size}; add e.g. sides = 6"
            )
            values[size] = t.get(size)
    elif shape == "ellipse":
        values["semi_axes_m"] = t.get(
            "semi_axes_m",
            required="for shape \"ellipse\"; add semi_axes_m = [a, b] (a along x)",
        )
    elif shape == "circle":
        values["radius_m"] = t.get(
            "radius_m", required="for shape \"circle\"; add e.g. radius_m = 0.1"
        )
    elif shape == "polar":
        values["radius_formula"] = t.get(
            "radius_formula",
            required="for shape \"polar\"; add e.g. radius_formula = \"0.1 + 0.01*cos(3*phi)\"",
        )
    elif shape == "harmonic":
        values["mean_radius_m"] = t.get(
            "mean_radius_m", required="for shape \"harmonic\"; add e.g. mean_radius_m = 0.1")
        values["harmonics"] = _terms(t, "harmonics") if t.has("harmonics") else ()
    else:  # outline
        _point_source(t, "outline", values, base)
        if values["points_m"] is not None:
            _check_area(f"{sec}.points_m", values["points_m"])
        drawing = _drawing_keys(t, values)
        values["corner_angle_deg"] = t.get("corner_angle_deg")
        values["corners"] = _corners(t)

    if shape not in _AXLE_AT_ORIGIN:
        values["axle_m"] = t.get("axle_m")
        if shape == "outline" and drawing and not t.has("axle_m"):
            values["axle_m"] = None  # the smallest circle inside the drawn outline
    return values


def _parse_wheel(raw: Any, base: Path) -> WheelSpec:
    """Validate the ``[wheel]`` section."""
    t = _Table("wheel", raw)
    values = _parse_outline(t, base)
    shape = values["shape"]
    values.update({name: t.get(name) for name in _WHEEL_MATERIAL})
    if shape == "polygon" and t.get("fit_track_to_corners"):
        if values["corner_radius_m"] <= 0:
            raise ScenarioError(
                "wheel.fit_track_to_corners = true needs the corners' radius: add"
                " wheel.corner_radius_m (e.g. 0.005)"
            )
        values["fit_track_to_corners"] = True  # None (left out of to_dict) when false
    return WheelSpec(**values)


_WHEEL_MATERIAL = ("thickness_m", "density_kg_m3", "mass_kg", "inertia_kg_m2", "corner_radius_m",
                   "scale", "axle_error_m")


def _parse_wheel_material(raw: Any, beside: str = "[track]") -> WheelSpec:
    """Validate a shape-less ``[wheel]`` beside ``[track]`` (or ``[hub]``, ``[ratio]``)."""
    t = _Table("wheel", raw)
    for key in t.keys():
        if key not in _WHEEL_MATERIAL:
            raise ScenarioError(
                f"wheel.{key} cannot be given beside {beside} (the solver derives the wheel's"
                f" shape); only {', '.join(_WHEEL_MATERIAL)} are allowed"
            )
    return WheelSpec(shape=None, axle_m=(0.0, 0.0), **{name: t.get(name) for name in _WHEEL_MATERIAL})


def _parse_hub(raw: Any, base: Path) -> HubSpec:
    """Validate the ``[hub]`` section: an outline read as a wheel's is, and ``lobes``."""
    t = _Table("hub", raw)
    values = _parse_outline(t, base)
    if values["shape"] == "circle":
        if t.has("lobes"):
            raise ScenarioError("hub.lobes does not apply to a circle hub (any wheel size rolls on"
                                " it); remove it and size the wheel by path.ratio or"
                                " path.centre_distance_m")
        values["lobes"] = None
    else:
        values["lobes"] = t.get("lobes")
    return HubSpec(**values)


def _parse_ratio(raw: Any) -> RatioSpec:
    """Validate the ``[ratio]`` section: exactly one of ``formula`` and ``points_rad``."""
    t = _Table("ratio", raw)
    t.only(("formula", "points_rad"))
    given = [k for k in ("formula", "points_rad") if t.has(k)]
    if len(given) != 1:
        raise ScenarioError("ratio: give exactly one of formula, points_rad" + _got_keys(given))
    if t.has("formula"):
        return RatioSpec(formula=t.get("formula"))
    rows = t.points("points_rad")
    if len(rows) < 4:
        raise ScenarioError(f"ratio.points_rad must list at least 4 [theta_rad, ratio] rows, got"
                            f" {len(rows)}")
    return RatioSpec(points_rad=rows)


def _parse_track(raw: Any, base: Path) -> TrackSpec:
    """Validate the ``[track]`` section."""
    t = _Table("track", raw)
    if not t.has("shape"):
        raise ScenarioError(f"track.shape is required; use one of {', '.join(TRACK_SHAPES)}")
    shape = t.get("shape")
    own = _TRACK_SHAPE_KEYS[shape]
    allowed = set(_TRACK_COMMON) | set(own)
    every = set(_TRACK_COMMON).union(*_TRACK_SHAPE_KEYS.values())
    for key in t.keys():
        if key in allowed:
            continue
        if key in every:
            raise ScenarioError(
                f"track.{key} is not used by shape \"{shape}\"; use one of {', '.join(own)}"
            )
        raise _unknown("track", key, sorted(allowed), sorted(every))

    values: dict[str, Any] = {"shape": shape}
    req = f"for shape \"{shape}\""
    if shape == "wave":
        values["amplitude_m"] = t.get("amplitude_m", required=req)
        values["wavelength_m"] = t.get("wavelength_m", required=req)
    elif shape == "sawtooth":
        values["rise_m"] = t.get("rise_m", required=req)
        values["run_m"] = t.get("run_m", required=req)
    elif shape == "formula":
        values["formula"] = t.get(
            "formula", required=f"{req}; add e.g. formula = \"0.02*cos(2*pi*x/0.3)\""
        )
        values["period_m"] = t.get("period_m", required=req)
    else:  # points
        _point_source(t, "points", values, base)
        _drawing_keys(t, values)
        values["corner_angle_deg"] = t.get("corner_angle_deg")
        values["corners"] = _corners(t)
        points = values["points_m"]
        if points is not None:
            for i in range(1, len(points)):
                if not points[i][0] > points[i - 1][0]:
                    raise ScenarioError(
                        f"track.points_m[{i}] x must be greater than the previous point's "
                        f"x {_show(points[i - 1][0])}, got {_show(points[i][0])}; "
                        "list the points left to right"
                    )
        period = t.get("period_m")
        if points is not None and period is not None:
            span = points[-1][0] - points[0][0]
            if period < span:
                raise ScenarioError(
                    f"track.period_m must be >= the x span of points_m ({span:g}), "
                    f"got {_show(period)}"
                )
        values["period_m"] = period

    values.update(_track_build_values(t))
    if t.has("lobes") and t.has("depth_m"):
        raise ScenarioError("track: give at most one of lobes, depth_m (got lobes and depth_m)")
    if t.has("depth_m"):
        values["depth_m"] = t.get("depth_m")
        values["lobes"] = None
    else:
        values["lobes"] = t.get("lobes")
    return TrackSpec(**values)


def _track_build_values(t: _Table) -> dict[str, Any]:
    """As-built track errors (manufacturing tolerance), shared by shaped and shape-less tracks."""
    return {name: t.get(name) for name in _TRACK_BUILD}


def _parse_track_build(raw: Any) -> TrackSpec:
    """Validate a shape-less ``[track]`` beside ``[wheel]``: as-built errors only."""
    t = _Table("track", raw)
    for key in t.keys():
        if key not in _TRACK_BUILD:
            raise ScenarioError(
                f"track.{key} cannot be given beside [wheel] (the solver derives the track's"
                f" shape); only {', '.join(_TRACK_BUILD)} are allowed"
            )
    return TrackSpec(shape=None, lobes=None, **_track_build_values(t))


def _drawing_keys(t: _Table, values: dict[str, Any]) -> bool:
    """Read ``layer``, ``id`` and ``units`` (DXF or SVG files only); True for a drawing."""
    drawing = values["file"] is not None and Path(values["file"]).suffix.lower() in (".dxf", ".svg")
    for name in ("layer", "id", "units"):
        if t.has(name) and not drawing:
            raise ScenarioError(f"{t.key(name)} applies to a DXF or SVG file only; remove it")
        values[name] = t.get(name)
    if values["units"] is not None and values["units"] not in ("m", "cm", "mm", "in", "ft"):
        raise ScenarioError(f"{t.key('units')} must be one of m, cm, mm, in, ft,"
                            f" got {_show(values['units'])}")
    return drawing


def _terms(t: _Table, name: str) -> tuple[tuple[int, float, float], ...]:
    """A list of Fourier terms ``[k, a_k, b_k]``: k a whole number in its range, each k once."""
    path = t.key(name)
    items = _as_list(path, t.raw(name), "a list of [k, a_k, b_k] terms, e.g. [[3, 0.05, 0.0]]")
    out: list[tuple[int, float, float]] = []
    for i, item in enumerate(items):
        where = f"{path}[{i}]"
        row = _as_list(where, item, "a term [k, a_k, b_k] of three numbers")
        if len(row) != 3:
            raise ScenarioError(f"{where} must be [k, a_k, b_k] (three numbers), got {_show(item)}"
                                f" ({len(row)} values)")
        k = _as_int(f"{where}[0]", row[0])
        if not 1 <= k <= MAX_HARMONIC:
            raise ScenarioError(f"{where}[0] is the mode number k: a whole number from 1 to"
                                f" {MAX_HARMONIC}, got {k}")
        if any(k == o[0] for o in out):
            raise ScenarioError(f"{where}: mode k = {k} is listed twice; give each k once (add"
                                " the coefficients)")
        a = _as_float(f"{where}[1]", row[1])
        b = _as_float(f"{where}[2]", row[2])
        out.append((k, a, b))
    return tuple(out)


def _corners(t: _Table) -> str | tuple[int, ...] | None:
    """Read ``corners``: "all", "none" or a list of point indices (from 0)."""
    if not t.has("corners"):
        return None
    v = t.raw("corners")
    if isinstance(v, str):
        if v in ("all", "none"):
            return v
        raise ScenarioError(f'{t.key("corners")} must be "all", "none" or a list of point indices,'
                            f" got {_show(v)}")
    items = _as_list(t.key("corners"), v, "a list of point indices")
    out = []
    for i, item in enumerate(items):
        k = _as_int(f"{t.key('corners')}[{i}]", item)
        if k < 0:
            raise ScenarioError(f"{t.key('corners')}[{i}] must be a point index >= 0, got {k}")
        out.append(k)
    return tuple(out)


def _point_source(t: _Table, shape: str, values: dict[str, Any], base: Path) -> None:
    """Read exactly one of ``points_m`` (inline) and ``file`` (CSV path)."""
    given = [k for k in ("points_m", "file") if t.has(k)]
    if len(given) != 1:
        raise ScenarioError(f"{t.path}: give exactly one of points_m, file" + _got_keys(given))
    values["points_m"] = t.points("points_m") if t.has("points_m") else None
    values["file"] = t.file("file", base) if t.has("file") else None


def _parse_vehicle(raw: Any) -> VehicleSpec:
    """Validate the ``[vehicle]`` section."""
    t = _Table("vehicle", raw)
    t.only([f.name for f in fields(VehicleSpec)])
    axles = t.get("axles")
    wheelbase = t.get("wheelbase_m")
    periods = t.get("wheelbase_periods")
    if axles > 1 and wheelbase <= 0 and periods is None:
        raise ScenarioError(
            f"vehicle.wheelbase_m must be > 0 when axles = {axles}, got {_show(wheelbase)}; "
            "give the distance between neighbouring axles (or vehicle.wheelbase_periods)"
        )
    driven = None
    if t.has("driven_axles"):
        items = _as_list("vehicle.driven_axles", t.raw("driven_axles"), "a list of axle indices")
        if not items:
            raise ScenarioError(
                "vehicle.driven_axles must list at least one axle, got []; "
                "remove it to drive all axles"
            )
        seen: list[int] = []
        for i, item in enumerate(items):
            path = f"vehicle.driven_axles[{i}]"
            index = _as_int(path, item)
            if index < 0 or index >= axles:
                raise ScenarioError(
                    f"{path} must be an axle index 0..{axles - 1} (axles = {axles}), got {index}"
                )
            if index in seen:
                raise ScenarioError(
                    f"vehicle.driven_axles lists axle {index} twice; list each axle once"
                )
            seen.append(index)
        driven = tuple(seen)
    phases = None
    if t.has("phase_offsets_rad"):
        items = _as_list("vehicle.phase_offsets_rad", t.raw("phase_offsets_rad"),
                         "a list of angles in rad, one per axle")
        if len(items) != axles:
            raise ScenarioError(
                f"vehicle.phase_offsets_rad must give one angle per axle ({axles}), got {len(items)}"
            )
        phases = tuple(_as_float(f"vehicle.phase_offsets_rad[{i}]", v) for i, v in enumerate(items))
        for i, v in enumerate(phases):
            _check_range(f"vehicle.phase_offsets_rad[{i}]", v,
                         **KEY["vehicle.phase_offsets_rad"].bounds)
    return VehicleSpec(
        body_mass_kg=t.get("body_mass_kg"),
        body_inertia_kg_m2=t.get("body_inertia_kg_m2"),
        axles=axles,
        wheelbase_m=wheelbase,
        coupled=t.get("coupled"),
        seat_m=t.get("seat_m"),
        driven_axles=driven,
        phase_offsets_rad=phases,
        wheelbase_periods=periods,
        wheelbase_tolerance_m=t.get("wheelbase_tolerance_m"),
    )


def _parse_drive(raw: Any) -> DriveSpec:
    """Validate the ``[drive]`` section."""
    t = _Table("drive", raw)
    t.only([f.name for f in fields(DriveSpec)])
    mode = t.get("mode")
    need_torque = "when drive.mode = \"torque\"; add e.g. torque_Nm = 2.0"
    need_shaft = "when drive.mode = \"shaft_speed\"; add e.g. shaft_speed_rad_s = 3.0"
    torque = t.get("torque_Nm", required=need_torque if mode == "torque" else None)
    shaft = t.get("shaft_speed_rad_s", required=need_shaft if mode == "shaft_speed" else None)
    return DriveSpec(
        mode=mode,
        speed_m_s=t.get("speed_m_s"),
        accel_m_s2=t.get("accel_m_s2"),
        max_torque_Nm=t.get("max_torque_Nm"),
        torque_Nm=torque,
        shaft_speed_rad_s=shaft,
    )


def _parse_surface(raw: Any) -> SurfaceSpec:
    """Validate the ``[surface]`` section."""
    t = _Table("surface", raw)
    t.only([f.name for f in fields(SurfaceSpec)])
    return SurfaceSpec(
        friction=t.get("friction"),
        rolling_resistance=t.get("rolling_resistance"),
    )


def _parse_duty(raw: Any) -> DutySpec:
    """Validate the ``[duty]`` section."""
    t = _Table("duty", raw)
    t.only([f.name for f in fields(DutySpec)])
    return DutySpec(
        cruise_s=t.get("cruise_s"),
        brake_m_s2=t.get("brake_m_s2"),
        grade_rad=t.get("grade_rad"),
        rest_s=t.get("rest_s"),
    )


def _parse_motor(raw: Any) -> MotorSpec:
    """Validate the ``[motor]`` section."""
    t = _Table("motor", raw)
    t.only([f.name for f in fields(MotorSpec)])
    ratios: tuple[float, ...] = ()
    if t.has("gear_ratios"):
        items = _as_list(t.key("gear_ratios"), t.raw("gear_ratios"), "a list of gear ratios")
        vals = []
        for i, v in enumerate(items):
            x = _as_float(f"motor.gear_ratios[{i}]", v)
            _check_range(f"motor.gear_ratios[{i}]", x, **KEY["motor.gear_ratios"].bounds)
            vals.append(x)
        ratios = tuple(vals)
    return MotorSpec(
        gear_ratios=ratios,
        rated_torque_Nm=t.get("rated_torque_Nm"),
        peak_torque_Nm=t.get("peak_torque_Nm"),
        rated_speed_rad_s=t.get("rated_speed_rad_s"),
        efficiency=t.get("efficiency"),
        safety_factor=t.get("safety_factor"),
        inertia_kg_m2=t.get("inertia_kg_m2"),
    )


def _parse_path(raw: Any) -> PathSpec:
    """Validate the ``[path]`` section."""
    t = _Table("path", raw)
    t.only([f.name for f in fields(PathSpec)])
    kind = t.get("kind")
    spec = PathSpec(kind=kind, side=t.get("side"), centre_distance_m=t.get("centre_distance_m"),
                    ratio=t.get("ratio"), load_torque_Nm=t.get("load_torque_Nm"),
                    preload_N=t.get("preload_N"), view=t.get("view"),
                    gravity_in_plane=t.get("gravity_in_plane"))
    if kind == "line":
        extra = [k for k in ("side", "centre_distance_m", "ratio", "load_torque_Nm", "preload_N",
                             "view", "gravity_in_plane") if t.has(k)]
        if extra:
            raise ScenarioError(
                f"path.{extra[0]} belongs to a hub path; set path.kind = \"hub\" or remove it"
            )
    if spec.centre_distance_m is not None and spec.ratio is not None:
        raise ScenarioError("give path.centre_distance_m or path.ratio, not both")
    if kind == "hub" and spec.side == "inside" and spec.view == "gears":
        raise ScenarioError("path.view = \"gears\" needs path.side = \"outside\" (a ring is simulated"
                            " as a carousel); use path.view = \"carousel\" or remove it")
    if kind == "hub" and spec.gravity_in_plane and spec.sim_view == "gears":
        raise ScenarioError("path.gravity_in_plane belongs to the carousel view; set path.view ="
                            " \"carousel\" or remove it")
    return spec


def _parse_export(raw: Any) -> ExportSpec:
    """Validate the ``[export]`` section."""
    t = _Table("export", raw)
    t.only([f.name for f in fields(ExportSpec)])
    if t.has("track_length_m") and t.has("revolutions"):
        raise ScenarioError("export: give at most one of track_length_m, revolutions")
    hole = t.get("axle_hole_m")
    flat = t.get("axle_flat_m")
    if flat is not None and not 0.5 * hole < flat < hole:
        raise ScenarioError(
            f"export.axle_flat_m must lie between axle_hole_m / 2 ({_show(0.5 * hole)}) and"
            f" axle_hole_m ({_show(hole)}), got {_show(flat)}; it is the width across the flat"
        )
    return ExportSpec(**{f.name: t.get(f.name) for f in fields(ExportSpec)})


def _parse_run(raw: Any) -> RunSpec:
    """Validate the ``[run]`` section."""
    t = _Table("run", raw)
    t.only([f.name for f in fields(RunSpec)])
    duration = t.get("duration_s")
    settle = t.get("settle_s")
    if settle >= duration:
        raise ScenarioError(
            f"run.settle_s must be < run.duration_s ({_show(duration)}), got {_show(settle)}; "
            "shorten settle_s or lengthen duration_s"
        )
    return RunSpec(
        duration_s=duration,
        timestep_s=t.get("timestep_s"),
        settle_s=settle,
        iterations=t.get("iterations"),
    )


# ----------------------------------------------------------------------------
# Typed access with key-path messages
# ----------------------------------------------------------------------------


class _Table:
    """One section's raw values, read with type and range checks."""

    def __init__(self, path: str, raw: Any) -> None:
        if not isinstance(raw, Mapping):
            raise ScenarioError(
                f"{path} must be a table (a [{path}] section), got {_show(raw)} ({_type(raw)})"
            )
        self.path = path
        self.data = _drop_none(raw)

    def key(self, name: str) -> str:
        return f"{self.path}.{name}"

    def keys(self) -> list[str]:
        return [str(k) for k in self.data]

    def has(self, name: str) -> bool:
        return name in self.data

    def raw(self, name: str) -> Any:
        return self.data[name]

    def only(self, allowed: Iterable[str]) -> None:
        allowed = list(allowed)
        for key in self.keys():
            if key not in allowed:
                raise _unknown(self.path, key, allowed)

    def _absent(self, name: str, default: Any, required: str | None) -> Any:
        if required is not None or default is _MISSING:
            why = f" {required}" if required else ""
            raise ScenarioError(f"{self.key(name)} is required{why}")
        return default

    def get(self, name: str, *, required: str | None = None, hint: Any = None) -> Any:
        """Read a key with the type, default and bounds of its row in the key table."""
        k = KEY[self.key(name)]
        default = _MISSING if k.default is _schema.REQUIRED else k.default
        if k.kind == "real":
            return self.real(name, default, required=required, **k.bounds)
        if k.kind == "int":
            return self.integer(name, default, required=required, **k.bounds)
        if k.kind == "pair":
            return self.pair(name, default, required=required, **k.bounds)
        if k.kind == "str":
            return self.string(name, default, required=required)
        if k.kind == "bool":
            return self.boolean(name, default)
        if k.kind == "choice":
            return self.choice(name, k.choices, default, hint=hint)
        raise ValueError(f"{self.key(name)}: {k.kind} keys are read by their section's parser")

    def real(
        self, name: str, default: Any = _MISSING, *, required: str | None = None, **bounds: float
    ) -> Any:
        if not self.has(name):
            return self._absent(name, default, required)
        value = _as_float(self.key(name), self.data[name])
        _check_range(self.key(name), value, **bounds)
        return value

    def integer(
        self, name: str, default: Any = _MISSING, *, required: str | None = None, **bounds: float
    ) -> Any:
        if not self.has(name):
            return self._absent(name, default, required)
        value = _as_int(self.key(name), self.data[name])
        _check_range(self.key(name), value, **bounds)
        return value

    def boolean(self, name: str, default: Any = _MISSING) -> Any:
        if not self.has(name):
            return self._absent(name, default, None)
        value = self.data[name]
        if not isinstance(value, bool):
            raise ScenarioError(
                f"{self.key(name)} must be true or false, got {_show(value)} ({_type(value)})"
            )
        return value

    def string(self, name: str, default: Any = _MISSING, *, required: str | None = None) -> Any:
        if not self.has(name):
            return self._absent(name, default, required)
        return _as_str(self.key(name), self.data[name], nonempty=True)

    def choice(
        self, name: str, options: tuple[str, ...], default: Any = _MISSING, hint: Any = None
    ) -> Any:
        if not self.has(name):
            return self._absent(name, default, None)
        value = self.data[name]
        if isinstance(value, str) and value in options:
            return value
        message = f"{self.key(name)} must be one of {', '.join(options)}, got {_show(value)}"
        if not isinstance(value, str):
            message += f" ({_type(value)})"
        else:
            extra = hint(value) if hint else None
            import difflib  # only on the error path

            close = difflib.get_close_matches(value.lower(), options, n=1, cutoff=0.6)
            if extra:
                message += f"; {extra}"
            elif close:
                message += f"; did you mean \"{close[0]}\"?"
        raise ScenarioError(message)

    def pair(
        self, name: str, default: Any = _MISSING, *, required: str | None = None, **bounds: float
    ) -> Any:
        if not self.has(name):
            return self._absent(name, default, required)
        return _as_pair(self.key(name), self.data[name], **bounds)

    def points(self, name: str) -> tuple[Point, ...]:
        path = self.key(name)
        items = _as_list(path, self.data[name], "a list of [x, y] points")
        if len(items) < 3:
            raise ScenarioError(
                f"{path} must list at least 3 [x, y] points, got {len(items)}"
            )
        bounds = KEY[path].bounds
        return tuple(_as_pair(f"{path}[{i}]", item, **bounds) for i, item in enumerate(items))

    def file(self, name: str, base: Path) -> str:
        path = self.key(name)
        text = _as_str(path, self.data[name], nonempty=True)
        target = (base / Path(text).expanduser()).resolve()
        if not target.is_file():
            raise ScenarioError(
                f"{path} {_show(text)} not found (looked for {target}; relative paths are "
                f"read from the scenario's folder {base})"
            )
        return str(target)


def check_nesting(data: Any, source: str = "<dict>", limit: int | None = None) -> None:
    """Refuse data nested deeper than :data:`~ridesim.scenario.schema.MAX_NESTING`.

    Walks the tables and lists without recursion, so that any depth gets one line.

    Parameters
    ----------
    data : object
        Parsed file contents (tables, lists and values).
    source : str, optional
        Label of the file for the message.
    limit : int, optional
        Deepest nesting allowed; default :data:`~ridesim.scenario.schema.MAX_NESTING`.

    Raises
    ------
    ScenarioError
        When a table or list lies deeper than the limit.
    """
    limit = MAX_NESTING if limit is None else limit
    stack: list[tuple[Any, int, str]] = [(data, 0, "")]
    while stack:
        value, depth, where = stack.pop()
        if isinstance(value, Mapping):
            children = [(v, f"{where}.{k}" if where else str(k)) for k, v in value.items()]
        elif isinstance(value, (list, tuple)):
            children = [(v, f"{where}[{i}]") for i, v in enumerate(value)]
        else:
            continue
        if depth >= limit:
            where = where if len(where) <= 60 else where[:57] + "..."
            raise ScenarioError(f"{where or source}: tables or lists nested deeper than the limit"
                                f" of {limit}; a scenario needs at most 4 (section, list, point)")
        stack.extend((v, depth + 1, w) for v, w in children)


def _check_text(path: str, text: str, limit: int, allow: str) -> str:
    """Refuse text longer than ``limit`` characters or holding control characters."""
    if len(text) > limit:
        raise ScenarioError(f"{path} is {len(text)} characters long, more than the limit of"
                            f" {limit}; shorten it")
    for i, ch in enumerate(text):
        if (ord(ch) < 32 or 0x7f <= ord(ch) < 0xa0) and ch not in allow:
            raise ScenarioError(f"{path} holds the control character U+{ord(ch):04X} at"
                                f" position {i}; remove it")
    return text


def _drop_none(raw: Mapping[str, Any]) -> dict[str, Any]:
    """Copy a mapping without its None values (None means "not given")."""
    return {k: v for k, v in raw.items() if v is not None}


def _as_float(path: str, value: Any) -> float:
    """Check a finite real number (bools rejected, ints accepted)."""
    if not is_number(value):
        raise ScenarioError(f"{path} must be a number, got {_show(value)} ({_type(value)})")
    number = float(value)
    if not math.isfinite(number):
        raise ScenarioError(f"{path} must be a finite number, got {_show(value)}")
    return number


def _as_int(path: str, value: Any) -> int:
    """Check an integer (bools and floats rejected)."""
    if not is_integer(value):
        raise ScenarioError(f"{path} must be an integer, got {_show(value)} ({_type(value)})")
    return int(value)


def _as_str(path: str, value: Any, *, nonempty: bool) -> str:
    """Check a string, optionally non-blank."""
    if not isinstance(value, str):
        raise ScenarioError(f"{path} must be a string, got {_show(value)} ({_type(value)})")
    if nonempty and not value.strip():
        raise ScenarioError(f"{path} must not be empty, got {_show(value)}")
    return value


def _as_list(path: str, value: Any, what: str) -> list[Any]:
    """Check a list-like value (list, tuple or array) and return it as a list."""
    if hasattr(value, "tolist") and not isinstance(value, (str, bytes)):
        value = value.tolist()
    if not isinstance(value, (list, tuple)):
        raise ScenarioError(f"{path} must be {what}, got {_show(value)} ({_type(value)})")
    k = KEY.get(path)
    if k is not None and k.max_len is not None and len(value) > k.max_len:
        raise ScenarioError(f"{path} lists {len(value)} items, more than the limit of"
                            f" {k.max_len}; give at most {k.max_len}")
    return list(value)


def _as_pair(path: str, value: Any, **bounds: float) -> Point:
    """Check a pair [x, y] of finite numbers, each within ``bounds``."""
    items = _as_list(path, value, "a pair [x, y] of numbers")
    if len(items) != 2:
        raise ScenarioError(
            f"{path} must be a pair [x, y] of numbers, got {_show(value)} "
            f"({len(items)} values)"
        )
    x = _as_float(f"{path}[0]", items[0])
    y = _as_float(f"{path}[1]", items[1])
    _check_range(f"{path}[0]", x, **bounds)
    _check_range(f"{path}[1]", y, **bounds)
    return (x, y)


def _check_range(
    path: str,
    value: float,
    *,
    gt: float | None = None,
    ge: float | None = None,
    lt: float | None = None,
    le: float | None = None,
) -> None:
    """Raise when ``value`` breaks one of the given bounds."""
    ok = (
        (gt is None or value > gt)
        and (ge is None or value >= ge)
        and (lt is None or value < lt)
        and (le is None or value <= le)
    )
    if ok:
        _check_magnitude(path, value)
        return
    parts = [
        f"{op} {bound:g}"
        for op, bound in ((">", gt), (">=", ge), ("<", lt), ("<=", le))
        if bound is not None
    ]
    raise ScenarioError(f"{path} must be {' and '.join(parts)}, got {_show(value)}")


def _check_magnitude(path: str, value: float) -> None:
    """Refuse a value beyond its key's magnitude limit, or positive but too small to compute with.

    The key is the path without its index suffix (``wheel.points_m[3][0]`` is
    ``wheel.points_m``); paths that are not keys of the table are not checked.
    """
    key = KEY.get(path.split("[")[0])
    if key is None:
        return
    unit = "" if key.unit in ("", "-") else f" {key.unit}"
    if key.most is not None and abs(value) > key.most:
        raise ScenarioError(f"{path} = {_show(value)}{unit} is beyond the limit of"
                            f" {key.most:g}{unit} in magnitude (no real build comes near it, and"
                            " the mathematics loses its meaning); check the value and its unit")
    floor = _schema.tiny_of(key)
    if floor is not None and 0.0 < abs(value) < floor:
        raise ScenarioError(f"{path} = {_show(value)}{unit} is too small to compute with (the"
                            f" smallest accepted is {floor:g}{unit}); check the value and its"
                            " unit")


def _check_area(path: str, points: tuple[Point, ...]) -> None:
    """Reject an outline whose points enclose no area (all on one line)."""
    area2 = 0.0
    n = len(points)
    for i in range(n):
        x0, y0 = points[i]
        x1, y1 = points[(i + 1) % n]
        area2 += x0 * y1 - x1 * y0
    scale = max(max(abs(x), abs(y)) for x, y in points)
    if abs(area2) <= 1e-12 * max(scale, 1e-300) ** 2:
        raise ScenarioError(
            f"{path} encloses no area (the points lie on one line), got {_show(_plain(points))}"
        )


def _polygon_name_hint(value: str) -> str | None:
    """Suggest the polygon spelling for names like "hexagon"."""
    sides = _POLYGON_NAMES.get(value.strip().lower())
    if sides is None:
        return None
    return f"for a {value.strip().lower()} use shape = \"polygon\" with sides = {sides}"


def _got_keys(keys: list[str]) -> str:
    """Describe which of a group of keys were given."""
    return f" (got {' and '.join(keys)})" if keys else " (got none)"


def _unknown(prefix: str, key: str, allowed: Iterable[str], fallback: Iterable[str] = ()) -> Any:
    """Build the error for an unknown key, with a did-you-mean hint."""
    allowed = list(allowed)
    full = f"{prefix}.{key}" if prefix else key
    match = _closest(key, allowed) or _closest(key, list(fallback))
    if match is None:
        return ScenarioError(f"unknown key {full}; allowed keys: {', '.join(sorted(allowed))}")
    hint = f"did you mean {match}?"
    if match.lower().startswith(key.lower() + "_"):
        hint += " (key names end in their SI unit)"
    return ScenarioError(f"unknown key {full}; {hint}")


def _closest(key: str, candidates: list[str]) -> str | None:
    """Closest candidate: a unit-suffixed completion, else difflib, else a key prefix."""
    import difflib  # only on the error path

    lowered = {c.lower(): c for c in candidates}
    low = key.lower()
    completions = [c for c in lowered if c.startswith(low + "_")]
    if completions:
        best = difflib.get_close_matches(low, completions, n=1, cutoff=0.0)
        return lowered[best[0]]
    close = difflib.get_close_matches(low, list(lowered), n=1, cutoff=0.6)
    if close:
        return lowered[close[0]]
    # "friction_coefficient" -> "friction": a known key followed by extra words
    stems = [c for c in lowered if low.startswith(c + "_")]
    return lowered[max(stems, key=len)] if stems else None


def _show(value: Any) -> str:
    """Show a value on one short line, in TOML-like spelling."""
    if isinstance(value, bool):
        text = "true" if value else "false"
    elif isinstance(value, str):
        text = json.dumps(value, ensure_ascii=False)
    elif isinstance(value, numbers.Integral):
        text = repr(int(value))
    elif isinstance(value, numbers.Real):
        text = repr(float(value))
    elif isinstance(value, Mapping):
        text = "a table {" + ", ".join(str(k) for k in value) + "}"
    else:
        text = repr(value)
    text = _one_line(text)
    return text if len(text) <= 80 else text[:77] + "..."


def _type(value: Any) -> str:
    """Name of a value's type for messages."""
    return type(value).__name__


def _one_line(text: str) -> str:
    """Collapse line breaks so that a message stays on one line."""
    lines = text.splitlines()
    return " ".join(line.strip() for line in lines) if len(lines) > 1 else text

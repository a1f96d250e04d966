"""The one table of scenario keys: type, default, bounds, plausible range, unit and meaning.

Every key of a scenario's sections is one :class:`Key` row of :data:`KEYS`. From this table
come the spec dataclasses' defaults and the loader's bound checks (``ridesim.scenario.load``),
the plausibility warnings, and the Markdown key reference (``docs/scenario-keys.md``,
written by ``python3 tools/scenario_keys.py``), so none of them can drift.

Two kinds of range:

- **bounds** (``gt``, ``ge``, ``lt``, ``le``): hard limits. A value outside them is an error
  (``wheel.apothem_m must be > 0, got -0.3``).
- **plausible** (``plausible`` with its ``source``): the range real builds of this kind
  have. A value outside it is accepted, but :func:`plausibility_warnings` says so in one line
  (a wheel of apothem 120 m, a friction coefficient of 70: most likely a unit slip). Each
  range names its source: a handbook table, or "common practice" for a fact of the trade
  with no single source ("[memory]" where a figure is recalled, not read).

Adding a key
------------
1. Add one ``Key(...)`` row below, in its section (name ending in its SI unit; the
   bounds, the plausible range and its source when one exists; a one-line doc).
2. Add the field to the section's spec in ``ridesim/scenario/load.py`` with its default
   taken from here: ``name: float = default_of("section.name")``.
3. Read it in the section's parser with ``t.get("name")`` (type, default and bounds come
   from the row).
4. Regenerate the reference: ``python3 tools/scenario_keys.py >
   docs/scenario-keys.md``. ``tests/test_schema.py`` fails until the spec, the table and
   the reference agree.

Examples
--------
>>> KEY["surface.friction"].default
0.8
>>> KEY["wheel.apothem_m"].bounds
{'gt': 0.0}
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Iterable
from dataclasses import replace
from typing import Any

from ridesim.records import record
from ridesim.validate import is_number

__all__ = [
    "WHEEL_SHAPES",
    "TRACK_SHAPES",
    "DRIVE_MODES",
    "PATH_KINDS",
    "HUB_SIDES",
    "MAX_TIMESTEP_S",
    "MIN_LENGTH_M",
    "MAX_LENGTH_M",
    "TINY",
    "tiny_of",
    "MAX_POINTS",
    "MAX_HARMONIC",
    "MAX_FILE_BYTES",
    "MAX_NESTING",
    "MAX_NAME_CHARS",
    "MAX_DESCRIPTION_CHARS",
    "REQUIRED",
    "Key",
    "KEYS",
    "KEY",
    "SECTIONS",
    "default_of",
    "section_keys",
    "plausibility_warnings",
    "value_warnings",
    "markdown_reference",
]

WHEEL_SHAPES = ("polygon", "ellipse", "circle", "polar", "harmonic", "outline")
"""Allowed values of ``wheel.shape``."""

TRACK_SHAPES = ("wave", "sawtooth", "formula", "points")
"""Allowed values of ``track.shape``."""

DRIVE_MODES = ("speed", "shaft_speed", "torque")
"""Allowed values of ``drive.mode``."""

MAX_TIMESTEP_S = 0.02
"""Largest accepted ``run.timestep_s`` in s."""

MIN_LENGTH_M = 1e-6
"""Smallest accepted size (a wheel, a track feature, a step) in m: 1 um, below any build."""

TINY = {"m": MIN_LENGTH_M, "kg m^2": 1e-15, "": 1e-9}
"""Smallest value a key that must be > 0 accepts, by unit (key ``""``: every other unit), in
SI units: smaller values underflow the mathematics (a speed of 5e-324 m/s squared is 0) and
are most likely a unit slip."""

MAX_LENGTH_M = 1000.0
"""Largest accepted length or coordinate in m: beyond it squares and integrals of lengths
lose their meaning long before they overflow (no wheel or track is a kilometre)."""

MAX_POINTS = 10000
"""Most points an outline or a track profile may list (inline or in a points file)."""

MAX_FILE_BYTES = 2_000_000
"""Largest points file in bytes read for ``wheel.file`` / ``track.file`` (2 MB holds far more
than :data:`MAX_POINTS` lines)."""

MAX_HARMONIC = 64
"""Highest mode number ``k`` of a harmonic wheel's term (``wheel.harmonics``): a few Fourier
terms shape a wheel; beyond this the rim is a saw that no cutter follows."""

MAX_NESTING = 8
"""Deepest nesting of tables and lists a scenario or sweep file may hold (a scenario needs 4:
file, section, list of points, point)."""

MAX_NAME_CHARS = 100
"""Longest scenario ``name`` in characters (it names output files)."""

MAX_DESCRIPTION_CHARS = 2000
"""Longest scenario ``description`` in characters."""

PATH_KINDS = ("line", "hub")
"""Allowed values of ``path.kind``: the kinds of axle path (``ridesim.model.path`` reads them here)."""

HUB_SIDES = ("outside", "inside")
"""Allowed values of ``path.side``: around the hub, or inside it (a ring)."""

HUB_VIEWS = ("gears", "carousel")
"""Allowed values of ``path.view``: how ``simulate`` runs a hub pair."""

SECTIONS = ("wheel", "track", "hub", "ratio", "path", "vehicle", "drive", "surface", "run", "duty",
            "motor", "export")
"""The scenario's sections, in the order of the reference."""


class _Required:
    """Marker of a key with no default: it must be given (when its shape or mode needs it)."""

    def __repr__(self) -> str:
        return "REQUIRED"


REQUIRED: Any = _Required()
"""Default of a key that must be given; its spec field holds None until it is."""

KINDS = ("real", "int", "bool", "str", "choice", "pair", "points", "file", "ints", "reals", "corners",
         "terms")
"""Value types of :attr:`Key.kind`."""


@record
class Key:
    """One scenario key: its type, default, hard bounds, plausible range, unit and meaning.

    Attributes
    ----------
    section : str
        Section name (one of :data:`SECTIONS`).
    name : str
        Key name, ending in its SI unit when it has one.
    kind : str
        Value type, one of :data:`KINDS`: ``real``, ``int``, ``bool``, ``str``, ``choice``,
        ``pair`` ([x, y] of reals), ``points`` (list of [x, y]), ``file`` (a CSV path),
        ``ints`` or ``reals`` (lists), ``terms`` (list of [k, a_k, b_k]: a whole mode number
        and two reals).
    default : object
        Value when the key is left out; None: unset (the doc says what applies then);
        :data:`REQUIRED`: must be given.
    unit : str
        SI unit of the value (``"-"`` for dimensionless numbers, ``""`` for text and flags).
    doc : str
        One-line meaning.
    gt, ge, lt, le : float or None
        Hard bounds (errors); for pairs and lists they apply to every number.
    plausible : (float, float) or None
        Range of real builds of this kind, in ``unit`` (warnings outside it); None: none.
    source : str
        Where ``plausible`` comes from: a handbook table or "common practice".
    choices : tuple of str
        Allowed values of a ``choice`` key.
    shapes : tuple of str
        Wheel or track shapes that use the key; empty: every shape.
    most : float or None
        Largest accepted magnitude (absolute value; for pairs and lists every number): the
        limit beyond which the value is no build and the mathematics loses its meaning (a
        wheel of 1e30 m, 10^9 axles). Unlike the bounds it is a limit of the program, not of
        the physics; None: none.
    max_len : int or None
        Most items a list key (``points``, ``ints``, ``reals``) may hold; None: no limit.
    """

    section: str
    name: str
    kind: str
    default: Any
    unit: str
    doc: str
    gt: float | None = None
    ge: float | None = None
    lt: float | None = None
    le: float | None = None
    plausible: tuple[float, float] | None = None
    source: str = ""
    choices: tuple[str, ...] = ()
    shapes: tuple[str, ...] = ()
    most: float | None = None
    max_len: int | None = None

    @property
    def path(self) -> str:
        """Dotted key path such as ``"surface.friction"``."""
        return f"{self.section}.{self.name}"

    @property
    def bounds(self) -> dict[str, float]:
        """The hard bounds that are set, as keyword arguments (``{"gt": 0.0}``)."""
        items = (("gt", self.gt), ("ge", self.ge), ("lt", self.lt), ("le", self.le))
        return {k: float(v) for k, v in items if v is not None}


# Ranges shared by several keys, each with its source.
_WHEEL_SIZE_M = (0.005, 2.0)
_WHEEL_SIZE_SRC = "common practice: toy wheels of a few mm up to ride-on wheels of about 1 m"
_TRACK_LENGTH_M = (0.005, 10.0)
_TRACK_HEIGHT_M = (0.0005, 1.0)
_TRACK_SRC = "common practice: tracks for wheels from toys to ride-on vehicles"
_ACCEL_M_S2 = (0.0, 5.0)
_ACCEL_SRC = "common practice: 5 m/s^2 is about half of g, a hard stop"
_TORQUE_NM = (1e-4, 5000.0)
_TORQUE_SRC = "common practice: toy gearmotors (mN m) to ride-on drive shafts (kN m)"
_ERROR_SRC = "common practice: build errors are millimetres; centimetres are a different build"

_SIZE: dict[str, Any] = {"gt": 0.0, "most": MAX_LENGTH_M}
_COORD: dict[str, Any] = {"most": MAX_LENGTH_M}

_POLYGON = ("polygon",)
_OUTLINE = ("outline",)

_BASE_KEYS: tuple[Key, ...] = (
    # ---------------------------------------------------------------- [wheel]
    Key("wheel", "shape", "choice", REQUIRED, "",
        "outline type; left out only beside [track] (the wheel is then solved)",
        choices=WHEEL_SHAPES),
    Key("wheel", "sides", "int", None, "-",
        "number of equal sides (required with apothem_m, circumradius_m or side_m)",
        ge=3, most=1000, shapes=_POLYGON),
    Key("wheel", "apothem_m", "real", REQUIRED, "m",
        "centre-to-side distance (give exactly one polygon size)",
        **_SIZE, plausible=_WHEEL_SIZE_M, source=_WHEEL_SIZE_SRC, shapes=_POLYGON),
    Key("wheel", "circumradius_m", "real", REQUIRED, "m",
        "centre-to-corner distance (give exactly one polygon size)",
        **_SIZE, plausible=_WHEEL_SIZE_M, source=_WHEEL_SIZE_SRC, shapes=_POLYGON),
    Key("wheel", "side_m", "real", REQUIRED, "m",
        "side length (give exactly one polygon size)",
        **_SIZE, plausible=_WHEEL_SIZE_M, source=_WHEEL_SIZE_SRC, shapes=_POLYGON),
    Key("wheel", "vertices_m", "points", REQUIRED, "m",
        "corners [x, y], at least 3 (give exactly one polygon size)",
        **_COORD, max_len=MAX_POINTS, shapes=_POLYGON),
    Key("wheel", "semi_axes_m", "pair", REQUIRED, "m",
        "semi-axes [a, b], a along x",
        **_SIZE, plausible=_WHEEL_SIZE_M, source=_WHEEL_SIZE_SRC, shapes=("ellipse",)),
    Key("wheel", "radius_m", "real", REQUIRED, "m", "circle radius",
        **_SIZE, plausible=_WHEEL_SIZE_M, source=_WHEEL_SIZE_SRC, shapes=("circle",)),
    Key("wheel", "radius_formula", "str", REQUIRED, "m",
        "radius as a formula in the polar angle phi (rad) about the axle", shapes=("polar",)),
    Key("wheel", "mean_radius_m", "real", REQUIRED, "m",
        "r0 of r(phi) = r0 (1 + sum of a_k cos(k phi) + b_k sin(k phi)) about the axle: the radius"
        " averaged over the polar angle (a revolution rolls 2 pi r0)",
        **_SIZE, plausible=_WHEEL_SIZE_M, source=_WHEEL_SIZE_SRC, shapes=("harmonic",)),
    Key("wheel", "harmonics", "terms", None, "-",
        "the terms [k, a_k, b_k] of that sum: k a whole number 1 to 64, each k once; a_k, b_k"
        " fractions of r0; the radius must stay > 0 all round (it does while the sum of"
        " hypot(a_k, b_k) is below 1); unset: a circle", max_len=64, shapes=("harmonic",)),
    Key("wheel", "points_m", "points", REQUIRED, "m",
        "outline points [x, y], at least 3 (give exactly one of points_m, file)",
        **_COORD, max_len=MAX_POINTS, shapes=_OUTLINE),
    Key("wheel", "file", "file", REQUIRED, "m",
        "outline file relative to the scenario's folder: CSV points x, y, or a DXF or SVG drawing"
        " (give exactly one of points_m, file)", shapes=_OUTLINE),
    Key("wheel", "layer", "str", None, "",
        "DXF: the layer holding the outline (needed when the drawing holds several shapes)",
        shapes=_OUTLINE),
    Key("wheel", "id", "str", None, "",
        "SVG: the id of the outline element (needed when the drawing holds several shapes)",
        shapes=_OUTLINE),
    Key("wheel", "units", "str", None, "",
        "DXF: length unit (m, cm, mm, in, ft) of a drawing whose header gives none",
        shapes=_OUTLINE),
    Key("wheel", "corner_angle_deg", "real", None, "deg",
        "a point of the outline is a corner where the outline turns by more than this (unset:"
        " 10); between corners it is a smooth spline", ge=0, lt=180, shapes=_OUTLINE),
    Key("wheel", "corners", "corners", None, "",
        '"all" (a polygon), "none" (smooth all round) or a list of point indices; unset:'
        " by corner_angle_deg", shapes=_OUTLINE),
    Key("wheel", "scale", "real", 1.0, "-",
        "as-built size over nominal size (1.002: cut 0.2 % large)",
        gt=0, most=2.0, plausible=(0.9, 1.1),
        source="common practice: a wheel 10 % off its size is a different wheel"),
    Key("wheel", "axle_error_m", "pair", (0.0, 0.0), "m",
        "as-built axle hole position minus the nominal one [x, y]",
        **_COORD, plausible=(-0.05, 0.05), source=_ERROR_SRC),
    Key("wheel", "axle_m", "pair", (0.0, 0.0), "m",
        "axle position [x, y] in the outline's coordinates (not for polar or harmonic); a DXF or"
        " SVG outline: unset means the smallest circle inside it", **_COORD),
    Key("wheel", "thickness_m", "real", 0.02, "m", "plate thickness",
        **_SIZE, plausible=(0.001, 0.3),
        source="common practice: 1 mm sheet to 30 cm solid wheels"),
    Key("wheel", "density_kg_m3", "real", 700.0, "kg/m^3", "material density",
        gt=0, most=1e5, plausible=(10.0, 20000.0),
        source="common practice [memory]: rigid foams (about 30) to tungsten (19,300)"),
    Key("wheel", "mass_kg", "real", None, "kg",
        "wheel mass; unset: area x thickness x density",
        gt=0, most=1e5, plausible=(0.001, 1000.0),
        source="common practice: a 1 g toy wheel to a steel ride-on wheel"),
    Key("wheel", "inertia_kg_m2", "real", None, "kg m^2",
        "moment of inertia about the axle; unset: the outline as a uniform plate", gt=0, most=1e6),
    Key("wheel", "corner_radius_m", "real", 0.0, "m",
        "radius to which sharp corners are rounded in the simulation; 0: 2 % of the least"
        " rim radius there (the check and cut files keep corners sharp)", ge=0, most=MAX_LENGTH_M),
    Key("wheel", "fit_track_to_corners", "bool", False, "",
        "solve the track for the corners rounded to corner_radius_m (smooth valleys)",
        shapes=_POLYGON),
    # ---------------------------------------------------------------- [track]
    Key("track", "shape", "choice", REQUIRED, "",
        "profile type; left out only beside [wheel] (the track is then solved)",
        choices=TRACK_SHAPES),
    Key("track", "amplitude_m", "real", REQUIRED, "m", "wave amplitude",
        **_SIZE, plausible=_TRACK_HEIGHT_M, source=_TRACK_SRC, shapes=("wave",)),
    Key("track", "wavelength_m", "real", REQUIRED, "m", "wave length",
        **_SIZE, plausible=_TRACK_LENGTH_M, source=_TRACK_SRC, shapes=("wave",)),
    Key("track", "rise_m", "real", REQUIRED, "m", "tooth height",
        **_SIZE, plausible=_TRACK_HEIGHT_M, source=_TRACK_SRC, shapes=("sawtooth",)),
    Key("track", "run_m", "real", REQUIRED, "m", "tooth horizontal length",
        **_SIZE, plausible=_TRACK_LENGTH_M, source=_TRACK_SRC, shapes=("sawtooth",)),
    Key("track", "formula", "str", REQUIRED, "m", "height as a formula in x (m)",
        shapes=("formula",)),
    Key("track", "points_m", "points", REQUIRED, "m",
        "profile points [x, y], x increasing, at least 3 (give exactly one of points_m, file)",
        **_COORD, max_len=MAX_POINTS, shapes=("points",)),
    Key("track", "file", "file", REQUIRED, "m",
        "CSV file of profile points x, y (mm under an x_mm,y_mm header), or a DXF or SVG"
        " drawing of one period as one open curve (give exactly one of points_m, file)",
        shapes=("points",)),
    Key("track", "layer", "str", None, "",
        "DXF: the layer holding the profile (needed when the drawing holds several curves)",
        shapes=("points",)),
    Key("track", "id", "str", None, "",
        "SVG: the id of the profile element (needed when the drawing holds several curves)",
        shapes=("points",)),
    Key("track", "units", "str", None, "",
        "DXF: length unit (m, cm, mm, in, ft) of a drawing whose header gives none",
        shapes=("points",)),
    Key("track", "corner_angle_deg", "real", None, "deg",
        "a point of the profile is a corner where it turns by more than this (unset: 10);"
        " between corners it is a smooth spline", ge=0, lt=180, shapes=("points",)),
    Key("track", "corners", "corners", None, "",
        '"all" (straight segments), "none" (smooth throughout) or a list of point indices;'
        " unset: by corner_angle_deg", shapes=("points",)),
    Key("track", "period_m", "real", None, "m",
        "period (required for formula; points: unset means the points' x span)",
        **_SIZE, plausible=_TRACK_LENGTH_M, source=_TRACK_SRC, shapes=("formula", "points")),
    Key("track", "lobes", "int", 1, "-",
        "track periods per wheel revolution (or give depth_m instead)", ge=1, most=1000),
    Key("track", "depth_m", "real", None, "m",
        "depth of the axle path below which the wheel closes, instead of lobes",
        **_COORD, plausible=_WHEEL_SIZE_M, source=_WHEEL_SIZE_SRC),
    Key("track", "height_error_m", "real", 0.0, "m",
        "as-built: standard deviation of each section's random height error",
        ge=0, most=MAX_LENGTH_M, plausible=(0.0, 0.01), source=_ERROR_SRC),
    Key("track", "error_seed", "int", 0, "-", "seed of the height error draws", ge=0, most=2**32 - 1),
    Key("track", "joint_step_m", "real", 0.0, "m",
        "as-built: height step at every joint between sections (alternately up and down)",
        **_COORD, plausible=(-0.01, 0.01), source=_ERROR_SRC),
    Key("track", "section_length_m", "real", 1.0, "m", "length of the sections between joints",
        ge=0.002, most=MAX_LENGTH_M, plausible=(0.01, 20.0),
        source="common practice: short printed pieces to 20 m rails"),
    # ---------------------------------------------------------------- [path]
    Key("path", "kind", "choice", "line", "",
        "axle path: a straight line over a track, or a circle about a hub (a carousel, a drum,"
        " a non-circular gear pair)", choices=PATH_KINDS),
    Key("path", "side", "choice", "outside", "",
        "hub only: the wheel rolls around the hub (outside) or inside a ring (inside)",
        choices=HUB_SIDES),
    Key("path", "centre_distance_m", "real", None, "m",
        "hub only: hub centre to axle (give this or ratio; neither: ratio 1 outside)",
        gt=0, plausible=(0.01, 20.0),
        source="common practice: desk-top gear models to fairground carousels"),
    Key("path", "ratio", "real", None, "-",
        "hub only: wheel turns per hub turn; the centre distance is solved so the hub closes"
        " (ratio x wheel symmetry must be whole; inside a ring > 1)", gt=0,
        plausible=(0.1, 50.0), source="common practice: gear ratios of one stage"),
    Key("path", "load_torque_Nm", "real", 0.0, "N m",
        "hub only, simulate/check/size-motor: brake torque on the driven member (a gear pair's"
        " driven gear, a carousel's arm)", ge=0,
        plausible=(0.0, 5000.0), source=_TORQUE_SRC + "; 0: a free hub"),
    Key("path", "preload_N", "real", None, "N",
        "hub only, simulate/check/size-motor: force pressing the wheel's axle towards the hub"
        " (onto a ring); unset: the wheel's weight", gt=0, plausible=(0.01, 20000.0),
        source="common practice: a light spring on a desk model to a ride car's weight"),
    Key("path", "view", "choice", None, "",
        "hub only, simulate: gears (both parts on fixed pivots, the hub driven) or carousel (the"
        " hub fixed, the wheel's axle on an arm pivoted at its centre); unset: gears outside,"
        " carousel inside a ring", choices=HUB_VIEWS),
    Key("path", "gravity_in_plane", "bool", False, "",
        "hub only, carousel view (simulate/check/size-motor): gravity acts in the plane of the"
        " roll (a vertical drum; unset preload: twice the wheel's weight); false: a horizontal"
        " carousel"),
    # ---------------------------------------------------------------- [vehicle]
    Key("vehicle", "body_mass_kg", "real", 10.0, "kg", "body mass without wheels",
        ge=0, most=1e5, plausible=(0.0, 1000.0),
        source="common practice: an empty toy chassis to a ride-on cart with several adult"
               " riders"),
    Key("vehicle", "body_inertia_kg_m2", "real", None, "kg m^2",
        "body moment of inertia about its centre of mass; unset: estimated", gt=0, most=1e6),
    Key("vehicle", "axles", "int", 1, "-", "number of axles, each with one wheel profile",
        ge=1, most=32, plausible=(1.0, 10.0), source="common practice: carts and short trains"),
    Key("vehicle", "wheelbase_m", "real", 0.0, "m",
        "distance between neighbouring axles (> 0 when axles > 1)",
        ge=0, most=MAX_LENGTH_M, plausible=(0.0, 20.0),
        source="common practice: toy carts to ride-on trains"),
    Key("vehicle", "wheelbase_periods", "real", None, "-",
        "wheelbase as a number of track periods (set once the track is solved); with"
        " wheelbase_m the two must agree within wheelbase_tolerance_m",
        gt=0, most=1e4, plausible=(0.5, 50.0),
        source="common practice: one to a few dozen arches between axles"),
    Key("vehicle", "wheelbase_tolerance_m", "real", 5e-4, "m",
        "build tolerance of the wheelbase: a coupled cart's wheelbase is judged by what it costs"
        " against a wheelbase off by this much",
        ge=0, most=1.0, plausible=(1e-5, 5e-3),
        source="common practice: a drilled or jig-built chassis holds 0.5 mm"),
    Key("vehicle", "coupled", "bool", False, "",
        "all axles forced to turn together (chain or gears)"),
    Key("vehicle", "seat_m", "pair", (0.0, 0.3), "m",
        "seat (rider) point [x, y] in the body frame, whose motion the ride metrics report", **_COORD),
    Key("vehicle", "driven_axles", "ints", None, "-",
        "0-based indices of the driven axles; unset: all axles", max_len=32),
    Key("vehicle", "phase_offsets_rad", "reals", None, "rad",
        "mounting error of each wheel on a shared shaft (clockwise positive), one per axle",
        most=2 * math.pi, max_len=32),
    # ---------------------------------------------------------------- [drive]
    Key("drive", "mode", "choice", "speed", "",
        "speed holds the vehicle speed, shaft_speed the axle speed, torque applies a torque",
        choices=DRIVE_MODES),
    Key("drive", "speed_m_s", "real", 0.5, "m/s", "target vehicle speed (mode speed)",
        gt=0, most=100.0, plausible=(0.01, 5.0),
        source="common practice: a crawl to a run (5 m/s = 18 km/h); walking pace is 1.4 m/s"),
    Key("drive", "accel_m_s2", "real", 0.0, "m/s^2",
        "ramp-up acceleration towards the target; 0: start at the target",
        ge=0, most=100.0, plausible=_ACCEL_M_S2, source=_ACCEL_SRC),
    Key("drive", "max_torque_Nm", "real", 50.0, "N m",
        "largest torque the drive may apply to hold its target",
        gt=0, most=1e6, plausible=_TORQUE_NM, source=_TORQUE_SRC),
    Key("drive", "torque_Nm", "real", None, "N m",
        "constant axle torque (required for mode torque)",
        gt=0, most=1e6, plausible=_TORQUE_NM, source=_TORQUE_SRC),
    Key("drive", "shaft_speed_rad_s", "real", None, "rad/s",
        "target axle angular speed (required for mode shaft_speed)",
        gt=0, most=1e4, plausible=(0.01, 100.0),
        source="common practice: 100 rad/s is about 950 rpm at the wheel"),
    # ---------------------------------------------------------------- [surface]
    Key("surface", "friction", "real", 0.8, "-", "Coulomb friction coefficient",
        gt=0, most=1000.0, plausible=(0.1, 2.0),
        source="handbook tables: 0.2 wood on wood, kinetic (engineering tables) to 1.0 rubber"
               " on dry concrete (Serway & Beichner, Table 5.2), widened about twice each way"
               " (common practice)"),
    Key("surface", "rolling_resistance", "real", 0.0, "-",
        "rolling resistance coefficient (force over normal load)",
        ge=0, most=1.0, plausible=(0.0, 0.2),
        source="engineering tables: 0.001-0.002 steel on rail, 0.01-0.015 tyre on concrete,"
               " hard casters 5-20 mm lever arm, i.e. up to 0.2 on a 0.1 m wheel"),
    # ---------------------------------------------------------------- [run]
    Key("run", "duration_s", "real", 6.0, "s", "simulated time", gt=0, most=3600.0),
    Key("run", "timestep_s", "real", 0.001, "s", "integration step",
        gt=0, le=MAX_TIMESTEP_S, plausible=(1e-5, 0.005),
        source="common practice: rigid contact wants fine steps; the README's timestep advice"
               " starts at 1 ms and halves it; steps under 10 us only cost time"),
    Key("run", "settle_s", "real", 1.0, "s",
        "initial time left out of the ride metrics (< duration_s)", ge=0),
    Key("run", "iterations", "int", 30, "-", "constraint solver iterations per step",
        ge=1, le=1000),
    # ---------------------------------------------------------------- [duty]
    Key("duty", "cruise_s", "real", 10.0, "s", "time at the target speed", ge=0, most=3600.0),
    Key("duty", "brake_m_s2", "real", None, "m/s^2",
        "braking deceleration; unset: the same as drive.accel_m_s2",
        gt=0, most=100.0, plausible=_ACCEL_M_S2, source=_ACCEL_SRC),
    Key("duty", "grade_rad", "real", 0.0, "rad", "grade of the whole run (positive uphill)",
        gt=-0.5, lt=0.5),
    Key("duty", "rest_s", "real", 0.0, "s", "standstill at the end of the cycle", ge=0, most=3600.0),
    # ---------------------------------------------------------------- [motor]
    Key("motor", "gear_ratios", "reals", (), "-",
        "candidate reductions (motor turns per wheel turn); empty: none given",
        gt=0, most=1e5, max_len=100, plausible=(1.0, 1000.0),
        source="common practice: direct drive to multi-stage gearmotors"),
    Key("motor", "rated_torque_Nm", "real", None, "N m",
        "continuous torque rating (compared with the r.m.s. torque)",
        gt=0, most=1e6, plausible=_TORQUE_NM, source=_TORQUE_SRC),
    Key("motor", "peak_torque_Nm", "real", None, "N m",
        "intermittent torque rating; unset: 2 x rated", gt=0, most=1e6,
        plausible=_TORQUE_NM, source=_TORQUE_SRC),
    Key("motor", "rated_speed_rad_s", "real", None, "rad/s",
        "rated speed (compared with the top shaft speed)",
        gt=0, most=1e5, plausible=(1.0, 2000.0),
        source="common practice: slow gearmotor outputs to 19,000 rpm small DC motors"),
    Key("motor", "efficiency", "real", 0.85, "-", "gear efficiency",
        gt=0, le=1, plausible=(0.3, 1.0),
        source="common practice [memory]: worm gears from about 0.3, spur gears 0.95-0.98"),
    Key("motor", "safety_factor", "real", 1.5, "-",
        "margin the ratings must keep over the duty",
        ge=1, plausible=(1.0, 5.0), source="common practice: design margins of 1.2 to 3"),
    Key("motor", "inertia_kg_m2", "real", 0.0, "kg m^2",
        "rotor inertia (reflected to the wheel as i^2 J)", ge=0, most=1e3),
    # ---------------------------------------------------------------- [export]
    Key("export", "section_length_m", "real", 1.0, "m",
        "longest track piece in the cut files (pieces end at the track's highest points)",
        gt=0, plausible=(0.05, 3.0),
        source="common practice: laser and router beds of 0.3 m to 3 m (1.2 x 2.4 m sheets)"),
    Key("export", "track_length_m", "real", None, "m",
        "length of track to draw, rounded up to whole periods; unset: revolutions",
        gt=0, plausible=(0.01, 100.0), source="common practice: a test piece to a ride's loop"),
    Key("export", "revolutions", "real", None, "-",
        "wheel revolutions of track to draw (instead of track_length_m); unset: 1", gt=0),
    Key("export", "chord_tolerance_m", "real", 1e-5, "m",
        "largest distance of a drawn chord from the true curve",
        gt=0, plausible=(1e-7, 1e-3),
        source="common practice: machine resolutions of a few um; 0.01 mm is below laser and"
               " router accuracy"),
    Key("export", "axle_hole_m", "real", 0.010, "m",
        "axle hole diameter (the 10 mm default fits a 10 mm shaft: ream to fit)",
        gt=0, plausible=(0.001, 0.1), source="common practice: 3 mm toy shafts to 80 mm axles"),
    Key("export", "axle_flat_m", "real", None, "m",
        "D-bore: width across the flat (between axle_hole_m / 2 and axle_hole_m), so the"
        " wheel cannot turn on a D-shaft; unset: a round hole", gt=0),
    Key("export", "kerf_m", "real", 0.0, "m",
        "width of the cut; cut lines are offset by half of it into the waste so the parts come"
        " out at size", ge=0, plausible=(0.0, 0.005),
        source="common practice: 0.1-0.3 mm laser, 1-3 mm router or waterjet"),
    Key("export", "sheet_m", "pair", None, "m",
        "sheet size [width, height]: track pieces are cut no longer than the sheet's long side"
        " less the margins, and the cut list counts sheets and flags parts that do not fit;"
        " unset: no sheet", gt=0, plausible=(0.1, 4.0),
        source="common practice: 0.3 m laser beds to 1.5 x 3 m router and waterjet tables"),
    Key("export", "rails", "int", 2, "-",
        "rails the vehicle runs on: wheels per axle and strips per track piece in the cut list",
        ge=1, plausible=(1.0, 4.0), source="common practice: a cart runs on two rails"),
)

_HUB_SIZE_M = (0.005, 20.0)
_HUB_SIZE_SRC = "common practice: desk-top gear models to fairground carousels"


def _hub_rows(rows: tuple[Key, ...]) -> tuple[Key, ...]:
    """The ``[hub]`` rows: the wheel's outline keys, for the given hub (or ring).

    A hub is described the same way as a wheel (the same shapes and keys, read by the same
    parser), about its centre instead of the axle; its material is the ``[wheel]``'s. Only
    ``shape``, the shape keys (less ``fit_track_to_corners``) and ``axle_m`` (here the hub's
    centre) are taken, plus ``lobes``.
    """
    out = [Key("hub", "shape", "choice", REQUIRED, "",
               "outline type of the given hub (or ring, path.side = \"inside\"); the wheel is"
               " solved for it (path.kind = \"hub\"; [wheel] then holds material keys only)",
               choices=WHEEL_SHAPES)]
    for k in rows:
        if k.section != "wheel" or not k.shapes or k.name == "fit_track_to_corners":
            continue
        plaus, src = k.plausible, k.source
        if plaus == _WHEEL_SIZE_M:
            plaus, src = _HUB_SIZE_M, _HUB_SIZE_SRC
        out.append(replace(k, section="hub", doc=k.doc.replace("the axle", "the hub's centre"),
                           plausible=plaus, source=src))
    out += [
        Key("hub", "axle_m", "pair", (0.0, 0.0), "m",
            "the hub's centre (its pivot) [x, y] in the outline's coordinates (not for polar); a"
            " DXF or SVG outline: unset means the circle drawn inside it", **_COORD),
        Key("hub", "lobes", "int", 1, "-",
            "the solved wheel's lobes: repeats of the hub's pattern the wheel rolls over per"
            " wheel turn (inside a ring: fewer than the ring's repeats); not for a circle hub,"
            " whose wheel is sized by path.ratio or path.centre_distance_m", ge=1, most=1000),
    ]
    return tuple(out)


_RATIO_KEYS: tuple[Key, ...] = (
    Key("ratio", "formula", "str", REQUIRED, "-",
        "required speed ratio of a gear pair (driven speed over driving speed) as a formula in"
        " the driver's angle theta (rad), 2*pi-periodic; both pitch curves are designed for it at"
        " path.centre_distance_m (path.kind = \"hub\"; give exactly one of formula, points_rad)"),
    Key("ratio", "points_rad", "points", REQUIRED, "rad",
        "the same as a table: rows [theta_rad, ratio] (the driver's angle in rad, rising, over"
        " at most one turn; the ratio dimensionless), at least 4, a periodic cubic spline"
        " between them (give exactly one of formula, points_rad)",
        **_COORD, max_len=MAX_POINTS),
)

KEYS: tuple[Key, ...] = _BASE_KEYS + _hub_rows(_BASE_KEYS) + _RATIO_KEYS
"""Every scenario key, grouped by section (the order of the reference)."""

KEY: dict[str, Key] = {k.path: k for k in KEYS}
"""The rows of :data:`KEYS` by dotted path."""


def _check_table(keys: Iterable[Key]) -> None:
    """Refuse a malformed table at import (a row added with a typo fails at once)."""
    seen: set[str] = set()
    for k in keys:
        if k.section not in SECTIONS or k.kind not in KINDS or k.path in seen:
            raise ValueError(f"scenario key table: bad or repeated row {k.path} ({k.kind})")
        if k.plausible is not None and not k.source:
            raise ValueError(f"scenario key table: {k.path} has a plausible range but no source")
        seen.add(k.path)


_check_table(KEYS)


def tiny_of(k: Key) -> float | None:
    """Smallest value of a real key that must be > 0 (see :data:`TINY`).

    Parameters
    ----------
    k : Key
        A row of the table.

    Returns
    -------
    float or None
        The floor in the key's unit; None when the key has no lower bound of 0.
    """
    if k.kind not in ("real", "pair", "reals") or k.gt != 0.0:
        return None
    return TINY.get(k.unit, TINY[""])


def default_of(path: str) -> Any:
    """Default of a key for its spec field (None for a :data:`REQUIRED` key).

    Parameters
    ----------
    path : str
        Dotted key path such as ``"surface.friction"``.

    Returns
    -------
    object
        The default value; None when the key has none.
    """
    default = KEY[path].default
    return None if default is REQUIRED else default


def section_keys(section: str, shape: str | None = None) -> tuple[str, ...]:
    """Names of a section's keys, in table order.

    Parameters
    ----------
    section : str
        Section name.
    shape : str, optional
        Only the keys of this wheel or track shape (those with an empty ``shapes`` excluded).

    Returns
    -------
    tuple of str
        Key names.
    """
    rows = [k for k in KEYS if k.section == section]
    if shape is not None:
        rows = [k for k in rows if shape in k.shapes]
    return tuple(k.name for k in rows)


def _numbers(value: Any) -> list[tuple[str, float]]:
    """The numbers of a value with their index suffix: ``[("", 0.8)]``, ``[("[0]", x), ...]``."""
    if isinstance(value, bool):
        return []
    if isinstance(value, numbers.Real):
        return [("", float(value))]
    if isinstance(value, (tuple, list)):
        return [(f"[{i}]", float(v)) for i, v in enumerate(value)
                if is_number(v)]
    return []


def value_warnings(path: str, value: Any) -> list[str]:
    """One line per number of a key's value outside the plausible range of real builds.

    Parameters
    ----------
    path : str
        Dotted key path such as ``"surface.friction"``; keys without a plausible range
        (or not in the table) give no warnings.
    value : object
        The key's value in its unit: a number, a pair or a list of numbers; other values
        (None, text, point lists) give no warnings.

    Returns
    -------
    list of str
        Messages such as ``surface.friction = 70 is outside the plausible range 0.1 to 2
        (handbook tables: ...); accepted, but check the value and its unit``.
    """
    k = KEY.get(path)
    if k is None or k.plausible is None or k.kind == "points":
        return []
    lo, hi = k.plausible
    unit = "" if k.unit in ("", "-") else f" {k.unit}"
    return [f"{path}{suffix} = {x:g}{unit} is outside the plausible range {lo:g} to {hi:g}"
            f"{unit} ({k.source}); accepted, but check the value and its unit"
            for suffix, x in _numbers(value) if not lo <= x <= hi]


def plausibility_warnings(section: str, spec: Any) -> list[str]:
    """One line per value of a section outside the plausible range of real builds.

    Parameters
    ----------
    section : str
        Section name.
    spec : object
        The section's validated spec (its attributes are the key names); None: no warnings.

    Returns
    -------
    list of str
        The :func:`value_warnings` of every key of the section, in table order.
    """
    out: list[str] = []
    if spec is None:
        return out
    for k in KEYS:
        if k.section == section:
            out += value_warnings(k.path, getattr(spec, k.name, None))
    return out


# ---------------------------------------------------------------------------- reference
def _show_default(k: Key) -> str:
    d = k.default
    if d is REQUIRED:
        return "required"
    if d is None:
        return "unset"
    if isinstance(d, bool):
        return "true" if d else "false"
    if isinstance(d, str):
        return f'"{d}"'
    if isinstance(d, tuple):
        return "[" + ", ".join(f"{v:g}" for v in d) + "]"
    return f"{d:g}"


def _show_bounds(k: Key) -> str:
    if k.choices:
        return "one of " + ", ".join(f'"{c}"' for c in k.choices)
    parts = [f"{op} {v:g}" for op, v in ((">", k.gt), (">=", k.ge), ("<", k.lt), ("<=", k.le))
             if v is not None]
    if k.most is not None:
        signed = k.gt is None and k.ge is None
        parts.append(f"within ±{k.most:g} (limit)" if signed else f"at most {k.most:g} (limit)")
    if k.max_len is not None:
        parts.append(f"at most {k.max_len} items")
    return " and ".join(parts) if parts else "any"


_KIND_TEXT = {"real": "number", "int": "integer", "bool": "true/false", "str": "text",
              "choice": "text", "pair": "[x, y]", "points": "list of [x, y]", "file": "path",
              "ints": "list of integers", "reals": "list of numbers",
              "corners": "\"all\", \"none\" or list of integers",
              "terms": "list of [k, a_k, b_k]"}


def markdown_reference() -> str:
    """The scenario key reference as Markdown, generated from :data:`KEYS`.

    Returns
    -------
    str
        The text of ``docs/scenario-keys.md``.
    """
    lines = [
        "# Scenario keys",
        "",
        "Generated from `ridesim/scenario/schema.py` by `python3 tools/scenario_keys.py`;"
        " do not edit by hand (a test compares this file with the table).",
        "",
        "Top-level keys: `name` (default: the file stem) and `description` (default: empty).",
        "**Allowed** values are hard limits: outside them the scenario is refused with one"
        " line naming the key (exit code 2). **Plausible** is the range real builds of this"
        " kind have: outside it the value is accepted with a one-line warning (on stderr from"
        " the command line, in the JSON output's `warnings` list, and in"
        " `Scenario.warnings` from Python), since it is most likely a unit slip. Each"
        " plausible range names its source: a handbook table or common practice.",
        "",
        "Limits of the whole file, so that no input can exhaust the machine: tables and lists"
        f" nested at most {MAX_NESTING} deep; at most {MAX_POINTS} points in an outline or"
        f" profile, inline or in a points file of at most {MAX_FILE_BYTES // 1_000_000} MB;"
        f" lengths and coordinates within {MAX_LENGTH_M:g} m. A key that must be > 0"
        f" refuses values too small to compute with: below {MIN_LENGTH_M:g} m for"
        f" lengths, {TINY['kg m^2']:g} kg m^2 for inertias, {TINY['']:g} in its SI unit"
        f" otherwise. `name` holds at most {MAX_NAME_CHARS} characters and `description` at"
        f" most {MAX_DESCRIPTION_CHARS}, neither with control characters (a description may"
        " hold line breaks and tabs). Points files are UTF-8 (a byte-order mark is skipped;"
        " UTF-16 with its byte-order mark is read too), with x and y separated by a comma or a"
        " tab; a third column is read only when it is the same on every line (a drawing's"
        " z = 0).",
        "",
    ]
    for section in SECTIONS:
        lines += [f"## [{section}]", "",
                  "| key | type | default | allowed | plausible | unit | meaning |",
                  "|---|---|---|---|---|---|---|"]
        for k in KEYS:
            if k.section != section:
                continue
            plaus = "" if k.plausible is None else (
                f"{k.plausible[0]:g} to {k.plausible[1]:g} ({k.source})")
            doc = k.doc + (f" [{', '.join(k.shapes)}]" if k.shapes else "")
            cells = [f"`{k.name}`", _KIND_TEXT[k.kind], _show_default(k), _show_bounds(k),
                     plaus, k.unit, doc]
            lines.append("| " + " | ".join(c.replace("|", "\\|") for c in cells) + " |")
        lines.append("")
    lines.append("Keys with a [shape] list apply to those wheel or track shapes only.")
    return "\n".join(lines) + "\n"

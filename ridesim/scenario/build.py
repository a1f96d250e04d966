"""From a validated scenario to model objects and a solved pair.

The scenario records (:mod:`ridesim.scenario.load`) hold plain validated values;
this module turns them into :class:`~ridesim.model.wheel.Wheel`,
:class:`~ridesim.model.track.Track` and a solved
:class:`~ridesim.solve.pair.RollingPair`, and resolves the wheel's mass
properties (explicit ``mass_kg``/``inertia_kg_m2`` override the plate model).
"""

from __future__ import annotations

import csv
import re
from dataclasses import replace
from pathlib import Path

import numpy as np

from ridesim.errors import RidesimError, ScenarioError
from ridesim.model.track import Track
from ridesim.model.wheel import MassProperties, Wheel
from ridesim.scenario.drawing import is_drawing, read_drawing, read_profile_drawing
from ridesim.scenario.load import Scenario, TrackSpec, WheelSpec
from ridesim.solve.forward import track_for
from ridesim.solve.hub import HubPair, hub_for
from ridesim.solve.inverse import wheel_for
from ridesim.solve.pair import RollingPair

__all__ = ["read_points_csv", "wheel_from_spec", "track_from_spec", "solve_scenario", "wheel_mass",
           "resolve_wheelbase", "solve_hub_scenario"]


_CSV_UNITS_M = {"m": 1.0, "mm": 1e-3}
"""Length units a points file's header may name (``x_m,y_m`` or ``x_mm,y_mm``), in metres."""


def read_points_csv(path: str | Path, key: str) -> np.ndarray:
    """Read ``x, y`` pairs [m] from a CSV file (a header row and ``#`` comments allowed).

    Values are in metres unless the header names another length unit: ``x_mm,y_mm`` (as
    ridesim's own cut files are written) is read in millimetres and converted. A header
    without a unit (``x,y``) means metres.

    Parameters
    ----------
    path : str or Path
        The CSV file.
    key : str
        Scenario key path for error messages (e.g. ``wheel.file``).

    Returns
    -------
    ndarray, shape (N, 2)
        Points [m].
    """
    rows: list[list[float]] = []
    scale = 1.0
    try:
        with open(path, newline="", encoding="utf-8") as fh:
            for lineno, row in enumerate(csv.reader(fh), start=1):
                cells = [c.strip() for c in row if c.strip()]
                if not cells or cells[0].startswith("#"):
                    continue
                try:
                    vals = [float(c) for c in cells[:2]]
                except ValueError:
                    if not rows:
                        scale = _header_scale(cells, path, key, lineno)
                        continue  # header row
                    raise ScenarioError(
                        f"{key}: line {lineno} of {path} is not two numbers x, y"
                    ) from None
                if len(vals) != 2:
                    raise ScenarioError(f"{key}: line {lineno} of {path} needs two columns x, y")
                rows.append(vals)
    except OSError as exc:
        raise ScenarioError(f"{key}: cannot read {path}: {exc.strerror}") from None
    if len(rows) < 3:
        raise ScenarioError(f"{key}: {path} holds {len(rows)} points; at least 3 are needed")
    return scale * np.array(rows)


_OTHER_LENGTH_UNITS = {"cm", "dm", "km", "um", "in", "inch", "inches", "ft", "feet", "foot"}


def _header_scale(cells: list[str], path, key: str, lineno: int) -> float:
    """Metres per unit that a header row names (``x_mm,y_mm``, ``x [mm]``); 1 when it names none.

    The header's words are split at anything not a letter or digit (``x_mm``, ``x [mm]`` and
    ``x (mm)`` all name mm). Any other length unit is refused rather than read as metres.
    """
    words: set[str] = set()
    for c in cells[:2]:
        words.update(w for w in re.split(r"[^0-9a-z]+", c.lower()) if w)
    named = words & (set(_CSV_UNITS_M) | _OTHER_LENGTH_UNITS)
    if not named:
        return 1.0
    if len(named) == 1 and (u := next(iter(named))) in _CSV_UNITS_M:
        return _CSV_UNITS_M[u]
    raise ScenarioError(
        f"{key}: the header on line {lineno} of {path} ({','.join(cells)}) names"
        f" {', '.join(sorted(named))}: give the points in metres (header x_m,y_m) or millimetres"
        " (header x_mm,y_mm)"
    )


def _wrap(prefix: str, fn, *args, **kw):
    try:
        return fn(*args, **kw)
    except ScenarioError:
        raise
    except RidesimError as exc:
        raise type(exc)(f"{prefix}: {exc}") from None


def wheel_from_spec(spec: WheelSpec) -> Wheel:
    """Build the wheel described by a ``[wheel]`` section.

    Parameters
    ----------
    spec : WheelSpec
        Validated section.

    Returns
    -------
    Wheel
    """
    s = spec.shape
    ax = spec.axle_m
    if s == "polygon":
        # Rounded corners shape the wheel itself only when the track is to fit them; else they
        # are the simulated wheel's edge radius on the track solved for sharp corners.
        cr = float(spec.corner_radius_m) if spec.fit_track_to_corners else 0.0
        if spec.vertices_m is not None:
            return _wrap("wheel", Wheel.polygon_from_vertices, spec.vertices_m, axle=ax,
                         corner_radius=cr)
        return _wrap("wheel", Wheel.polygon, spec.sides, apothem=spec.apothem_m,
                     circumradius=spec.circumradius_m, side=spec.side_m, axle=ax,
                     corner_radius=cr)
    if s == "ellipse":
        return _wrap("wheel", Wheel.ellipse, spec.semi_axes_m, axle=ax)
    if s == "circle":
        return _wrap("wheel", Wheel.circle, spec.radius_m, axle=ax)
    if s == "polar":
        return _wrap("wheel.radius_formula", Wheel.polar, spec.radius_formula)
    if spec.file is not None and is_drawing(spec.file):
        drawn = read_drawing(spec.file, "wheel.file", layer=spec.layer, ident=spec.id, units=spec.units)
        pts = drawn.points_m
        if ax is None:
            if drawn.axle_m is None:
                raise ScenarioError(f"wheel.file: {Path(spec.file).name} has no circle inside the outline"
                                    " to mark the axle; give wheel.axle_m = [x, y] (m, drawing frame)")
            ax = drawn.axle_m
    else:
        if spec.points_m is not None:
            pts = spec.points_m
        elif spec.file is not None:
            pts = read_points_csv(spec.file, "wheel.file")
        else:
            raise ScenarioError("wheel: give its outline as wheel.points_m or wheel.file")
    if ax is None:
        ax = (0.0, 0.0)
    return _wrap("wheel", Wheel.outline, pts, axle=ax, **_corner_args(spec))


def _corner_args(spec) -> dict:
    out = {} if spec.corner_angle_deg is None else {"corner_angle_deg": spec.corner_angle_deg}
    if spec.corners is not None:
        out["corners"] = spec.corners if isinstance(spec.corners, str) else list(spec.corners)
    return out


def track_from_spec(spec: TrackSpec) -> Track:
    """Build the track shape described by a ``[track]`` section.

    Parameters
    ----------
    spec : TrackSpec
        Validated section.

    Returns
    -------
    Track
        The shape ``f(x)`` before lowering.
    """
    s = spec.shape
    if s == "wave":
        return _wrap("track", Track.wave, spec.amplitude_m, spec.wavelength_m)
    if s == "sawtooth":
        return _wrap("track", Track.sawtooth, spec.rise_m, spec.run_m)
    if s == "formula":
        return _wrap("track.formula", Track.profile, spec.formula, spec.period_m)
    if spec.file is not None and is_drawing(spec.file):
        pts = read_profile_drawing(spec.file, "track.file", layer=spec.layer, ident=spec.id,
                                   units=spec.units)
    else:
        if spec.points_m is not None:
            pts = spec.points_m
        elif spec.file is not None:
            pts = read_points_csv(spec.file, "track.file")
        else:
            raise ScenarioError("track: give its outline as track.points_m or track.file")
    return _wrap("track", Track.points, pts, period=spec.period_m, **_corner_args(spec))


def solve_scenario(sc: Scenario) -> RollingPair | HubPair:
    """Solve the scenario's pair: the track for its wheel, or the wheel for its track.

    With ``path.kind = "hub"`` the hub for its wheel (:func:`solve_hub_scenario`).

    Parameters
    ----------
    sc : Scenario
        Validated scenario.

    Returns
    -------
    RollingPair or HubPair
    """
    if sc.path.is_hub:
        return solve_hub_scenario(sc)
    return solve_track_scenario(sc)


def solve_track_scenario(sc: Scenario) -> RollingPair:
    """Solve the scenario's wheel and track on a straight path (no hub).

    Parameters
    ----------
    sc : Scenario
        Validated scenario with ``path.kind = "line"`` and a ``[wheel]`` shape or a ``[track]``.

    Returns
    -------
    RollingPair
    """
    if sc.path.is_hub:
        raise ScenarioError("path.kind = \"hub\" has no track to solve; use solve_hub_scenario")
    if sc.wheel is not None and sc.wheel.shape is not None:
        return _wrap("wheel", track_for, wheel_from_spec(sc.wheel))
    if sc.track is None:
        raise ScenarioError("the scenario needs a [wheel] with its shape or a [track]")
    t = track_from_spec(sc.track)
    if sc.track.depth_m is not None:
        return _wrap("track.depth_m", wheel_for, t, depth=sc.track.depth_m)
    return _wrap("track.lobes", wheel_for, t, lobes=sc.track.lobes or 1)


def solve_hub_scenario(sc: Scenario) -> HubPair:
    """Solve the hub (or ring) for the scenario's wheel with its axle on a circle.

    Parameters
    ----------
    sc : Scenario
        Validated scenario with ``path.kind = "hub"`` and a ``[wheel]``.

    Returns
    -------
    HubPair
    """
    p = sc.path
    if not p.is_hub or sc.wheel is None or sc.wheel.shape is None:
        raise ScenarioError("a hub solve needs path.kind = \"hub\" and a [wheel] with its shape")
    w = wheel_from_spec(sc.wheel)
    if p.centre_distance_m is not None:
        return _wrap("path.centre_distance_m", hub_for, w, centre_distance=p.centre_distance_m,
                     side=p.side)
    return _wrap("path.ratio", hub_for, w, ratio=p.ratio if p.ratio is not None else 1, side=p.side)


def resolve_wheelbase(sc: Scenario, pair: RollingPair) -> Scenario:
    """The scenario with its wheelbase in metres, given as ``vehicle.wheelbase_periods``.

    ``wheelbase_periods`` alone sets ``wheelbase_m = wheelbase_periods * period`` (the solved
    track's period). Given with ``wheelbase_m``, the two must agree within
    ``vehicle.wheelbase_tolerance_m``; ``wheelbase_m`` (the measured length) is kept.
    A scenario without ``wheelbase_periods`` is returned as it is.

    Parameters
    ----------
    sc : Scenario
        Validated scenario.
    pair : RollingPair
        Its solved pair (:func:`solve_scenario`).

    Returns
    -------
    Scenario
    """
    veh = sc.vehicle
    if veh.wheelbase_periods is None:
        return sc
    period = float(pair.track.period)
    wb = float(veh.wheelbase_periods) * period
    if veh.wheelbase_m > 0:
        tol = float(veh.wheelbase_tolerance_m)
        if abs(veh.wheelbase_m - wb) > tol:
            raise ScenarioError(
                f"vehicle.wheelbase_m = {veh.wheelbase_m:.6g} m and vehicle.wheelbase_periods ="
                f" {veh.wheelbase_periods:g} ({veh.wheelbase_periods:g} x {period:.6g} m ="
                f" {wb:.6g} m) differ by {1000 * abs(veh.wheelbase_m - wb):.3g} mm, more than"
                f" vehicle.wheelbase_tolerance_m = {1000 * tol:g} mm; give only one of them"
            )
        return sc
    return replace(sc, vehicle=replace(veh, wheelbase_m=wb))


def wheel_mass(sc: Scenario, wheel: Wheel) -> MassProperties:
    """Mass properties of one wheel: the plate model, overridden by explicit keys.

    Parameters
    ----------
    sc : Scenario
        Validated scenario (its ``[wheel]`` section gives thickness, density and overrides).
    wheel : Wheel
        The solved wheel.

    Returns
    -------
    MassProperties
        Mass [kg], inertia about the axle [kg m^2], centre of mass [m] from the axle, area [m^2].
    """
    spec = sc.wheel if sc.wheel is not None else WheelSpec(shape=None)
    mp = wheel.mass_properties(spec.thickness_m, spec.density_kg_m3)
    m = spec.mass_kg if spec.mass_kg is not None else mp.mass_kg
    if spec.inertia_kg_m2 is not None:
        j = spec.inertia_kg_m2
    else:
        j = mp.inertia_kg_m2 * (m / mp.mass_kg)
    return MassProperties(mass_kg=m, inertia_kg_m2=j, com_m=mp.com_m, area_m2=mp.area_m2)

"""From a validated scenario to model objects and a solved pair.

The scenario records (:mod:`ridesim.scenario.load`) hold plain validated values;
this module turns them into :class:`~ridesim.model.wheel.Wheel`,
:class:`~ridesim.model.track.Track` and a solved
:class:`~ridesim.solve.pair.RollingPair`, and resolves the wheel's mass
properties (explicit ``mass_kg``/``inertia_kg_m2`` override the plate model).
"""

from __future__ import annotations

import re
from dataclasses import replace
from pathlib import Path

import numpy as np

from ridesim.errors import RidesimError, ScenarioError
from ridesim.model.track import Track
from ridesim.model.wheel import MassProperties, Wheel
from ridesim.scenario.load import HubSpec, OutlineSpec, PathSpec, RatioSpec, Scenario, TrackSpec, WheelSpec
from ridesim.solve.forward import track_for
from ridesim.solve.hub import HubPair, gears_for_ratio, hub_for, wheel_for_hub
from ridesim.solve.inverse import wheel_for
from ridesim.solve.pair import RollingPair

__all__ = ["read_points_csv", "wheel_from_spec", "outline_from_spec", "track_from_spec",
           "solve_scenario", "wheel_mass", "resolve_wheelbase", "solve_hub_scenario"]


_CSV_UNITS_M = {"m": 1.0, "mm": 1e-3}
"""Length units a points file's header may name (``x_m,y_m`` or ``x_mm,y_mm``), in metres."""


def read_points_csv(path: str | Path, key: str) -> np.ndarray:
    """Read ``x, y`` pairs [m] from a CSV file (a header row and ``#`` comments allowed).

    Values are in metres unless the header names another length unit: ``x_mm,y_mm`` (as
    ridesim's own cut files are written) is read in millimetres and converted. A header
    without a unit (``x,y``) means metres.

    What can be read unambiguously is read: a UTF-8 byte-order mark (as spreadsheets write
    it) is skipped, UTF-16 with its byte-order mark is decoded, bytes that are not UTF-8 are
    tolerated inside ``#`` comments, cells may be separated by commas or tabs, and a third
    column is ignored when it holds the same number on every line (a drawing's z = 0). The
    rest is refused with one line saying what was found: a binary file, undecodable text, a
    varying third column, more than :data:`~ridesim.scenario.schema.MAX_POINTS` points, a
    file larger than :data:`~ridesim.scenario.schema.MAX_FILE_BYTES`.

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
    from ridesim.scenario.schema import MAX_FILE_BYTES, MAX_LENGTH_M, MAX_POINTS

    try:
        size = Path(path).stat().st_size
        if size > MAX_FILE_BYTES:
            raise ScenarioError(f"{key}: {path} is {size} bytes, larger than the limit of"
                                f" {MAX_FILE_BYTES} bytes for a points file; thin the points"
                                f" (at most {MAX_POINTS})")
        with open(path, "rb") as fh:
            data = fh.read()
    except OSError as exc:
        raise ScenarioError(f"{key}: cannot read {path}: {exc.strerror}") from None
    lines = _decode_lines(data, path, key)
    rows: list[list[float]] = []
    thirds: list[tuple[int, float]] = []
    scale = 1.0
    header_seen = False
    for lineno, line in lines:
        if line.lstrip().startswith("#") or not line.strip():
            continue
        sep = "," if "," in line else "\t"
        cells = [c.strip() for c in line.split(sep) if c.strip()]
        try:
            vals = [float(c) for c in cells]
        except ValueError:
            if not rows and not header_seen:
                header_seen = True
                scale = _header_scale(cells, path, key, lineno)
                continue  # header row
            why = (" (cells separated by ';' with decimal commas?)" if ";" in line else "")
            raise ScenarioError(
                f"{key}: line {lineno} of {path} is not two numbers x, y{why}; write x, y with"
                " a decimal point, separated by a comma or a tab"
            ) from None
        if len(vals) < 2:
            raise ScenarioError(f"{key}: line {lineno} of {path} needs two columns x, y"
                                f" separated by a comma or a tab, found {len(vals)}")
        if len(vals) > 3:
            raise ScenarioError(f"{key}: line {lineno} of {path} has {len(vals)} columns;"
                                " give two columns x, y")
        if not all(np.isfinite(vals)) or max(abs(v) for v in vals[:2]) * scale > MAX_LENGTH_M:
            raise ScenarioError(f"{key}: line {lineno} of {path} holds {cells[0]}, {cells[1]}:"
                                f" coordinates must be finite and within {MAX_LENGTH_M:g} m")
        if len(vals) == 3:
            thirds.append((lineno, vals[2]))
        rows.append(vals[:2])
        if len(rows) > MAX_POINTS:
            raise ScenarioError(f"{key}: {path} holds more than {MAX_POINTS} points, the limit;"
                                " thin the points")
    if thirds:
        first = thirds[0][1]
        varying = next(((n, z) for n, z in thirds if z != first), None)
        if len(thirds) != len(rows) or varying is not None:
            n, z = varying if varying is not None else (thirds[0][0], first)
            raise ScenarioError(
                f"{key}: {path} has a third column that is not the same on every line (line"
                f" {n}: {z:g}); give two columns x, y (a constant z is ignored)")
    if len(rows) < 3:
        raise ScenarioError(f"{key}: {path} holds {len(rows)} points; at least 3 are needed"
                            " (one x, y pair per line, separated by a comma or a tab)")
    return scale * np.array(rows)


def _decode_lines(data: bytes, path, key: str) -> list[tuple[int, str]]:
    """The numbered text lines of a points file's bytes (see :func:`read_points_csv`)."""
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            text = data.decode("utf-16")
        except UnicodeDecodeError:
            raise ScenarioError(f"{key}: {path} starts like UTF-16 text but does not decode as"
                                " UTF-16; save it as UTF-8 text") from None
        return list(enumerate(text.splitlines(), start=1))
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    nul = data.find(b"\x00")
    if nul >= 0:
        raise ScenarioError(f"{key}: {path} is not a text file (it holds NUL bytes, at byte"
                            f" {nul}); give a CSV text file of x, y lines")
    out = []
    for lineno, raw in enumerate(data.splitlines(), start=1):
        try:
            out.append((lineno, raw.decode("utf-8")))
        except UnicodeDecodeError as exc:
            if raw.lstrip().startswith(b"#"):
                continue  # a comment in another encoding: nothing in it is read
            raise ScenarioError(f"{key}: line {lineno} of {path} is not UTF-8 text (byte"
                                f" 0x{raw[exc.start]:02x}); save the file as UTF-8") from None
    return out


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
    # Rounded corners shape the wheel itself only when the track is to fit them; else they
    # are the simulated wheel's edge radius on the track solved for sharp corners.
    cr = float(spec.corner_radius_m) if spec.fit_track_to_corners else 0.0
    return outline_from_spec(spec, "wheel", corner_radius=cr)


def _is_drawing(path: str) -> bool:
    """True for a drawing file (its reader module is imported only for outlines from files)."""
    from ridesim.scenario.drawing import is_drawing

    return is_drawing(path)


def outline_from_spec(spec: OutlineSpec, section: str, *, corner_radius: float = 0.0) -> Wheel:
    """Build the outline of a ``[wheel]`` or a ``[hub]`` (the same shapes and keys).

    Parameters
    ----------
    spec : OutlineSpec
        Validated section (a :class:`WheelSpec` or a :class:`HubSpec`).
    section : str
        ``"wheel"`` or ``"hub"``: the key prefix of error messages.
    corner_radius : float
        Polygon corners rounded to this radius [m] (0: sharp).

    Returns
    -------
    Wheel
        The outline about its axle (a hub: about its centre).
    """
    s = spec.shape
    ax = spec.axle_m
    if s == "polygon":
        if spec.vertices_m is not None:
            return _wrap(section, Wheel.polygon_from_vertices, spec.vertices_m, axle=ax,
                         corner_radius=corner_radius)
        return _wrap(section, Wheel.polygon, spec.sides, apothem=spec.apothem_m,
                     circumradius=spec.circumradius_m, side=spec.side_m, axle=ax,
                     corner_radius=corner_radius)
    if s == "ellipse":
        return _wrap(section, Wheel.ellipse, spec.semi_axes_m, axle=ax)
    if s == "circle":
        return _wrap(section, Wheel.circle, spec.radius_m, axle=ax)
    if s == "polar":
        return _wrap(f"{section}.radius_formula", Wheel.polar, spec.radius_formula)
    if s == "harmonic":
        try:
            return Wheel.harmonic(float(spec.mean_radius_m or 0.0), spec.harmonics or ())
        except RidesimError as exc:  # its messages name the argument: harmonics, mean_radius
            raise type(exc)(f"{section}.{exc}") from None
    pts: np.ndarray | tuple[tuple[float, float], ...]
    if spec.file is not None and _is_drawing(spec.file):
        from ridesim.scenario.drawing import read_drawing

        drawn = read_drawing(spec.file, f"{section}.file", layer=spec.layer, ident=spec.id,
                             units=spec.units)
        pts = drawn.points_m
        if ax is None:
            if drawn.axle_m is None:
                raise ScenarioError(f"{section}.file: {Path(spec.file).name} has no circle inside the"
                                    f" outline to mark the centre; give {section}.axle_m = [x, y]"
                                    " (m, drawing frame)")
            ax = drawn.axle_m
    else:
        pts = _listed_points(spec, section)
    if ax is None:
        ax = (0.0, 0.0)
    return _wrap(section, Wheel.outline, pts, axle=ax, **_corner_args(spec))


def _corner_args(spec) -> dict:
    out = {} if spec.corner_angle_deg is None else {"corner_angle_deg": spec.corner_angle_deg}
    if spec.corners is not None:
        out["corners"] = spec.corners if isinstance(spec.corners, str) else list(spec.corners)
    return out


def _listed_points(spec: OutlineSpec | TrackSpec, section: str) -> np.ndarray | tuple:
    """The points of an outline or profile given inline (``points_m``) or as a CSV ``file``."""
    if spec.points_m is not None:
        return spec.points_m
    if spec.file is not None:
        return read_points_csv(spec.file, f"{section}.file")
    raise ScenarioError(f"{section}: give its outline as {section}.points_m or {section}.file")


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
    pts: np.ndarray | tuple[tuple[float, float], ...]
    if spec.file is not None and _is_drawing(spec.file):
        from ridesim.scenario.drawing import read_profile_drawing

        pts = read_profile_drawing(spec.file, "track.file", layer=spec.layer, ident=spec.id,
                                   units=spec.units)
    else:
        pts = _listed_points(spec, "track")
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
        wheel = wheel_from_spec(sc.wheel)
        where = "wheel.radius_formula" if sc.wheel.shape == "polar" else "wheel"
        _check_size(where, wheel, sc.wheel.corner_radius_m)
        return _check_pair(where, _wrap("wheel", track_for, wheel))
    if sc.track is None:
        raise ScenarioError("the scenario needs a [wheel] with its shape or a [track]")
    t = track_from_spec(sc.track)
    where = f"track ({sc.track.shape})"
    if sc.track.depth_m is not None:
        pair = _wrap("track.depth_m", wheel_for, t, depth=sc.track.depth_m)
    else:
        pair = _wrap("track.lobes", wheel_for, t, lobes=sc.track.lobes or 1)
    if pair.closed:  # an unclosed pair has no wheel; the check says so
        _check_size(where, pair.wheel, sc.wheel.corner_radius_m if sc.wheel is not None else None)
    return _check_pair(where, pair)


def _check_size(where: str, wheel: Wheel, corner_radius_m: float | None = None, *,
                what: str = "wheel") -> None:
    """Refuse a wheel whose radius is not finite or lies outside the sizes ridesim computes with.

    The limits are :data:`~ridesim.scenario.schema.MIN_LENGTH_M` and
    :data:`~ridesim.scenario.schema.MAX_LENGTH_M`, as for every length key: a formula or a
    solved wheel can reach sizes no key would accept (``1e-300 + 1e-301*cos(phi)``).
    """
    from ridesim.scenario.schema import MAX_LENGTH_M, MIN_LENGTH_M

    with np.errstate(all="ignore"):
        r = np.asarray(wheel.radius(np.linspace(0.0, 2.0 * np.pi, 720, endpoint=False)), float)
    if not np.all(np.isfinite(r)):
        raise ScenarioError(f"{where}: the {what}'s radius is not a finite number at every angle;"
                            " check the formula or the values")
    lo, hi = float(r.min()), float(r.max())
    if lo < MIN_LENGTH_M * (1.0 - 1e-9) or hi > MAX_LENGTH_M * (1.0 + 1e-9):
        raise ScenarioError(f"{where}: the {what}'s radius runs from {lo:.3g} to {hi:.3g} m,"
                            f" outside the sizes ridesim computes with ({MIN_LENGTH_M:g} to"
                            f" {MAX_LENGTH_M:g} m); check the values and their units")
    if corner_radius_m is not None and corner_radius_m >= lo:
        raise ScenarioError(f"wheel.corner_radius_m = {corner_radius_m:g} m is not smaller than the"
                            f" wheel's least radius {lo:.4g} m: a rounded corner must fit inside"
                            " the wheel; give a radius of a few per cent of it (0: the default)")


def _check_pair(where: str, pair: RollingPair) -> RollingPair:
    """Refuse a solved pair whose period or revolution length is not a finite usable length."""
    from ridesim.scenario.schema import MAX_LENGTH_M, MIN_LENGTH_M

    figures = [("track period", pair.track.period)]
    if pair.closed:
        figures.append(("revolution length", pair.revolution_length))
    for name, v in figures:
        v = float(v)
        if not (np.isfinite(v) and MIN_LENGTH_M <= v <= 1000.0 * MAX_LENGTH_M):
            raise ScenarioError(f"{where}: the solved {name} is {v:.3g} m, outside the lengths"
                                " ridesim computes with; check the values and their units")
    return pair


def solve_hub_scenario(sc: Scenario) -> HubPair:
    """Solve a hub path's pair from its given side: the wheel, the hub, or a speed ratio.

    A ``[wheel]`` shape: the hub (or ring) for it (:func:`~ridesim.solve.hub.hub_for`). A
    ``[hub]``: the wheel for it (:func:`~ridesim.solve.hub.wheel_for_hub` with ``hub.lobes``;
    a circle hub: the circle wheel that gives ``path.ratio`` or ``path.centre_distance_m``).
    A ``[ratio]``: both pitch curves (:func:`~ridesim.solve.hub.gears_for_ratio` at
    ``path.centre_distance_m``). Every job goes on from the pair alike.

    Parameters
    ----------
    sc : Scenario
        Validated scenario with ``path.kind = "hub"``.

    Returns
    -------
    HubPair
    """
    p = sc.path
    if not p.is_hub:
        raise ScenarioError("a hub solve needs path.kind = \"hub\"")
    if sc.hub is not None:
        return _pair_for_hub(sc.hub, p)
    if sc.ratio is not None:
        return _pair_for_ratio(sc.ratio, p)
    if sc.wheel is None or sc.wheel.shape is None:
        raise ScenarioError("a hub path needs a [wheel] with its shape, a [hub] or a [ratio]")
    w = wheel_from_spec(sc.wheel)
    return _hub_for_wheel(w, sc)


def _hub_for_wheel(w: Wheel, sc: Scenario) -> HubPair:
    p = sc.path
    if p.centre_distance_m is not None:
        return _wrap("path.centre_distance_m", hub_for, w, centre_distance=p.centre_distance_m,
                     side=p.side)
    return _wrap("path.ratio", hub_for, w, ratio=p.ratio if p.ratio is not None else 1, side=p.side)


def _pair_for_hub(spec: HubSpec, p: PathSpec) -> HubPair:
    """The wheel for the scenario's ``[hub]``, with one-line errors naming the key to change."""
    hub = outline_from_spec(spec, "hub")
    _check_size("hub", hub, what="hub")
    if hub.is_round:  # any circle wheel rolls on it: path.ratio or centre_distance_m sizes it
        rho0 = float(hub.radius(0.0))
        if p.centre_distance_m is not None:
            E = float(p.centre_distance_m)
            R = E - rho0 if p.side == "outside" else rho0 - E
            if not R > 0:
                need = f"> {rho0:.6g} m" if p.side == "outside" else f"< {rho0:.6g} m"
                raise ScenarioError(f"path.centre_distance_m = {E:.6g} m leaves no room for a wheel on"
                                    f" a circle hub of radius {rho0:.6g} m; use a centre distance"
                                    f" {need} (the hub's radius plus or minus the wheel's)")
        else:
            k = float(p.ratio) if p.ratio is not None else 1.0
            R = rho0 / k  # ratio = wheel turns per hub turn = rho0 / R (rolling circles)
        _check_size("hub", Wheel.circle(R), what="wheel")
        pair = _wrap("path.ratio", hub_for, Wheel.circle(R), ratio=rho0 / R, side=p.side)
        pair.solved_from = "hub"
        return pair
    lobes = int(spec.lobes if spec.lobes is not None else 1)
    pair = _wrap("hub.lobes", wheel_for_hub, hub, lobes=lobes, side=p.side)
    if not pair.closed:
        raise ScenarioError(f"hub.lobes = {lobes}: no wheel closes on this hub ({pair.closure_gap_rad:+.3g}"
                            " rad from a full turn); try another lobes count")
    _check_size("hub.lobes", pair.wheel, what="solved wheel")
    return pair


def _pair_for_ratio(spec: RatioSpec, p: PathSpec) -> HubPair:
    """Both pitch curves for the scenario's ``[ratio]`` at ``path.centre_distance_m``."""
    key = "ratio.formula" if spec.formula is not None else "ratio.points_rad"
    if p.centre_distance_m is None:
        raise ScenarioError("[ratio] needs path.centre_distance_m (the distance between the gear"
                            " centres)")
    given = spec.given if isinstance(spec.given, str) else np.asarray(spec.given, dtype=float)
    pair = _wrap(key, gears_for_ratio, given, centre_distance=p.centre_distance_m, side=p.side)
    _check_size(key, pair.wheel, what="driving pitch curve")
    return pair


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
        _check_overlap(veh.axles, veh.wheelbase_m, pair)
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
        _check_overlap(veh.axles, veh.wheelbase_m, pair)
        return sc
    _check_overlap(veh.axles, wb, pair)
    return replace(sc, vehicle=replace(veh, wheelbase_m=wb))


def _check_overlap(axles: int, wheelbase_m: float, pair: RollingPair) -> None:
    """Refuse neighbouring wheels that must run into each other.

    Each wheel turns through every angle, so at some moment a wheel's farthest rim point
    (``r_max`` from its axle) faces the neighbouring axle and lies ``wheelbase - r_max`` from
    it; below ``r_min + r_max`` that point is inside the neighbour's inscribed circle: the
    wheels (in one plane, on one track) overlap.
    """
    if axles < 2:
        return
    with np.errstate(all="ignore"):
        r = np.asarray(pair.wheel.radius(np.linspace(0.0, 2.0 * np.pi, 720, endpoint=False)))
    reach = float(r.min() + r.max())
    if wheelbase_m < reach:
        raise ScenarioError(
            f"vehicle.wheelbase_m = {wheelbase_m:.6g} m is less than r_min + r_max ="
            f" {reach:.6g} m of the wheel: neighbouring wheels on one track would run into"
            " each other; lengthen the wheelbase (a whole-period one from `ridesim solve`)")


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

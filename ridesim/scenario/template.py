"""A commented scenario file with every key, generated from the key table.

``ridesim new NAME --wheel SHAPE`` (or ``--track SHAPE``) writes one: the keys the shape
needs are set to an example value, every other key of the used sections is written
commented out at its default, and each line says the key's unit, meaning, default,
bounds and plausible range, from the same rows (:data:`ridesim.scenario.schema.KEYS`)
as ``docs/scenario-keys.md``, so the two cannot drift.
"""

from __future__ import annotations

from typing import Any

from ridesim.errors import InputError
from ridesim.scenario.schema import KEYS, REQUIRED, SECTIONS, TRACK_SHAPES, WHEEL_SHAPES
from ridesim.scenario.toml_text import toml_value

__all__ = ["scenario_template", "EXAMPLES"]

#: Example values of the keys a shape needs (a made-up build that loads and solves).
EXAMPLES: dict[str, Any] = {
    "wheel.sides": 6,
    "wheel.apothem_m": 0.12,
    "wheel.semi_axes_m": (0.2, 0.15),
    "wheel.radius_m": 0.1,
    "wheel.radius_formula": "0.1 + 0.01*cos(3*phi)",
    "wheel.mean_radius_m": 0.1,
    "wheel.harmonics": ((3, 0.05, 0.0), (6, 0.0, 0.01)),
    "wheel.points_m": ((0.1, 0.0), (0.0, 0.08), (-0.1, 0.0), (0.0, -0.08)),
    "track.amplitude_m": 0.02,
    "track.wavelength_m": 0.3,
    "track.rise_m": 0.02,
    "track.run_m": 0.2,
    "track.formula": "0.02*cos(2*pi*x/0.3)",
    "track.period_m": 0.3,
    "track.points_m": ((0.0, 0.0), (0.1, -0.02), (0.3, 0.0)),
    "ratio.formula": "1 + 0.3*cos(2*theta)",
    "path.kind": "hub",
    "path.centre_distance_m": 0.12,
}
EXAMPLES.update({"hub." + k.split(".", 1)[1]: v for k, v in list(EXAMPLES.items())
                 if k.startswith("wheel.")})

# Keys of a shape that are alternatives to the example's (written commented out).
_ALTERNATIVES = {"wheel.circumradius_m", "wheel.side_m", "wheel.vertices_m", "wheel.file", "track.file",
                 "hub.circumradius_m", "hub.side_m", "hub.vertices_m", "hub.file", "ratio.points_rad"}
_WHEEL_MATERIAL = ("thickness_m", "density_kg_m3", "mass_kg", "inertia_kg_m2")


def _comment(k) -> str:
    parts = [k.unit] if k.unit not in ("", "-") else []
    parts.append(k.doc)
    if k.default not in (None, REQUIRED):
        parts.append(f"default {toml_value(k.default)}")
    bounds = ", ".join(f"{'>' if op == 'gt' else '>=' if op == 'ge' else '<' if op == 'lt' else '<='}"
                       f" {v:g}" for op, v in k.bounds.items())
    if bounds:
        parts.append(f"must be {bounds}")
    if k.choices:
        parts.append("one of " + " | ".join(k.choices))
    if k.plausible is not None:
        parts.append(f"real builds {k.plausible[0]:g} to {k.plausible[1]:g} ({k.source})")
    return "; ".join(parts)


def scenario_template(name: str, wheel: str | None = None, track: str | None = None,
                      hub: str | None = None, ratio: bool = False) -> str:
    """Text of a commented scenario file.

    Parameters
    ----------
    name : str
        Scenario name.
    wheel : str, optional
        Wheel shape (one of :data:`WHEEL_SHAPES`); default ``"polygon"`` unless ``track``.
    track : str, optional
        Track shape (one of :data:`TRACK_SHAPES`): the wheel is then solved for it.
    hub : str, optional
        Hub shape (one of :data:`WHEEL_SHAPES`): a hub path whose wheel is solved for the hub.
    ratio : bool
        A gear pair designed for a required speed ratio (``[ratio]``): both curves solved.

    Returns
    -------
    str
        TOML text that loads as it is.
    """
    if sum(x is not None for x in (wheel, track, hub)) + bool(ratio) > 1:
        raise InputError("give one of --wheel, --track, --hub, --ratio: the solver derives the rest")
    if hub is not None and hub not in WHEEL_SHAPES:
        raise InputError(f"--hub must be one of {', '.join(WHEEL_SHAPES)}, got {hub!r}")
    if track is None and wheel is None and hub is None and not ratio:
        wheel = "polygon"
    if wheel is not None and wheel not in WHEEL_SHAPES:
        raise InputError(f"--wheel must be one of {', '.join(WHEEL_SHAPES)}, got {wheel!r}")
    if track is not None and track not in TRACK_SHAPES:
        raise InputError(f"--track must be one of {', '.join(TRACK_SHAPES)}, got {track!r}")
    given, shape = (("wheel", wheel) if wheel is not None else ("track", track) if track is not None
                    else ("hub", hub) if hub is not None else ("ratio", None))
    hub_path = given in ("hub", "ratio")
    lines = [
        f"# {name}: a ridesim scenario. Units are SI; every key is listed with its unit, meaning,",
        "# default and ranges (docs/scenario-keys.md has the same table). Lines starting with '#'",
        "# are comments: remove the '#' to set a key.",
        f'name = "{name}"',
        'description = ""',
    ]
    for section in SECTIONS:
        rows = [k for k in KEYS if k.section == section]
        if section in ("hub", "ratio") and section != given:
            continue  # the given side of a hub path only
        if section == "track" and hub_path:
            continue  # a hub path has no track
        if section in ("wheel", "track", "hub", "ratio"):
            if section == given:
                rows = [k for k in rows if not k.shapes or shape in k.shapes]
            elif section == "wheel":  # beside [track], [hub], [ratio]: the wheel's material only
                rows = [k for k in rows if k.name in _WHEEL_MATERIAL]
            else:  # beside [wheel]: the track's as-built errors only
                rows = [k for k in rows if k.name in ("height_error_m", "error_seed", "joint_step_m",
                                                      "section_length_m")]
        lines += ["", f"[{section}]"]
        for k in rows:
            if k.name == "shape":
                if section == given:
                    others = TRACK_SHAPES if section == "track" else WHEEL_SHAPES
                    lines.append(f'shape = "{shape}"  # one of {" | ".join(others)}')
                continue
            if k.name == "axle_m" and shape in ("polar", "harmonic"):
                continue
            if k.path == "hub.lobes" and shape == "circle":
                continue  # a circle hub's wheel is sized by path.ratio
            lines.append(f"# {_comment(k)}")
            example = section == given or (hub_path and k.path == "path.kind") or (
                given == "ratio" and k.path == "path.centre_distance_m")
            if k.path in EXAMPLES and k.path not in _ALTERNATIVES and example:
                lines.append(f"{k.name} = {toml_value(EXAMPLES[k.path])}")
            elif k.default not in (None, REQUIRED):
                lines.append(f"# {k.name} = {toml_value(k.default)}")
            else:
                lines.append(f"# {k.name} =")
    return "\n".join(lines) + "\n"

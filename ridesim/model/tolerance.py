"""Manufacturing tolerance: the wheel and the track as built rather than as drawn.

Pure functions of arrays (no I/O, no pymunk). The simulator applies them to its
world (:mod:`ridesim.sim.world`); the scenario keys that feed them are
``[wheel] scale`` and ``axle_error_m``, and ``[track] height_error_m``,
``error_seed``, ``joint_step_m`` and ``section_length_m``.

The as-built wheel
    The nominal outline scaled about the nominal axle by ``scale`` (a wheel cut
    0.2 % large: 1.002), with the axle hole drilled at nominal + ``e`` in the wheel
    frame. In the frame of the as-built axle an outline point ``p`` is therefore at
    ``scale * p - e``. The plate's mass scales with its area (``scale^2``), its
    inertia about the centre of mass with ``scale^4`` (mass times a length
    squared), and the inertia about the as-built axle follows by the
    parallel-axis theorem.

The as-built track
    The track is laid in straight-jointed sections of ``section_length_m``,
    section ``k`` covering ``[k L, (k + 1) L)`` (``x = 0`` is a joint). Section ``k``
    sits higher than drawn by ``h_k = height_error_m * z_k + joint_step_m * (k mod 2)``,
    with ``z_k`` a standard normal draw from a generator seeded by
    ``(error_seed, k + 2**20)``: the same section gets the same error whatever
    stretch of track is built. Every joint is a step of ``h_k - h_(k-1)``; with
    ``height_error_m = 0`` the steps alternate ``+joint_step_m`` (into an odd
    section) and ``-joint_step_m``.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ridesim.errors import InputError
from ridesim.model.checks import finite as _finite
from ridesim.model.checks import point
from ridesim.model.wheel import MassProperties
from ridesim.records import record
from ridesim.validate import is_integer

__all__ = [
    "SECTION_SEED_OFFSET",
    "AsBuilt",
    "section_index",
    "section_offsets_m",
    "track_height_error_m",
    "joint_positions_m",
    "as_built_outline",
    "as_built_mass",
]

SECTION_SEED_OFFSET = 2**20
"""Added to a section index to make the (non-negative) second seed word of its draw."""


def _seed(value) -> int:
    if not is_integer(value) or int(value) < 0:
        raise InputError(f"error_seed must be an integer >= 0, got {value!r}")
    return int(value)


def _pair(name: str, value) -> tuple[float, float]:
    p = point(name, value)
    return float(p[0]), float(p[1])


def section_index(x_m, section_length_m: float) -> np.ndarray:
    """Index ``k`` of the track section holding each ``x`` (section ``k`` covers ``[k L, (k+1) L)``).

    Parameters
    ----------
    x_m : array_like
        Positions along the track [m].
    section_length_m : float
        Section length ``L`` [m] (> 0).

    Returns
    -------
    ndarray of int64
        Same shape as ``x_m``.
    """
    L = _finite("section_length_m", section_length_m, gt=0.0)
    return np.floor(np.asarray(x_m, dtype=float) / L).astype(np.int64)


def section_offsets_m(k, *, height_error_m: float, error_seed: int, joint_step_m: float) -> np.ndarray:
    """Height error [m] of whole track sections by index.

    ``h_k = height_error_m * z_k + joint_step_m * (k mod 2)``, ``z_k`` the first standard
    normal of ``numpy.random.default_rng([error_seed, k + 2**20])``.

    Parameters
    ----------
    k : array_like of int
        Section indices (``>= -2**20``).
    height_error_m : float
        Standard deviation [m] of the random height of a section (>= 0).
    error_seed : int
        Seed (>= 0): same seed, same track.
    joint_step_m : float
        Extra height [m] of every odd section (a step at every joint).

    Returns
    -------
    ndarray
        Heights [m], same shape as ``k``.
    """
    sd = _finite("height_error_m", height_error_m, ge=0.0)
    step = _finite("joint_step_m", joint_step_m)
    seed = _seed(error_seed)
    k = np.asarray(k, dtype=np.int64)
    out = step * np.mod(k, 2).astype(float)
    if sd > 0 and k.size:
        if int(k.min()) < -SECTION_SEED_OFFSET:
            raise InputError(
                f"track section index {int(k.min())} is below -2**20; the track reaches too far"
                " back for the section seeds: lengthen section_length_m"
            )
        uniq, inv = np.unique(k, return_inverse=True)
        z = np.array([np.random.default_rng([seed, int(j) + SECTION_SEED_OFFSET]).standard_normal()
                      for j in uniq])
        out = out + sd * z[inv.reshape(k.shape)]
    return out


def track_height_error_m(x_m, *, height_error_m: float, error_seed: int, joint_step_m: float,
                         section_length_m: float) -> np.ndarray:
    """Height error [m] of the as-built track at each ``x`` (vectorised): constant per section.

    Parameters
    ----------
    x_m : array_like
        Positions along the track [m].
    height_error_m : float
        Standard deviation [m] of each section's random height (>= 0).
    error_seed : int
        Seed of the draws (>= 0).
    joint_step_m : float
        Extra height [m] of every odd section.
    section_length_m : float
        Section length [m] (> 0).

    Returns
    -------
    ndarray
        Height to add to the drawn track [m], same shape as ``x_m``.

    Examples
    --------
    >>> track_height_error_m([0.1, 0.9, 1.1], height_error_m=0.0, error_seed=0,
    ...                      joint_step_m=0.002, section_length_m=1.0).tolist()
    [0.0, 0.0, 0.002]
    """
    k = section_index(x_m, section_length_m)
    return section_offsets_m(k, height_error_m=height_error_m, error_seed=error_seed,
                             joint_step_m=joint_step_m)


def joint_positions_m(x_lo: float, x_hi: float, section_length_m: float) -> np.ndarray:
    """Positions [m] of the section joints ``k L`` with ``x_lo <= k L <= x_hi``.

    Parameters
    ----------
    x_lo, x_hi : float
        Range [m].
    section_length_m : float
        Section length ``L`` [m] (> 0).

    Returns
    -------
    ndarray
        Increasing joint positions [m] (empty when none falls in the range).
    """
    L = _finite("section_length_m", section_length_m, gt=0.0)
    lo, hi = float(x_lo), float(x_hi)
    k0, k1 = math.ceil(lo / L), math.floor(hi / L)
    if k1 < k0:
        return np.zeros(0)
    return L * np.arange(k0, k1 + 1, dtype=float)


def as_built_outline(points_m, scale: float, axle_error_m) -> np.ndarray:
    """Outline points in the as-built axle frame: ``scale * p - e``.

    Parameters
    ----------
    points_m : array_like, shape (N, 2)
        Nominal outline points [m] in the nominal axle frame.
    scale : float
        As-built size over nominal size (dimensionless, > 0); scaling is about the nominal axle.
    axle_error_m : pair of float
        As-built axle hole minus nominal axle ``e`` [m], wheel frame.

    Returns
    -------
    ndarray, shape (N, 2)
        Points [m] about the as-built axle.
    """
    s = _finite("scale", scale, gt=0.0)
    e = np.array(_pair("axle_error_m", axle_error_m))
    p = np.asarray(points_m, dtype=float)
    if p.ndim != 2 or p.shape[1] != 2:
        raise InputError(f"points_m must be an (N, 2) array in metres, got shape {p.shape}")
    return s * p - e


def as_built_mass(mass: MassProperties, scale: float, axle_error_m) -> MassProperties:
    """Mass properties of the as-built plate wheel.

    A plate scaled by ``s`` has ``s^2`` the area and mass and ``s^4`` the inertia about its
    centre of mass; its centre of mass moves to ``s c - e`` from the as-built axle, and the
    inertia about that axle is ``J_cm + m |s c - e|^2`` (parallel-axis theorem).

    Parameters
    ----------
    mass : MassProperties
        Nominal mass [kg], inertia about the nominal axle [kg m^2], centre of mass ``c`` [m]
        from the nominal axle, area [m^2].
    scale : float
        As-built size over nominal size (dimensionless, > 0).
    axle_error_m : pair of float
        As-built axle hole minus nominal axle ``e`` [m], wheel frame.

    Returns
    -------
    MassProperties
        About the as-built axle.
    """
    s = _finite("scale", scale, gt=0.0)
    ex, ey = _pair("axle_error_m", axle_error_m)
    m, j = float(mass.mass_kg), float(mass.inertia_kg_m2)
    cx, cy = float(mass.com_m[0]), float(mass.com_m[1])
    j_cm = j - m * (cx * cx + cy * cy)
    m2 = m * s * s
    cx2, cy2 = s * cx - ex, s * cy - ey
    j2 = j_cm * s**4 + m2 * (cx2 * cx2 + cy2 * cy2)
    return MassProperties(mass_kg=m2, inertia_kg_m2=j2, com_m=(cx2, cy2),
                          area_m2=float(mass.area_m2) * s * s)


@record
class AsBuilt:
    """The manufacturing errors of one build.

    Attributes
    ----------
    scale : float
        As-built wheel size over nominal (dimensionless, > 0).
    axle_error_m : tuple of float
        As-built axle hole minus nominal [m], wheel frame.
    height_error_m : float
        Standard deviation [m] of each track section's random height (>= 0).
    error_seed : int
        Seed of the section draws (>= 0).
    joint_step_m : float
        Extra height [m] of every odd track section.
    section_length_m : float
        Track section length [m] (> 0); sections start at ``x = 0``.
    """

    scale: float = 1.0
    axle_error_m: tuple[float, float] = (0.0, 0.0)
    height_error_m: float = 0.0
    error_seed: int = 0
    joint_step_m: float = 0.0
    section_length_m: float = 1.0

    def __post_init__(self) -> None:
        object.__setattr__(self, "scale", _finite("scale", self.scale, gt=0.0))
        object.__setattr__(self, "axle_error_m", _pair("axle_error_m", self.axle_error_m))
        object.__setattr__(self, "height_error_m", _finite("height_error_m", self.height_error_m, ge=0.0))
        object.__setattr__(self, "error_seed", _seed(self.error_seed))
        object.__setattr__(self, "joint_step_m", _finite("joint_step_m", self.joint_step_m))
        object.__setattr__(self, "section_length_m",
                           _finite("section_length_m", self.section_length_m, gt=0.0))

    @classmethod
    def from_scenario(cls, scenario) -> AsBuilt:
        """Read the errors from a scenario's ``[wheel]`` and ``[track]`` sections.

        Either section may be None or shape-less; missing keys take the nominal defaults.

        Parameters
        ----------
        scenario : Scenario
            Validated scenario (any object with ``wheel`` and ``track`` attributes).

        Returns
        -------
        AsBuilt
        """
        kw: dict[str, Any] = {}
        w = getattr(scenario, "wheel", None)
        if w is not None:
            kw["scale"] = getattr(w, "scale", 1.0)
            kw["axle_error_m"] = tuple(getattr(w, "axle_error_m", (0.0, 0.0)))
        t = getattr(scenario, "track", None)
        if t is not None:
            for key in ("height_error_m", "error_seed", "joint_step_m", "section_length_m"):
                if hasattr(t, key):
                    kw[key] = getattr(t, key)
        return cls(**kw)

    @property
    def wheel_is_nominal(self) -> bool:
        """True when the wheel is as drawn (scale 1, no axle error)."""
        return self.scale == 1.0 and self.axle_error_m == (0.0, 0.0)

    @property
    def track_is_nominal(self) -> bool:
        """True when the track is as drawn (no height error, no joint step)."""
        return self.height_error_m == 0.0 and self.joint_step_m == 0.0

    @property
    def is_nominal(self) -> bool:
        """True when both wheel and track are as drawn."""
        return self.wheel_is_nominal and self.track_is_nominal

    def track_error_m(self, x_m) -> np.ndarray:
        """Height error [m] of the track at ``x_m`` [m] (see :func:`track_height_error_m`).

        Parameters
        ----------
        x_m : array_like
            Positions [m].

        Returns
        -------
        ndarray
        """
        return track_height_error_m(x_m, height_error_m=self.height_error_m, error_seed=self.error_seed,
                                    joint_step_m=self.joint_step_m, section_length_m=self.section_length_m)

    def outline(self, points_m) -> np.ndarray:
        """As-built outline [m] about the as-built axle (see :func:`as_built_outline`).

        Parameters
        ----------
        points_m : array_like, shape (N, 2)
            Nominal outline points [m] about the nominal axle.

        Returns
        -------
        ndarray, shape (N, 2)
        """
        return as_built_outline(points_m, self.scale, self.axle_error_m)

    def mass(self, mass: MassProperties) -> MassProperties:
        """As-built mass properties (see :func:`as_built_mass`).

        Parameters
        ----------
        mass : MassProperties
            Nominal mass properties about the nominal axle.

        Returns
        -------
        MassProperties
        """
        return as_built_mass(mass, self.scale, self.axle_error_m)

    def to_dict(self) -> dict:
        """The settings as plain values with unit-suffixed keys.

        Returns
        -------
        dict
        """
        return {
            "is_nominal": self.is_nominal,
            "scale": self.scale,
            "axle_error_m": [self.axle_error_m[0], self.axle_error_m[1]],
            "height_error_m": self.height_error_m,
            "error_seed": self.error_seed,
            "joint_step_m": self.joint_step_m,
            "section_length_m": self.section_length_m,
        }

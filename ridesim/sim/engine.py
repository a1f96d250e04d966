"""The small interface every simulation engine offers, and the probe record it fills.

An engine is built from a scenario and its solved pair, advanced with
:meth:`Engine.step`, and read with :meth:`Engine.probes`. The ride metrics
(:mod:`ridesim.metrics.ride`) take only a :class:`Probes` record, so two engines
(the rigid-body world and, say, an analytic model sampled on the same clock)
are compared through the same functions.

Sign conventions of the probes: x forward along the track, y up (normal to the
track line), wheel angle and angular speed positive clockwise (rolling
forward), chassis pitch positive nose-up (anticlockwise), shaft torque positive
when it drives the vehicle forward, slip speed positive when the rim slides
forward over the track (skidding) and negative when it spins backwards.
"""

from __future__ import annotations

import abc
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

__all__ = ["Probes", "Engine"]


@dataclass
class Probes:
    """Time series sampled once per step, and the facts needed to read them.

    Attributes
    ----------
    time_s : ndarray, shape (N,)
        Time at the end of each step [s].
    axle_x_m, axle_y_m : ndarray, shape (N, A)
        Axle positions [m] per axle (rear to front); the ideal roll keeps ``y = 0``.
    wheel_angle_rad : ndarray, shape (N, A)
        Clockwise wheel rotation [rad] from the wheel's defining pose.
    wheel_rate_rad_s : ndarray, shape (N, A)
        Clockwise wheel angular speed [rad/s].
    pitch_rad : ndarray, shape (N,)
        Chassis pitch [rad], nose up positive.
    speed_m_s : ndarray, shape (N,)
        Ground speed [m/s] of the chassis reference point along the track.
    seat_ax_m_s2, seat_ay_m_s2 : ndarray, shape (N,)
        Horizontal and vertical acceleration [m/s^2] of the seat point (gravity not included).
    slip_speed_m_s : ndarray, shape (N, A)
        Tangential speed [m/s] of the rim point in contact relative to the track (NaN when the
        wheel has no contact).
    normal_force_N : ndarray, shape (N, A)
        Total normal contact force [N] on each wheel.
    contact : ndarray of bool, shape (N, A)
        True when the wheel touches the track in that step.
    contact_x_m : ndarray, shape (N, A)
        x [m] of the main contact point (NaN without contact).
    shaft_torque_Nm : ndarray, shape (N, S)
        Torque [N m] the drive applied to each shaft.
    shaft_axles : tuple of tuple of int
        Axles turned by each shaft (one per shaft unless the axles are coupled).
    dt_s : float
        Step [s].
    settle_s : float
        Initial time [s] the ride metrics leave out.
    target_speed_m_s : float or None
        Commanded ground speed [m/s] (speed mode), else None.
    info : dict
        Engine-specific facts (build settings, tolerances) with unit-suffixed keys.
    rolling_angle_rad : ndarray, shape (N, A), or None
        Wheel angle [rad] that rolling without slip on the ideal pair gives with the axle at
        ``axle_x_m`` (the pair's ``wheel_angle``); None when the engine does not know it.
        ``wheel_angle_rad - rolling_angle_rad`` is the wheel's phase against its track.
    """

    time_s: np.ndarray
    axle_x_m: np.ndarray
    axle_y_m: np.ndarray
    wheel_angle_rad: np.ndarray
    wheel_rate_rad_s: np.ndarray
    pitch_rad: np.ndarray
    speed_m_s: np.ndarray
    seat_ax_m_s2: np.ndarray
    seat_ay_m_s2: np.ndarray
    slip_speed_m_s: np.ndarray
    normal_force_N: np.ndarray
    contact: np.ndarray
    contact_x_m: np.ndarray
    shaft_torque_Nm: np.ndarray
    shaft_axles: tuple
    dt_s: float
    settle_s: float
    target_speed_m_s: float | None = None
    info: dict = field(default_factory=dict)
    rolling_angle_rad: np.ndarray | None = None

    @property
    def steps(self) -> int:
        """Number of steps recorded."""
        return int(len(self.time_s))

    def columns(self) -> dict[str, np.ndarray]:
        """Flat named columns (unit-suffixed) for tables and CSV files.

        Returns
        -------
        dict of str to ndarray
            Each value has shape (N,).
        """
        out: dict[str, np.ndarray] = {"time_s": self.time_s}
        a = self.axle_x_m.shape[1]
        for i in range(a):
            out[f"axle{i}_x_m"] = self.axle_x_m[:, i]
            out[f"axle{i}_y_m"] = self.axle_y_m[:, i]
        for i in range(a):
            out[f"wheel{i}_angle_rad"] = self.wheel_angle_rad[:, i]
            out[f"wheel{i}_rate_rad_s"] = self.wheel_rate_rad_s[:, i]
        out["pitch_rad"] = self.pitch_rad
        out["speed_m_s"] = self.speed_m_s
        out["seat_ax_m_s2"] = self.seat_ax_m_s2
        out["seat_ay_m_s2"] = self.seat_ay_m_s2
        for i in range(a):
            out[f"wheel{i}_slip_speed_m_s"] = self.slip_speed_m_s[:, i]
            out[f"wheel{i}_normal_force_N"] = self.normal_force_N[:, i]
            out[f"wheel{i}_contact"] = self.contact[:, i].astype(np.int8)
            out[f"wheel{i}_contact_x_m"] = self.contact_x_m[:, i]
        for j in range(self.shaft_torque_Nm.shape[1]):
            out[f"shaft{j}_torque_Nm"] = self.shaft_torque_Nm[:, j]
        return out


class Engine(abc.ABC):
    """A simulation engine: build from a scenario and pair, step, read probes.

    Subclasses implement :meth:`from_scenario`, :meth:`step`, :meth:`probes` and the
    :attr:`steps_total`/:attr:`steps_done` counters; :meth:`run` is shared.
    """

    #: Short engine name recorded in results.
    name: str = "engine"

    @classmethod
    @abc.abstractmethod
    def from_scenario(cls, scenario, pair=None, **options) -> Engine:
        """Build the engine for a scenario.

        Parameters
        ----------
        scenario : Scenario
            Validated scenario.
        pair : RollingPair, optional
            The solved pair; solved from the scenario when None.
        **options
            Engine-specific build settings.

        Returns
        -------
        Engine
        """

    @property
    @abc.abstractmethod
    def steps_total(self) -> int:
        """Steps in the whole run (``duration_s / timestep_s``, rounded)."""

    @property
    @abc.abstractmethod
    def steps_done(self) -> int:
        """Steps taken so far."""

    @abc.abstractmethod
    def step(self, n: int) -> int:
        """Advance by up to ``n`` steps (not past the end of the run).

        Parameters
        ----------
        n : int
            Steps to take.

        Returns
        -------
        int
            Steps actually taken.
        """

    @abc.abstractmethod
    def probes(self) -> Probes:
        """The probe record of the steps taken so far.

        Returns
        -------
        Probes
        """

    def run(self, progress: Callable[[float], None] | None = None, chunk_s: float = 0.1) -> Probes:
        """Step to the end of the run and return the probes.

        Parameters
        ----------
        progress : callable, optional
            Called with the fraction done (0 to 1) after each chunk.
        chunk_s : float
            Simulated time [s] between progress calls.

        Returns
        -------
        Probes
        """
        total = self.steps_total
        dt = self.probes_dt_s()
        chunk = max(1, int(round(chunk_s / dt)))
        while self.steps_done < total:
            self.step(min(chunk, total - self.steps_done))
            if progress is not None:
                progress(self.steps_done / total)
        return self.probes()

    @abc.abstractmethod
    def probes_dt_s(self) -> float:
        """The step [s]."""

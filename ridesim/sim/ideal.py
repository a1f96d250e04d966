"""The analytic model as an engine: the ideal roll, probed like a simulation.

:class:`IdealEngine` moves the cart along the ideal kinematics (axles on the
axle line, each wheel at ``pair.wheel_angle`` of its own position, the drive's
speed profile exactly followed) and fills the same :class:`~ridesim.sim.engine.Probes`
record as the rigid-body engine, with the shaft torques and normal loads of the
analytic model (:class:`ridesim.assess.analytic.TorqueModel`). The ride metrics
can then be applied to both engines alike, so their figures compare one to one.
"""

from __future__ import annotations

import numpy as np

from ridesim.sim.engine import Engine, Probes

__all__ = ["IdealEngine"]


class IdealEngine(Engine):
    """Ideal rolling with analytic loads, behind the engine interface."""

    name = "ideal (analytic)"

    def __init__(self, probes: Probes) -> None:
        self._probes = probes
        self._done = 0

    @classmethod
    def from_scenario(cls, scenario, pair=None, **options) -> IdealEngine:
        """Tabulate the ideal run of a scenario.

        Parameters
        ----------
        scenario : Scenario
            Validated scenario (drive speed and acceleration, run duration and timestep).
        pair : RollingPair, optional
            The solved pair; solved from the scenario when None.
        **options
            None are used.

        Returns
        -------
        IdealEngine
        """
        from ridesim.assess.analytic import TorqueModel, analyze_cycle
        from ridesim.model.vehicle import axle_offsets_m
        from ridesim.scenario.build import resolve_wheelbase, solve_scenario, wheel_mass

        sc = scenario
        pair = solve_scenario(sc) if pair is None else pair
        sc = resolve_wheelbase(sc, pair)
        mp = wheel_mass(sc, pair.wheel)
        run, drv, veh = sc.run, sc.drive, sc.vehicle
        dt = float(run.timestep_s)
        n = int(round(run.duration_s / dt))
        t = dt * np.arange(1, n + 1)
        v_top = float(drv.speed_m_s)
        acc = float(drv.accel_m_s2)
        if acc > 0:
            t_ramp = v_top / acc
            v = np.minimum(acc * t, v_top)
            a = np.where(t < t_ramp, acc, 0.0)
            x = np.where(t < t_ramp, 0.5 * acc * t * t, 0.5 * acc * t_ramp**2 + v_top * (t - t_ramp))
        else:
            v = np.full(n, v_top)
            a = np.zeros(n)
            x = v_top * t
        offsets = axle_offsets_m(veh.axles, veh.wheelbase_m)
        model = TorqueModel(pair, sc, mp, v_top, acc if acc > 0 else 0.1)
        torque, _ = model.along(x, v, a)
        steady = analyze_cycle(pair, vehicle=veh, surface=sc.surface, wheel_mass=mp, drive=drv)
        ax = x[:, None] + offsets[None, :]
        theta = pair.wheel_angle(ax)
        rate = v[:, None] / pair.contact_radius(ax)
        L = pair.revolution_length
        normal = np.empty_like(ax)
        for i in range(len(offsets)):
            xw = np.mod(steady.wheel_x_m[i], L)
            order = np.argsort(xw, kind="stable")
            xs, keep = np.unique(xw[order], return_index=True)
            normal[:, i] = np.interp(np.mod(ax[:, i], L), xs, steady.normal_load_N[i][order[keep]],
                                     period=L)
        driven = list(model.cycle.driven)
        shafts: tuple[tuple[int, ...], ...]
        if veh.coupled:
            shafts = (tuple(driven),)
            shaft_torque = torque.sum(axis=0)[:, None]
        else:
            shafts = tuple((i,) for i in driven)
            shaft_torque = torque.T
        zeros = np.zeros(n)
        probes = Probes(
            time_s=t, axle_x_m=ax, axle_y_m=np.zeros_like(ax), wheel_angle_rad=theta,
            wheel_rate_rad_s=rate, pitch_rad=zeros.copy(), speed_m_s=v, seat_ax_m_s2=a.copy(),
            seat_ay_m_s2=zeros.copy(), slip_speed_m_s=np.zeros_like(ax), normal_force_N=normal,
            contact=np.ones(ax.shape, dtype=bool), contact_x_m=ax.copy(),
            shaft_torque_Nm=shaft_torque, shaft_axles=shafts, dt_s=dt,
            settle_s=float(run.settle_s), target_speed_m_s=v_top if drv.mode == "speed" else None,
            info={"engine": cls.name, "coupled": bool(veh.coupled)},
        )
        return cls(probes)

    @property
    def steps_total(self) -> int:
        """Steps in the whole run."""
        return self._probes.steps

    @property
    def steps_done(self) -> int:
        """Steps taken so far."""
        return self._done

    def step(self, n: int) -> int:
        """Advance by up to ``n`` steps (the run is tabulated: this only moves the counter).

        Parameters
        ----------
        n : int
            Steps to take.

        Returns
        -------
        int
            Steps actually taken.
        """
        k = max(0, min(int(n), self.steps_total - self._done))
        self._done += k
        return k

    def probes_dt_s(self) -> float:
        """The step [s]."""
        return self._probes.dt_s

    def probes(self) -> Probes:
        """The probe record of the steps taken so far."""
        p = self._probes
        k = self._done
        cut = {f: getattr(p, f)[:k] for f in (
            "time_s", "axle_x_m", "axle_y_m", "wheel_angle_rad", "wheel_rate_rad_s", "pitch_rad",
            "speed_m_s", "seat_ax_m_s2", "seat_ay_m_s2", "slip_speed_m_s", "normal_force_N",
            "contact", "contact_x_m", "shaft_torque_Nm")}
        return Probes(**cut, shaft_axles=p.shaft_axles, dt_s=p.dt_s, settle_s=p.settle_s,
                      target_speed_m_s=p.target_speed_m_s, info=dict(p.info))

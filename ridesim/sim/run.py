"""Stepping the pymunk world, sampling probes every step, the speed controller and the guard rails.

Per-step Python work is kept to a handful of C calls (see
:mod:`ridesim.sim.pymunk_adapter`, the one module that touches pymunk's
internals): every body's position, angle and velocities go straight into a
preallocated numpy array, and the contacts of the step (bodies, impulse,
normal, points) into a growing stream; each drive motor's accumulated impulse
is read, and in speed mode the controller sets the motors' torque. Everything
derived (slip speed, normal force, seat acceleration) is computed afterwards
with numpy.
"""

from __future__ import annotations

import math

import numpy as np

from ridesim.errors import InputError, SimulationError
from ridesim.sim.contacts import SLIP_LOAD_SHARE, contact_steps, per_wheel, rim_slip_m_s, wheel_contact_points
from ridesim.sim.engine import Engine, Probes
from ridesim.sim.pymunk_adapter import Recorder, float_view, make_recorder
from ridesim.sim.world import World, WorldOptions, build_world

__all__ = ["PymunkEngine", "SLIP_LOAD_SHARE", "SPEED_LOOP_TIME_S", "SPEED_INTEGRAL_TIME_S",
           "GUARD_EVERY_S", "speed_command"]

SPEED_LOOP_TIME_S = 0.01
"""Time constant [s] of the speed drive's proportional action on the ground-speed error."""

SPEED_INTEGRAL_TIME_S = 0.05
"""Integral time [s] of the speed drive (removes the steady speed error under a steady load)."""

GUARD_EVERY_S = 0.2
"""Simulated time [s] between guard-rail checks (tunnelling, NaN, blow-up)."""


def speed_command(states: np.ndarray, speed_col: int, row_len: int, *, speed_m_s: float,
                  accel_m_s2: float, dt_s: float, kp: float, ki: float, max_torque_Nm: float):
    """The speed drive: a PI controller on ground speed commanding shaft torque.

    The torque ``T = Kp e + Ki int(e) dt`` (``e`` the ground-speed error, clamped to the
    drive's torque limit, integration held while clamped) is applied to every driven shaft
    alike through its motor, held saturated at ``|T|``. ``Kp = r M / (n tau_p)`` gives the
    speed error a time constant ``tau_p`` = :data:`SPEED_LOOP_TIME_S` (``M`` the vehicle's
    effective mass with the wheels' inertia, ``r`` the mean rolling radius, ``n`` shafts);
    ``Ki = Kp / tau_i`` with ``tau_i`` = :data:`SPEED_INTEGRAL_TIME_S` removes the steady
    error under a steady load (a damping ratio of about 1.1).

    A torque command rather than a stiff shaft-speed constraint: two speed-locked shafts on one
    rigid body fight each other through the body whenever their rolling radii differ by a
    hair, and the contact solver's small hand-over impulses would all pass into the motors.
    Each motor chases a shaft speed of ``+-`` twice the fastest ideal shaft speed, which it
    never reaches while the wheel grips; a slipping wheel spins up to that speed and no
    further (a motor's no-load speed).

    Parameters
    ----------
    states : numpy.ndarray
        The flat state array the stepper writes (row ``k`` after step ``k``).
    speed_col : int
        Column of the chassis' forward velocity in a row.
    row_len : int
        Values in a row.
    speed_m_s, accel_m_s2 : float
        Target ground speed [m/s] and its ramp [m/s^2] (0: no ramp).
    dt_s : float
        The step [s].
    kp : float
        Proportional gain [N m per m/s].
    ki : float
        Integral gain [N m per m].
    max_torque_Nm : float
        Torque limit [N m] of each shaft.

    Returns
    -------
    callable
        ``command(k) -> T`` [N m] for step ``k``, from the speed in state row ``k - 1``; it
        keeps its integral between calls.
    """
    B = float_view(states)
    v_final, accel, dt = float(speed_m_s), float(accel_m_s2), float(dt_s)
    ramp = accel != 0.0
    ki_dt, t_max = ki * dt, float(max_torque_Nm)
    integ = 0.0

    def command(k: int) -> float:
        nonlocal integ
        vt = min(v_final, accel * (k - 1) * dt) if ramp else v_final
        e = vt - B[(k - 1) * row_len + speed_col]
        tq = kp * e + integ + ki_dt * e
        if -t_max < tq < t_max:
            integ += ki_dt * e
        elif tq >= t_max:
            tq = t_max
        else:
            tq = -t_max
        return tq

    return command


class PymunkEngine(Engine):
    """The rigid-body engine: a pymunk world of the build, stepped at ``run.timestep_s``.

    Parameters
    ----------
    scenario : Scenario
        Validated scenario.
    pair : RollingPair
        Its solved pair.
    mass : MassProperties
        Mass properties of one wheel.
    options : WorldOptions, optional
        Build settings not in the scenario.
    interface : {"auto", "fast", "public"}, optional
        How pymunk is stepped and read (:func:`ridesim.sim.pymunk_adapter.make_recorder`):
        through its internals where verified (``"auto"``), or always through its public
        interface (``"public"``, slower, same figures).
    """

    name = "pymunk"

    def __init__(self, scenario, pair, mass, options: WorldOptions | None = None, *,
                 interface: str = "auto") -> None:
        run = scenario.run
        self.scenario = scenario
        self.pair = pair
        self.options = options or WorldOptions()
        self.world: World = build_world(scenario, pair, mass, self.options)
        w = self.world
        self._dt = float(run.timestep_s)
        self._n_total = int(round(run.duration_s / self._dt))
        if self._n_total < 2:
            raise InputError(
                f"run.duration_s = {run.duration_s:g} s is shorter than two steps of"
                f" run.timestep_s = {run.timestep_s:g} s; lengthen duration_s"
            )
        self._k = 0
        self._bodies = [w.chassis] + list(w.wheels)
        self._n_axles = len(w.wheels)
        motors = w.drive.motors
        self._S = len(motors)
        # Speed drive: each motor is a torque actuator, set every step (see speed_command); it
        # chases twice the fastest ideal shaft speed, a no-load speed it never reaches in grip.
        self._rate_cap = 2.0 * abs(scenario.drive.speed_m_s) / w.r_min_m + 1.0
        if w.drive.mode == "speed":
            for m in motors:
                m.rate = self._rate_cap
                m.max_force = 0.0
        self._rec: Recorder = make_recorder(
            w.space, self._bodies, motors, self._n_total, self._dt, self._rate_cap,
            commanded=w.drive.mode in ("speed", "torque"), interface=interface)
        self._torque_sign_known = self._rec.torque_sign_known
        self._col = self._rec.columns
        self._nb = self._rec.n_space_bodies  # every body pymunk iterates, the static body included
        self._ncol = self._rec.n_row
        self._B = self._rec.states  # row 0 the initial state, row k the state after step k
        self._T = self._rec.impulses
        self._Bc = float_view(self._B)
        self._cautions: list[str] = []
        if self._rec.caution:
            self._cautions.append(self._rec.caution)
        if not self._torque_sign_known and self._S:
            self._cautions.append(
                "the motors' torque sign is not readable through pymunk's public interface for a"
                " shaft-speed drive: torques are magnitudes (sign assumed driving)"
            )
        self._speed_drive = w.drive.mode == "speed" and self._S > 0
        # Speed-loop gains (see speed_command): Kp [N m per m/s], Ki [N m per m].
        self._kp = w.r_mean_m * w.effective_mass_kg / (max(self._S, 1) * SPEED_LOOP_TIME_S)
        self._ki = self._kp / SPEED_INTEGRAL_TIME_S
        self._command = None
        if self._speed_drive:
            d = scenario.drive
            self._command = speed_command(
                self._B, self._col[0][3], self._ncol, speed_m_s=d.speed_m_s, accel_m_s2=d.accel_m_s2,
                dt_s=self._dt, kp=self._kp, ki=self._ki, max_torque_Nm=w.drive.max_torque_Nm)
        self._guard_every = max(1, int(round(GUARD_EVERY_S / self._dt)))
        self._guard_k = 0
        self._rim = self._guard_rim_points()
        # A rim point deeper in the track than this is taken as tunnelling: ten times the
        # allowed contact overlap, or 5 % of the least radius if larger.
        self._pen_tol = max(10.0 * self.options.collision_slop_m, 0.05 * w.r_min_m)
        d = scenario.drive
        g = math.hypot(*w.gravity_m_s2)
        v_drive = {"speed": abs(d.speed_m_s),
                   "shaft_speed": abs(d.shaft_speed_rad_s or 0.0) * w.r_max_m}.get(d.mode, 0.0)
        x_span = w.x_range_m[1] - w.x_range_m[0]
        g_along = abs(w.gravity_m_s2[0])
        t_run = self._n_total * self._dt
        v_torque = 0.0
        if d.mode == "torque":
            n_sh = max(self._S, 1)
            m_tot = w.body_mass_kg + self._n_axles * w.wheel_mass_kg
            v_torque = n_sh * abs(d.torque_Nm or 0.0) / w.r_min_m / m_tot * t_run
        self._v_cap = 5.0 * (v_drive + v_torque + g_along * t_run
                             + math.sqrt(2.0 * g * (2.0 * w.r_max_m + 0.05 * x_span))) + 1.0

    # ------------------------------------------------------------------ construction helpers
    @classmethod
    def from_scenario(cls, scenario, pair=None, interface: str = "auto", **options) -> PymunkEngine:
        """Build the engine for a scenario.

        Parameters
        ----------
        scenario : Scenario
            Validated scenario.
        pair : RollingPair, optional
            The solved pair; solved from the scenario when None.
        interface : {"auto", "fast", "public"}, optional
            How pymunk is stepped and read (see the class).
        **options
            Fields of :class:`~ridesim.sim.world.WorldOptions` (``grade_rad``,
            ``corner_radius_m``, ``track_tolerance_m``, ...).

        Returns
        -------
        PymunkEngine
        """
        from ridesim.scenario.build import resolve_wheelbase, solve_scenario, wheel_mass

        if pair is None:
            pair = solve_scenario(scenario)
        scenario = resolve_wheelbase(scenario, pair)
        return cls(scenario, pair, wheel_mass(scenario, pair.wheel), WorldOptions(**options),
                   interface=interface)

    def _guard_rim_points(self) -> np.ndarray:
        v = self.world.wheel_outline_m
        if len(v) > 64:
            v = v[np.linspace(0, len(v), 64, endpoint=False).astype(int)]
        return v

    # ------------------------------------------------------------------ Engine interface
    @property
    def steps_total(self) -> int:
        """Steps in the whole run."""
        return self._n_total

    @property
    def steps_done(self) -> int:
        """Steps taken so far."""
        return self._k

    def probes_dt_s(self) -> float:
        """The step [s]."""
        return self._dt

    @property
    def interface(self) -> str:
        """How pymunk is stepped and read: ``"fast"`` (its internals) or ``"public"``."""
        return "fast" if self._rec.fast else "public"

    @property
    def cautions(self) -> list[str]:
        """Notes on the run's fidelity gathered while building and stepping."""
        return list(self._cautions)

    def step(self, n: int) -> int:
        """Advance by up to ``n`` steps, checking the guard rails every few steps.

        Parameters
        ----------
        n : int
            Steps to take.

        Returns
        -------
        int
            Steps taken.

        Raises
        ------
        SimulationError
            When a wheel tunnels through the track, a value turns NaN, or the energy blows up.
        """
        n = int(min(max(n, 0), self._n_total - self._k))
        done = 0
        while done < n:
            m = min(n - done, self._guard_every - (self._k % self._guard_every))
            self._advance(self._k, self._k + m)
            self._k += m
            done += m
            if self._k % self._guard_every == 0 or self._k == self._n_total:
                self._guard(self._guard_k, self._k)
                self._guard_k = self._k
        return done

    def _advance(self, k0: int, k1: int) -> None:
        """Take steps ``k0 + 1 .. k1``: stepping and recording, with the speed drive's command."""
        self._rec.advance(k0, k1, self._command)

    # ------------------------------------------------------------------ guard rails
    def _rows(self, k0: int, k1: int) -> np.ndarray:
        return self._B[: (self._n_total + 1) * self._ncol].reshape(-1, self._ncol)[k0:k1]

    def _fail(self, k: int, what: str) -> None:
        run = self.scenario.run
        v = abs(self.scenario.drive.speed_m_s) if self.scenario.drive.mode == "speed" else None
        at = f" for {v:g} m/s" if v else ""
        raise SimulationError(
            f"simulation stopped at t = {k * self._dt:.4f} s: {what}; run.timestep_s ="
            f" {run.timestep_s:g} s is likely too large{at} or run.iterations = {run.iterations}"
            " too few: halve timestep_s or double iterations"
        )

    def _guard(self, k0: int, k1: int) -> None:
        """Check steps ``k0 + 1 .. k1`` for NaN, blow-up, tunnelling and running off the track.

        Each failure persists once it happens (a NaN stays NaN, a wheel through the track stays
        under it), so only the last row is checked; the chunk is searched for the first bad
        step only when that row fails.
        """
        if self._row_ok(k1):
            return
        rows = self._rows(k0 + 1, k1 + 1)
        found = self._bad_rows(rows)
        j, what, exc = found if found is not None else (len(rows) - 1, "unknown", SimulationError)
        if exc is SimulationError:
            raise SimulationError(f"simulation stopped at t = {(k0 + 1 + j) * self._dt:.4f} s: {what}")
        self._fail(k0 + 1 + j, what)

    def _row_ok(self, k: int) -> bool:
        """Quick scalar check of state row ``k`` (finite, speeds, axles above the track, on it)."""
        w = self.world
        B, base = self._Bc, k * self._ncol
        cap2 = self._v_cap * self._v_cap
        xs, ys = [], []
        spin_cap = self._v_cap / w.r_max_m
        for i, c in enumerate(self._col):
            x, y, vx, vy, om = (B[base + c[0]], B[base + c[1]], B[base + c[3]], B[base + c[4]],
                                B[base + c[5]])
            if not (math.isfinite(x) and math.isfinite(y) and math.isfinite(B[base + c[2]])
                    and vx * vx + vy * vy <= cap2 and math.isfinite(om)):
                return False
            if i > 0 and abs(om) > spin_cap:
                return False
            xs.append(x)
            ys.append(y)
        lo, hi = w.x_range_m
        for x in xs[1:]:
            if x - w.r_max_m < lo or x + w.r_max_m > hi:
                return False
        # Rim points against the track polyline, all wheels at once.
        a = np.array([B[base + c[2]] for c in self._col[1:]])
        xa, ya = np.array(xs[1:]), np.array(ys[1:])
        ca, sa = np.cos(a)[:, None], np.sin(a)[:, None]
        px = xa[:, None] + ca * self._rim[None, :, 0] - sa * self._rim[None, :, 1]
        py = ya[:, None] + sa * self._rim[None, :, 0] + ca * self._rim[None, :, 1]
        txy = w.track_xy_m
        low = float((py - np.interp(px, txy[:, 0], txy[:, 1])).min())
        return low >= -self._pen_tol and bool(np.all(ya > np.interp(xa, txy[:, 0], txy[:, 1])))

    def _bad_rows(self, rows: np.ndarray):
        """First failing row of ``rows`` as ``(index, message, kind)``, or None."""
        bad = ~np.all(np.isfinite(rows), axis=1)
        if np.any(bad):
            return int(np.flatnonzero(bad)[0]), "a body position or velocity became NaN or infinite", None
        w = self.world
        txy = w.track_xy_m
        pen_tol = self._pen_tol
        for i in range(self._n_axles):
            c = self._col[1 + i]
            x, y, a = rows[:, c[0]], rows[:, c[1]], rows[:, c[2]]
            off = (x + w.r_max_m > w.x_range_m[1]) | (x - w.r_max_m < w.x_range_m[0])
            if np.any(off):
                j = int(np.flatnonzero(off)[0])
                return j, (f"axle {i} reached the end of the built track at x = {float(x[j]):.4g} m"
                           " (the vehicle moved further than its drive should allow); shorten"
                           " run.duration_s or check the drive settings"), SimulationError
            ca, sa = np.cos(a), np.sin(a)
            px = x[:, None] + ca[:, None] * self._rim[None, :, 0] - sa[:, None] * self._rim[None, :, 1]
            py = y[:, None] + sa[:, None] * self._rim[None, :, 0] + ca[:, None] * self._rim[None, :, 1]
            low = (py - np.interp(px, txy[:, 0], txy[:, 1])).min(axis=1)
            axle_low = y - np.interp(x, txy[:, 0], txy[:, 1])
            badm = (low < -pen_tol) | (axle_low < 0.0)
            if np.any(badm):
                j = int(np.flatnonzero(badm)[0])
                return j, (f"wheel {i} passed through the track (rim {-1e3 * float(low[j]):.1f} mm"
                           f" below it; tolerance {1e3 * pen_tol:.1f} mm)"), None
        vmax = np.max(np.stack([np.hypot(rows[:, c[3]], rows[:, c[4]]) for c in self._col]), axis=0)
        if np.any(vmax > self._v_cap):
            j = int(np.flatnonzero(vmax > self._v_cap)[0])
            return j, (f"energy blow-up (a body moved at {float(vmax[j]):.3g} m/s, more than the"
                       f" {self._v_cap:.3g} m/s this build can reach)"), None
        spin = np.max(np.abs(np.stack([rows[:, c[5]] for c in self._col[1:]])), axis=0)
        if np.any(spin * w.r_max_m > self._v_cap):
            j = int(np.flatnonzero(spin * w.r_max_m > self._v_cap)[0])
            return j, (f"a wheel spins at {float(spin[j]):.4g} rad/s, its rim at"
                       f" {float(spin[j]) * w.r_max_m:.4g} m/s, beyond the {self._v_cap:.4g} m/s this"
                       " build can reach: the drive spins it without grip (lower drive.torque_Nm or"
                       " drive.max_torque_Nm, or raise surface.friction), or the solver lost the"
                       " contact (halve run.timestep_s or raise run.iterations)"), SimulationError
        return None

    # ------------------------------------------------------------------ probes
    def probes(self) -> Probes:
        """The probe record of the steps taken so far.

        Returns
        -------
        Probes
        """
        k = self._k
        dt = self._dt
        w = self.world
        A = self._n_axles
        rows = self._rows(0, k + 1)
        cc = self._col[0]
        t = dt * np.arange(1, k + 1)
        ax_x = np.stack([rows[1:, self._col[1 + i][0]] for i in range(A)], axis=1)
        ax_y = np.stack([rows[1:, self._col[1 + i][1]] for i in range(A)], axis=1)
        ang = -np.stack([rows[1:, self._col[1 + i][2]] for i in range(A)], axis=1)
        rate = -np.stack([rows[1:, self._col[1 + i][5]] for i in range(A)], axis=1)
        pitch = rows[1:, cc[2]].copy()
        speed = rows[1:, cc[3]].copy()
        # Seat velocity: v_c + w_c x R(pitch) seat; acceleration by backward differences.
        sx, sy = w.seat_m
        pa = rows[:, cc[2]]
        wc = rows[:, cc[5]]
        rx = np.cos(pa) * sx - np.sin(pa) * sy
        ry = np.sin(pa) * sx + np.cos(pa) * sy
        vsx = rows[:, cc[3]] - wc * ry
        vsy = rows[:, cc[4]] + wc * rx
        seat_ax = np.diff(vsx) / dt
        seat_ay = np.diff(vsy) / dt

        slip, normal, contact, cx = self._contacts(k, rows)
        S = self._S
        if S:
            jacc = self._T[: (self._n_total + 1) * S].reshape(-1, S)[1 : k + 1]
            torque = -jacc / dt  # impulse on the wheel; forward drive is clockwise (negative)
        else:
            torque = np.zeros((k, 0))
        d = self.scenario.drive
        info = {
            "engine": self.name,
            "as_built": dict(w.as_built),
            "corner_radius_m": w.corner_radius_m,
            "corner_radius_source": w.corner_radius_source,
            "track_polyline_error_m": w.track_error_m,
            "wheel_polygon_error_m": w.wheel_error_m,
            "track_segments": int(len(w.track_xy_m) - 1),
            "wheel_vertices": int(len(w.wheel_outline_m)),
            "wheel_pieces": w.wheel_pieces,
            "body_inertia_kg_m2": w.body_inertia_kg_m2,
            "body_inertia_estimated": w.body_inertia_estimated,
            "wheel_mass_kg": w.wheel_mass_kg,
            "body_mass_kg": w.body_mass_kg,
            "wheel_inertia_kg_m2": w.wheel_inertia_kg_m2,
            "rolling_torque_Nm": w.rolling_torque_Nm,
            "pitch_held": w.pitch_held,
            "drive_mode": d.mode,
            "ramp_end_s": (abs(d.speed_m_s) / d.accel_m_s2 if d.mode == "speed" and d.accel_m_s2 > 0
                           else 0.0),
            "max_torque_Nm": w.drive.max_torque_Nm,
            "shaft_speed_rad_s": (float(d.shaft_speed_rad_s or 0.0) if d.mode == "shaft_speed"
                                  else None),
            "torque_sign_known": self._torque_sign_known,
            "pymunk_interface": self.interface,
            "coupled": bool(self.scenario.vehicle.coupled and A > 1),
            "grade_rad": self.options.grade_rad,
            "collision_slop_m": self.options.collision_slop_m,
            "iterations": int(self.scenario.run.iterations),
            "r_min_m": w.r_min_m,
            "r_max_m": w.r_max_m,
            "track_period_m": float(self.pair.track.period),
            "cautions": list(self._cautions),
        }
        # The phase reference: the wheel angle rolling without slip gives at each axle's x.
        rolling = np.asarray(self.pair.wheel_angle(ax_x.ravel()), dtype=float).reshape(ax_x.shape)
        return Probes(
            time_s=t, axle_x_m=ax_x, axle_y_m=ax_y, wheel_angle_rad=ang, wheel_rate_rad_s=rate,
            pitch_rad=pitch, speed_m_s=speed, seat_ax_m_s2=seat_ax, seat_ay_m_s2=seat_ay,
            slip_speed_m_s=slip, normal_force_N=normal, contact=contact, contact_x_m=cx,
            shaft_torque_Nm=torque, shaft_axles=tuple(tuple(a) for a in w.drive.shaft_axles),
            dt_s=dt, settle_s=float(self.scenario.run.settle_s),
            target_speed_m_s=float(d.speed_m_s) if d.mode == "speed" else None, info=info,
            rolling_angle_rad=rolling,
        )

    def _contacts(self, k: int, rows: np.ndarray):
        """Per-step, per-wheel slip speed, normal force, contact flag and contact x.

        See :mod:`ridesim.sim.contacts` for the rules.
        """
        A = self._n_axles
        found = contact_steps(*self._rec.contact_stream(), self._nb, k)
        if found is None:
            return per_wheel(np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64), np.zeros(0),
                             np.zeros(0), np.zeros(0), k, A, self._dt)
        step, ida, idb, two, flts = found
        axle, mx, my = wheel_contact_points(ida, idb, two, flts, [b.id for b in self.world.wheels])
        nx, ny = flts[:, 2], flts[:, 3]
        jn = np.abs(flts[:, 0] * nx + flts[:, 1] * ny)
        first_col = np.array([self._col[1 + i][0] for i in range(A)], dtype=np.int64)
        base = (step + 1) * self._ncol + (first_col[axle] if A > 1 else first_col[0])
        sl = rim_slip_m_s(self._B, base, mx, my, nx, ny, self.world.wheel_com_m, self.world.r_max_m)
        return per_wheel(step, axle, jn, sl, mx, k, A, self._dt)

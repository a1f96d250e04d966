"""Stepping the pymunk world, sampling probes every step, the speed controller and the guard rails.

Per-step Python work is kept to a handful of C calls: pymunk's batch readers
write every body's position, angle and velocities straight into a preallocated
numpy array, and the contacts of the step (bodies, impulse, normal, points)
into a growing C array; each drive motor's accumulated impulse is read, and in
speed mode the controller sets the motors' torque. Everything derived (slip
speed, normal force, seat acceleration) is computed afterwards with numpy.

The motor fields are read and written at their place in pymunk's constraint
record (rate, torque limit, accumulated impulse). The layout is checked against
pymunk's own accessors when the engine is built; if the check fails the engine
falls back to the accessors (slower, and the torque sign is then lost: a caution
says so).
"""

from __future__ import annotations

import math

import numpy as np
from pymunk._chipmunk_cffi import ffi, lib

from ridesim.errors import InputError, SimulationError
from ridesim.sim.engine import Engine, Probes
from ridesim.sim.world import World, WorldOptions, build_world

__all__ = ["PymunkEngine", "SLIP_LOAD_SHARE", "SPEED_LOOP_TIME_S", "SPEED_INTEGRAL_TIME_S",
           "GUARD_EVERY_S"]

SLIP_LOAD_SHARE = 0.1
"""A contact's slip counts for its wheel when it carries at least this share of the wheel's
normal impulse in the step: a contact carrying less transmits little traction (a grazing touch
scuffs, it does not lose grip)."""

SPEED_LOOP_TIME_S = 0.01
"""Time constant [s] of the speed drive's proportional action on the ground-speed error."""

SPEED_INTEGRAL_TIME_S = 0.05
"""Integral time [s] of the speed drive (removes the steady speed error under a steady load)."""

GUARD_EVERY_S = 0.2
"""Simulated time [s] between guard-rail checks (tunnelling, NaN, blow-up)."""

_BODY_COLS = 6  # x, y, angle, vx, vy, w per body (position = body origin, velocity = centre of mass)
_ARB_INTS = 3  # body a id, body b id, contact count
_ARB_FLTS = 12  # impulse (2), normal (2), point a1, b1, a2, b2 (2 each)
_BODY_FIELDS = lib.POSITION | lib.ANGLE | lib.VELOCITY | lib.ANGULAR_VELOCITY
_ARB_FIELDS = (lib.BODY_A_ID | lib.BODY_B_ID | lib.CONTACT_COUNT | lib.TOTAL_IMPULSE | lib.NORMAL
               | lib.POINT_A_1 | lib.POINT_B_1 | lib.POINT_A_2 | lib.POINT_B_2)
# Places of fields in pymunk's SimpleMotor record, in doubles (checked at build time).
_MOTOR_RATE, _MOTOR_MAXFORCE, _MOTOR_JACC = 13, 6, 15


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
    """

    name = "pymunk"

    def __init__(self, scenario, pair, mass, options: WorldOptions | None = None) -> None:
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
        sp = w.space
        # The C step is called directly: pymunk's Python step() wrapper only adds bookkeeping for
        # callbacks and deferred additions, which this world does not use.
        self._sp = sp._space
        self._bodies = [w.chassis] + list(w.wheels)
        self._n_axles = len(w.wheels)
        self._col, nb = self._body_columns()
        self._nb = nb  # every body pymunk iterates, the static body included
        self._ncol = nb * _BODY_COLS

        # Body buffer: row 0 the initial state, row k the state after step k.
        n_rows = self._n_total + 1
        self._B = np.zeros(n_rows * self._ncol + 2)
        self._Bc = ffi.from_buffer("double[]", self._B)
        self._barr = ffi.new("pmFloatArray *")
        self._barr.num = 0
        self._barr.max = len(self._B)  # never reached: the C pusher grows an array at max - 1
        self._barr.arr = self._Bc
        # Contact buffers: C-owned, grown by pymunk as needed. The body reader also writes every
        # body's id into the contact integer stream, which marks where each step's contacts
        # begin without any per-step Python work.
        guess = (self._n_total + 1) * (max(2, 2 * self._n_axles) + 1)
        self._afl = ffi.gc(lib.pmFloatArrayNew(guess * _ARB_FLTS), lib.pmFloatArrayFree)
        self._ain = ffi.gc(lib.pmIntArrayNew(guess * _ARB_INTS + n_rows * nb), lib.pmIntArrayFree)
        self._bdata = ffi.new("pmBatchedData *")
        self._bdata.fields = _BODY_FIELDS | lib.BODY_ID
        self._bdata.floatArray = self._barr
        self._bdata.intArray = self._ain
        self._body_fn = ffi.addressof(lib, "pmSpaceBodyGetIteratorFuncBatched")
        self._adata = ffi.new("pmBatchedData *")
        self._adata.fields = _ARB_FIELDS
        self._adata.floatArray = self._afl
        self._adata.intArray = self._ain
        self._arb_fn = ffi.addressof(lib, "pmSpaceArbiterIteratorFuncBatched")
        lib.cpSpaceEachBody(self._sp, self._body_fn, self._bdata)  # row 0

        # Drive.
        motors = w.drive.motors
        self._S = len(motors)
        self._T = np.zeros(n_rows * max(self._S, 1))
        # Element access through memoryviews: about a third faster than through cffi pointers.
        self._Tc = memoryview(self._T)
        self._mptr = [memoryview(ffi.buffer(ffi.cast("char *", m._constraint),
                                            (_MOTOR_JACC + 1) * 8)).cast("d") for m in motors]
        self._direct = self._check_motor_layout()
        # Speed drive: each motor is a torque actuator, set every step (see _advance_speed); it
        # chases twice the fastest ideal shaft speed, a no-load speed it never reaches in grip.
        self._rate_cap = 2.0 * abs(scenario.drive.speed_m_s) / w.r_min_m + 1.0
        if w.drive.mode == "speed":
            for m in motors:
                m.rate = self._rate_cap
                m.max_force = 0.0
        self._cautions: list[str] = []
        if not self._direct and self._S:
            self._cautions.append(
                "the motor record layout of this pymunk build was not recognised: torques are"
                " magnitudes (sign unknown) and the run is slower"
            )
        self._speed_drive = w.drive.mode == "speed" and self._S > 0
        self._integ = 0.0
        # Speed-loop gains (see _advance_speed): Kp [N m per m/s], Ki [N m per m].
        self._kp = w.r_mean_m * w.effective_mass_kg / (max(self._S, 1) * SPEED_LOOP_TIME_S)
        self._ki = self._kp / SPEED_INTEGRAL_TIME_S
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
    def from_scenario(cls, scenario, pair=None, **options) -> PymunkEngine:
        """Build the engine for a scenario.

        Parameters
        ----------
        scenario : Scenario
            Validated scenario.
        pair : RollingPair, optional
            The solved pair; solved from the scenario when None.
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
        return cls(scenario, pair, wheel_mass(scenario, pair.wheel), WorldOptions(**options))

    def _body_columns(self) -> tuple[list[tuple[int, ...]], int]:
        """Columns of x, y, angle, vx, vy, w of each of our bodies in a body-buffer row."""
        ids = ffi.new("pmBatchedData *")
        fl = ffi.gc(lib.pmFloatArrayNew(4), lib.pmFloatArrayFree)
        it = ffi.gc(lib.pmIntArrayNew(4), lib.pmIntArrayFree)
        ids.fields = lib.BODY_ID
        ids.floatArray = fl
        ids.intArray = it
        lib.cpSpaceEachBody(self._sp, ffi.addressof(lib, "pmSpaceBodyGetIteratorFuncBatched"), ids)
        order = [int(it.arr[i]) for i in range(it.num)]
        cols = []
        for b in self._bodies:
            j = order.index(b.id)
            cols.append(tuple(j * _BODY_COLS + c for c in range(_BODY_COLS)))
        return cols, len(order)

    def _check_motor_layout(self) -> bool:
        for m, p in zip(self.world.drive.motors, self._mptr, strict=True):
            if p[_MOTOR_RATE] != m.rate or p[_MOTOR_MAXFORCE] != m.max_force:
                return False
        return True

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
        """Take steps ``k0 + 1 .. k1``: the hot loop, with every name hoisted to a local.

        Per step: the C step, the batch body reader (into the probe array), the batch contact
        reader, and one read of each motor's accumulated impulse.
        """
        if not self._direct:
            self._advance_fallback(k0, k1)
            return
        if self._speed_drive:
            self._advance_speed(k0, k1)
            return
        sp, dt = self._sp, self._dt
        cp_step = lib.cpSpaceStep
        each_body, body_fn, bdata = lib.cpSpaceEachBody, self._body_fn, self._bdata
        each_arb, arb_fn, adata = lib.cpSpaceEachCachedArbiter, self._arb_fn, self._adata
        Tc, S, mp = self._Tc, self._S, self._mptr
        J = _MOTOR_JACC
        if S == 0:
            for _k in range(k0 + 1, k1 + 1):
                cp_step(sp, dt)
                each_body(sp, body_fn, bdata)
                each_arb(sp, arb_fn, adata)
        elif S == 1:
            p0 = mp[0]
            for k in range(k0 + 1, k1 + 1):
                cp_step(sp, dt)
                each_body(sp, body_fn, bdata)
                each_arb(sp, arb_fn, adata)
                Tc[k] = p0[J]
        elif S == 2:
            p0, p1 = mp
            for k in range(k0 + 1, k1 + 1):
                cp_step(sp, dt)
                each_body(sp, body_fn, bdata)
                each_arb(sp, arb_fn, adata)
                Tc[2 * k] = p0[J]
                Tc[2 * k + 1] = p1[J]
        else:
            rng = range(S)
            for k in range(k0 + 1, k1 + 1):
                cp_step(sp, dt)
                each_body(sp, body_fn, bdata)
                each_arb(sp, arb_fn, adata)
                base = S * k
                for j in rng:
                    Tc[base + j] = mp[j][J]

    def _advance_speed(self, k0: int, k1: int) -> None:
        """Hot loop of the speed drive: a PI controller on ground speed commanding shaft torque.

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
        """
        sp, dt = self._sp, self._dt
        cp_step = lib.cpSpaceStep
        each_body, body_fn, bdata = lib.cpSpaceEachBody, self._body_fn, self._bdata
        each_arb, arb_fn, adata = lib.cpSpaceEachCachedArbiter, self._arb_fn, self._adata
        Tc, S, mp = self._Tc, self._S, self._mptr
        B, ncol = memoryview(self._B), self._ncol
        c_vx = self._col[0][3]
        d = self.scenario.drive
        v_final, accel = float(d.speed_m_s), float(d.accel_m_s2)
        kp, ki_dt = self._kp, self._ki * dt
        t_max = self.world.drive.max_torque_Nm
        integ = self._integ
        R, MF, J = _MOTOR_RATE, _MOTOR_MAXFORCE, _MOTOR_JACC
        big = self._rate_cap
        vt = v_final
        ramp = accel != 0.0
        base = k0 * ncol
        # The motors' rate (the sign of the commanded torque) is written only when it changes.
        fwd = mp[0][R] > 0.0 if S else True
        if S == 1:
            p0, = mp
            for k in range(k0 + 1, k1 + 1):
                if ramp:
                    vt = min(v_final, accel * (k - 1) * dt)
                e = vt - B[base + c_vx]
                base += ncol
                tq = kp * e + integ + ki_dt * e
                if -t_max < tq < t_max:
                    integ += ki_dt * e
                elif tq >= t_max:
                    tq = t_max
                else:
                    tq = -t_max
                if tq >= 0.0:
                    if not fwd:
                        p0[R] = big
                        fwd = True
                    p0[MF] = tq
                else:
                    if fwd:
                        p0[R] = -big
                        fwd = False
                    p0[MF] = -tq
                cp_step(sp, dt)
                each_body(sp, body_fn, bdata)
                each_arb(sp, arb_fn, adata)
                Tc[k] = p0[J]
        elif S == 2:
            p0, p1 = mp
            for k in range(k0 + 1, k1 + 1):
                if ramp:
                    vt = min(v_final, accel * (k - 1) * dt)
                e = vt - B[base + c_vx]
                base += ncol
                tq = kp * e + integ + ki_dt * e
                if -t_max < tq < t_max:
                    integ += ki_dt * e
                elif tq >= t_max:
                    tq = t_max
                else:
                    tq = -t_max
                if tq >= 0.0:
                    if not fwd:
                        p0[R] = p1[R] = big
                        fwd = True
                    p0[MF] = p1[MF] = tq
                else:
                    if fwd:
                        p0[R] = p1[R] = -big
                        fwd = False
                    p0[MF] = p1[MF] = -tq
                cp_step(sp, dt)
                each_body(sp, body_fn, bdata)
                each_arb(sp, arb_fn, adata)
                Tc[2 * k] = p0[J]
                Tc[2 * k + 1] = p1[J]
        else:
            rng = range(S)
            for k in range(k0 + 1, k1 + 1):
                if ramp:
                    vt = min(v_final, accel * (k - 1) * dt)
                e = vt - B[base + c_vx]
                base += ncol
                tq = kp * e + integ + ki_dt * e
                if -t_max < tq < t_max:
                    integ += ki_dt * e
                elif tq >= t_max:
                    tq = t_max
                else:
                    tq = -t_max
                if tq >= 0.0:
                    mf = tq
                    if not fwd:
                        fwd = True
                        for p in mp:
                            p[R] = big
                else:
                    mf = -tq
                    if fwd:
                        fwd = False
                        for p in mp:
                            p[R] = -big
                for p in mp:
                    p[MF] = mf
                cp_step(sp, dt)
                each_body(sp, body_fn, bdata)
                each_arb(sp, arb_fn, adata)
                tb = S * k
                for j in rng:
                    Tc[tb + j] = mp[j][J]
        self._integ = integ

    def _advance_fallback(self, k0: int, k1: int) -> None:
        """Loop through pymunk's accessors when the motor record layout is not recognised."""
        sp, dt = self._sp, self._dt
        motors = self.world.drive.motors
        B, ncol = self._B, self._ncol
        d = self.scenario.drive
        t_max = self.world.drive.max_torque_Nm
        for k in range(k0 + 1, k1 + 1):
            if self._speed_drive:
                v = B[(k - 1) * ncol + self._col[0][3]]
                vt = d.speed_m_s if d.accel_m_s2 == 0 else min(d.speed_m_s, d.accel_m_s2 * (k - 1) * dt)
                e = vt - v
                tq = self._kp * e + self._integ + self._ki * dt * e
                if -t_max < tq < t_max:
                    self._integ += self._ki * dt * e
                tq = min(max(tq, -t_max), t_max)
                for m in motors:
                    m.rate = math.copysign(self._rate_cap, tq)
                    m.max_force = abs(tq)
            lib.cpSpaceStep(sp, dt)
            lib.cpSpaceEachBody(sp, self._body_fn, self._bdata)
            lib.cpSpaceEachCachedArbiter(sp, self._arb_fn, self._adata)
            for j, m in enumerate(motors):
                self._T[self._S * k + j] = -m.impulse  # magnitude only: assumed driving

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
        x, y = np.array(xs[1:]), np.array(ys[1:])
        ca, sa = np.cos(a)[:, None], np.sin(a)[:, None]
        px = x[:, None] + ca * self._rim[None, :, 0] - sa * self._rim[None, :, 1]
        py = y[:, None] + sa * self._rim[None, :, 0] + ca * self._rim[None, :, 1]
        txy = w.track_xy_m
        low = float((py - np.interp(px, txy[:, 0], txy[:, 1])).min())
        return low >= -self._pen_tol and bool(np.all(y > np.interp(x, txy[:, 0], txy[:, 1])))

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
            "torque_sign_known": self._direct,
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

        Vectorised over every contact of the run; the work is a few passes over arrays of
        about two contacts a step. Per wheel and step: the normal force is the sum of its
        contacts' normal impulses over the step; the contact x is that of its most loaded
        contact; the slip is the largest ``|slip|`` among contacts carrying at least
        :data:`SLIP_LOAD_SHARE` of its load (ties go to the first in pymunk's contact order,
        which is deterministic).
        """
        A, dt = self._n_axles, self._dt
        slip = np.full((k, A), np.nan)
        normal = np.zeros((k, A))
        contact = np.zeros((k, A), dtype=bool)
        cxm = np.full((k, A), np.nan)
        n_int = int(self._ain.num)
        if n_int == 0:
            return slip, normal, contact, cxm
        stream = np.frombuffer(ffi.buffer(self._ain.arr, n_int * ffi.sizeof("uintptr_t")),
                               dtype=np.uintp)
        # The stream holds, per state row j, the ids of all bodies (pointers, large numbers),
        # then three integers per contact of step j: body a, body b, contact count (1 or 2).
        small = stream <= 2
        cpos = np.flatnonzero(small)
        # Markers (body ids) before each contact count: its position less the contact
        # integers before it (three per earlier contact, two of its own).
        markers = cpos - 3 * np.arange(len(cpos)) - 2
        step = markers // self._nb - 2  # contacts after row j's markers belong to step j - 1
        keep = (step >= 0) & (step < k) & (stream[cpos] > 0)
        idx = np.flatnonzero(keep)
        if len(idx) == 0:
            return slip, normal, contact, cxm
        all_kept = len(idx) == len(keep)
        if not all_kept:
            cpos, step = cpos[idx], step[idx]
        ida = stream[cpos - 2]
        idb = stream[cpos - 1]
        two = stream[cpos] == 2
        total_arb = int(self._afl.num) // _ARB_FLTS
        flts = np.frombuffer(ffi.buffer(self._afl.arr, total_arb * _ARB_FLTS * 8),
                             dtype=np.float64).reshape(-1, _ARB_FLTS)
        if not all_kept:
            flts = flts[idx]
        # Which wheel, and whether it is body a (its points are then the a points). A wheel
        # against a track segment is always body b in pymunk's shape order, but either is read.
        wheel_ids = np.array([b.id for b in self.world.wheels], dtype=np.uintp)
        axle = np.zeros(len(cpos), dtype=np.int64)
        in_a = np.zeros(len(cpos), dtype=bool)
        for i, wid in enumerate(wheel_ids):
            ia = ida == wid
            if i:
                axle[ia | (idb == wid)] = i
            in_a |= ia
        if not in_a.any():
            pxa, pya, pxb, pyb = flts[:, 6], flts[:, 7], flts[:, 10], flts[:, 11]
        elif in_a.all():
            pxa, pya, pxb, pyb = flts[:, 4], flts[:, 5], flts[:, 8], flts[:, 9]
        else:
            pxa, pya = np.where(in_a, flts[:, 4], flts[:, 6]), np.where(in_a, flts[:, 5], flts[:, 7])
            pxb, pyb = np.where(in_a, flts[:, 8], flts[:, 10]), np.where(in_a, flts[:, 9], flts[:, 11])
        mx = np.where(two, 0.5 * (pxa + pxb), pxa)
        my = np.where(two, 0.5 * (pya + pyb), pya)
        nx, ny = flts[:, 2], flts[:, 3]
        jn = np.abs(flts[:, 0] * nx + flts[:, 1] * ny)
        # Rim velocity at the contact: v_cg + w x (p - cg), from the state row after the step.
        # A wheel's six columns are consecutive in a state row.
        first_col = np.array([self._col[1 + i][0] for i in range(A)], dtype=np.int64)
        base = (step + 1) * self._ncol + (first_col[axle] if A > 1 else first_col[0])
        flat = self._B
        vx = flat[base + 3]
        vy = flat[base + 4]
        om = flat[base + 5]
        dx = mx - flat[base]
        dy = my - flat[base + 1]
        cgx, cgy = self.world.wheel_com_m
        if math.hypot(cgx, cgy) > 1e-12 * self.world.r_max_m:  # else below rounding of dx, dy
            a = flat[base + 2]
            ca, sa = np.cos(a), np.sin(a)
            dx -= ca * cgx - sa * cgy
            dy -= sa * cgx + ca * cgy
        # Tangent (ny, -nx) oriented with the normal pointing up: slip = v . t.
        sl = np.copysign(1.0, ny) * ((vx - om * dy) * ny - (vy + om * dx) * nx)
        # Group by (step, wheel): contacts come in step order, so a stable sort on the group
        # number only reorders the wheels within a step.
        grp = step * A + axle
        if len(grp) > 1 and np.any(grp[1:] < grp[:-1]):
            order = np.argsort(grp, kind="stable")
            grp, jn, sl, mx = grp[order], jn[order], sl[order], mx[order]
        n = len(grp)
        brk = np.empty(n, dtype=bool)
        brk[0] = True
        np.not_equal(grp[1:], grp[:-1], out=brk[1:])
        start = np.flatnonzero(brk)
        gidx = np.cumsum(brk) - 1
        gs, ga = np.divmod(grp[start], A)
        tot = np.add.reduceat(jn, start)
        normal[gs, ga] = tot / dt
        contact[gs, ga] = True
        pos = np.arange(n)
        big = np.int64(n)
        # Most loaded contact of each group (the first on a tie).
        top = np.minimum.reduceat(np.where(jn == np.maximum.reduceat(jn, start)[gidx], pos, big),
                                  start)
        cxm[gs, ga] = mx[top]
        # Slip of the wheel: the largest |slip| among contacts carrying a fair share of its load.
        totg = tot[gidx]
        elig = (jn >= SLIP_LOAD_SHARE * totg) | (totg <= 0.0)
        mag = np.where(elig, np.abs(sl), -1.0)
        first = np.minimum.reduceat(np.where(mag == np.maximum.reduceat(mag, start)[gidx], pos, big),
                                    start)
        slip[gs, ga] = sl[first]
        return slip, normal, contact, cxm

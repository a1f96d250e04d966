"""Stepping a pymunk space and recording it: the one place that touches pymunk's internals.

A :class:`Recorder` steps a built space and records, every step, each body's
position, angle and velocities (into a preallocated numpy array, one row per
step), the contacts of the step (bodies, impulse, normal and points, into a
growing stream) and each drive motor's accumulated impulse; it can set the
motors' torque before each step (a torque command, see :meth:`Recorder.advance`).

Two recorders give the same numbers:

* :class:`FastRecorder` calls the C step and pymunk's batch readers directly,
  and reads and writes each motor's fields at their place in pymunk's
  constraint record (rate, torque limit, accumulated impulse). These are
  private to pymunk: the versions whose layout has been verified are
  :data:`VERIFIED_PYMUNK`, and the layout is checked again against pymunk's own
  accessors when the recorder is built.
* :class:`PublicRecorder` uses pymunk's public interface only (``Space.step``,
  :mod:`pymunk.batch`, the motor's ``rate``, ``max_force`` and ``impulse``);
  it is slower. The public ``impulse`` is a magnitude: its sign is taken from
  the motor's rate, which is exact for a motor held saturated towards a rate it
  does not reach (the speed and torque drives), and an assumption otherwise.

:func:`make_recorder` picks the fast one where it is verified and the public
one elsewhere, with a one-line caution saying so.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import cast

import numpy as np
import pymunk
import pymunk.batch as pb

__all__ = ["Recorder", "FastRecorder", "PublicRecorder", "make_recorder", "VERIFIED_PYMUNK",
           "BODY_COLS", "ARB_INTS", "ARB_FLTS", "pymunk_verified", "installed_pymunk_version",
           "float_view"]

VERIFIED_PYMUNK = ((7, 0), (7, 1), (7, 2), (7, 3))
"""pymunk (major, minor) versions whose private layout the fast recorder was verified on: the
fast and public recorders gave the same numbers (``tests/test_sim_adapter.py``) on 7.0.0,
7.1.0, 7.2.0 and 7.3.1; pyproject.toml pins the same range."""

BODY_COLS = 6
"""Columns per body in a state row: x, y, angle, vx, vy, w (position = body origin, velocity =
centre of mass)."""
ARB_INTS = 3
"""Integers per contact in the stream: body a id, body b id, contact count."""
ARB_FLTS = 12
"""Floats per contact: impulse (2), normal (2), points a1, b1, a2, b2 (2 each)."""

_BODY_FIELDS = (pb.BodyFields.POSITION | pb.BodyFields.ANGLE | pb.BodyFields.VELOCITY
                | pb.BodyFields.ANGULAR_VELOCITY)
_ARB_FIELDS = (pb.ArbiterFields.BODY_A_ID | pb.ArbiterFields.BODY_B_ID
               | pb.ArbiterFields.CONTACT_COUNT | pb.ArbiterFields.TOTAL_IMPULSE
               | pb.ArbiterFields.NORMAL | pb.ArbiterFields.POINT_A_1 | pb.ArbiterFields.POINT_B_1
               | pb.ArbiterFields.POINT_A_2 | pb.ArbiterFields.POINT_B_2)
# Places of fields in pymunk's SimpleMotor record, in doubles (verified for VERIFIED_PYMUNK and
# checked at build time).
_MOTOR_RATE, _MOTOR_MAXFORCE, _MOTOR_JACC = 13, 6, 15

Command = Callable[[int], float]
"""A torque command: step number ``k`` -> shaft torque [N m] for step ``k`` (it may read state
row ``k - 1``)."""


def installed_pymunk_version() -> str:
    """The installed pymunk's version, from its package record.

    ``pymunk.version`` is not used: pymunk 7.0.0 reports "2.0.0" there.

    Returns
    -------
    str
    """
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("pymunk")
    except PackageNotFoundError:
        return str(pymunk.version)


def pymunk_verified(version: str | None = None) -> bool:
    """Whether a pymunk version is one whose private layout the fast recorder was verified on.

    Parameters
    ----------
    version : str, optional
        A version string such as ``"7.3.1"``; the installed pymunk's when None
        (:func:`installed_pymunk_version`).

    Returns
    -------
    bool
    """
    v = installed_pymunk_version() if version is None else version
    try:
        major, minor = (int(p) for p in v.split(".")[:2])
    except ValueError:
        return False
    return (major, minor) in VERIFIED_PYMUNK


def float_view(a: np.ndarray) -> memoryview[float]:
    """A memoryview of a float64 array, for fast element access in Python loops.

    Parameters
    ----------
    a : numpy.ndarray
        A float64 array (its buffer format is ``"d"``).

    Returns
    -------
    memoryview
        ``a.data``, the same view as ``memoryview(a)``.
    """
    # numpy's stubs declare ndarray.__buffer__ only for Python >= 3.12, and typeshed's memoryview
    # elements default to int: a float64 buffer reads and writes floats.
    return cast("memoryview[float]", a.data)


class Recorder:
    """Steps a space and records body states, contacts and motor impulses.

    Parameters
    ----------
    space : pymunk.Space
        The built space.
    bodies : sequence of pymunk.Body
        The bodies whose columns are wanted (:attr:`columns` follows this order).
    motors : sequence of pymunk.SimpleMotor
        The drive motors whose accumulated impulse is recorded every step.
    n_steps : int
        Steps in the whole run (the state array holds ``n_steps + 1`` rows).
    dt_s : float
        The step [s].
    command_rate_rad_s : float
        Motor rate held while a torque command drives the motors (``+-`` this value, the sign of
        the torque): a no-load speed the motor does not reach while the wheel grips.

    Attributes
    ----------
    states : numpy.ndarray
        Flat state array: row ``k`` (``n_row`` values, :data:`BODY_COLS` per body of the space,
        the static body included) is the state after step ``k``; row 0 the initial state.
    impulses : numpy.ndarray
        Flat array of the motors' accumulated impulses [N m s]: ``impulses[S * k + j]`` is motor
        ``j``'s after step ``k``; negative drives the vehicle forward.
    columns : list of tuple of int
        Columns of x, y, angle, vx, vy, w of each of ``bodies`` in a state row.
    n_row : int
        Values in a state row.
    n_space_bodies : int
        Bodies in the space (the static body included).
    fast : bool
        Whether pymunk's internals are used.
    torque_sign_known : bool
        Whether :attr:`impulses` carry their sign (false for the public recorder when the motors
        are servos rather than torque-commanded or saturated).
    caution : str or None
        A one-line note on the run's fidelity, or None.
    """

    fast = False

    def __init__(self, space: pymunk.Space, bodies: Sequence[pymunk.Body],
                 motors: Sequence[pymunk.SimpleMotor], n_steps: int, dt_s: float,
                 command_rate_rad_s: float) -> None:
        self.space = space
        self._dt = float(dt_s)
        self.motors = list(motors)
        self.n_steps = int(n_steps)
        self.rate_cap = float(command_rate_rad_s)
        ids = pb.Buffer()
        pb.get_space_bodies(space, pb.BodyFields.BODY_ID, ids)
        order = [int(i) for i in np.frombuffer(ids.int_buf(), dtype=np.uintp)]
        self.columns = [tuple(order.index(b.id) * BODY_COLS + c for c in range(BODY_COLS))
                        for b in bodies]
        self.n_space_bodies = len(order)
        self.n_row = self.n_space_bodies * BODY_COLS
        n_rows = self.n_steps + 1
        # The C pusher grows an array when it is one short of full: two spare values mean it
        # never reallocates this numpy memory.
        self.states = np.zeros(n_rows * self.n_row + 2)
        self.impulses = np.zeros(n_rows * max(len(self.motors), 1))
        self.torque_sign_known = True
        self.caution: str | None = None

    def advance(self, k0: int, k1: int, command: Command | None = None) -> None:
        """Take steps ``k0 + 1 .. k1``, recording each.

        Parameters
        ----------
        k0, k1 : int
            The last step taken, and the last step to take.
        command : callable, optional
            Torque command ``command(k) -> T`` [N m], called before step ``k``: every motor is
            then held saturated at ``|T|`` towards a rate of ``+-command_rate_rad_s`` (the sign
            of ``T``). Without one the motors keep their settings.
        """
        raise NotImplementedError

    def contact_stream(self) -> tuple[np.ndarray, np.ndarray]:
        """The run's contact record so far.

        Returns
        -------
        ints : numpy.ndarray of uintp
            (Copies, which outlive the recorder.)
            Per state row, the ids of all bodies of the space, then :data:`ARB_INTS` integers per
            cached contact pair of the step (body a, body b, contact count 0, 1 or 2).
        floats : numpy.ndarray, shape (n, ARB_FLTS)
            Per contact pair in the same order: impulse, normal, points (see :data:`ARB_FLTS`).
        """
        raise NotImplementedError


class FastRecorder(Recorder):
    """The recorder on pymunk's internals: C step, batch readers, motor fields in place.

    Raises
    ------
    LookupError
        When the internals are missing or the motor record layout is not the verified one.
    """

    fast = True

    def __init__(self, space, bodies, motors, n_steps, dt_s, command_rate_rad_s) -> None:
        super().__init__(space, bodies, motors, n_steps, dt_s, command_rate_rad_s)
        try:
            from pymunk._chipmunk_cffi import ffi, lib

            self._sp = space._space
            cptrs = [m._constraint for m in self.motors]
        except (ImportError, AttributeError) as exc:
            raise LookupError(f"pymunk internals not found: {exc}") from None
        self._ffi, self._lib = ffi, lib
        n_rows = self.n_steps + 1
        self._barr = ffi.new("pmFloatArray *")
        self._barr.num = 0
        self._barr.max = len(self.states)
        self._barr.arr = ffi.from_buffer("double[]", self.states)
        # Contact buffers: C-owned, grown by pymunk as needed. The body reader also writes every
        # body's id into the contact integer stream, which marks where each step's contacts
        # begin without any per-step Python work.
        guess = n_rows * (max(2, 2 * (len(bodies) - 1)) + 1)
        self._afl = ffi.gc(lib.pmFloatArrayNew(guess * ARB_FLTS), lib.pmFloatArrayFree)
        self._ain = ffi.gc(lib.pmIntArrayNew(guess * ARB_INTS + n_rows * self.n_space_bodies),
                           lib.pmIntArrayFree)
        self._bdata = ffi.new("pmBatchedData *")
        self._bdata.fields = _BODY_FIELDS.value | pb.BodyFields.BODY_ID.value
        self._bdata.floatArray = self._barr
        self._bdata.intArray = self._ain
        self._body_fn = ffi.addressof(lib, "pmSpaceBodyGetIteratorFuncBatched")
        self._adata = ffi.new("pmBatchedData *")
        self._adata.fields = _ARB_FIELDS.value
        self._adata.floatArray = self._afl
        self._adata.intArray = self._ain
        self._arb_fn = ffi.addressof(lib, "pmSpaceArbiterIteratorFuncBatched")
        # Element access through memoryviews: about a third faster than through cffi pointers.
        self._mptr = [memoryview(ffi.buffer(ffi.cast("char *", c), (_MOTOR_JACC + 1) * 8)).cast("d")
                      for c in cptrs]
        for m, p in zip(self.motors, self._mptr, strict=True):
            if p[_MOTOR_RATE] != m.rate or p[_MOTOR_MAXFORCE] != m.max_force:
                raise LookupError("the motor record layout of this pymunk build is not the verified one")
        self._Tc = float_view(self.impulses)
        lib.cpSpaceEachBody(self._sp, self._body_fn, self._bdata)  # row 0

    def advance(self, k0: int, k1: int, command: Command | None = None) -> None:
        """Take steps ``k0 + 1 .. k1`` (see :meth:`Recorder.advance`): the hot loop.

        Per step: the command, the C step, the batch body reader (into the state array), the
        batch contact reader, and one read of each motor's accumulated impulse.
        """
        lib = self._lib
        sp, dt = self._sp, self._dt
        cp_step = lib.cpSpaceStep
        each_body, body_fn, bdata = lib.cpSpaceEachBody, self._body_fn, self._bdata
        each_arb, arb_fn, adata = lib.cpSpaceEachCachedArbiter, self._arb_fn, self._adata
        Tc, mp = self._Tc, self._mptr
        S = len(mp)
        R, MF, J = _MOTOR_RATE, _MOTOR_MAXFORCE, _MOTOR_JACC
        big = self.rate_cap
        # The first two motors are held in locals (most builds have one or two shafts): a loop
        # over the motors would cost about 5 % of a step.
        p0 = mp[0] if S > 0 else None
        p1 = mp[1] if S > 1 else None
        rest = mp[2:]
        rest_j = range(2, S)
        # The motors' rate (the sign of the commanded torque) is written only when it changes.
        fwd = p0[R] > 0.0 if p0 is not None else True
        for k in range(k0 + 1, k1 + 1):
            if command is not None and p0 is not None:
                tq = command(k)
                if (tq >= 0.0) is not fwd:
                    fwd = tq >= 0.0
                    r = big if fwd else -big
                    for p in mp:
                        p[R] = r
                mf = tq if fwd else -tq
                p0[MF] = mf
                if p1 is not None:
                    p1[MF] = mf
                    if rest:
                        for p in rest:
                            p[MF] = mf
            cp_step(sp, dt)
            each_body(sp, body_fn, bdata)
            each_arb(sp, arb_fn, adata)
            if p0 is not None:
                tb = S * k
                Tc[tb] = p0[J]
                if p1 is not None:
                    Tc[tb + 1] = p1[J]
                    if rest:
                        for j in rest_j:
                            Tc[tb + j] = mp[j][J]

    def contact_stream(self) -> tuple[np.ndarray, np.ndarray]:
        """The run's contact record so far (see :meth:`Recorder.contact_stream`)."""
        ffi = self._ffi
        n_int = int(self._ain.num)
        ints = np.frombuffer(ffi.buffer(self._ain.arr, n_int * ffi.sizeof("uintptr_t")), dtype=np.uintp)
        n_arb = int(self._afl.num) // ARB_FLTS
        flts = np.frombuffer(ffi.buffer(self._afl.arr, n_arb * ARB_FLTS * 8),
                             dtype=np.float64).reshape(-1, ARB_FLTS)
        return ints.copy(), flts.copy()  # the C arrays die with the recorder


class PublicRecorder(Recorder):
    """The recorder on pymunk's public interface: ``Space.step`` and :mod:`pymunk.batch`."""

    def __init__(self, space, bodies, motors, n_steps, dt_s, command_rate_rad_s) -> None:
        super().__init__(space, bodies, motors, n_steps, dt_s, command_rate_rad_s)
        self._bbuf = pb.Buffer()
        self._bbuf.set_float_buf(self.states)
        self._bbuf.clear()  # write from the start of the state array
        self._cbuf = pb.Buffer()
        self._record()  # row 0

    def _record(self) -> None:
        space = self.space
        pb.get_space_bodies(space, _BODY_FIELDS, self._bbuf)
        pb.get_space_bodies(space, pb.BodyFields.BODY_ID, self._cbuf)
        pb.get_space_arbiters(space, _ARB_FIELDS, self._cbuf)

    def advance(self, k0: int, k1: int, command: Command | None = None) -> None:
        """Take steps ``k0 + 1 .. k1`` (see :meth:`Recorder.advance`)."""
        motors, S, T, big = self.motors, len(self.motors), self.impulses, self.rate_cap
        for k in range(k0 + 1, k1 + 1):
            if command is not None:
                tq = command(k)
                fwd = tq >= 0.0
                for m in motors:
                    m.rate = big if fwd else -big
                    m.max_force = tq if fwd else -tq
            self.space.step(self._dt)
            self._record()
            for j, m in enumerate(motors):
                # pymunk's impulse is |jAcc|; a motor held towards rate r pushes with jAcc of
                # sign -r (SimpleMotor holds a.w - b.w = rate).
                T[S * k + j] = -math.copysign(m.impulse, m.rate)

    def contact_stream(self) -> tuple[np.ndarray, np.ndarray]:
        """The run's contact record so far (see :meth:`Recorder.contact_stream`)."""
        ints = np.frombuffer(self._cbuf.int_buf(), dtype=np.uintp)
        flts = np.frombuffer(self._cbuf.float_buf(), dtype=np.float64).reshape(-1, ARB_FLTS)
        return ints.copy(), flts.copy()  # the C arrays die with the recorder


def make_recorder(space: pymunk.Space, bodies: Sequence[pymunk.Body], motors: Sequence[pymunk.SimpleMotor],
                  n_steps: int, dt_s: float, command_rate_rad_s: float, *, commanded: bool,
                  interface: str = "auto") -> Recorder:
    """The fastest recorder verified on the installed pymunk.

    Parameters
    ----------
    space, bodies, motors, n_steps, dt_s, command_rate_rad_s
        As for :class:`Recorder`.
    commanded : bool
        Whether the motors are torque-commanded or held saturated (their impulse then has the
        sign opposite to their rate, which the public recorder relies on).
    interface : {"auto", "fast", "public"}
        ``"auto"``: the fast recorder on a verified pymunk whose layout checks out, else the
        public one with a caution; ``"fast"``: the fast one or :class:`LookupError`;
        ``"public"``: the public one.

    Returns
    -------
    Recorder
    """
    if interface not in ("auto", "fast", "public"):
        raise ValueError(f"interface must be 'auto', 'fast' or 'public', got {interface!r}")
    rec: Recorder | None = None
    why = ""
    if interface == "fast" or (interface == "auto" and pymunk_verified()):
        try:
            rec = FastRecorder(space, bodies, motors, n_steps, dt_s, command_rate_rad_s)
        except LookupError as exc:
            if interface == "fast":
                raise
            why = str(exc)
    elif interface == "auto":
        verified = ", ".join(f"{a}.{b}" for a, b in VERIFIED_PYMUNK)
        why = (f"pymunk {installed_pymunk_version()} is not a version whose internals were verified"
               f" ({verified})")
    if rec is None:
        rec = PublicRecorder(space, bodies, motors, n_steps, dt_s, command_rate_rad_s)
        rec.torque_sign_known = commanded or not motors
        if why:
            rec.caution = f"{why}: the run used pymunk's public interface (same figures, slower)"
    return rec

"""Per-wheel contact probes from the run's contact record: normal force, contact x, slip.

Vectorised over every contact of the run; the work is a few passes over arrays of
about two contacts a step. The record is the stream a recorder of
:mod:`ridesim.sim.pymunk_adapter` writes; the sections below follow the steps:
find each step's contacts in the stream, assign them to wheels and take their
points, the rim's slip velocity at each, and the reduction per wheel and step.
"""

from __future__ import annotations

import math

import numpy as np

from ridesim.sim.pymunk_adapter import ARB_INTS

__all__ = ["SLIP_LOAD_SHARE", "contact_steps", "wheel_contact_points", "rim_slip_m_s", "per_wheel"]

SLIP_LOAD_SHARE = 0.1
"""A contact's slip counts for its wheel when it carries at least this share of the wheel's
normal impulse in the step: a contact carrying less transmits little traction (a grazing touch
scuffs, it does not lose grip)."""


def contact_steps(ints: np.ndarray, flts: np.ndarray, n_space_bodies: int, k: int):
    """Find the contacts of steps ``0 .. k - 1`` in the record.

    Parameters
    ----------
    ints, floats : numpy.ndarray
        The record (:meth:`ridesim.sim.pymunk_adapter.Recorder.contact_stream`).
    n_space_bodies : int
        Bodies in the space (ids written per state row).
    k : int
        Steps taken.

    Returns
    -------
    tuple or None
        ``(step, id_a, id_b, two, floats)`` per touching contact pair (``two``: two contact
        points), or None when there is none.
    """
    if len(ints) == 0:
        return None
    # The stream holds, per state row j, the ids of all bodies (pointers, large numbers),
    # then three integers per contact of step j: body a, body b, contact count (1 or 2).
    small = ints <= 2
    cpos = np.flatnonzero(small)
    # Markers (body ids) before each contact count: its position less the contact
    # integers before it (three per earlier contact, two of its own).
    markers = cpos - ARB_INTS * np.arange(len(cpos)) - 2
    step = markers // n_space_bodies - 2  # contacts after row j's markers belong to step j - 1
    keep = (step >= 0) & (step < k) & (ints[cpos] > 0)
    idx = np.flatnonzero(keep)
    if len(idx) == 0:
        return None
    if len(idx) != len(keep):
        cpos, step, flts = cpos[idx], step[idx], flts[idx]
    return step, ints[cpos - 2], ints[cpos - 1], ints[cpos] == 2, flts


def wheel_contact_points(ida, idb, two, flts, wheel_ids):
    """Which wheel each contact is on, and its contact point (midpoint of two).

    Parameters
    ----------
    ida, idb : numpy.ndarray
        Body ids of each contact pair.
    two : numpy.ndarray of bool
        Whether the pair has two contact points.
    flts : numpy.ndarray, shape (n, 12)
        The pairs' floats.
    wheel_ids : sequence of int
        Body id of each wheel, in axle order.

    Returns
    -------
    axle : numpy.ndarray of int
    mx, my : numpy.ndarray
        Contact point [m] on the wheel.
    """
    # Which wheel, and whether it is body a (its points are then the a points). A wheel
    # against a track segment is always body b in pymunk's shape order, but either is read.
    wheel_ids = np.array(wheel_ids, dtype=np.uintp)
    axle = np.zeros(len(ida), dtype=np.int64)
    in_a = np.zeros(len(ida), dtype=bool)
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
    return axle, mx, my


def rim_slip_m_s(flat, base, mx, my, nx, ny, wheel_com_m, r_max_m):
    """Slip speed [m/s] of the rim along the track at each contact.

    The rim velocity at the contact is ``v_cg + w x (p - cg)``, read from the state row after
    the step; the slip is its component along the tangent ``(ny, -nx)`` oriented with the
    normal pointing up.

    Parameters
    ----------
    flat : numpy.ndarray
        The flat state array.
    base : numpy.ndarray of int
        Index of the contact's wheel's first column (x) in the row after the step; a wheel's
        six columns are consecutive.
    mx, my : numpy.ndarray
        Contact points [m].
    nx, ny : numpy.ndarray
        Contact normals.
    wheel_com_m : tuple of float
        The wheel's centre of mass [m] in its frame.
    r_max_m : float
        The wheel's largest radius [m].

    Returns
    -------
    numpy.ndarray
    """
    vx = flat[base + 3]
    vy = flat[base + 4]
    om = flat[base + 5]
    dx = mx - flat[base]
    dy = my - flat[base + 1]
    cgx, cgy = wheel_com_m
    if math.hypot(cgx, cgy) > 1e-12 * r_max_m:  # else below rounding of dx, dy
        a = flat[base + 2]
        ca, sa = np.cos(a), np.sin(a)
        dx -= ca * cgx - sa * cgy
        dy -= sa * cgx + ca * cgy
    return np.copysign(1.0, ny) * ((vx - om * dy) * ny - (vy + om * dx) * nx)


def per_wheel(step, axle, jn, sl, mx, k: int, n_axles: int, dt_s: float):
    """Reduce contacts to one value per wheel and step.

    Per wheel and step: the normal force is the sum of its contacts' normal impulses over the
    step; the contact x is that of its most loaded contact; the slip is the largest ``|slip|``
    among contacts carrying at least :data:`SLIP_LOAD_SHARE` of its load (ties go to the first
    in pymunk's contact order, which is deterministic).

    Parameters
    ----------
    step, axle : numpy.ndarray of int
        Step and wheel of each contact, in the record's order.
    jn : numpy.ndarray
        Normal impulse [N s] of each contact.
    sl : numpy.ndarray
        Slip speed [m/s] of each contact.
    mx : numpy.ndarray
        Contact x [m].
    k, n_axles : int
        Steps and wheels.
    dt_s : float
        The step [s].

    Returns
    -------
    slip_m_s, normal_N, contact, contact_x_m : numpy.ndarray, shape (k, n_axles)
    """
    A = n_axles
    slip = np.full((k, A), np.nan)
    normal = np.zeros((k, A))
    contact = np.zeros((k, A), dtype=bool)
    cxm = np.full((k, A), np.nan)
    if len(step) == 0:
        return slip, normal, contact, cxm
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
    normal[gs, ga] = tot / dt_s
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

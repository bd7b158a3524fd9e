"""Compiled update of the interior nodes of a line (method of characteristics, vapour cavities).

Wylie & Streeter, *Fluid Transients in Systems* (1993), ch. 3 (characteristics, friction
linearised on the new flow) and ch. 8 (discrete vapour cavity model); Bergant & Simpson,
J. Hydraul. Eng. 125(8) (1999), for the cavity volume with weighting psi = 1.

Performance notes: every loop runs over slices of the line from a literal 1, so that numba
need not guard against negative indices, and has no branches, so that LLVM vectorises it; the
``error_model="numpy"`` drops the division-by-zero checks that would stop vectorisation. They
are compiled without reference counting (``_nrt=False``: they allocate nothing, and each slice
would otherwise cost an atomic increment and decrement), and the plain update is inlined into
:func:`update_line`, since the call of a function that takes ten arrays costs about as much as
updating a short line.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from .codes import ENVELOPE_SLACK

#: first node of an empty stretch (larger than any node number)
NONE = 1 << 40


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _plain(H0, U0, D0, H1, U1, D1, HV, VOL, HX, HN, m, bb, rr):
    """Water-hammer update of nodes 1 .. m - 1 of slices, without cavities.

    ``H`` head [m], ``U`` flow entering a node from the left, ``D`` flow leaving it to the right
    [m^3/s]; 0 old, 1 new. ``bb = a/(gA)``, ``rr = f dx / (2 g D A^2)``. Returns how many nodes
    are below the vapour head ``HV``, and how many moved beyond their envelope ``HX``/``HN``:
    the tests of :func:`_counted`, written on the new head here so that the loop vectorises
    (keep the two alike). No node given to it holds a cavity (``VOL`` is zero there):
    :func:`update_line` gives the cavitating update to the stretch that held cavities, one
    node wider each side, so its volume is not read. Counts, not the first and last
    such node: a sum vectorises to one instruction, while a running minimum and maximum of
    64-bit indices has no AVX2 instruction and took about 40 % of the update.
    """
    nc = 0
    ne = 0
    for i in range(1, m):
        qa = D0[i - 1]
        qb = U0[i + 1]
        cp = H0[i - 1] + bb * qa
        bp = bb + rr * abs(qa)
        cm = H0[i + 1] - bb * qb
        bm = bb + rr * abs(qb)
        inv = 1.0 / (bp + bm)
        hh = (cp * bm + cm * bp) * inv
        qq = (cp - cm) * inv
        H1[i] = hh
        U1[i] = qq
        D1[i] = qq
        nc += np.int64(hh < HV[i])
        ne += np.int64((hh > HX[i] + ENVELOPE_SLACK) | (hh < HN[i] - ENVELOPE_SLACK))
    return nc, ne


#: what :func:`_counted` tests: a node that may hold a cavity, or one beyond its envelope
CAVITY_TEST, ENVELOPE_TEST = 0, 1


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _counted(test, i, H1, A, B):
    """Node ``i`` passes ``test``, as :func:`_plain` counts it: ``CAVITY_TEST`` (``A`` the
    vapour head, ``B`` unused) below the vapour head;
    ``ENVELOPE_TEST`` (``A``, ``B`` the envelope's highest and lowest head) beyond the envelope
    by more than ``ENVELOPE_SLACK``."""
    if test == CAVITY_TEST:
        return H1[i] < A[i]
    return (H1[i] > A[i] + ENVELOPE_SLACK) | (H1[i] < B[i] - ENVELOPE_SLACK)


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _first_last(test, m, H1, A, B):
    """First and last of nodes 1 .. m - 1 that pass ``test`` (:func:`_counted`), searched from
    both ends; called only when :func:`_plain` counted one, and kept within the nodes."""
    lo = 1
    while lo < m - 1 and not _counted(test, lo, H1, A, B):
        lo += 1
    hi = m - 1
    while hi > lo and not _counted(test, hi, H1, A, B):
        hi -= 1
    return lo, hi


@njit(cache=True, _nrt=False, error_model="numpy")
def _cavitating(H0, U0, D0, H1, U1, D1, HV, VOL, m, bb, rr, dt):
    """Update of nodes 1 .. m - 1 of slices with discrete vapour cavities, branch-free.

    Every node gets the water-hammer head ``hh``. Where the cavity volume
    ``V + dt (1/B_P + 1/B_M)(H_v - hh)`` stays positive, the head is held at the vapour head;
    where a cavity closes within the step, the head is the one whose two flows fill exactly
    the volume left, ``hh - V / (dt (1/B_P + 1/B_M))`` (not below the vapour head), so that no
    liquid is made or lost. The flows are ``(C_P - H)/B_P`` and ``(H - C_M)/B_M`` in every case
    (equal for a plain node). Returns how many nodes hold a cavity after the step.
    """
    ncav = 0
    idt = 1.0 / dt
    for i in range(1, m):
        qa = D0[i - 1]
        qb = U0[i + 1]
        cp = H0[i - 1] + bb * qa
        bp = bb + rr * abs(qa)
        cm = H0[i + 1] - bb * qb
        bm = bb + rr * abs(qb)
        s = bp + bm
        pm = bp * bm
        r = 1.0 / (pm * s)  # the only division
        ibp = bm * s * r  # 1/B_P
        ibm = bp * s * r  # 1/B_M
        inv = pm * r  # 1/(B_P + B_M)
        hh = (cp * bm + cm * bp) * inv
        v0 = VOL[i]
        v = v0 + dt * (HV[i] - hh) * s * s * r  # 1/B_P + 1/B_M = s^2 r
        cav = v > 0.0
        # 1 / (1/B_P + 1/B_M) = B_P B_M / (B_P + B_M)
        h = HV[i] if cav else (hh - v0 * idt * pm * inv if v0 > 0.0 else hh)
        H1[i] = h
        U1[i] = (cp - h) * ibp
        D1[i] = (h - cm) * ibm
        VOL[i] = v if cav else 0.0
        ncav += np.int64(cav)
    return ncav


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _plain_part(h0, qu0, qd0, h1, qu1, qd1, hv, vol, hmax, hmin, st, i0, i1, bb, rr):
    """:func:`_plain` over nodes ``st + i0 .. st + i1`` (i0 >= 1); the node numbers returned
    count from ``st``, and an empty stretch is ``(NONE, -1)``."""
    if i1 < i0:
        return NONE, -1, NONE, -1
    a = st + i0 - 1
    z = st + i1 + 2
    m = i1 - i0 + 2
    nc, ne = _plain(
        h0[a:z], qu0[a:z], qd0[a:z], h1[a:z], qu1[a:z], qd1[a:z], hv[a:z], vol[a:z],
        hmax[a:z], hmin[a:z], m, bb, rr,
    )  # fmt: skip
    # the first and last node counted (node numbers from ``st``)
    c0, c1, e0, e1 = NONE, -1, NONE, -1
    off = i0 - 1
    if nc > 0:
        c0, c1 = _first_last(CAVITY_TEST, m, h1[a:z], hv[a:z], vol[a:z])
        c0, c1 = c0 + off, c1 + off
    if ne > 0:
        e0, e1 = _first_last(ENVELOPE_TEST, m, h1[a:z], hmax[a:z], hmin[a:z])
        e0, e1 = e0 + off, e1 + off
    return c0, c1, e0, e1


@njit(cache=True, _nrt=False, error_model="numpy")
def update_line(state, envelope, st, nr, bb, rr, dt, n, cav_on, span):
    """Update the interior nodes ``st + 1 .. st + nr - 1`` of one line to step ``n``.

    ``state`` is ``(h0, qu0, qd0, h1, qu1, qd1, hv, vol)``, ``envelope`` is
    ``(hmax, kmax, hmin, kmin, vmax, kv)`` (per node: extreme heads [m] and cavity volumes
    [m^3], with the steps they were reached). The stretch that held cavities after the last
    step (``span[0] .. span[1]``, one node wider each side) takes the cavitating update, the
    rest the plain one; where that finds a node below the vapour head, the cavitating stretch
    widens to cover it. The envelope is updated over the nodes that may have moved beyond it,
    and ``span`` to the stretch that holds cavities after this step.
    """
    h0, qu0, qd0, h1, qu1, qd1, hv, vol = state
    hmax, kmax, hmin, kmin, vmax, kv = envelope
    e = st + nr + 1
    H1 = h1[st:e]
    VOL = vol[st:e]
    HX = hmax[st:e]
    HN = hmin[st:e]
    if cav_on and span[0] <= span[1]:
        lo = max(1, span[0] - 1)
        hi = min(nr - 1, span[1] + 1)
        c0, c1, e0, e1 = _plain_part(
            h0, qu0, qd0, h1, qu1, qd1, hv, vol, hmax, hmin, st, 1, lo - 1, bb, rr
        )
        d0, d1, f0, f1 = _plain_part(
            h0, qu0, qd0, h1, qu1, qd1, hv, vol, hmax, hmin, st, hi + 1, nr - 1, bb, rr
        )
        c0 = min(lo, c0, d0)
        c1 = max(hi, c1, d1)
        e0 = min(e0, f0)
        e1 = max(e1, f1)
    else:
        c0, c1, e0, e1 = _plain_part(
            h0, qu0, qd0, h1, qu1, qd1, hv, vol, hmax, hmin, st, 1, nr - 1, bb, rr
        )
    span[0] = NONE
    span[1] = -1
    if cav_on and c0 <= c1:
        # nodes c0 .. c1 with their neighbours c0 - 1 and c1 + 1
        a = st + c0 - 1
        z = st + c1 + 2
        ncav = _cavitating(
            h0[a:z], qu0[a:z], qd0[a:z], h1[a:z], qu1[a:z], qd1[a:z], hv[a:z], vol[a:z],
            c1 - c0 + 2, bb, rr, dt,
        )  # fmt: skip
        e0 = min(e0, c0)
        e1 = max(e1, c1)
        if ncav > 0:
            VX = vmax[st:e]
            KV = kv[st:e]
            for i in range(c0, c1 + 1):
                if VOL[i] > 0.0:
                    span[0] = min(span[0], i)
                    span[1] = i
                    if VOL[i] > VX[i]:
                        VX[i] = VOL[i]
                        KV[i] = n
    if e0 <= e1:
        KX = kmax[st:e]
        KN = kmin[st:e]
        for i in range(e0, e1 + 1):
            hh = H1[i]
            if hh > HX[i]:
                HX[i] = hh
                KX[i] = n
            if hh < HN[i]:
                HN[i] = hh
                KN[i] = n


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def envelope_node(i, n, h, v, envelope):
    """Update node ``i``'s envelope with head ``h`` [m] and cavity volume ``v`` [m^3]."""
    hmax, kmax, hmin, kmin, vmax, kv = envelope
    if h > hmax[i]:
        hmax[i] = h
        kmax[i] = n
    if h < hmin[i]:
        hmin[i] = h
        kmin[i] = n
    if v > vmax[i]:
        vmax[i] = v
        kv[i] = n


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def update_lines(state, envelope, starts, reaches, bs, rs, dt, n, cav_on, spans):
    """:func:`update_line` for every line of a member (one call per step: a call that passes
    the state's arrays costs as much as the update of a short line)."""
    for ln in range(starts.shape[0]):
        update_line(state, envelope, starts[ln], reaches[ln], bs[ln], rs[ln], dt, n, cav_on,
                    spans[ln])  # fmt: skip

"""Compiled update of the interior nodes of a line (method of characteristics, vapour cavities).

Wylie & Streeter, *Fluid Transients in Systems* (1993), ch. 3 (characteristics, friction
linearised on the new flow) and ch. 8 (discrete vapour cavity model); Bergant & Simpson,
J. Hydraul. Eng. 125(8) (1999), for the cavity volume with weighting psi = 1.

Performance notes: short lines next to each other share one plain pass (:func:`update_lines`);
the passes have no branches, so that LLVM vectorises them, and the ``error_model="numpy"``
drops the division-by-zero checks that would stop vectorisation. A vectorised loop first checks
at run time that its arrays do not overlap: paid once per line, that set-up was a large share of
the time of a short line. A long line keeps a pass of its own, so that the nodes of a short line
that hold a cavity or move the envelope are not looked for through it, and a line holding a
long stretch of cavities is updated alone, its plain pass split around the stretch, so that the
stretch is not updated twice. Results are the same, bit for bit, whichever way a line is taken.
Everything is compiled without reference counting (``_nrt=False``: nothing here allocates, and
each slice would otherwise cost an atomic increment and decrement).
"""

from __future__ import annotations

import numpy as np
from numba import njit

from .codes import ENVELOPE_SLACK

#: first node of an empty stretch (larger than any node number)
NONE = 1 << 40


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _plain(H0, U0, D0, H1, U1, D1, HV, VOL, HX, HN, BB, RR, m):
    """Water-hammer update of nodes 1 .. m - 1, without cavities.

    ``H`` head [m], ``U`` flow entering a node from the left, ``D`` flow leaving it to the right
    [m^3/s]; 0 old, 1 new. Per node, ``BB = a/(gA)`` and ``RR = f dx / (2 g D A^2)`` of its
    line. Returns how many nodes are below the vapour head ``HV`` or hold a cavity, and how
    many moved beyond their envelope ``HX``/``HN``: the tests of :func:`_counted`, written on
    the new head here so that the loop vectorises (keep the two alike). Counts, not the first
    and last such node: a sum vectorises to one instruction, while a running minimum and
    maximum of 64-bit indices has no AVX2 instruction and took about 40 % of the update.
    """
    nc = 0
    ne = 0
    for i in range(1, m):
        qa = D0[i - 1]
        qb = U0[i + 1]
        bb = BB[i]
        rr = RR[i]
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
        nc += np.int64((hh < HV[i]) | (VOL[i] > 0.0))
        ne += np.int64((hh > HX[i] + ENVELOPE_SLACK) | (hh < HN[i] - ENVELOPE_SLACK))
    return nc, ne


#: what :func:`_counted` tests: a node that may hold a cavity, or one beyond its envelope
CAVITY_TEST, ENVELOPE_TEST = 0, 1


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _counted(test, i, H1, A, B):
    """Node ``i`` passes ``test``, as :func:`_plain` counts it: ``CAVITY_TEST`` (``A`` the
    vapour head, ``B`` the cavity volume) below the vapour head or holding a cavity;
    ``ENVELOPE_TEST`` (``A``, ``B`` the envelope's highest and lowest head) beyond the envelope
    by more than ``ENVELOPE_SLACK``."""
    if test == CAVITY_TEST:
        return (H1[i] < A[i]) | (B[i] > 0.0)
    return (H1[i] > A[i] + ENVELOPE_SLACK) | (H1[i] < B[i] - ENVELOPE_SLACK)


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _first_last(test, a, z, H1, A, B):
    """First and last of nodes ``a .. z`` that pass ``test`` (:func:`_counted`), searched
    from both ends; ``(NONE, -1)`` when none does."""
    lo = a
    while lo <= z and not _counted(test, lo, H1, A, B):
        lo += 1
    if lo > z:
        return NONE, -1
    hi = z
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
def _plain_part(h0, qu0, qd0, h1, qu1, qd1, hv, vol, hmax, hmin, coef, st, i0, i1):
    """:func:`_plain` over nodes ``st + i0 .. st + i1`` (i0 >= 1); the first and last node
    that may hold a cavity and that moved beyond the envelope, counted from ``st`` (an empty
    stretch is ``(NONE, -1)``)."""
    if i1 < i0:
        return NONE, -1, NONE, -1
    a = st + i0 - 1
    z = st + i1 + 2
    nc, ne = _plain(
        h0[a:z], qu0[a:z], qd0[a:z], h1[a:z], qu1[a:z], qd1[a:z], hv[a:z], vol[a:z],
        hmax[a:z], hmin[a:z], coef[0][a:z], coef[1][a:z], i1 - i0 + 2,
    )  # fmt: skip
    c0, c1, e0, e1 = NONE, -1, NONE, -1
    if nc > 0:
        c0, c1 = _first_last(CAVITY_TEST, st + i0, st + i1, h1, hv, vol)
        c0, c1 = c0 - st, c1 - st
    if ne > 0:
        e0, e1 = _first_last(ENVELOPE_TEST, st + i0, st + i1, h1, hmax, hmin)
        e0, e1 = e0 - st, e1 - st
    return c0, c1, e0, e1


@njit(cache=True, _nrt=False, error_model="numpy")
def update_line(state, envelope, st, nr, bb, rr, coef, dt, n, cav_on, span):
    """Update the interior nodes ``st + 1 .. st + nr - 1`` of one line that holds cavities
    to step ``n`` (:func:`update_lines` for the arguments).

    The stretch that held cavities after the last step (``span[0] .. span[1]``, one node wider
    each side) takes the cavitating update, the rest the plain one, in a pass each side of it
    (so that a long cavity is not updated twice); where that finds a node below the vapour
    head, the cavitating stretch widens to cover it. The envelope is updated over the nodes
    that may have moved beyond it, and ``span`` to the stretch that holds cavities after this
    step.
    """
    h0, qu0, qd0, h1, qu1, qd1, hv, vol = state
    hmax, kmax, hmin, kmin, vmax, kv = envelope
    if cav_on and span[0] <= span[1]:
        lo = max(1, span[0] - 1)
        hi = min(nr - 1, span[1] + 1)
        c0, c1, e0, e1 = _plain_part(
            h0, qu0, qd0, h1, qu1, qd1, hv, vol, hmax, hmin, coef, st, 1, lo - 1
        )
        d0, d1, f0, f1 = _plain_part(
            h0, qu0, qd0, h1, qu1, qd1, hv, vol, hmax, hmin, coef, st, hi + 1, nr - 1
        )
        c0 = min(lo, c0, d0)
        c1 = max(hi, c1, d1)
        e0 = min(e0, f0)
        e1 = max(e1, f1)
    else:
        c0, c1, e0, e1 = _plain_part(
            h0, qu0, qd0, h1, qu1, qd1, hv, vol, hmax, hmin, coef, st, 1, nr - 1
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
            for i in range(st + c0, st + c1 + 1):
                if vol[i] > 0.0:
                    span[0] = min(span[0], i - st)
                    span[1] = i - st
                    if vol[i] > vmax[i]:
                        vmax[i] = vol[i]
                        kv[i] = n
    for i in range(st + e0, st + e1 + 1):
        hh = h1[i]
        if hh > hmax[i]:
            hmax[i] = hh
            kmax[i] = n
        if hh < hmin[i]:
            hmin[i] = hh
            kmin[i] = n


#: a line of at least this many reaches gets a plain pass of its own; shorter lines next to each
#: other share one (:func:`update_lines`)
LONG_LINE = 64
#: a line holding a stretch of cavities at least this many nodes long (less one) is updated
#: alone, its plain pass split around the stretch (:func:`update_line`)
LONG_SPAN = 16


@njit(cache=True, _nrt=False, error_model="numpy")
def update_lines(state, envelope, starts, reaches, bs, rs, coef, dt, n, cav_on, spans):
    """Update the interior nodes of every line of a member to step ``n``.

    ``state`` is ``(h0, qu0, qd0, h1, qu1, qd1, hv, vol)``, ``envelope`` is
    ``(hmax, kmax, hmin, kmin, vmax, kv)`` (per node: extreme heads [m] and cavity volumes
    [m^3], with the steps they were reached); line ``ln`` has nodes ``starts[ln] ..
    starts[ln] + reaches[ln]``, one after the other, and ``bs``, ``rs`` its coefficients
    (:func:`_plain`), which ``coef`` holds per node.

    Short lines next to each other share one plain pass, line ends included
    (:func:`_lines_piece`); a long line (``LONG_LINE`` reaches or more) has its own, and a
    line holding a stretch of cavities of ``LONG_SPAN`` nodes or more is updated alone
    (:func:`update_line`).
    """
    nl = starts.shape[0]
    la = 0
    while la < nl:
        if cav_on and spans[la, 1] - spans[la, 0] >= LONG_SPAN:
            # a long stretch of cavities held since the last step: this line alone, around it
            update_line(state, envelope, starts[la], reaches[la], bs[la], rs[la], coef, dt, n,
                        cav_on, spans[la])  # fmt: skip
            la += 1
            continue
        lb = la
        if reaches[la] < LONG_LINE:
            while (
                lb + 1 < nl
                and reaches[lb + 1] < LONG_LINE
                and not (cav_on and spans[lb + 1, 1] - spans[lb + 1, 0] >= LONG_SPAN)
            ):
                lb += 1
        _lines_piece(state, envelope, starts, reaches, bs, rs, coef, dt, n, cav_on, spans,
                     la, lb)  # fmt: skip
        la = lb + 1


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _lines_piece(state, envelope, starts, reaches, bs, rs, coef, dt, n, cav_on, spans, la, lb):
    """Lines ``la .. lb``: one plain pass over their interior nodes and the line ends between
    them. The line ends get values there that the connections then overwrite
    (:mod:`esdsurge.engine.chain`), and are taken out of its counts. Then, per line, the
    stretch that held cavities after the last step (``spans[ln]``, one node wider each side)
    and any node the plain pass found below the vapour head take the cavitating update; the
    envelope is updated over the nodes that may have moved beyond it, and ``spans`` to the
    stretches that hold cavities after this step."""
    h0, qu0, qd0, h1, qu1, qd1, hv, vol = state
    hmax, kmax, hmin, kmin, vmax, kv = envelope
    first = starts[la] + 1
    last = starts[lb] + reaches[lb] - 1
    nc, ne = 0, 0
    if first <= last:
        a = first - 1
        z = last + 2
        nc, ne = _plain(
            h0[a:z], qu0[a:z], qd0[a:z], h1[a:z], qu1[a:z], qd1[a:z], hv[a:z], vol[a:z],
            hmax[a:z], hmin[a:z], coef[0][a:z], coef[1][a:z], last - first + 2,
        )  # fmt: skip
    for ln in range(la + 1, lb + 1):
        # the ends of two lines that meet: nodes starts[ln] - 1 and starts[ln]
        for i in range(starts[ln] - 1, starts[ln] + 1):
            nc -= np.int64(_counted(CAVITY_TEST, i, h1, hv, vol))
            ne -= np.int64(_counted(ENVELOPE_TEST, i, h1, hmax, hmin))
    # the nodes (global numbers) that may hold a cavity, and per line the stretch updated
    # for cavities (line numbers from its start; NONE, -1: none)
    g0, g1 = NONE, -1
    if cav_on and nc > 0:
        g0, g1 = _first_last(CAVITY_TEST, first, last, h1, hv, vol)
    any_cav = False
    for ln in range(la, lb + 1):
        st = starts[ln]
        nr = reaches[ln]
        span = spans[ln]
        c0, c1 = NONE, -1
        if cav_on and nc > 0:
            a = max(st + 1, g0)
            z = min(st + nr - 1, g1)
            if a <= z:
                c0, c1 = _first_last(CAVITY_TEST, a, z, h1, hv, vol)
                if c0 <= c1:
                    c0, c1 = c0 - st, c1 - st
            if span[0] <= span[1]:
                c0 = min(c0, max(1, span[0] - 1))
                c1 = max(c1, min(nr - 1, span[1] + 1))
        span[0] = NONE
        span[1] = -1
        if c0 <= c1:
            any_cav = True
            # nodes c0 .. c1 with their neighbours c0 - 1 and c1 + 1
            a = st + c0 - 1
            z = st + c1 + 2
            ncav = _cavitating(
                h0[a:z], qu0[a:z], qd0[a:z], h1[a:z], qu1[a:z], qd1[a:z], hv[a:z], vol[a:z],
                c1 - c0 + 2, bs[ln], rs[ln], dt,
            )  # fmt: skip
            if ncav > 0:
                for i in range(st + c0, st + c1 + 1):
                    if vol[i] > 0.0:
                        span[0] = min(span[0], i - st)
                        span[1] = i - st
                        if vol[i] > vmax[i]:
                            vmax[i] = vol[i]
                            kv[i] = n
        # the cavitating stretch, kept for the envelope pass
        span[2] = c0
        span[3] = c1
    if ne > 0 or any_cav:
        _envelope_pass(ne, h1, envelope, starts, reaches, spans, la, lb, n)


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _envelope_pass(count, h1, envelope, starts, reaches, spans, la, lb, n):
    """Move the envelope out to the new heads over lines ``la .. lb``: per line, over the
    first to the last node beyond it (``count`` of them were counted) and over the stretch
    updated for cavities (``spans[ln, 2:4]``)."""
    hmax, kmax, hmin, kmin = envelope[0], envelope[1], envelope[2], envelope[3]
    e0, e1 = NONE, -1
    if count > 0:
        e0, e1 = _first_last(
            ENVELOPE_TEST, starts[la] + 1, starts[lb] + reaches[lb] - 1, h1, hmax, hmin
        )
    for ln in range(la, lb + 1):
        st = starts[ln]
        span = spans[ln]
        lo, hi = NONE, -1
        a = max(st + 1, e0)
        z = min(st + reaches[ln] - 1, e1)
        if a <= z:
            lo, hi = _first_last(ENVELOPE_TEST, a, z, h1, hmax, hmin)
        if span[2] <= span[3]:
            lo = min(lo, st + span[2])
            hi = max(hi, st + span[3])
        for i in range(lo, hi + 1):
            hh = h1[i]
            if hh > hmax[i]:
                hmax[i] = hh
                kmax[i] = n
            if hh < hmin[i]:
                hmin[i] = hh
                kmin[i] = n

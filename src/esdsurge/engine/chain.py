"""Compiled boundaries: the devices between lines and the connections they form.

A *connection* joins the end node ``u`` of the line on its left (or a tank) to the first node
``d`` of the line on its right (or a tank) through a chain of zero-length devices in route
order, sharing one flow ``Q``: pumps (fitted curve at speed, affinity laws), valves and
couplings (effective area in time), fixed losses (a throttle) and manifolds (no head change).
The balance ``H_left(Q) + sum dH_i(Q) - H_right(Q) = 0`` is solved by a safeguarded Newton
iteration; ``H_left = C_P - B_P Q`` and ``H_right = C_M + B_M Q`` come from the characteristics
reaching ``u`` and ``d`` (Wylie & Streeter, *Fluid Transients in Systems*, 1993, ch. 3 and 5).
A chain with no device that changes the head is a plain junction: common head, continuity.

Each of ``u`` and ``d`` may hold a vapour cavity (discrete vapour cavity model, ibid. ch. 8):
its head is then the vapour head and its two flows differ by the growth of the cavity; a cavity
that closes within a step is closed exactly (no liquid made or lost).

Pumps: ``dH = pushes (h0 s^2 + h1 s x + h2 x |x|)``, ``x = pushes Q / units`` (a zone-2
extension ``x|x|`` for flow against the pump). A check valve stops flow against the pump and
stays shut while the pump cannot open it. After a trip the speed follows
``s0 / (1 + (t - t_trip)/tau)`` (REFERENCES §8), or, in the torque model, J dw/dt = -T with the
hydraulic torque of the current flow and head and an efficiency ``eta_bep x (2 - x)`` through
the best-efficiency point (taken at the steady operating point, at rated speed), which gives
the shut-off torque half its best-efficiency value when the check valve holds.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from .codes import (
    DEV_LOSS,
    DEV_PUMP,
    DEV_VALVE,
    P_CHECK,
    P_H0,
    P_H1,
    P_JW2,
    P_MODE,
    P_QBEP,
    P_RHOG_ETA,
    P_S0,
    P_TAU,
    P_TTRIP,
    RUNDOWN_ANALYTIC,
    W_A,
    W_B,
    W_C,
    W_H,
    W_K,
    W_P,
    W_Q,
    W_S,
    W_SHUT,
    W_U,
)


@njit(cache=True, error_model="numpy", inline="always")
def device_dh(d, q, kind, work):
    """Head gained across device ``d`` in route direction at flow ``q`` [m]."""
    k = kind[d]
    if k == DEV_VALVE or k == DEV_LOSS:
        return -work[W_K, d] * q * abs(q)
    if k == DEV_PUMP:
        s = work[W_P, d]
        x = s * q / work[W_U, d]
        return s * (work[W_A, d] + work[W_B, d] * x + work[W_C, d] * x * abs(x))
    return 0.0


@njit(cache=True, error_model="numpy")
def _balance(q, cl, bl, cr, br, d0, d1, kind, work):
    """Head balance of a chain at flow ``q`` [m] and its slope [s/m^2]."""
    f = cl - bl * q - cr - br * q
    df = -bl - br
    aq = abs(q)
    for d in range(d0, d1):
        k = kind[d]
        if k == DEV_VALVE or k == DEV_LOSS:
            f -= work[W_K, d] * q * aq
            df -= 2.0 * work[W_K, d] * aq
        elif k == DEV_PUMP:
            u = work[W_U, d]
            s = work[W_P, d]
            x = s * q / u
            f += s * (work[W_A, d] + work[W_B, d] * x + work[W_C, d] * x * abs(x))
            df += (work[W_B, d] + 2.0 * work[W_C, d] * abs(x)) / u
    return f, df


@njit(cache=True, error_model="numpy")
def solve_chain(qg, qscale, cl, bl, cr, br, d0, d1, kind, work):
    """Flow through a chain [m^3/s]: the root of its head balance.

    Every device's head change is ``a + b Q + c Q|Q|`` in the route flow ``Q`` (a valve or
    loss ``-K Q|Q|``; a pump ``pushes h0 s^2 + h1 s Q/n + h2 (Q/n)|Q/n|``), so the balance is
    ``A0 + A1 Q + A2 Q|Q|``. When it falls with the flow (``A1 <= 0``, ``A2 <= 0``, the usual
    case) its root has the sign of ``A0`` and is, without cancellation,
    ``Q = 2 A0 / (-A1 + sqrt(A1^2 - 4 A2 |A0|))``; otherwise :func:`_newton` finds it.
    """
    a0 = cl - cr
    a1 = -bl - br
    a2 = 0.0
    for d in range(d0, d1):
        k = kind[d]
        if k == DEV_VALVE or k == DEV_LOSS:
            a2 -= work[W_K, d]
        elif k == DEV_PUMP:
            u = work[W_U, d]
            a0 += work[W_P, d] * work[W_A, d]
            a1 += work[W_B, d] / u
            a2 += work[W_C, d] / (u * u)
    if a1 <= 0.0 and a2 <= 0.0 and (a1 < 0.0 or a2 < 0.0):
        if a0 == 0.0:
            return 0.0  # no head to drive a flow (e.g. vapour on both sides at one level)
        return 2.0 * a0 / (-a1 + np.sqrt(a1 * a1 - 4.0 * a2 * abs(a0)))
    return _newton(qg, qscale, cl, bl, cr, br, d0, d1, kind, work)


@njit(cache=True, error_model="numpy")
def _newton(qg, qscale, cl, bl, cr, br, d0, d1, kind, work):
    """Root of a chain's head balance near the guess ``qg`` [m^3/s].

    The balance falls with the flow (losses and the lines' impedances), so a bracket is found
    by stepping out from the guess; Newton steps are kept inside it (bisection when a step
    leaves it or the slope is not negative), and the iteration converges relative to the root
    itself, since a nearly shut valve passes a tiny flow.
    """
    f, df = _balance(qg, cl, bl, cr, br, d0, d1, kind, work)
    if f == 0.0:
        return qg
    step = max(abs(qg), qscale) * 0.05 + 1e-12
    lo = qg
    hi = qg
    found = False
    for _ in range(80):
        if f > 0.0:
            hi = hi + step
            fhi, _s = _balance(hi, cl, bl, cr, br, d0, d1, kind, work)
            if fhi <= 0.0:
                found = True
                break
            lo = hi
        else:
            lo = lo - step
            flo, _s = _balance(lo, cl, bl, cr, br, d0, d1, kind, work)
            if flo >= 0.0:
                found = True
                break
            hi = lo
        step *= 2.0
    if not found:
        return qg
    q = qg if lo < qg < hi else 0.5 * (lo + hi)
    f, df = _balance(q, cl, bl, cr, br, d0, d1, kind, work)
    for _ in range(200):
        if f == 0.0:
            return q
        if f > 0.0:
            lo = q
        else:
            hi = q
        tol = 1e-14 * max(abs(q), 1e-300)
        if hi - lo <= tol:
            break
        qn = q - f / df if df < 0.0 else 0.5 * (lo + hi)
        if not (lo < qn < hi):
            qn = 0.5 * (lo + hi)
        if abs(qn - q) <= tol:
            q = qn
            break
        q = qn
        f, df = _balance(q, cl, bl, cr, br, d0, d1, kind, work)
    return q


@njit(cache=True, error_model="numpy")
def update_devices(b, t, dt, g, kind, dev_par, tab_t, tab_a, tab_n, row, work):
    """Valve areas and pump speeds at time ``t`` [s] (``row``: each valve's table row; a time
    before the table's first row takes its first value, the open area)."""
    for d in range(kind.shape[0]):
        k = kind[d]
        if k == DEV_VALVE:
            # linear in the valve's table of effective area, from the row reached so far
            j = row[d]
            n = tab_n[b, d]
            while j + 1 < n and tab_t[b, d, j + 1] <= t:
                j += 1
            row[d] = j
            a = tab_a[b, d, j]
            if j + 1 < n and t >= tab_t[b, d, 0]:
                w = (t - tab_t[b, d, j]) / (tab_t[b, d, j + 1] - tab_t[b, d, j])
                a += w * (tab_a[b, d, j + 1] - a)
            if a > 0.0:
                work[W_K, d] = 1.0 / (2.0 * g * a * a)
                work[W_SHUT, d] = 0.0
            else:
                work[W_SHUT, d] = 1.0
        elif k == DEV_PUMP:
            ttrip = dev_par[b, d, P_TTRIP]
            if t >= ttrip:
                if dev_par[b, d, P_MODE] == RUNDOWN_ANALYTIC:
                    work[W_S, d] = dev_par[b, d, P_S0] / (1.0 + (t - ttrip) / dev_par[b, d, P_TAU])
                else:
                    work[W_S, d] = _torque_step(b, d, dt, dev_par, work)
            s = work[W_S, d]
            work[W_A, d] = dev_par[b, d, P_H0] * s * s
            work[W_B, d] = dev_par[b, d, P_H1] * s


@njit(cache=True, error_model="numpy")
def _torque_step(b, d, dt, dev_par, work):
    """Speed ratio after one step of J dw/dt = -T (explicit Euler), from the last step's flow
    and head; the efficiency is ``eta_bep x (2 - x)`` below the best-efficiency flow ``x = 1``
    and ``eta_bep`` above it."""
    s = work[W_S, d]
    if s <= 0.0:
        return 0.0
    qbep = dev_par[b, d, P_QBEP]
    push = work[W_P, d]
    q = push * work[W_Q, d] / work[W_U, d]
    head = push * work[W_H, d]
    x = max(q / (s * qbep), 0.0)
    if x < 1.0:
        power = dev_par[b, d, P_RHOG_ETA] * head * s * qbep / (2.0 - x)
    else:
        power = dev_par[b, d, P_RHOG_ETA] * head * q
    s = s - dt * max(power, 0.0) / (dev_par[b, d, P_JW2] * s)
    return s if s > 1e-9 else 0.0


@njit(cache=True, error_model="numpy")
def chain_heads(b, c0, c1, qc, hl, hr, kind, dev_par, work, pth, p0):
    """Heads at the chain points ``p0 .. p0 + m`` of the devices ``c0 .. c1 - 1`` [m].

    From the left up to the device that takes the most head and from the right back to it, so
    that the faces of a nearly shut valve take the heads of the lines rather than the product
    of a huge loss coefficient and a tiny flow; with shut devices (a valve at zero area, a
    check valve holding), from the left up to the first and from the right back to the last.
    """
    m = c1 - c0
    first = -1
    last = -1
    for i in range(m):
        d = c0 + i
        k = kind[d]
        if (k == DEV_VALVE and work[W_SHUT, d] > 0.0) or (
            k == DEV_PUMP and qc == 0.0 and dev_par[b, d, P_CHECK] > 0.0
        ):
            if first < 0:
                first = i
            last = i
    if first < 0:
        big = -1.0
        for i in range(m):
            dh = abs(device_dh(c0 + i, qc, kind, work))
            if dh > big:
                big = dh
                first = i
        last = first
    h = hl
    pth[p0] = h
    for i in range(first):
        h += device_dh(c0 + i, qc, kind, work)
        pth[p0 + i + 1] = h
    for i in range(first + 1, last + 1):
        pth[p0 + i] = h
    h = hr
    pth[p0 + m] = h
    for i in range(m - 1, last, -1):
        h -= device_dh(c0 + i, qc, kind, work)
        pth[p0 + i] = h


@njit(cache=True, error_model="numpy")
def update_junction(u, dn, cpl, bpl, cmr, bmr, state, dt, cav_on):
    """Plain junction of nodes ``u`` and ``dn`` (one head, one cavity kept at ``u``); returns
    the flow arriving from the left [m^3/s] and the head [m]."""
    h0, qu0, qd0, h1, qu1, qd1, hv, vol = state
    hvj = max(hv[u], hv[dn])
    inv = 1.0 / (bpl + bmr)
    hh = (cpl * bmr + cmr * bpl) * inv
    v = 0.0
    if cav_on and (hh < hvj or vol[u] > 0.0):
        sb = 1.0 / bpl + 1.0 / bmr
        v = vol[u] + dt * sb * (hvj - hh)
        if v > 0.0:
            hh = hvj
        else:
            # a cavity closing within the step: the flows fill exactly the volume left
            hh = hh - vol[u] / (dt * sb)
            v = 0.0
    qin = (cpl - hh) / bpl
    qout = (hh - cmr) / bmr
    vol[u] = v
    h1[u] = hh
    h1[dn] = hh
    qu1[u] = qin
    qd1[u] = qin
    qu1[dn] = qout
    qd1[dn] = qout
    return qin, hh


@njit(cache=True, error_model="numpy")
def update_chain(
    b, u, dn, cpl, bpl, cmr, bmr, tank_l, tank_r, c0, c1, qg, qscale, kind, dev_par, work,
    state, dt, cav_on,
):  # fmt: skip
    """Connection with devices between node ``u`` (``-1``: the tank at head ``tank_l``) and node
    ``dn`` (``-1``: the tank at ``tank_r``); each node may hold a cavity. Writes the nodes'
    new state and returns the chain's flow [m^3/s] and the heads at its two ends [m]."""
    h0, qu0, qd0, h1, qu1, qd1, hv, vol = state
    shut = False
    for d in range(c0, c1):
        if kind[d] == DEV_VALVE and work[W_SHUT, d] > 0.0:
            shut = True
    # each side: 0 plain, 1 cavity, 2 cavity closing within this step
    st_u = 1 if (u >= 0 and vol[u] > 0.0) else 0
    st_d = 1 if (dn >= 0 and vol[dn] > 0.0) else 0
    hvu = hv[u] if u >= 0 else 0.0
    hvd = hv[dn] if dn >= 0 else 0.0
    vu0 = vol[u] if u >= 0 else 0.0
    vd0 = vol[dn] if dn >= 0 else 0.0
    qc = qg
    hu = tank_l
    hd = tank_r
    qin = 0.0
    qout = 0.0
    vu = 0.0
    vd = 0.0
    for _ in range(8):
        if u < 0:
            cl, bl = tank_l, 0.0
        elif st_u == 1:
            cl, bl = hvu, 0.0
        elif st_u == 2:
            cl, bl = cpl - bpl * vu0 / dt, bpl
        else:
            cl, bl = cpl, bpl
        if dn < 0:
            cr, br = tank_r, 0.0
        elif st_d == 1:
            cr, br = hvd, 0.0
        elif st_d == 2:
            cr, br = cmr - bmr * vd0 / dt, bmr
        else:
            cr, br = cmr, bmr
        if shut:
            qc = 0.0
        else:
            qc = solve_chain(qg, qscale, cl, bl, cr, br, c0, c1, kind, work)
            # check valves: no flow against a pump fitted with one
            for d in range(c0, c1):
                if kind[d] == DEV_PUMP and dev_par[b, d, P_CHECK] > 0.0:
                    if work[W_P, d] * qc < 0.0:
                        qc = 0.0
        changed = False
        if u >= 0:
            if st_u == 1:
                hu = hvu
                qin = (cpl - hvu) / bpl
                vu = vu0 + dt * (qc - qin)
                if vu <= 0.0:
                    st_u = 2
                    changed = True
            elif st_u == 2:
                hu = cl - bpl * qc
                qin = qc + vu0 / dt
                vu = 0.0
            else:
                hu = cpl - bpl * qc
                qin = qc
                vu = 0.0
                if cav_on and hu < hvu:
                    st_u = 1
                    changed = True
        if dn >= 0:
            if st_d == 1:
                hd = hvd
                qout = (hvd - cmr) / bmr
                vd = vd0 + dt * (qout - qc)
                if vd <= 0.0:
                    st_d = 2
                    changed = True
            elif st_d == 2:
                hd = cr + bmr * qc
                qout = qc - vd0 / dt
                vd = 0.0
            else:
                hd = cmr + bmr * qc
                qout = qc
                vd = 0.0
                if cav_on and hd < hvd:
                    st_d = 1
                    changed = True
        if not changed:
            break
    if u >= 0:
        vol[u] = max(vu, 0.0)
        h1[u] = hu
        qu1[u] = qin
        qd1[u] = qc
    if dn >= 0:
        vol[dn] = max(vd, 0.0)
        h1[dn] = hd
        qu1[dn] = qc
        qd1[dn] = qout
    for d in range(c0, c1):
        if kind[d] == DEV_PUMP:
            work[W_Q, d] = qc
            work[W_H, d] = device_dh(d, qc, kind, work)
    return qc, hu, hd

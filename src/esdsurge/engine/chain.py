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
the shut-off torque half its best-efficiency value when the check valve holds. A
variable-speed drive that ramps down instead sets the speed ``s0 (1 - (t - t_ramp)/T)``.

Branches: a surge relief valve or an accumulator takes flow ``Q_s(H_s)`` out of the route at a
chain point of head ``H_s``. The chain then splits there: the devices on its shore side carry
``Q_1``, those on its carrier side ``Q_2``, and ``Q_1 - Q_2 - Q_s(H_s) = 0`` is solved for
``H_s`` (each of ``Q_1``, ``-Q_2``, ``-Q_s`` falls as ``H_s`` rises, so the root is unique).

* Relief valve: ``Q_s = x A sqrt(2 g (H_s - H_back))``, no reverse flow; the opening ``x``
  follows ``(H_s - H_set) / (H_full - H_set)`` clipped to [0, 1] (a spring- or pilot-loaded
  valve's proportional lift; Wylie & Streeter 1993, ch. 5), but moves at most full travel per
  opening (closing) time; it is solved with the head of the same step, so that the valve does
  not chatter from one step to the next. One that does not reseat keeps its largest opening.
* Accumulator: the gas follows ``p V^n = const`` and the connection loses ``R Q_s |Q_s|``:
  ``H_s - R Q_s|Q_s| = z + C / (V_old - dt Q_s)^n`` (implicit in the new gas volume;
  Wylie & Streeter 1993, §5.7 "air chamber"). The gas volume stays within the vessel: once
  the liquid has all left, no more flows out.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from .codes import (
    A_C,
    A_N,
    A_R,
    A_VTOT,
    A_Z,
    B_OFF,
    DEV_ACCUM,
    DEV_LOSS,
    DEV_PUMP,
    DEV_RELIEF,
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
    R_AREA,
    R_HBACK,
    R_HFULL,
    R_HSET,
    R_RESEAT,
    R_TCLOSE,
    R_TOPEN,
    RUNDOWN_ANALYTIC,
    RUNDOWN_RAMP,
    W_A,
    W_B,
    W_C,
    W_H,
    W_HS,
    W_K,
    W_P,
    W_Q,
    W_QS,
    W_S,
    W_SAT,
    W_SHUT,
    W_U,
    W_X,
)


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
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


@njit(cache=True, _nrt=False, error_model="numpy")
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


@njit(cache=True, _nrt=False, error_model="numpy")
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


@njit(cache=True, _nrt=False, error_model="numpy")
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


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
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
                mode = dev_par[b, d, P_MODE]
                if mode == RUNDOWN_ANALYTIC:
                    work[W_S, d] = dev_par[b, d, P_S0] / (1.0 + (t - ttrip) / dev_par[b, d, P_TAU])
                elif mode == RUNDOWN_RAMP:
                    left = 1.0 - (t - ttrip) / dev_par[b, d, P_TAU]
                    work[W_S, d] = dev_par[b, d, P_S0] * left if left > 0.0 else 0.0
                else:
                    work[W_S, d] = _torque_step(b, d, dt, dev_par, work)
            s = work[W_S, d]
            work[W_A, d] = dev_par[b, d, P_H0] * s * s
            work[W_B, d] = dev_par[b, d, P_H1] * s


@njit(cache=True, _nrt=False, error_model="numpy")
def _relief_opening(b, d, hs, dt, dev_par, work):
    """Opening of relief valve ``d`` at the end of a step with head ``hs`` at its point: the
    proportional lift, within what the valve can travel from its last opening in one step."""
    hset = dev_par[b, d, R_HSET]
    target = (hs - hset) / (dev_par[b, d, R_HFULL] - hset)
    x_old = work[W_X, d]
    hi = min(x_old + dt / dev_par[b, d, R_TOPEN], 1.0)
    lo = max(x_old - dt / dev_par[b, d, R_TCLOSE], 0.0) if dev_par[b, d, R_RESEAT] > 0.0 else x_old
    return min(max(target, lo), hi)


@njit(cache=True, _nrt=False, error_model="numpy")
def _accumulator_flow(b, d, hs, dt, dev_par, work):
    """Flow into accumulator ``d`` over the step [m^3/s] with head ``hs`` at its point."""
    c = dev_par[b, d, A_C]
    n = dev_par[b, d, A_N]
    r = dev_par[b, d, A_R]
    drive = hs - dev_par[b, d, A_Z]
    v_old = work[W_X, d]
    lo = (v_old - dev_par[b, d, A_VTOT]) / dt  # the vessel empties within the step
    hi = v_old / dt  # the gas would vanish
    # F(q) = drive - r q|q| - c (v_old - dt q)^-n falls with q
    f_lo = drive - r * lo * abs(lo) - c * (v_old - dt * lo) ** (-n)
    if f_lo <= 0.0:
        return lo
    q = min(max(work[W_QS, d], lo), lo + 0.5 * (hi - lo))
    for _ in range(100):
        v = v_old - dt * q
        f = drive - r * q * abs(q) - c * v ** (-n)
        slope = -2.0 * r * abs(q) - c * n * dt * v ** (-n - 1.0)
        if f > 0.0:
            lo = q
        else:
            hi = q
        qn = q - f / slope
        if not (lo < qn < hi):
            qn = 0.5 * (lo + hi)
        if abs(qn - q) <= 1e-13 * max(abs(qn), 1e-9) or hi - lo <= 1e-15:
            q = qn
            break
        q = qn
    return q


@njit(cache=True, _nrt=False, error_model="numpy")
def branch_flow(b, s0, s1, hs, dt, g, kind, dev_par, work):
    """Flow into the branch devices ``s0 .. s1 - 1`` over a step ending at head ``hs``
    [m^3/s]; it rises with ``hs``."""
    q = 0.0
    for d in range(s0, s1):
        k = kind[d]
        if dev_par[b, d, B_OFF] > 0.0:
            continue
        if k == DEV_RELIEF:
            dh = hs - dev_par[b, d, R_HBACK]
            if dh > 0.0:
                x = _relief_opening(b, d, hs, dt, dev_par, work)
                q += x * dev_par[b, d, R_AREA] * np.sqrt(2.0 * g * dh)
        elif k == DEV_ACCUM:
            q += _accumulator_flow(b, d, hs, dt, dev_par, work)
    return q


@njit(cache=True, _nrt=False, error_model="numpy")
def _sub_flow(b, qg, qscale, cl, bl, cr, br, d0, d1, kind, dev_par, work):
    """Flow through devices ``d0 .. d1 - 1`` between heads ``cl - bl Q`` and ``cr + br Q``,
    with shut valves and check valves holding [m^3/s]."""
    for d in range(d0, d1):
        if kind[d] == DEV_VALVE and work[W_SHUT, d] > 0.0:
            return 0.0
    q = solve_chain(qg, qscale, cl, bl, cr, br, d0, d1, kind, work)
    for d in range(d0, d1):
        if kind[d] == DEV_PUMP and dev_par[b, d, P_CHECK] > 0.0:
            if work[W_P, d] * q < 0.0:
                return 0.0
    return q


@njit(cache=True, _nrt=False, error_model="numpy")
def solve_split(b, ql_g, qr_g, qscale, cl, bl, cr, br, c0, c1, s0, s1, dt, g, kind, dev_par,
                work):  # fmt: skip
    """A chain with branch devices ``s0 .. s1 - 1``: the flows on its shore and carrier sides
    [m^3/s] and the head at the branch point [m].

    ``f(H) = Q_1(H) - Q_2(H) - Q_s(H)`` falls with ``H``; its root is bracketed from the last
    step's head and found by the Illinois variant of regula falsi (Dahlquist & Bjorck,
    *Numerical Methods*, 1974, §6.2). A side with no device and no impedance (a tank, or a
    node holding a cavity) fixes the head itself.
    """
    h_fix_left = c0 == s0 and bl == 0.0
    h_fix_right = s1 == c1 and br == 0.0
    if h_fix_left or h_fix_right:
        hs = cl if h_fix_left else cr
        qs = branch_flow(b, s0, s1, hs, dt, g, kind, dev_par, work)
        if h_fix_left and h_fix_right:
            return qs, 0.0, hs  # both sides stiff: the shore side feeds the branch
        if h_fix_left:
            q2 = _sub_flow(b, qr_g, qscale, hs, 0.0, cr, br, s1, c1, kind, dev_par, work)
            return q2 + qs, q2, hs
        q1 = _sub_flow(b, ql_g, qscale, cl, bl, hs, 0.0, c0, s0, kind, dev_par, work)
        return q1, q1 - qs, hs

    h = work[W_HS, s0]
    f, q1, q2 = _split_residual(b, h, ql_g, qr_g, qscale, cl, bl, cr, br, c0, c1, s0, s1, dt,
                                g, kind, dev_par, work)  # fmt: skip
    if f == 0.0:
        return q1, q2, h
    # bracket: step out from the last head, doubling the step
    step = 0.01 * max(abs(h), 1.0)
    if f > 0.0:
        lo, f_lo = h, f
        hi, f_hi = h, f
        for _ in range(200):
            h = lo + step
            f, q1, q2 = _split_residual(b, h, q1, q2, qscale, cl, bl, cr, br, c0, c1, s0, s1,
                                        dt, g, kind, dev_par, work)  # fmt: skip
            if f <= 0.0:
                hi, f_hi = h, f
                break
            lo, f_lo = h, f
            step *= 2.0
    else:
        lo, f_lo = h, f
        hi, f_hi = h, f
        for _ in range(200):
            h = hi - step
            f, q1, q2 = _split_residual(b, h, q1, q2, qscale, cl, bl, cr, br, c0, c1, s0, s1,
                                        dt, g, kind, dev_par, work)  # fmt: skip
            if f > 0.0:
                lo, f_lo = h, f
                break
            hi, f_hi = h, f
            step *= 2.0
    # Illinois iterations inside [lo, hi]
    side = 0
    for _ in range(200):
        if f == 0.0 or hi - lo <= 1e-12 * max(abs(h), 1.0):
            break
        h = (lo * f_hi - hi * f_lo) / (f_hi - f_lo)
        if not (lo < h < hi):
            h = 0.5 * (lo + hi)
        f, q1, q2 = _split_residual(b, h, q1, q2, qscale, cl, bl, cr, br, c0, c1, s0, s1, dt,
                                    g, kind, dev_par, work)  # fmt: skip
        if f > 0.0:
            lo, f_lo = h, f
            if side == 1:
                f_hi *= 0.5
            side = 1
        else:
            hi, f_hi = h, f
            if side == -1:
                f_lo *= 0.5
            side = -1
    return q1, q2, h


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _split_residual(b, h, q1g, q2g, qscale, cl, bl, cr, br, c0, c1, s0, s1, dt, g, kind,
                    dev_par, work):  # fmt: skip
    """``Q_1 - Q_2 - Q_s`` at branch head ``h``, with ``Q_1`` and ``Q_2``."""
    q1 = _sub_flow(b, q1g, qscale, cl, bl, h, 0.0, c0, s0, kind, dev_par, work)
    q2 = _sub_flow(b, q2g, qscale, h, 0.0, cr, br, s1, c1, kind, dev_par, work)
    return q1 - q2 - branch_flow(b, s0, s1, h, dt, g, kind, dev_par, work), q1, q2


@njit(cache=True, _nrt=False, error_model="numpy")
def settle_branches(b, s0, s1, hs, qs, dt, g, kind, dev_par, work):
    """Take the step: the branch devices at head ``hs`` share the flow ``qs`` that the chain
    gave them (so that no liquid is made or lost); accumulators move their gas volume."""
    left = qs
    last = s1 - 1
    for d in range(s0, s1):
        if d < last:
            qd = branch_flow(b, d, d + 1, hs, dt, g, kind, dev_par, work)
        else:
            qd = left
        left -= qd
        work[W_HS, d] = hs
        work[W_QS, d] = qd
        if dev_par[b, d, B_OFF] > 0.0:
            work[W_QS, d] = 0.0  # taken out: what is left is round-off
            continue
        if kind[d] == DEV_ACCUM:
            v = work[W_X, d] - dt * qd
            work[W_X, d] = min(max(v, 1e-300), dev_par[b, d, A_VTOT])
        elif kind[d] == DEV_RELIEF:
            x = _relief_opening(b, d, hs, dt, dev_par, work)
            work[W_X, d] = x
            if x >= 1.0 and hs > dev_par[b, d, R_HFULL]:
                work[W_SAT, d] += 1.0


@njit(cache=True, _nrt=False, error_model="numpy")
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


@njit(cache=True, _nrt=False, error_model="numpy")
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


@njit(cache=True, _nrt=False, error_model="numpy")
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


@njit(cache=True, _nrt=False, error_model="numpy")
def update_chain(
    b, u, dn, cpl, bpl, cmr, bmr, tank_l, tank_r, c0, c1, s0, s1, qg, qg2, qscale, kind,
    dev_par, work, state, dt, g, cav_on,
):  # fmt: skip
    """Connection with devices between node ``u`` (``-1``: the tank at head ``tank_l``) and node
    ``dn`` (``-1``: the tank at ``tank_r``); each node may hold a cavity. Branch devices
    ``s0 .. s1 - 1`` (``s0 = -1``: none) split the chain. Writes the nodes' new state and
    returns the chain's flows on the shore and carrier sides of its branch [m^3/s] and the heads
    at its two ends [m]."""
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
    ql = qg
    qr = qg2
    hs = 0.0
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
        if s0 >= 0:
            ql, qr, hs = solve_split(b, qg, qg2, qscale, cl, bl, cr, br, c0, c1, s0, s1, dt, g,
                                     kind, dev_par, work)  # fmt: skip
        elif shut:
            ql = qr = 0.0
        else:
            ql = _sub_flow(b, qg, qscale, cl, bl, cr, br, c0, c1, kind, dev_par, work)
            qr = ql
        changed = False
        if u >= 0:
            if st_u == 1:
                hu = hvu
                qin = (cpl - hvu) / bpl
                vu = vu0 + dt * (ql - qin)
                if vu <= 0.0:
                    st_u = 2
                    changed = True
            elif st_u == 2:
                hu = cl - bpl * ql
                qin = ql + vu0 / dt
                vu = 0.0
            else:
                hu = cpl - bpl * ql
                qin = ql
                vu = 0.0
                if cav_on and hu < hvu:
                    st_u = 1
                    changed = True
        if dn >= 0:
            if st_d == 1:
                hd = hvd
                qout = (hvd - cmr) / bmr
                vd = vd0 + dt * (qout - qr)
                if vd <= 0.0:
                    st_d = 2
                    changed = True
            elif st_d == 2:
                hd = cr + bmr * qr
                qout = qr - vd0 / dt
                vd = 0.0
            else:
                hd = cmr + bmr * qr
                qout = qr
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
        qd1[u] = ql
    if dn >= 0:
        vol[dn] = max(vd, 0.0)
        h1[dn] = hd
        qu1[dn] = qr
        qd1[dn] = qout
    for d in range(c0, c1):
        if kind[d] == DEV_PUMP:
            q = qr if (s0 >= 0 and d >= s1) else ql
            work[W_Q, d] = q
            work[W_H, d] = device_dh(d, q, kind, work)
    if s0 >= 0:
        settle_branches(b, s0, s1, hs, ql - qr, dt, g, kind, dev_par, work)
    return ql, qr, hu, hd

"""The compiled time loop: method of characteristics with discrete vapour cavities, batched.

Everything here is numba ``@njit(cache=True)`` on plain numpy arrays and scalars; the arrays are
built by :mod:`esdsurge.engine.grid` and read back by :mod:`esdsurge.engine.simulate`. This
module imports numba, so it is imported only when a transient runs (never at package import).

Why hand-written: no maintained library offers a method-of-characteristics solver for series
lines with these boundaries; the kernel is the textbook scheme, kept small.

Scheme (Wylie & Streeter, *Fluid Transients in Systems*, Prentice Hall 1993, ch. 3 and 8):

* Heads are piezometric on absolute pressure, ``H = z + p_abs/(rho g)`` [m]; flows [m^3/s],
  positive towards the carrier (to the right along the route).
* Each line (pipe, arm, hose) has ``N`` reaches of length ``dx = L/N`` with ``a dt = dx``;
  interior nodes: :mod:`esdsurge.engine.lines`. A node keeps two flows, ``Qu`` entering from
  the left reach and ``Qd`` leaving into the right one (they differ while it holds a cavity).
* Connections between lines (pumps, valves, couplings, throttles, manifolds, junctions, the
  tanks): :mod:`esdsurge.engine.chain`.
* Batch: the leading axis of every per-member array is the batch member. Members are
  independent simulations (each with its own grid and time step); :func:`run_members`
  releases the GIL so that the caller runs members in parallel on threads.
* Speed: the functions called at every step are compiled without reference counting
  (numba's ``_nrt=False``; they allocate nothing). Numba otherwise counts a reference, with an
  atomic operation, for every array passed to a call or sliced, and those counts took about half
  of a step's time on the demo routes.
"""

from __future__ import annotations

import hashlib
from pathlib import Path

import numpy as np
from numba import njit

from .chain import chain_heads, device_dh, update_chain, update_devices, update_junction
from .codes import (
    A_V0,
    B_KQMAX,
    B_QMAX,
    B_SAT,
    B_SMAX,
    B_SMIN,
    B_VOL,
    DEV_ACCUM,
    DEV_LOSS,
    DEV_PUMP,
    DEV_VALVE,
    L_K,
    N_BR_OUT,
    N_WORK,
    P_H0,
    P_H1,
    P_H2,
    P_PUSHES,
    P_S0,
    P_UNITS,
    PROBE_NODE,
    PROBE_POINT,
    STOP_EVERY,
    STOP_SLACK,
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
    W_U,
    W_X,
)
from .lines import NONE, envelope_node, update_lines


@njit(cache=True, error_model="numpy")
def _work(b, g, kind, dev_par, tab_a, q_conn, conn_dev0, conn_dev1):
    """Device working values before the trigger (valves open)."""
    nd = kind.shape[0]
    work = np.zeros((N_WORK, nd))
    for d in range(nd):
        k = kind[d]
        if k == DEV_PUMP:
            s = dev_par[b, d, P_S0]
            work[W_S, d] = s
            work[W_U, d] = dev_par[b, d, P_UNITS]
            work[W_P, d] = dev_par[b, d, P_PUSHES]
            work[W_A, d] = dev_par[b, d, P_H0] * s * s
            work[W_B, d] = dev_par[b, d, P_H1] * s
            work[W_C, d] = dev_par[b, d, P_H2]
        elif k == DEV_LOSS:
            work[W_K, d] = dev_par[b, d, L_K]
        elif k == DEV_VALVE:
            a = tab_a[b, d, 0]  # the table's first row is the open area
            work[W_K, d] = 1.0 / (2.0 * g * a * a) if a > 0.0 else 0.0
        elif k == DEV_ACCUM:
            work[W_X, d] = dev_par[b, d, A_V0]
    for c in range(conn_dev0.shape[0]):
        for d in range(conn_dev0[c], conn_dev1[c]):
            if kind[d] == DEV_PUMP:
                work[W_Q, d] = q_conn[c]
                work[W_H, d] = device_dh(d, q_conn[c], kind, work)
    return work


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _connections(b, n, state, envelope, grid, conns, devices, work, q_conn, q_conr, pth, qscale,
                 dt, g, cav_on):  # fmt: skip
    """Update every connection to step ``n`` (``n = 0``: the chain heads of the initial state
    only); the connection flows go to ``q_conn`` (shore side of its branch devices) and
    ``q_conr`` (carrier side), the chain heads to ``pth``."""
    h0, qu0, qd0, h1, qu1, qd1, hv, vol = state
    line_start, line_n, line_b, line_r = grid[0], grid[1], grid[2], grid[3]
    left, right, tank_l, tank_r, dev0, dev1, pt0, active, br0, br1 = conns
    kind, dev_par = devices[0], devices[1]
    for c in range(left.shape[0]):
        lft = left[c]
        rgt = right[c]
        u = -1
        dn = -1
        cpl = bpl = cmr = bmr = 0.0
        if lft >= 0:
            u = line_start[b, lft] + line_n[b, lft]
        if rgt >= 0:
            dn = line_start[b, rgt]
        if n == 0:
            hl = h0[u] if u >= 0 else tank_l[c]
            hr = h0[dn] if dn >= 0 else tank_r[c]
            qc = q_conn[c]
            qr = qc
        else:
            if u >= 0:
                bb = line_b[b, lft]
                qa = qd0[u - 1]
                cpl = h0[u - 1] + bb * qa
                bpl = bb + line_r[b, lft] * abs(qa)
            if dn >= 0:
                bb = line_b[b, rgt]
                qb = qu0[dn + 1]
                cmr = h0[dn + 1] - bb * qb
                bmr = bb + line_r[b, rgt] * abs(qb)
            if active[c]:
                qc, qr, hl, hr = update_chain(
                    b, u, dn, cpl, bpl, cmr, bmr, tank_l[c], tank_r[c], dev0[c], dev1[c],
                    br0[c], br1[c], q_conn[c], q_conr[c], qscale, kind, dev_par, work, state,
                    dt, g, cav_on,
                )  # fmt: skip
            elif u >= 0 and dn >= 0:
                qc, hl = update_junction(u, dn, cpl, bpl, cmr, bmr, state, dt, cav_on)
                hr = hl
                qr = qc
            elif u < 0:
                hl = hr = tank_l[c]
                qc = (hl - cmr) / bmr
                qr = qc
                h1[dn] = hl
                qu1[dn] = qc
                qd1[dn] = qc
            else:
                hl = hr = tank_r[c]
                qc = (cpl - hl) / bpl
                qr = qc
                h1[u] = hl
                qu1[u] = qc
                qd1[u] = qc
            if u >= 0:
                envelope_node(u, n, h1[u], vol[u], envelope)
            if dn >= 0:
                envelope_node(dn, n, h1[dn], vol[dn], envelope)
        q_conn[c] = qc
        q_conr[c] = qr
        if pt0[c] >= 0:
            s0 = br0[c]
            if active[c] and (s0 < 0 or n == 0):
                chain_heads(b, dev0[c], dev1[c], qc, hl, hr, kind, dev_par, work, pth, pt0[c])
                if s0 >= 0:  # the head at the branch point before the trigger
                    for d in range(s0, br1[c]):
                        work[W_HS, d] = pth[pt0[c] + s0 - dev0[c]]
            elif active[c]:
                # shore side, branch point, carrier side
                s1 = br1[c]
                hs = work[W_HS, s0]
                p_s0 = pt0[c] + s0 - dev0[c]
                p_s1 = pt0[c] + s1 - dev0[c]
                chain_heads(b, dev0[c], s0, qc, hl, hs, kind, dev_par, work, pth, pt0[c])
                chain_heads(b, s1, dev1[c], qr, hs, hr, kind, dev_par, work, pth, p_s1)
                for i in range(p_s0, p_s1 + 1):
                    pth[i] = hs
            else:
                for i in range(dev1[c] - dev0[c] + 1):
                    pth[pt0[c] + i] = hl


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _probe(p, b, h, qu, qd, pth, q_conn, q_conr, probes):
    """Head [m] and flow [m^3/s] at probe ``p``."""
    kind, ref, side, conn, tank = probes
    k = kind[p]
    if k == PROBE_NODE:
        i = ref[b, p]
        return h[i], (qd[i] if side[p] == 0 else qu[i])
    q = q_conn[conn[p]] if side[p] == 0 else q_conr[conn[p]]
    if k == PROBE_POINT:
        return pth[ref[b, p]], q
    return tank[p], q


@njit(cache=True, _nrt=False, error_model="numpy", inline="always")
def _sample(ser, b, j, old, new, k, nsamp, sample_dt, t, t_old, dt, tol):
    """Samples ``k, k + 1, ...`` falling within the step (``t_old``, ``t``] of series ``j``,
    interpolated linearly between the step's values ``old`` and ``new``."""
    while k < nsamp and k * sample_dt <= t + tol:
        w = max((k * sample_dt - t_old) / dt, 0.0)
        ser[b, j, k] = old + w * (new - old)
        k += 1


@njit(cache=True, error_model="numpy")
def _member(b, cav_on, g, duration, members, grid, conns, devices, probes, stops, out):
    """The whole time loop of batch member ``b``: its state before the trigger here (or, for a
    member that resumes, ``start_all[b] > 0``, the state its outputs were filled with: see
    ``codes.RESUMED``), the steps in :func:`_steps`."""
    dt_all, nsteps_all, n_nodes_all, qscale_all, start_all = members
    line_start, line_n, line_b, line_r, hv_all, h_init, q_init = grid
    kind, dev_par, tab_t, tab_a, tab_n, pump_dev, br_dev = devices
    ser_h, ser_q, ser_s, hmax_all, kmax_all, hmin_all, kmin_all, vmax_all, kv_all = out[:9]
    pt_hmax, pt_hmin, ser_bs, br_out = out[9], out[11], out[17], out[18]
    dt = dt_all[b]
    nn = n_nodes_all[b]
    nlines = line_start.shape[1]
    nconn = conns[0].shape[0]
    npts = pt_hmax.shape[1]
    nprobe = probes[0].shape[0]
    npump = pump_dev.shape[0]
    nbr = br_dev.shape[0]
    if start_all[b] > 0:
        _resume(b, cav_on, g, duration, members, grid, conns, devices, probes, stops, out)
        return

    # state, double-buffered; per line, the stretch holding cavities (NONE: none)
    h0 = h_init[b, :nn].copy()
    qu0 = q_init[b, :nn].copy()
    qd0 = q_init[b, :nn].copy()
    h1 = h0.copy()
    qu1 = qu0.copy()
    qd1 = qd0.copy()
    vol = np.zeros(nn)
    hv = hv_all[b]
    spans = np.empty((nlines, 2), dtype=np.int64)
    spans[:, 0] = NONE
    spans[:, 1] = -1
    envelope = (hmax_all[b], kmax_all[b], hmin_all[b], kmin_all[b], vmax_all[b], kv_all[b])
    for i in range(nn):
        envelope[0][i] = h0[i]
        envelope[2][i] = h0[i]

    # connections and devices before the trigger
    q_conn = np.empty(nconn)
    for c in range(nconn):
        lft = conns[0][c]
        i = line_start[b, lft] + line_n[b, lft] if lft >= 0 else line_start[b, conns[1][c]]
        q_conn[c] = q_init[b, i]
    q_conr = q_conn.copy()
    work = _work(b, g, kind, dev_par, tab_a, q_conn, conns[4], conns[5])
    row = np.zeros(kind.shape[0], dtype=np.int64)
    pth = np.zeros(max(npts, 1))
    state = (h0, qu0, qd0, h1, qu1, qd1, hv, vol)
    _connections(b, 0, state, envelope, grid, conns, devices, work, q_conn, q_conr, pth,
                 qscale_all[b], dt, g, cav_on)  # fmt: skip
    for p in range(npts):
        pt_hmax[b, p] = pth[p]
        pt_hmin[b, p] = pth[p]

    # probes at t = 0; the shore-end flows (even probes) are integrated every step, the rest
    # is read only on the step before a sample and on the sample's step
    pr_h = np.zeros(nprobe)
    pr_q = np.zeros(nprobe)
    for p in range(nprobe):
        pr_h[p], pr_q[p] = _probe(p, b, h0, qu0, qd0, pth, q_conn, q_conr, probes)
        ser_h[b, p, 0] = pr_h[p]
        ser_q[b, p, 0] = pr_q[p]
    q_in = pr_q[0::2].copy()
    ps = np.zeros(max(npump, 1))
    for k in range(npump):
        ps[k] = work[W_S, pump_dev[k]]
        ser_s[b, k, 0] = ps[k]
    # branch devices: flow in and state (relief opening, accumulator gas volume)
    bq = np.zeros(max(nbr, 1))
    bs = np.zeros(max(nbr, 1))
    for j in range(nbr):
        d = br_dev[j]
        bs[j] = work[W_X, d]
        ser_bs[b, j, 0] = bs[j]
        br_out[b, j, B_SMIN] = bs[j]
        br_out[b, j, B_SMAX] = bs[j]
    _steps(b, cav_on, g, duration, members, grid, conns, devices, probes, stops, out, state,
           envelope, spans, q_conn, q_conr, work, row, pth, pr_h, pr_q, q_in, ps, bq,
           bs)  # fmt: skip


@njit(cache=True, error_model="numpy")
def _resume(b, cav_on, g, duration, members, grid, conns, devices, probes, stops, out):
    """Member ``b`` from the state after step ``start_all[b]`` that its outputs hold (copied in
    from the run it resumes, ``codes.RESUMED``): the same steps as a whole run from there."""
    n_nodes_all = members[2]
    line_start, line_n = grid[0], grid[1]
    pump_dev, br_dev = devices[5], devices[6]
    hmax_all, kmax_all, hmin_all, kmin_all, vmax_all, kv_all = out[3:9]
    h_end, vol_end = out[14], out[15]
    qu_end, qd_end, qconn_end, qconr_end, work_end, row_end, pth_end = out[20:27]
    nn = n_nodes_all[b]
    nlines = line_start.shape[1]
    nprobe = probes[0].shape[0]
    npump = pump_dev.shape[0]
    nbr = br_dev.shape[0]
    h0 = h_end[b, :nn].copy()
    qu0 = qu_end[b, :nn].copy()
    qd0 = qd_end[b, :nn].copy()
    h1 = h0.copy()
    qu1 = qu0.copy()
    qd1 = qd0.copy()
    vol = vol_end[b, :nn].copy()
    hv = grid[4][b]
    # the stretch of each line holding cavities: only the cavitating update leaves a volume
    spans = np.empty((nlines, 2), dtype=np.int64)
    for ln in range(nlines):
        spans[ln, 0] = NONE
        spans[ln, 1] = -1
        st = line_start[b, ln]
        for i in range(1, line_n[b, ln]):
            if vol[st + i] > 0.0:
                spans[ln, 0] = min(spans[ln, 0], i)
                spans[ln, 1] = i
    envelope = (hmax_all[b], kmax_all[b], hmin_all[b], kmin_all[b], vmax_all[b], kv_all[b])
    q_conn = qconn_end[b].copy()
    q_conr = qconr_end[b].copy()
    work = work_end[b].copy()
    row = row_end[b].copy()
    pth = pth_end[b].copy()
    pr_h = np.zeros(nprobe)
    pr_q = np.zeros(nprobe)
    for p in range(nprobe):
        pr_h[p], pr_q[p] = _probe(p, b, h0, qu0, qd0, pth, q_conn, q_conr, probes)
    q_in = pr_q[0::2].copy()
    ps = np.zeros(max(npump, 1))
    for k in range(npump):
        ps[k] = work[W_S, pump_dev[k]]
    bq = np.zeros(max(nbr, 1))
    bs = np.zeros(max(nbr, 1))
    for j in range(nbr):
        bq[j] = work[W_QS, br_dev[j]]
        bs[j] = work[W_X, br_dev[j]]
    state = (h0, qu0, qd0, h1, qu1, qd1, hv, vol)
    _steps(b, cav_on, g, duration, members, grid, conns, devices, probes, stops, out, state,
           envelope, spans, q_conn, q_conr, work, row, pth, pr_h, pr_q, q_in, ps, bq,
           bs)  # fmt: skip


@njit(cache=True, _nrt=False, error_model="numpy")
def _steps(b, cav_on, g, duration, members, grid, conns, devices, probes, stops, out, state,
           envelope, spans, q_conn, q_conr, work, row, pth, pr_h, pr_q, q_in, ps, bq,
           bs):  # fmt: skip
    """The time steps of batch member ``b``, from the state :func:`_member` set up.

    From step ``stop_step[b]`` on, every ``STOP_EVERY`` steps, the member stops once its
    envelope is beyond one of its bounds (:func:`_broken`); the step goes to ``stopped[b]``
    and the samples not reached are NaN.

    Compiled without reference counting (``_nrt=False``), like everything it calls: it
    allocates nothing, and the atomic reference counts of the arrays that pass through its
    calls would otherwise take about half of the time of a step.
    """
    dt_all, nsteps_all, n_nodes_all, qscale_all, start_all = members
    line_start, line_n, line_b, line_r = grid[0], grid[1], grid[2], grid[3]
    kind, dev_par, tab_t, tab_a, tab_n, pump_dev, br_dev = devices
    ser_h, ser_q, ser_s = out[0], out[1], out[2]
    qu_end, qd_end, qconn_end, qconr_end, work_end, row_end, pth_end = out[20:27]
    vol_rest, brvol_rest = out[27], out[28]
    pt_hmax, pt_kmax, pt_hmin, pt_kmin, vol_through, h_end, vol_end = out[9:16]
    ser_bq, ser_bs, br_out, stopped = out[16:20]
    stop_step, stop_cstep = stops[0], stops[6]
    # a cavity alone may stop the member from step stop_cstep[b] (before stop_step[b] when its
    # spill is not needed), the pressure bounds from stop_step[b]
    first_look = min(stop_step[b], stop_cstep[b])
    h0, qu0, qd0, h1, qu1, qd1, hv, vol = state
    dt = dt_all[b]
    nn = n_nodes_all[b]
    npts = pt_hmax.shape[1]
    nprobe = probes[0].shape[0]
    nsamp = ser_h.shape[2]
    npump = pump_dev.shape[0]
    nbr = br_dev.shape[0]
    sample_dt = duration / (nsamp - 1)
    tol = 1e-12 * dt
    n0 = start_all[b]
    t = n0 * dt
    next_sample = 1
    while next_sample < nsamp and next_sample * sample_dt <= t + tol:
        next_sample += 1

    for n in range(n0 + 1, nsteps_all[b] + 1):
        t_old = t
        t = n * dt
        update_devices(b, t, dt, g, kind, dev_par, tab_t, tab_a, tab_n, row, work)
        state = (h0, qu0, qd0, h1, qu1, qd1, hv, vol)
        update_lines(state, envelope, line_start[b], line_n[b], line_b[b], line_r[b], dt, n,
                     cav_on, spans)  # fmt: skip
        _connections(b, n, state, envelope, grid, conns, devices, work, q_conn, q_conr, pth,
                     qscale_all[b], dt, g, cav_on)  # fmt: skip
        for p in range(npts):
            h = pth[p]
            if h > pt_hmax[b, p]:
                pt_hmax[b, p] = h
                pt_kmax[b, p] = n
            if h < pt_hmin[b, p]:
                pt_hmin[b, p] = h
                pt_kmin[b, p] = n

        # volume passed each element's shore end, and into each branch, over (0, duration]
        # (trapezoidal)
        if t_old < duration:
            w_end = (min(t, duration) - t_old) / dt
            for e in range(q_in.shape[0]):
                q_old = q_in[e]
                q_in[e] = _probe(2 * e, b, h1, qu1, qd1, pth, q_conn, q_conr, probes)[1]
                q_end = q_old + w_end * (q_in[e] - q_old)
                vol_through[b, 2 * e] += 0.5 * (q_old + q_end) * w_end * dt
                # the rest of a last step beyond the duration (for a member that resumes)
                vol_rest[b, 2 * e] = 0.5 * (q_end + q_in[e]) * (1.0 - w_end) * dt
            for j in range(nbr):
                q_new = work[W_QS, br_dev[j]]
                q_end = bq[j] + w_end * (q_new - bq[j])
                br_out[b, j, B_VOL] += 0.5 * (bq[j] + q_end) * w_end * dt
                brvol_rest[b, j] = 0.5 * (q_end + q_new) * (1.0 - w_end) * dt
        for j in range(nbr):
            d = br_dev[j]
            q_new = work[W_QS, d]
            if q_new > br_out[b, j, B_QMAX]:
                br_out[b, j, B_QMAX] = q_new
                br_out[b, j, B_KQMAX] = n
            x = work[W_X, d]
            br_out[b, j, B_SMIN] = min(br_out[b, j, B_SMIN], x)
            br_out[b, j, B_SMAX] = max(br_out[b, j, B_SMAX], x)
        # samples, interpolated linearly between this step and the last
        if next_sample < nsamp and next_sample * sample_dt <= t + tol:
            k = next_sample
            for p in range(nprobe):
                h_new, q_new = _probe(p, b, h1, qu1, qd1, pth, q_conn, q_conr, probes)
                _sample(ser_h, b, p, pr_h[p], h_new, k, nsamp, sample_dt, t, t_old, dt, tol)
                _sample(ser_q, b, p, pr_q[p], q_new, k, nsamp, sample_dt, t, t_old, dt, tol)
            for j in range(npump):
                s_new = work[W_S, pump_dev[j]]
                _sample(ser_s, b, j, ps[j], s_new, k, nsamp, sample_dt, t, t_old, dt, tol)
            for j in range(nbr):
                d = br_dev[j]
                _sample(ser_bq, b, j, bq[j], work[W_QS, d], k, nsamp, sample_dt, t, t_old, dt,
                        tol)  # fmt: skip
                _sample(ser_bs, b, j, bs[j], work[W_X, d], k, nsamp, sample_dt, t, t_old, dt,
                        tol)  # fmt: skip
            while next_sample < nsamp and next_sample * sample_dt <= t + tol:
                next_sample += 1
        if next_sample < nsamp and next_sample * sample_dt <= t + dt + tol:
            # a sample falls within the next step: keep this step's values
            for p in range(nprobe):
                pr_h[p], pr_q[p] = _probe(p, b, h1, qu1, qd1, pth, q_conn, q_conr, probes)
            for j in range(npump):
                ps[j] = work[W_S, pump_dev[j]]
            for j in range(nbr):
                bs[j] = work[W_X, br_dev[j]]
        for j in range(nbr):
            bq[j] = work[W_QS, br_dev[j]]  # every step: the branch volume integrates it

        h0, h1 = h1, h0
        qu0, qu1 = qu1, qu0
        qd0, qd1 = qd1, qd0
        if n >= first_look and (n - first_look) % STOP_EVERY == 0:
            if _broken(b, nn, npts, envelope, pt_hmax, pt_hmin, stops, n >= stop_step[b]):
                stopped[b] = n
                break

    if stopped[b] > 0:
        nan = np.nan
        for k in range(next_sample, nsamp):
            for p in range(nprobe):
                ser_h[b, p, k] = nan
                ser_q[b, p, k] = nan
            for j in range(npump):
                ser_s[b, j, k] = nan
            for j in range(nbr):
                ser_bq[b, j, k] = nan
                ser_bs[b, j, k] = nan
    for i in range(nn):
        h_end[b, i] = h0[i]
        vol_end[b, i] = vol[i]
        qu_end[b, i] = qu0[i]
        qd_end[b, i] = qd0[i]
    for c in range(q_conn.shape[0]):
        qconn_end[b, c] = q_conn[c]
        qconr_end[b, c] = q_conr[c]
    for d in range(work.shape[1]):
        row_end[b, d] = row[d]
        for k in range(work.shape[0]):
            work_end[b, k, d] = work[k, d]
    for p in range(pth.shape[0]):
        pth_end[b, p] = pth[p]
    for j in range(nbr):
        br_out[b, j, B_SAT] = work[W_SAT, br_dev[j]] * dt


@njit(cache=True, _nrt=False, error_model="numpy")
def _broken(b, nn, npts, envelope, pt_hmax, pt_hmin, stops, pressures):
    """Member ``b``'s envelope is beyond one of its bounds by more than ``STOP_SLACK``: a
    cavity at a node, or (with ``pressures``) a highest or lowest head at a node or a point."""
    hmax, hmin, vmax = envelope[0], envelope[2], envelope[4]
    stop_hx, stop_hn, stop_v, stop_px, stop_pn = stops[1], stops[2], stops[3], stops[4], stops[5]
    for i in range(nn):
        if vmax[i] > stop_v[b, i]:
            return True
    if not pressures:
        return False
    for i in range(nn):
        if hmax[i] > stop_hx[b, i] + STOP_SLACK or hmin[i] < stop_hn[b, i] - STOP_SLACK:
            return True
    for p in range(npts):
        if pt_hmax[b, p] > stop_px[b, p] + STOP_SLACK or pt_hmin[b, p] < stop_pn[b, p] - STOP_SLACK:
            return True
    return False


@njit(cache=True, nogil=True, error_model="numpy")
def run_members(b0, b1, cav_on, g, duration, members, grid, conns, devices, probes, stops, out):
    """Run the time loops of batch members ``b0 .. b1 - 1``; the results go to ``out``.

    The argument groups are tuples of arrays named in :mod:`esdsurge.engine.codes`
    (``MEMBERS``, ``GRID``, ``CONNECTIONS``, ``DEVICES``, ``PROBES``, ``STOPS``,
    ``OUTPUTS``). Releases the GIL, so that members run in parallel on Python threads.
    """
    for b in range(b0, b1):
        _member(b, cav_on, g, duration, members, grid, conns, devices, probes, stops, out)
    return 0


def no_stops(nb: int, nnode: int, npts: int, nsteps: np.ndarray) -> dict:
    """Stop arrays (see ``codes.STOPS``) that never stop a member."""
    return {
        "stop_step": np.asarray(nsteps, dtype=np.int64) + 1,
        "stop_hx": np.full((nb, nnode), np.inf),
        "stop_hn": np.full((nb, nnode), -np.inf),
        "stop_v": np.full((nb, nnode), np.inf),
        "stop_px": np.full((nb, npts), np.inf),
        "stop_pn": np.full((nb, npts), -np.inf),
        "stop_cstep": np.asarray(nsteps, dtype=np.int64) + 1,
    }


def empty_outputs(
    nb: int,
    nnode: int,
    npts: int,
    nprobe: int,
    npump: int,
    nsamp: int,
    nbranch: int = 0,
    nconn: int = 1,
    ndev: int = 1,
) -> dict:
    """Allocate the kernel's output arrays (see ``codes.OUTPUTS``)."""
    f, i = np.float64, np.int64
    return {
        "ser_h": np.zeros((nb, nprobe, nsamp), f),
        "ser_q": np.zeros((nb, nprobe, nsamp), f),
        "ser_s": np.zeros((nb, npump, nsamp), f),
        "env_hmax": np.zeros((nb, nnode), f),
        "env_kmax": np.zeros((nb, nnode), i),
        "env_hmin": np.zeros((nb, nnode), f),
        "env_kmin": np.zeros((nb, nnode), i),
        "env_vmax": np.zeros((nb, nnode), f),
        "env_kv": np.zeros((nb, nnode), i),
        "pt_hmax": np.zeros((nb, npts), f),
        "pt_kmax": np.zeros((nb, npts), i),
        "pt_hmin": np.zeros((nb, npts), f),
        "pt_kmin": np.zeros((nb, npts), i),
        "vol_through": np.zeros((nb, nprobe), f),
        "h_end": np.zeros((nb, nnode), f),
        "vol_end": np.zeros((nb, nnode), f),
        "ser_bq": np.zeros((nb, nbranch, nsamp), f),
        "ser_bs": np.zeros((nb, nbranch, nsamp), f),
        "br_out": np.zeros((nb, nbranch, N_BR_OUT), f),
        "stopped": np.zeros(nb, i),
        "qu_end": np.zeros((nb, nnode), f),
        "qd_end": np.zeros((nb, nnode), f),
        "qconn_end": np.zeros((nb, nconn), f),
        "qconr_end": np.zeros((nb, nconn), f),
        "work_end": np.zeros((nb, N_WORK, ndev), f),
        "row_end": np.zeros((nb, ndev), i),
        "pth_end": np.zeros((nb, npts), f),
        "vol_rest": np.zeros((nb, nprobe), f),
        "brvol_rest": np.zeros((nb, nbranch), f),
    }


#: the modules whose compiled code the kernel links in
_JIT_MODULES = ("codes", "lines", "chain", "kernel")


def _drop_stale_cache() -> None:
    """Remove the engine's numba cache when any of its jitted sources changed since it was
    written.

    numba invalidates a cached function only when its own source file changes ("Notes on
    caching" in the numba documentation); the kernel cached from this file would keep running a
    stale copy of a changed ``lines.py`` or ``chain.py``. A digest of all of them, kept beside
    the cache, catches that.
    """
    here = Path(__file__).resolve().parent
    digest = hashlib.sha256(
        b"".join((here / f"{name}.py").read_bytes() for name in _JIT_MODULES)
    ).hexdigest()
    folder = Path(run_members._cache.cache_path)
    stamp = folder / "esdsurge-engine.sha256"
    try:
        if stamp.read_text() == digest:
            return
    except OSError:
        pass
    try:
        for name in _JIT_MODULES:
            for f in folder.glob(f"{name}.*.nb[ic]"):
                f.unlink(missing_ok=True)
        folder.mkdir(parents=True, exist_ok=True)
        stamp.write_text(digest)
    except OSError:
        pass  # a read-only cache: numba falls back to compiling in memory


_drop_stale_cache()

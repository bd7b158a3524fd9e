"""Run a case (and a batch of its variants) through the compiled time loop.

:func:`simulate` solves the steady state of each member (``esdsurge.steady``), builds each
member's grid (:mod:`esdsurge.engine.grid`), runs every member in one call of the compiled
kernel (:mod:`esdsurge.engine.kernel`, imported here on first use so that commands without a
transient never compile it) and packs the results into a :class:`~esdsurge.engine.run.Run`.
"""

from __future__ import annotations

import dataclasses
import itertools
import math
import os
import threading
import time
from collections.abc import Callable, Sequence
from concurrent.futures import ThreadPoolExecutor

import numpy as np

from esdsurge.errors import SteadyStateError, UsageError
from esdsurge.model import (
    BRANCH_KINDS,
    STANDARD_ATMOSPHERE,
    Accumulator,
    Case,
    Fluid,
    G,
    Hose,
    Pipe,
    Relief,
    Route,
)
from esdsurge.physics import mitigations

from . import codes
from . import grid as g
from .run import Envelope, MemberState, Run, StopRule, Variant

#: default duration: at least this many pipeline periods (2 sum(L/a) over the route) ...
MIN_PERIODS = 10.0
#: ... and this many periods after the last event has finished (a closure's end, or three
#: run-down time constants after a pump trip)
PERIODS_AFTER_EVENTS = 5.0
#: the engine's own walk of the steady flow must land within this head of the carrier tank [m]
MISMATCH_LIMIT = 0.05

RUNDOWN_MODES = ("torque", "analytic")


def default_duration(periods: Sequence[float], event_ends: Sequence[float]) -> float:
    """Default simulated time [s].

    The longest of ``MIN_PERIODS`` pipeline periods and the end of the last event plus
    ``PERIODS_AFTER_EVENTS`` periods (the pipeline period 2 sum(L/a) of the whole route; the
    longest over the members). By then the surge in these short, rubbing lines has decayed or
    settled into the line's new state (common practice, no source).

    Examples
    --------
    >>> default_duration([2.0], [26.0])
    36.0
    """
    tp = max(periods)
    return max(MIN_PERIODS * tp, max(event_ends, default=0.0) + PERIODS_AFTER_EVENTS * tp)


def _steady_for(
    steady_fn: Callable[..., object],
    route: Route,
    fluid: Fluid,
    case: Case,
    atmosphere_abs: float,
    variant: Variant,
    cache: dict,
) -> tuple[object, Route]:
    key = (variant.rate, variant.friction_scale)
    if key in cache:
        return cache[key]
    st = steady_fn(route, fluid, case, atmosphere_abs, rate=variant.rate)
    member_route = route
    if variant.friction_scale != 1.0:
        els = []
        for e, es in zip(route.elements, st.elements, strict=True):  # type: ignore[attr-defined]
            if isinstance(e, Pipe | Hose) and es.friction_factor is not None:
                e = dataclasses.replace(
                    e, friction_factor=es.friction_factor * variant.friction_scale
                )
            els.append(e)
        member_route = dataclasses.replace(route, elements=tuple(els))
        st = steady_fn(member_route, fluid, case, atmosphere_abs, rate=variant.rate)
    cache[key] = (st, member_route)
    return st, member_route


def simulate(
    route: Route,
    fluid: Fluid,
    case: Case,
    *,
    atmosphere_abs: float = STANDARD_ATMOSPHERE,
    variants: Sequence[Variant] | None = None,
    duration: float | None = None,
    cavities: bool = True,
    rundown: str = "torque",
    dt_max: float | None = None,
    max_nodes: int = 2000,
    tolerance: float = 0.02,
    samples: int = 2000,
    steady: Callable[..., object] | None = None,
    stop: StopRule | None = None,
    keep_state: bool = False,
    resume: Sequence[MemberState | None] | None = None,
) -> Run:
    """Transient of a case after its trigger, for a batch of variants in one pass.

    Parameters
    ----------
    route, fluid, case : model objects (``case.route`` names ``route``)
    atmosphere_abs : site atmospheric pressure [Pa]
    variants : the batch members; default one member, the case as given
    duration : simulated time [s]; default ``case.duration``, else :func:`default_duration`
    cavities : model vapour cavities (discrete vapour cavity model); ``False`` lets the
        pressure fall below the vapour pressure (for validation against closed-form results)
    rundown : pump run-down after a trip: ``"torque"`` integrates J dw/dt = -T with the
        hydraulic torque of the current flow and head; ``"analytic"`` uses w0/(1 + t/tau)
    dt_max : largest time step [s] (also lifts the node cap as needed); default from the
        resolution floors of :mod:`esdsurge.engine.grid`
    max_nodes : cap on the grid nodes of a member when searching the time step
    tolerance : acceptable wave-speed adjustment of the grid [-]
    samples : samples per time series, evenly spaced over the duration and interpolated
        linearly between time steps (the peaks are taken from every step, not from these)
    steady : steady-state function with the signature of ``esdsurge.steady.steady_state``;
        default that one
    stop : when a member may end early, once it has broken a limit for good (a search that
        needs only the verdict); default never
    keep_state : keep each member's state after its last step (``Run.states``), so that a
        later run can go on from it
    resume : per member, a state kept by an earlier run of the same variant (``None``: start
        afresh): the member goes on from it, to this run's duration, through the same steps
        as a run from the start (none, when the state is already past the duration); its
        series are NaN up to the state's step

    Returns
    -------
    Run

    Raises
    ------
    InputError
        a route or event that cannot be simulated
    UsageError
        an unknown ``rundown``
    SteadyStateError
        from the steady state, or when the engine's relations disagree with it
    """
    if rundown not in RUNDOWN_MODES:
        raise UsageError(f"rundown must be one of {', '.join(RUNDOWN_MODES)}, got {rundown!r}")
    if steady is None:
        from esdsurge.steady import steady_state as steady
    variants = tuple(variants) if variants else (Variant(),)
    lay = g.layout(route)
    cache: dict = {}
    members: list[g.Member] = []
    steadies = []
    for v in variants:
        st, member_route = _steady_for(steady, route, fluid, case, atmosphere_abs, v, cache)
        events = g.member_events(case, v)
        m = g.build_member(
            member_route,
            fluid,
            atmosphere_abs,
            lay,
            st,
            events,
            v,
            rundown=rundown,
            dt_max=dt_max,
            max_nodes=max_nodes,
            tolerance=tolerance,
        )
        scale = max(1.0, float(np.max(np.abs(m.h_init))))
        if abs(m.mismatch) > max(MISMATCH_LIMIT, 1e-6 * scale):
            raise SteadyStateError(
                f"case {case.name!r}: the steady state and the engine disagree by "
                f"{m.mismatch:.3f} m of head at the carrier tank"
            )
        members.append(m)
        steadies.append(st)
    if duration is None:
        duration = case.duration
    if duration is None:
        duration = default_duration([m.period for m in members], [m.t_end for m in members])
    if resume is not None:
        if len(resume) != len(members):
            raise UsageError(f"resume: {len(resume)} states for {len(members)} members")
        for m, r in zip(members, resume, strict=True):
            if r is not None and r.dt != m.dt:
                raise UsageError(
                    f"resume: a state at a time step of {r.dt:g} s does not fit a member at "
                    f"{m.dt:g} s (another variant)"
                )
    return _run(
        route,
        fluid,
        case,
        lay,
        variants,
        members,
        steadies,
        duration,
        cavities,
        rundown,
        samples,
        atmosphere_abs,
        stop,
        keep_state,
        resume,
    )


def _pack(lay: g.Layout, members: list[g.Member], duration: float) -> dict:
    """Stack the members' arrays (padded) for the kernel."""
    nb = len(members)
    nnode = max(len(m.hv) for m in members)
    nline = len(lay.lines)
    conns = lay.connections
    devices = [d for c in conns for d in c.devices]
    ndev = len(devices)
    ntab = max([len(t[0]) for m in members for t in m.tables] + [1])

    def stack(attr: str, width: int, fill: float = 0.0, dtype: type = np.float64) -> np.ndarray:
        out = np.full((nb, width), fill, dtype=dtype)
        for b, m in enumerate(members):
            v = getattr(m, attr)
            out[b, : len(v)] = v
        return out

    tab_t = np.zeros((nb, max(ndev, 1), ntab))
    tab_a = np.zeros((nb, max(ndev, 1), ntab))
    tab_n = np.ones((nb, max(ndev, 1)), dtype=np.int64)
    dev_par = np.zeros((nb, max(ndev, 1), codes.N_PAR))
    for b, m in enumerate(members):
        for k, (tt, ta) in enumerate(m.tables):
            tab_t[b, k, : len(tt)] = tt
            tab_a[b, k, : len(ta)] = ta
            tab_n[b, k] = len(tt)
        if ndev:
            dev_par[b, :ndev] = m.dev_par

    nprobe = 2 * len(lay.place)
    probe_kind = np.zeros(nprobe, dtype=np.int64)
    probe_side = np.zeros(nprobe, dtype=np.int64)
    probe_conn = np.zeros(nprobe, dtype=np.int64)
    probe_tank = np.zeros(nprobe)
    for i, pl in enumerate(lay.place):
        for side in (0, 1):
            p = 2 * i + side
            if pl[0] == "line":
                probe_kind[p] = codes.PROBE_NODE
                probe_side[p] = side
            elif pl[0] == "device":
                probe_kind[p] = codes.PROBE_POINT
                probe_conn[p] = pl[1]
                s0 = conns[pl[1]].branches[0]
                # the flow on the carrier side of the connection's branch devices
                probe_side[p] = 1 if 0 <= s0 < pl[2] + side * pl[3] else 0
            else:
                probe_kind[p] = codes.PROBE_TANK
                probe_conn[p] = pl[1]
                probe_side[p] = 0 if i == 0 else 1
    dev_first = np.cumsum([0] + [len(c.devices) for c in conns])[:-1]
    br0 = np.full(len(conns), -1, dtype=np.int64)
    br1 = np.full(len(conns), -1, dtype=np.int64)
    for c, (first, conn) in enumerate(zip(dev_first, conns, strict=True)):
        if conn.branches[0] >= 0:
            br0[c], br1[c] = first + conn.branches[0], first + conn.branches[1]
    nsteps = np.array([int(np.ceil(duration / m.dt - 1e-9)) for m in members], dtype=np.int64)
    return {
        "dt_all": np.array([m.dt for m in members]),
        "nsteps_all": nsteps,
        "n_nodes_all": np.array([len(m.hv) for m in members], dtype=np.int64),
        "line_start": stack("line_start", nline, dtype=np.int64),
        "line_n": stack("reaches", nline, dtype=np.int64),
        "line_b": stack("line_b", nline),
        "line_r": stack("line_r", nline),
        "hv_all": stack("hv", nnode),
        "h_init": stack("h_init", nnode),
        "q_init": stack("q_init", nnode),
        "conn_left": np.array([c.left for c in conns], dtype=np.int64),
        "conn_right": np.array([c.right for c in conns], dtype=np.int64),
        "conn_tank_left": np.zeros(len(conns)),
        "conn_tank_right": np.zeros(len(conns)),
        "conn_dev0": np.cumsum([0] + [len(c.devices) for c in conns])[:-1].astype(np.int64),
        "conn_dev1": np.cumsum([len(c.devices) for c in conns]).astype(np.int64),
        "conn_pt0": np.array([c.first_point for c in conns], dtype=np.int64),
        "conn_active": np.array([c.active for c in conns], dtype=np.bool_),
        "conn_br0": br0,
        "conn_br1": br1,
        "dev_kind": np.array([d.kind for d in devices] or [0], dtype=np.int64)[:ndev],
        "dev_par": dev_par,
        "tab_t": tab_t,
        "tab_a": tab_a,
        "tab_n": tab_n,
        "probe_kind": probe_kind,
        "probe_ref": stack("probe_ref", nprobe, dtype=np.int64),
        "probe_side": probe_side,
        "probe_conn": probe_conn,
        "probe_tank": probe_tank,
        "qscale_all": np.array([max(abs(m.flow), 1e-6) for m in members]),
        "start_all": np.zeros(nb, dtype=np.int64),
    }


#: the threads that run members, one per processor, started on first use and kept (starting
#: threads for every batch costs about a millisecond, as much as a short run)
_pool: ThreadPoolExecutor | None = None
_pool_lock = threading.Lock()


def _workers() -> ThreadPoolExecutor:
    global _pool
    with _pool_lock:
        if _pool is None:
            _pool = ThreadPoolExecutor(os.cpu_count() or 1, thread_name_prefix="esdsurge-engine")
        return _pool


def _forget_workers() -> None:
    """In a forked child: the parent's threads are not there; start afresh."""
    global _pool, _pool_lock
    _pool = None
    _pool_lock = threading.Lock()


os.register_at_fork(after_in_child=_forget_workers)


def _launch(run_members: Callable[..., int], nb: int, args: tuple) -> None:
    """Run members 0 .. nb - 1, in parallel on up to one thread per processor (the compiled
    loop releases the GIL); members are handed out one at a time."""
    threads = min(nb, os.cpu_count() or 1)
    if threads <= 1:
        run_members(0, nb, *args)
        return
    lock = threading.Lock()
    counter = itertools.count()

    def work() -> None:
        while True:
            with lock:
                b = next(counter)
            if b >= nb:
                return
            run_members(b, b + 1, *args)

    pool = _workers()
    for f in [pool.submit(work) for _ in range(threads)]:
        f.result()


def _run(
    route: Route,
    fluid: Fluid,
    case: Case,
    lay: g.Layout,
    variants: tuple[Variant, ...],
    members: list[g.Member],
    steadies: list,
    duration: float,
    cavities: bool,
    rundown: str,
    samples: int,
    atmosphere_abs: float,
    stop: StopRule | None = None,
    keep_state: bool = False,
    resume: Sequence[MemberState | None] | None = None,
) -> Run:
    from . import kernel

    els = route.elements
    rho_g = fluid.density * G
    arrays = _pack(lay, members, duration)
    # tank heads: constant, the same for every member
    h_shore, h_carrier = g.route_tank_heads(route, steadies[0], rho_g, atmosphere_abs)
    arrays["conn_tank_left"][0] = h_shore
    arrays["conn_tank_right"][-1] = h_carrier
    for i, pl in enumerate(lay.place):
        if pl[0] == "tank":
            arrays["probe_tank"][2 * i : 2 * i + 2] = h_shore if i == 0 else h_carrier
    pumps = lay.pumps
    dev_index = {}
    k = 0
    for c in lay.connections:
        for d in c.devices:
            if d.kind in (codes.DEV_PUMP, codes.DEV_RELIEF, codes.DEV_ACCUM):
                dev_index[d.element] = k
            k += 1
    pump_dev = np.array([dev_index[i] for i in pumps], dtype=np.int64)
    branches = tuple(i for i, e in enumerate(els) if isinstance(e, BRANCH_KINDS))
    br_dev = np.array([dev_index[i] for i in branches], dtype=np.int64)
    nsamp = max(2, int(samples))
    nnode = arrays["hv_all"].shape[1]
    ndev = max(len(arrays["dev_kind"]), 1)
    out = kernel.empty_outputs(
        len(members), nnode, max(lay.n_points, 1), 2 * len(els), len(pumps), nsamp,
        len(branches), len(lay.connections), ndev,
    )  # fmt: skip
    starts = arrays["start_all"]
    for b, r in enumerate(resume or ()):
        if r is None:
            continue
        starts[b] = r.step
        for k, v in r.arrays.items():
            out[k][b][tuple(slice(0, n) for n in v.shape)] = v
    arrays.update(out, pump_dev=pump_dev, br_dev=br_dev)
    npts = max(lay.n_points, 1)
    arrays.update(kernel.no_stops(len(members), nnode, npts, arrays["nsteps_all"]))
    if stop is not None:
        _stop_arrays(route, lay, members, stop, rho_g, arrays)
    args = (bool(cavities), G, float(duration)) + tuple(
        tuple(arrays[k] for k in group)
        for group in (
            codes.MEMBERS,
            codes.GRID,
            codes.CONNECTIONS,
            codes.DEVICES,
            codes.PROBES,
            codes.STOPS,
            codes.OUTPUTS,
        )
    )
    t0 = time.perf_counter()
    _launch(kernel.run_members, len(members), args)
    loop_seconds = time.perf_counter() - t0
    ran = np.where(out["stopped"] > 0, out["stopped"], arrays["nsteps_all"])
    updates = int(np.sum(arrays["n_nodes_all"] * (ran - starts)))
    states: tuple[MemberState | None, ...] = ()
    if keep_state:
        states = tuple(
            None
            if out["stopped"][b] > 0
            else _member_state(out, b, m, int(arrays["nsteps_all"][b]), len(els))
            for b, m in enumerate(members)
        )
    if resume is not None:
        # the samples a resumed member passed before its start are not known here
        for b, r in enumerate(resume):
            if r is not None:
                late = np.arange(nsamp) * (duration / (nsamp - 1)) <= r.step * r.dt
                late[0] = False
                for k in ("ser_h", "ser_q", "ser_s", "ser_bq", "ser_bs"):
                    out[k][b][..., late] = np.nan
    run = _unpack(
        route,
        fluid,
        case,
        lay,
        variants,
        members,
        steadies,
        duration,
        cavities,
        rundown,
        out,
        rho_g,
        nsamp,
        (h_shore, h_carrier),
        pumps,
        branches,
        updates,
        loop_seconds,
    )
    return dataclasses.replace(run, states=states) if keep_state else run


def _member_state(out: dict, b: int, m: g.Member, step: int, n_elements: int) -> MemberState:
    """Member ``b``'s state after its last step (``step``), to resume from: its part of the
    outputs in ``codes.RESUMED``, with the volumes that passed over the last step beyond the
    duration added back, and its first samples."""
    nn = len(m.hv)
    arrays = {}
    for k in codes.RESUMED:
        v = out[k][b]
        arrays[k] = (v[:nn] if k in _PER_NODE else v).copy()
    arrays["vol_through"] += out["vol_rest"][b]
    arrays["br_out"][:, codes.B_VOL] += out["brvol_rest"][b]
    for k in ("ser_h", "ser_q", "ser_s", "ser_bq", "ser_bs"):
        arrays[k] = out[k][b][..., :1].copy()
    return MemberState(step=step, dt=m.dt, arrays=arrays)


#: outputs with one value per grid node (padded to the batch's largest member)
_PER_NODE = frozenset(
    ("env_hmax", "env_kmax", "env_hmin", "env_kmin", "env_vmax", "env_kv", "h_end", "vol_end",
     "qu_end", "qd_end")
)  # fmt: skip


def _stop_arrays(
    route: Route, lay: g.Layout, members: list[g.Member], stop: StopRule, rho_g: float, arrays: dict
) -> None:
    """Fill the kernel's stop arrays (``codes.STOPS``) from ``stop``: each element's pressure
    bounds as heads at its nodes (a line: the lowest point of a node's cell for the highest
    pressure, its highest point for the lowest, as the figures are taken) or at its points
    (a point element), its cavity bound at its nodes (a point element: the nodes beside it)."""
    names = [e.name for e in route.elements]
    p_max = dict(stop.max_abs)
    p_min = dict(stop.min_abs)
    unknown = sorted((set(p_max) | set(p_min) | set(stop.no_cavity)) - set(names))
    if unknown:
        raise ValueError(f"stop rule: no element named {', '.join(map(repr, unknown))}")
    if len(stop.after) != len(members):
        raise ValueError(f"stop rule: {len(stop.after)} times for {len(members)} batch members")
    cavity_after = stop.cavity_after or stop.after
    if len(cavity_after) != len(members):
        raise ValueError(
            f"stop rule: {len(cavity_after)} cavity times for {len(members)} batch members"
        )
    for b, m in enumerate(members):
        # the first step at or after ``after``, and one more against round-off in the time
        arrays["stop_step"][b] = max(int(math.ceil(stop.after[b] / m.dt)) + 1, 1)
        arrays["stop_cstep"][b] = max(int(math.ceil(cavity_after[b] / m.dt)) + 1, 1)
        for i, pl in enumerate(lay.place):
            name = names[i]
            if pl[0] == "line":
                ln = pl[1]
                s = m.line_start[ln]
                sl = slice(s, s + m.reaches[ln] + 1)
                if name in p_max:
                    arrays["stop_hx"][b, sl] = m.z_low[sl] + p_max[name] / rho_g
                if name in p_min:
                    arrays["stop_hn"][b, sl] = m.z_high[sl] + p_min[name] / rho_g
                if name in stop.no_cavity:
                    arrays["stop_v"][b, sl] = np.minimum(arrays["stop_v"][b, sl], stop.cavity)
            elif pl[0] == "device":
                c = lay.connections[pl[1]]
                pts = slice(c.first_point + pl[2], c.first_point + pl[2] + pl[3] + 1)
                zp = m.point_z[c.first_point + pl[2]]
                # two devices of a chain share the point between them: either bound stops
                if name in p_max:
                    px = arrays["stop_px"][b, pts]
                    arrays["stop_px"][b, pts] = np.minimum(px, zp + p_max[name] / rho_g)
                if name in p_min:
                    pn = arrays["stop_pn"][b, pts]
                    arrays["stop_pn"][b, pts] = np.maximum(pn, zp + p_min[name] / rho_g)
                if name in stop.no_cavity:
                    side = []
                    if c.left >= 0:
                        side.append(m.line_start[c.left] + m.reaches[c.left])
                    if c.right >= 0:
                        side.append(m.line_start[c.right])
                    for k in side:
                        arrays["stop_v"][b, k] = min(arrays["stop_v"][b, k], stop.cavity)


def _unpack(
    route,
    fluid,
    case,
    lay,
    variants,
    members,
    steadies,
    duration,
    cavities,
    rundown,
    out,
    rho_g,
    nsamp,
    tank_heads,
    pumps,
    branches,
    updates,
    loop_seconds,
) -> Run:
    els = route.elements
    ne = len(els)
    nb = len(members)
    shape = (nb, ne)
    p_max = np.full(shape, np.nan)
    t_max = np.zeros(shape)
    x_max = np.zeros(shape)
    p_min = np.full(shape, np.nan)
    t_min = np.zeros(shape)
    x_min = np.zeros(shape)
    cav = np.zeros(shape)
    t_cav = np.zeros(shape)
    x_cav = np.zeros(shape)
    reaches = np.zeros(shape, dtype=np.int64)
    a_ask = np.full(shape, np.nan)
    a_used = np.full(shape, np.nan)
    envelopes = []
    balance = np.zeros(nb)
    ser_h = out["ser_h"]
    p_in = np.empty((nb, ne, nsamp))
    p_out = np.empty((nb, ne, nsamp))
    for b, m in enumerate(members):
        nn = len(m.hv)
        dt = m.dt
        hmax = out["env_hmax"][b, :nn]
        hmin = out["env_hmin"][b, :nn]
        pmax_node = rho_g * (hmax - m.z_low)
        pmin_node = rho_g * (hmin - m.z_high)
        vmax = out["env_vmax"][b, :nn]
        node_el = np.array(lay.lines)[m.node_line]
        envelopes.append(
            Envelope(
                x=m.x_route,
                z=m.z,
                element=node_el,
                p_max_abs=pmax_node,
                p_min_abs=pmin_node,
                cavity_max=vmax,
            )
        )
        for i, pl in enumerate(lay.place):
            if pl[0] == "line":
                ln = pl[1]
                s = m.line_start[ln]
                sl = slice(s, s + m.reaches[ln] + 1)
                j = int(np.argmax(pmax_node[sl]))
                p_max[b, i] = pmax_node[sl][j]
                t_max[b, i] = out["env_kmax"][b, s + j] * dt
                x_max[b, i] = m.x[s + j]
                j = int(np.argmin(pmin_node[sl]))
                p_min[b, i] = pmin_node[sl][j]
                t_min[b, i] = out["env_kmin"][b, s + j] * dt
                x_min[b, i] = m.x[s + j]
                j = int(np.argmax(vmax[sl]))
                cav[b, i] = vmax[sl][j]
                t_cav[b, i] = out["env_kv"][b, s + j] * dt
                x_cav[b, i] = m.x[s + j]
                reaches[b, i] = m.reaches[ln]
                a_ask[b, i] = m.wave_speed[ln]
                a_used[b, i] = m.wave_speed_used[ln]
                zin, zout = m.z[s], m.z[s + m.reaches[ln]]
            elif pl[0] == "device":
                c = lay.connections[pl[1]]
                pts = list(range(c.first_point + pl[2], c.first_point + pl[2] + pl[3] + 1))
                zp = m.point_z[pts[0]]
                hx = out["pt_hmax"][b, pts]
                hn = out["pt_hmin"][b, pts]
                j = int(np.argmax(hx))
                p_max[b, i] = rho_g * (hx[j] - zp)
                t_max[b, i] = out["pt_kmax"][b, pts[j]] * dt
                j = int(np.argmin(hn))
                p_min[b, i] = rho_g * (hn[j] - zp)
                t_min[b, i] = out["pt_kmin"][b, pts[j]] * dt
                side = []
                if c.left >= 0:
                    side.append(m.line_start[c.left] + m.reaches[c.left])
                if c.right >= 0:
                    side.append(m.line_start[c.right])
                if side:
                    j = int(np.argmax(vmax[side]))
                    cav[b, i] = vmax[side][j]
                    t_cav[b, i] = out["env_kv"][b, side[j]] * dt
                zin = zout = zp
            else:
                end = 0 if i == 0 else 1
                level = getattr(steadies[b], "tank_levels", (math.nan, math.nan))[end]
                if not math.isfinite(level):
                    level = els[i].surface
                p = rho_g * (tank_heads[end] - level)
                p_max[b, i] = p_min[b, i] = p
                zin = zout = level
            p_in[b, i] = rho_g * (ser_h[b, 2 * i] - zin)
            p_out[b, i] = rho_g * (ser_h[b, 2 * i + 1] - zout)
        stored = float(np.sum(m.storage * (out["h_end"][b, :nn] - m.h_init)))
        stored -= float(np.sum(out["vol_end"][b, :nn]))  # a cavity displaces liquid
        v_in = out["vol_through"][b, 0]
        v_out = out["vol_through"][b, 2 * (ne - 1)]
        v_branches = float(np.sum(out["br_out"][b, :, codes.B_VOL]))
        balance[b] = v_in - v_out - v_branches - stored
    q = out["ser_q"]
    br = out["br_out"]
    dts = np.array([m.dt for m in members])
    capacity = np.full((nb, len(branches)), np.nan)
    for j, i in enumerate(branches):
        e = els[i]
        if isinstance(e, Relief):
            drop = e.full_open_pressure_gauge - e.back_pressure_gauge
            capacity[:, j] = mitigations.relief_flow(e.flow_area, drop, fluid.density)
        assert isinstance(e, Relief | Accumulator)
    return Run(
        case=case.name,
        route=route.name,
        product=fluid.name,
        variants=variants,
        elements=tuple(e.name for e in els),
        kinds=tuple(st_kind for st_kind in (ls.kind for ls in steadies[0].lines)),
        rate=np.array([m.flow for m in members]),
        duration=float(duration),
        cavities=bool(cavities),
        rundown=rundown,
        dt=np.array([m.dt for m in members]),
        reaches=reaches,
        wave_speed=a_ask,
        wave_speed_used=a_used,
        wave_speed_adjustment=a_used / a_ask - 1.0,
        p_max_abs=p_max,
        t_p_max=t_max,
        x_p_max=x_max,
        p_min_abs=p_min,
        t_p_min=t_min,
        x_p_min=x_min,
        cavity_max=cav,
        t_cavity_max=t_cav,
        x_cavity_max=x_cav,
        volume_through=out["vol_through"][:, 0::2].copy(),
        time=np.linspace(0.0, duration, nsamp),
        p_in_abs=p_in,
        p_out_abs=p_out,
        q_in=q[:, 0::2].copy(),
        q_out=q[:, 1::2].copy(),
        pumps=tuple(els[i].name for i in pumps),
        pump_speed=out["ser_s"],
        envelopes=tuple(envelopes),
        initial_mismatch=np.array([m.mismatch for m in members]),
        volume_balance_error=balance,
        branches=tuple(els[i].name for i in branches),
        branch_flow=out["ser_bq"],
        branch_state=out["ser_bs"],
        branch_volume=br[:, :, codes.B_VOL].copy(),
        branch_flow_max=br[:, :, codes.B_QMAX].copy(),
        t_branch_flow_max=br[:, :, codes.B_KQMAX] * dts[:, None],
        branch_state_min=br[:, :, codes.B_SMIN].copy(),
        branch_state_max=br[:, :, codes.B_SMAX].copy(),
        branch_capacity=capacity,
        branch_time_over_capacity=br[:, :, codes.B_SAT].copy(),
        stopped=np.where(out["stopped"] > 0, out["stopped"] * dts, np.nan),
        node_updates=updates,
        loop_seconds=loop_seconds,
        steady=tuple(steadies),
    )

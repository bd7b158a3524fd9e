"""Integer codes and array layouts shared by the grid builder and the compiled kernel.

Plain Python: importing it compiles nothing.
"""

from __future__ import annotations

# device kinds
DEV_POINT = 0  # no head change (manifold)
DEV_VALVE = 1  # valve or coupling: effective area from a table in time
DEV_PUMP = 2  # pump station (identical units in parallel), with or without a check valve
DEV_LOSS = 3  # fixed quadratic loss (the steady state's throttle at a pump discharge)
DEV_RELIEF = 4  # branch: surge relief valve discharging to a relief tank
DEV_ACCUM = 5  # branch: gas-charged accumulator

# slots of a device's parameters (dev_par[member, device, slot])
P_H0, P_H1, P_H2 = 0, 1, 2  # fitted curve of one unit at rated speed [m], [s/m^2], [s^2/m^5]
P_UNITS = 3  # units running [-]
P_PUSHES = 4  # +1 pushes towards the carrier, -1 towards the shore
P_S0 = 5  # speed ratio before the trigger [-]
P_TTRIP = 6  # time of the trip [s] (1e300: no trip)
P_MODE = 7  # RUNDOWN_ANALYTIC or RUNDOWN_TORQUE
P_TAU = 8  # run-down time constant [s]
P_JW2 = 9  # inertia times rated speed squared, per unit [J]
P_RHOG_ETA = 10  # rho g / best efficiency [N/m^3]
P_QBEP = 11  # flow of one unit at the best-efficiency point, at rated speed [m^3/s]
P_CHECK = 12  # 1 with a check valve
L_K = 0  # fixed loss: coefficient on Q|Q| [s^2/m^5]
R_HSET = 0  # relief: head at the set pressure [m]
R_HFULL = 1  # relief: head at which it is fully open [m]
R_AREA = 2  # relief: effective flow area fully open [m^2]
R_TOPEN = 3  # relief: full opening time [s]
R_TCLOSE = 4  # relief: full closing time [s]
R_RESEAT = 5  # relief: 1 when it closes again as the pressure falls
R_HBACK = 6  # relief: head of the relief tank at the valve [m]
A_C = 0  # accumulator: gas pressure head times gas volume^n, p V^n / (rho g) [m m^(3n)]
A_N = 1  # accumulator: polytropic exponent [-]
A_VTOT = 2  # accumulator: gas volume of the empty vessel [m^3]
A_R = 3  # accumulator: connection loss, coefficient on Q|Q| [s^2/m^5]
A_Z = 4  # accumulator: elevation of its connection [m]
A_V0 = 5  # accumulator: gas volume before the trigger [m^3]
B_OFF = 12  # relief or accumulator: 1 when taken out (it passes no flow)
N_PAR = 13

# rows of the kernel's device working array (work[row, device])
W_K = 0  # loss coefficient on Q|Q| of a valve or a fixed loss [s^2/m^5]
W_A = 1  # pump: h0 s^2 [m]
W_B = 2  # pump: h1 s [s/m^2]
W_C = 3  # pump: h2 [s^2/m^5]
W_U = 4  # pump: units running
W_P = 5  # pump: pushes
W_S = 6  # pump: speed ratio
W_Q = 7  # pump: flow at the last step [m^3/s]
W_H = 8  # pump: head gained at the last step, in route direction [m]
W_SHUT = 9  # valve: 1 when at zero area
W_X = 10  # relief: opening fraction [-]; accumulator: gas volume [m^3]
W_HS = 11  # branch: head at its point at the last step [m]
W_QS = 12  # branch: flow into the branch at the last step [m^3/s]
W_SAT = 13  # relief: steps spent fully open above its full-open head
N_WORK = 14

# probe kinds
PROBE_NODE = 0  # head of a node; flow leaving it (side 0) or entering it (side 1)
PROBE_POINT = 1  # head of a chain point; flow of its connection
PROBE_TANK = 2  # constant head; flow of its connection

RUNDOWN_ANALYTIC = 0
RUNDOWN_TORQUE = 1
RUNDOWN_RAMP = 2  # a variable-speed drive ramps the speed down linearly over P_TAU

#: a line's envelope pass is skipped while no node moves beyond it by more than this [m]
#: (round-off in a standing state); the envelope is then within this of the true extreme
ENVELOPE_SLACK = 1e-7
#: a member stops (``run.StopRule``) only once a head is beyond its bound by more than this [m]
STOP_SLACK = 1e-6
#: steps between two looks at a member's bounds (``run.StopRule``)
STOP_EVERY = 32

# argument groups of kernel.run_members (tuples of arrays, in this order)
#: start_all: the step a member resumes from (0: from its state before the trigger; see
#: ``RESUMED``)
MEMBERS = ("dt_all", "nsteps_all", "n_nodes_all", "qscale_all", "start_all")
GRID = ("line_start", "line_n", "line_b", "line_r", "hv_all", "h_init", "q_init")
CONNECTIONS = (
    "conn_left",
    "conn_right",
    "conn_tank_left",
    "conn_tank_right",
    "conn_dev0",
    "conn_dev1",
    "conn_pt0",
    "conn_active",
    "conn_br0",  # first branch device of the connection (-1: none)
    "conn_br1",  # one past its last branch device
)
DEVICES = ("dev_kind", "dev_par", "tab_t", "tab_a", "tab_n", "pump_dev", "br_dev")
#: probe_side: a node's flow leaving it (0) or entering it (1); at a point or a tank, the
#: connection's flow on the shore side (0) or the carrier side (1) of its branch devices
PROBES = ("probe_kind", "probe_ref", "probe_side", "probe_conn", "probe_tank")
#: per member: the first step at which it may stop (past the last step: never); per node and
#: per point, the heads [m] and cavity volume [m^3] beyond which it stops; per member, the first
#: step at which a cavity alone may stop it (``run.StopRule``)
STOPS = ("stop_step", "stop_hx", "stop_hn", "stop_v", "stop_px", "stop_pn", "stop_cstep")
OUTPUTS = (
    "ser_h",
    "ser_q",
    "ser_s",
    "env_hmax",
    "env_kmax",
    "env_hmin",
    "env_kmin",
    "env_vmax",
    "env_kv",
    "pt_hmax",
    "pt_kmax",
    "pt_hmin",
    "pt_kmin",
    "vol_through",
    "h_end",
    "vol_end",
    "ser_bq",
    "ser_bs",
    "br_out",
    "stopped",  # per member, the step at which it stopped (0: it ran to the end)
    # the rest of the state after the last step (with h_end and vol_end), so that a member can
    # resume from it: the flows at the nodes, the connections' flows, the devices' working
    # values and table rows, the chain heads; and what the volumes through the probes and into
    # the branches gained over the last step beyond the duration
    "qu_end",
    "qd_end",
    "qconn_end",
    "qconr_end",
    "work_end",
    "row_end",
    "pth_end",
    "vol_rest",
    "brvol_rest",
)
#: the outputs that a resumed member starts from (copied in from the run it resumes, member by
#: member): all but the series (a resumed member's samples up to its start are NaN), the stop
#: step and the last step's rests (added to the volumes when the state is kept)
RESUMED = tuple(
    k
    for k in OUTPUTS
    if k not in ("ser_h", "ser_q", "ser_s", "ser_bq", "ser_bs", "stopped", "vol_rest", "brvol_rest")
)
#: columns of br_out[member, branch, :]
B_VOL, B_QMAX, B_KQMAX, B_SMIN, B_SMAX, B_SAT = range(6)
N_BR_OUT = 6

"""Figures of a check (matplotlib, Agg): traces against time, envelopes along the route, and
what the relief valves and accumulators did.

Reads ``CaseCheck`` objects; converts units for the axes and computes nothing else. A case
checked with ``--without`` carries its comparison (``CaseCheck.compare``), drawn dashed over the
case as designed.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np

from esdsurge.present.check import without_label
from esdsurge.present.fmt import FOOT, PSI, US_GALLON
from esdsurge.studies.check import CaseCheck


def _mpl():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


def slug(name: str) -> str:
    """A file-name-safe form of a case name."""
    s = re.sub(r"[^A-Za-z0-9]+", "-", name).strip("-").lower()
    return s or "case"


def _p_axis(units: str) -> tuple[float, str, str]:
    if units == "us":
        return PSI, "psig", "psia"
    return 1e5, "barg", "bara"


def plot_traces(cc: CaseCheck, path: Path, atmosphere_abs: float, units: str = "si") -> Path:
    """Pressure against time at the manifold and at the closing element."""
    plt = _mpl()
    scale, g_unit, _ = _p_axis(units)
    fig, ax = plt.subplots(figsize=(9, 4.8), dpi=110)
    colours = ["#1f5fa8", "#c2571a"]
    other = cc.compare
    for tr, c in zip(cc.traces, colours, strict=False):
        label = tr.where if other is None else f"{tr.where}, as designed"
        ax.plot(tr.time, (tr.p_abs - atmosphere_abs) / scale, color=c, lw=1.4, label=label)
    if other is not None:
        for tr, c in zip(other.traces, colours, strict=False):
            ax.plot(
                tr.time,
                (tr.p_abs - atmosphere_abs) / scale,
                color=c,
                lw=1.1,
                ls="--",
                alpha=0.85,
                label=f"{tr.where}, {without_label(cc)}",
            )
    # each distinct limit of the traced elements once, labelled with the elements it belongs to
    limits: dict[float, list[str]] = {}
    traced = {t.where for t in cc.traces}
    for ev in cc.elements:
        if ev.name in traced and ev.limits.max_gauge is not None:
            limits.setdefault(round(ev.limits.max_gauge / scale, 6), []).append(ev.name)
    for y, names in limits.items():
        ax.axhline(y, color="#b00020", ls="--", lw=1)
        ax.text(
            0.005,
            y,
            f" allowed highest: {', '.join(names)}",
            color="#b00020",
            va="bottom",
            fontsize=8,
            transform=ax.get_yaxis_transform(),
        )
    for e in cc.case.events:
        ax.axvline(e.at, color="0.6", lw=0.8, ls=":")
    ax.set_xlabel("time after the trigger [s]")
    ax.set_ylabel(f"pressure [{g_unit}]")
    ax.set_title(f"{cc.case.name}: pressure against time", fontsize=11)
    ax.grid(True, color="0.9")
    ax.legend(loc="best", fontsize=9)
    fig.tight_layout()
    fig.savefig(path)
    plt.close(fig)
    return path


def plot_envelope(cc: CaseCheck, path: Path, atmosphere_abs: float, units: str = "si") -> Path:
    """Highest and lowest pressure along the route, with elevations, boundaries and limits."""
    plt = _mpl()
    run = cc.run
    assert run is not None
    env = run.envelopes[cc.member]  # type: ignore[attr-defined]
    scale, g_unit, _ = _p_axis(units)
    xs_scale, x_unit = (FOOT, "ft") if units == "us" else (1.0, "m")
    x = np.asarray(env.x) / xs_scale
    fig, (ax, az) = plt.subplots(
        2, 1, figsize=(10, 6.4), dpi=110, sharex=True, gridspec_kw={"height_ratios": [3, 1]}
    )
    ax.fill_between(
        x,
        (env.p_min_abs - atmosphere_abs) / scale,
        (env.p_max_abs - atmosphere_abs) / scale,
        color="#9ec3e6",
        alpha=0.5,
        label="range over the run",
    )
    designed = "" if cc.compare is None else ", as designed"
    ax.plot(
        x,
        (env.p_max_abs - atmosphere_abs) / scale,
        color="#1f5fa8",
        lw=1.4,
        label="highest" + designed,
    )
    ax.plot(
        x,
        (env.p_min_abs - atmosphere_abs) / scale,
        color="#2a8a5c",
        lw=1.2,
        label="lowest" + designed,
    )
    if cc.compare is not None:
        # each member has its own grid: the comparison is drawn on its own nodes
        bare = run.envelopes[cc.compare.member]  # type: ignore[attr-defined]
        for values, colour, what in (
            (bare.p_max_abs, "#1f5fa8", "highest"),
            (bare.p_min_abs, "#2a8a5c", "lowest"),
        ):
            ax.plot(
                np.asarray(bare.x) / xs_scale,
                (values - atmosphere_abs) / scale,
                color=colour,
                lw=1.1,
                ls="--",
                label=f"{what}, {without_label(cc)}",
            )
    # limits per element, drawn over the element's span
    el_idx = np.asarray(env.element)
    verdicts = {ev.name: ev for ev in cc.elements}
    first_lim = first_min = True
    for i, name in enumerate(run.elements):  # type: ignore[attr-defined]
        sel = np.nonzero(el_idx == i)[0]
        if sel.size == 0:
            continue
        x0, x1 = x[sel[0]], x[sel[-1]]
        ax.axvline(x0, color="0.8", lw=0.6)
        ev = verdicts.get(name)
        if ev is None:
            continue
        if ev.limits.max_gauge is not None:
            y = ev.limits.max_gauge / scale
            ax.plot(
                [x0, max(x1, x0 + 1e-9)],
                [y, y],
                color="#b00020",
                lw=1.6,
                label="allowed highest" if first_lim else None,
            )
            first_lim = False
        ymin = (ev.limits.min_abs - atmosphere_abs) / scale
        ax.plot(
            [x0, max(x1, x0 + 1e-9)],
            [ymin, ymin],
            color="#7a3fa0",
            lw=1.0,
            ls="--",
            label="allowed lowest" if first_min else None,
        )
        first_min = False
        if ev.kind in ("pipe", "arm", "hose"):
            # names of short elements stand upright so that they do not overlap
            short = (x1 - x0) < 0.15 * (x[-1] - x[0])
            az.text(
                (x0 + x1) / 2,
                0.04,
                name,
                transform=az.get_xaxis_transform(),
                ha="center",
                va="bottom",
                rotation=90 if short else 0,
                fontsize=6 if short else 7,
                color="0.3",
            )
    ax.set_ylabel(f"pressure [{g_unit}]")
    ax.set_title(f"{cc.case.name}: pressure envelope along the route", fontsize=11)
    ax.grid(True, color="0.92")
    ax.legend(loc="best", fontsize=8)
    az.plot(x, np.asarray(env.z) / xs_scale, color="0.35", lw=1.2)
    az.set_ylabel(f"elevation [{x_unit}]")
    az.set_xlabel(f"chainage from the shore tank [{x_unit}]")
    az.grid(True, color="0.92")
    fig.tight_layout()
    fig.savefig(path)
    plt.close(fig)
    return path


def plot_branches(cc: CaseCheck, path: Path, units: str = "si") -> Path:
    """Flow into each relief valve and accumulator, and its opening or gas volume, against time.

    One panel of flows; below it one panel of relief-valve openings and one of accumulator gas
    volumes, for the kinds the case has. A relief valve's capacity is drawn as a dotted line.
    """
    plt = _mpl()
    if units == "us":
        q_scale, q_unit = US_GALLON / 60.0, "US gpm"
        v_scale, v_unit = US_GALLON, "US gal"
    else:
        q_scale, q_unit = 1.0 / 3600.0, "m³/h"
        v_scale, v_unit = 1e-3, "L"
    reliefs = [b for b in cc.branches if b.kind == "relief"]
    vessels = [b for b in cc.branches if b.kind != "relief"]
    rows = 1 + bool(reliefs) + bool(vessels)
    fig, axes = plt.subplots(
        rows, 1, figsize=(9, 2.3 + 2.0 * rows), dpi=110, sharex=True, squeeze=False
    )
    axq = axes[0][0]
    colours = ["#1f5fa8", "#c2571a", "#2a8a5c", "#7a3fa0", "#b8860b", "#555555"]
    colour = {b.name: colours[i % len(colours)] for i, b in enumerate(cc.branches)}
    for b in cc.branches:
        axq.plot(b.time, b.flow / q_scale, color=colour[b.name], lw=1.3, label=b.name)
        if b.capacity is not None:
            axq.axhline(
                b.capacity / q_scale,
                color=colour[b.name],
                lw=0.9,
                ls=":",
                label=f"{b.name}: capacity fully open",
            )
    axq.axhline(0.0, color="0.5", lw=0.6)
    axq.set_ylabel(f"flow in [{q_unit}]")
    axq.set_title(f"{cc.case.name}: relief valves and accumulators as designed", fontsize=11)
    row = 1
    if reliefs:
        ax = axes[row][0]
        for b in reliefs:
            ax.plot(b.time, b.state * 100.0, color=colour[b.name], lw=1.3, label=b.name)
        ax.set_ylabel("relief opening [%]")
        ax.set_ylim(-5, 105)
        row += 1
    if vessels:
        ax = axes[row][0]
        for b in vessels:
            ax.plot(b.time, b.state / v_scale, color=colour[b.name], lw=1.3, label=b.name)
        ax.set_ylabel(f"gas volume [{v_unit}]")
    for e in cc.case.events:
        for (a,) in axes:
            a.axvline(e.at, color="0.6", lw=0.8, ls=":")
    for (a,) in axes:
        a.grid(True, color="0.9")
        a.legend(loc="best", fontsize=8)
    axes[-1][0].set_xlabel("time after the trigger [s]")
    fig.tight_layout()
    fig.savefig(path)
    plt.close(fig)
    return path


def write_case_plots(
    cc: CaseCheck,
    folder: Path,
    atmosphere_abs: float,
    units: str = "si",
    *,
    branches: bool = False,
) -> list[Path]:
    """The figures of a case into ``folder``; returns the paths written.

    Always the pressure traces and the envelope (with the comparison overlaid when the case
    has one); with ``branches`` also the relief valves and accumulators, when the case has any.
    """
    if cc.run is None:
        return []
    folder.mkdir(parents=True, exist_ok=True)
    base = slug(cc.case.name)
    out = [
        plot_traces(cc, folder / f"{base}-traces.png", atmosphere_abs, units),
        plot_envelope(cc, folder / f"{base}-envelope.png", atmosphere_abs, units),
    ]
    if branches and cc.branches:
        out.append(plot_branches(cc, folder / f"{base}-mitigations.png", units))
    return out

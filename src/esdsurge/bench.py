"""Speed of the engine: ``python -m esdsurge.bench [--json]``.

Prints, and asserts nothing:

* node-updates per second of the compiled time loop at batch 1, 16 and 64 on a route of about
  2000 nodes (and the same for the whole ``simulate`` call, Python set-up included);
* the first-call compile time, measured in a fresh process with numba's cache in an empty
  temporary directory, so that it is real;
* the wall time of every case of every ``terminals/*.yaml`` (skipped with a note when a file
  cannot be read);
* the wall time of the full stroke window of every case of the jetty demo, the fastest of
  three searches (``esdsurge.studies.stroke.bench_jetty_windows``).

With ``--json`` it prints one object: ``{"node_updates_per_s": {"1": ..., "16": ..., "64": ...},
"compile_s": ..., "cases": {"<file>:<case>": <wall s>}, "stroke_windows_jetty": {...}}`` (plus
the end-to-end figures under ``"node_updates_per_s_simulate"``).
"""

from __future__ import annotations

import argparse
import json
import math
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from esdsurge.engine import Variant, simulate
from esdsurge.errors import EsdsurgeError
from esdsurge.model import Case, Close, Fluid, Hose, Pipe, Pump, Route, Tank, Trip, Valve

BATCHES = (1, 16, 64)
NODES = 2000

#: a light product (gasoline-like, invented round values) for the benchmark route
_FLUID = Fluid(
    name="bench product",
    density=740.0,
    bulk_modulus=0.95e9,
    vapour_pressure_abs=40e3,
    viscosity=0.45e-3,
    temperature=293.15,
)


def bench_route() -> tuple[Route, Case]:
    """Tank, pumps, 1.8 km shore line, ESD valve, hose, arm-like rise, tank; trip and close."""
    d = 0.38
    area = math.pi * d * d / 4.0
    route = Route(
        name="bench",
        elements=(
            Tank(name="shore tank", surface=12.0),
            Pump(
                name="pumps",
                curve=((0.0, 80.0), (0.1, 76.0), (0.2, 64.0), (0.25, 53.0)),
                count=2,
                rated_speed=2980 * 2 * math.pi / 60,
                inertia=1.6,
            ),
            Pipe(
                name="shore line",
                length=1800.0,
                inside_diameter=d,
                wall=0.0095,
                youngs_modulus=2.07e11,
                poisson=0.3,
                roughness=4.5e-5,
                profile=((0.0, 0.0), (900.0, 3.0), (1800.0, 5.0)),
            ),
            Valve(name="esd valve", valve_type="ball", flow_area=2.0 * area, diameter=d),
            Pipe(
                name="arm",
                length=25.0,
                inside_diameter=0.3,
                wall=0.0095,
                youngs_modulus=1.95e11,
                poisson=0.3,
                roughness=4.5e-5,
                profile=((0.0, 5.0), (11.0, 18.0), (25.0, 9.0)),
            ),
            Hose(
                name="hose",
                length=8.0,
                inside_diameter=0.25,
                wave_speed=250.0,
                roughness=1e-4,
                profile=((0.0, 9.0), (8.0, 8.0)),
            ),
            Tank(name="carrier tank", surface=10.0),
        ),
    )
    case = Case(
        name="bench",
        route="bench",
        product=_FLUID.name,
        rate=0.3,
        events=(Trip(element="pumps", at=0.0), Close(element="esd valve", at=0.5, stroke=5.0)),
    )
    return route, case


def node_rates(batches=BATCHES, duration: float = 4.0) -> tuple[dict, dict]:
    """Node-updates per second of the loop and of the whole call, per batch size."""
    route, case = bench_route()
    # a time step that puts about NODES nodes on the route
    probe = simulate(route, _FLUID, case, duration=0.01)
    travel = sum(
        probe.reaches[0, i] * probe.dt[0] for i in range(len(route.elements))
    )  # sum of L / a_used over the lines [s]
    dt_max = travel / (NODES - 4)
    loop, whole = {}, {}
    for nb in batches:
        variants = [Variant(stroke_scale=1.0 + 0.01 * k) for k in range(nb)]
        t0 = time.perf_counter()
        run = simulate(route, _FLUID, case, variants=variants, duration=duration, dt_max=dt_max)
        wall = time.perf_counter() - t0
        loop[str(nb)] = run.node_updates / run.loop_seconds
        whole[str(nb)] = run.node_updates / wall
    return loop, whole


_COMPILE_SNIPPET = """
import time
t0 = time.perf_counter()
from esdsurge.bench import bench_route, _FLUID
from esdsurge.engine import simulate
route, case = bench_route()
t1 = time.perf_counter()
simulate(route, _FLUID, case, duration=0.05)
t2 = time.perf_counter()
simulate(route, _FLUID, case, duration=0.05)
t3 = time.perf_counter()
print((t2 - t1) - (t3 - t2))
"""


def compile_seconds() -> float:
    """First-call compile time [s], in a fresh process with an empty numba cache directory."""
    with tempfile.TemporaryDirectory() as cache:
        env = dict(os.environ, NUMBA_CACHE_DIR=cache)
        out = subprocess.run(
            [sys.executable, "-c", _COMPILE_SNIPPET],
            capture_output=True,
            text=True,
            env=env,
            check=True,
        )
    return float(out.stdout.strip().splitlines()[-1])


def case_times(folder: Path) -> tuple[dict, list[str]]:
    """Wall time of ``simulate`` for every case of every terminal file in ``folder`` [s]."""
    from esdsurge.terminal import load

    times: dict[str, float] = {}
    notes: list[str] = []
    for path in sorted(folder.glob("*.yaml")):
        try:
            terminal = load(str(path))
        except EsdsurgeError as exc:
            notes.append(f"{path.name}: skipped, cannot be read ({str(exc).splitlines()[0]})")
            continue
        for case in terminal.cases:
            t0 = time.perf_counter()
            try:
                simulate(
                    terminal.routes[case.route],
                    terminal.products[case.product],
                    case,
                    atmosphere_abs=terminal.atmosphere_abs,
                )
            except EsdsurgeError as exc:
                notes.append(f"{path.name}:{case.name}: skipped ({str(exc).splitlines()[0]})")
                continue
            times[f"{path.name}:{case.name}"] = time.perf_counter() - t0
    return times, notes


def _terminals_folder() -> Path:
    here = Path.cwd() / "terminals"
    if here.is_dir():
        return here
    return Path(__file__).resolve().parents[2] / "terminals"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(
        prog="python -m esdsurge.bench", description="Speed of the esdsurge engine."
    )
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    args = parser.parse_args(argv)

    compile_s = compile_seconds()
    loop, whole = node_rates()
    cases, notes = case_times(_terminals_folder())
    windows = _stroke_windows(_terminals_folder())
    if args.json:
        sys.stdout.write(
            json.dumps(
                {
                    "node_updates_per_s": loop,
                    "node_updates_per_s_simulate": whole,
                    "compile_s": compile_s,
                    "cases": cases,
                    "stroke_windows_jetty": windows,
                },
                indent=2,
            )
            + "\n"
        )
        return 0
    print(f"compile, first call (fresh cache): {compile_s:.1f} s")
    print(f"node-updates per second, route of about {NODES} nodes (processors: {os.cpu_count()}):")
    for nb in loop:
        print(
            f"  batch {nb:>3}: {loop[nb]:.3g} in the time loop, {whole[nb]:.3g} for the whole call"
        )
    print("demo cases (wall time of one simulate call):")
    for name, seconds in cases.items():
        print(f"  {seconds:7.2f} s  {name}")
    for note in notes:
        print(f"  {note}")
    _print_stroke_windows(windows)
    return 0


# --- stroke windows of the jetty demo (esdsurge.studies.stroke; the stroke/rate searches) ------


def _stroke_windows(folder: Path) -> dict:
    """Wall time of the full stroke window of every case of the jetty demo (kernel loaded)."""
    from esdsurge.studies.stroke import bench_jetty_windows

    path = folder / "jetty.yaml"
    if not path.exists():
        return {"note": f"skipped: {path} not found"}
    try:
        return bench_jetty_windows(str(path))
    except EsdsurgeError as exc:
        return {"note": f"skipped ({str(exc).splitlines()[0]})"}


def _print_stroke_windows(w: dict) -> None:
    print("stroke windows of terminals/jetty.yaml (esdsurge stroke, every case, kernel loaded):")
    if "note" in w:
        print(f"  {w['note']}")
        return
    for name, seconds in w["cases"].items():
        print(f"  {seconds:7.2f} s  {name}")
    print(
        f"  {w['total_s']:7.2f} s  in all ({w['runs']} runs, {w['node_updates']:.3g} "
        f"node-updates, {w['node_updates_per_s']:.3g} per second)"
    )
    every = ", ".join(f"{t:.2f}" for t in w.get("totals_s", []))
    print(f"           the fastest of {len(w.get('totals_s', []))} searches ({every} s)")
    if "cpu_s" in w:
        print(
            f"           {w['cpu_s']:.2f} s of processor time on {w['processors']} "
            "processors (the wall time cannot be less than that shared out)"
        )


if __name__ == "__main__":
    raise SystemExit(main())

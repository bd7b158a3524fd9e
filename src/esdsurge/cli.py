"""The ``esdsurge`` command: argument parsing, then file -> study -> presentation.

No logic lives here that a notebook user could not reach through the Python API. Errors raised
by the library (``EsdsurgeError``) are caught here, and only here, and turned into a message on
standard error and an exit status: 0 all within limits, 1 a limit exceeded, 2 bad input or usage.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Sequence
from typing import Any

from rich.console import Console

from esdsurge import __version__
from esdsurge.errors import EsdsurgeError, InputError, UsageError
from esdsurge.present.fmt import Fmt

EXIT_OK, EXIT_LIMIT, EXIT_INPUT = 0, 1, 2


def _out() -> Console:
    tty = sys.stdout.isatty()
    return Console(highlight=False, soft_wrap=False, width=None if tty else 120)


def _err() -> Console:
    return Console(stderr=True, highlight=False, width=None if sys.stderr.isatty() else 120)


def _emit_json(obj: Any) -> None:
    sys.stdout.write(json.dumps(obj, indent=2, ensure_ascii=False) + "\n")


def _load(path: str):  # -> Terminal
    from esdsurge.terminal import load

    return load(path)


def _check_case_names(terminal, names: list[str] | None) -> list[str] | None:
    if not names:
        return None
    import difflib

    known = [c.name for c in terminal.cases]
    for n in names:
        if n not in known:
            near = difflib.get_close_matches(n, known, n=3, cutoff=0.4)
            hint = f"; did you mean {' or '.join(repr(x) for x in near)}?" if near else ""
            raise UsageError(
                f"--case {n!r}: no such case in {terminal.path}{hint} "
                f"(cases: {', '.join(repr(k) for k in known)})"
            )
    return names


def cmd_lint(args: argparse.Namespace) -> int:
    from esdsurge.present.lint import lint_json, lint_view
    from esdsurge.studies.derive import derive

    exit_code = EXIT_OK
    results = []
    for path in args.files:
        terminal = _load(path)
        names = _check_case_names(terminal, args.case)
        derived = derive(terminal, names)
        if any(cd.steady is None or cd.breaches for cd in derived.cases):
            exit_code = max(exit_code, EXIT_LIMIT)
        if args.json:
            results.append(lint_json(derived))
        else:
            fmt = Fmt(args.units, terminal.atmosphere_abs)
            _out().print(lint_view(derived, fmt))
    if args.json:
        _emit_json(results[0] if len(results) == 1 else {"files": results})
    return exit_code


def _quantity(text: str, unit: str, option: str) -> float:
    """A command-line quantity (``"1500 m^3/h"``, ``"30 s"``) in SI.

    A bare number is taken in ``unit``.
    """
    from esdsurge.terminal.quantities import QuantityError, quantity

    kind = {"s": "time", "m^3/h": "flow"}[unit]
    written = text.strip()
    try:
        float(written)
        written = f"{written} {unit}"
    except ValueError:
        pass
    try:
        value = quantity(written, kind)
    except QuantityError as exc:
        raise UsageError(f"{option} {text!r}: {exc}") from None
    if not value > 0.0:
        raise UsageError(f"{option} {text!r}: must be greater than zero")
    return value


def _progress(args: argparse.Namespace):
    """A progress display on a terminal (not with --json), else nothing."""
    import contextlib

    if args.json or not sys.stderr.isatty():
        return contextlib.nullcontext(None)
    from rich.progress import Progress, SpinnerColumn, TextColumn, TimeElapsedColumn

    return Progress(
        SpinnerColumn(),
        TextColumn("{task.description}"),
        TimeElapsedColumn(),
        console=_err(),
        transient=True,
    )


def _study(args: argparse.Namespace, run, view, to_json, after=None, verb="searching") -> int:
    """Run a study over each file with a progress display; print its view or JSON.

    ``after(terminal, result)`` runs once per file after the study (e.g. to write figures).
    """
    results = []
    for path in args.files:
        terminal = _load(path)
        names = _check_case_names(terminal, args.case)
        with _progress(args) as prog:
            task = prog.add_task(verb, total=None) if prog else None

            def tell(name: str, prog=prog, task=task) -> None:
                if prog is not None:
                    prog.update(task, description=f"{verb} case: {name}")

            res = run(terminal, names, tell)
        results.append(res)
        if after is not None:
            after(terminal, res)
        if not args.json:
            _out().print(view(res, Fmt(args.units, terminal.atmosphere_abs)))
    if args.json:
        objs = [to_json(r) for r in results]
        _emit_json(objs[0] if len(objs) == 1 else {"files": objs})
    return EXIT_OK if all(r.ok for r in results) else EXIT_LIMIT


def cmd_check(args: argparse.Namespace) -> int:
    from pathlib import Path

    from esdsurge.present.check import check_json, check_view
    from esdsurge.studies.check import check

    stroke = _quantity(args.stroke, "s", "--stroke") if args.stroke else None
    rate = _quantity(args.rate, "m^3/h", "--rate") if args.rate else None

    def run(terminal, names, tell):
        return check(
            terminal,
            names,
            stroke=stroke,
            rate=rate,
            product=args.product,
            without=tuple(args.without or ()),
            progress=tell,
        )

    def plots(terminal, res) -> None:
        if args.plot:
            from esdsurge.present.plots import write_case_plots

            for cc in res.cases:
                write_case_plots(
                    cc, Path(args.plot), terminal.atmosphere_abs, args.units, branches=True
                )

    return _study(args, run, check_view, check_json, after=plots, verb="running")


def cmd_stroke(args: argparse.Namespace) -> int:
    from esdsurge.present.stroke import stroke_json, stroke_view
    from esdsurge.studies.stroke import stroke_windows

    def run(terminal, names, tell):
        return stroke_windows(
            terminal,
            names,
            valve=args.valve,
            spread=args.spread,
            stage=args.stage,
            progress=tell,
        )

    return _study(args, run, stroke_view, stroke_json)


def cmd_rate(args: argparse.Namespace) -> int:
    from esdsurge.present.rate import rate_json, rate_view
    from esdsurge.studies.rate import rate_checks

    def run(terminal, names, tell):
        return rate_checks(terminal, names, spread=args.spread, progress=tell)

    return _study(args, run, rate_view, rate_json)


def cmd_report(args: argparse.Namespace) -> int:
    from pathlib import Path

    from esdsurge.present.report import refuse_target, write_report
    from esdsurge.studies.report import report

    target = Path(args.output)
    refuse_target(target, args.force)  # before any engine time is spent
    terminal = _load(args.file)
    names = _check_case_names(terminal, args.case)
    with _progress(args) as prog:
        task = prog.add_task("running", total=None) if prog else None

        def tell(what: str, prog=prog, task=task) -> None:
            if prog is not None:
                prog.update(task, description=what)

        res = report(terminal, names, progress=tell)
    write_report(res, target, units=args.units, force=args.force)
    counts = (
        f"{res.count('needs action')} need action, {res.count('not assessed')} not assessed, "
        f"{res.count('holds')} hold"
    )
    _out().print(
        f"review pack written to {target}/ (report.html, report.md, results.json, "
        f"figures/); checklist: {counts}",
        markup=False,
    )
    return EXIT_OK if res.ok else EXIT_LIMIT


def cmd_products(args: argparse.Namespace) -> int:
    from esdsurge.physics.products import describe_builtins
    from esdsurge.present.products import products_view

    t = args.temperature + 273.15
    items = describe_builtins(t)
    if args.json:
        _emit_json({"esdsurge": __version__, "temperature_K": t, "products": items})
    else:
        _out().print(products_view(items, Fmt(args.units), t))
    return EXIT_OK


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="esdsurge",
        description="Surge checks of emergency shutdowns on fuel and chemical transfer lines.",
        epilog="Exit status: 0 all within limits, 1 a limit exceeded, 2 bad input or usage.",
    )
    p.add_argument("--version", action="version", version=f"esdsurge {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")

    def common(sp: argparse.ArgumentParser, cases: bool = True) -> None:
        sp.add_argument("--json", action="store_true", help="machine output on stdout only")
        sp.add_argument(
            "--units", choices=("si", "us"), default="si", help="units of the human output"
        )
        if cases:
            sp.add_argument(
                "--case", action="append", metavar="NAME", help="only this case (repeatable)"
            )

    lint = sub.add_parser(
        "lint",
        help="validate a terminal file and show what it implies",
        description="Validate terminal files and print what they imply: wave speeds, pipeline "
        "periods, steady states and hand checks.",
    )
    lint.add_argument("files", nargs="+", metavar="FILE")
    common(lint)
    lint.set_defaults(func=cmd_lint)

    chk = sub.add_parser(
        "check",
        help="run the ESD cases and judge every element against its limits",
        description="Run the ESD cases of terminal files with the method of characteristics and "
        "say, element by element, whether the limits hold.",
    )
    chk.add_argument("files", nargs="+", metavar="FILE")
    common(chk)
    chk.add_argument(
        "--stroke",
        metavar="TIME",
        help="stroke of each case's first closing valve, e.g. '30 s' (what-if)",
    )
    chk.add_argument("--rate", metavar="RATE", help="transfer rate, e.g. '1500 m^3/h' (what-if)")
    chk.add_argument("--product", metavar="NAME", help="run every case with this product")
    chk.add_argument(
        "--without",
        action="append",
        metavar="NAME",
        help="also run each case with this mitigation taken out (a relief valve, an accumulator, "
        "a pump's ramp-down, a valve's staged closure) and show both (repeatable)",
    )
    chk.add_argument("--plot", metavar="DIR", help="write PNG figures of each case into DIR")
    chk.set_defaults(func=cmd_check)

    spread_help = (
        "also search across an uncertainty band (hose and pipe wave speed, friction, valve "
        "characteristic) and give the worst case beside the nominal"
    )
    stk = sub.add_parser(
        "stroke",
        help="the safe stroke window of each case's closing valve",
        description="For each case, the fastest stroke of its first closing valve (or --valve) "
        "that keeps every limit, the slowest that keeps the spill limit and max_closure_time, "
        "what governs each end, and a recommended setting.",
        epilog="Exit status: 0 every case has a safe window, 1 a window is empty, 2 bad input.",
    )
    stk.add_argument("files", nargs="+", metavar="FILE")
    common(stk)
    stk.add_argument("--valve", metavar="NAME", help="vary this valve's stroke instead")
    stk.add_argument("--spread", action="store_true", help=spread_help)
    stk.add_argument(
        "--stage",
        choices=("whole", "slow"),
        default="whole",
        help="what to vary: the whole stroke, a staged travel scaled with it (default); or "
        "'slow': the last stage of the valve's staged travel, its fast stage kept as in the file",
    )
    stk.set_defaults(func=cmd_stroke)

    rte = sub.add_parser(
        "rate",
        help="the highest transfer rate at which the ESD keeps every limit, and the other limits",
        description="For each case, the highest transfer rate at which its ESD as set keeps "
        "every limit, beside the other rate limits (running pumps, static electricity, carrier "
        "venting); the lowest governs.",
        epilog="Exit status: 0 a safe rate was found for every case, 1 not, 2 bad input.",
    )
    rte.add_argument("files", nargs="+", metavar="FILE")
    common(rte)
    rte.add_argument("--spread", action="store_true", help=spread_help)
    rte.set_defaults(func=cmd_rate)

    rep = sub.add_parser(
        "report",
        help="write the review pack: HTML, Markdown, JSON, figures and a checklist",
        description="Run every study (check, stroke window, rate limits, each with its "
        "uncertainty band) and write a review pack into DIR: report.html (self-contained), "
        "report.md, results.json and the figures. The pack is written to a temporary folder "
        "and moved into place at the end; an existing DIR is refused unless --force.",
        epilog="Exit status: 0 no checklist item needs action, 1 an item needs action, "
        "2 bad input, usage, or DIR exists.",
    )
    rep.add_argument("file", metavar="FILE")
    rep.add_argument("-o", "--output", metavar="DIR", required=True, help="folder of the pack")
    rep.add_argument(
        "--force", action="store_true", help="replace an earlier pack in DIR (atomically)"
    )
    rep.add_argument(
        "--units", choices=("si", "us"), default="si", help="units of the report's numbers"
    )
    rep.add_argument("--case", action="append", metavar="NAME", help="only this case (repeatable)")
    rep.set_defaults(func=cmd_report, json=False)

    prods = sub.add_parser("products", help="list the built-in products with values and sources")
    prods.add_argument(
        "--temperature", type=float, default=20.0, metavar="DEGC", help="in °C (default 20)"
    )
    common(prods, cases=False)
    prods.set_defaults(func=cmd_products)
    return p


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help(sys.stderr)
        return EXIT_INPUT
    try:
        return int(args.func(args))
    except InputError as exc:
        err = _err()
        n = len(exc.problems)
        err.print(f"[bold red]esdsurge:[/] {n} problem{'s' if n != 1 else ''} in the input:")
        for prob in exc.problems:
            err.print(f"  {prob}", markup=False)
        return EXIT_INPUT
    except EsdsurgeError as exc:
        err = _err()
        err.print("[bold red]esdsurge:[/] ", end="")
        err.print(str(exc), markup=False)
        return EXIT_INPUT


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

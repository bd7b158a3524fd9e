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

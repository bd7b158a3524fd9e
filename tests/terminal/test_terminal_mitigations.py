"""Surge relief valves, accumulators and pump ramps: what the reader makes of them, and what it
refuses (file, line, key path, what is valid; exit status 2 through ``esdsurge lint``).

The engine does not simulate these kinds here: the tests read files (``esdsurge.terminal``) and
check refusals, which ``lint`` reports before it derives anything.
"""

from __future__ import annotations

import dataclasses
import math
import re
from collections.abc import Callable
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from esdsurge.cli import main
from esdsurge.errors import InputError, Problem
from esdsurge.model import Accumulator, Close, Ramp, Relief, Terminal
from esdsurge.physics import valves
from esdsurge.present.fmt import Fmt
from esdsurge.present.lint import KIND_MARK
from esdsurge.present.report.diagram import lineup_svg
from esdsurge.terminal import loads
from esdsurge.terminal.elements import (
    ACCUMULATOR_CONNECTION_LOSS,
    ACCUMULATOR_EXPONENT,
    RELIEF_OVERPRESSURE,
)

# Exact unit definitions (NIST SP 811 (2008), Appendix B.8 and B.9): 1 in = 0.0254 m,
# 1 psi = 0.45359237 kg * 9.80665 m/s^2 / (0.0254 m)^2, t/degF = 1.8 t/degC + 32.
INCH = 0.0254
PSI = 0.45359237 * 9.80665 / INCH**2

#: An invented rack with a relief, an accumulator and a variable-speed pump that ramps down.
#: The site atmosphere is not the standard one, so that gauge/absolute conversions show.
MITIGATIONS = """\
format: 1
terminal: test rack with surge protection (invented)
site: {atmosphere: 0.98 bara, temperature: 15 degC}
products:
  gasoline: {builtin: gasoline}
routes:
  r:
    - tank: rack tank
      surface: 12 m
    - pump: rack pump
      curve: [[0 m^3/h, 60 m], [400 m^3/h, 55 m], [800 m^3/h, 40 m]]
      pushes: to-carrier
    - pipe: rack line
      length: 1200 m
      size: {nps: 12, schedule: STD}
    - relief: surge relief
      set_pressure: 12 barg
      kv: 300
      opening_time: 0.5 s
      closing_time: 5 s
      receiver_volume: 40 m^3
      design_pressure: 19 barg
    - accumulator: surge vessel
      volume: 2 m^3
      precharge: 4 barg
      connection: 150 mm
    - valve: rack valve
      type: ball
      kv: 7800
    - hose: rack hose
      length: 6 m
      inside_diameter: 254 mm
      expansion: 0.4 %/bar
    - tank: rail car
      surface: 8 m
cases:
  - name: pump ramps down, then the valve closes
    route: r
    product: gasoline
    events:
      - {at: 0.5 s, ramp: rack pump, ramp_time: 15 s}
      - {at: 1 s, close: rack valve, stroke: 25 s}
"""

ATM = 0.98e5  # the file's site atmosphere [Pa]

#: Every optional key given, in other units than above.
OPTIONS = (
    (r"      set_pressure: 12 barg\n", "      set_pressure: 174 psig\n      overpressure: 0.25\n"),
    (r"      kv: 300\n", "      cv: 350\n      reseats: false\n      back_pressure: 1.5 barg\n"),
    (
        r"      precharge: 4 barg\n",
        "      precharge: 60 psia\n      precharge_temperature: 68 degF\n      exponent: 1.4\n",
    ),
    (r"      connection: 150 mm\n", "      connection: 6 in\n      connection_loss: 0.5\n"),
    (r"ramp_time: 15 s", "ramp_time: 0.25 min"),
)


def edit(*edits: tuple[str, str], text: str = MITIGATIONS) -> str:
    """``text`` with ``(pattern, replacement)`` edits (``re.sub``), each matching once."""
    for pattern, replacement in edits:
        text, count = re.subn(pattern, replacement, text)
        assert count == 1, f"{pattern!r} matches {count} times"
    return text


def line_of(text: str, snippet: str) -> int:
    assert text.count(snippet) == 1, f"{snippet!r} occurs {text.count(snippet)} times"
    return text[: text.index(snippet)].count("\n") + 1


@pytest.fixture(scope="module")
def terminal() -> Terminal:
    return loads(MITIGATIONS, "rack.yaml")


# --- what the reader makes of them ---------------------------------------------------------


def test_relief_reads_to_si(terminal: Terminal) -> None:
    relief = terminal.routes["r"].element("surge relief")
    assert isinstance(relief, Relief)
    # 12 barg = 12e5 Pa gauge, whatever the site atmosphere (1 bar = 1e5 Pa, exact)
    assert relief.set_pressure_gauge == pytest.approx(12e5, rel=1e-12)
    # fully open at the set pressure plus the default overpressure (a ratio of the set, gauge)
    assert RELIEF_OVERPRESSURE == 0.10
    assert relief.full_open_pressure_gauge == pytest.approx(12e5 * 1.10, rel=1e-12)
    # Kv is the flow of water in m^3/h at 1 bar loss (IEC 60534-1): A_eff = Q / sqrt(2 dp / rho)
    # with Q = 300/3600 m^3/s, dp = 1e5 Pa, rho = 1000 kg/m^3
    assert relief.flow_area == pytest.approx((300 / 3600) / math.sqrt(2e5 / 1000), rel=1e-9)
    assert relief.flow_area == valves.kv_to_flow_area(300)
    assert (relief.opening_time, relief.closing_time) == (0.5, 5.0)
    assert relief.reseats is True and relief.back_pressure_gauge == 0.0
    assert relief.receiver_volume == pytest.approx(40.0)
    assert relief.limits.design_pressure_gauge == pytest.approx(19e5)
    assert relief.where.path == "routes.r[3]"
    assert relief.where.line == line_of(MITIGATIONS, "relief: surge relief")


def test_accumulator_reads_to_si(terminal: Terminal) -> None:
    vessel = terminal.routes["r"].element("surge vessel")
    assert isinstance(vessel, Accumulator)
    assert vessel.volume == pytest.approx(2.0)
    # 4 barg is 4e5 Pa above the site atmosphere of the file (0.98 bara), stored absolute
    assert vessel.precharge_abs == pytest.approx(4e5 + ATM, rel=1e-12)
    # default: the site temperature, 15 degC = 288.15 K
    assert vessel.precharge_temperature == pytest.approx(288.15)
    assert vessel.exponent == ACCUMULATOR_EXPONENT == 1.2
    assert vessel.connection_diameter == pytest.approx(0.15)
    assert vessel.connection_loss == ACCUMULATOR_CONNECTION_LOSS == 1.0
    assert vessel.connection_area == pytest.approx(math.pi * 0.15**2 / 4)


def test_ramp_event_reads_to_si(terminal: Terminal) -> None:
    ramp, close = terminal.cases[0].events
    assert isinstance(ramp, Ramp) and isinstance(close, Close)
    assert (ramp.element, ramp.at, ramp.ramp_time) == ("rack pump", 0.5, 15.0)
    assert ramp.where.path == "cases[0].events[0]"


def test_branch_kinds_state_no_bore_so_the_valve_takes_the_hose_bore(terminal: Terminal) -> None:
    # the valve without size looks one place upstream (the accumulator: no bore of the route's
    # own) and one place downstream (the hose, 254 mm) before looking further upstream
    assert terminal.routes["r"].element("rack valve").diameter == pytest.approx(0.254)


def test_every_option_in_other_units() -> None:
    t = loads(edit(*OPTIONS), "rack.yaml")
    relief = t.routes["r"].element("surge relief")
    assert isinstance(relief, Relief)
    assert relief.set_pressure_gauge == pytest.approx(174 * PSI, rel=1e-9)
    assert relief.full_open_pressure_gauge == pytest.approx(174 * PSI * 1.25, rel=1e-9)
    # Kv = 0.865 Cv, the usual conversion printed to 3 digits (from memory)
    assert relief.flow_area == pytest.approx(valves.kv_to_flow_area(0.865 * 350), rel=1e-3)
    assert relief.flow_area == valves.cv_to_flow_area(350)
    assert relief.reseats is False
    assert relief.back_pressure_gauge == pytest.approx(1.5e5)
    vessel = t.routes["r"].element("surge vessel")
    assert isinstance(vessel, Accumulator)
    assert vessel.precharge_abs == pytest.approx(60 * PSI, rel=1e-9)  # psia: absolute already
    assert vessel.precharge_temperature == pytest.approx(293.15)  # 68 degF = 20 degC
    assert vessel.exponent == 1.4
    assert vessel.connection_diameter == pytest.approx(6 * INCH, rel=1e-12)
    assert vessel.connection_loss == 0.5
    ramp = t.cases[0].events[0]
    assert isinstance(ramp, Ramp) and ramp.ramp_time == pytest.approx(15.0)


def test_precharge_temperature_defaults_to_the_site_not_the_product() -> None:
    text = edit(
        (r"gasoline: \{builtin: gasoline\}", "gasoline: {builtin: gasoline, temperature: 35 degC}")
    )
    vessel = loads(text).routes["r"].element("surge vessel")
    assert isinstance(vessel, Accumulator)
    assert vessel.precharge_temperature == pytest.approx(288.15)  # the site's 15 degC


def test_exponent_range_ends_are_accepted() -> None:
    for n in ("1.0", "1.67"):
        text = edit(
            (r"      connection: 150 mm\n", f"      connection: 150 mm\n      exponent: {n}\n")
        )
        vessel = loads(text).routes["r"].element("surge vessel")
        assert isinstance(vessel, Accumulator) and vessel.exponent == float(n)


# --- refusals --------------------------------------------------------------------------------

#: (name, edits, key path, snippet on the expected line, fragments of the message)
REFUSALS = [
    (
        "missing set_pressure",
        [(r"      set_pressure: 12 barg\n", "")],
        "routes.r[3].set_pressure",
        "relief: surge relief",
        ["missing required key 'set_pressure'", "set_pressure: 12 barg"],
    ),
    (
        "both cv and kv",
        [(r"      kv: 300\n", "      kv: 300\n      cv: 350\n")],
        "routes.r[3].kv",
        "kv: 300",
        ["exactly one of cv", "kv", "not cv and kv"],
    ),
    (
        "neither cv nor kv",
        [(r"      kv: 300\n", "")],
        "routes.r[3].cv",
        "relief: surge relief",
        ["missing required key 'cv'", "kv: 300"],
    ),
    (
        "exponent out of range",
        [(r"      connection: 150 mm\n", "      connection: 150 mm\n      exponent: 2.0\n")],
        "routes.r[4].exponent",
        "exponent: 2.0",
        ["2.0 must be between 1.0 (isothermal) and 1.67"],
    ),
    (
        "ramp on a valve",
        [(r"close: rack valve", "ramp: rack valve, ramp_time: 2 s")],
        "cases[0].events[1].ramp",
        "ramp: rack valve",
        ["'ramp' applies to a pump, but 'rack valve' is a valve", "use 'close: rack valve'"],
    ),
    (
        "ramp without ramp_time",
        [(r", ramp_time: 15 s", "")],
        "cases[0].events[0].ramp_time",
        "ramp: rack pump",
        ["missing required key 'ramp_time'", "ramp_time: 15 s"],
    ),
    (
        "close on a pump names trip and ramp",
        [(r"ramp: rack pump, ramp_time: 15 s", "close: rack pump, stroke: 2 s")],
        "cases[0].events[0].close",
        "close: rack pump",
        ["use 'trip: rack pump'", "(or 'ramp: rack pump' with ramp_time)"],
    ),
    (
        "an event on a relief",
        [(r"close: rack valve", "close: surge relief")],
        "cases[0].events[1].close",
        "close: surge relief",
        ["'surge relief' is a relief", "takes no event"],
    ),
    (
        "two actions in one event",
        [(r"ramp: rack pump,", "ramp: rack pump, trip: rack pump,")],
        "cases[0].events[0]",
        "ramp: rack pump",
        ["exactly one of close, trip, release or ramp", "got trip and ramp"],
    ),
    (
        "set pressure not above 0 barg",
        [(r"set_pressure: 12 barg", "set_pressure: 0.5 bara")],
        "routes.r[3].set_pressure",
        "set_pressure: 0.5 bara",
        ["'0.5 bara' must be above 0 barg"],
    ),
    (
        "overpressure zero",
        [(r"      kv: 300\n", "      kv: 300\n      overpressure: 0 %\n")],
        "routes.r[3].overpressure",
        "overpressure: 0 %",
        ["must be above 0 % and at most 100 %"],
    ),
    (
        "back pressure at the set pressure",
        [(r"      kv: 300\n", "      kv: 300\n      back_pressure: 13 bara\n")],
        "routes.r[3].back_pressure",
        "back_pressure: 13 bara",
        ["'13 bara' must be below the set pressure '12 barg'"],
    ),
    (
        "opening time zero",
        [(r"opening_time: 0.5 s", "opening_time: 0 s")],
        "routes.r[3].opening_time",
        "opening_time: 0 s",
        ["must be greater than zero"],
    ),
    (
        "precharge at absolute zero",
        [(r"precharge: 4 barg", "precharge: 0 bara")],
        "routes.r[4].precharge",
        "precharge: 0 bara",
        ["'0 bara' must be above 0 bara"],
    ),
    (
        "precharge without gauge or absolute",
        [(r"precharge: 4 barg", "precharge: 4 bar")],
        "routes.r[4].precharge",
        "precharge: 4 bar",
        ["gauge or absolute"],
    ),
    (
        "negative connection loss",
        [(r"      connection: 150 mm\n", "      connection: 150 mm\n      connection_loss: -1\n")],
        "routes.r[4].connection_loss",
        "connection_loss: -1",
        ["must not be negative"],
    ),
    (
        "unknown key on an accumulator",
        [(r"      volume: 2 m\^3\n", "      volume: 2 m^3\n      exponant: 1.2\n")],
        "routes.r[4].exponant",
        "exponant: 1.2",
        ["unknown key 'exponant'", "did you mean 'exponent'?"],
    ),
]


@pytest.mark.parametrize(
    ("name", "edits", "path", "at", "fragments"), REFUSALS, ids=[r[0] for r in REFUSALS]
)
def test_refusal_names_file_line_and_key(
    problems_of: Callable[..., list[Problem]],
    name: str,
    edits: list[tuple[str, str]],
    path: str,
    at: str,
    fragments: list[str],
) -> None:
    text = edit(*edits)
    found = [p for p in problems_of(text, "rack.yaml") if p.path == path]
    assert len(found) == 1, [str(p) for p in problems_of(text, "rack.yaml")]
    problem = found[0]
    assert problem.file == "rack.yaml"
    assert problem.line == line_of(text, at), str(problem)
    for fragment in fragments:
        assert fragment in problem.message, str(problem)


#: The refusals also checked end to end, through ``esdsurge lint``.
LINT_REFUSALS = [
    r
    for r in REFUSALS
    if r[0]
    in {
        "missing set_pressure",
        "both cv and kv",
        "exponent out of range",
        "ramp on a valve",
        "ramp without ramp_time",
    }
]


@pytest.mark.parametrize(
    ("name", "edits", "path", "at", "fragments"), LINT_REFUSALS, ids=[r[0] for r in LINT_REFUSALS]
)
def test_lint_refuses_with_exit_2(
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
    name: str,
    edits: list[tuple[str, str]],
    path: str,
    at: str,
    fragments: list[str],
) -> None:
    text = edit(*edits)
    file = tmp_path / "rack.yaml"
    file.write_text(text, encoding="utf-8")
    code = main(["lint", str(file)])
    out, err = capsys.readouterr()
    assert code == 2
    assert out == ""
    assert "Traceback" not in err
    assert f"rack.yaml:{line_of(text, at)}: {path}:" in err
    flat = " ".join(err.split())  # the console wraps long messages
    for fragment in fragments:
        assert fragment in flat, err


# --- never a traceback -------------------------------------------------------------------------

#: Values to put in place of the new keys' values.
JUNK = [
    "",
    "~",
    "0",
    "-1",
    "2.0",
    "1e999",
    ".nan",
    "true",
    "0 m",
    "4 bar",
    "4 barg",
    "0 bara",
    "-2 barg",
    "10 %",
    "0 %",
    "150 %",
    "[]",
    "{}",
    "2 m^3",
    "1 s",
    "-1 s",
    "20 degC",
    "-300 degC",
    "'",
    "{a: 1}",
]
_KEYED = [
    i
    for i, line in enumerate(MITIGATIONS.splitlines(keepends=True))
    if re.match(
        r"\s+(set_pressure|kv|opening_time|closing_time|receiver_volume|volume|precharge|"
        r"connection): ",
        line,
    )
]


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    st.lists(st.tuples(st.sampled_from(_KEYED), st.sampled_from(JUNK)), min_size=1, max_size=3),
    st.sampled_from(
        [
            "ramp_time: 15 s",
            "ramp_time: -1 s",
            "ramp_time: 0 s",
            "ramp_time: x",
            "ramp_time: 15",
            "ramp_time: ~",
        ]
    ),
)
def test_bad_values_give_problems_never_a_traceback(
    edits: list[tuple[int, str]], ramp: str
) -> None:
    lines = MITIGATIONS.splitlines(keepends=True)
    for i, junk in edits:
        key = lines[i].split(":")[0]
        lines[i] = f"{key}: {junk}\n"
    text = "".join(lines).replace("ramp_time: 15 s", ramp)
    try:
        result = loads(text, "rack.yaml")
    except InputError as exc:
        assert exc.problems
        for problem in exc.problems:
            assert problem.file == "rack.yaml" and problem.message
    else:
        assert isinstance(result, Terminal)


# --- presentation: a mark and a drawing for each kind ------------------------------------------


def test_lint_has_a_mark_for_every_kind_of_the_file(terminal: Terminal) -> None:
    assert {e.kind for e in terminal.routes["r"].elements} <= set(KIND_MARK)


def test_lineup_drawing_has_both_and_survives_an_unknown_kind(terminal: Terminal) -> None:
    route = terminal.routes["r"]

    def group(svg: str, title: str) -> str:
        """The SVG group of the element whose tooltip is ``title``."""
        return svg.split(f"<title>{title}</title>")[1].split("</g>")[0]

    svg = lineup_svg(route, Fmt(), {"rack valve"}, standalone=True)
    # a relief: an upright bow-tie (path) and its relief tank (rects); an accumulator: a
    # round-ended vessel (rect) with its liquid (path)
    for title in ("surge relief (relief)", "surge vessel (accumulator)"):
        shapes = group(svg, title)
        assert "<path" in shapes and "<rect" in shapes, title

    class Odd(Relief):
        kind = "odd"  # a kind the drawing does not know

    first = route.elements[3]
    odd = Odd(**{f.name: getattr(first, f.name) for f in dataclasses.fields(first)})
    other = type(route)(name="r2", elements=(*route.elements[:3], odd, *route.elements[4:]))
    plain = group(lineup_svg(other, Fmt()), "surge relief (odd)")
    assert "<line" in plain and "<path" not in plain and "<rect" not in plain  # a plain line

"""Every refusal of the format page, each naming the file, the line, the key path and what is valid.

Each test edits the demo file (terminals/jetty.yaml) in one place, or writes a small file, and
checks the problem that comes back.
"""

from __future__ import annotations

import re
from collections.abc import Callable

import pytest

from esdsurge.errors import InputError, Problem
from esdsurge.terminal import load, loads

Edit = tuple[str, str]


def the(problems: list[Problem], path: str) -> Problem:
    """The one problem at ``path``."""
    found = [p for p in problems if p.path == path]
    assert len(found) == 1, f"{path}: {[str(p) for p in problems]}"
    return found[0]


@pytest.fixture
def refuse(
    edited: Callable[..., str],
    problems_of: Callable[[str], list[Problem]],
) -> Callable[..., Problem]:
    """Edit the demo, load it, and return the problem at ``path``, checking its line.

    ``at`` locates the expected line in the edited text: a snippet that occurs once, or
    ``(anchor, snippet)`` for the first ``snippet`` after the ``anchor`` that occurs once.
    """

    def run(edits: list[Edit], path: str, at: str | tuple[str, str], *fragments: str) -> Problem:
        text = edited(*edits)
        problem = the(problems_of(text), path)
        assert problem.file == "jetty.yaml"
        assert problem.line == line_at(text, at), str(problem)
        for fragment in fragments:
            assert fragment in problem.message, str(problem)
        assert f"jetty.yaml:{problem.line}: {path}:" in str(problem)
        return problem

    return run


def line_at(text: str, at: str | tuple[str, str]) -> int:
    anchor, snippet = at if isinstance(at, tuple) else ("", at)
    if anchor:
        assert text.count(anchor) == 1, anchor
        start = text.index(snippet, text.index(anchor))
    else:
        assert text.count(snippet) == 1, f"{snippet!r} occurs {text.count(snippet)} times"
        start = text.index(snippet)
    return text[:start].count("\n") + 1


def value_of(element: str, key: str) -> str:
    """A pattern for ``key``'s line of ``element`` (group 1: all before the key)."""
    return rf"({re.escape(element)}\n(?:      .*\n)*?)      {key}: .*\n"


# --- unknown keys, missing keys ------------------------------------------------------------


def test_unknown_key_with_did_you_mean(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"(pipe: jetty header\n      )length:", r"\1lenght:")],
        "routes.loading[4].lenght",
        "lenght:",
        "unknown key 'lenght'",
        "did you mean 'length'?",
        "valid keys here: pipe, length, size",
    )


def test_unknown_top_level_key(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"\nroutes:\n", "\nroute:\n  x: 1\nroutes:\n")],
        "route",
        "route:\n",
        "did you mean 'routes'",
    )


def test_unknown_key_in_a_case(refuse: Callable[..., Problem]) -> None:
    p = refuse(
        [(r"    route: discharge\n", "    route: discharge\n    spil_limit: 1 m^3\n")],
        "cases[2].spil_limit",
        "spil_limit",
        "did you mean 'spill_limit'?",
    )
    assert "max_closure_time" in p.message  # the valid keys are listed


def test_missing_required_field(refuse: Callable[..., Problem]) -> None:
    # the pipe loses its length: the problem is on the element's first line
    refuse(
        [(value_of("pipe: jetty header", "length"), r"\1")],
        "routes.loading[4].length",
        "pipe: jetty header",
        "missing required key 'length'",
        "length: 1350 m",
    )


def test_missing_case_field(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"    route: discharge\n", "")],
        "cases[2].route",
        "- name: discharge",
        "missing required key 'route'",
    )


def test_missing_format(refuse: Callable[..., Problem]) -> None:
    refuse([(r"format: 1\n", "")], "format", "terminal:", "missing required key 'format'")


def test_other_format_refused(refuse: Callable[..., Problem]) -> None:
    refuse([(r"format: 1\n", "format: 2\n")], "format", "format: 2", "only format 1")


# --- quantities ----------------------------------------------------------------------------


def test_bare_number_for_a_quantity(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"closing_time: .*", "closing_time: 5")],
        "routes.loading[6].closing_time",
        "closing_time: 5\n",
        "bare number",
        "'30 s'",
    )


def test_bare_number_for_a_pressure(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"rated_working_pressure: .*", "rated_working_pressure: 15")],
        "routes.loading[7].rated_working_pressure",
        "rated_working_pressure: 15\n",
        "'15 barg' or '15 bara'",
    )


@pytest.mark.parametrize("unit", ["bar", "psi", "Pa", "kPa", "MPa"])
def test_gauge_or_absolute_not_stated(refuse: Callable[..., Problem], unit: str) -> None:
    refuse(
        [(r"rated_working_pressure: .*", f"rated_working_pressure: 15 {unit}")],
        "routes.loading[7].rated_working_pressure",
        "rated_working_pressure:",
        "gauge or absolute",
        "'15 barg' (gauge) or '15 bara' (absolute)",
    )


def test_wrong_dimension(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"closing_time: .*", "closing_time: 5 m")],
        "routes.loading[6].closing_time",
        "closing_time:",
        "expected a time",
        "'30 s'",
    )


def test_unknown_unit(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"closing_time: .*", "closing_time: 5 sec0nds")],
        "routes.loading[6].closing_time",
        "closing_time:",
        "unknown unit",
    )


def test_site_atmosphere_must_be_absolute(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"atmosphere: .*", "atmosphere: 0 barg")],
        "site.atmosphere",
        "atmosphere:",
        "absolute",
    )


# --- geometry ------------------------------------------------------------------------------


def test_negative_length(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(value_of("arm: loading arm 2A", "length"), r"\1      length: -26 m\n")],
        "routes.loading[5].length",
        "length: -26 m",
        "must be greater than zero",
    )


def test_zero_diameter(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(value_of("hose: manifold hose", "inside_diameter"), r"\1      inside_diameter: 0 mm\n")],
        "routes.loading[7].inside_diameter",
        "inside_diameter: 0 mm",
        "must be greater than zero",
    )


def test_wall_thicker_than_half_the_diameter(refuse: Callable[..., Problem]) -> None:
    refuse(
        [
            (
                value_of("arm: loading arm 2A", "size"),
                r"\1      inside_diameter: 300 mm\n      wall: 160 mm\n",
            )
        ],
        "routes.loading[5].wall",
        "wall: 160 mm",
        "thicker than half the inside diameter",
        "must be less than 0.15 m",
    )


def test_unknown_schedule(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(value_of("arm: loading arm 2A", "size"), r"\1      size: {nps: 12, schedule: 45}\n")],
        "routes.loading[5].size",
        "size: {nps: 12, schedule: 45}",
        "valid:",
    )


def test_elevation_must_end_at_the_length(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(value_of("pipe: jetty header", "length"), r"\1      length: 9999 m\n")],
        "routes.loading[4].elevation",
        ("pipe: jetty header", "elevation:"),
        "must equal the length, 9999 m",
    )


# --- routes --------------------------------------------------------------------------------


def test_route_without_a_tank_at_the_carrier_end(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"    - tank: ship tank 3P\n(      .*\n)*", "")],
        "routes.loading[10]",
        "- pipe: ship loading line",
        "last (carrier end) element of a route must be a tank",
    )


def test_tank_in_the_middle(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"    - \*esd\n", "    - tank: mid tank\n      surface: 1 m\n    - *esd\n")],
        "routes.discharge[2]",
        "- tank: mid tank",
        "only be the first or the last",
    )


def test_two_definitions_with_one_name(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"    - pipe: ship cargo line", "    - pipe: ship loading line")],
        "routes.discharge[9]",
        ("  discharge:\n", "- pipe: ship loading line"),
        "already used by a different element at routes.loading[10]",
        "anchor",
    )


def test_element_without_kind(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"    - tank: shore tank 14\n", "    - tnak: shore tank 14\n")],
        "routes.discharge[0]",
        "- tnak: shore tank 14",
        "did you mean 'tank'?",
    )


def test_valve_needs_one_coefficient(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"(valve: shore ESD valve\n)", r"\1      kv: 7000\n")],
        "routes.loading[3].kv",
        "kv: 7000",
        "exactly one of cv",
    )


def test_custom_valve_needs_a_valid_characteristic(refuse: Callable[..., Problem]) -> None:
    custom = (
        r"\1      type: custom\n"
        r"      characteristic: [[0 %, 0], [50 %, 0.6], [70 %, 0.4], [100 %, 1]]\n"
    )
    refuse(
        [(value_of("valve: ship manifold valve", "type"), custom)],
        "routes.loading[9].characteristic",
        "characteristic:",
        "must not decrease",
    )


# --- pumps ---------------------------------------------------------------------------------


def test_curve_not_decreasing_in_head(refuse: Callable[..., Problem]) -> None:
    rising = r"\1      curve: [[0 m^3/h, 40 m], [400 m^3/h, 50 m], [700 m^3/h, 30 m]]\n"
    refuse(
        [(value_of("pump: jetty pumps", "curve"), rising)],
        "routes.loading[1].curve",
        "curve: [[0 m^3/h, 40 m]",
        "head must fall",
    )


def test_curve_with_too_few_points(refuse: Callable[..., Problem]) -> None:
    short = r"\1      curve: [[0 m^3/h, 40 m], [400 m^3/h, 30 m]]\n"
    refuse(
        [(value_of("pump: jetty pumps", "curve"), short)],
        "routes.loading[1].curve",
        "curve: [[0 m^3/h, 40 m]",
        "at least 3 points",
    )


def test_pump_pushes_must_be_a_direction(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"pushes: to-shore", "pushes: shoreward")],
        "routes.discharge[10].pushes",
        "pushes: shoreward",
        "valid: to-carrier, to-shore",
    )


# --- cases ---------------------------------------------------------------------------------


def test_case_names_an_element_that_does_not_exist(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"trip: ship cargo pumps\}", "trip: ship cargo pump}")],
        "cases[2].events[1].trip",
        "trip: ship cargo pump}",
        "no element 'ship cargo pump' in route 'discharge'",
        "nearest: 'ship cargo pumps'",
    )


def test_case_names_a_product_that_does_not_exist(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"    product: diesel", "    product: diesl")],
        "cases[2].product",
        "product: diesl",
        "no product 'diesl'",
        "nearest: 'diesel'",
    )


def test_case_names_a_route_that_does_not_exist(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"    route: discharge", "    route: dischage")],
        "cases[2].route",
        "route: dischage",
        "nearest: 'discharge'",
    )


def test_close_on_a_coupling(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"release: arm release coupling\}", "close: arm release coupling, stroke: 5 s}")],
        "cases[3].events[3].close",
        "close: arm release coupling",
        "'close' applies to a valve",
        "use 'release: arm release coupling'",
    )


def test_trip_on_a_valve(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"trip: ship cargo pumps\}", "trip: ship manifold valve}")],
        "cases[2].events[1].trip",
        "trip: ship manifold valve}",
        "'trip' applies to a pump",
        "is a valve",
    )


def test_release_on_a_pipe(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"release: arm release coupling\}", "release: jetty header}")],
        "cases[3].events[3].release",
        "release: jetty header}",
        "'release' applies to a coupling",
    )


#: The first case's closing of the shore ESD valve (group 1: up to the end of its stroke).
FIRST_CLOSE = (
    r"(name: loading, shore ESD valve closes\n(?:.*\n)*?.*close: shore ESD valve, [^}]*)\}"
)


def test_travel_not_monotone(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(FIRST_CLOSE, r"\1,\n         travel: [[0, 100 %], [0.5, 30 %], [0.7, 40 %], [1, 0 %]]}")],
        "cases[0].events[1].travel",
        "travel: [[0, 100 %], [0.5, 30 %], [0.7",
        "must not open again",
    )


def test_travel_not_ending_shut(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(FIRST_CLOSE, r"\1, travel: [[0, 100 %], [1, 10 %]]}")],
        "cases[0].events[1].travel",
        "travel: [[0, 100 %], [1, 10 %]]",
        "must end shut",
    )


def test_close_needs_a_stroke(refuse: Callable[..., Problem]) -> None:
    no_stroke = (
        r"(name: loading, shore ESD valve closes\n(?:.*\n)*?.*close: shore ESD valve), [^}]*\}"
    )
    refuse(
        [(no_stroke, r"\1, atx: 1 s}")],
        "cases[0].events[1].stroke",
        "close: shore ESD valve, atx",
        "missing required key 'stroke'",
    )


def test_running_more_pumps_than_installed(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"running: \{ship cargo pumps: \d+\}", "running: {ship cargo pumps: 99}")],
        "cases[2].running.ship cargo pumps",
        "running: {ship cargo pumps: 99}",
        "installed",
    )


def test_duplicate_case_name(refuse: Callable[..., Problem]) -> None:
    refuse(
        [(r"- name: emergency release during loading", "- name: loading, shore ESD valve closes")],
        "cases[3].name",
        ("  - name: discharge", "- name: loading, shore ESD valve closes"),
        "already used by cases[0]",
    )


# --- all problems at once; files that are not terminal files -------------------------------


def test_all_problems_reported_together(
    edited: Callable[..., str], problems_of: Callable[[str], list[Problem]]
) -> None:
    text = edited(
        (r"(pipe: jetty header\n      )length:", r"\1lenght:"),
        (r"closing_time: .*", "closing_time: 5"),
        (r"    product: diesel", "    product: diesl"),
        (r"atmosphere: .*", "atmosphere: 1.01325 bar"),
    )
    found = problems_of(text)
    paths = {p.path for p in found}
    assert {
        "routes.loading[4].lenght",
        "routes.loading[4].length",
        "routes.loading[6].closing_time",
        "cases[2].product",
        "site.atmosphere",
    } <= paths
    assert [p.line for p in found] == sorted(p.line for p in found)


def test_yaml_syntax_error_has_its_line(
    edited: Callable[..., str],
    line_of: Callable[[str, str], int],
    problems_of: Callable[[str], list[Problem]],
) -> None:
    text = edited((value_of("arm: loading arm 2A", "size"), r"\1      size: {nps: 12\n"))
    (problem,) = problems_of(text)
    assert "YAML syntax error" in problem.message
    # the flow mapping opens on one line; the parser notices on the next
    opened = line_of(text, "size: {nps: 12\n")
    assert problem.line == opened + 1
    assert f"from line {opened}" in problem.message


def test_bad_indentation_has_its_line(
    edited: Callable[..., str],
    line_of: Callable[[str, str], int],
    problems_of: Callable[[str], list[Problem]],
) -> None:
    text = edited((r"(valve: shore ESD valve\n)      type:", r"\1     type:"))
    (problem,) = problems_of(text)
    assert problem.line == line_of(text, "valve: shore ESD valve") + 1


def test_duplicate_key(
    edited: Callable[..., str],
    line_of: Callable[[str, str], int],
    problems_of: Callable[[str], list[Problem]],
) -> None:
    text = edited((r"(tank: shore tank 12\n      surface: .*\n)", r"\1      surface: 17 m\n"))
    problem = the(problems_of(text), "routes.loading[0].surface")
    assert problem.line == line_of(text, "surface: 17 m")
    assert "appears twice" in problem.message


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("", "empty"),
        ("- 1\n- 2\n", "expected a mapping"),
        ("just text\n", "expected a mapping"),
        ("format: 1\nterminal: x\nproducts: []\nroutes: {}\ncases: []\n", "expected a mapping"),
        ("a: &x [*x]\n", "contains it"),
        ("a: !!python/object:os.system ls\n", "cannot read"),
    ],
)
def test_not_a_terminal_file(
    problems_of: Callable[[str], list[Problem]], text: str, fragment: str
) -> None:
    found = problems_of(text)
    assert any(fragment in p.message for p in found), [str(p) for p in found]


def test_missing_file(tmp_path) -> None:
    with pytest.raises(InputError, match="no such file"):
        load(tmp_path / "nothing.yaml")


def test_directory(tmp_path) -> None:
    with pytest.raises(InputError, match="is a directory"):
        load(tmp_path)


def test_not_utf8(tmp_path, jetty_text: str) -> None:
    path = tmp_path / "latin1.yaml"
    data = jetty_text.replace("terminal: Kestrel", "terminal: K\u00e9strel").encode("latin-1")
    path.write_bytes(data)
    with pytest.raises(InputError, match="not UTF-8") as info:
        load(path)
    (problem,) = info.value.problems
    assert problem.line == 3  # the line of the terminal name


def test_steady_state_beyond_a_limit_is_not_a_file_error(edited: Callable[..., str]) -> None:
    # a 1 barg design pressure is far below what the pumps give: a verdict, not a refusal
    text = edited(
        (
            value_of("manifold: ship manifold", "design_pressure"),
            r"\1      design_pressure: 1 barg\n",
        )
    )
    terminal = loads(text)
    manifold = terminal.routes["loading"].element("ship manifold")
    assert manifold.limits.design_pressure_gauge == pytest.approx(1e5)

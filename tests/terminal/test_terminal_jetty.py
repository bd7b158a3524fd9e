"""The demo terminal file loads into the expected SI model objects."""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from pathlib import Path

import pytest

from esdsurge.model import (
    ELEMENT_KINDS,
    Arm,
    Close,
    Coupling,
    Hose,
    Manifold,
    Pipe,
    Pump,
    Release,
    Tank,
    Terminal,
    Trip,
    Valve,
)
from esdsurge.physics import pipes, products, valves
from esdsurge.terminal import load, loads
from esdsurge.terminal.elements import COUPLING_K_OPEN, HOSE_ROUGHNESS, SPECS


@pytest.fixture(scope="module")
def jetty() -> Terminal:
    return load(JETTY)


JETTY = Path(__file__).parents[2] / "terminals" / "jetty.yaml"
Written = Callable[[str, str], str]


def num(text: str) -> float:
    """The number at the start of a written quantity (``"19 barg"`` -> 19.0)."""
    return float(text.split()[0])


def points(text: str) -> list[tuple[float, float]]:
    """The numbers of a written list of pairs (``"[[0 m, 4 m], [85 m, 6 m]]"``)."""
    pairs = re.findall(r"\[(-?[\d.]+) [^,\]]*, (-?[\d.]+) [^\]]*\]", text)
    return [(float(a), float(b)) for a, b in pairs]


def test_top_level(jetty: Terminal) -> None:
    assert jetty.name == "Kestrel Bay jetty 2 (demo)"
    assert jetty.path == str(JETTY)
    # 1.01325 bar = 101325 Pa, exact unit arithmetic
    assert jetty.atmosphere_abs == pytest.approx(101_325.0, rel=1e-12)
    # 20 degC = 293.15 K (ITS-90 offset, exact)
    assert jetty.temperature == pytest.approx(293.15, rel=1e-12)
    assert list(jetty.products) == ["gasoline", "diesel"]
    assert list(jetty.routes) == ["loading", "discharge"]
    assert len(jetty.cases) == 4


def test_route_order_and_kinds(jetty: Terminal) -> None:
    kinds = [type(e) for e in jetty.routes["loading"].elements]
    assert kinds == [
        Tank,
        Pump,
        Pipe,
        Valve,
        Pipe,
        Arm,
        Coupling,
        Hose,
        Manifold,
        Valve,
        Pipe,
        Tank,
    ]
    discharge = [type(e) for e in jetty.routes["discharge"].elements]
    assert discharge[0] is Tank and discharge[-1] is Tank and discharge[-2] is Pump


def test_nps_16_std_bore(jetty: Terminal, written: Written) -> None:
    line = jetty.routes["loading"].element("shore line")
    assert isinstance(line, Pipe)
    assert written("shore line", "size") == "{nps: 16, schedule: STD}"
    # ASME B36.10M-2004: NPS 16 OD 406.4 mm, STD wall 9.53 mm -> bore 387.34 mm
    assert line.inside_diameter == pytest.approx(0.38734, abs=2e-5)
    assert line.wall == pytest.approx(0.00953, abs=1e-5)
    assert line.length == num(written("shore line", "length"))
    assert line.material == "carbon steel"
    assert (line.youngs_modulus, line.poisson) == pipes.MATERIALS["carbon steel"]
    assert line.roughness == pipes.DEFAULT_ROUGHNESS["carbon steel"]
    assert line.anchoring == "anchored"
    assert line.profile == tuple(points(written("shore line", "elevation")))


def test_arm_material_and_profile(jetty: Terminal, written: Written) -> None:
    arm = jetty.routes["loading"].element("loading arm 2A")
    assert isinstance(arm, Arm)
    assert written("loading arm 2A", "size") == "{nps: 12, schedule: 40}"
    # ASME B36.10M-2004: NPS 12 OD 323.8 mm, Sch 40 wall 10.31 mm -> bore 303.18 mm
    assert arm.inside_diameter == pytest.approx(0.30318, abs=2e-5)
    assert (arm.youngs_modulus, arm.poisson) == pipes.MATERIALS["stainless steel"]
    assert arm.roughness == pipes.DEFAULT_ROUGHNESS["stainless steel"]
    assert arm.profile == tuple(points(written("loading arm 2A", "elevation")))


def test_limits_in_si(jetty: Terminal, written: Written) -> None:
    line = jetty.routes["loading"].element("shore line")
    assert written("shore line", "design_pressure") == "19 barg"
    # 19 barg = 1.9e6 Pa gauge (1 bar = 1e5 Pa, exact)
    assert line.limits.design_pressure_gauge == pytest.approx(1.9e6, rel=1e-12)
    assert written("shore line", "surge_allowance") == "10 %"
    assert line.limits.surge_allowance == pytest.approx(0.1, rel=1e-12)
    assert line.limits.flange_class == int(written("shore line", "flange_class"))
    hose = jetty.routes["loading"].element("manifold hose")
    rated = written("manifold hose", "rated_working_pressure")
    assert rated.endswith(" barg")
    assert hose.limits.rated_working_pressure_gauge == pytest.approx(num(rated) * 1e5)
    low = written("manifold hose", "min_pressure")
    assert low.endswith(" bara")  # stored absolute as written
    assert hose.limits.min_pressure_abs == pytest.approx(num(low) * 1e5, rel=1e-12)
    tank = jetty.routes["loading"].elements[0]
    assert tank.limits.is_empty()


def test_pump(jetty: Terminal, written: Written) -> None:
    pump = jetty.routes["loading"].element("jetty pumps")
    assert isinstance(pump, Pump)
    curve = points(written("jetty pumps", "curve"))
    # m^3/h / 3600 = m^3/s, exact unit arithmetic; heads in m as written
    assert len(pump.curve) == len(curve) >= 3
    for (flow, head), (q, h) in zip(pump.curve, curve, strict=True):
        assert flow == pytest.approx(q / 3600, rel=1e-12) and head == h
    assert pump.pushes == 1 and pump.check_valve and pump.efficiency is None
    assert pump.count == int(written("jetty pumps", "count"))
    speed = written("jetty pumps", "speed")
    assert speed.endswith(" rpm")
    # rpm * 2 pi / 60 = rad/s, exact unit arithmetic
    assert pump.rated_speed == pytest.approx(num(speed) * 2 * math.pi / 60, rel=1e-12)
    assert pump.inertia == num(written("jetty pumps", "inertia"))
    ship = jetty.routes["discharge"].element("ship cargo pumps")
    assert ship.pushes == -1 and ship.count == int(written("ship cargo pumps", "count"))


def test_valve_flow_area_and_size(jetty: Terminal, written: Written) -> None:
    esd = jetty.routes["loading"].element("shore ESD valve")
    assert isinstance(esd, Valve)
    assert esd.valve_type == written("shore ESD valve", "type")
    assert esd.flow_area == valves.cv_to_flow_area(float(written("shore ESD valve", "cv")))
    assert written("shore ESD valve", "size") == "16 in"
    # 16 in = 0.4064 m (1 in = 25.4 mm exact)
    assert esd.diameter == pytest.approx(0.4064, rel=1e-12)
    assert esd.characteristic == ()


def test_coupling_takes_upstream_bore(jetty: Terminal, written: Written) -> None:
    route = jetty.routes["loading"]
    erc = route.element("arm release coupling")
    arm = route.element("loading arm 2A")
    assert isinstance(erc, Coupling)
    assert erc.diameter == arm.inside_diameter  # nearest neighbour with a bore, upstream first
    k = float(written("arm release coupling", "k_open"))
    assert erc.flow_area == valves.k_to_flow_area(k, arm.inside_diameter)
    assert erc.closing_time == num(written("arm release coupling", "closing_time"))
    assert erc.valve_type == "ball"


def test_hose(jetty: Terminal, written: Written) -> None:
    hose = jetty.routes["loading"].element("manifold hose")
    assert isinstance(hose, Hose)
    assert written("manifold hose", "inside_diameter") == "254 mm"
    assert hose.inside_diameter == pytest.approx(0.254, rel=1e-12)
    expansion = written("manifold hose", "expansion")
    assert expansion.endswith(" %/bar")
    # x %/bar = x / 100 / 1e5 1/Pa, exact unit arithmetic
    assert hose.expansion == pytest.approx(num(expansion) * 1e-7, rel=1e-12)
    assert hose.wave_speed is None
    assert hose.roughness == HOSE_ROUGHNESS


def test_anchors_give_the_same_elements(jetty: Terminal) -> None:
    loading, discharge = jetty.routes["loading"], jetty.routes["discharge"]
    for name in ("shore ESD valve", "jetty header", "loading arm 2A", "manifold hose"):
        assert discharge.element(name) is loading.element(name)


def test_products_from_builtins(jetty: Terminal, jetty_text: str) -> None:
    gasoline = jetty.products["gasoline"]
    expected = products.builtin_fluid("gasoline", 293.15, "gasoline")
    assert gasoline == expected
    assert gasoline.where.path == "products.gasoline"
    assert gasoline.where.line == jetty_text[: jetty_text.index("  gasoline:")].count("\n") + 1


def test_cases(jetty: Terminal, jetty_text: str) -> None:
    first = jetty.cases[0]
    assert (first.route, first.product) == ("loading", "gasoline")
    rate = re.search(r"rate: (.*) m\^3/h", jetty_text)
    assert rate is not None
    # m^3/h / 3600 = m^3/s, exact unit arithmetic (1200 m^3/h = 0.3333 m^3/s)
    assert first.rate == pytest.approx(float(rate.group(1)) / 3600, rel=1e-12)
    assert first.spill_limit is not None and first.spill_limit > 0
    assert [type(e) for e in first.events] == [Trip, Close]
    close = first.events[1]
    assert isinstance(close, Close)
    assert close.element == "shore ESD valve" and close.stroke > 0
    assert close.travel == ((0.0, 1.0), (1.0, 0.0))  # the default: linear
    discharge = jetty.cases[2]
    assert [name for name, _ in discharge.running] == ["ship cargo pumps"]
    assert isinstance(jetty.cases[3].events[3], Release)
    assert first.duration is None and first.max_closure_time is None


def test_where_names_file_line_and_key_path(jetty: Terminal, jetty_text: str) -> None:
    line = jetty.routes["loading"].element("shore line")
    expected = jetty_text[: jetty_text.index("- pipe: shore line")].count("\n") + 1
    assert (line.where.line, line.where.path) == (expected, "routes.loading[2]")
    assert line.where.file == str(JETTY)
    esd = jetty.routes["loading"].element("shore ESD valve")
    expected = jetty_text[: jetty_text.index("valve: shore ESD valve")].count("\n") + 1
    assert esd.where.line == expected
    event = jetty.cases[0].events[1]
    assert event.where.path == "cases[0].events[1]"


def test_every_model_kind_has_a_reader() -> None:
    assert set(SPECS) == set(ELEMENT_KINDS)


SMALL = """
format: 1
terminal: test rack
site: {atmosphere: 0.9 bara, temperature: 30 degC}
products:
  solvent:
    density: 791 kg/m^3
    sound_speed: 1100 m/s
    vapour_pressure: 13 kPaa
    kinematic_viscosity: 0.75 cSt
  warm diesel:
    builtin: gas oil
    density: 840 kg/m^3
routes:
  r:
    - tank: rack tank
      surface: 10 m
      gas_pressure: 0.1 barg
    - pump: rack pump
      curve: [[0 m^3/h, 50 m], [100 m^3/h, 45 m], [200 m^3/h, 30 m]]
      pushes: to-carrier
      efficiency: 75 %
      check_valve: false
    - pipe: rack line
      length: 200 m
      inside_diameter: 150 mm
      wall: 5 mm
      youngs_modulus: 200 GPa
      poisson: 0.29
      roughness: 0.05 mm
      friction_factor: 0
    - valve: rack valve
      type: custom
      kv: 400
      characteristic: [[0 %, 0], [50 %, 0.3], [100 %, 1]]
    - coupling: dry break
      closing_time: 2 s
    - hose: rack hose
      length: 5 m
      inside_diameter: 100 mm
      wave_speed: 300 m/s
      min_pressure: -0.5 barg
    - manifold: car inlet
      design_pressure: 70 psig
    - tank: rail car
      surface: 3 m
cases:
  - name: car valve closes
    route: r
    product: solvent
    running: {rack pump: 0}
    events:
      - {close: rack valve, stroke: 3 s, travel: [[0, 100 %], [0.2, 20 %], [1, 0 %]]}
      - {at: 0.5 s, release: dry break}
    duration: 60 s
    max_closure_time: 30 s
"""


def test_small_file_with_every_option() -> None:
    t = loads(SMALL, "small.yaml")
    assert t.atmosphere_abs == pytest.approx(0.9e5)
    # 30 degC = 303.15 K
    assert t.temperature == pytest.approx(303.15)
    solvent = t.products["solvent"]
    assert solvent.builtin is None and solvent.temperature == pytest.approx(303.15)
    # K = rho c^2 (definition of the speed of sound)
    assert solvent.bulk_modulus == pytest.approx(791 * 1100**2)
    # 0.75 cSt = 0.75e-6 m^2/s; mu = rho nu
    assert solvent.viscosity == pytest.approx(791 * 0.75e-6)
    assert solvent.vapour_pressure_abs == pytest.approx(13e3)
    assert all(src.startswith("given in file") for _, src in solvent.sources)
    diesel = t.products["warm diesel"]
    base = products.builtin_fluid("diesel", 303.15, "warm diesel")
    assert diesel.builtin == "diesel" and diesel.density == 840.0
    assert diesel.bulk_modulus == base.bulk_modulus
    sources = dict(diesel.sources)
    line = SMALL[: SMALL.index("density: 840")].count("\n") + 1
    assert sources["density"] == f"given in file (line {line})"
    assert sources["viscosity"] == dict(base.sources)["viscosity"]
    route = t.routes["r"]
    tank = route.elements[0]
    # 0.1 barg = 1e4 Pa gauge whatever the atmosphere
    assert tank.gas_pressure_gauge == pytest.approx(1e4)
    pump = route.element("rack pump")
    assert pump.efficiency == pytest.approx(0.75) and pump.check_valve is False
    line = route.element("rack line")
    assert line.material == "" and line.youngs_modulus == 200e9 and line.poisson == 0.29
    assert line.roughness == pytest.approx(5e-5) and line.friction_factor == 0.0
    assert line.profile == ((0.0, 0.0), (200.0, 0.0))  # no elevation: flat at 0 m
    valve = route.element("rack valve")
    assert valve.flow_area == valves.kv_to_flow_area(400)
    assert valve.diameter == pytest.approx(0.15)  # upstream neighbour's bore
    assert valve.characteristic == ((0.0, 0.0), (0.5, 0.3), (1.0, 1.0))
    coupling = route.element("dry break")
    # the valve upstream states no bore of its own, so the hose downstream is the nearest
    assert coupling.diameter == pytest.approx(0.1)
    assert coupling.flow_area == valves.k_to_flow_area(COUPLING_K_OPEN, 0.1)
    hose = route.element("rack hose")
    assert hose.wave_speed == 300.0 and hose.expansion is None
    # -0.5 barg with a 0.9 bara atmosphere is 0.4 bara
    assert hose.limits.min_pressure_abs == pytest.approx(0.4e5)
    manifold = route.element("car inlet")
    # 70 psi = 70 * 6894.757 Pa (NIST SP 811 (2008) B.8: 1 psi = 6.894757e3 Pa)
    assert manifold.limits.design_pressure_gauge == pytest.approx(70 * 6894.757, rel=1e-6)
    case = t.cases[0]
    assert case.running == (("rack pump", 0),)
    assert case.duration == 60.0 and case.max_closure_time == 30.0 and case.rate is None
    close, release = case.events
    assert close.travel == ((0.0, 1.0), (0.2, 0.2), (1.0, 0.0))
    assert close.at == 0.0 and release.at == 0.5


def test_merge_keys_and_aliases() -> None:
    text = SMALL.replace(
        "    - tank: rail car\n",
        "    - &m2\n      <<: {design_pressure: 5 barg, manifold: other}\n"
        "      manifold: car inlet 2\n    - tank: rail car\n",
    )
    t = loads(text)
    m2 = t.routes["r"].element("car inlet 2")
    assert m2.limits.design_pressure_gauge == pytest.approx(5e5)


def test_empty_elevation_is_flat_at_zero(jetty_text: str) -> None:
    # the hose's elevation line becomes an empty list
    text = re.sub(
        r"(hose: manifold hose\n(?:      .*\n)*?      elevation: ).*", r"\1[]", jetty_text
    )
    assert text != jetty_text
    hose = loads(text).routes["loading"].element("manifold hose")
    assert hose.profile == ((0.0, 0.0), (hose.length, 0.0))

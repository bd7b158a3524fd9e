"""`esdsurge check` end to end: a case with a known answer, limits, exit codes, JSON, plots."""

import json
from pathlib import Path

import pytest

from esdsurge.cli import main

ROOT = Path(__file__).resolve().parents[2]

# Frictionless single pipe, explicit wave speed, valve shut in 50 ms (<< 2L/a = 2 s): the rise at
# the valve is the Joukowsky rise rho a V0. Both tanks stand under 35 barg of gas so that the
# down-surge that follows stays above the vapour pressure.
INSTANT = """
format: 1
terminal: test line (invented)
site: {{temperature: 50 degC}}
products:
  water: {{builtin: water}}
routes:
  line:
    - tank: head tank
      surface: {surface} m
      gas_pressure: 35 barg
    - pipe: test pipe
      length: 1000 m
      inside_diameter: 300 mm
      wall: 10 mm
      wave_speed: 1000 m/s
      friction_factor: 0
      flange_class: {flange}
    - valve: end valve
      type: gate
      k_open: 20
    - pipe: tail pipe
      length: 20 m
      inside_diameter: 300 mm
      wall: 10 mm
      wave_speed: 1000 m/s
      friction_factor: 0
    - tank: low tank
      surface: 0 m
      gas_pressure: 35 barg
cases:
  - name: instant closure
    route: line
    product: water
    events:
      - {{at: 0 s, close: end valve, stroke: 0.05 s}}
    duration: 3 s
"""


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def write(tmp_path, **kw):
    p = tmp_path / f"instant-{kw['surface']}-{kw['flange']}.yaml"
    p.write_text(INSTANT.format(**kw))
    return p


RHO = 988.0  # water at 50 degC (IAPWS-95 via CoolProp 8.0.0: 988.0 kg/m^3)


def velocity(surface):
    # frictionless line: the whole head is lost across the valve, K = 20 on the pipe velocity
    return (2 * 9.80665 * surface / 20.0) ** 0.5


def pipe_peak(out):
    case = json.loads(out)["cases"][0]
    return next(e for e in case["elements"] if e["name"] == "test pipe")


def test_instant_closure_gives_the_joukowsky_peak_in_json_and_summary(tmp_path, capsys):
    p = write(tmp_path, surface=10, flange=600)
    code, out, err = run(capsys, "check", p, "--json")
    pipe = pipe_peak(out)
    p_valve0 = 35 + 10 * RHO * 9.80665 / 1e5  # static head at the valve before closure
    # Joukowsky (1898); Wylie & Streeter (1993) eq. 1-1: dp = rho a dV, within 1 %
    expected = p_valve0 + RHO * 1000 * velocity(10) / 1e5
    assert pipe["p_max_barg"] == pytest.approx(expected, rel=0.01)
    # ASME B16.5-2009 Table 2-1.1, group 1.1, class 600 at 50 degC: 100.2 bar
    assert pipe["limit_max_barg"] == pytest.approx(100.2, abs=1e-9)
    assert pipe["ok"] is True and code == 0
    # the human summary shows the same peak, with its unit
    code, out, _ = run(capsys, "check", p)
    assert f"{pipe['p_max_barg']:.1f} barg" in out
    assert "competent engineer" in out


def test_a_limit_exceeded_gives_exit_1_and_names_the_element(tmp_path, capsys):
    # class 300 at 50 degC is 50.1 bar (ASME B16.5-2009 Table 2-1.1); 36 barg plus the
    # Joukowsky rise of 3.1 m/s of water (about 31 bar) exceeds it, so the pipe fails
    p = write(tmp_path, surface=10, flange=300)
    code, out, _ = run(capsys, "check", p, "--json")
    case = json.loads(out)["cases"][0]
    assert code == 1
    assert case["verdict"] == "fail"
    assert case["governing"] == "test pipe"
    pipe = pipe_peak(out)
    assert pipe["limit_max_barg"] == pytest.approx(50.1, abs=1e-9)
    assert pipe["ok"] is False


def test_a_slow_stroke_and_a_lower_velocity_change_the_answer(tmp_path, capsys):
    p = write(tmp_path, surface=10, flange=300)
    _, out_fast, _ = run(capsys, "check", p, "--json")
    _, out_slow, _ = run(capsys, "check", p, "--json", "--stroke", "20 s")
    static = 35 + 10 * RHO * 9.80665 / 1e5
    # a closure ten times the pipeline period gives far less than Joukowsky (Michaud 1878)
    rise_slow = pipe_peak(out_slow)["p_max_barg"] - static
    assert rise_slow < 0.5 * (pipe_peak(out_fast)["p_max_barg"] - static)
    # Joukowsky is linear in the velocity change: a quarter of the head, half the velocity
    q = write(tmp_path, surface=2.5, flange=300)
    _, out_low, _ = run(capsys, "check", q, "--json")
    rise_fast = pipe_peak(out_fast)["p_max_barg"] - 35 - 10 * RHO * 9.80665 / 1e5
    rise_low = pipe_peak(out_low)["p_max_barg"] - 35 - 2.5 * RHO * 9.80665 / 1e5
    assert rise_low == pytest.approx(rise_fast / 2, rel=0.02)
    code, _, err = run(capsys, "check", p, "--stroke", "fast")
    assert code == 2 and "--stroke" in err


def test_rate_what_if_on_the_jetty(capsys):
    jetty = ROOT / "terminals" / "jetty.yaml"
    name = "loading, shore ESD valve closes"
    _, out, _ = run(capsys, "check", jetty, "--json", "--case", name, "--rate", "900 m^3/h")
    assert json.loads(out)["cases"][0]["rate_m3h"] == pytest.approx(900.0)
    code, out, err = run(capsys, "check", jetty, "--json", "--case", name, "--rate", "5000")
    case = json.loads(out)["cases"][0]
    assert case["verdict"] == "no steady state" and "not reachable" in case["problem"]
    assert code == 1


@pytest.mark.parametrize("path", sorted((ROOT / "terminals").glob("*.yaml")), ids=lambda p: p.name)
def test_every_demo_checks_with_json_and_plots(tmp_path, capsys, path):
    code, out, err = run(capsys, "check", path, "--json", "--plot", tmp_path / "fig")
    assert code in (0, 1), err
    data = json.loads(out)
    for case in data["cases"]:
        assert case["verdict"] in ("pass", "fail", "fails before surge", "no steady state")
        for e in case["elements"]:
            assert {
                "name",
                "kind",
                "p_max_barg",
                "t_p_max_s",
                "x_p_max_m",
                "p_min_bara",
                "cavity_max_m3",
                "limit_max_barg",
                "limit_min_bara",
                "ok",
            } <= set(e)
        assert case["spill_m3"] is None or case["spill_m3"] >= 0
        assert isinstance(case["branches"], list) and "compare" not in case
    assert code == (0 if all(c["verdict"] == "pass" for c in data["cases"]) else 1)
    pngs = sorted((tmp_path / "fig").glob("*.png"))
    # two figures per case, and a third for a case whose route has relief valves or accumulators
    with_branches = sum(1 for c in data["cases"] if c["branches"])
    assert len(pngs) == 2 * len(data["cases"]) + with_branches
    assert len(list((tmp_path / "fig").glob("*-mitigations.png"))) == with_branches
    assert all(p.stat().st_size > 10_000 for p in pngs)

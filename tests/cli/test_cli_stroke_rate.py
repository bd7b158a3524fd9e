"""`esdsurge stroke` and `esdsurge rate` end to end: exit codes, JSON keys, human output."""

import json

import pytest

from esdsurge.cli import main

# a frictionless line closed linearly (see tests/studies/test_stroke.py): the fastest safe
# stroke is about 10 s
LINE = """
format: 1
terminal: stroke test line (invented)
products:
  water: {{builtin: water}}
routes:
  line:
    - tank: head tank
      surface: 0 m
      gas_pressure: 100 barg
    - pipe: test pipe
      length: 1000 m
      inside_diameter: 500 mm
      wall: 12 mm
      wave_speed: 1000 m/s
      friction_factor: 0
      design_pressure: 100.4 barg
    - valve: end valve
      type: custom
      kv: 14.124
      characteristic: [[0, 0], [1, 1]]
    - tank: low tank
      surface: 0 m
cases:
  - name: linear closure
    route: line
    product: water
    events:
      - {{at: 0 s, close: end valve, stroke: 20 s}}
    spill_limit: {spill}
"""

PUMPED = """
format: 1
terminal: pumped test line (invented)
products:
  fuel: {builtin: diesel, conductivity: 5 pS/m}
routes:
  line:
    - tank: supply
      surface: 5 m
    - pump: test pump
      curve: [[0 m^3/h, 60 m], [300 m^3/h, 55 m], [600 m^3/h, 40 m]]
      pushes: to-carrier
      speed: 2960 rpm
      inertia: 0.5 kg*m^2
    - pipe: main
      length: 800 m
      inside_diameter: 300 mm
      wall: 8 mm
      wave_speed: 1000 m/s
      friction_factor: 0.015
      design_pressure: 9 barg
    - valve: end valve
      type: ball
      kv: 2000
    - tank: receiver
      surface: 5 m
cases:
  - name: fast closure
    route: line
    product: fuel
    events:
      - {at: 0 s, trip: test pump}
      - {at: 0 s, close: end valve, stroke: 4 s}
    carrier: {kind: ship, vent_capacity: 1250 m^3/h, inlet_diameter: 250 mm, inlets: 2}
"""


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def line(tmp_path):
    def write(spill="0.3 m^3"):
        path = tmp_path / "line.yaml"
        path.write_text(LINE.format(spill=spill), encoding="utf-8")
        return path

    return write


def test_stroke_json(capsys, line):
    code, out, err = run(capsys, "stroke", line(), "--json")
    assert code == 0, err
    obj = json.loads(out)
    case = obj["cases"][0]
    for key in (
        "name",
        "valve",
        "stroke_min_s",
        "stroke_max_s",
        "min_governed_by",
        "max_governed_by",
        "recommended_s",
    ):
        assert key in case
    assert case["valve"] == "end valve"
    assert 9.0 < case["stroke_min_s"] < case["recommended_s"] < case["stroke_max_s"]
    assert "test pipe" in case["min_governed_by"]
    assert "spill limit" in case["max_governed_by"]
    assert case["empty"] is False and case["effective_closure_s"] > 0.0
    assert obj["ok"] is True and "caution" in obj


def test_stroke_empty_window_gives_nulls_and_exit_1(capsys, line):
    code, out, _ = run(capsys, "stroke", line("0.15 m^3"), "--json")
    assert code == 1
    case = json.loads(out)["cases"][0]
    assert case["empty"] is True
    assert case["stroke_min_s"] is None and case["stroke_max_s"] is None
    assert case["recommended_s"] is None
    assert "spill limit" in case["reason"] and case["opens"]


def test_stroke_human_output(capsys, line):
    code, out, _ = run(capsys, "stroke", line())
    assert code == 0
    assert "safe stroke window:" in out and "recommended" in out
    assert "effective closure time" in out
    assert "does not replace a surge study" in out
    code, out, _ = run(capsys, "stroke", line("0.15 m^3"))
    assert code == 1
    assert "NO SAFE STROKE" in out and "what would open it" in out


def test_stroke_spread_json(capsys, line):
    code, out, err = run(capsys, "stroke", line("0.4 m^3"), "--spread", "--json")
    assert code == 0, err
    case = json.loads(out)["cases"][0]
    spread = case["spread"]
    assert spread["members"][0] == "nominal" and len(spread["members"]) > 1
    assert spread["stroke_min_s"] >= case["stroke_min_s"]


def test_stroke_unknown_valve_is_exit_2(capsys, line):
    code, out, err = run(capsys, "stroke", line(), "--valve", "no such valve")
    assert code == 2
    assert "no close or release event" in err and out == ""


STAGED = "stroke: 20 s, travel: [[0, 100 %], [0.4, 40 %], [1, 0 %]]}"


def test_stroke_slow_stage_json(capsys, line):
    path = line()
    path.write_text(path.read_text().replace("stroke: 20 s}", STAGED), encoding="utf-8")
    code, out, err = run(capsys, "stroke", path, "--stage", "slow", "--json")
    assert code == 0, err
    case = json.loads(out)["cases"][0]
    assert case["stage"] == "slow" and case["staged"] is True
    # the fast stage, 0.4 of the 20 s stroke to 40 % open, is kept; 12 s of slow stage
    assert case["fast_stage_s"] == pytest.approx(8.0)
    assert case["fast_stage_to"] == pytest.approx(0.4)
    assert case["slow_stage_file_s"] == pytest.approx(12.0)
    assert case["stroke_file_s"] == pytest.approx(20.0)
    # the window is of the slow stage, with the whole stroke beside it
    assert 0.0 < case["stroke_min_s"] < case["recommended_s"] < case["stroke_max_s"]
    for key in ("stroke_min_s", "stroke_max_s", "recommended_s"):
        assert case["whole_" + key] == pytest.approx(8.0 + case[key])
    assert all(s["whole_stroke_s"] == pytest.approx(8.0 + s["stroke_s"]) for s in case["samples"])
    assert "spill limit" in case["max_governed_by"]


def test_stroke_whole_stage_keeps_its_keys(capsys, line):
    code, out, err = run(capsys, "stroke", line(), "--json")
    assert code == 0, err
    case = json.loads(out)["cases"][0]
    assert case["stage"] == "whole"
    assert not any(k.startswith("whole_") or k.startswith("fast_stage") for k in case)


def test_stroke_slow_stage_human_output(capsys, line):
    path = line()
    path.write_text(path.read_text().replace("stroke: 20 s}", STAGED), encoding="utf-8")
    code, out, _ = run(capsys, "stroke", path, "--stage", "slow")
    assert code == 0
    out = " ".join(out.split())  # lines wrap at the console's width
    assert "safe slow stage window:" in out
    assert "a fast stage of 8.0 s to 40 % open" in out
    assert "fastest safe slow stage" in out and "(whole stroke" in out
    assert "the file's slow stage 12.0 s (whole stroke 20.0 s)" in out


def test_stroke_slow_stage_without_stages_is_exit_2(capsys, line):
    code, out, err = run(capsys, "stroke", line(), "--stage", "slow")
    assert code == 2 and out == ""
    assert "--stage slow" in err and "'linear closure'" in err and "'end valve'" in err
    assert "no staged travel" in err
    assert "Traceback" not in err


def test_stroke_bad_file_is_exit_2(capsys, tmp_path):
    path = tmp_path / "bad.yaml"
    path.write_text(LINE.format(spill="3").replace("length: 1000 m", "length: 1000"))
    code, _, err = run(capsys, "stroke", path)
    assert code == 2
    assert "bare number" in err and "spill_limit" in err


def test_rate_json(capsys, tmp_path):
    path = tmp_path / "pumped.yaml"
    path.write_text(PUMPED, encoding="utf-8")
    code, out, err = run(capsys, "rate", path, "--json")
    assert code == 0, err
    case = json.loads(out)["cases"][0]
    for key in ("name", "rate_max_m3h", "governed_by", "limits"):
        assert key in case
    assert set(case["limits"]) == {"surge", "pumps", "static", "venting"}
    assert case["rate_max_m3h"] == min(v for v in case["limits"].values() if v is not None)
    # IMO MSC/Circ.585 2.7.2.1: 1250 m^3/h venting -> 1000 m^3/h
    assert case["limits"]["venting"] == pytest.approx(1000.0)
    # ISGOTT 5th ed. Fig. 11.2: two 250 mm inlets at 1 m/s, printed 366 m^3/h (4 %)
    assert case["initial_rate_m3h"] == pytest.approx(366.0, rel=0.04)


def test_rate_human_output(capsys, tmp_path):
    path = tmp_path / "pumped.yaml"
    path.write_text(PUMPED, encoding="utf-8")
    code, out, _ = run(capsys, "rate", path)
    assert code == 0
    assert "highest safe rate" in out and "governs" in out
    assert "static electricity" in out and "carrier venting" in out


def test_carrier_kind_is_checked(capsys, tmp_path):
    path = tmp_path / "pumped.yaml"
    path.write_text(PUMPED.replace("kind: ship", "kind: train"), encoding="utf-8")
    code, _, err = run(capsys, "lint", path)
    assert code == 2
    assert "cases[0].carrier.kind" in err and "road tanker" in err

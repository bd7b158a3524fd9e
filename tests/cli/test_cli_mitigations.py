"""`esdsurge check --without`, and how relief valves and accumulators are shown.

The physics of the mitigations is tested in tests/engine/test_engine_mitigations.py; these tests
check that the summary, the JSON and the figures carry the study's numbers faithfully (each
figure is compared with the ``CheckResult`` of the same run through the Python API), and that the
command refuses what it cannot do with exit status 2.
"""

import json
import re
from pathlib import Path

import pytest

from esdsurge.cli import main
from esdsurge.studies.check import check
from esdsurge.terminal import load, loads

ROOT = Path(__file__).resolve().parents[2]
BARGE = ROOT / "terminals" / "barge-dock.yaml"
FAST = "barge shuts its manifold valve fast on methanol"
STAGED = "dock ESD on toluene, staged closure"
RELIEF = "dock surge relief"
HOSE = "composite cargo hose"
HOSE_RATING = 10.0  # rated_working_pressure of the hose in the demo file [barg]


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def barg(p_abs: float, atm: float) -> float:
    return (p_abs - atm) / 1e5


@pytest.fixture(scope="module")
def study():
    """The demo case as designed and without its relief valve, through the Python API."""
    terminal = load(BARGE)
    res = check(terminal, [FAST], without=(RELIEF,))
    return terminal, res.cases[0]


def by_name(items, name):
    return next(i for i in items if i["name"] == name)


def test_without_in_json_carries_both_members_of_the_study(capsys, study):
    terminal, cc = study
    atm = terminal.atmosphere_abs
    code, out, err = run(capsys, "check", BARGE, "--case", FAST, "--without", RELIEF, "--json")
    case = json.loads(out)["cases"][0]
    # the exit status follows the case as designed, which passes
    assert code == 0, err
    assert case["verdict"] == cc.verdict == "pass"
    assert case["without"] == [RELIEF]
    other = case["compare"]
    assert other["verdict"] == cc.compare.verdict == "fail"
    assert other["governing"] == cc.compare.governing == HOSE
    # the comparison has the structure of the case itself (built by the same function)
    assert set(other) == set(case) - {"without", "compare"}
    for ev, bare in zip(cc.elements, cc.compare.elements, strict=True):
        assert by_name(case["elements"], ev.name)["p_max_barg"] == round(barg(ev.p_max_abs, atm), 4)
        assert by_name(other["elements"], bare.name)["p_max_barg"] == round(
            barg(bare.p_max_abs, atm), 4
        )
        assert by_name(other["elements"], bare.name)["ok"] is bare.ok
    # a relief valve that opens only takes liquid out of the line, so it lowers the peaks
    # (common practice, no source); here it keeps the hose within its rating
    hose, hose_bare = by_name(case["elements"], HOSE), by_name(other["elements"], HOSE)
    assert hose["p_max_barg"] <= HOSE_RATING < hose_bare["p_max_barg"]
    assert hose["ok"] is True and hose_bare["ok"] is False
    assert case["manifold"]["p_max_barg"] < other["manifold"]["p_max_barg"]


def test_relief_valve_numbers_in_json_are_the_study_numbers(capsys, study):
    _, cc = study
    _, out, _ = run(capsys, "check", BARGE, "--case", FAST, "--without", RELIEF, "--json")
    case = json.loads(out)["cases"][0]
    b = cc.branches[0]
    got = by_name(case["branches"], RELIEF)
    assert got["kind"] == "relief"
    assert got["volume_m3"] == round(b.volume, 6) and b.volume > 0.0
    assert got["flow_max_m3h"] == round(b.flow_max * 3600, 3)
    assert got["t_flow_max_s"] == round(b.t_flow_max, 4)
    assert got["opening_max"] == round(b.state_max, 4) and 0.0 < b.state_max < 1.0
    assert got["capacity_m3h"] == round(b.capacity * 3600, 3)
    assert got["time_over_capacity_s"] == 0.0 and got["over_capacity"] is False
    assert got["receiver_volume_m3"] == 2.0 and got["receiver_ok"] is True
    # its history: every k-th sample of the study's series, at most 201 points
    hist = got["history"]
    k = -(-(len(b.time) - 1) // 200)
    assert len(hist["time_s"]) == len(hist["flow_m3h"]) == len(hist["opening"]) <= 201
    assert hist["opening"] == [round(float(x), 6) for x in b.state[::k]]
    assert max(hist["opening"]) <= b.state_max
    # taken out, the relief valve passes nothing in the comparison
    bare = by_name(case["compare"]["branches"], RELIEF)
    assert bare["volume_m3"] == 0.0 and bare["opening_max"] == 0.0


def test_summary_shows_both_columns_verdicts_and_traces(capsys, study):
    terminal, cc = study
    atm = terminal.atmosphere_abs
    code, out, _ = run(capsys, "check", BARGE, "--case", FAST, "--without", RELIEF)
    assert code == 0
    assert "as designed" in out and f"without {RELIEF}" in out
    assert "PASS as designed · FAIL without dock surge relief" in out
    # the hose row holds both peaks on one line, each with its unit
    hose = next(e for e in cc.elements if e.name == HOSE)
    hose_bare = next(e for e in cc.compare.elements if e.name == HOSE)
    row = next(line for line in out.splitlines() if line.lstrip("✓✗ ").startswith(HOSE))
    assert f"{barg(hose.p_max_abs, atm):.1f} barg" in row
    assert f"{barg(hose_bare.p_max_abs, atm):.1f} barg" in row
    assert row.count("✓") == 1 and row.count("✗") == 1
    # both verdicts with their governing element, and both manifold traces
    assert f"as designed: PASS\n  governing: {HOSE}" in out
    assert f"without {RELIEF}: FAIL\n  governing: {HOSE}" in out
    assert f"peak {barg(cc.manifold_peak_abs, atm):.1f} barg" in out
    assert f"peak {barg(cc.compare.manifold_peak_abs, atm):.1f} barg" in out
    # the relief valve block: relieved volume, peak flow and when, largest opening, capacity
    b = cc.branches[0]
    assert f"relieved {b.volume * 1000:.3g} L" in out
    assert f"peak flow {b.flow_max * 3600:.0f} m³/h at {b.t_flow_max:.1f} s" in out
    assert f"largest opening {b.state_max * 100:.0f} %" in out
    assert f"capacity fully open {b.capacity * 3600:.0f} m³/h" in out
    # readable at 120 columns (the width when not on a terminal): the block's lines do not wrap
    lines = out.splitlines()
    assert (
        f"  {RELIEF} (surge relief valve): relieved {b.volume * 1000:.3g} L into a receiver "
        "with room for 2.00 m³"
    ) in lines
    assert any(line.startswith("    peak flow ") and line.endswith(" m³/h") for line in lines)


def test_us_units_in_the_relief_valve_block(capsys, study):
    _, cc = study
    code, out, _ = run(capsys, "check", BARGE, "--case", FAST, "--units", "us")
    b = cc.branches[0]
    gpm = b.flow_max / 3.785411784e-3 * 60  # US gallon exact (NIST SP 811)
    assert f"peak flow {gpm:.0f} US gpm" in out
    # every pressure of the table and the blocks in psig/psia (the limit bases quote the file)
    assert "psig" in out and not re.search(r"\d barg", out.split("governing")[0])


def test_staged_closure_and_ramp_are_named_by_what_is_taken_out(capsys, tmp_path):
    code, out, _ = run(capsys, "check", BARGE, "--case", STAGED, "--without", "dock ESD valve")
    assert "without the staged closure of dock ESD valve" in out
    assert code == 1  # the staged case fails as designed (the demo's story)
    text = BARGE.read_text(encoding="utf-8").replace(
        "      - {at: 0 s, trip: dock pump P-41}\n      - at: 0 s\n",
        "      - {at: 0 s, ramp: dock pump P-41, ramp_time: 6 s}\n      - at: 0 s\n",
    )
    assert "ramp_time: 6 s" in text
    p = tmp_path / "ramp.yaml"
    p.write_text(text, encoding="utf-8")
    code, out, _ = run(capsys, "check", p, "--case", STAGED, "--without", "dock pump P-41")
    assert "dock pump P-41 ramps down in 6.0 s" in out
    assert "without the ramp-down of dock pump P-41" in out
    _, out, _ = run(capsys, "check", p, "--case", STAGED, "--without", "dock pump P-41", "--json")
    assert json.loads(out)["cases"][0]["without"] == ["dock pump P-41"]


def test_a_bad_name_exits_2_with_the_list_of_mitigations(capsys):
    code, out, err = run(capsys, "check", BARGE, "--without", "dock surge valve")
    assert code == 2 and out == ""
    assert "--without 'dock surge valve'" in err
    assert RELIEF in err and "dock ESD valve" in err and "staged closure" in err
    assert "Traceback" not in err
    # a file without mitigations says so
    code, _, err = run(capsys, "check", ROOT / "terminals" / "jetty.yaml", "--without", "x")
    assert code == 2 and "mitigations: none" in err


def test_plots_overlay_the_comparison_and_draw_the_relief_valve(capsys, tmp_path):
    code, _, err = run(
        capsys, "check", BARGE, "--case", FAST, "--without", RELIEF, "--plot", tmp_path / "fig"
    )
    assert code == 0, err
    names = sorted(p.name for p in (tmp_path / "fig").glob("*.png"))
    base = "barge-shuts-its-manifold-valve-fast-on-methanol"
    assert names == [f"{base}-envelope.png", f"{base}-mitigations.png", f"{base}-traces.png"]
    assert all((tmp_path / "fig" / n).stat().st_size > 10_000 for n in names)
    # the overlay adds lines: the figures differ from those of the case alone
    run(capsys, "check", BARGE, "--case", FAST, "--plot", tmp_path / "alone")
    for n in (f"{base}-traces.png", f"{base}-envelope.png"):
        assert (tmp_path / "fig" / n).read_bytes() != (tmp_path / "alone" / n).read_bytes()


# The demo's relief valve made far too small (Kv 8 instead of 90) with a 20 L receiver: it is
# driven fully open beyond its full-open pressure and overflows its receiver.
def _small_relief() -> str:
    text = BARGE.read_text(encoding="utf-8")
    text = text.replace("      kv: 90\n", "      kv: 8\n")
    text = text.replace("      receiver_volume: 2 m^3\n", "      receiver_volume: 20 L\n")
    assert "kv: 8" in text and "20 L" in text
    return text


def test_relief_over_capacity_and_receiver_overflow(capsys, tmp_path):
    text = _small_relief()
    p = tmp_path / "small-relief.yaml"
    p.write_text(text, encoding="utf-8")
    cc = check(loads(text, str(p)), [FAST]).cases[0]
    b = cc.branches[0]
    assert b.over_capacity and b.receiver_ok is False
    code, out, _ = run(capsys, "check", p, "--case", FAST)
    # an overflowing receiver fails the case
    assert code == 1 and cc.verdict == "fail"
    assert (
        f"✗ {RELIEF} would pass more than its capacity: fully open above its full-open "
        f"pressure for {b.time_over_capacity:.1f} s"
    ) in out
    assert f"✗ {RELIEF} overflows its receiver: relieved {b.volume * 1000:.3g} L" in out
    _, out, _ = run(capsys, "check", p, "--case", FAST, "--json")
    got = json.loads(out)["cases"][0]["branches"][0]
    assert got["over_capacity"] is True and got["receiver_ok"] is False
    assert got["time_over_capacity_s"] == round(b.time_over_capacity, 4)
    assert got["receiver_volume_m3"] == 0.02


# The demo's relief valve replaced by an accumulator at the barge manifold (invented data).
def _accumulator() -> str:
    text = BARGE.read_text(encoding="utf-8")
    start = text.index("    - relief: dock surge relief\n")
    end = text.index("    - valve: dock ESD valve\n")
    text = text[:start] + text[end:]
    vessel = (
        "    - accumulator: barge surge vessel\n"
        "      volume: 150 L\n"
        "      precharge: 4 barg\n"
        "      connection: 50 mm\n"
    )
    return text.replace(
        "    - manifold: barge manifold\n", vessel + "    - manifold: barge manifold\n"
    )


def test_accumulator_block_and_json(capsys, tmp_path):
    text = _accumulator()
    p = tmp_path / "vessel.yaml"
    p.write_text(text, encoding="utf-8")
    vessel = "barge surge vessel"
    cc = check(loads(text, str(p)), [FAST], without=(vessel,)).cases[0]
    b = cc.branches[0]
    assert b.kind == "accumulator" and b.flow_out_max > 0.0
    code, out, _ = run(capsys, "check", p, "--case", FAST, "--without", vessel)
    assert code == (0 if cc.ok else 1)
    # gas volumes in one unit (that of the largest: m^3 for 0.15 m^3)
    assert (
        f"{vessel} (accumulator): gas {float(b.state[0]):.2f} m³ before · {b.state_min:.2f} m³ "
        f"smallest · {b.state_max:.2f} m³ largest"
    ) in out
    assert f"peak flow in {b.flow_max * 3600:.0f} m³/h at {b.t_flow_max:.1f} s" in out
    assert f"out {b.flow_out_max * 3600:.0f} m³/h at {b.t_flow_out_max:.1f} s" in out
    _, out, _ = run(capsys, "check", p, "--case", FAST, "--without", vessel, "--json")
    case = json.loads(out)["cases"][0]
    got = case["branches"][0]
    assert got["gas_volume_start_m3"] == round(float(b.state[0]), 6)
    assert got["gas_volume_min_m3"] == round(b.state_min, 6)
    assert got["volume_m3"] == round(b.volume, 6)
    assert got["flow_out_max_m3h"] == round(b.flow_out_max * 3600, 3)
    # an accumulator that takes liquid in lowers the peak at its point (common practice, no
    # source): the manifold beside it
    assert case["manifold"]["p_max_barg"] < case["compare"]["manifold"]["p_max_barg"]
    code, _, _ = run(capsys, "check", p, "--case", FAST, "--plot", tmp_path / "fig")
    png = tmp_path / "fig" / "barge-shuts-its-manifold-valve-fast-on-methanol-mitigations.png"
    assert png.stat().st_size > 10_000


def test_us_units_reach_the_words_that_name_a_limit(capsys):
    # the governing line names what sets the hose's limit in the units asked for:
    # 10 barg rated working pressure = 145 psig (1 psi = 6894.757 Pa, NIST SP 811)
    _, out, _ = run(capsys, "check", BARGE, "--case", FAST, "--without", RELIEF, "--units", "us")
    flat = " ".join(out.split())
    assert "against rated working pressure 145 psig" in flat
    assert not re.search(r"\d bar[ga]?\b", out)

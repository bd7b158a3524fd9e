"""`esdsurge lint` and `esdsurge products` end to end: exit codes, JSON keys, messages."""

import json
from pathlib import Path

import pytest

from esdsurge.cli import main

ROOT = Path(__file__).resolve().parents[2]
DEMOS = sorted((ROOT / "terminals").glob("*.yaml"))


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.name)
def test_lint_json_has_the_documented_keys_for_every_demo(capsys, path):
    code, out, err = run(capsys, "lint", str(path), "--json")
    assert code == 0, err
    data = json.loads(out)  # nothing but JSON on stdout
    for items in data["routes"].values():
        for item in items:
            assert {
                "name",
                "kind",
                "length_m",
                "inside_diameter_m",
                "wall_m",
                "wave_speed_m_s",
                "period_s",
            } <= set(item)
    for case in data["cases"]:
        assert {
            "name",
            "rate_m3h",
            "elements",
            "joukowsky_instant_bar",
            "effective_closure_s",
        } <= set(case)
        assert case["rate_m3h"] > 0
        for el in case["elements"]:
            assert {"name", "p_in_barg", "p_out_barg"} <= set(el)
        # the effective closure time never exceeds the closing element's stroke
        assert 0 < case["effective_closure_s"] <= case["stroke_s"] + 1e-9


def test_lint_human_summary_carries_units_and_cautions(capsys):
    code, out, _ = run(capsys, "lint", str(ROOT / "terminals" / "jetty.yaml"))
    assert code == 0
    assert "barg" in out and "bara" in out and "m/s" in out and "m³/h" in out
    assert "competent engineer" in out
    code, out_us, _ = run(capsys, "lint", str(ROOT / "terminals" / "jetty.yaml"), "--units", "us")
    assert "psig" in out_us and "ft/s" in out_us and "US gpm" in out_us


def test_lint_json_rate_matches_the_file(capsys):
    code, out, _ = run(
        capsys,
        "lint",
        str(ROOT / "terminals" / "jetty.yaml"),
        "--json",
        "--case",
        "loading, shore ESD valve closes",
    )
    case = json.loads(out)["cases"][0]
    assert case["rate_m3h"] == pytest.approx(1200.0)
    # Joukowsky rho a V in the shore line (ASME B36.10M 16 in STD bore 387.35 mm)
    v = 1200 / 3600 / (3.141592653589793 / 4 * 0.38735**2)
    shore = json.loads(out)["routes"]["loading"][2]
    rho = 740.5  # gasoline at 20 degC, the built-in value shown by `esdsurge products`
    # Joukowsky (1898): dp = rho a dV
    assert case["joukowsky_instant_bar"] == pytest.approx(
        rho * shore["wave_speed_m_s"] * v / 1e5, rel=2e-3
    )


def test_bad_file_gives_exit_2_with_line_and_key(tmp_path, capsys):
    text = (ROOT / "terminals" / "jetty.yaml").read_text()
    bad = text.replace("length: 85 m", "length: 85", 1)
    p = tmp_path / "bad.yaml"
    p.write_text(bad)
    code, out, err = run(capsys, "lint", str(p))
    assert code == 2
    assert out == ""
    line = bad.splitlines().index("      length: 85") + 1
    assert f"bad.yaml:{line}" in err
    assert "routes.loading[4].length" in err
    assert "Traceback" not in err


def test_unknown_case_is_a_usage_error(capsys):
    code, out, err = run(
        capsys,
        "lint",
        str(ROOT / "terminals" / "jetty.yaml"),
        "--case",
        "loading shore ESD valve closes",
    )
    assert code == 2
    assert "did you mean" in err


def test_missing_file_is_exit_2(capsys, tmp_path):
    code, _, err = run(capsys, "lint", str(tmp_path / "nope.yaml"))
    assert code == 2 and "nope.yaml" in err


def test_products_json_lists_every_builtin_with_sources(capsys):
    code, out, _ = run(capsys, "products", "--json")
    assert code == 0
    names = {p["name"] for p in json.loads(out)["products"]}
    assert {
        "gasoline",
        "diesel",
        "jet fuel",
        "light crude",
        "heavy fuel oil",
        "methanol",
        "ethanol",
        "toluene",
        "xylene",
        "styrene",
        "water",
    } <= names
    for p in json.loads(out)["products"]:
        assert p["sources"]["bulk_modulus"]

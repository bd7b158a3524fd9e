"""Pipe dimensions, materials and wave speeds against published and derived values."""

from __future__ import annotations

import math

import pytest
from fluids import friction as fluids_friction
from hypothesis import given
from hypothesis import strategies as st

from esdsurge.errors import PhysicsRangeError
from esdsurge.physics import pipes
from esdsurge.physics.pipes import (
    ANCHORINGS,
    DEFAULT_ROUGHNESS,
    MATERIALS,
    anchoring_factor,
    expansion_from_wave_speed,
    nps_dimensions,
    valid_schedules,
    wave_speed_hose,
    wave_speed_pipe,
)

# Thin-wall steel, water: K 2.19 GPa, rho 998.2 kg/m^3, E 207 GPa, nu 0.3, anchored (c1 = 0.91).
K_W20, RHO_W20, E_STEEL, NU_STEEL = 2.19e9, 998.2, 207e9, 0.3


@pytest.mark.parametrize(
    ("d_over_e", "expected"),
    [(100.0, 1057.3), (50.0, 1217.0), (32.0, 1295.1)],
)
def test_thin_wall_steel_water(d_over_e, expected):
    a = wave_speed_pipe(K_W20, RHO_W20, d_over_e * 0.01, 0.01, E_STEEL, NU_STEEL, "anchored")
    # Wylie & Streeter (1993) ch. 2 thin-wall formula (from memory), values derived in
    # REFERENCES §1.2B / §9 check 4; printed to 0.1 m/s
    assert a == pytest.approx(expected, rel=1e-3)


# Adelaide copper rig, Table 2 of the IWA paper read for REFERENCES §1.2A (anchored throughout,
# thick-wall restraint factor, water 15 degC).
ADELAIDE = [(22.14e-3, 1.63e-3, 1319.0), (22.96e-3, 1.22e-3, 1273.0), (23.58e-3, 0.91e-3, 1217.0)]


@pytest.mark.parametrize(("d", "e", "published"), ADELAIDE)
def test_adelaide_copper_wave_speeds(d, e, published):
    # water 15 degC: CoolProp 8.0.0 (REFERENCES §3.1): Ks = 2.147 GPa, rho = 999.10 kg/m^3
    k, rho = 2.147e9, 999.1
    # copper E = 124 GPa, nu = 0.34 as in the re-computation of REFERENCES §1.2A (the paper's
    # own constants were not read)
    e_cu, nu_cu = 124e9, 0.34
    a = wave_speed_pipe(k, rho, d, e, e_cu, nu_cu, "anchored", form="thick")
    # Adelaide copper rig, IWA paper Table 2 (read, REFERENCES §1.2A); 1 % because the paper's
    # E, K, rho, nu are unknown
    assert a == pytest.approx(published, rel=0.01)


def test_adelaide_auto_form_uses_thick_wall_below_d_over_e_25():
    k, rho, e_cu, nu_cu = 2.147e9, 999.1, 124e9, 0.34
    for d, e, _ in ADELAIDE[:2]:  # D/e = 13.6 and 18.8
        auto = wave_speed_pipe(k, rho, d, e, e_cu, nu_cu, "anchored")
        thick = wave_speed_pipe(k, rho, d, e, e_cu, nu_cu, "anchored", form="thick")
        # common practice, no source: the automatic form is the thick-wall one below D/e = 25
        assert auto == thick


@pytest.mark.parametrize(
    ("rho", "c_free", "a_pipe"),
    [(998.2, 1482.3, 1295.9), (683.8, 1149.4, 1082.7)],
    ids=["water", "n-heptane"],
)
def test_dn300_std_table(rho, c_free, a_pipe):
    # REFERENCES §1.2C: DN300 pipe, ID 304.8 mm, e 9.53 mm, c1 = 1 - nu^2, steel constants of
    # §1.2B; Ks = rho c^2 from CoolProp 8.0.0 (REFERENCES §3.1, 20 degC)
    k = rho * c_free**2
    a = wave_speed_pipe(k, rho, 0.3048, 0.00953, E_STEEL, NU_STEEL, "anchored")
    # REFERENCES §1.2C table (derived with library fluid data), "a in pipe" column
    assert a == pytest.approx(a_pipe, rel=0.003)


def test_nps_12_std_dimensions():
    d, e = nps_dimensions(12, "STD")
    # ASME B36.10M: NPS 12 standard weight, OD 12.75 in, wall 0.375 in -> ID 12.00 in (from
    # memory); fluids 1.3.1 tabulates it in mm
    assert d == pytest.approx(0.3048, abs=1e-4)
    assert e == pytest.approx(0.009525, abs=1e-5)


def test_nps_12_schedule_40_is_heavier_than_std():
    d, e = nps_dimensions(12, "Sch 40")
    # ASME B36.10M: NPS 12 Sch 40 wall 0.406 in = 10.31 mm (from memory); Sch 40 = STD only up
    # to NPS 10
    assert e == pytest.approx(0.01031, abs=1e-5)
    assert d == pytest.approx(0.32385 - 2 * 0.01031, abs=1e-4)


def test_schedule_names_are_normalised():
    # common practice, no source: "sch 40", "40" and 40 name the same schedule
    assert nps_dimensions(4, "sch 40") == nps_dimensions(4, "40") == nps_dimensions(4, 40)
    assert nps_dimensions(2, "40s") == nps_dimensions(2, "40S")


def test_unknown_schedule_lists_the_valid_ones():
    with pytest.raises(PhysicsRangeError, match=r"unknown pipe schedule 'XXL'.*valid: 5, 10"):
        nps_dimensions(4, "XXL")


def test_unknown_size_lists_the_valid_ones():
    with pytest.raises(PhysicsRangeError, match=r"NPS 13 is not listed.*valid sizes: .*12, 14"):
        nps_dimensions(13, "40")


def test_valid_schedules_are_known_to_fluids():
    from fluids.piping import schedule_lookup

    # fluids 1.3.1 ASME B36.10M/B36.19M tables: every schedule offered exists there
    assert set(valid_schedules()) <= set(schedule_lookup)
    assert {"STD", "XS", "40", "80", "10S", "40S"} <= set(valid_schedules())


@pytest.mark.parametrize(
    ("anchoring", "expected"),
    [("joints", 1.0), ("anchored", 1.0 - 0.3**2), ("upstream", 1.0 - 0.3 / 2)],
)
def test_thin_wall_factors(anchoring, expected):
    # Wylie & Streeter (1993) ch. 2 thin-wall c1 (from memory, REFERENCES §1.1)
    assert anchoring_factor(1.0, 0.01, 0.3, anchoring) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("anchoring", ANCHORINGS)
def test_thick_wall_tends_to_thin_wall(anchoring):
    thin = anchoring_factor(1.0, 1e-6, 0.3, anchoring, form="thin")
    thick = anchoring_factor(1.0, 1e-6, 0.3, anchoring, form="thick")
    # Halliwell (1963) forms reduce to the thin-wall ones as e/D -> 0 (REFERENCES §1.1)
    assert thick == pytest.approx(thin, rel=1e-5)


def test_thick_wall_anchored_value():
    d, e, nu = 0.1, 0.01, 0.3
    expected = 2 * (e / d) * (1 + nu) + d * (1 - nu**2) / (d + e)
    # Halliwell (1963), J. Hydraul. Div. ASCE 89(HY4), case anchored throughout (REFERENCES §1.1)
    assert anchoring_factor(d, e, nu, "anchored") == pytest.approx(expected, rel=1e-12)


def test_anchoring_order_of_wave_speeds():
    args = (K_W20, RHO_W20, 0.5, 0.005, E_STEEL, NU_STEEL)
    a_up = wave_speed_pipe(*args, "upstream")
    a_anch = wave_speed_pipe(*args, "anchored")
    a_joint = wave_speed_pipe(*args, "joints")
    # c1: upstream 0.85 < anchored 0.91 < joints 1 (Wylie & Streeter 1993, from memory)
    assert a_up > a_anch > a_joint


def test_bad_anchoring_and_form():
    with pytest.raises(PhysicsRangeError, match="valid: joints, anchored, upstream"):
        anchoring_factor(1.0, 0.01, 0.3, "clamped")
    with pytest.raises(PhysicsRangeError, match="valid: auto, thin, thick"):
        anchoring_factor(1.0, 0.01, 0.3, "anchored", form="medium")
    with pytest.raises(PhysicsRangeError, match="must be positive"):
        wave_speed_pipe(K_W20, RHO_W20, 1.0, 0.0, E_STEEL, NU_STEEL)


def test_hose_wave_speeds():
    # REFERENCES §7 [DER]: rho 740 kg/m^3, K 1.0 GPa, expansion 2 % per 10 bar -> 254 m/s
    assert wave_speed_hose(1.0e9, 740.0, 0.02 / 10e5) == pytest.approx(254.0, abs=0.5)
    # same, 0.5 % per 10 bar: [740 (1e-9 + 5e-9)]^-1/2 = 474.6 m/s. REFERENCES §7 prints
    # "447", which the arithmetic of its own formula does not give (digits transposed).
    assert wave_speed_hose(1.0e9, 740.0, 0.005 / 10e5) == pytest.approx(474.6, abs=0.1)


def test_rigid_hose_is_free_liquid_speed():
    # Wylie & Streeter (1993): with no wall compliance a = sqrt(K/rho) (from memory)
    assert wave_speed_hose(2.193e9, 998.21, 0.0) == pytest.approx(math.sqrt(2.193e9 / 998.21))


def test_expansion_round_trip_and_limit():
    a = wave_speed_hose(1.0e9, 740.0, 3e-9)
    # common practice, no source: the compliance form inverts exactly
    assert expansion_from_wave_speed(1.0e9, 740.0, a) == pytest.approx(3e-9, rel=1e-9)
    with pytest.raises(PhysicsRangeError, match="exceeds the free-liquid speed"):
        expansion_from_wave_speed(1.0e9, 740.0, 1200.0)


def test_material_table_names():
    # names every terminal file may use (TERMINAL_FORMAT.md, "material")
    for name in ("carbon steel", "stainless steel", "ductile iron", "aluminium", "copper"):
        assert name in MATERIALS and name in DEFAULT_ROUGHNESS
    for name in ("hdpe", "pvc"):
        assert name in MATERIALS and name in DEFAULT_ROUGHNESS
    assert set(pipes.MATERIAL_SOURCES) == set(MATERIALS)
    for e, nu in MATERIALS.values():
        assert e > 0 and 0 < nu < 0.5


def test_steel_modulus():
    # Wylie & Streeter (1993) Table 2.1, mild steel 200-212 GPa (from memory)
    assert 200e9 <= MATERIALS["carbon steel"][0] <= 212e9


@pytest.mark.parametrize("material", sorted(DEFAULT_ROUGHNESS))
def test_roughness_comes_from_the_fluids_tables(material):
    table, key = pipes.ROUGHNESS_SOURCES[material]
    value = DEFAULT_ROUGHNESS[material]
    if table == "HHR":
        low, high, _ = fluids_friction.HHR_roughness[key]
        # Idel'chik & Ginevskii, Handbook of Hydraulic Resistance (2007), via fluids 1.3.1:
        # midpoint of the printed range
        assert value == pytest.approx((low + high) / 2, rel=1e-9)
    else:
        # Farshad & Rieke, SPE Drilling & Completion 21(3) (2006), via fluids 1.3.1
        assert value == pytest.approx(fluids_friction.roughness_Farshad(key), rel=1e-9)


@given(
    k=st.floats(0.3e9, 2.5e9),
    rho=st.floats(500.0, 1100.0),
    d=st.floats(0.01, 1.5),
    d_over_e=st.floats(2.5, 300.0),
    e_wall=st.floats(0.5e9, 250e9),
    nu=st.floats(0.0, 0.49),
    anchoring=st.sampled_from(ANCHORINGS),
)
def test_wave_speed_below_free_liquid_speed(k, rho, d, d_over_e, e_wall, nu, anchoring):
    a = wave_speed_pipe(k, rho, d, d / d_over_e, e_wall, nu, anchoring)
    # Wylie & Streeter (1993): any elastic wall slows the wave below sqrt(K/rho)
    assert 0.0 < a < math.sqrt(k / rho)


@given(
    d_over_e=st.floats(2.5, 300.0),
    nu=st.floats(0.0, 0.49),
    anchoring=st.sampled_from(ANCHORINGS),
)
def test_stiffer_wall_gives_faster_wave(d_over_e, nu, anchoring):
    soft = wave_speed_pipe(K_W20, RHO_W20, 0.3, 0.3 / d_over_e, 100e9, nu, anchoring)
    stiff = wave_speed_pipe(K_W20, RHO_W20, 0.3, 0.3 / d_over_e, 200e9, nu, anchoring)
    # common practice, no source: a rises with the wall's Young's modulus
    assert stiff > soft

"""Rate limits other than surge: static electricity (ISGOTT, IEC TS 60079-32-1) and venting."""

import pytest

from esdsurge.errors import PhysicsRangeError
from esdsurge.physics import ratelimits as rl

M3H = 1.0 / 3600.0


def test_isgott_maximum_rate_of_the_worked_example():
    rate = rl.isgott_max_rate(0.250) / M3H
    # ISGOTT 5th ed. (2006) 11.1.7, Fig. 11.2 worked example: smallest section a 250 mm hose,
    # 7 m/s, request 1,281 m^3/h; the book's round figures imply a 254.5 mm bore (REFERENCES
    # 5.1), hence the 4 % tolerance
    assert rate == pytest.approx(1281.0, rel=0.04)
    # exact area arithmetic for a 250.0 mm bore at 7 m/s (REFERENCES 5.1, derived)
    assert rate == pytest.approx(1237.0, abs=0.5)


def test_isgott_initial_rate_of_the_worked_example():
    rate = rl.isgott_initial_rate(0.250, 2) / M3H
    # ISGOTT 5th ed. (2006) 11.1.7, Fig. 11.2: two 250 mm tank inlets at 1 m/s, printed
    # 183 x 2 = 366 m^3/h (same rounding of the bore as above)
    assert rate == pytest.approx(366.0, rel=0.04)
    # and per inlet, 183 m^3/h printed for 1 m/s in 250 mm
    assert rl.velocity_rate(0.250, 1.0) / M3H == pytest.approx(183.0, rel=0.04)


def test_imo_venting_rule():
    # IMO MSC/Circ.585 para 2.7.2.1: transfer rate <= venting capacity / 1.25; REFERENCES 5.3
    # example: 1250 m^3/h of venting allows 1000 m^3/h
    assert rl.vent_limited_rate(1250.0 * M3H) / M3H == pytest.approx(1000.0, rel=1e-12)


@pytest.mark.parametrize(
    ("conductivity", "sulphur", "vd"),
    [
        (None, None, 0.25),  # low sulphur assumed, conductivity unknown
        (5e-12, 10e-6, 0.25),
        (20e-12, 10e-6, 0.38),
        (60e-12, 10e-6, 0.5),
        (None, 1e-3, 0.38),  # sulphur > 50 ppm, conductivity unknown
        (5e-12, 1e-3, 0.38),
        (20e-12, 1e-3, 0.5),
    ],
)
def test_iec_vd_table(conductivity, sulphur, vd):
    # IEC TS 60079-32-1:2013, road-tanker filling of low-conductivity fuels (values as read
    # in REFERENCES 5.2 from a secondary summary of the TS)
    assert rl.iec_vd_limit(conductivity, sulphur)[0] == vd


def test_iec_fill_rate_of_a_100_mm_fill_pipe():
    # IEC TS 60079-32-1 (REFERENCES 5.2, item 14 of the best checks): low-sulphur fuel of
    # unknown conductivity, d = 0.10 m -> v <= 0.25/0.10 = 2.5 m/s
    assert rl.iec_fill_velocity(0.10, None, None) == pytest.approx(2.5)
    # REFERENCES 5.2 derived example: v d = 0.38 m^2/s in a 0.10 m pipe -> 3.8 m/s -> 107 m^3/h
    v = rl.iec_fill_velocity(0.10, 5e-12, 1e-3)
    assert rl.velocity_rate(0.10, v) / M3H == pytest.approx(107.0, abs=0.5)


def test_iec_velocity_never_above_7_m_s():
    # IEC TS 60079-32-1: v <= 7 m/s in every case (a narrow fill pipe would allow more by v d)
    assert rl.iec_fill_velocity(0.02, 1e-9, 10e-6) == pytest.approx(7.0)


def test_static_accumulator_threshold():
    # ISGOTT 5th ed. 11.1.7.9: a conductivity above 50 pS/m cannot be assumed unless measured;
    # unknown counts as an accumulator
    assert rl.is_static_accumulator(None)
    assert rl.is_static_accumulator(49e-12)
    assert not rl.is_static_accumulator(50e-12)


def test_bad_values_are_refused():
    with pytest.raises(PhysicsRangeError, match="diameter must be positive"):
        rl.velocity_rate(0.0, 1.0)
    with pytest.raises(PhysicsRangeError, match="venting capacity must be positive"):
        rl.vent_limited_rate(0.0)
    with pytest.raises(PhysicsRangeError, match="sulphur content"):
        rl.iec_vd_limit(None, 2.0)
    with pytest.raises(PhysicsRangeError, match="conductivity must not be negative"):
        rl.is_static_accumulator(-1.0)

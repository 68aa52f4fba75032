"""Feedline checks against handbook formulas (Pozar, Microwave Engineering) and trade values.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy.constants import c

from planner.errors import PlannerWarning, UserError
from planner.link import feedline as fl

MHZ = 1e6


# Manufacturers' data sheets, from memory: typical coaxial attenuation near 400 MHz per 100 m
# (from memory, datasheet-typical, +/-25 %): RG-174 ~55, RG-58 ~30, RG-8X ~21, RG-213 ~15 dB.
@pytest.mark.parametrize(
    "name, expected_db_per_100m",
    [("RG-174", 55.0), ("RG-58", 30.0), ("RG-8X", 21.0), ("RG-213", 15.0)],
)
def test_catalog_near_400_mhz_matches_references(name, expected_db_per_100m):
    loss = fl.cable_loss_db(fl.get_cable(name), 400 * MHZ, 100.0)
    assert loss == pytest.approx(expected_db_per_100m, rel=0.25)


def test_catalog_fit_reproduces_its_own_points():
    # The fit k1 sqrt(f) + k2 f (conductor + dielectric loss) is the usual two-term cable
    # model; on the recalled datasheet-typical points it must stay within 15 % everywhere
    # (well inside the +/-25 % of the recall), and k1, k2 are non-negative. Consistency check:
    # the points are the module's own recalled values; the outside comparison is the test above.
    for name, spec in fl.CATALOG_POINTS.items():
        cable = fl.CABLES[name]
        assert cable.k1_db_per_100m_sqrt_mhz >= 0 and cable.k2_db_per_100m_per_mhz >= 0
        for f_mhz, db in spec["points"]:
            assert cable.loss_db_per_100m(f_mhz * MHZ) == pytest.approx(db, rel=0.15), (name, f_mhz)


def test_fit_recovers_known_coefficients():
    # Points generated from k1 = 1.2, k2 = 0.004 must give those coefficients back (least squares is exact).
    points = [(f, 1.2 * math.sqrt(f) + 0.004 * f) for f in (10, 50, 100, 200, 400, 1000)]
    cable = fl.cable_from_points("my-coax", points, impedance_ohm=50.0, velocity_factor=0.85)
    assert cable.k1_db_per_100m_sqrt_mhz == pytest.approx(1.2, rel=1e-9)
    assert cable.k2_db_per_100m_per_mhz == pytest.approx(0.004, rel=1e-9)
    assert (cable.fit_min_hz, cable.fit_max_hz) == (10 * MHZ, 1000 * MHZ)
    assert fl.get_cable("MY-COAX", {"my-coax": cable}) is cable


def test_velocity_factors_and_impedances():
    # Common practice (from memory): solid PE 0.66, foamed PE about 0.78-0.84, RG-6 is 75 ohm.
    for name in ("RG-174", "RG-58", "RG-213", "RG-214"):
        assert fl.CABLES[name].velocity_factor == pytest.approx(0.66)
    for name in ("RG-8X", "RG-6"):
        assert 0.78 <= fl.CABLES[name].velocity_factor <= 0.84
    assert fl.CABLES["RG-6"].impedance_ohm == 75.0
    assert all(cable.impedance_ohm == 50.0 for name, cable in fl.CABLES.items() if name != "RG-6")


def test_loss_grows_with_frequency_and_length():
    cable = fl.get_cable("RG-58")
    f = np.array([10, 30, 100, 145, 300, 435, 1000]) * MHZ
    loss = fl.cable_loss_db(cable, f, 10.0)
    assert np.all(np.diff(loss) > 0)
    # Matched loss in dB is proportional to length.
    assert fl.cable_loss_db(cable, 435 * MHZ, 20.0) == pytest.approx(2 * fl.cable_loss_db(cable, 435 * MHZ, 10.0))
    # Thicker cable loses less (trade fact, common practice): RG-174 > RG-58 > RG-8X > RG-213 at 435 MHz.
    per_100 = [fl.cable_loss_db(fl.get_cable(n), 435 * MHZ, 100) for n in ("RG-174", "RG-58", "RG-8X", "RG-213")]
    assert per_100 == sorted(per_100, reverse=True)


def test_feedline_total_adds_connectors():
    # CONNECTOR_LOSS_DB = 0.1 dB each (common practice, no published source).
    runs = [("RG-213", 12.0), ("RG-316", 0.5)]
    expected = (
        fl.cable_loss_db(fl.CABLES["RG-213"], 435 * MHZ, 12.0) + fl.cable_loss_db(fl.CABLES["RG-316"], 435 * MHZ, 0.5) + 4 * 0.1
    )
    assert fl.feedline_loss_db(runs, 435 * MHZ, connectors=4) == pytest.approx(expected)


def test_mismatch_loss_pozar():
    # Pozar: |Gamma| = (S-1)/(S+1), mismatch loss = -10 log10(1 - |Gamma|^2).
    # S = 1.5: |Gamma| = 0.5/2.5 = 0.2, 1 - 0.04 = 0.96, -10 log10(0.96) = 0.1773 dB.
    # S = 2:   |Gamma| = 1/3, 1 - 1/9 = 0.8889, -10 log10(0.8889) = 0.5115 dB.
    assert fl.mismatch_loss_db(1.5) == pytest.approx(0.177, abs=0.0005)
    assert fl.mismatch_loss_db(2.0) == pytest.approx(0.512, abs=0.001)
    assert fl.mismatch_loss_db(1.0) == 0.0
    # From an impedance: 100 ohm on 50 ohm is Gamma = 50/150 = 1/3, i.e. VSWR 2.
    assert fl.vswr_from_impedance(100.0) == pytest.approx(2.0)
    assert fl.vswr_from_impedance(25.0) == pytest.approx(2.0)
    assert fl.mismatch_loss_from_impedance_db(100.0) == pytest.approx(fl.mismatch_loss_db(2.0))
    # A 75 ohm line on 50 ohm: Gamma = 25/125 = 0.2, VSWR 1.5 (Pozar).
    assert fl.vswr_from_impedance(75.0, 50.0) == pytest.approx(1.5)
    with pytest.raises(UserError):
        fl.mismatch_loss_db(0.9)


def test_line_noise_worked_example():
    # Pozar, noise of a lossy line: loss L at 290 K adds (L - 1) 290 K at its input.
    # 1 dB: L = 10^0.1 = 1.2589, (0.2589)(290) = 75.1 K.
    assert fl.line_noise_temperature_k(1.0) == pytest.approx(75.1, abs=0.05)
    assert fl.line_noise_temperature_k(0.0) == 0.0
    # Cooler line, less noise: (L - 1) T is proportional to T.
    assert fl.line_noise_temperature_k(1.0, 145.0) == pytest.approx(75.09 / 2, abs=0.05)


def test_quarter_wave_line_inverts_impedance():
    # Pozar: Zin = Z0^2 / ZL for a quarter-wave line; 50^2 / 100 = 25 ohm, 50^2 / (25 + 25j) = 50 - 50j.
    length = fl.quarter_wave_length_m(435 * MHZ, 0.66)
    assert fl.line_input_impedance(50.0, 100.0, length, 435 * MHZ, 0.66) == pytest.approx(25.0, abs=1e-9)
    assert fl.line_input_impedance(50.0, 25 + 25j, length, 435 * MHZ, 0.66) == pytest.approx(50 - 50j, abs=1e-9)


def test_half_wave_line_repeats_load():
    # Pozar: a half-wave line repeats its load, Zin = ZL.
    length = 2 * fl.quarter_wave_length_m(145.9 * MHZ, 0.82)
    zl = 36.5 + 21.2j
    assert fl.line_input_impedance(50.0, zl, length, 145.9 * MHZ, 0.82) == pytest.approx(zl, abs=1e-9)


def test_short_circuited_eighth_wave_is_plus_j_z0():
    # Pozar: shorted stub Zin = j Z0 tan(beta l); l = lambda/8 gives tan(pi/4) = 1 -> j Z0.
    length = fl.quarter_wave_length_m(435 * MHZ, 0.66) / 2
    assert fl.line_input_impedance(50.0, 0.0, length, 435 * MHZ, 0.66) == pytest.approx(50j, abs=1e-9)
    # Open-circuited eighth wave: -j Z0 cot(beta l) = -j Z0.
    assert fl.line_input_impedance(50.0, np.inf, length, 435 * MHZ, 0.66) == pytest.approx(-50j, abs=1e-9)


def test_lossy_line_input_impedance():
    # Pozar: lossy line Zin = Z0 (ZL + Z0 tanh(gl)) / (Z0 + ZL tanh(gl)).
    # A matched load stays Z0 whatever the loss.
    length = fl.quarter_wave_length_m(435 * MHZ, 0.66)
    assert fl.line_input_impedance(50.0, 50.0, length, 435 * MHZ, 0.66, loss_db=3.0) == pytest.approx(50.0)
    # A shorted quarter wave with loss alpha*l: Zin = Z0 tanh(alpha l + j pi/2) = Z0 coth(alpha l).
    # 1 dB = 0.1151 Np, coth(0.1151) = 8.72, Zin = 436 ohm: real and finite instead of an open
    # circuit, the loss limits it.
    assert fl.line_input_impedance(50.0, 0.0, length, 435 * MHZ, 0.66, loss_db=1.0) == pytest.approx(
        50.0 / math.tanh(1.0 / (20 * math.log10(math.e))), rel=1e-9
    )
    # A long lossy line hides its load: 20 dB of line in front of a short looks close to Z0.
    # |Gamma_in| = 10^(-40/20) = 0.01, so |Zin - 50| < 1.1 ohm.
    zin = fl.line_input_impedance(50.0, 0.0, 3.3 * length, 435 * MHZ, 0.66, loss_db=20.0)
    assert abs(zin - 50.0) < 1.1


def test_quarter_wave_length_at_435_mhz():
    # vf c / (4 f) with scipy.constants.c: 0.8 * 299792458 / (4 * 435e6) = 0.1378 m,
    # "13-14 cm" (common practice, no published source).
    length = fl.quarter_wave_length_m(435 * MHZ, 0.8)
    assert length == pytest.approx(0.8 * c / (4 * 435e6))
    assert 0.13 <= length <= 0.14


def test_velocity_factor_from_measured_length():
    # A quarter-wave line measuring 9.2 cm at 435 MHz: 0.092 / (c / 435e6 / 4) = 0.534
    # (between 0.5 and 0.6; common practice, no published source).
    vf = fl.velocity_factor_from_length(0.092, 435 * MHZ)
    assert 0.5 < vf < 0.6
    assert vf == pytest.approx(0.092 / (c / 435e6 / 4))
    # Round trip with quarter_wave_length_m.
    assert fl.velocity_factor_from_length(fl.quarter_wave_length_m(145.9 * MHZ, 0.66), 145.9 * MHZ) == pytest.approx(0.66)
    # Half-wave (180 deg) electrical length halves the implied VF for the same length.
    assert fl.velocity_factor_from_length(0.092, 435 * MHZ, 180) == pytest.approx(vf / 2)
    with pytest.raises(UserError):
        fl.velocity_factor_from_length(0.5, 435 * MHZ)  # would need VF > 1


def test_unknown_cable_lists_allowed():
    with pytest.raises(UserError) as info:
        fl.get_cable("RG-999")
    message = str(info.value)
    assert "\n" not in message and "RG-999" in message
    for name in fl.CABLES:
        assert name in message
    # Names are matched ignoring case and dashes.
    assert fl.get_cable("rg213") is fl.CABLES["RG-213"]


def test_negative_length_is_a_user_error():
    with pytest.raises(UserError, match="length_m"):
        fl.cable_loss_db(fl.CABLES["RG-58"], 435 * MHZ, -1.0)


def test_out_of_fit_range_warns():
    cable = fl.CABLES["RG-213"]
    with pytest.warns(PlannerWarning, match="outside"):
        fl.cable_loss_db(cable, 2400 * MHZ, 10.0)
    with pytest.warns(PlannerWarning, match="outside"):
        fl.cable_loss_db(cable, 3 * MHZ, 10.0)
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # inside the range: no warning
        fl.cable_loss_db(cable, 435 * MHZ, 10.0)


def test_bad_user_cables():
    with pytest.raises(UserError):
        fl.cable_from_points("one-point", [(100, 5.0)])
    with pytest.raises(UserError):
        fl.cable_from_points("negative", [(100, -5.0), (400, 10.0)])
    with pytest.raises(UserError):
        fl.cable_from_points("vf", [(100, 5.0), (400, 10.0)], velocity_factor=1.2)
    with pytest.raises(UserError):
        fl.cable_from_coefficients("zero", 0.0, 0.0)
    cable = fl.cable_from_coefficients("given", 0.5, 0.002, fit_min_hz=50 * MHZ, fit_max_hz=500 * MHZ)
    # 0.5 sqrt(400) + 0.002 * 400 = 10.8 dB/100 m.
    assert fl.cable_loss_db(cable, 400 * MHZ, 100.0) == pytest.approx(10.8)

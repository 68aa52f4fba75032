"""Phasing-harness arithmetic (planner.antenna.harness) against hand calculations, the polarization
ellipse traced independently (Born & Wolf, Principles of Optics, sec. 1.4; Stutzman, Polarization
in Electromagnetic Systems), Stutzman's polarization efficiency and Pozar's line
formulas (Microwave Engineering).

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.constants import c as C_M_S  # reference value of the speed of light (exact, SI)

from planner.antenna.harness import (
    HARNESS_UNITS,
    axial_ratio_db_from_circular,
    axial_ratio_db_from_phase_error,
    harness_report,
    phase_error_deg,
    polarization_loss_db_from_phase_error,
)
from planner.errors import UserError

# --------------------------------------------------------------------- independent references


def ellipse_by_time_trace(jones: tuple[complex, complex], samples: int = 20000) -> tuple[float, int]:
    """Axial ratio (linear) and sense of the real field E(t) = Re{[E_x, E_y] e^{jwt}} traced over one
    period: AR = max |E(t)| / min |E(t)| (the ellipse's semi-axes, Born & Wolf sec. 1.4.2). Sense:
    the sign of (E x dE/dt) . z; positive is a right-hand rotation about the direction of travel
    +z, i.e. RHCP (IEEE Std 145)."""
    wt = np.linspace(0.0, 2.0 * np.pi, samples, endpoint=False)
    phasor = np.exp(1j * wt)
    ex, ey = np.real(jones[0] * phasor), np.real(jones[1] * phasor)
    dex, dey = np.real(1j * jones[0] * phasor), np.real(1j * jones[1] * phasor)
    r = np.hypot(ex, ey)
    spin = np.mean(ex * dey - ey * dex)
    return float(r.max() / r.min()), int(np.sign(round(spin, 12)))


def ellipse_by_stokes(a1: float, a2: float, delta_rad: float) -> float:
    """Axial ratio (linear) from the Stokes parameters of E_x = a1, E_y = a2 e^{j delta}: the
    ellipticity angle chi has sin 2chi = 2 a1 a2 sin(delta) / (a1^2 + a2^2), AR = 1 / |tan chi|
    (Born & Wolf sec. 1.4.2, eq. 33-35)."""
    chi = 0.5 * math.asin(2.0 * a1 * a2 * math.sin(delta_rad) / (a1**2 + a2**2))
    return math.inf if chi == 0 else 1.0 / abs(math.tan(chi))


def stutzman_efficiency(r_w: float, r_a: float, dtilt_rad: float = 0.0) -> float:
    """Polarization efficiency between signed axial ratios (Stutzman)."""
    return 0.5 + (4 * r_w * r_a + (1 - r_w**2) * (1 - r_a**2) * math.cos(2 * dtilt_rad)) / (2 * (1 + r_w**2) * (1 + r_a**2))


# --------------------------------------------------------------------- lengths and velocity factor


def test_quarter_wave_at_435_mhz_with_foam_cable_is_13_to_14_cm():
    # Common practice, no published source: a quarter wave of foam coax (VF ~0.8) at 70 cm is
    # 13-14 cm. By hand: 0.8 * 299792458 / 435e6 / 4 = 0.1378 m.
    report = harness_report(435e6, 0.8)
    assert 0.13 < report["quarter_wave_length_m"] < 0.14
    assert report["quarter_wave_length_m"] == pytest.approx(0.8 * C_M_S / 435e6 / 4, rel=1e-12)
    assert report["line_length_m"] == report["quarter_wave_length_m"]
    assert report["line_electrical_length_deg"] == pytest.approx(90.0, abs=1e-9)


def test_measured_quarter_wave_of_9_2_cm_implies_vf_between_0_5_and_0_6():
    # Common practice, no published source: a quarter-wave piece that measures 9.2 cm at 435 MHz
    # is a slow (small-diameter, solid-dielectric or miniature) line, VF 0.5-0.6.
    # By hand: 0.092 / (299792458 / 435e6 / 4) = 0.534.
    report = harness_report(435e6, 0.66, measured_length_m=0.092)
    assert 0.5 < report["velocity_factor_measured"] < 0.6
    assert report["velocity_factor_measured"] == pytest.approx(0.092 / (C_M_S / 435e6 / 4), rel=1e-12)
    assert report["velocity_factor_used"] == report["velocity_factor_measured"]
    assert report["quarter_wave_length_m"] == pytest.approx(0.092, rel=1e-12)
    # Cutting by the nominal 0.66 instead would have left the line too long by this much:
    nominal = 0.66 * C_M_S / 435e6 / 4
    assert report["nominal_cut_error_m"] == pytest.approx(nominal - 0.092, rel=1e-12)
    vf_by_hand = 0.092 / (C_M_S / 435e6 / 4)  # 0.534, worked above (not the report's own value)
    by_hand_deg = 360.0 * (nominal - 0.092) / (vf_by_hand * C_M_S / 435e6)
    assert report["nominal_cut_phase_error_deg"] == pytest.approx(by_hand_deg, rel=1e-12)
    assert report["nominal_cut_axial_ratio_db"] > 1.0  # ~21 deg of error spoils the circularity


def test_one_centimetre_error_at_435_mhz_vf_066_by_hand():
    # By hand: d = 360 * dl / (vf c / f).
    expected = 360.0 * 0.01 / (0.66 * C_M_S / 435e6)
    assert phase_error_deg(0.01, 435e6, 0.66) == pytest.approx(expected, rel=1e-12)
    assert phase_error_deg(-0.01, 435e6, 0.66) == pytest.approx(-expected, rel=1e-12)
    assert 7.8 < expected < 8.0  # sanity of the hand value itself: lambda_g = 45.5 cm
    report = harness_report(435e6, 0.66, length_error_m=0.01)
    assert report["phase_error_deg"] == pytest.approx(expected, rel=1e-12)
    assert report["line_electrical_length_deg"] == pytest.approx(90.0 + expected, rel=1e-12)


# --------------------------------------------------------------------- axial ratio and loss


def test_zero_phase_error_is_circular_and_lossless():
    assert axial_ratio_db_from_phase_error(0.0) == pytest.approx(0.0, abs=1e-9)
    assert polarization_loss_db_from_phase_error(0.0) == pytest.approx(0.0, abs=1e-12)
    report = harness_report(435e6, 0.66)
    assert report["axial_ratio_db"] == pytest.approx(0.0, abs=1e-9)
    assert report["polarization_loss_db"] == pytest.approx(0.0, abs=1e-12)


@pytest.mark.parametrize("d_deg", [1.0, 7.9, -12.0, 30.0, 60.0, 75.0, 120.0])
@pytest.mark.parametrize("rho", [1.0, 0.8, 1.3])
def test_axial_ratio_matches_the_ellipse_traced_in_time_and_the_stokes_form(d_deg, rho):
    # Jones vector [1, rho e^{-j(90 + d)}] (x east, y north, travelling up, e^{jwt}).
    delta = -math.radians(90.0 + d_deg)
    jones = (1.0 + 0j, rho * complex(math.cos(delta), math.sin(delta)))
    ar_trace, _ = ellipse_by_time_trace(jones)
    ar_stokes = ellipse_by_stokes(1.0, rho, delta)
    assert ar_trace == pytest.approx(ar_stokes, rel=1e-6)  # the two references agree
    got = axial_ratio_db_from_phase_error(d_deg, rho)
    assert got == pytest.approx(20.0 * math.log10(ar_stokes), abs=1e-6)


@pytest.mark.parametrize("d_deg", [3.0, 25.0, 70.0])
@pytest.mark.parametrize("rho", [1.0, 0.7])
def test_axial_ratio_from_circular_components_matches_the_traced_ellipse(d_deg, rho):
    # E_R = (E_x + j E_y)/sqrt2, E_L = (E_x - j E_y)/sqrt2 of the Jones vector, then the ellipse
    # traced in time (Born & Wolf sec. 1.4.2) as the reference.
    delta = -math.radians(90.0 + d_deg)
    jones = (1.0 + 0j, rho * complex(math.cos(delta), math.sin(delta)))
    e_r = (jones[0] + 1j * jones[1]) / math.sqrt(2.0)
    e_l = (jones[0] - 1j * jones[1]) / math.sqrt(2.0)
    ar_trace, _ = ellipse_by_time_trace(jones)
    assert axial_ratio_db_from_circular(e_r, e_l) == pytest.approx(20.0 * math.log10(ar_trace), abs=1e-4)  # trace sampling
    assert axial_ratio_db_from_circular(abs(e_r), abs(e_l)) == pytest.approx(20.0 * math.log10(ar_trace), abs=1e-4)


@pytest.mark.parametrize("d_deg", [0.0, 5.0, 20.0, 45.0, 80.0, 100.0, 150.0])
def test_loss_against_rhcp_matches_stutzman_efficiency(d_deg):
    # Independent route: AR and sense from the traced ellipse, then Stutzman's efficiency with an
    # ideal RHCP antenna (r_a = +1), no tilt dependence for a circular antenna (Stutzman).
    delta = -math.radians(90.0 + d_deg)
    jones = (1.0 + 0j, complex(math.cos(delta), math.sin(delta)))
    ar, sense = ellipse_by_time_trace(jones)
    r_w = sense * ar
    p = stutzman_efficiency(r_w, 1.0)
    assert polarization_loss_db_from_phase_error(d_deg) == pytest.approx(-10.0 * math.log10(p), abs=1e-6)


def test_loss_definition_from_circular_components():
    # -10 log10(|E_R|^2 / (|E_R|^2 + |E_L|^2)) with E_R, E_L the projections on the IEEE unit
    # vectors (x - j y)/sqrt2 and (x + j y)/sqrt2 (conjugated inner product).
    d = 25.0
    e = np.array([1.0, np.exp(-1j * math.radians(90.0 + d))])
    u_r = np.array([1.0, -1j]) / math.sqrt(2.0)
    u_l = np.array([1.0, 1j]) / math.sqrt(2.0)
    e_r, e_l = np.vdot(u_r, e), np.vdot(u_l, e)
    expected = -10.0 * math.log10(abs(e_r) ** 2 / (abs(e_r) ** 2 + abs(e_l) ** 2))
    assert polarization_loss_db_from_phase_error(d) == pytest.approx(expected, abs=1e-12)
    # For equal amplitudes this is -10 log10((1 + cos d)/2) (the same algebra done by hand).
    assert expected == pytest.approx(-10.0 * math.log10((1.0 + math.cos(math.radians(d))) / 2.0), abs=1e-12)


def test_opposite_sense_when_the_line_is_three_quarters_off():
    # A 180 deg error turns the lag into a lead: LHCP, no coupling into RHCP (clipped at 60 dB).
    assert axial_ratio_db_from_phase_error(180.0) == pytest.approx(0.0, abs=1e-9)
    assert polarization_loss_db_from_phase_error(180.0) == pytest.approx(60.0)
    _, sense = ellipse_by_time_trace((1.0, np.exp(-1j * math.radians(270.0))))
    assert sense == -1
    _, sense = ellipse_by_time_trace((1.0, np.exp(-1j * math.radians(90.0))))
    assert sense == +1  # the ideal lag is right-handed about the up axis: RHCP going up


def test_axial_ratio_is_vectorized():
    d = np.array([0.0, 10.0, 20.0])
    ar = axial_ratio_db_from_phase_error(d)
    assert ar.shape == (3,)
    assert np.all(np.diff(ar) > 0)


# --------------------------------------------------------------------- impedance along the line


def test_quarter_wave_transformer_on_the_report():
    # Pozar, Microwave Engineering: a lossless quarter-wave line gives Zin = Z0^2 / ZL.
    report = harness_report(435e6, 0.8, z0_ohm=50.0, load_ohm=100.0)
    assert complex(report["input_impedance_ohm"]) == pytest.approx(25.0 + 0j, abs=1e-9)
    assert report["input_vswr"] == pytest.approx(2.0, rel=1e-9)
    # Mismatch loss -10 log10(1 - |Gamma|^2) with Gamma = 1/3 (Pozar).
    assert report["input_mismatch_loss_db"] == pytest.approx(-10 * math.log10(1 - 1 / 9), rel=1e-9)
    # The general formula Zin = Z0 (ZL + j Z0 tan bl)/(Z0 + j ZL tan bl), 1 cm too long.
    report = harness_report(435e6, 0.8, z0_ohm=75.0, load_ohm=60 + 20j, length_error_m=0.01)
    bl = 2 * math.pi * report["line_length_m"] / (0.8 * C_M_S / 435e6)
    zl = 60 + 20j
    expected = 75.0 * (zl + 1j * 75.0 * math.tan(bl)) / (75.0 + 1j * zl * math.tan(bl))
    assert complex(report["input_impedance_ohm"]) == pytest.approx(expected, rel=1e-12)


def test_network_on_a_synthetic_matrix():
    # Two uncoupled elements equal to the line impedance: the quarter-wave line delays b by exactly
    # 90 deg (Pozar line transformation) and the two in parallel present Z/2 at the feed.
    z = np.diag([50.0 + 0j, 50.0 + 0j])
    report = harness_report(435e6, 0.8, z0_ohm=50.0, impedance_matrix=z)
    assert report["network_phase_deg"] == pytest.approx(-90.0, abs=1e-9)
    assert report["network_axial_ratio_db"] == pytest.approx(0.0, abs=1e-6)
    assert complex(report["network_feed_impedance_ohm"]) == pytest.approx(25.0 + 0j, abs=1e-9)
    # A 1 cm error shows up in the network phase one for one (matched line: pure delay).
    report = harness_report(435e6, 0.8, z0_ohm=50.0, impedance_matrix=z, length_error_m=0.01)
    d = 360.0 * 0.01 / (0.8 * C_M_S / 435e6)
    assert report["network_phase_error_deg"] == pytest.approx(d, abs=1e-9)
    assert report["network_axial_ratio_db"] == pytest.approx(report["axial_ratio_db"], abs=1e-9)


def test_report_keys_carry_their_units():
    report = harness_report(
        435e6, 0.66, measured_length_m=0.1, load_ohm=50, length_error_m=0.002, impedance_matrix=np.diag([50.0, 50.0])
    )
    for key in report:
        assert key in HARNESS_UNITS, key
        unit = HARNESS_UNITS[key]
        suffix = {"m": "_m", "deg": "_deg", "dB": "_db", "ohm": "_ohm", "MHz": "_mhz"}.get(unit)
        if suffix:
            assert key.endswith(suffix), key


@pytest.mark.parametrize(
    "kwargs, word",
    [
        ({"frequency_hz": -1.0, "velocity_factor": 0.66}, "frequency_hz"),
        ({"frequency_hz": 435e6, "velocity_factor": 1.2}, "velocity_factor"),
        ({"frequency_hz": 435e6, "velocity_factor": 0.66, "length_error_m": -1.0}, "length_error_m"),
        ({"frequency_hz": 435e6, "velocity_factor": 0.66, "measured_length_m": 0.0}, "measured_length_m"),
        ({"frequency_hz": 435e6, "velocity_factor": 0.66, "z0_ohm": 0.0}, "z0_ohm"),
        ({"frequency_hz": 435e6, "velocity_factor": 0.66, "load_ohm": "abc"}, "load_ohm"),
    ],
)
def test_bad_inputs_are_one_line_user_errors(kwargs, word):
    with pytest.raises(UserError) as info:
        harness_report(**kwargs)
    message = str(info.value)
    assert "\n" not in message and word in message


# --------------------------------------------------------------------- the table's current ratio


def balanis_axial_ratio_db(ex0: float, ey0: float, delta_rad: float) -> float:
    """Axial ratio of E_x = ex0, E_y = ey0 e^{j delta} from the polarization ellipse's semi-axes
    (Balanis, Antenna Theory, sec. 2.12, eqs. 2-66 and 2-67; from memory):
    OA, OB = sqrt(1/2 (ex0^2 + ey0^2 +/- sqrt(ex0^4 + ey0^4 + 2 ex0^2 ey0^2 cos(2 delta))))."""
    root = math.sqrt(ex0**4 + ey0**4 + 2.0 * ex0**2 * ey0**2 * math.cos(2.0 * delta_rad))
    major = math.sqrt(0.5 * (ex0**2 + ey0**2 + root))
    minor = math.sqrt(max(0.5 * (ex0**2 + ey0**2 - root), 0.0))
    return math.inf if minor == 0 else 20.0 * math.log10(major / minor)


def test_zero_error_axial_ratio_starts_from_the_tables_current_ratio():
    from planner.antenna import load_pattern
    from planner.antenna.harness import axial_ratio_db_from_current_ratio, current_ratio_from_header, ratio_cut_effects
    from tests.conftest import ROOT

    # The round loops' harness leaves an amplitude ratio near 2 (their header says so): far from ideal.
    header = load_pattern(ROOT / "patterns" / "loops-round-close.csv").header
    magnitude, phase_deg = current_ratio_from_header(header)
    assert magnitude > 1.5 and header["current_ratio_b_over_a"].startswith(f"{magnitude:.4f} at {phase_deg:.2f} deg")
    rows = ratio_cut_effects(magnitude, phase_deg, 436e6, 0.82, [-0.005, 0.0, 0.005])
    nominal = rows[1]
    expected = balanis_axial_ratio_db(1.0, magnitude, math.radians(phase_deg))
    assert nominal["axial_ratio_db"] == pytest.approx(expected, abs=0.05)
    assert float(axial_ratio_db_from_current_ratio(magnitude, phase_deg)) == pytest.approx(expected, abs=0.05)
    assert nominal["axial_ratio_db"] > float(axial_ratio_db_from_phase_error(0.0)) + 3.0  # not the ideal start
    # A line 5 mm long delays b by 360 x 5 mm / (vf c / f) more (guided wavelength, Pozar sec. 2.1).
    lag_deg = 360.0 * 0.005 / (0.82 * C_M_S / 436e6)
    assert rows[2]["current_ratio_phase_deg"] == pytest.approx(phase_deg - lag_deg, abs=1e-9)
    assert rows[2]["axial_ratio_db"] == pytest.approx(
        balanis_axial_ratio_db(1.0, magnitude, math.radians(phase_deg - lag_deg)), abs=0.05
    )


def test_current_ratio_header_line_errors_name_the_line():
    from planner.antenna.harness import current_ratio_from_header

    assert current_ratio_from_header({}) is None
    with pytest.raises(UserError, match="current_ratio_b_over_a") as error:
        current_ratio_from_header({"current_ratio_b_over_a": "about one"}, "x.csv")
    assert "x.csv" in str(error.value) and "\n" not in str(error.value)

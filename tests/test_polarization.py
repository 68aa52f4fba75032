"""Polarization states and mismatch (planner.link.polarization).

External references used here:
* Stutzman, *Polarization in Electromagnetic Systems*: polarization efficiency in
  ellipticity/tilt form and in axial-ratio form (Stutzman), the
  Poincare-sphere meaning of the efficiency, and the classic cases (same-sense circular
  0 dB, linear against circular 3.01 dB, opposite circular no coupling).
* IEEE Std 145 definitions: axial ratio, sense, and the decomposition of a state into
  RHCP and LHCP components, AR = (|E_R| + |E_L|) / (|E_R| - |E_L|).
* Malus's law for two linear polarizations: p = cos^2(angle between them).
* The arcsine law of cos(theta) for theta uniform (standard probability), checked by a
  seeded numpy Monte Carlo, and scipy.integrate.quad for tilt averages.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate

from planner.errors import UserError
from planner.link.polarization import (
    MAX_LOSS_DB,
    WavePolarization,
    axial_ratio_db_to_tau,
    efficiency,
    polarization_loss_db,
    tau_from_partial_gains,
)

THREE_DB = 10 * math.log10(2.0)  # 3.0103 dB
INF = float("inf")


def stutzman_axial_ratio_form(r_w, r_a, dtilt_rad):
    """Stutzman: p from signed axial ratios (|r| >= 1, sign = sense)."""
    return 0.5 + (4 * r_w * r_a + (1 - r_w**2) * (1 - r_a**2) * np.cos(2 * dtilt_rad)) / (2 * (1 + r_w**2) * (1 + r_a**2))


def jones(tau_rad, tilt_rad):
    """Unit Jones vector of an ellipse with ellipticity tau and tilt (textbook construction)."""
    base = np.array([np.cos(tau_rad), 1j * np.sin(tau_rad)])
    c, s = np.cos(tilt_rad), np.sin(tilt_rad)
    return np.array([[c, -s], [s, c]]) @ base


# ---------------------------------------------------------------- classic cases (Stutzman)


@pytest.mark.parametrize("kind, g_r, g_l", [("rhcp", 3.0, -INF), ("lhcp", -INF, 2.0)])
def test_same_sense_circular_is_lossless(kind, g_r, g_l):
    expected, fade = polarization_loss_db(WavePolarization(kind), g_r, g_l)
    assert expected == pytest.approx(0.0, abs=1e-12)
    assert fade == pytest.approx(0.0, abs=1e-12)


@pytest.mark.parametrize("kind", ["linear", "linear-tumbling"])
@pytest.mark.parametrize("g_r, g_l", [(0.0, -INF), (-INF, 5.0)])
def test_linear_against_circular_is_3db(kind, g_r, g_l):
    # Linear wave into a circular antenna: half the power whatever the tilt (Stutzman).
    expected, fade = polarization_loss_db(WavePolarization(kind), g_r, g_l)
    assert expected == pytest.approx(THREE_DB, abs=1e-9)
    assert fade == pytest.approx(THREE_DB, abs=1e-9)
    assert THREE_DB == pytest.approx(3.0103, abs=1e-4)


def test_opposite_circular_is_rejected():
    # Cross-circular: no coupling at all (Stutzman); clipped at 60 dB.
    for kind, g_r, g_l in (("lhcp", 0.0, -INF), ("rhcp", -INF, 0.0), ("lhcp", 0.0, -80.0)):
        expected, fade = polarization_loss_db(WavePolarization(kind), g_r, g_l)
        assert expected >= 60.0 and fade >= 60.0
        assert expected == pytest.approx(MAX_LOSS_DB) and np.isfinite(expected)
    assert MAX_LOSS_DB == pytest.approx(60.0)


def test_matched_linear_and_malus_law():
    # Two linear states (tau = 0): p = cos^2(dtilt) (Malus's law) -- 1 at 0, 0 at 90 deg.
    assert efficiency(0.0, 1.0, 0.0, 1.0, math.cos(0.0)) == pytest.approx(1.0)
    p90 = efficiency(0.0, 1.0, 0.0, 1.0, math.cos(math.pi))
    assert p90 == pytest.approx(0.0, abs=1e-15)
    with np.errstate(divide="ignore"):
        assert -10 * np.log10(p90) == INF
    dtilt = np.linspace(0, np.pi, 37)
    np.testing.assert_allclose(efficiency(0.0, 1.0, 0.0, 1.0, np.cos(2 * dtilt)), np.cos(dtilt) ** 2, atol=1e-15)


# ---------------------------------------------------------------- equivalences

signed_ar = st.tuples(st.floats(0.0, 60.0), st.sampled_from([-1.0, 1.0]))


@settings(max_examples=200, deadline=None)
@given(w=signed_ar, a=signed_ar, dtilt=st.floats(-math.pi, math.pi))
def test_tau_form_equals_axial_ratio_form(w, a, dtilt):
    # Module formula (ellipticity angle) against Stutzman's axial-ratio form.
    (ar_w_db, sense_w), (ar_a_db, sense_a) = w, a
    s_w, c_w = axial_ratio_db_to_tau(ar_w_db, sense_w)
    s_a, c_a = axial_ratio_db_to_tau(ar_a_db, sense_a)
    r_w = sense_w * 10 ** (ar_w_db / 20)
    r_a = sense_a * 10 ** (ar_a_db / 20)
    p = efficiency(s_w, c_w, s_a, c_a, math.cos(2 * dtilt))
    assert float(p) == pytest.approx(float(stutzman_axial_ratio_form(r_w, r_a, dtilt)), abs=1e-12)


@settings(max_examples=200, deadline=None)
@given(
    tau_w=st.floats(-math.pi / 4, math.pi / 4),
    tau_a=st.floats(-math.pi / 4, math.pi / 4),
    tilt_w=st.floats(-math.pi, math.pi),
    tilt_a=st.floats(-math.pi, math.pi),
)
def test_efficiency_equals_jones_vector_overlap(tau_w, tau_a, tilt_w, tilt_a):
    # Independent computation: p = |<e_a, e_w>|^2 for unit Jones vectors described in one
    # frame (Stutzman; equivalently cos^2 of half the Poincare-sphere angle).
    overlap = abs(np.vdot(jones(tau_a, tilt_a), jones(tau_w, tilt_w))) ** 2
    p = efficiency(
        math.sin(2 * tau_w),
        math.cos(2 * tau_w),
        math.sin(2 * tau_a),
        math.cos(2 * tau_a),
        math.cos(2 * (tilt_w - tilt_a)),
    )
    assert float(p) == pytest.approx(overlap, abs=1e-12)


@settings(max_examples=100, deadline=None)
@given(ar_db=st.floats(0.0, 80.0), sense=st.sampled_from([-1.0, 1.0]), level_dbic=st.floats(-30, 20))
def test_axial_ratio_and_partial_gains_agree(ar_db, sense, level_dbic):
    # IEEE Std 145: AR = (|E_R| + |E_L|) / (|E_R| - |E_L|), so the minor circular component
    # is (AR - 1)/(AR + 1) of the major one in field.  An antenna with those partial gains
    # must have the same (sin2tau, cos2tau) as the axial-ratio conversion gives.
    ar = 10 ** (ar_db / 20)
    minor_db = 20 * math.log10((ar - 1) / (ar + 1)) if ar > 1 else -INF  # circular: no minor part
    if sense > 0:
        g_r, g_l = level_dbic, level_dbic + minor_db
    else:
        g_r, g_l = level_dbic + minor_db, level_dbic
    s1, c1 = axial_ratio_db_to_tau(ar_db, sense)
    s2, c2 = tau_from_partial_gains(g_r, g_l)
    assert float(s2) == pytest.approx(float(s1), abs=1e-9)
    assert float(c2) == pytest.approx(float(c1), abs=1e-9)


@settings(max_examples=200, deadline=None)
@given(g_r=st.floats(-60.0, 20.0), g_l=st.floats(-60.0, 20.0))
def test_circular_wave_receives_its_partial_gain(g_r, g_l):
    # Partial gains (IEEE Std 145): a circular wave of one sense sees exactly that sense's
    # partial gain, i.e. (G_R + G_L) * p == G_R for RHCP and == G_L for LHCP.
    total = 10 ** (g_r / 10) + 10 ** (g_l / 10)
    for kind, partial_dbic in (("rhcp", g_r), ("lhcp", g_l)):
        expected, fade = polarization_loss_db(WavePolarization(kind), g_r, g_l)
        received_db = 10 * math.log10(total) - float(expected)
        if partial_dbic - 10 * math.log10(total) > -MAX_LOSS_DB + 1e-6:  # not clipped
            assert received_db == pytest.approx(partial_dbic, abs=1e-9)
        assert float(fade) == pytest.approx(float(expected), abs=1e-12)


def test_elliptical_wave_into_circular_antenna():
    # Circular decomposition (IEEE Std 145): an RHCP wave of axial ratio AR carries
    # rho^2 / (1 + rho^2) of its power in LHCP, rho = (AR - 1)/(AR + 1); a pure RHCP
    # antenna keeps the rest, whatever the tilt.  3 dB AR -> 0.125 dB.
    for ar_db in (0.5, 1.0, 3.0, 6.0, 20.0):
        ar = 10 ** (ar_db / 20)
        rho = (ar - 1) / (ar + 1)
        expected, fade = polarization_loss_db(WavePolarization("rhcp", ar_db), 0.0, -INF)
        assert expected == pytest.approx(10 * math.log10(1 + rho**2), abs=1e-12)
        assert fade == pytest.approx(expected, abs=1e-12)
    expected, _ = polarization_loss_db(WavePolarization("rhcp", 3.0), 0.0, -INF)
    assert expected == pytest.approx(0.125, abs=0.001)


# ---------------------------------------------------------------- random tilt


@pytest.mark.parametrize(
    "wave, g_r, g_l",
    [
        (WavePolarization("linear-tumbling"), 0.0, 0.0),  # linear ground antenna
        (WavePolarization("linear-tumbling"), 0.0, -10.0),  # elliptical ground antenna
        (WavePolarization("linear"), 2.0, -3.0),
        (WavePolarization("rhcp", 6.0), 0.0, -4.0),  # elliptical wave
        (WavePolarization("lhcp", 3.0), -1.0, 0.0),
    ],
)
@pytest.mark.parametrize("percentile", [50.0, 90.0, 95.0])
def test_tilt_statistics_against_monte_carlo(wave, g_r, g_l, percentile):
    # Seeded Monte Carlo over a uniformly random tilt difference (the arcsine law of
    # cos 2dtilt): the mean-efficiency loss and the loss percentile agree with the closed form.
    rng = np.random.default_rng(20270104)
    dtilt = rng.uniform(0.0, np.pi, 400_000)
    s_w, c_w = wave.tau()
    s_a, c_a = tau_from_partial_gains(g_r, g_l)
    p = efficiency(s_w, c_w, s_a, c_a, np.cos(2 * dtilt))
    loss = -10 * np.log10(np.maximum(p, 1e-6))
    expected, fade = polarization_loss_db(wave, g_r, g_l, fade_percentile=percentile)
    assert float(expected) == pytest.approx(-10 * np.log10(p.mean()), abs=0.01)
    assert float(fade) == pytest.approx(np.percentile(loss, percentile), abs=0.05)


def test_tilt_average_against_quadrature():
    # Expected loss is the loss of the efficiency averaged over tilt (scipy quad over 0..pi).
    wave = WavePolarization("rhcp", 4.0)
    s_w, c_w = wave.tau()
    for g_r, g_l in ((0.0, -3.0), (0.0, 0.0), (-5.0, 1.0)):
        s_a, c_a = tau_from_partial_gains(g_r, g_l)
        mean, _ = integrate.quad(
            lambda t: float(efficiency(s_w, c_w, s_a, c_a, math.cos(2 * t))) / math.pi,  # noqa: B023 (called at once, in this iteration)
            0,
            math.pi,
        )
        expected, _ = polarization_loss_db(wave, g_r, g_l)
        assert float(expected) == pytest.approx(-10 * math.log10(mean), abs=1e-9)


def test_tumbling_linear_into_linear_ground_antenna():
    # G_R == G_L is a linear ground antenna: p = cos^2(dtilt) (Malus).  Mean of cos^2 over
    # a uniform tilt is 1/2 -> 3.01 dB expected.  The loss is below L 90 % of the time when
    # p is above its 10 % lower quantile; cos 2dtilt has the arcsine law, whose 10 % lower
    # quantile is -cos(0.1 pi), so p_fade = 0.5 (1 - cos(0.1 pi)) and the fade is
    # 10 log10(1 / (0.5 (1 - cos(0.1 pi)))) = 16.11 dB.
    expected, fade = polarization_loss_db(WavePolarization("linear-tumbling"), 1.5, 1.5)
    assert expected == pytest.approx(THREE_DB, abs=1e-9)
    assert fade == pytest.approx(10 * math.log10(1 / (0.5 * (1 - math.cos(0.1 * math.pi)))), abs=1e-9)
    assert fade == pytest.approx(16.11, abs=0.01)


@settings(max_examples=100, deadline=None)
@given(
    ar_db=st.floats(0.0, 40.0),
    kind=st.sampled_from(["rhcp", "lhcp", "linear", "linear-tumbling"]),
    g_r=st.floats(-60.0, 20.0),
    g_l=st.floats(-60.0, 20.0),
    q=st.floats(50.0, 100.0),
)
def test_fade_never_below_expected_and_finite(ar_db, kind, g_r, g_l, q):
    # Above the median the percentile loss is at least the mean-efficiency loss, since the
    # median of cos 2dtilt equals its mean (0) for the arcsine law; and never infinite.
    expected, fade = polarization_loss_db(WavePolarization(kind, ar_db), g_r, g_l, fade_percentile=q)
    assert 0.0 <= float(expected) <= float(fade) + 1e-12
    assert float(fade) <= MAX_LOSS_DB + 1e-9


def test_exactly_circular_wave_has_no_tilt_dependence():
    # cos2tau_w = 0 removes the tilt term (Stutzman): expected == fade for any antenna.
    g_r = np.array([0.0, -3.0, 2.0, -20.0])
    g_l = np.array([-10.0, -3.0, 5.0, 0.0])
    expected, fade = polarization_loss_db(WavePolarization("lhcp", 0.0), g_r, g_l)
    np.testing.assert_array_equal(expected, fade)


# ---------------------------------------------------------------- arrays and validation


def test_vectorized_broadcasting():
    g_r = np.linspace(-10, 5, 12).reshape(3, 4)
    g_l = np.array([-20.0, -5.0, 0.0, 3.0])
    expected, fade = polarization_loss_db(WavePolarization("linear-tumbling"), g_r, g_l)
    assert expected.shape == fade.shape == (3, 4)
    for i in range(3):
        for j in range(4):
            e, f = polarization_loss_db(WavePolarization("linear-tumbling"), g_r[i, j], g_l[j])
            assert expected[i, j] == pytest.approx(float(e), abs=1e-12)
            assert fade[i, j] == pytest.approx(float(f), abs=1e-12)


def test_deep_nulls_stay_finite():
    # Extreme partial-gain ratios neither overflow nor produce infinities.
    g_r = np.array([300.0, -300.0, 0.0, -INF, 0.0])
    g_l = np.array([-300.0, 300.0, -INF, 0.0, 0.0])
    for kind in ("rhcp", "lhcp", "linear", "linear-tumbling"):
        with np.errstate(all="raise"):
            expected, fade = polarization_loss_db(WavePolarization(kind, 2.0), g_r, g_l)
        assert np.all(np.isfinite(expected)) and np.all(np.isfinite(fade))
        assert np.all(fade <= MAX_LOSS_DB + 1e-9)


def test_linear_kinds_ignore_axial_ratio_and_agree():
    # Documented choice: a fixed linear and a tumbling linear wave are both treated with a
    # uniformly random tilt, and a linear wave has no finite axial ratio.
    g_r, g_l = np.array([0.0, 1.0, -4.0]), np.array([-7.0, 1.0, 2.0])
    a = polarization_loss_db(WavePolarization("linear"), g_r, g_l)
    b = polarization_loss_db(WavePolarization("linear-tumbling", 12.0), g_r, g_l)
    np.testing.assert_array_equal(a[0], b[0])
    np.testing.assert_array_equal(a[1], b[1])


def test_axial_ratio_conversion_limits():
    # tau = +45 deg RHCP, -45 deg LHCP, 0 linear (IEEE Std 145 sign convention).
    s, c = axial_ratio_db_to_tau([0.0, 0.0, INF, 10.0], [1, -1, 1, 0])
    np.testing.assert_allclose(s, [1.0, -1.0, 0.0, 0.0], atol=1e-15)
    np.testing.assert_allclose(c, [0.0, 0.0, 1.0, 1.0], atol=1e-15)
    with pytest.raises(UserError, match="axial_ratio_db"):
        axial_ratio_db_to_tau(-1.0, 1)


def test_wave_validation():
    with pytest.raises(UserError, match="allowed: rhcp, lhcp, linear, linear-tumbling"):
        WavePolarization("elliptical")
    for bad in (-0.5, float("nan")):
        with pytest.raises(UserError, match="axial_ratio_db"):
            WavePolarization("rhcp", bad)
    for bad in (-1.0, 100.5):
        with pytest.raises(UserError, match="fade_percentile"):
            polarization_loss_db(WavePolarization("rhcp"), 0.0, -10.0, fade_percentile=bad)
    with pytest.raises(UserError) as info:
        WavePolarization("circular")
    assert "\n" not in str(info.value)

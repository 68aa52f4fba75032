"""The link budget: published values, a budget recomputed by hand, the command and bad input.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import json
import re
from math import log10, pi, sqrt

import numpy as np
import pytest
from scipy.constants import Boltzmann

from planner.antenna import load_pattern
from planner.link.budget import (
    BOLTZMANN_DBW_PER_K_HZ,
    evaluate,
    free_space_loss_db,
    pass_budget,
)
from planner.link.safety import general_public_limit_mw_cm2, min_distance_m, power_density_mw_cm2
from planner.scenario import load_scenario
from planner.study import Study
from tests.conftest import DEMO, ROOT
from tests.conftest import run_planner as run

CONTRACT_KEYS = {
    "satellite",
    "direction",
    "frequency_mhz",
    "elevation_deg",
    "azimuth_deg",
    "range_km",
    "eirp_dbw",
    "free_space_loss_db",
    "atmospheric_loss_db",
    "polarization_loss_db",
    "rx_gain_total_dbi",
    "feedline_loss_db",
    "system_noise_temperature_k",
    "g_over_t_dbk",
    "cn0_dbhz",
    "ebn0_db",
    "required_ebn0_db",
    "margin_db",
}


@pytest.fixture(scope="module")
def study():
    return Study.from_scenario(load_scenario(DEMO))


def test_free_space_loss_itu_p525():
    # ITU-R P.525: L = 32.45 + 20 log f[MHz] + 20 log d[km]; 435 MHz at 1000 km = 145.22 dB
    # The constant 32.45 is rounded, hence 0.01 dB.
    assert free_space_loss_db(435e6, 1000.0) == pytest.approx(145.22, abs=0.01)
    assert free_space_loss_db(145.8e6, 2574.5) == pytest.approx(32.45 + 20 * log10(145.8) + 20 * log10(2574.5), abs=0.01)


def test_boltzmann_constant():
    # CODATA 2018 exact value via scipy.constants: k = 1.380649e-23 J/K -> -228.60 dBW/K/Hz.
    assert Boltzmann == 1.380649e-23
    assert BOLTZMANN_DBW_PER_K_HZ == pytest.approx(-228.60, abs=0.005)


def test_end_to_end_budget_recomputed_by_hand(study):
    # One fixed geometry (on the pattern's grid, so no interpolation question), every term
    # recomputed here from the published formulas and the scenario's values.
    sat = study.scenario.satellite_named("WRENLING-1")
    candidate = study.candidate("turnstile-close")
    receiver = study.scenario.receiver
    setup = study.downlink_setup("WRENLING-1", "turnstile-close")
    azimuth, elevation, range_km = 0.0, 30.0, 1000.0
    row = evaluate(setup, [azimuth], [elevation], [range_km]).iloc[0]

    f_mhz = sat.downlink_mhz
    eirp = 10 * log10(sat.tx_power_w) + sat.antenna_gain_dbi - sat.line_loss_db
    fsl = 32.45 + 20 * log10(f_mhz) + 20 * log10(range_km)  # ITU-R P.525
    pattern = load_pattern(candidate.pattern.path)
    g_r_db, g_l_db = (float(v) for v in pattern.gains_dbic(azimuth, elevation))
    g_r, g_l = 10 ** (g_r_db / 10), 10 ** (g_l_db / 10)
    # Stutzman: a tumbling linear wave into an antenna of partial gains G_R, G_L receives
    # on average (G_R + G_L) / 2, whatever the antenna's axial ratio.
    rx_gain = 10 * log10(g_r + g_l)
    pol_loss = -10 * log10(0.5)
    # Feedline: the catalog's cable at this frequency plus 0.1 dB a connector.
    ((cable, length_m),) = candidate.feedline
    loss_db = (cable.k1_db_per_100m_sqrt_mhz * sqrt(f_mhz) + cable.k2_db_per_100m_per_mhz * f_mhz) * length_m / 100
    loss_db += candidate.connectors * candidate.connector_loss_db
    # Friis (Proc. IRE 1944) with the LNA at the antenna: T = T_ant + T_lna + T_line/G_lna + L T_rx / G_lna,
    # T_line = (L - 1) 290 K, T(NF) = 290 (10^(NF/10) - 1), behind the feed mismatch M = 1 - |Gamma|^2
    # (Pozar: M of the carrier and of the antenna noise pass, so the chain is divided by M at the terminals).
    # T_ant is the planner's own pattern integral (no outside value for this table); the integral
    # itself is checked against closed forms and scipy quad in test_noise.py.
    t_ant = setup.noise_terms["antenna_noise_temperature_k"]
    t_lna = 290 * (10 ** (receiver.lna_noise_figure_db / 10) - 1)
    t_rx = 290 * (10 ** (receiver.receiver_noise_figure_db / 10) - 1)
    g_lna = 10 ** (receiver.lna_gain_db / 10)
    line = 10 ** (loss_db / 10)
    vswr = candidate.feed_vswr or 1.0
    m = 1 - ((vswr - 1) / (vswr + 1)) ** 2
    t_sys = t_ant + (t_lna + (line - 1) * receiver.feedline_temperature_k / g_lna + line * t_rx / g_lna) / m
    assert row["system_noise_temperature_k"] == pytest.approx(t_sys, rel=1e-6)
    # Gaseous loss from itur's P.676 exact mode in the P.835 sea-level atmosphere, not read back
    # from the row (about 0.04 dB; the station's 142 m changes it by under 0.001 dB).
    from itur.models import itu676

    atm = float(itu676.gaseous_attenuation_slant_path(f_mhz / 1e3, elevation, 7.5, 1013.25, 288.15, mode="exact").value)
    assert 0.0 < atm < 1.0  # well under 1 dB on UHF above 5 deg (ITU-R P.676)
    assert row["atmospheric_loss_db"] == pytest.approx(atm, abs=0.01)

    cn0 = eirp - fsl - atm - pol_loss + rx_gain + 228.60 - 10 * log10(t_sys)
    ebn0 = cn0 - 10 * log10(sat.data_rate_bps)
    from planner.link.modem import required_ebn0_db

    required = required_ebn0_db("gmsk", sat.target_ber, gmsk_bt=sat.gmsk_bt) + sat.implementation_loss_db - sat.coding_gain_db
    assert row["eirp_dbw"] == pytest.approx(eirp, abs=1e-9)
    assert row["free_space_loss_db"] == pytest.approx(fsl, abs=0.01)
    assert row["polarization_loss_db"] == pytest.approx(pol_loss, abs=1e-6)
    assert row["rx_gain_total_dbi"] == pytest.approx(rx_gain, abs=1e-6)
    assert row["feedline_loss_db"] == pytest.approx(loss_db, abs=1e-6)
    assert row["mismatch_loss_db"] == pytest.approx(-10 * log10(m), abs=1e-9)
    assert row["g_over_t_dbk"] == pytest.approx(rx_gain - 10 * log10(t_sys), abs=1e-6)
    assert row["cn0_dbhz"] == pytest.approx(cn0, abs=0.02)
    assert row["ebn0_db"] == pytest.approx(ebn0, abs=0.02)
    assert row["margin_db"] == pytest.approx(ebn0 - required, abs=0.02)


def test_rhcp_wave_meets_the_rhcp_partial_gain(study):
    # Stutzman: an RHCP wave couples only to the antenna's RHCP component, so gain minus
    # polarization loss equals the RHCP partial gain (dBic) in every direction.
    setup = study.downlink_setup("OSTRAVEL-2", "turnstile-close")
    setup.wave = type(setup.wave)("rhcp", 0.0)
    elevation = np.linspace(1, 90, 30)
    frame = evaluate(setup, np.zeros_like(elevation), elevation, np.full_like(elevation, 1500.0))
    effective = frame["rx_gain_total_dbi"] - frame["polarization_loss_db"]
    assert np.allclose(effective, frame["rx_gain_rhcp_dbic"], atol=1e-6)


def test_lna_at_the_antenna_beats_lna_in_the_shack(study):
    # Friis: loss ahead of the first gain stage adds directly to the noise temperature
    # (common practice, follows from Friis 1944).
    at_antenna = study.downlink_setup("WRENLING-1", "turnstile-close")
    in_shack = study.downlink_setup("WRENLING-1", "turnstile-close-rg58-lna-in-shack")
    assert in_shack.system_noise_temperature_k > at_antenna.system_noise_temperature_k + 100


def test_pass_budget_is_a_frame_along_the_track(study):
    setup = study.downlink_setup("TARNBECK", "turnstile-close")
    p = [x for x in study.passes() if x.satellite == "TARNBECK"][0]
    frame = pass_budget(setup, p)
    assert len(frame) == len(p.track)
    assert CONTRACT_KEYS - {"satellite", "direction", "frequency_mhz"} <= set(frame.columns)
    assert np.all(np.isfinite(frame["margin_db"]))
    # Free-space loss follows the range: lowest at closest approach.
    assert frame["free_space_loss_db"].idxmin() == frame["range_km"].idxmin()


def test_uplink_budget(study):
    setup = study.uplink_setup("CALDERWISP")
    tx = study.scenario.transmitter
    assert setup.eirp_dbw == pytest.approx(10 * log10(tx.power_w) + tx.antenna_gain_dbi - setup.tx_line_loss_db)
    row = evaluate(setup, [0.0], [45.0], [800.0]).iloc[0]
    # RHCP station wave into a tumbling linear satellite antenna: 3.01 dB (Stutzman).
    assert row["polarization_loss_db"] == pytest.approx(3.0103, abs=1e-3)
    # The path terms are worked here, not read back from the row: free-space loss by ITU-R P.525
    # (32.45 + 20 log f[MHz] + 20 log d[km]; the rounded constant is good to 0.003 dB), gaseous loss
    # from itur's P.676 exact mode in the P.835 sea-level atmosphere (the station stands at 142 m,
    # which changes this VHF loss of about 0.009 dB by about 0.0001 dB).
    from itur.models import itu676

    f_mhz = study.scenario.satellite_named("CALDERWISP").uplink_mhz
    fsl = 32.45 + 20 * log10(f_mhz) + 20 * log10(800.0)
    atm = float(itu676.gaseous_attenuation_slant_path(f_mhz / 1e3, 45.0, 7.5, 1013.25, 288.15, mode="exact").value)
    assert row["free_space_loss_db"] == pytest.approx(fsl, abs=0.01)
    assert row["atmospheric_loss_db"] == pytest.approx(atm, abs=0.005)
    # Satellite receiver of the scenario: 0 dBi, 1000 K; k = -228.60 dBW/K/Hz (CODATA).
    expected_cn0 = setup.eirp_dbw - fsl - atm - 3.0103 + 0.0 + 228.60 - 10 * log10(1000.0)
    assert row["cn0_dbhz"] == pytest.approx(expected_cn0, abs=0.01)


def test_rf_exposure_far_field():
    # FCC OET Bulletin 65, eq. 3: S = EIRP / (4 pi R^2). 100 W at 10 m: 0.0796 W/m^2 = 0.00796 mW/cm^2.
    assert power_density_mw_cm2(100.0, 10.0) == pytest.approx(100 / (4 * pi * 100) / 10, rel=1e-12)
    # General-population limits (47 CFR 1.1310, from memory): 0.2 mW/cm^2 at VHF, f/1500 at UHF.
    assert general_public_limit_mw_cm2(145.9e6) == 0.2
    assert general_public_limit_mw_cm2(436e6) == pytest.approx(436 / 1500)
    assert power_density_mw_cm2(100.0, min_distance_m(100.0, 145.9e6)) == pytest.approx(0.2)


def _far_field_mw_cm2(eirp_w, distance_m):
    """FCC OET Bulletin 65 (1997), eq. 3: S = EIRP / (4 pi R^2), W/m^2; 1 W/m^2 = 0.1 mW/cm^2."""
    return eirp_w / (4 * pi * distance_m**2) / 10


def _fcc_general_population_mw_cm2(f_mhz):
    """47 CFR 1.1310 Table 1(B), general population/uncontrolled exposure, 30 MHz-100 GHz (from memory)."""
    return 0.2 if f_mhz <= 300 else f_mhz / 1500 if f_mhz <= 1500 else 1.0


def _check_recommended(distance_m, eirp_w, f_mhz):
    limit = _fcc_general_population_mw_cm2(f_mhz)
    assert round(distance_m, 1) == distance_m  # a whole number of tenths of a metre
    assert _far_field_mw_cm2(eirp_w, distance_m) <= limit
    if distance_m > 0.1:  # 0.1 m is the floor
        assert _far_field_mw_cm2(eirp_w, distance_m - 0.1) > limit


@pytest.mark.parametrize(
    "eirp_w, f_mhz",
    [
        (25.2, 145.88),  # about the demo's uplink: the unrounded 1.002 m must give 1.1 m, not 1.0 m
        (4 * pi * 2.0, 145.9),  # exactly 1 m at 0.2 mW/cm^2 = 2 W/m^2
        (100.0, 145.9),
        (1500.0, 435.0),
        (40.0, 2400.0),
        (0.001, 145.9),  # far inside 0.1 m: the floor
    ],
)
def test_recommended_distance_is_rounded_up_to_within_the_limit(eirp_w, f_mhz):
    from planner.link.safety import recommended_distance_m

    _check_recommended(recommended_distance_m(eirp_w, f_mhz * 1e6), eirp_w, f_mhz)
    assert general_public_limit_mw_cm2(f_mhz * 1e6) == pytest.approx(_fcc_general_population_mw_cm2(f_mhz))


# --- the command ------------------------------------------------------------------------


def test_budget_json_has_the_contract_keys():
    result = run("budget", DEMO, "--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--pass", "1", "--format", "json")
    assert result.returncode == 0, result.stderr
    document = json.loads(result.stdout)
    assert CONTRACT_KEYS <= set(document)
    assert document["direction"] == "downlink" and document["satellite"] == "WRENLING-1"
    assert document["pass_summary"]["max_margin_db"] >= document["pass_summary"]["min_margin_db"]
    # WRENLING-1 has no uplink: no RF exposure estimate with its budget, though the scenario has a transmitter.
    assert "RF exposure" not in result.stderr


def test_budget_ladder_prints_every_term():
    result = run("budget", DEMO, "--satellite", "OSTRAVEL-2", "--candidate", "turnstile-far", "--elevation-deg", "20")
    assert result.returncode == 0, result.stderr
    for term in ("eirp_dbw", "free_space_loss_db", "g_over_t_dbk", "cn0_dbhz", "margin_db"):
        assert term in result.stdout
    assert "RF exposure" not in result.stdout  # OSTRAVEL-2 has no uplink


def assert_user_error(result, *fragments):
    assert result.returncode == 2, result.stderr
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert len(lines) == 1 and "Traceback" not in result.stderr, result.stderr
    for fragment in fragments:
        assert fragment in lines[0], lines[0]


def demo_pattern_text(name="turnstile-close"):
    """The quoted pattern path of a demo candidate as demo_variant writes it."""
    return f'"{load_scenario(DEMO).candidate_named(name).pattern}"'


def demo_variant(tmp_path, old, new):
    text = DEMO.read_text().replace('"../', f'"{ROOT}/')
    assert old in text
    path = tmp_path / "variant.toml"
    path.write_text(text.replace(old, new, 1))
    return path


def test_bad_budget_inputs(tmp_path):
    args = ("--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--elevation-deg", "30")
    broken = tmp_path / "broken.csv"
    broken.write_text("# frequency_mhz = 436\nelevation_deg,gain_rhcp_dbic,gain_lhcp_dbic\n0,abc,-20\n")
    path = demo_variant(tmp_path, demo_pattern_text(), f'"{broken}"')
    assert_user_error(run("budget", path, *args), "broken.csv")
    path = demo_variant(tmp_path, 'cable = "RG-58"', 'cable = "RG-999"')
    assert_user_error(
        run(
            "budget", path, "--satellite", "WRENLING-1", "--candidate", "turnstile-close-rg58-lna-in-shack", "--elevation-deg", "30"
        ),
        "RG-999",
    )
    path = demo_variant(tmp_path, "length_m = 20.0", "length_m = -3")
    assert_user_error(run("budget", path, *args), "length_m")
    path = demo_variant(tmp_path, "downlink_mhz = 436.525", "downlink_mhz = 60000")
    assert_user_error(run("budget", path, *args), "downlink_mhz")
    assert_user_error(run("budget", DEMO, "--satellite", "NOSAT", *args[2:]), "NOSAT")
    assert_user_error(run("budget", DEMO, "--satellite", "WRENLING-1", "--candidate", "nope", "--elevation-deg", "30"), "nope")
    assert_user_error(run("budget", DEMO, "--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--pass", "999"), "--pass")


# --- each term once: mismatch, pre-LNA losses, sky, slant range, refusals, notes ------------
# These tests set their own feed VSWR, pre-LNA losses and tables where it matters, so they hold
# whatever candidates the demo ships.


def _m(vswr):
    """Mismatch factor M = 1 - |Gamma|^2, |Gamma| = (VSWR - 1) / (VSWR + 1) (Pozar)."""
    vswr = 1.0 if vswr is None else vswr
    return 1 - ((vswr - 1) / (vswr + 1)) ** 2


def _main_run_db(candidate, f_hz):
    ((cable, length_m),) = candidate.feedline
    return float(cable.loss_db_per_100m(f_hz)) * length_m / 100 + candidate.connectors * candidate.connector_loss_db


def _hand_chain_k(receiver, pre_db, f_loss_db, lna_at_antenna=True):
    """Friis by hand at the 50 ohm side of the mismatch: pre-LNA line, LNA, feedline, receiver."""
    t0 = receiver.feedline_temperature_k
    t_lna = 290 * (10 ** (receiver.lna_noise_figure_db / 10) - 1)
    t_rx = 290 * (10 ** (receiver.receiver_noise_figure_db / 10) - 1)
    g = 10 ** (receiver.lna_gain_db / 10)
    pre, line = 10 ** (pre_db / 10), 10 ** (f_loss_db / 10)
    if lna_at_antenna:
        return (pre - 1) * t0 + pre * t_lna + pre * (line - 1) * t0 / g + pre * line * t_rx / g
    return (pre * line - 1) * t0 + pre * line * t_lna + pre * line * t_rx / g


def test_cn0_change_with_vswr_matches_the_formula_by_hand():
    # Pozar (noise of a mismatched source): a mismatch M = 1 - |Gamma|^2 passes M of the carrier and
    # M of the antenna noise, so C/N0 = M C / k (M T_A + T_chain). VSWR 4 (|Gamma| = 0.6, M = 0.64)
    # set on a demo candidate, against the same candidate matched (VSWR 1).
    from dataclasses import replace

    study = Study.from_scenario(load_scenario(DEMO))
    receiver = study.scenario.receiver
    base = study.candidate("turnstile-close")
    rows, setups = {}, {}
    for vswr in (4.0, 1.0):
        variant = study.with_candidate(replace(base, feed_vswr_override=vswr))
        assert variant.candidate("turnstile-close").feed_vswr_source == "scenario"
        setups[vswr] = variant.downlink_setup("WRENLING-1", "turnstile-close")
        rows[vswr] = evaluate(setups[vswr], [0.0], [30.0], [1000.0]).iloc[0]
    row, setup, m = rows[4.0], setups[4.0], 0.64
    assert _m(4.0) == pytest.approx(m)
    t_a = setup.antenna_noise_temperature_k
    t_chain = _hand_chain_k(receiver, 0.0, _main_run_db(base, setup.frequency_hz))
    available_dbw = (
        row["eirp_dbw"]
        - row["free_space_loss_db"]
        - row["atmospheric_loss_db"]
        - row["polarization_loss_db"]
        + row["rx_gain_total_dbi"]
    )
    cn0 = available_dbw + 10 * log10(m) + 228.5991 - 10 * log10(m * t_a + t_chain)
    assert row["received_power_dbw"] == pytest.approx(available_dbw, abs=1e-9)
    assert row["mismatch_loss_db"] == pytest.approx(-10 * log10(m), abs=1e-9)
    assert row["system_noise_temperature_k"] == pytest.approx(t_a + t_chain / m, rel=1e-9)
    assert row["cn0_dbhz"] == pytest.approx(cn0, abs=1e-3)
    assert row["g_over_t_dbk"] == pytest.approx(row["rx_gain_total_dbi"] - 10 * log10(t_a + t_chain / m), abs=1e-9)
    # C/N0 moves by 10 log10 M - 10 log10((M T_A + T_chain) / (T_A + T_chain)) from the matched antenna.
    change = 10 * log10(m) - 10 * log10((m * t_a + t_chain) / (t_a + t_chain))
    assert row["cn0_dbhz"] - rows[1.0]["cn0_dbhz"] == pytest.approx(change, abs=1e-6)
    # Charging M against the carrier but not against the antenna noise was pessimistic by about 1 dB here.
    old_cn0 = available_dbw + 10 * log10(m) + 228.5991 - 10 * log10(t_a + t_chain)
    assert 0.5 < row["cn0_dbhz"] - old_cn0 < 1.5


def _variant_study(tmp_path, old, new):
    return Study.from_scenario(load_scenario(demo_variant(tmp_path, old, new)))


PRE_LNA = 'pre_lna_feedline = [{ cable = "RG-58", length_m = 1.5 }]\npre_lna_connectors = 2\npre_lna_loss_db = 0.3\n'


def test_pre_lna_losses_are_charged_before_the_lna(tmp_path):
    # Friis (Proc. IRE 1944): loss ahead of the LNA adds (L - 1) T_line and multiplies the rest by L.
    # A 1.5 m RG-58 jumper, 2 connectors at 0.1 dB and a 0.3 dB bias-tee before the LNA.
    study = _variant_study(tmp_path, 'name = "turnstile-close"\n', 'name = "turnstile-close"\n' + PRE_LNA)
    receiver = study.scenario.receiver
    candidate = study.candidate("turnstile-close")
    setup = study.downlink_setup("WRENLING-1", "turnstile-close")
    f_hz = setup.frequency_hz
    m = _m(candidate.feed_vswr)
    ((jumper, jumper_m),) = candidate.pre_lna_feedline
    pre_db = float(jumper.loss_db_per_100m(f_hz)) * jumper_m / 100 + 2 * 0.1 + 0.3
    f_loss_db = _main_run_db(candidate, f_hz)
    t_a = setup.antenna_noise_temperature_k
    assert setup.pre_lna_loss_db == pytest.approx(pre_db, abs=1e-9)
    assert setup.system_noise_temperature_k == pytest.approx(t_a + _hand_chain_k(receiver, pre_db, f_loss_db) / m, rel=1e-9)
    assert setup.noise_terms["pre_lna_noise_k"] == pytest.approx((10 ** (pre_db / 10) - 1) * receiver.feedline_temperature_k / m)
    row = evaluate(setup, [0.0], [30.0], [1000.0]).iloc[0]
    assert row["pre_lna_loss_db"] == pytest.approx(pre_db)
    assert row["feedline_loss_db"] == pytest.approx(f_loss_db)  # the main run is unchanged
    # Charged before the LNA, about 1 dB costs tens of kelvin; after it (the old bookkeeping) next to nothing.
    plain = Study.from_scenario(load_scenario(DEMO)).downlink_setup("WRENLING-1", "turnstile-close")
    assert setup.system_noise_temperature_k - plain.system_noise_temperature_k > 50.0
    # With the LNA in the shack the pre-LNA losses simply join the run before it.
    name = "turnstile-close-rg58-lna-in-shack"
    shack = _variant_study(tmp_path, f'name = "{name}"\n', f'name = "{name}"\n' + PRE_LNA)
    candidate = shack.candidate(name)
    setup = shack.downlink_setup("WRENLING-1", name)
    chain = _hand_chain_k(receiver, pre_db, _main_run_db(candidate, f_hz), lna_at_antenna=False)
    expected = setup.antenna_noise_temperature_k + chain / _m(candidate.feed_vswr)
    assert setup.system_noise_temperature_k == pytest.approx(expected, rel=1e-9)


def test_pre_lna_defaults_from_the_receiver_and_old_scenarios_keep_their_meaning(tmp_path):
    study = _variant_study(tmp_path, "feedline_temperature_k = 290\n", "feedline_temperature_k = 290\npre_lna_loss_db = 0.2\n")
    assert study.candidate("turnstile-far").pre_lna_loss_db == 0.2
    assert study.candidate("turnstile-far").pre_lna_connectors == 0
    # The demo gives none: zero loss before the LNA, the old Friis sum unchanged (test above by hand).
    demo = Study.from_scenario(load_scenario(DEMO))
    assert demo.downlink_setup("WRENLING-1", "turnstile-far").pre_lna_loss_db == 0.0
    # A candidate's own value wins over the receiver's.
    both = _variant_study(tmp_path, 'name = "turnstile-far"\n', 'name = "turnstile-far"\npre_lna_loss_db = 0.0\n')
    assert both.candidate("turnstile-far").pre_lna_loss_db == 0.0


def test_ladder_shows_pre_lna_row_chain_and_noise_breakdown(tmp_path):
    path = demo_variant(
        tmp_path, 'name = "turnstile-close"\n', 'name = "turnstile-close"\nfeed_vswr = 4.0\npre_lna_loss_db = 0.4\n'
    )
    result = run(
        "budget", path, "--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--elevation-deg", "30", "--format", "json"
    )
    assert result.returncode == 0, result.stderr
    document = json.loads(result.stdout)
    assert document["pre_lna_loss_db"] == pytest.approx(0.4)
    assert document["mismatch_loss_db"] == pytest.approx(-10 * log10(0.64), abs=1e-9)  # 1.94 dB
    noise = document["noise"]
    for key in ("pre_lna_noise_k", "lna_noise_k", "feedline_noise_k", "receiver_noise_k", "antenna_sky_atmosphere_k"):
        assert key in noise
    assert noise["pre_lna_noise_k"] == pytest.approx((10**0.04 - 1) * 290 / 0.64)
    parts = (
        noise["antenna_noise_temperature_k"]
        + noise["pre_lna_noise_k"]
        + noise["lna_noise_k"]
        + noise["feedline_noise_k"]
        + noise["receiver_noise_k"]
    )
    assert parts == pytest.approx(document["system_noise_temperature_k"], rel=1e-9)
    assert document["chain_noise_temperature_k"] == pytest.approx(noise["receiver_chain_temperature_k"], rel=1e-9)
    # The ladder recomputes by hand: C/N0 = available carrier - 10 log10 k - 10 log10 T_sys.
    assert document["cn0_dbhz"] == pytest.approx(
        document["received_power_dbw"] - document["boltzmann_dbw_per_k_hz"] - 10 * log10(document["system_noise_temperature_k"]),
        abs=1e-9,
    )
    assert document["notes"] == []  # the VSWR is given
    assert {t["key"] for t in document["terms"]} >= {"pre_lna_loss_db", "chain_noise_temperature_k"}
    text = run("budget", path, "--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--elevation-deg", "30").stdout
    assert "pre_lna_loss_db" in text and "pre_lna_noise_k" in text


def test_uplink_has_no_pre_lna_row(study):
    setup = study.uplink_setup("CALDERWISP")
    from planner.link.budget import ladder_values

    values = ladder_values(setup, evaluate(setup, [0.0], [45.0], [800.0]).iloc[0])
    assert values["pre_lna_loss_db"] is None and values["antenna_noise_temperature_k"] is None


def test_sky_temperature_of_a_candidate_includes_the_atmosphere(study):
    # ITU-R P.372 clear-air emission: a few kelvin for these UHF patterns, and the station height passed on.
    from planner.link.noise import antenna_noise_temperature_k

    setup = study.downlink_setup("WRENLING-1", "turnstile-close")
    pattern = study.candidate("turnstile-close").pattern
    f_hz = setup.frequency_hz
    without = antenna_noise_temperature_k(pattern, f_hz, "rural", atmospheric_emission=False)
    with_air = antenna_noise_temperature_k(pattern, f_hz, "rural", altitude_m=study.station.altitude_m)
    assert setup.antenna_noise_temperature_k == pytest.approx(with_air.total_k, rel=1e-12)
    assert 0.5 < with_air.total_k - without.total_k < 6.0
    assert setup.noise_terms["antenna_sky_atmosphere_k"] == pytest.approx(with_air.atmosphere_k)


def test_slant_range_from_the_station_wgs84_position_against_skyfield(study):
    # skyfield (wgs84 geodetic site, ITRS): a point at the computed range along (az, el) of the site's
    # geodetic frame is at the orbit's geocentric radius, and skyfield sees it at that elevation,
    # azimuth and distance.
    from skyfield.api import load, wgs84
    from skyfield.toposlib import ITRSPosition
    from skyfield.units import Distance

    from planner.link.budget import slant_range_km

    station = study.station
    topos = wgs84.latlon(station.latitude_deg, station.longitude_deg, elevation_m=station.altitude_m)
    when = load.timescale(builtin=True).utc(2027, 1, 4)
    radius_km = 6928.0
    for elevation, azimuth in [(0.0, 45.0), (10.0, 0.0), (10.0, 90.0), (30.0, 200.0), (89.0, 10.0), (-2.0, 300.0)]:
        d = slant_range_km(elevation, radius_km, station, azimuth)
        e, a = np.radians(elevation), np.radians(azimuth)
        u = np.array([np.cos(e) * np.sin(a), np.cos(e) * np.cos(a), np.sin(e)]) @ station.enu_rotation
        point = topos.itrs_xyz.km + d * u
        assert np.linalg.norm(point) == pytest.approx(radius_km, abs=1e-6)
        alt, az, distance = (ITRSPosition(Distance(km=point)) - topos).at(when).altaz()
        assert alt.degrees == pytest.approx(elevation, abs=1e-6)
        assert distance.km == pytest.approx(d, abs=1e-6)
        assert (az.degrees - azimuth + 180) % 360 - 180 == pytest.approx(0.0, abs=1e-6)
    # The station's geocentric radius (WGS84 at 52.1 deg N, 142 m: 6365.0 km) and not the equatorial
    # 6378.137 km: at 10 deg the range to 6928 km is about 40 km longer than the equatorial formula says.
    assert np.linalg.norm(topos.itrs_xyz.km) == pytest.approx(6364.99, abs=0.01)
    r = 6378.137
    equatorial = sqrt(radius_km**2 - (r * np.cos(np.radians(10))) ** 2) - r * np.sin(np.radians(10))
    assert slant_range_km(10.0, radius_km, station, 0.0) - equatorial > 30.0


def test_budget_at_an_elevation_uses_the_station_radius(study):
    from planner.link.budget import orbit_radii_km, slant_range_km

    result = run(
        "budget", DEMO, "--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--elevation-deg", "10", "--format", "json"
    )
    assert result.returncode == 0, result.stderr
    document = json.loads(result.stdout)
    satrec = next(t for t in study.targets if t.display_name == "WRENLING-1").element_set.satrec
    assert document["range_km"] == pytest.approx(slant_range_km(10.0, orbit_radii_km(satrec)[1], study.station, 0.0), rel=1e-9)
    assert "WGS84" in document["geometry"]


def test_range_the_orbit_cannot_give_is_refused(study):
    from planner.link.budget import orbit_radii_km, slant_range_km

    args = ("budget", DEMO, "--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--elevation-deg", "30")
    assert_user_error(run(*args, "--range-km", "100"), "--range-km", "100 km", "WRENLING-1", "elevation 30 deg", "allowed")
    assert_user_error(run(*args, "--range-km", "40000"), "--range-km", "allowed")
    satrec = next(t for t in study.targets if t.display_name == "WRENLING-1").element_set.satrec
    fine = slant_range_km(30.0, orbit_radii_km(satrec)[1], study.station, 0.0)
    assert run(*args, "--range-km", f"{fine:.1f}").returncode == 0


def test_pattern_far_from_its_frequency_is_refused_and_near_it_warns(tmp_path, study):
    args = ("--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--elevation-deg", "30")
    table = study.candidate("turnstile-close").pattern
    name, mhz = table.path.name, f"{table.frequency_hz / 1e6:g} MHz"
    far = demo_variant(tmp_path, "downlink_mhz = 436.525", f"downlink_mhz = {table.frequency_hz / 1e6 * 1.28:.3f}")
    assert_user_error(run("budget", far, *args), "turnstile-close", name, mhz, "allowed: within 20 %")
    near = demo_variant(tmp_path, "downlink_mhz = 436.525", f"downlink_mhz = {table.frequency_hz / 1e6 * 1.05:.3f}")
    result = run("budget", near, *args)
    assert result.returncode == 0, result.stderr
    assert "warning" in result.stderr and f"{name} was computed at {mhz}" in result.stderr
    quiet = run("budget", DEMO, *args)
    assert "was computed at" not in quiet.stderr


def test_no_feed_data_is_said_in_the_ladder_and_the_comparison(tmp_path):
    # An image-theory turnstile table (closed form, no feed network) carries no feed_vswr; the demo's
    # wire-solver tables do. One candidate is pointed at such a table.
    from planner.antenna import write_pattern
    from planner.antenna.registry import build_pattern

    bare = tmp_path / "bare-turnstile.csv"
    write_pattern(bare, build_pattern("image-turnstile", spacing_wavelengths=0.25, frequency_hz=436e6))
    assert load_pattern(bare).feed_vswr is None
    path = demo_variant(tmp_path, demo_pattern_text(), f'"{bare}"')
    args = ("--satellite", "WRENLING-1", "--elevation-deg", "30")
    document = json.loads(run("budget", path, *args, "--candidate", "turnstile-close", "--format", "json").stdout)
    assert len(document["notes"]) == 1 and "no feed mismatch charged for turnstile-close" in document["notes"][0]
    assert "bare-turnstile.csv" in document["notes"][0]
    assert document["mismatch_loss_db"] == 0.0
    text = run("budget", path, *args, "--candidate", "turnstile-close").stdout
    assert "note: no feed mismatch charged for turnstile-close" in text and "[[candidate]]" in text
    assert "no feed mismatch" not in run("budget", path, *args, "--candidate", "loops-round-close").stdout
    report = tmp_path / "report"
    one_day = path.with_name("one-day.toml")
    one_day.write_text(path.read_text().replace("days = 7", "days = 1", 1))  # the notes do not depend on the window
    result = run(
        "compare", one_day, "--candidate", "turnstile-close", "--candidate", "loops-round-close", "--quiet", "--report", report
    )
    assert result.returncode == 0, result.stderr
    said = "No feed mismatch was charged for turnstile-close:"
    assert said in " ".join(result.stdout.split())
    assert said in (report / "summary.md").read_text()
    notes = json.loads((report / "compare.json").read_text())["notes"]
    assert len(notes) == 1 and "turnstile-close" in notes[0] and "loops-round-close" not in notes[0]
    # The scenario's feed_vswr counts as feed data.
    given = demo_variant(tmp_path, demo_pattern_text(), f'"{bare}"\nfeed_vswr = 1.5')
    assert json.loads(run("budget", given, *args, "--candidate", "turnstile-close", "--format", "json").stdout)["notes"] == []


# --- the ladder's order, names and units; the title; the uplink below the mask; RF exposure ------------

# A key's suffix names its unit (units in names); the ladder's unit column must say the same.
UNIT_OF_SUFFIX = {
    "_mhz": "MHz",
    "_deg": "deg",
    "_km": "km",
    "_dbw": "dBW",
    "_dbi": "dBi",
    "_dbic": "dBic",
    "_db": "dB",
    "_k": "K",
    "_dbk": "dB/K",
    "_dbhz": "dB-Hz",
    "_dbw_per_k_hz": "dBW/K/Hz",
}


def _budget_json(*args):
    result = run("budget", DEMO, *args, "--format", "json")
    assert result.returncode == 0, result.stderr
    return json.loads(result.stdout), result.stderr


def test_ladder_order_names_and_units():
    # WRENLING-1 (GMSK, no coding) and the satellite with a coding gain in the demo, both on the downlink.
    coded = next(s.name for s in load_scenario(DEMO).satellite if s.coding_gain_db > 0 and s.required_cn0_dbhz is None)
    for satellite in ("WRENLING-1", coded):
        document, _ = _budget_json("--satellite", satellite, "--candidate", "turnstile-close", "--elevation-deg", "30")
        keys = [term["key"] for term in document["terms"]]
        # Carrier side, then noise, then the demodulator, each term after what it is computed from.
        order = [
            "eirp_dbw",
            "free_space_loss_db",
            "atmospheric_loss_db",
            "polarization_loss_db",
            "rx_gain_total_dbi",
            "received_power_dbw",
            "system_noise_temperature_k",
            "cn0_dbhz",
            "ebn0_db",
            "ideal_ebn0_db",
            "implementation_loss_db",
            "coding_gain_db",
            "required_ebn0_db",
            "margin_db",
        ]
        assert [k for k in keys if k in order] == order
        stages = [term["stage"] for term in document["terms"]]
        assert list(dict.fromkeys(stages)) == ["geometry", "carrier", "noise", "demodulator"]
        assert stages == sorted(stages, key=["geometry", "carrier", "noise", "demodulator"].index)
        assert not {"theory_ebn0_db", "rx_antenna_gain_dbic"} & (set(keys) | set(document))
        for term in document["terms"]:
            assert document[term["key"]] == term["value"]  # top level and terms agree
            suffix = max((x for x in UNIT_OF_SUFFIX if term["key"].endswith(x)), key=len)
            assert term["unit"] == UNIT_OF_SUFFIX[suffix], term
        # The demodulator rows add up: required = ideal + implementation loss - coding gain,
        # margin = Eb/N0 - required, Eb/N0 = C/N0 - 10 log10(R).
        d = document
        assert d["required_ebn0_db"] == pytest.approx(d["ideal_ebn0_db"] + d["implementation_loss_db"] - d["coding_gain_db"])
        assert d["margin_db"] == pytest.approx(d["ebn0_db"] - d["required_ebn0_db"])
        assert d["ebn0_db"] == pytest.approx(d["cn0_dbhz"] - d["data_rate_dbhz"])
    # Total gain = RHCP + LHCP partial gains as powers, in dBi (IEEE Std 145: partial gains add to the gain).
    g = 10 * log10(10 ** (d["rx_gain_rhcp_dbic"] / 10) + 10 ** (d["rx_gain_lhcp_dbic"] / 10))
    assert d["rx_gain_total_dbi"] == pytest.approx(g, abs=1e-9)
    assert d["coding_gain_db"] > 0


def test_uplink_shows_the_transmitter_line_loss_once(study):
    document, _ = _budget_json("--satellite", "CALDERWISP", "--direction", "uplink", "--elevation-deg", "30")
    tx = study.scenario.transmitter
    f_mhz = study.scenario.satellite_named("CALDERWISP").uplink_mhz
    # The transmitter's run by hand: cable loss k1 sqrt(f) + k2 f per 100 m, plus its connectors.
    ((cable, length_m),) = study.transmitter_feedline
    line_db = (cable.k1_db_per_100m_sqrt_mhz * sqrt(f_mhz) + cable.k2_db_per_100m_per_mhz * f_mhz) * length_m / 100
    line_db += tx.connectors * tx.connector_loss_db
    assert document["tx_line_loss_db"] == pytest.approx(line_db, abs=1e-9)
    losses = [t["key"] for t in document["terms"] if t["unit"] == "dB" and t["value"] == pytest.approx(line_db)]
    assert losses == ["tx_line_loss_db"]
    assert document["feedline_loss_db"] is None and document["mismatch_loss_db"] is None
    # EIRP = P - line loss + G (dBW), from the transmitter table.
    assert document["eirp_dbw"] == pytest.approx(10 * log10(tx.power_w) - line_db + tx.antenna_gain_dbi, abs=1e-9)


def test_ladder_title_names_the_direction(study):
    up = run("budget", DEMO, "--satellite", "CALDERWISP", "--direction", "uplink", "--elevation-deg", "30")
    assert up.returncode == 0, up.stderr
    assert f"uplink budget: {study.station.name} -> CALDERWISP;" in " ".join(up.stdout.split())
    down = run("budget", DEMO, "--satellite", "CALDERWISP", "--candidate", "turnstile-close", "--elevation-deg", "30")
    assert down.returncode == 0, down.stderr
    assert "downlink budget: CALDERWISP -> turnstile-close;" in " ".join(down.stdout.split())


def _mask_deg(azimuth_deg):
    """The demo's horizon mask, linear between its points and wrapping at north (as demo.toml says)."""
    points = np.array([[0, 3], [40, 8], [90, 4], [180, 6], [270, 2]], dtype=float)
    return np.interp(azimuth_deg, points[:, 0], points[:, 1], period=360.0)


def test_uplink_below_the_mask_is_refused_with_the_next_aos(study):
    from datetime import UTC, datetime, timedelta

    from skyfield.api import EarthSatellite, load, wgs84

    assert "horizon_mask = [[0, 3], [40, 8], [90, 4], [180, 6], [270, 2]]" in DEMO.read_text()
    moment = "2027-01-05T06:10:00Z"
    args = ("budget", DEMO, "--satellite", "CALDERWISP", "--at", moment)
    result = run(*args, "--direction", "uplink")
    assert_user_error(result, "--at", "CALDERWISP", "below the horizon mask", moment, "next pass", "AOS at")
    aos = datetime.fromisoformat(re.search(r"AOS at (\S+Z)", result.stderr).group(1))
    # skyfield (the reference of tests/test_passes.py): below the mask from the time asked for until
    # the AOS, on the mask at the AOS (within the 1 s of the printed time).
    ts = load.timescale(builtin=True)
    element_set = next(t for t in study.targets if t.display_name == "CALDERWISP").element_set
    sat = EarthSatellite.from_satrec(element_set.satrec, ts)
    s = study.station
    site = wgs84.latlon(s.latitude_deg, s.longitude_deg, elevation_m=s.altitude_m)
    start = datetime(2027, 1, 5, 6, 10, tzinfo=UTC)
    seconds = np.arange(0.0, (aos - start).total_seconds() - 2.0, 5.0)
    times = ts.from_datetimes([start + timedelta(seconds=float(x)) for x in seconds])
    alt, az, _ = (sat - site).at(times).altaz()
    assert np.all(alt.degrees < _mask_deg(az.degrees))
    alt, az, _ = (sat - site).at(ts.from_datetimes([aos - timedelta(seconds=1), aos + timedelta(seconds=1)])).altaz()
    clearance = alt.degrees - _mask_deg(az.degrees)
    assert clearance[0] < 0.1 and clearance[1] > -0.1 and clearance[1] > clearance[0]
    # The downlink at the same time still gives its ladder, with a warning.
    down = run(*args, "--candidate", "turnstile-close")
    assert down.returncode == 0 and "below the horizon mask" in down.stderr and "margin_db" in down.stdout


def test_uplink_below_the_mask_after_the_window_says_none_in_it():
    # The demo window is 4-11 January 2027; CALDERWISP is below the mask at 23:55 on the last day.
    result = run("budget", DEMO, "--satellite", "CALDERWISP", "--direction", "uplink", "--at", "2027-01-10T23:55:00Z")
    assert result.returncode == 2
    error = [line for line in result.stderr.splitlines() if "error" in line]
    assert len(error) == 1 and "no pass in the window after then" in error[0] and "2027-01-11T00:00:00Z" in error[0]


def _exposure(text):
    """(the exposure header lines, the recommended distance in m) from the budget's output."""
    heads = [line for line in text.splitlines() if line.startswith("RF exposure near the station antenna")]
    distance = [float(x) for x in re.findall(r"keep the public at least ([0-9.]+) m", text)]
    return heads, distance


def test_exposure_is_for_the_budget_satellite_and_within_the_limit_at_the_printed_distance(tmp_path, study):
    # A second satellite with an uplink: the budget of one prints the exposure of that one alone.
    path = demo_variant(tmp_path, 'name = "WRENLING-1"\n', 'name = "WRENLING-1"\nuplink_mhz = 435.2\n')
    for satellite, f_mhz in (("CALDERWISP", 145.88), ("WRENLING-1", 435.2)):
        result = run("budget", path, "--satellite", satellite, "--direction", "uplink", "--elevation-deg", "30", "--format", "json")
        assert result.returncode == 0, result.stderr
        heads, distances = _exposure(result.stderr)
        assert len(heads) == 1 and f"uplink to {satellite}," in heads[0] and len(distances) == 1
        assert "FCC 47 CFR 1.1310 general population" in result.stderr
        assert "not a compliance evaluation" in result.stderr and "local rules" in result.stderr
        eirp_w = 10 ** (json.loads(result.stdout)["eirp_dbw"] / 10)
        _check_recommended(distances[0], eirp_w, f_mhz)
    # The demo's uplink: about 25.2 W EIRP at 145.88 MHz reaches 0.2 mW/cm^2 at 1.002 m, so 1.1 m.
    text = run("budget", DEMO, "--satellite", "CALDERWISP", "--direction", "uplink", "--elevation-deg", "30").stdout
    assert _exposure(text)[1] == [1.1]
    # The downlink budget of a satellite with an uplink still names the exposure of transmitting to it;
    # one without an uplink prints none.
    assert (
        len(_exposure(run("budget", path, "--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--pass", "1").stdout)[0])
        == 1
    )

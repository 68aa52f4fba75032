"""The link budget: published values, a budget recomputed by hand, the command and bad input."""

from __future__ import annotations

import json
import subprocess
import sys
from math import log10, pi, sqrt
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import Boltzmann

from planner.budget import (
    BOLTZMANN_DBW_PER_K_HZ,
    downlink_setup,
    evaluate,
    free_space_loss_db,
    pass_budget,
    uplink_setup,
)
from planner.patterns import load_pattern
from planner.safety import general_public_limit_mw_cm2, min_distance_m, power_density_mw_cm2
from planner.scenario import load_scenario
from planner.study import Study

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "scenarios" / "demo.toml"
CONTRACT_KEYS = {
    "satellite", "direction", "frequency_mhz", "elevation_deg", "azimuth_deg", "range_km", "eirp_dbw",
    "free_space_loss_db", "atmospheric_loss_db", "polarization_loss_db", "rx_antenna_gain_dbic",
    "feedline_loss_db", "system_noise_temperature_k", "g_over_t_dbk", "cn0_dbhz", "ebn0_db",
    "required_ebn0_db", "margin_db",
}


@pytest.fixture(scope="module")
def study():
    return Study.from_scenario(load_scenario(DEMO))


def run(*args):
    return subprocess.run([sys.executable, "-m", "planner.cli", *map(str, args)], capture_output=True, text=True, cwd=ROOT)


def test_free_space_loss_itu_p525():
    # ITU-R P.525: L = 32.45 + 20 log f[MHz] + 20 log d[km]; 435 MHz at 1000 km = 145.22 dB
    # (../shared/REFERENCES.md). The constant 32.45 is rounded, hence 0.01 dB.
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
    setup = downlink_setup(study, "WRENLING-1", "turnstile-close")
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
    (cable, length_m), = candidate.feedline
    loss_db = (cable.k1_db_per_100m_sqrt_mhz * sqrt(f_mhz) + cable.k2_db_per_100m_per_mhz * f_mhz) * length_m / 100
    loss_db += candidate.connectors * candidate.connector_loss_db
    # Friis (Proc. IRE 1944) with the LNA at the antenna: T = T_ant + T_lna + T_line/G_lna + L T_rx / G_lna,
    # T_line = (L - 1) 290 K, T(NF) = 290 (10^(NF/10) - 1).
    t_ant = setup.noise_terms["antenna_noise_temperature_k"]
    t_lna = 290 * (10 ** (receiver.lna_noise_figure_db / 10) - 1)
    t_rx = 290 * (10 ** (receiver.receiver_noise_figure_db / 10) - 1)
    g_lna = 10 ** (receiver.lna_gain_db / 10)
    line = 10 ** (loss_db / 10)
    t_sys = t_ant + t_lna + (line - 1) * receiver.feedline_temperature_k / g_lna + line * t_rx / g_lna
    assert row["system_noise_temperature_k"] == pytest.approx(t_sys, rel=1e-6)
    atm = float(row["atmospheric_loss_db"])
    assert 0.0 < atm < 1.0  # well under 1 dB on UHF above 5 deg (ITU-R P.676, REFERENCES.md)

    # Mismatch loss of the table's feed VSWR: -10 log10(1 - |Gamma|^2), |Gamma| = (s - 1) / (s + 1) (Pozar).
    vswr = pattern.feed_vswr
    gamma = (vswr - 1) / (vswr + 1)
    mismatch_db = -10 * log10(1 - gamma**2)
    cn0 = eirp - fsl - atm - pol_loss + rx_gain - mismatch_db + 228.60 - 10 * log10(t_sys)
    ebn0 = cn0 - 10 * log10(sat.data_rate_bps)
    from planner.modem import required_ebn0_db

    required = required_ebn0_db("gmsk", sat.target_ber, gmsk_bt=sat.gmsk_bt) + sat.implementation_loss_db - sat.coding_gain_db
    assert row["eirp_dbw"] == pytest.approx(eirp, abs=1e-9)
    assert row["free_space_loss_db"] == pytest.approx(fsl, abs=0.01)
    assert row["polarization_loss_db"] == pytest.approx(pol_loss, abs=1e-6)
    assert row["rx_antenna_gain_dbic"] == pytest.approx(rx_gain, abs=1e-6)
    assert row["feedline_loss_db"] == pytest.approx(loss_db, abs=1e-6)
    assert row["g_over_t_dbk"] == pytest.approx(rx_gain - 10 * log10(t_sys), abs=1e-6)
    assert row["cn0_dbhz"] == pytest.approx(cn0, abs=0.02)
    assert row["ebn0_db"] == pytest.approx(ebn0, abs=0.02)
    assert row["margin_db"] == pytest.approx(ebn0 - required, abs=0.02)


def test_rhcp_wave_meets_the_rhcp_partial_gain(study):
    # Stutzman: an RHCP wave couples only to the antenna's RHCP component, so gain minus
    # polarization loss equals the RHCP partial gain (dBic) in every direction.
    setup = downlink_setup(study, "OSTRAVEL-2", "turnstile-close")
    setup.wave = type(setup.wave)("rhcp", 0.0)
    elevation = np.linspace(1, 90, 30)
    frame = evaluate(setup, np.zeros_like(elevation), elevation, np.full_like(elevation, 1500.0))
    effective = frame["rx_antenna_gain_dbic"] - frame["polarization_loss_db"]
    assert np.allclose(effective, frame["rx_gain_rhcp_dbic"], atol=1e-6)


def test_lna_at_the_antenna_beats_lna_in_the_shack(study):
    # Friis: loss ahead of the first gain stage adds directly to the noise temperature
    # (common practice, follows from Friis 1944).
    at_antenna = downlink_setup(study, "WRENLING-1", "turnstile-close")
    in_shack = downlink_setup(study, "WRENLING-1", "turnstile-close-rg58-lna-in-shack")
    assert in_shack.system_noise_temperature_k > at_antenna.system_noise_temperature_k + 100


def test_pass_budget_is_a_frame_along_the_track(study):
    setup = downlink_setup(study, "TARNBECK", "turnstile-close")
    p = [x for x in study.passes() if x.satellite == "TARNBECK"][0]
    frame = pass_budget(setup, p)
    assert len(frame) == len(p.track)
    assert CONTRACT_KEYS - {"satellite", "direction", "frequency_mhz"} <= set(frame.columns)
    assert np.all(np.isfinite(frame["margin_db"]))
    # Free-space loss follows the range: lowest at closest approach.
    assert frame["free_space_loss_db"].idxmin() == frame["range_km"].idxmin()


def test_uplink_budget(study):
    setup = uplink_setup(study, "CALDERWISP")
    tx = study.scenario.transmitter
    assert setup.eirp_dbw == pytest.approx(10 * log10(tx.power_w) + tx.antenna_gain_dbi - setup.feedline_loss_db)
    row = evaluate(setup, [0.0], [45.0], [800.0]).iloc[0]
    # RHCP station wave into a tumbling linear satellite antenna: 3.01 dB (Stutzman).
    assert row["polarization_loss_db"] == pytest.approx(3.0103, abs=1e-3)
    expected_cn0 = setup.eirp_dbw - row["free_space_loss_db"] - row["atmospheric_loss_db"] - 3.0103 + 0.0 + 228.60 - 10 * log10(1000.0)
    assert row["cn0_dbhz"] == pytest.approx(expected_cn0, abs=0.01)


def test_rf_exposure_far_field():
    # FCC OET Bulletin 65, eq. 3: S = EIRP / (4 pi R^2). 100 W at 10 m: 0.0796 W/m^2 = 0.00796 mW/cm^2.
    assert power_density_mw_cm2(100.0, 10.0) == pytest.approx(100 / (4 * pi * 100) / 10, rel=1e-12)
    # General-population limits (47 CFR 1.1310, from memory): 0.2 mW/cm^2 at VHF, f/1500 at UHF.
    assert general_public_limit_mw_cm2(145.9e6) == 0.2
    assert general_public_limit_mw_cm2(436e6) == pytest.approx(436 / 1500)
    assert power_density_mw_cm2(100.0, min_distance_m(100.0, 145.9e6)) == pytest.approx(0.2)


# --- the command ------------------------------------------------------------------------


def test_budget_json_has_the_contract_keys():
    result = run("budget", DEMO, "--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--pass", "1", "--format", "json")
    assert result.returncode == 0, result.stderr
    document = json.loads(result.stdout)
    assert CONTRACT_KEYS <= set(document)
    assert document["direction"] == "downlink" and document["satellite"] == "WRENLING-1"
    assert document["pass_summary"]["max_margin_db"] >= document["pass_summary"]["min_margin_db"]
    # The transmitter in the demo draws the RF exposure estimate and its caution.
    assert "not a compliance evaluation" in result.stderr


def test_budget_ladder_prints_every_term():
    result = run("budget", DEMO, "--satellite", "OSTRAVEL-2", "--candidate", "turnstile-far", "--elevation-deg", "20")
    assert result.returncode == 0, result.stderr
    for term in ("eirp_dbw", "free_space_loss_db", "g_over_t_dbk", "cn0_dbhz", "margin_db"):
        assert term in result.stdout
    assert "RF exposure" in result.stdout


def assert_user_error(result, *fragments):
    assert result.returncode == 2, result.stderr
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert len(lines) == 1 and "Traceback" not in result.stderr, result.stderr
    for fragment in fragments:
        assert fragment in lines[0], lines[0]


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
    path = demo_variant(tmp_path, f'"{ROOT}/patterns/turnstile-close.csv"', f'"{broken}"')
    assert_user_error(run("budget", path, *args), "broken.csv")
    path = demo_variant(tmp_path, 'cable = "RG-58"', 'cable = "RG-999"')
    assert_user_error(run("budget", path, "--satellite", "WRENLING-1", "--candidate", "turnstile-close-rg58-lna-in-shack", "--elevation-deg", "30"), "RG-999")
    path = demo_variant(tmp_path, "length_m = 20.0", "length_m = -3")
    assert_user_error(run("budget", path, *args), "length_m")
    path = demo_variant(tmp_path, "downlink_mhz = 436.525", "downlink_mhz = 60000")
    assert_user_error(run("budget", path, *args), "downlink_mhz")
    assert_user_error(run("budget", DEMO, "--satellite", "NOSAT", *args[2:]), "NOSAT")
    assert_user_error(run("budget", DEMO, "--satellite", "WRENLING-1", "--candidate", "nope", "--elevation-deg", "30"), "nope")
    assert_user_error(run("budget", DEMO, "--satellite", "WRENLING-1", "--candidate", "turnstile-close", "--pass", "999"), "--pass")

"""The link budget, sample by sample along a pass, downlink and uplink.

Reference plane: the ground antenna's terminals. The received carrier there is

    C = EIRP - L_fs - L_atm - L_pol + G_rx - L_mismatch          (dBW)

and the noise is k T_sys with T_sys the system noise temperature referred to the same
terminals (antenna temperature + feedline, connectors, LNA and receiver by the Friis
cascade), so

    C/N0 = C - 10 log10(k) - 10 log10(T_sys)                      (dB-Hz)
    Eb/N0 = C/N0 - 10 log10(R_b)                                  (dB)
    margin = Eb/N0 - (Eb/N0 required by theory + implementation loss - coding gain)

or, for analog modes given a required C/N0, margin = C/N0 - required C/N0.

G_rx is the antenna's total gain toward the satellite (RHCP + LHCP partial gains,
dBic each); L_pol is Stutzman's polarization mismatch between the satellite's wave and
the antenna's own polarization in that direction, so that an RHCP wave meets exactly
the RHCP partial gain. For tumbling linear satellites the expected (tilt-averaged)
loss sets ``margin_db``; the fade not exceeded ``criteria.fade_percentile`` % of the
time sets ``margin_at_fade_db``.

Everything that does not change along a pass (EIRP, noise temperatures, required
Eb/N0) is computed once in a :class:`LinkSetup`; :func:`evaluate` then runs vectorized
over any number of samples.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from math import log10, pi

import numpy as np
import pandas as pd
from scipy.constants import Boltzmann, c as SPEED_OF_LIGHT_M_S

from planner.atmosphere import gaseous_loss_db
from planner.errors import UserError, warn
from planner.feedline import cable_loss_db, mismatch_loss_db
from planner.modem import required_ebn0_db
from planner.noise import antenna_noise_temperature_k, receive_chain
from planner.polarization import WavePolarization, polarization_loss_db

BOLTZMANN_DBW_PER_K_HZ = 10.0 * log10(Boltzmann)
EARTH_RADIUS_KM = 6378.137
MU_EARTH_KM3_S2 = 398600.4418
# A pattern table used more than this far from its own frequency draws a warning.
PATTERN_FREQUENCY_TOLERANCE = 0.10


def free_space_loss_db(frequency_hz, range_km):
    """Free-space basic transmission loss, ITU-R P.525: 20 log10(4 pi d f / c)."""
    return 20.0 * np.log10(4.0 * pi * np.asarray(range_km) * 1000.0 * frequency_hz / SPEED_OF_LIGHT_M_S)


def slant_range_km(elevation_deg, height_km, earth_radius_km: float = EARTH_RADIUS_KM):
    """Spherical-Earth slant range to height h at elevation E (Wertz & Larson, SMAD)."""
    e = np.radians(elevation_deg)
    r = earth_radius_km
    return np.sqrt((r + height_km) ** 2 - (r * np.cos(e)) ** 2) - r * np.sin(e)


def mean_height_km(satrec) -> float:
    """Height of the orbit's semi-major axis above the equatorial radius (km)."""
    mean_motion_rad_s = satrec.no_kozai / 60.0
    return (MU_EARTH_KM3_S2 / mean_motion_rad_s**2) ** (1.0 / 3.0) - EARTH_RADIUS_KM


@dataclass
class LinkSetup:
    """The parts of one link that stay fixed along a pass."""

    direction: str                      # "downlink" or "uplink"
    satellite: str
    candidate: str
    frequency_hz: float
    eirp_dbw: float                     # downlink: the satellite's; uplink: the station's
    tx_power_dbw: float
    tx_antenna_gain_dbi: float
    tx_line_loss_db: float
    wave: WavePolarization              # polarization the receiving antenna meets
    fade_percentile: float
    altitude_m: float
    data_rate_bps: float
    required_ebn0_db: float | None      # theory + implementation loss - coding gain
    theory_ebn0_db: float | None
    implementation_loss_db: float
    coding_gain_db: float
    required_cn0_dbhz: float | None     # given directly (analog modes); else None
    system_noise_temperature_k: float
    noise_terms: dict[str, float] = field(default_factory=dict)  # breakdown for the ladder
    feedline_loss_db: float = 0.0       # station side: cables + connectors
    mismatch_loss_db: float = 0.0
    # Receiving antenna: a pattern table (downlink) or a fixed gain and polarization (uplink).
    pattern: object | None = None
    fixed_gain_rhcp_dbic: float | None = None
    fixed_gain_lhcp_dbic: float | None = None


def _station_line_loss_db(runs, connectors, connector_loss_db, frequency_hz) -> float:
    return float(sum(cable_loss_db(cable, frequency_hz, length_m) for cable, length_m in runs) + connectors * connector_loss_db)


def _required(config, data_rate_bps):
    """(required Eb/N0 with losses, theory Eb/N0, required C/N0) for a satellite's mode."""
    if config.required_cn0_dbhz is not None:
        return None, None, config.required_cn0_dbhz
    theory = required_ebn0_db(config.modulation, config.target_ber, gmsk_bt=config.gmsk_bt)
    return theory + config.implementation_loss_db - config.coding_gain_db, theory, None


def _threshold_terms(sat, required, theory, required_cn0) -> dict:
    """The LinkSetup fields that say what the demodulator needs (same for both directions)."""
    return dict(
        data_rate_bps=sat.data_rate_bps,
        required_ebn0_db=required,
        theory_ebn0_db=theory,
        implementation_loss_db=sat.implementation_loss_db,
        coding_gain_db=sat.coding_gain_db,
        required_cn0_dbhz=required_cn0,
    )


def downlink_setup(study, satellite_name: str, candidate_name: str) -> LinkSetup:
    """Fixed parts of the satellite -> station link for one candidate set-up."""
    scenario = study.scenario
    sat = study.satellite_config(satellite_name)
    candidate = study.candidate(candidate_name)
    receiver = scenario.receiver
    frequency_hz = sat.downlink_frequency_hz
    pattern = candidate.pattern
    if abs(frequency_hz / pattern.frequency_hz - 1.0) > PATTERN_FREQUENCY_TOLERANCE:
        warn(
            f"candidate {candidate.name}: pattern {pattern.path.name if pattern.path else ''} was computed at "
            f"{pattern.frequency_hz / 1e6:.1f} MHz, but {sat.name} transmits on {sat.downlink_mhz:g} MHz; "
            "the gains used are the table's"
        )
    feedline_db = _station_line_loss_db(candidate.feedline, candidate.connectors, candidate.connector_loss_db, frequency_hz)
    antenna_noise = _antenna_noise(candidate.pattern, frequency_hz, study.station_config.noise_environment, receiver.ground_temperature_k)
    lna_position = candidate.lna_position or receiver.lna_position
    chain = receive_chain(
        antenna_noise.total_k,
        feedline_loss_db=feedline_db,
        feedline_temperature_k=receiver.feedline_temperature_k,
        lna_noise_figure_db=None if lna_position == "none" else receiver.lna_noise_figure_db,
        lna_gain_db=receiver.lna_gain_db,
        lna_at_antenna=lna_position == "antenna",
        receiver_noise_figure_db=receiver.receiver_noise_figure_db,
    )
    required, theory, required_cn0 = _required(sat, sat.data_rate_bps)
    vswr = candidate.feed_vswr
    tx_power_dbw = 10.0 * log10(sat.tx_power_w)
    noise_terms = {
        "antenna_sky_temperature_k": antenna_noise.sky_k,
        "antenna_ground_temperature_k": antenna_noise.ground_k,
        "man_made_noise_temperature_k": antenna_noise.man_made_k,
        "antenna_noise_temperature_k": antenna_noise.total_k,
        "receiver_chain_temperature_k": chain.system_noise_temperature_k - antenna_noise.total_k,
    }
    return LinkSetup(
        direction="downlink",
        satellite=sat.name,
        candidate=candidate.name,
        frequency_hz=frequency_hz,
        eirp_dbw=tx_power_dbw + sat.antenna_gain_dbi - sat.line_loss_db,
        tx_power_dbw=tx_power_dbw,
        tx_antenna_gain_dbi=sat.antenna_gain_dbi,
        tx_line_loss_db=sat.line_loss_db,
        wave=WavePolarization(sat.polarization, sat.axial_ratio_db),
        fade_percentile=scenario.criteria.fade_percentile,
        altitude_m=study.station.altitude_m,
        **_threshold_terms(sat, required, theory, required_cn0),
        system_noise_temperature_k=chain.system_noise_temperature_k,
        noise_terms=noise_terms,
        feedline_loss_db=feedline_db,
        mismatch_loss_db=0.0 if vswr is None else float(mismatch_loss_db(vswr)),
        pattern=pattern,
    )


def uplink_setup(study, satellite_name: str) -> LinkSetup:
    """Fixed parts of the station -> satellite link (needs [transmitter] and uplink_mhz)."""
    scenario = study.scenario
    sat = study.satellite_config(satellite_name)
    tx = scenario.transmitter
    source = scenario.source_path or "scenario"
    if tx is None:
        raise UserError(f"{source}: an uplink budget needs a [transmitter] table (power_w, antenna, feedline)")
    if sat.uplink_mhz is None:
        raise UserError(f"{source}: satellite {sat.name} has no uplink_mhz")
    frequency_hz = sat.uplink_frequency_hz
    runs = study.feedline_runs(tx.feedline, "transmitter.feedline")
    line_db = _station_line_loss_db(runs, tx.connectors, tx.connector_loss_db, frequency_hz)
    tx_power_dbw = 10.0 * log10(tx.power_w)
    if sat.uplink_required_cn0_dbhz is not None:
        required, theory, required_cn0 = None, None, sat.uplink_required_cn0_dbhz
    else:
        required, theory, required_cn0 = _required(sat, sat.data_rate_bps)
    # The satellite's receiving antenna: its gain split by its polarization.
    gain_lin = 10.0 ** (sat.uplink_rx_gain_dbi / 10.0)
    if sat.uplink_rx_polarization == "rhcp":
        g_r, g_l = gain_lin, 0.0
    elif sat.uplink_rx_polarization == "lhcp":
        g_r, g_l = 0.0, gain_lin
    else:
        g_r = g_l = gain_lin / 2.0
    # Reciprocity: the mismatch is symmetric, so the station's (fixed) polarization is the
    # "wave" and a tumbling satellite antenna is a random tilt, as for the downlink.
    wave_kind = {"rhcp": "rhcp", "lhcp": "lhcp", "linear": "linear"}[tx.polarization]
    if tx.polarization == "linear" and sat.uplink_rx_polarization == "linear-tumbling":
        wave_kind = "linear-tumbling"
    floor = 1e-6
    return LinkSetup(
        direction="uplink",
        satellite=sat.name,
        candidate="station transmitter",
        frequency_hz=frequency_hz,
        eirp_dbw=tx_power_dbw + tx.antenna_gain_dbi - line_db,
        tx_power_dbw=tx_power_dbw,
        tx_antenna_gain_dbi=tx.antenna_gain_dbi,
        tx_line_loss_db=line_db,
        wave=WavePolarization(wave_kind, 0.0),
        fade_percentile=scenario.criteria.fade_percentile,
        altitude_m=study.station.altitude_m,
        **_threshold_terms(sat, required, theory, required_cn0),
        system_noise_temperature_k=sat.uplink_rx_noise_temperature_k,
        noise_terms={"satellite_receiver_temperature_k": sat.uplink_rx_noise_temperature_k},
        feedline_loss_db=line_db,
        fixed_gain_rhcp_dbic=10.0 * log10(max(g_r, floor)),
        fixed_gain_lhcp_dbic=10.0 * log10(max(g_l, floor)),
    )


_ANTENNA_NOISE: dict[tuple, tuple] = {}


def _antenna_noise(pattern, frequency_hz, environment, ground_k):
    """Antenna noise temperature, integrated once per pattern, frequency and surroundings.

    The cache keeps the pattern object alive beside its result, so its id cannot be reused.
    """
    key = (id(pattern), frequency_hz, environment, ground_k)
    if key not in _ANTENNA_NOISE:
        result = antenna_noise_temperature_k(pattern, frequency_hz, environment, ground_temperature_k=ground_k)
        _ANTENNA_NOISE[key] = (pattern, result)
    return _ANTENNA_NOISE[key][1]


def _receive_gains(setup: LinkSetup, azimuth_deg, elevation_deg):
    if setup.pattern is not None:
        return setup.pattern.gains_dbic(azimuth_deg, elevation_deg)
    shape = np.shape(elevation_deg)
    return np.full(shape, setup.fixed_gain_rhcp_dbic), np.full(shape, setup.fixed_gain_lhcp_dbic)


def evaluate(setup: LinkSetup, azimuth_deg, elevation_deg, range_km) -> pd.DataFrame:
    """Every budget term at every sample (arrays of equal length in, one row a sample out)."""
    azimuth_deg = np.atleast_1d(np.asarray(azimuth_deg, dtype=float))
    elevation_deg = np.atleast_1d(np.asarray(elevation_deg, dtype=float))
    range_km = np.atleast_1d(np.asarray(range_km, dtype=float))
    # Downlink: the station's pattern toward the satellite. Uplink: the satellite's fixed
    # antenna (the elevation is still the station's view, for the atmosphere).
    fsl = free_space_loss_db(setup.frequency_hz, range_km)
    atm = gaseous_loss_db(setup.frequency_hz, elevation_deg, altitude_m=setup.altitude_m)
    g_r, g_l = _receive_gains(setup, azimuth_deg, elevation_deg)
    pol_mean, pol_fade = polarization_loss_db(setup.wave, g_r, g_l, fade_percentile=setup.fade_percentile)
    rx_gain = 10.0 * np.log10(10.0 ** (g_r / 10.0) + 10.0 ** (g_l / 10.0))
    received_dbw = setup.eirp_dbw - fsl - atm - pol_mean + rx_gain - setup.mismatch_loss_db
    t_sys = setup.system_noise_temperature_k
    g_over_t = rx_gain - 10.0 * log10(t_sys)
    cn0 = received_dbw - BOLTZMANN_DBW_PER_K_HZ - 10.0 * log10(t_sys)
    if setup.required_cn0_dbhz is not None:
        ebn0 = np.full_like(cn0, np.nan)
        required_ebn0 = np.full_like(cn0, np.nan)
        margin = cn0 - setup.required_cn0_dbhz
    else:
        ebn0 = cn0 - 10.0 * log10(setup.data_rate_bps)
        required_ebn0 = np.full_like(cn0, setup.required_ebn0_db)
        margin = ebn0 - setup.required_ebn0_db
    return pd.DataFrame(
        {
            "azimuth_deg": azimuth_deg,
            "elevation_deg": elevation_deg,
            "range_km": range_km,
            "eirp_dbw": np.full_like(cn0, setup.eirp_dbw),
            "free_space_loss_db": fsl,
            "atmospheric_loss_db": atm,
            "polarization_loss_db": pol_mean,
            "polarization_fade_loss_db": pol_fade,
            "rx_gain_rhcp_dbic": g_r,
            "rx_gain_lhcp_dbic": g_l,
            "rx_antenna_gain_dbic": rx_gain,
            "mismatch_loss_db": np.full_like(cn0, setup.mismatch_loss_db),
            "received_power_dbw": received_dbw,
            "feedline_loss_db": np.full_like(cn0, setup.feedline_loss_db),
            "system_noise_temperature_k": np.full_like(cn0, t_sys),
            "g_over_t_dbk": g_over_t,
            "cn0_dbhz": cn0,
            "ebn0_db": ebn0,
            "required_ebn0_db": required_ebn0,
            "margin_db": margin,
            "margin_at_fade_db": margin - (pol_fade - pol_mean),
        }
    )


def pass_budget(setup: LinkSetup, a_pass) -> pd.DataFrame:
    """Per-sample budget along one pass's track, with UTC times as the index."""
    track = a_pass.track
    frame = evaluate(setup, track.azimuth_deg, track.elevation_deg, track.range_km)
    frame.insert(0, "time_s", track.time_s)
    frame.index = pd.DatetimeIndex(track.time_utc, name="time_utc")
    if setup.direction in track.doppler_hz:
        frame["doppler_hz"] = track.doppler_hz[setup.direction]
    return frame


# ---------------------------------------------------------------- the ladder

LADDER = (
    # key, unit, one-line meaning
    ("frequency_mhz", "MHz", "carrier frequency"),
    ("elevation_deg", "deg", "satellite elevation seen from the station"),
    ("azimuth_deg", "deg", "satellite azimuth, clockwise from true north"),
    ("range_km", "km", "slant range station-satellite"),
    ("tx_power_dbw", "dBW", "transmitter output power, 10 log10(P / 1 W)"),
    ("tx_antenna_gain_dbi", "dBi", "transmitting antenna gain toward the other end"),
    ("tx_line_loss_db", "dB", "loss between transmitter and its antenna"),
    ("eirp_dbw", "dBW", "EIRP = power + antenna gain - line loss"),
    ("free_space_loss_db", "dB", "free-space loss 20 log10(4 pi d f / c), ITU-R P.525"),
    ("atmospheric_loss_db", "dB", "gaseous absorption on the slant path, ITU-R P.676"),
    ("polarization_loss_db", "dB", "polarization mismatch, tilt-averaged (Stutzman)"),
    ("polarization_fade_loss_db", "dB", "polarization mismatch not exceeded at the fade percentile"),
    ("rx_gain_rhcp_dbic", "dBic", "receiving antenna RHCP partial gain toward the other end"),
    ("rx_gain_lhcp_dbic", "dBic", "receiving antenna LHCP partial gain toward the other end"),
    ("rx_antenna_gain_dbic", "dBi", "receiving antenna total gain (RHCP + LHCP) toward the other end"),
    ("mismatch_loss_db", "dB", "feed impedance mismatch, -10 log10(1 - |Gamma|^2)"),
    ("received_power_dbw", "dBW", "carrier at the antenna terminals = EIRP - losses + gain"),
    ("feedline_loss_db", "dB", "station cables and connectors"),
    ("antenna_noise_temperature_k", "K", "sky + ground + man-made noise the pattern picks up"),
    ("system_noise_temperature_k", "K", "antenna + receive chain (Friis), at the antenna terminals"),
    ("g_over_t_dbk", "dB/K", "receiving figure of merit G/T = gain - 10 log10(T_sys)"),
    ("boltzmann_dbw_per_k_hz", "dBW/K/Hz", "Boltzmann's constant, 10 log10(k)"),
    ("cn0_dbhz", "dB-Hz", "C/N0 = received power - 10 log10(k) - 10 log10(T_sys)"),
    ("data_rate_dbhz", "dB-Hz", "10 log10(data rate)"),
    ("ebn0_db", "dB", "Eb/N0 = C/N0 - 10 log10(data rate)"),
    ("theory_ebn0_db", "dB", "Eb/N0 the modulation needs for the target BER, by theory"),
    ("implementation_loss_db", "dB", "demodulator's shortfall from theory"),
    ("coding_gain_db", "dB", "forward error correction gain"),
    ("required_ebn0_db", "dB", "required Eb/N0 = theory + implementation loss - coding gain"),
    ("required_cn0_dbhz", "dB-Hz", "required C/N0, given directly for analog modes"),
    ("margin_db", "dB", "link margin (Eb/N0 or C/N0 above what is required)"),
    ("margin_at_fade_db", "dB", "link margin at the polarization fade percentile"),
)


def ladder_values(setup: LinkSetup, row: pd.Series) -> dict[str, float | None]:
    """One sample's budget as the ladder's keys (None where a term does not apply)."""
    ladder_keys = {key for key, _, _ in LADDER}
    values = {key: row[key] for key in row.index if key in ladder_keys}
    values.update(
        frequency_mhz=setup.frequency_hz / 1e6,
        tx_power_dbw=setup.tx_power_dbw,
        tx_antenna_gain_dbi=setup.tx_antenna_gain_dbi,
        tx_line_loss_db=setup.tx_line_loss_db,
        boltzmann_dbw_per_k_hz=BOLTZMANN_DBW_PER_K_HZ,
        data_rate_dbhz=None if setup.required_cn0_dbhz is not None else 10.0 * log10(setup.data_rate_bps),
        theory_ebn0_db=setup.theory_ebn0_db,
        implementation_loss_db=None if setup.required_cn0_dbhz is not None else setup.implementation_loss_db,
        coding_gain_db=None if setup.required_cn0_dbhz is not None else setup.coding_gain_db,
        required_cn0_dbhz=setup.required_cn0_dbhz,
        antenna_noise_temperature_k=setup.noise_terms.get("antenna_noise_temperature_k"),
    )
    if setup.required_cn0_dbhz is not None:
        values["ebn0_db"] = None
        values["required_ebn0_db"] = None
    for key, value in list(values.items()):
        if value is not None:
            value = float(value)
            values[key] = None if not np.isfinite(value) else value
    return {key: values.get(key) for key, _, _ in LADDER}

"""The link budget, sample by sample along a pass, downlink and uplink.

Reference plane: the ground antenna's terminals, where the antenna is a source of
available carrier power C and available noise k T_A. Every term is charged once, there:

    C     = EIRP - L_fs - L_atm - L_pol + G_rx                      (dBW, available)
    T_sys = T_A + T_chain / M                                       (K)
    C/N0  = C - 10 log10(k) - 10 log10(T_sys)                       (dB-Hz)
    G/T   = G_rx - 10 log10(T_sys)                                  (dB/K)
    Eb/N0 = C/N0 - 10 log10(R_b)                                    (dB)
    margin = Eb/N0 - (ideal Eb/N0 + implementation loss - coding gain)

or, for analog modes given a required C/N0, margin = C/N0 - required C/N0.

M = 1 - |Gamma|^2 is the feed mismatch (from the scenario's ``feed_vswr`` or the pattern
header's; 1 when neither gives one, and the ladder says so). A lossless mismatch passes M of
the carrier and M of the antenna noise alike (Pozar, noise of a mismatched source), so
C/N0 = M C / k (M T_A + T_chain): the mismatch is charged once, as a noiseless stage of
gain M in the Friis cascade (planner.link.noise.receive_chain), which refers everything after it
to the antenna terminals divided by M. ``mismatch_loss_db`` = -10 log10 M is shown in the
ladder but not subtracted from C (that would charge it twice against the signal and not
at all against the antenna noise). T_chain is, in signal order and by Friis: the losses
between the antenna and the LNA (``pre_lna_*``: jumper cables, connectors, a switch or
bias-tee, as a line at the feedline temperature), the LNA, the main feedline and its
connectors, and the receiver; with the LNA at the receiver end (or none) the pre-LNA
losses simply join the run before it. T_A is the antenna temperature (sky with the clear
atmosphere's own emission, ground, man-made noise; planner.link.noise).

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
from typing import TYPE_CHECKING, NamedTuple

import numpy as np
import pandas as pd

from planner.constants import BOLTZMANN_DBW_PER_K_HZ, EARTH_EQUATORIAL_RADIUS_KM, SPEED_OF_LIGHT_M_S
from planner.errors import UserError, warn
from planner.link.atmosphere import gaseous_loss_db
from planner.link.feedline import cable_loss_db, mismatch_loss_db
from planner.link.modem import required_ebn0_db
from planner.link.noise import antenna_noise_temperature_k, p372_extrapolation_note, receive_chain
from planner.link.polarization import WaveKind, WavePolarization, polarization_loss_db

if TYPE_CHECKING:
    from planner.antenna import PatternTable

MU_EARTH_KM3_S2 = 398600.4418

# How far a pattern table may be used from its own frequency, as |f / f_table - 1|. A table
# holds one frequency's pattern and feed impedance, and both are only meaningful within the
# element's bandwidth: a resonant element (dipole, turnstile, one-wavelength loop) keeps its
# impedance and pattern within a few per cent (a half-wave dipole's 2:1 VSWR bandwidth is
# about 5-10 %, a thin one less), so a warning from 3 %; beyond 20 % the element is far off
# resonance (its reactance, VSWR and lobes are those of another antenna) and the table is
# refused: build one at the satellite's frequency instead.
PATTERN_FREQUENCY_WARNING = 0.03
PATTERN_FREQUENCY_LIMIT = 0.20

# A --range-km is accepted between the ranges, at its elevation, to the orbit's perigee and
# apogee radii widened by this much: mean elements give a(1 -/+ e), and the SGP4 position
# departs from it by the J2 short-period terms (about 10 km in LEO) and drag within a window.
ORBIT_RADIUS_MARGIN_KM = 25.0


def free_space_loss_db(frequency_hz, range_km):
    """Free-space basic transmission loss, ITU-R P.525: 20 log10(4 pi d f / c)."""
    return 20.0 * np.log10(4.0 * pi * np.asarray(range_km) * 1000.0 * frequency_hz / SPEED_OF_LIGHT_M_S)


def slant_range_km(elevation_deg, orbit_radius_km, station, azimuth_deg=0.0):
    """Straight-line range (km) from the station to the geocentric sphere of ``orbit_radius_km``.

    The station is where it is on the WGS84 ellipsoid (``station.ecef_km``: its own geocentric
    radius at its latitude and altitude, not the equatorial radius), and the direction is
    (azimuth, elevation) in its local frame with the geodetic vertical (``station.enu_rotation``),
    the frame the pass predictions use. With r the station's position and u the unit
    direction: |r + d u| = R gives d = -(r.u) + sqrt((r.u)^2 - |r|^2 + R^2). On a sphere of
    radius r this is the textbook sqrt(R^2 - r^2 cos^2 E) - r sin E (Wertz & Larson, SMAD).
    Vectorized over elevation and azimuth.
    """
    e = np.radians(np.asarray(elevation_deg, dtype=float))
    a = np.radians(np.asarray(azimuth_deg, dtype=float))
    direction_enu = np.stack(np.broadcast_arrays(np.cos(e) * np.sin(a), np.cos(e) * np.cos(a), np.sin(e)), axis=-1)
    direction = direction_enu @ station.enu_rotation  # rows of the rotation are E, N, U in ECEF
    position = station.ecef_km
    along = direction @ position
    distance = -along + np.sqrt(along**2 - position @ position + np.asarray(orbit_radius_km, dtype=float) ** 2)
    return float(distance) if np.ndim(distance) == 0 else distance


def orbit_radii_km(satrec) -> tuple[float, float, float]:
    """(perigee, semi-major axis, apogee) geocentric radii (km) of the mean elements."""
    mean_motion_rad_s = satrec.no_kozai / 60.0
    a = (MU_EARTH_KM3_S2 / mean_motion_rad_s**2) ** (1.0 / 3.0)
    return a * (1.0 - satrec.ecco), a, a * (1.0 + satrec.ecco)


def mean_height_km(satrec) -> float:
    """Height of the orbit's semi-major axis above the equatorial radius (km)."""
    return orbit_radii_km(satrec)[1] - EARTH_EQUATORIAL_RADIUS_KM


def slant_range_limits_km(satrec, station, elevation_deg: float, azimuth_deg: float = 0.0) -> tuple[float, float]:
    """Shortest and longest range (km) the orbit can give at this elevation and azimuth.

    The ranges to the perigee and apogee radii, less and more :data:`ORBIT_RADIUS_MARGIN_KM`
    (see there); the lower radius never below the station's own.
    """
    perigee, _, apogee = orbit_radii_km(satrec)
    low_radius = max(perigee - ORBIT_RADIUS_MARGIN_KM, float(np.linalg.norm(station.ecef_km)))
    return (
        float(slant_range_km(elevation_deg, low_radius, station, azimuth_deg)),
        float(slant_range_km(elevation_deg, apogee + ORBIT_RADIUS_MARGIN_KM, station, azimuth_deg)),
    )


@dataclass
class LinkSetup:
    """The parts of one link that stay fixed along a pass."""

    direction: str  # "downlink" or "uplink"
    satellite: str
    candidate: str
    frequency_hz: float
    eirp_dbw: float  # downlink: the satellite's; uplink: the station's
    tx_power_dbw: float
    tx_antenna_gain_dbi: float
    tx_line_loss_db: float
    wave: WavePolarization  # polarization the receiving antenna meets
    fade_percentile: float
    altitude_m: float
    data_rate_bps: float
    required_ebn0_db: float | None  # ideal + implementation loss - coding gain
    ideal_ebn0_db: float | None  # an ideal demodulator's need, by theory
    implementation_loss_db: float
    coding_gain_db: float
    required_cn0_dbhz: float | None  # given directly (analog modes); else None
    system_noise_temperature_k: float  # at the antenna terminals: T_A + T_chain / M
    noise_terms: dict[str, float] = field(default_factory=dict)  # breakdown for the ladder
    feedline_loss_db: float | None = 0.0  # receiving station's main run, cables + connectors; None for the uplink
    mismatch_loss_db: float = 0.0  # -10 log10 M; charged in T_sys (see the module notes)
    pre_lna_loss_db: float | None = None  # downlink: between antenna and LNA; None for the uplink
    antenna_noise_temperature_k: float | None = None  # T_A (downlink)
    chain_noise_temperature_k: float | None = None  # T_chain / M at the antenna terminals (downlink)
    notes: list[str] = field(default_factory=list)  # what the ladder must say (no feed data...)
    model_notes: list[str] = field(default_factory=list)  # where a model is used beyond its range
    # Receiving antenna: a pattern table (downlink) or a fixed gain and polarization (uplink).
    pattern: PatternTable | None = None
    fixed_gain_rhcp_dbic: float | None = None
    fixed_gain_lhcp_dbic: float | None = None


def _station_line_loss_db(runs, connectors, connector_loss_db, frequency_hz) -> float:
    return float(sum(cable_loss_db(cable, frequency_hz, length_m) for cable, length_m in runs) + connectors * connector_loss_db)


def _required(config, data_rate_bps):
    """(required Eb/N0 with losses, ideal Eb/N0, required C/N0) for a satellite's mode."""
    if config.required_cn0_dbhz is not None:
        return None, None, config.required_cn0_dbhz
    theory = required_ebn0_db(config.modulation, config.target_ber, gmsk_bt=config.gmsk_bt)
    return theory + config.implementation_loss_db - config.coding_gain_db, theory, None


def _threshold_terms(sat, required, theory, required_cn0) -> dict:
    """The LinkSetup fields that say what the demodulator needs (same for both directions)."""
    return dict(
        data_rate_bps=sat.data_rate_bps,
        required_ebn0_db=required,
        ideal_ebn0_db=theory,
        implementation_loss_db=sat.implementation_loss_db,
        coding_gain_db=sat.coding_gain_db,
        required_cn0_dbhz=required_cn0,
    )


def pattern_file_name(pattern) -> str:
    """The table's file name, as the screens name it."""
    path = getattr(pattern, "path", None)
    return path.name if path else "(built in memory)"


def check_pattern_frequency(candidate, sat, frequency_hz: float, source: str = "scenario") -> None:
    """Warn beyond :data:`PATTERN_FREQUENCY_WARNING`, refuse beyond :data:`PATTERN_FREQUENCY_LIMIT` (see there)."""
    pattern = candidate.pattern
    offset = _frequency_offset(pattern, frequency_hz)
    if offset <= PATTERN_FREQUENCY_WARNING:
        return
    said = (
        f"candidate {candidate.name}: pattern table {pattern_file_name(pattern)} was computed at "
        f"{pattern.frequency_hz / 1e6:g} MHz, but {sat.name} transmits on {frequency_hz / 1e6:g} MHz "
        f"({100.0 * offset:.1f} % away)"
    )
    if offset > PATTERN_FREQUENCY_LIMIT:
        raise UserError(
            f"{source}: {said}; allowed: within {100 * PATTERN_FREQUENCY_LIMIT:g} % of the table's frequency "
            f"({pattern.frequency_hz * (1 - PATTERN_FREQUENCY_LIMIT) / 1e6:g} to "
            f"{pattern.frequency_hz * (1 + PATTERN_FREQUENCY_LIMIT) / 1e6:g} MHz); build a table at the satellite's "
            "frequency (planner pattern build ... --frequency-mhz F)"
        )
    warn(f"{said}; the gains and feed VSWR used are the table's, valid within a few per cent of its frequency")


def _frequency_offset(pattern, frequency_hz: float) -> float:
    """How far ``frequency_hz`` lies from the table's frequency, as a fraction of it."""
    return abs(frequency_hz / pattern.frequency_hz - 1.0)


def nearest_band(candidate, frequency_hz: float):
    """The single-band set-up of ``candidate`` whose table was computed nearest ``frequency_hz``.

    A one-antenna candidate is its own band; ties go to the band listed first.
    """
    bands = getattr(candidate, "band_list", (candidate,))
    return min(bands, key=lambda band: _frequency_offset(band.pattern, frequency_hz))


def band_for(candidate, sat, frequency_hz: float, source: str = "scenario"):
    """The band of ``candidate`` that receives ``sat`` on ``frequency_hz``, checked as one table is.

    The nearest table in frequency is taken (:func:`nearest_band`) and held to the one-table
    rules of :func:`check_pattern_frequency`. When a candidate of several bands has none within
    :data:`PATTERN_FREQUENCY_LIMIT`, the error names the candidate's bands instead of one table.
    """
    band = nearest_band(candidate, frequency_hz)
    bands = getattr(candidate, "band_list", (candidate,))
    if len(bands) > 1 and _frequency_offset(band.pattern, frequency_hz) > PATTERN_FREQUENCY_LIMIT:
        have = ", ".join(f"{pattern_file_name(b.pattern)} at {b.pattern.frequency_hz / 1e6:g} MHz" for b in bands)
        raise UserError(
            f"{source}: candidate {candidate.name} has no band for {sat.name} on {frequency_hz / 1e6:g} MHz; "
            f"allowed: a satellite within {100 * PATTERN_FREQUENCY_LIMIT:g} % of one of its bands ({have}); "
            "add a [[candidate.band]] with a table built near that frequency"
        )
    check_pattern_frequency(band, sat, frequency_hz, source)
    return band


def no_feed_data_note(candidate) -> str | None:
    """The ladder's and the comparison's note when no mismatch is charged for lack of feed data."""
    if candidate.feed_vswr_source is not None:
        return None
    return (
        f"no feed mismatch charged for {candidate.name}: its pattern table {pattern_file_name(candidate.pattern)} "
        "has no feed_vswr in its header and the scenario gives none, so the feed is taken as matched "
        "(give feed_vswr in the [[candidate]] table to charge one)"
    )


def candidate_antenna_noise(candidate, frequency_hz: float, receiver, station):
    """The candidate antenna's noise temperature at this station (sky, ground, man-made), integrated
    over its pattern: the costly part of a downlink set-up, shared by every satellite on one frequency.
    A candidate of several bands uses the band nearest ``frequency_hz`` (:func:`nearest_band`)."""
    return antenna_noise_temperature_k(
        nearest_band(candidate, frequency_hz).pattern,
        frequency_hz,
        station.noise_environment,
        ground_temperature_k=receiver.ground_temperature_k,
        altitude_m=station.altitude_m,
    )


def downlink_setup(
    sat, candidate, receiver, station, *, fade_percentile: float, source: str = "scenario", antenna_noise=None
) -> LinkSetup:
    """Fixed parts of the satellite -> station link for one candidate set-up.

    ``sat`` is a satellite's configuration (planner.scenario.SatelliteConfig), ``candidate`` a
    planner.study.Candidate, ``receiver`` the scenario's ReceiverConfig, ``station`` a
    planner.passes.station.Station. ``antenna_noise`` may pass the result of
    :func:`candidate_antenna_noise` for this candidate, frequency and station when the caller has it.
    """
    frequency_hz = sat.downlink_frequency_hz
    candidate = band_for(candidate, sat, frequency_hz, source)  # the band that hears this satellite
    pattern = candidate.pattern
    feedline_db = _station_line_loss_db(candidate.feedline, candidate.connectors, candidate.connector_loss_db, frequency_hz)
    pre_lna_db = (
        _station_line_loss_db(candidate.pre_lna_feedline, candidate.pre_lna_connectors, candidate.connector_loss_db, frequency_hz)
        + candidate.pre_lna_loss_db
    )
    vswr = candidate.feed_vswr
    mismatch_db = 0.0 if vswr is None else float(mismatch_loss_db(vswr))
    noise = antenna_noise if antenna_noise is not None else candidate_antenna_noise(candidate, frequency_hz, receiver, station)
    lna_position = candidate.lna_position or receiver.lna_position
    chain = receive_chain(
        noise.total_k,
        feedline_loss_db=feedline_db,
        feedline_temperature_k=receiver.feedline_temperature_k,
        lna_noise_figure_db=None if lna_position == "none" else receiver.lna_noise_figure_db,
        lna_gain_db=receiver.lna_gain_db,
        lna_at_antenna=lna_position == "antenna",
        receiver_noise_figure_db=receiver.receiver_noise_figure_db,
        mismatch_loss_db=mismatch_db,
        pre_lna_loss_db=pre_lna_db,
    )
    required, theory, required_cn0 = _required(sat, sat.data_rate_bps)
    tx_power_dbw = 10.0 * log10(sat.tx_power_w)
    parts = chain.breakdown
    # Each stage's share at the antenna terminals (Friis; after the mismatch divided by M).
    noise_terms = {
        "antenna_sky_temperature_k": noise.sky_k,
        "antenna_sky_atmosphere_k": noise.atmosphere_k,  # of the sky term: the atmosphere's emission
        "antenna_ground_temperature_k": noise.ground_k,
        "man_made_noise_temperature_k": noise.man_made_k,
        "antenna_noise_temperature_k": noise.total_k,
        "pre_lna_noise_k": parts["pre_lna"],
        "lna_noise_k": parts.get("lna", 0.0),
        "feedline_noise_k": parts["feedline"],
        "receiver_noise_k": parts["receiver"],
        "receiver_chain_temperature_k": chain.chain_noise_temperature_k,
    }
    note = no_feed_data_note(candidate)
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
        fade_percentile=fade_percentile,
        altitude_m=station.altitude_m,
        **_threshold_terms(sat, required, theory, required_cn0),
        system_noise_temperature_k=chain.system_noise_temperature_k,
        noise_terms=noise_terms,
        feedline_loss_db=feedline_db,
        mismatch_loss_db=mismatch_db,
        pre_lna_loss_db=pre_lna_db,
        antenna_noise_temperature_k=noise.total_k,
        chain_noise_temperature_k=chain.chain_noise_temperature_k,
        notes=[note] if note else [],
        model_notes=[n for n in [p372_extrapolation_note(frequency_hz, station.noise_environment)] if n],
        pattern=pattern,
    )


def uplink_setup(sat, tx, runs, station, *, fade_percentile: float, source: str = "scenario") -> LinkSetup:
    """Fixed parts of the station -> satellite link (needs [transmitter] and uplink_mhz).

    ``tx`` is the scenario's TransmitterConfig (None: refused), ``runs`` its resolved feedline
    ((Cable, length_m), ...), ``station`` the transmitting station.
    """
    if tx is None:
        raise UserError(f"{source}: an uplink budget needs a [transmitter] table (power_w, antenna, feedline)")
    if sat.uplink_mhz is None:
        raise UserError(f"{source}: satellite {sat.name} has no uplink_mhz")
    frequency_hz = sat.uplink_frequency_hz
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
    wave_kind: WaveKind = tx.polarization
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
        fade_percentile=fade_percentile,
        altitude_m=station.altitude_m,
        **_threshold_terms(sat, required, theory, required_cn0),
        system_noise_temperature_k=sat.uplink_rx_noise_temperature_k,
        noise_terms={"satellite_receiver_temperature_k": sat.uplink_rx_noise_temperature_k},
        feedline_loss_db=None,  # the station's line is the transmitter's here: tx_line_loss_db, once
        fixed_gain_rhcp_dbic=10.0 * log10(max(g_r, floor)),
        fixed_gain_lhcp_dbic=10.0 * log10(max(g_l, floor)),
    )


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
    # Available carrier at the antenna terminals; the mismatch is charged in T_sys (module notes).
    received_dbw = setup.eirp_dbw - fsl - atm - pol_mean + rx_gain
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
            "rx_gain_total_dbi": rx_gain,
            "mismatch_loss_db": np.full_like(cn0, setup.mismatch_loss_db),
            "received_power_dbw": received_dbw,
            "pre_lna_loss_db": np.full_like(cn0, np.nan if setup.pre_lna_loss_db is None else setup.pre_lna_loss_db),
            "feedline_loss_db": np.full_like(cn0, np.nan if setup.feedline_loss_db is None else setup.feedline_loss_db),
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


class LadderRow(NamedTuple):
    """One row of the ladder: its key (in the JSON and the evaluate() frame), unit, meaning and stage."""

    key: str
    unit: str
    meaning: str
    stage: str


def _rows(stage: str, *rows: tuple[str, str, str]) -> tuple[LadderRow, ...]:
    return tuple(LadderRow(key, unit, meaning, stage) for key, unit, meaning in rows)


# The ladder reads top to bottom as the arithmetic of the module notes: where the satellite is,
# the carrier from the transmitter to the receiving antenna's terminals (C), the noise it meets
# there (T_sys, C/N0), and what the demodulator makes of it (Eb/N0 against what it needs).
LADDER: tuple[LadderRow, ...] = (
    *_rows(
        "geometry",
        ("frequency_mhz", "MHz", "carrier frequency"),
        ("elevation_deg", "deg", "satellite elevation seen from the station"),
        ("azimuth_deg", "deg", "satellite azimuth, clockwise from true north"),
        ("range_km", "km", "slant range station-satellite"),
    ),
    *_rows(
        "carrier",
        ("tx_power_dbw", "dBW", "transmitter output power, 10 log10(P / 1 W)"),
        ("tx_line_loss_db", "dB", "loss between the transmitter and its antenna (uplink: the station's feedline and connectors)"),
        ("tx_antenna_gain_dbi", "dBi", "transmitting antenna gain toward the other end"),
        ("eirp_dbw", "dBW", "EIRP = power - line loss + antenna gain"),
        ("free_space_loss_db", "dB", "free-space loss 20 log10(4 pi d f / c), ITU-R P.525"),
        ("atmospheric_loss_db", "dB", "gaseous absorption on the slant path, ITU-R P.676"),
        ("polarization_loss_db", "dB", "polarization mismatch, tilt-averaged (Stutzman)"),
        ("polarization_fade_loss_db", "dB", "polarization mismatch not exceeded at the fade percentile"),
        ("rx_gain_rhcp_dbic", "dBic", "receiving antenna RHCP partial gain toward the other end"),
        ("rx_gain_lhcp_dbic", "dBic", "receiving antenna LHCP partial gain toward the other end"),
        ("rx_gain_total_dbi", "dBi", "receiving antenna total gain, RHCP + LHCP partial gains summed as powers"),
        ("received_power_dbw", "dBW", "C: available carrier at the antenna terminals = EIRP - L_fs - L_atm - L_pol + total gain"),
    ),
    *_rows(
        "noise",
        (
            "mismatch_loss_db",
            "dB",
            "feed mismatch -10 log10(M), M = 1 - |Gamma|^2: scales carrier and antenna noise alike, so charged once, in T_sys (T_chain / M)",
        ),
        ("pre_lna_loss_db", "dB", "between antenna and LNA: jumper cables, connectors, switch, bias-tee (before the LNA)"),
        ("feedline_loss_db", "dB", "receiving station's main feedline: cables and connectors (downlink)"),
        (
            "antenna_noise_temperature_k",
            "K",
            "T_A: sky (with the atmosphere's emission) + ground + man-made noise the pattern picks up",
        ),
        (
            "chain_noise_temperature_k",
            "K",
            "T_chain / M: pre-LNA loss, LNA, feedline and receiver by Friis, at the antenna terminals",
        ),
        ("system_noise_temperature_k", "K", "T_sys = T_A + T_chain / M, at the antenna terminals"),
        ("g_over_t_dbk", "dB/K", "receiving figure of merit G/T = total gain - 10 log10(T_sys)"),
        ("boltzmann_dbw_per_k_hz", "dBW/K/Hz", "Boltzmann's constant, 10 log10(k)"),
        ("cn0_dbhz", "dB-Hz", "C/N0 = C - 10 log10(k) - 10 log10(T_sys)"),
    ),
    *_rows(
        "demodulator",
        ("data_rate_dbhz", "dB-Hz", "10 log10(data rate)"),
        ("ebn0_db", "dB", "Eb/N0 = C/N0 - 10 log10(data rate)"),
        ("ideal_ebn0_db", "dB", "Eb/N0 an ideal demodulator of this modulation needs for the target BER (theory)"),
        ("implementation_loss_db", "dB", "how far this demodulator falls short of the ideal one"),
        ("coding_gain_db", "dB", "what forward error correction gives back"),
        ("required_ebn0_db", "dB", "Eb/N0 this receiver needs = ideal + implementation loss - coding gain"),
        ("required_cn0_dbhz", "dB-Hz", "C/N0 an analog mode needs, given in the scenario"),
        ("margin_db", "dB", "margin: Eb/N0 - required Eb/N0 (analog: C/N0 - required C/N0)"),
        ("margin_at_fade_db", "dB", "margin with the polarization mismatch at the fade percentile"),
    ),
)


def pass_summary(along: pd.DataFrame, min_margin_db: float) -> dict[str, float | int]:
    """Margins along one pass (the frame of :func:`pass_budget`): samples, min/median/max margin,
    and the seconds at or above the usable margin (each sample counts until the next one)."""
    time_s = along["time_s"].to_numpy()
    margin_db = along["margin_db"].to_numpy()
    steps = np.diff(time_s, append=time_s[-1])
    return {
        "samples": int(len(along)),
        "min_margin_db": float(along["margin_db"].min()),
        "median_margin_db": float(along["margin_db"].median()),
        "max_margin_db": float(along["margin_db"].max()),
        "seconds_at_or_above_min_margin": float(steps[margin_db >= min_margin_db].sum()),
        "min_margin_criterion_db": min_margin_db,
    }


def ladder_values(setup: LinkSetup, row: pd.Series) -> dict[str, float | None]:
    """One sample's budget as the ladder's keys (None where a term does not apply)."""
    ladder_keys = {row.key for row in LADDER}
    values = {key: row[key] for key in row.index if key in ladder_keys}
    values.update(
        frequency_mhz=setup.frequency_hz / 1e6,
        tx_power_dbw=setup.tx_power_dbw,
        tx_antenna_gain_dbi=setup.tx_antenna_gain_dbi,
        tx_line_loss_db=setup.tx_line_loss_db,
        boltzmann_dbw_per_k_hz=BOLTZMANN_DBW_PER_K_HZ,
        data_rate_dbhz=None if setup.required_cn0_dbhz is not None else 10.0 * log10(setup.data_rate_bps),
        ideal_ebn0_db=setup.ideal_ebn0_db,
        implementation_loss_db=None if setup.required_cn0_dbhz is not None else setup.implementation_loss_db,
        coding_gain_db=None if setup.required_cn0_dbhz is not None else setup.coding_gain_db,
        required_cn0_dbhz=setup.required_cn0_dbhz,
        antenna_noise_temperature_k=setup.antenna_noise_temperature_k,
        chain_noise_temperature_k=setup.chain_noise_temperature_k,
        pre_lna_loss_db=setup.pre_lna_loss_db,
    )
    if setup.direction == "uplink":
        values["mismatch_loss_db"] = None  # the satellite's receiver is given as a gain and a temperature
    if setup.required_cn0_dbhz is not None:
        values["ebn0_db"] = None
        values["required_ebn0_db"] = None
    for key, value in list(values.items()):
        if value is not None:
            value = float(value)
            values[key] = None if not np.isfinite(value) else value
    return {row.key: values.get(row.key) for row in LADDER}

"""Gaseous attenuation on the slant path to a satellite (ITU-R P.676), and what the budget leaves out.

The loss comes from the line-by-line method of ITU-R P.676 Annex 1 (oxygen and water vapour
specific attenuation, ``itur.models.itu676.gamma_exact``) summed along a refracted ray through
thin spherical layers (P.676 Annex 1, slant paths: layer thickness growing exponentially from
10 cm to about 1 km, Snell's law for spherical layers, refractive index from ITU-R P.453).

Reference atmosphere
    The ITU-R P.835 mean annual global reference atmosphere, as ``itur.models.itu835``
    implements it: 1013.25 hPa, 288.15 K (15 C) and 7.5 g/m3 of water vapour at sea level,
    with the standard temperature, pressure and water-vapour profiles above. A station above
    sea level starts its path at its own height, where the profile gives its own pressure,
    temperature and humidity (for example about 899 hPa, 8.5 C and 4.5 g/m3 at 1 km).
    No local climatology is used: at VHF and UHF the whole effect is a few tenths of a dB
    near the horizon and hundredths of a dB above 30 deg, so the reference is adequate.

Why not ``itu676.gaseous_attenuation_slant_path(..., mode='exact')`` directly
    It is the reference the tests check against, but (itur 0.4.0) its exact mode always
    starts the path at sea level (the ``h``, ``P`` and ``T`` arguments are not used there) and
    it costs about 0.1 s per elevation. The sum here is the same P.676 procedure, vectorized
    over elevation and started at the station height; at sea level it reproduces itur's
    exact mode (tests: within 0.01 dB). Its ``approx`` mode returns 0 below about 1 GHz.

Frequency range
    P.676 states its line-by-line method for 1-1000 GHz. Below 1 GHz the gaseous loss is the
    low-frequency tail of the oxygen (non-resonant Debye) and water-vapour continuum terms
    of the same formula, a smooth physical extrapolation; the values are small (about
    0.2 dB at 5 deg elevation at 435 MHz) and are used without a warning.

Elevation
    Computed once per (frequency, station height) on a fixed grid from 0.5 to 90 deg that
    is denser near the horizon, cached, and interpolated for arrays of any size (the
    interpolated quantity is loss x sin(elevation), which is smooth and nearly flat; a cubic
    spline through it is accurate to well under 0.01 dB). Elevations below 0.5 deg are clipped to
    0.5 deg: below it the ray model and the reference profile say little (ducting, terrain),
    and a satellite that low is rarely usable anyway.

Emission (the sky brightness of the clear atmosphere)
    An absorbing atmosphere also radiates. ITU-R P.372-16 section 4 (eq. 10) gives the
    brightness temperature seen from the ground along a path of gaseous loss A (dB) as

        T_sky = T_ext 10^(-A/10) + T_mr (1 - 10^(-A/10))

    with T_ext the brightness beyond the atmosphere (galactic + cosmic background, see
    planner.link.noise) and T_mr the mean radiating temperature of the path. For T_mr this
    module uses P.372-16 eq. 11, T_mr = 37.34 + 0.81 T_s (K), with T_s the P.835 reference
    temperature at the station height (288.15 K at sea level gives 270.7 K). The form was
    checked against a public implementation of P.372-16 (to be checked against the
    Recommendation's own text); older editions give T_mr = 1.12 T_s - 50 K (272.7 K at
    288.15 K) or about 275 K for clear air: all within 2 %, far below the spread of the
    galactic term. A is :func:`gaseous_loss_db` at the same elevation and station height.
    At 436 MHz the emission is about 1.3 K at the zenith, 13 K at 5 deg and 40 K at the horizon.

itur is imported inside the functions that need it (importing it costs about 1.5 s).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy.interpolate import CubicSpline

from planner.constants import EARTH_MEAN_RADIUS_KM
from planner.errors import UserError

MIN_ELEVATION_DEG = 0.5
"""Elevations below this are clipped to it (see the module notes)."""

REFERENCE_SURFACE_PRESSURE_HPA = 1013.25
REFERENCE_SURFACE_TEMPERATURE_K = 288.15
REFERENCE_SURFACE_WATER_VAPOUR_G_M3 = 7.5
"""ITU-R P.835 mean annual global reference atmosphere at sea level."""

MAX_STATION_ALTITUDE_M = 10_000.0

NEGLECTED: list[str] = [
    "rain and cloud attenuation (ITU-R P.618/P.840): negligible below about 2 GHz",
    "tropospheric scintillation: a few tenths of a dB at most, near the horizon, above VHF/UHF",
    "ionospheric scintillation: can matter at VHF at high and low (equatorial) latitudes",
    "ionospheric Faraday rotation: turns a linear wave's plane; covered by the random-tilt "
    "(tumbling) model against circular ground antennas, not modelled for linear ones",
    "multipath and ground reflections near the horizon (the pattern table is free-space or image-theory, not the real site)",
    "refraction beyond the ray bending inside the P.676 path sum (apparent versus true elevation)",
    "pointing and attitude of the spacecraft antenna beyond the gain given for it",
    "Doppler tracking losses in the receiver",
    "interference from other transmitters",
    "the LNA's noise parameters against source impedance: its noise figure is taken as stated "
    "for 50 ohm, whatever the antenna's mismatch",
]
"""What the link budget leaves out, one short line each (for reports and the CLI)."""


def _layer_heights_km(station_km: float) -> tuple[np.ndarray, np.ndarray]:
    """P.676 Annex 1 layers (thickness 10 cm growing by e^(1/100) a layer) from the station up."""
    index = np.arange(922)
    thickness_km = 0.0001 * np.exp(index / 100.0)
    height_km = station_km + 0.0001 * (np.exp(index / 100.0) - 1.0) / (np.exp(1.0 / 100.0) - 1.0)
    keep = height_km < 100.0  # the P.835 reference profiles end at 100 km
    return height_km[keep], thickness_km[keep]


def _slant_path_loss_db(frequency_ghz: float, elevation_deg: np.ndarray, station_km: float) -> np.ndarray:
    """P.676 Annex 1 slant-path sum through the P.835 reference atmosphere, vectorized over elevation."""
    from itur.models import itu453, itu676, itu835  # lazy: importing itur costs ~1.5 s

    height_km, thickness_km = _layer_heights_km(station_km)
    temperature_k = itu835.standard_temperature(height_km).to("K").value
    pressure_hpa = itu835.standard_pressure(height_km).value
    water_g_m3 = itu835.standard_water_vapour_density(height_km, rho_0=REFERENCE_SURFACE_WATER_VAPOUR_G_M3).value
    gamma_db_km = np.asarray(itu676.gamma_exact(frequency_ghz, pressure_hpa, water_g_m3, temperature_k).value, dtype=float)
    vapour_pressure_hpa = water_g_m3 * temperature_k / 216.7
    refractive_index = np.asarray(
        itu453.radio_refractive_index(pressure_hpa, vapour_pressure_hpa, temperature_k).value, dtype=float
    )
    index_ratio = refractive_index / np.append(refractive_index[1:], refractive_index[-1])
    radius_km = EARTH_MEAN_RADIUS_KM + height_km

    # beta: angle of the ray from the local vertical at the bottom of each layer.
    beta = np.pi / 2.0 - np.deg2rad(np.asarray(elevation_deg, dtype=float))
    loss_db = np.zeros_like(beta)
    for r, delta, gamma, ratio in zip(radius_km, thickness_km, gamma_db_km, index_ratio):
        cos_beta = np.cos(beta)
        # Path length a through the layer and exit angle alpha (P.676 Annex 1, slant paths).
        a = -r * cos_beta + 0.5 * np.sqrt(4 * r**2 * cos_beta**2 + 8 * r * delta + 4 * delta**2)
        cos_arg = np.clip((-(a**2) - 2 * r * delta - delta**2) / (2 * a * r + 2 * a * delta), -1.0, 1.0)
        alpha = np.pi - np.arccos(cos_arg)
        loss_db += a * gamma
        beta = np.arcsin(np.clip(np.sin(alpha) * ratio, -1.0, 1.0))  # Snell, spherical layers
    return loss_db


def _elevation_grid_deg() -> np.ndarray:
    """0.5..90 deg, about 0.25 deg apart near the horizon and 5 deg apart near the zenith."""
    low = np.arange(MIN_ELEVATION_DEG, 5.0, 0.25)
    mid = np.arange(5.0, 20.0, 1.0)
    high = np.arange(20.0, 90.0, 5.0)
    return np.concatenate([low, mid, high, [90.0]])


@lru_cache(maxsize=64)
def _loss_table(frequency_hz: float, altitude_m: float) -> CubicSpline:
    """Cubic spline of loss x sin(elevation) over elevation, for one frequency and station height."""
    grid_deg = _elevation_grid_deg()
    loss_db = _slant_path_loss_db(frequency_hz / 1e9, grid_deg, altitude_m / 1000.0)
    return CubicSpline(grid_deg, loss_db * np.sin(np.deg2rad(grid_deg)))


def gaseous_loss_db(frequency_hz: float, elevation_deg, *, altitude_m: float = 0.0):
    """Oxygen and water-vapour loss (dB) on the slant path from a station to space.

    ``elevation_deg`` may be a number or an array (the result has its shape). Elevations below
    :data:`MIN_ELEVATION_DEG` are clipped to it. ``altitude_m`` is the station height above
    sea level (0..10 000 m). See the module notes for the model and its reference atmosphere.
    """
    frequency_hz = float(frequency_hz)
    if not np.isfinite(frequency_hz) or frequency_hz <= 0:
        raise UserError(f"atmosphere: frequency_hz must be a positive number, got {frequency_hz!r}")
    altitude_m = float(altitude_m)
    if not (-500.0 <= altitude_m <= MAX_STATION_ALTITUDE_M):
        raise UserError(f"atmosphere: station altitude_m must be between -500 and {MAX_STATION_ALTITUDE_M:.0f}, got {altitude_m!r}")
    altitude_m = max(altitude_m, 0.0)  # below sea level: use the sea-level reference
    elevation = np.asarray(elevation_deg, dtype=float)
    clipped = np.clip(elevation, MIN_ELEVATION_DEG, 90.0)
    loss_db = _loss_table(frequency_hz, altitude_m)(clipped) / np.sin(np.deg2rad(clipped))
    if np.ndim(elevation_deg) == 0:
        return float(loss_db)
    return loss_db


# ------------------------------------------------------------------ emission (ITU-R P.372)

P372_TMR_OFFSET_K = 37.34
P372_TMR_SLOPE = 0.81
"""ITU-R P.372-16 eq. 11: mean radiating temperature T_mr = 37.34 + 0.81 T_s (K)."""


@lru_cache(maxsize=64)
def reference_surface_temperature_k(altitude_m: float = 0.0) -> float:
    """Air temperature (K) of the P.835 mean annual global reference atmosphere at the station height."""
    from itur.models import itu835  # lazy: importing itur costs ~1.5 s

    altitude_m = max(float(altitude_m), 0.0)
    return float(itu835.standard_temperature(altitude_m / 1000.0).to("K").value)


def mean_radiating_temperature_k(surface_temperature_k: float) -> float:
    """T_mr = 37.34 + 0.81 T_s (K), ITU-R P.372-16 eq. 11 (see the module notes)."""
    return P372_TMR_OFFSET_K + P372_TMR_SLOPE * float(surface_temperature_k)


def clear_sky_brightness_k(frequency_hz: float, elevation_deg, *, background_k: float, altitude_m: float = 0.0):
    """Brightness temperature (K) of the clear sky seen from the station toward ``elevation_deg``.

    ITU-R P.372-16 eq. 10: T = T_ext 10^(-A/10) + T_mr (1 - 10^(-A/10)), with ``background_k``
    the brightness beyond the atmosphere (T_ext), A = :func:`gaseous_loss_db` at that elevation
    and station height, and T_mr from :func:`mean_radiating_temperature_k` at the P.835 surface
    temperature there. Elevations below :data:`MIN_ELEVATION_DEG` take its loss (see
    :func:`gaseous_loss_db`). Vectorized over ``elevation_deg``.
    """
    if not (np.isfinite(background_k) and background_k >= 0):
        raise UserError(f"atmosphere: background temperature must be >= 0 K, got {background_k!r}")
    loss_db = gaseous_loss_db(frequency_hz, elevation_deg, altitude_m=altitude_m)
    t_mr = mean_radiating_temperature_k(reference_surface_temperature_k(max(float(altitude_m), 0.0)))
    transmittance = 10.0 ** (-np.asarray(loss_db, dtype=float) / 10.0)
    brightness = background_k * transmittance + t_mr * (1.0 - transmittance)
    return float(brightness) if np.ndim(brightness) == 0 else brightness

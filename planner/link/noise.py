"""Noise: noise figure and temperature, ITU-R P.372 external noise, antenna temperature, Friis cascade.

External noise (ITU-R P.372)
    Median external noise factor Fa = c - d log10(f_MHz) dB above k T0 b, T0 = 290 K, so the
    equivalent antenna temperature is T = 290 * 10^(Fa/10). Constants (c, d): city (76.8, 27.7),
    residential (72.5, 27.7), rural (67.2, 27.7), quiet rural (53.6, 28.6), galactic (52.0, 23.0)
    (recalled from memory; a public implementation of P.372-10 section 5 found by code search,
    functions ``ManMadeNoise``/``GalacticNoise``, uses the same numbers). P.372 gives the
    man-made lines for 0.3-250 MHz: beyond that they are extrapolated and a warning says so.
    The galactic line holds from the ionospheric cut-off (about 10 MHz) to about 1 GHz, above
    which the cosmic background and the atmosphere dominate (from memory); outside it warns too.

Sky and ground
    Beyond the atmosphere the sky brightness T_ext is the P.372 galactic temperature, taken
    as uniform over the sky (the galactic plane is hotter and the poles colder than the
    median), plus the cosmic microwave background 2.725 K (Fixsen 2009, ApJ 707, 916), which
    keeps the sky from going to 0 K where the galactic line is extrapolated. Seen from the
    ground through the clear atmosphere, toward elevation E (ITU-R P.372-16 eq. 10,
    brightness temperature of the clear atmosphere; see planner.link.atmosphere):

        T_sky(E) = T_ext 10^(-A(E)/10) + T_mr (1 - 10^(-A(E)/10))

    with A(E) the P.676 gaseous loss from planner.link.atmosphere at that elevation and the
    station's height, and T_mr = 37.34 + 0.81 T_s (P.372-16 eq. 11) the mean radiating
    temperature. At 436 MHz the air emits about 1.3 K at the zenith, 13 K at 5 deg and 40 K
    at the horizon, and absorbs a little of the 42 K beyond (net +1.1 K at the zenith, +11 K
    at 5 deg; about +4 K for an antenna that sees the upper hemisphere evenly, +9 K at
    2.2 GHz); at 145 MHz, where the galaxy (about 480 K) is hotter than the air, the air
    absorbs more than it emits and the sky is slightly colder. A is computed once per elevation
    row of the quadrature (atmosphere.py caches a spline per frequency and height), so the
    integral stays vectorized. Below the horizon the ground radiates as a black body at
    ``ground_temperature_k`` (290 K; real ground reflects some sky, so this is slightly
    pessimistic).

Antenna temperature
    T_A = integral of G(az, el) T_b(az, el) dOmega / integral of G dOmega with G = G_R + G_L
    (linear) from the pattern table, integrated over the whole sphere on cells of
    0.5 deg x 2 deg whose solid angles are exact (sin e2 - sin e1 per unit azimuth), so an
    antenna that looks at the ground pays for it. Dividing by the integral of G means
    the pattern's own normalization does not matter; ohmic loss of the antenna is not in
    the pattern and not counted here.
    Man-made noise arrives from sources around the station near the horizon; P.372 gives it
    as received by a short vertical monopole, an omnidirectional antenna. It is added here
    as that, whatever the candidate's pattern: a simplification that is pessimistic for
    antennas with little gain at the horizon and treats all candidates alike.

Cascade
    Friis (Proc. IRE 32, 1944): T = T1 + T2/G1 + T3/(G1 G2) + ... referred to the input.
    A lossy line of loss L at T_phys is a stage of gain 1/L and noise temperature (L-1) T_phys.

Feed mismatch
    A lossless junction between a source of reflection coefficient Gamma and a matched line
    delivers M = 1 - |Gamma|^2 of the source's available power, signal and noise alike: a
    mismatched antenna at noise temperature T_A delivers k T_A B M (Pozar, Microwave
    Engineering, noise of a mismatched source; with a uniform 290 K scene and no loss, M k
    290 K B). In the cascade the mismatch is therefore a stage of gain M that adds no noise
    of its own, so everything after it is divided by M when referred to the antenna
    terminals: T_sys = T_A + T_chain / M, and C/N0 = M C / k (M T_A + T_chain). The noise
    the LNA's input sends back toward a mismatched antenna (its noise parameters against
    source impedance) is not modelled: an LNA noise figure is taken as stated for 50 ohm.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from planner.choices import canonical_choice
from planner.errors import UserError
from planner.link.feedline import line_noise_temperature_k

T0_K = 290.0
"""Standard reference temperature for noise figure (IEEE)."""


CMB_K = 2.725
"""Cosmic microwave background temperature (Fixsen 2009)."""

P372_CONSTANTS: dict[str, tuple[float, float]] = {
    "city": (76.8, 27.7),
    "residential": (72.5, 27.7),
    "rural": (67.2, 27.7),
    "quiet_rural": (53.6, 28.6),
    "galactic": (52.0, 23.0),
}
"""ITU-R P.372 (c, d) for Fa = c - d log10(f_MHz) (from memory; see the module notes)."""

MAN_MADE_ENVIRONMENTS: tuple[str, ...] = ("city", "residential", "rural", "quiet_rural")
MAN_MADE_VALID_MHZ = (0.3, 250.0)
GALACTIC_VALID_MHZ = (10.0, 1000.0)

ELEVATION_STEP_DEG = 0.5
AZIMUTH_STEP_DEG = 2.0


def noise_figure_to_temperature_k(nf_db):
    """Noise temperature T = 290 (10^(NF/10) - 1) K of a noise figure in dB."""
    nf = np.asarray(nf_db, dtype=float)
    if np.any(~(nf >= 0)):
        raise UserError(f"noise figure must be >= 0 dB, got {nf_db!r}")
    t = T0_K * (10.0 ** (nf / 10.0) - 1.0)
    return float(t) if np.ndim(t) == 0 else t


def noise_temperature_to_figure_db(t_k):
    """Noise figure NF = 10 log10(1 + T/290) dB of a noise temperature in K."""
    t = np.asarray(t_k, dtype=float)
    if np.any(~(t >= 0)):
        raise UserError(f"noise temperature must be >= 0 K, got {t_k!r}")
    nf = 10.0 * np.log10(1.0 + t / T0_K)
    return float(nf) if np.ndim(nf) == 0 else nf


def _category(name: str) -> str:
    key = re.sub(r"[\s\-]+", "_", str(name).strip().lower())
    if key not in P372_CONSTANTS:
        raise UserError(f"unknown noise environment '{name}'; allowed: {', '.join(canonical_choice(k) for k in P372_CONSTANTS)}")
    return key


def p372_noise_factor_db(frequency_hz, category: str):
    """Median external noise factor Fa (dB above k T0 b) of ITU-R P.372 for a category.

    ``category``: city, residential, rural, quiet_rural (man-made) or galactic. Outside the range
    the line is given for it is extrapolated; :func:`p372_extrapolation_note` says so once, as a
    modelling note of the budget (see the module notes).
    """
    key = _category(category)
    f_mhz = np.asarray(frequency_hz, dtype=float) / 1e6
    if not np.all(np.isfinite(f_mhz)) or np.any(f_mhz <= 0):
        raise UserError(f"frequency must be positive, got {frequency_hz!r}")
    c, d = P372_CONSTANTS[key]
    fa = c - d * np.log10(f_mhz)
    return float(fa) if np.ndim(fa) == 0 else fa


def p372_extrapolation_note(frequency_hz: float, category: str) -> str | None:
    """The modelling note for a P.372 noise line used outside the range it is given for, or None.

    Said per side of the range, not per frequency, so a budget or a report states it once.
    """
    key = _category(category)
    low, high = GALACTIC_VALID_MHZ if key == "galactic" else MAN_MADE_VALID_MHZ
    f_mhz = float(frequency_hz) / 1e6
    if low <= f_mhz <= high:
        return None
    side = f"below {low:g}" if f_mhz < low else f"above {high:g}"
    return f"ITU-R P.372 {key.replace('_', ' ')} noise is given for {low:g}-{high:g} MHz; it is extrapolated {side} MHz here"


def _fa_to_temperature_k(fa_db):
    return T0_K * 10.0 ** (np.asarray(fa_db, dtype=float) / 10.0)


def man_made_noise_temperature_k(frequency_hz, environment: str | None):
    """Median man-made noise temperature (K) of ITU-R P.372 for an environment; 0 for None."""
    if environment is None:
        return 0.0 if np.ndim(frequency_hz) == 0 else np.zeros(np.shape(frequency_hz))
    key = _category(environment)
    if key == "galactic":
        raise UserError(f"noise environment must be one of {', '.join(MAN_MADE_ENVIRONMENTS)}, got 'galactic'")
    t = _fa_to_temperature_k(p372_noise_factor_db(frequency_hz, key))
    return float(t) if np.ndim(t) == 0 else t


def galactic_noise_temperature_k(frequency_hz):
    """Median galactic noise temperature (K) of ITU-R P.372 (without the cosmic background)."""
    t = _fa_to_temperature_k(p372_noise_factor_db(frequency_hz, "galactic"))
    return float(t) if np.ndim(t) == 0 else t


def background_sky_temperature_k(frequency_hz: float) -> float:
    """Brightness beyond the atmosphere, T_ext (K): P.372 galactic (uniform) + cosmic background."""
    return float(galactic_noise_temperature_k(frequency_hz)) + CMB_K


def sky_brightness_k(
    frequency_hz: float,
    elevation_deg,
    *,
    ground_temperature_k: float = 290.0,
    altitude_m: float = 0.0,
    atmospheric_emission: bool = True,
):
    """Brightness temperature (K) an antenna sees toward ``elevation_deg``.

    Above the horizon (elevation >= 0): the background T_ext (galactic, P.372, uniform, +
    cosmic background) seen through the clear atmosphere with its own emission (P.372-16
    eq. 10, from a station at ``altitude_m``; see the module notes), or T_ext alone with
    ``atmospheric_emission=False``. Below it: the ground at ``ground_temperature_k``.
    """
    if not (ground_temperature_k >= 0):
        raise UserError(f"ground_temperature_k must be >= 0, got {ground_temperature_k!r}")
    background_k = background_sky_temperature_k(frequency_hz)
    el = np.asarray(elevation_deg, dtype=float)
    if atmospheric_emission:
        from planner.link.atmosphere import clear_sky_brightness_k

        sky_k = clear_sky_brightness_k(frequency_hz, np.maximum(el, 0.0), background_k=background_k, altitude_m=altitude_m)
    else:
        sky_k = background_k
    t = np.where(el >= 0.0, sky_k, float(ground_temperature_k))
    return float(t) if np.ndim(t) == 0 else t


@dataclass(frozen=True)
class NoiseBreakdown:
    """Antenna noise temperature and where it comes from (K)."""

    sky_k: float  # everything from above the horizon (background + atmosphere)
    ground_k: float
    man_made_k: float
    total_k: float
    fraction_below_horizon: float
    atmosphere_k: float = 0.0  # of sky_k: the clear atmosphere's own emission, T_mr (1 - 10^(-A/10))


def _elevation_cells() -> tuple[np.ndarray, np.ndarray]:
    """Cell-centre elevations (deg) and the solid angle per radian of azimuth of each band."""
    el_edges = np.arange(-90.0, 90.0 + ELEVATION_STEP_DEG / 2, ELEVATION_STEP_DEG)
    el_mid = 0.5 * (el_edges[:-1] + el_edges[1:])
    return el_mid, np.diff(np.sin(np.deg2rad(el_edges)))


def _quadrature(pattern) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Cell-centre azimuths and elevations (deg) and exact cell solid angles (sr), flattened.

    Flattened elevation-major: the cells of one elevation band are consecutive.
    """
    el_mid, band = _elevation_cells()
    if getattr(pattern, "azimuth_deg", "unknown") is None:  # azimuth-symmetric table
        az_mid = np.array([0.0])
        az_width_rad = np.array([2.0 * np.pi])
    else:
        az_edges = np.arange(0.0, 360.0 + AZIMUTH_STEP_DEG / 2, AZIMUTH_STEP_DEG)
        az_mid = 0.5 * (az_edges[:-1] + az_edges[1:])
        az_width_rad = np.deg2rad(np.diff(az_edges))
    el_grid, az_grid = np.meshgrid(el_mid, az_mid, indexing="ij")
    solid_angle = band[:, None] * az_width_rad[None, :]
    return az_grid.ravel(), el_grid.ravel(), solid_angle.ravel()


def antenna_noise_temperature_k(
    pattern,
    frequency_hz: float,
    environment: str | None,
    *,
    ground_temperature_k: float = 290.0,
    altitude_m: float = 0.0,
    atmospheric_emission: bool = True,
) -> NoiseBreakdown:
    """Noise temperature (K) available at the antenna terminals of a pattern table in its surroundings.

    ``pattern``: anything with ``gains_dbic(azimuth_deg, elevation_deg) -> (rhcp_dbic, lhcp_dbic)``
    and ``azimuth_deg`` (None when azimuth-symmetric). ``environment``: a P.372 man-made
    category (city, residential, rural, quiet_rural) or None for no man-made noise.
    ``altitude_m``: station height, for the atmosphere's emission (``atmospheric_emission=False``
    leaves it out). See the module notes for the model.
    """
    az, el, solid_angle = _quadrature(pattern)
    rhcp_dbic, lhcp_dbic = pattern.gains_dbic(az, el)
    gain = 10.0 ** (np.asarray(rhcp_dbic, dtype=float) / 10.0) + 10.0 ** (np.asarray(lhcp_dbic, dtype=float) / 10.0)
    gain = np.broadcast_to(gain, el.shape)
    if not np.all(np.isfinite(gain)):
        raise UserError("antenna pattern: gains must be finite numbers")
    weight = gain * solid_angle
    total_weight = weight.sum()
    if not total_weight > 0:
        raise UserError("antenna pattern: total gain is zero in every direction")
    # The brightness depends on elevation only: computed once per elevation band (the
    # atmosphere's loss from its cached spline), then spread over the band's azimuth cells.
    el_mid, _ = _elevation_cells()
    per_band = el.size // el_mid.size
    band_k = sky_brightness_k(
        frequency_hz,
        el_mid,
        ground_temperature_k=ground_temperature_k,
        altitude_m=altitude_m,
        atmospheric_emission=atmospheric_emission,
    )
    brightness = np.repeat(band_k, per_band)
    below = el < 0.0
    ground_k = float(np.sum(weight[below] * brightness[below]) / total_weight)
    sky_k = float(np.sum(weight[~below] * brightness[~below]) / total_weight)
    atmosphere_k = 0.0
    if atmospheric_emission:
        from planner.link.atmosphere import clear_sky_brightness_k

        # The emission alone, T_mr (1 - 10^(-A/10)): the clear sky with nothing beyond it.
        emission_band_k = np.where(
            el_mid >= 0.0,
            clear_sky_brightness_k(frequency_hz, np.maximum(el_mid, 0.0), background_k=0.0, altitude_m=altitude_m),
            0.0,
        )
        atmosphere_k = float(np.sum(weight * np.repeat(emission_band_k, per_band)) / total_weight)
    man_made_k = float(man_made_noise_temperature_k(frequency_hz, environment))
    return NoiseBreakdown(
        sky_k=sky_k,
        ground_k=ground_k,
        man_made_k=man_made_k,
        total_k=sky_k + ground_k + man_made_k,
        fraction_below_horizon=float(weight[below].sum() / total_weight),
        atmosphere_k=atmosphere_k,
    )


def cascade_contributions_k(stages: Sequence[tuple[float, float]]) -> list[float]:
    """Each stage's noise temperature referred to the cascade input: T_n / (G_1 ... G_{n-1}).

    ``stages``: ``[(gain_db, noise_temperature_k), ...]`` in signal order (a loss is a negative gain).
    """
    contributions = []
    gain_before = 1.0
    for gain_db, noise_temperature_k in stages:
        if not np.isfinite(gain_db):
            raise UserError(f"stage gain must be a finite number of dB, got {gain_db!r}")
        if not (noise_temperature_k >= 0):
            raise UserError(f"stage noise temperature must be >= 0 K, got {noise_temperature_k!r}")
        contributions.append(float(noise_temperature_k) / gain_before)
        gain_before *= 10.0 ** (gain_db / 10.0)
    return contributions


def cascade_noise_temperature_k(stages: Sequence[tuple[float, float]]) -> float:
    """Friis: T = T1 + T2/G1 + T3/(G1 G2) + ..., referred to the input of the first stage."""
    return float(sum(cascade_contributions_k(stages)))


@dataclass(frozen=True)
class ReceiveChain:
    """System noise temperature at the antenna terminals, and each part's share of it (K).

    ``breakdown`` maps "antenna", then the stages in signal order ("mismatch", "pre_lna",
    "lna", "feedline", "receiver"; the first two only when asked for), to their noise
    temperature referred to the antenna terminals (everything after a mismatch divided by
    M; the mismatch itself adds 0 K); the values add up to ``system_noise_temperature_k``.
    ``stages`` lists (name, gain_db, noise_temperature_k).
    """

    system_noise_temperature_k: float
    antenna_temperature_k: float
    breakdown: dict[str, float]
    stages: list[tuple[str, float, float]] = field(default_factory=list)

    @property
    def chain_noise_temperature_k(self) -> float:
        """Noise temperature of everything after the antenna, at the antenna terminals."""
        return self.system_noise_temperature_k - self.antenna_temperature_k

    @property
    def gain_to_receiver_db(self) -> float:
        """Net gain from the antenna terminals to the receiver input (dB)."""
        return float(sum(g for name, g, _ in self.stages if name != "receiver"))


def receive_chain(
    antenna_temperature_k: float,
    *,
    feedline_loss_db: float,
    feedline_temperature_k: float = 290.0,
    lna_noise_figure_db: float | None,
    lna_gain_db: float | None = None,
    lna_at_antenna: bool = True,
    receiver_noise_figure_db: float,
    mismatch_loss_db: float | None = None,
    pre_lna_loss_db: float | None = None,
) -> ReceiveChain:
    """System noise temperature at the antenna terminals of antenna + (LNA) + feedline + receiver.

    In signal order: the feed mismatch (``mismatch_loss_db`` = -10 log10 M, a noiseless stage
    of gain M; see the module notes), the losses between the antenna and the LNA
    (``pre_lna_loss_db``: jumper cables, connectors, a switch or bias-tee, a line at
    ``feedline_temperature_k``), then the LNA and the feedline. ``lna_noise_figure_db=None``
    means no LNA: the feedline feeds the receiver. Otherwise the LNA sits before the feedline
    when ``lna_at_antenna`` is true, or at its receiver end. The pre-LNA losses always come
    before the LNA: with the LNA at the receiver (or none) they simply join the run before it.
    ``feedline_loss_db`` is the main run (cable and connectors) at ``feedline_temperature_k``.
    ``None`` for the mismatch or the pre-LNA loss leaves that stage out.
    """
    if not (antenna_temperature_k >= 0):
        raise UserError(f"antenna temperature must be >= 0 K, got {antenna_temperature_k!r}")
    front = []
    if mismatch_loss_db is not None:
        if not (np.isfinite(mismatch_loss_db) and mismatch_loss_db >= 0):
            raise UserError(f"mismatch loss must be a finite number of dB >= 0, got {mismatch_loss_db!r}")
        front.append(("mismatch", -float(mismatch_loss_db), 0.0))
    if pre_lna_loss_db is not None:
        front.append(("pre_lna", -float(pre_lna_loss_db), line_noise_temperature_k(pre_lna_loss_db, feedline_temperature_k)))
    feedline = ("feedline", -float(feedline_loss_db), line_noise_temperature_k(feedline_loss_db, feedline_temperature_k))
    receiver = ("receiver", 0.0, noise_figure_to_temperature_k(receiver_noise_figure_db))
    if lna_noise_figure_db is None:
        stages = [*front, feedline, receiver]
    else:
        if lna_gain_db is None or not np.isfinite(lna_gain_db):
            raise UserError("receiver: lna_gain_db is required when lna_noise_figure_db is given")
        lna = ("lna", float(lna_gain_db), noise_figure_to_temperature_k(lna_noise_figure_db))
        stages = [*front, lna, feedline, receiver] if lna_at_antenna else [*front, feedline, lna, receiver]
    contributions = cascade_contributions_k([(g, t) for _, g, t in stages])
    breakdown = {"antenna": float(antenna_temperature_k)}
    breakdown.update({name: t for (name, _, _), t in zip(stages, contributions)})
    return ReceiveChain(
        system_noise_temperature_k=float(sum(breakdown.values())),
        antenna_temperature_k=float(antenna_temperature_k),
        breakdown=breakdown,
        stages=stages,
    )

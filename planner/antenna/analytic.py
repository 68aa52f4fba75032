"""Closed-form patterns: half-wave dipoles, their superposed far field, image theory over a
perfectly conducting plane, the isotropic RHCP reference, and the angle grids (with their
size check) the builders tabulate on.

Generators
----------
``turnstile_over_reflector`` uses closed-form far fields from Balanis, *Antenna Theory: Analysis and
Design*, ch. 4: the half-wave dipole with a sinusoidal current (element factor
cos(pi/2 cos psi)/sin psi, psi the angle from the dipole axis) and image theory for a horizontal
element at height h above an infinite perfectly conducting plane (image current reversed at -h,
array factor 2 j sin(k h sin E)). Directivity is normalised by integrating the radiation intensity
over the upper hemisphere (Gauss-Legendre in sin E, trapezoid in azimuth); the antenna is lossless,
so gain = directivity. Below the horizon an infinite perfect conductor passes no field, so the
table holds ``GAIN_FLOOR_DBIC`` there; real, finite reflectors leak around their edges (the wire
solver, planner.antenna.synth, models that).

The direction and spherical unit vectors and the circular components of a far field
(``direction_enu``, ``spherical_unit_vectors``, ``circular_components``) are shared with the wire
solver, planner.antenna.synth.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import overload

import numpy as np

from planner.antenna.table import GAIN_FLOOR_DBIC, PatternTable, linear_to_db
from planner.antenna.tablefile import format_number, pattern_points_limit
from planner.constants import SPEED_OF_LIGHT_M_S
from planner.errors import UserError, positive_number, warn
from planner.limits import MEMORY_LIMIT_BYTES, PATTERN_BYTES_PER_POINT, ceil_significant, check_allocation

DEMO_FREQUENCY_HZ = 436e6
"""Frequency label of the shipped tables (the demo UHF downlink band)."""


# --------------------------------------------------------------------------------------------
# Closed-form far fields (Balanis, Antenna Theory, ch. 4)
# --------------------------------------------------------------------------------------------

EAST = (1.0, 0.0, 0.0)
NORTH = (0.0, 1.0, 0.0)
UP = (0.0, 0.0, 1.0)


@dataclass(frozen=True)
class HalfWaveDipole:
    """A thin half-wave dipole with a sinusoidal current: axis (unit vector, ENU), complex feed
    current (relative), centre position in wavelengths (ENU)."""

    axis_enu: tuple[float, float, float]
    current: complex = 1.0
    center_wavelengths: tuple[float, float, float] = (0.0, 0.0, 0.0)

    def image(self) -> HalfWaveDipole:
        """Image in the plane z = 0 of a perfect conductor: horizontal current reversed, vertical
        kept, position mirrored (Balanis, Antenna Theory, sec. 4.7)."""
        ax, ay, az = self.axis_enu
        px, py, pz = self.center_wavelengths
        return HalfWaveDipole((-ax, -ay, az), self.current, (px, py, -pz))


def direction_enu(azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> np.ndarray:
    """Unit vector(s) toward (azimuth, elevation), ENU, shape (..., 3)."""
    az, el = np.broadcast_arrays(np.radians(azimuth_deg), np.radians(elevation_deg))
    cos_el = np.cos(el)
    return np.stack([cos_el * np.sin(az), cos_el * np.cos(az), np.sin(el)], axis=-1)


def spherical_unit_vectors(azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> tuple[np.ndarray, np.ndarray]:
    """theta-hat and phi-hat (ENU, shape (..., 3)) of the spherical frame with polar axis up and
    phi measured from east toward north (phi = 90 deg - azimuth); (theta-hat, phi-hat, r-hat) is
    right-handed."""
    az, el = np.broadcast_arrays(np.radians(azimuth_deg), np.radians(elevation_deg))
    sin_el, cos_el, sin_az, cos_az = np.sin(el), np.cos(el), np.sin(az), np.cos(az)
    theta_hat = np.stack([sin_el * sin_az, sin_el * cos_az, -cos_el], axis=-1)
    phi_hat = np.stack([-cos_az, sin_az, np.zeros_like(az)], axis=-1)
    return theta_hat, phi_hat


def half_wave_dipole_field(dipole: HalfWaveDipole, r_hat: np.ndarray) -> np.ndarray:
    """Complex far-field vector (..., 3) of one dipole toward unit vectors ``r_hat``.

    E ~ I (a - (a.r) r) cos(pi/2 cos psi) / sin^2 psi * exp(j 2 pi r.p): the transverse part of the
    dipole's vector potential (Balanis eq. 4-84), magnitude I cos(pi/2 cos psi)/sin psi, with psi the
    angle from the axis a and p the centre in wavelengths. The common factor
    j eta I0 exp(-jkr)/(2 pi r) is dropped: it cancels in the directivity.
    """
    a = np.asarray(dipole.axis_enu, dtype=float)
    a = a / np.linalg.norm(a)
    cos_psi = np.clip(r_hat @ a, -1.0, 1.0)
    sin2_psi = 1.0 - cos_psi**2
    tiny = 1e-12
    factor = np.where(sin2_psi > tiny, np.cos(0.5 * np.pi * cos_psi) / np.where(sin2_psi > tiny, sin2_psi, 1.0), np.pi / 4.0)
    transverse = a - cos_psi[..., None] * r_hat
    phase = np.exp(2j * np.pi * (r_hat @ np.asarray(dipole.center_wavelengths, dtype=float)))
    return (dipole.current * factor * phase)[..., None] * transverse


def far_field(dipoles: Sequence[HalfWaveDipole], azimuth_deg, elevation_deg, *, pec_ground: bool = False) -> np.ndarray:
    """Superposed complex far field (..., 3) of the dipoles toward (azimuth, elevation).

    With ``pec_ground`` the dipoles stand over an infinite perfect conductor in the plane z = 0:
    images are added (image theory) and the field is zero below the horizon.
    """
    r_hat = direction_enu(azimuth_deg, elevation_deg)
    sources = list(dipoles)
    if pec_ground:
        sources += [d.image() for d in dipoles]
    total = np.zeros(r_hat.shape, dtype=complex)
    for d in sources:
        total += half_wave_dipole_field(d, r_hat)
    if pec_ground:
        total = np.where((r_hat[..., 2] < 0.0)[..., None], 0.0, total)
    return total


def circular_components(field_enu: np.ndarray, azimuth_deg, elevation_deg) -> tuple[np.ndarray, np.ndarray]:
    """RHCP and LHCP amplitudes of an outgoing far field: E_R = (E_theta + j E_phi)/sqrt 2,
    E_L = (E_theta - j E_phi)/sqrt 2 (unit vectors (theta - j phi)/sqrt 2 for RHCP along r, IEEE
    Std 145 with e^{jwt}); |E_R|^2 + |E_L|^2 = |E|^2."""
    theta_hat, phi_hat = spherical_unit_vectors(azimuth_deg, elevation_deg)
    e_theta = np.sum(field_enu * theta_hat, axis=-1)
    e_phi = np.sum(field_enu * phi_hat, axis=-1)
    return (e_theta + 1j * e_phi) / math.sqrt(2.0), (e_theta - 1j * e_phi) / math.sqrt(2.0)


def radiated_power(
    dipoles: Sequence[HalfWaveDipole], *, pec_ground: bool = False, n_mu: int | None = None, n_azimuth: int = 144
) -> float:
    """Integral of |E|^2 over the sphere (upper hemisphere over ground), in the units of ``far_field``.

    dOmega = d(sin E) d(azimuth): Gauss-Legendre in sin E, periodic trapezoid in azimuth (both
    spectrally accurate for these smooth fields).
    """
    extent = max([abs(c) for d in dipoles for c in d.center_wavelengths] + [0.0])
    if n_mu is None:
        n_mu = 96 + int(48 * extent)
    nodes, weights = np.polynomial.legendre.leggauss(n_mu)
    if pec_ground:  # map [-1, 1] to [0, 1]
        mu, w_mu = 0.5 * (nodes + 1.0), 0.5 * weights
    else:
        nodes, weights = np.polynomial.legendre.leggauss(2 * n_mu)
        mu, w_mu = nodes, weights
    az = np.arange(n_azimuth) * (360.0 / n_azimuth)
    el = np.degrees(np.arcsin(mu))
    field_ = far_field(dipoles, az[None, :], el[:, None], pec_ground=pec_ground)
    intensity = np.sum(np.abs(field_) ** 2, axis=-1)
    return float(np.sum(w_mu[:, None] * intensity) * (2.0 * np.pi / n_azimuth))


def partial_directivities(
    dipoles: Sequence[HalfWaveDipole], azimuth_deg, elevation_deg, *, pec_ground: bool = False
) -> tuple[np.ndarray, np.ndarray]:
    """Linear RHCP and LHCP partial directivities 4 pi |E_R|^2 / P, 4 pi |E_L|^2 / P."""
    power = radiated_power(dipoles, pec_ground=pec_ground)
    e_r, e_l = circular_components(
        far_field(dipoles, azimuth_deg, elevation_deg, pec_ground=pec_ground), azimuth_deg, elevation_deg
    )
    return 4.0 * np.pi * np.abs(e_r) ** 2 / power, 4.0 * np.pi * np.abs(e_l) ** 2 / power


def crossed_dipoles(height_wavelengths: float = 0.0) -> list[HalfWaveDipole]:
    """A turnstile: half-wave dipoles along east and north, centred on the zenith axis at the given
    height, fed with equal amplitude, the north one lagging 90 deg (current -j) so that the field
    at the zenith is x - j y: RHCP going up (IEEE Std 145)."""
    centre = (0.0, 0.0, float(height_wavelengths))
    return [HalfWaveDipole(EAST, 1.0 + 0j, centre), HalfWaveDipole(NORTH, -1j, centre)]


# --------------------------------------------------------------------------------------------
# Generators
# --------------------------------------------------------------------------------------------


def angle_count(step_deg: float, span_deg: float, name: str, closed: bool) -> int:
    """How many grid angles ``step_deg`` makes over ``span_deg`` (its end included when
    ``closed``), without making them; the step must divide the span."""
    step = positive_number(name, step_deg, "a positive number of degrees")
    ratio = span_deg / step
    if not math.isfinite(ratio):
        raise UserError(
            f"{name}={step:g} asks for more grid angles than can be counted; "
            f"use a step that divides {span_deg:g} deg, such as 1, 2, 5 or 10"
        )
    count = round(ratio)
    if count < 1 or abs(count * step - span_deg) > 1e-9 * span_deg:
        raise UserError(f"{name}: {step:g} deg does not divide {span_deg:g} deg evenly; pick a divisor such as 1, 2, 5 or 10")
    return count + 1 if closed else count


def angle_grid(step_deg: float, span_deg: float, name: str, closed: bool) -> np.ndarray:
    """0, step, 2 step ... over ``span_deg`` (its end included when ``closed``); the step must divide it."""
    count = angle_count(step_deg, span_deg, name, closed)
    return np.arange(count, dtype=float) * float(step_deg)


def finest_step_deg(span_deg: float, closed: bool, other_count: int) -> float:
    """The finest step over ``span_deg`` that keeps a grid with ``other_count`` points on the
    other axis within :func:`pattern_points_limit` (rounded up to two significant digits)."""
    most = max(2, pattern_points_limit() // max(1, other_count))
    return ceil_significant(span_deg / (most - 1 if closed else most))


def check_pattern_grid(elevation_step_deg: float, n_elevation: int, azimuth_step_deg: float | None, n_azimuth: int) -> None:
    """Refuse, before anything is allocated, a pattern grid too large to read back within the
    memory limit (``n_azimuth`` 1 and ``azimuth_step_deg`` None for an azimuth-symmetric table)."""
    if azimuth_step_deg is None:
        asked = f"elevation_step_deg={elevation_step_deg:g} asks for {n_elevation:,} elevations"
        hint = f"use elevation_step_deg of at least {finest_step_deg(180.0, True, 1):g} deg"
    else:
        asked = (
            f"elevation_step_deg={elevation_step_deg:g} and azimuth_step_deg={azimuth_step_deg:g} ask for a "
            f"{n_elevation:,} x {n_azimuth:,} grid"
        )
        if n_elevation >= n_azimuth / 2:  # the elevation step is the finer one: say what it should be
            hint = (
                f"at azimuth_step_deg={azimuth_step_deg:g} use elevation_step_deg of at least "
                f"{finest_step_deg(180.0, True, n_azimuth):g} deg"
            )
        else:
            hint = (
                f"at elevation_step_deg={elevation_step_deg:g} use azimuth_step_deg of at least "
                f"{finest_step_deg(360.0, False, n_elevation):g} deg"
            )
    check_allocation(
        f"{asked}, a table of {n_elevation * n_azimuth:,} points",
        n_elevation * n_azimuth,
        PATTERN_BYTES_PER_POINT,
        MEMORY_LIMIT_BYTES,
        hint,
    )


@overload
def pattern_grid(elevation_step_deg: float, azimuth_step_deg: float) -> tuple[np.ndarray, np.ndarray]: ...
@overload
def pattern_grid(elevation_step_deg: float, azimuth_step_deg: None) -> tuple[np.ndarray, None]: ...
def pattern_grid(elevation_step_deg: float, azimuth_step_deg: float | None) -> tuple[np.ndarray, np.ndarray | None]:
    """Elevations -90..90 and azimuths [0, 360) (None for a symmetric table) at the given steps,
    after checking that the grid fits the memory limit (:func:`check_pattern_grid`)."""
    n_el = angle_count(elevation_step_deg, 180.0, "elevation_step_deg", closed=True)
    n_az = 1 if azimuth_step_deg is None else angle_count(azimuth_step_deg, 360.0, "azimuth_step_deg", closed=False)
    check_pattern_grid(elevation_step_deg, n_el, azimuth_step_deg, n_az)
    elevation = angle_grid(elevation_step_deg, 180.0, "elevation_step_deg", closed=True) - 90.0
    azimuth = None if azimuth_step_deg is None else angle_grid(azimuth_step_deg, 360.0, "azimuth_step_deg", closed=False)
    return elevation, azimuth


def check_frequency(frequency_hz: float) -> float:
    """A pattern builder's frequency as a float, or one UserError line."""
    return positive_number("frequency_hz", frequency_hz, "a positive number of hertz")


def _floor_db(gain: np.ndarray) -> np.ndarray:
    return np.maximum(linear_to_db(gain), GAIN_FLOOR_DBIC)


def turnstile_over_reflector(
    spacing_wavelengths: float,
    frequency_hz: float = DEMO_FREQUENCY_HZ,
    *,
    elevation_step_deg: float = 1.0,
    azimuth_step_deg: float = 10.0,
) -> PatternTable:
    """Two crossed horizontal half-wave dipoles in quadrature (RHCP at the zenith) with their
    centre ``spacing_wavelengths`` above an infinite perfectly conducting plane; image theory,
    lossless (gain = directivity). ``frequency_hz`` only labels the table: the geometry is in
    wavelengths, so the spacing in metres is spacing_wavelengths * c / frequency_hz."""
    if not (isinstance(spacing_wavelengths, (int, float)) and math.isfinite(spacing_wavelengths) and 0 < spacing_wavelengths <= 20):
        raise UserError(f"spacing_wavelengths: must be a number in (0, 20] wavelengths, got {spacing_wavelengths!r}")
    frequency_hz = check_frequency(frequency_hz)
    if spacing_wavelengths > 5:
        warn(
            f"spacing_wavelengths {spacing_wavelengths:g}: the lobes narrow to a few degrees near the horizon; "
            "a 1 deg elevation grid no longer resolves them"
        )
    elevation, azimuth = pattern_grid(elevation_step_deg, azimuth_step_deg)
    d_r, d_l = partial_directivities(crossed_dipoles(spacing_wavelengths), azimuth[None, :], elevation[:, None], pec_ground=True)
    spacing_m = spacing_wavelengths * SPEED_OF_LIGHT_M_S / frequency_hz
    header = {
        "frequency_mhz": format_number(frequency_hz / 1e6),
        "model": (
            f"turnstile: two crossed horizontal half-wave dipoles (thin wire, sinusoidal current) fed equal "
            f"amplitude in quadrature, RHCP at the zenith, centred {format_number(spacing_wavelengths)} wavelength "
            "above an infinite perfectly conducting plane; image theory (Balanis, Antenna Theory, ch. 4)"
        ),
        "frame": (
            "x east, y north, z up; dipoles along east (phase 0) and north (phase -90 deg); azimuth_deg from "
            "north toward east, elevation_deg above the horizon; RHCP/LHCP per IEEE Std 145"
        ),
        "generated_by": "planner pattern build",
        "builder": "image-turnstile",
        "parameters": (
            f"spacing_wavelengths={format_number(spacing_wavelengths)}; frequency_hz={format_number(frequency_hz)}; "
            f"elevation_step_deg={format_number(elevation_step_deg)}; azimuth_step_deg={format_number(azimuth_step_deg)}"
        ),
        "reflector_spacing_m": f"{spacing_m:.4f}",
        "gain_reference": (
            "partial gains for RHCP and LHCP waves in dBic; lossless, so gain = directivity, normalised over "
            "the upper hemisphere; total gain is their sum"
        ),
        "below_horizon": (
            f"an infinite perfect conductor passes no field: {format_number(GAIN_FLOOR_DBIC)} dBic (the floor) "
            "below the horizon and at it; real finite reflectors leak"
        ),
        "feed": (
            "none: closed-form currents with no feed network, so no feed impedance and no mismatch charged; "
            "a cross-check, not a buildable candidate (the wire solver's turnstile template has the feed)"
        ),
        "radiation_efficiency": "1",
    }
    return PatternTable(
        path=None,
        frequency_hz=frequency_hz,
        header=header,
        elevation_deg=elevation,
        azimuth_deg=azimuth,
        gain_rhcp_dbic=_floor_db(d_r),
        gain_lhcp_dbic=_floor_db(d_l),
        radiation_efficiency=1.0,
    )


def isotropic_rhcp(frequency_hz: float = DEMO_FREQUENCY_HZ, *, elevation_step_deg: float = 1.0) -> PatternTable:
    """Reference pattern: 0 dBic RHCP in every direction of the sphere, LHCP at the floor.

    Not a realizable antenna (no antenna is circularly polarized in every direction); it is the
    yardstick against which the other patterns are read."""
    frequency_hz = check_frequency(frequency_hz)
    elevation, _ = pattern_grid(elevation_step_deg, None)
    header = {
        "frequency_mhz": format_number(frequency_hz / 1e6),
        "model": "isotropic RHCP reference: 0 dBic RHCP over the whole sphere, no LHCP (not a realizable antenna)",
        "frame": "azimuth-symmetric; elevation_deg above the horizon; RHCP/LHCP per IEEE Std 145",
        "generated_by": "planner pattern build",
        "builder": "isotropic-rhcp",
        "parameters": f"frequency_hz={format_number(frequency_hz)}; elevation_step_deg={format_number(elevation_step_deg)}",
        "gain_reference": (
            f"partial gains for RHCP and LHCP waves in dBic; LHCP at the floor {format_number(GAIN_FLOOR_DBIC)} dBic "
            "(no field); both hemispheres"
        ),
        "feed": "ideal reference: matched to the 50 ohm line by definition",
        "feed_impedance_ohm": "50.000+0.000j",
        "feed_vswr": "1.000",
        "feed_mismatch_loss_db": "0.000",
        "feed_reference_ohm": "50",
        "radiation_efficiency": "1",
    }
    return PatternTable(
        path=None,
        frequency_hz=frequency_hz,
        header=header,
        elevation_deg=elevation,
        azimuth_deg=None,
        gain_rhcp_dbic=np.zeros(len(elevation)),
        gain_lhcp_dbic=np.full(len(elevation), GAIN_FLOOR_DBIC),
        feed_vswr=1.0,
        feed_impedance_ohm=complex(50.0, 0.0),
        radiation_efficiency=1.0,
    )

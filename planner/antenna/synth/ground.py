"""A wire antenna on a mast over real (finitely conducting) flat ground: image theory with Fresnel coefficients.

The model
---------
The wire model is solved in free space (its currents and feed impedance are the free-space
solution). The ground is the plane z = -H, H = ``mast_height_m``: the height from the ground to the
model's z = 0 plane (the plane of a wire reflector, or the reference plane of a reflector-less
element, whose feed sits ``spacing_wavelengths`` above it). Far from the antenna the field toward
an upper-hemisphere direction (azimuth az, elevation el > 0) is the direct ray plus the ray
reflected at the ground, which leaves the antenna toward the mirrored direction (az, -el):

    E_theta(az, el) = F_theta(az, el) + Gamma_v(el) F_theta(az, -el) exp(-j 2 k H sin el)
    E_phi(az, el)   = F_phi(az, el)   + Gamma_h(el) F_phi(az, -el)   exp(-j 2 k H sin el)

F is the free-space far field (theta = vertical-plane component, phi = horizontal), both rays
referred to the origin; the reflected ray comes from the image of the antenna mirrored in
z = -H, whose offset -2H along z gives the path phase. Time convention e^{jwt}.

Sign convention (derived from image theory). The image of a current element t at r' is the
element -M t at M r' - 2H z_hat (M = diag(1, 1, -1): horizontal current reversed, vertical kept).
Its radiation vector toward r_hat is -M N(M r_hat) exp(-j 2 k H sin el); since
M theta_hat(az, el) = -theta_hat(az, -el) and M phi_hat = phi_hat, its theta component is
+F_theta(az, -el) and its phi component -F_phi(az, -el) (times the phase). So over a perfect
conductor Gamma_v = +1 and Gamma_h = -1, exactly the images of the currents, and the coefficients
below are the ones that tend to those values:

    Gamma_h = (sin psi - sqrt(eps_c - cos^2 psi)) / (sin psi + sqrt(eps_c - cos^2 psi))          (E ratio)
    Gamma_v = (eps_c sin psi - sqrt(eps_c - cos^2 psi)) / (eps_c sin psi + sqrt(eps_c - cos^2 psi))  (H ratio)

psi the grazing angle (= el), eps_c = eps_r - j sigma / (omega eps0) the complex relative
permittivity (non-magnetic ground), the principal square root (the transmitted wave decays
into the ground). Gamma_v is the ratio of the horizontal magnetic fields, which for the theta
components in the frame above is the same ratio (Balanis, Antenna Theory, ch. 4, "ground
effects"; Stutzman and Thiele, ch. on antennas over real ground). Both tend to -1 at grazing
incidence, so over real ground every polarization has a null at the horizon; |Gamma_v| has
its minimum at the pseudo-Brewster angle (zero for a lossless ground, tan theta_B = sqrt(eps_r)
with theta from the normal).

Below the horizon
-----------------
A direction (az, el < 0) holds the part of the free-space field that enters the ground:
F_theta sqrt(1 - |Gamma_v(-el)|^2) and F_phi sqrt(1 - |Gamma_h(-el)|^2). By reciprocity that is
how strongly the ground's thermal emission couples into the antenna (Kirchhoff: emissivity
1 - |Gamma|^2), and the reflected part appears in the upper hemisphere, where it looks at the
sky. An antenna-temperature integral that weights the lower hemisphere with the ground
temperature and the upper with the sky (``planner.link.noise``) then counts reflected sky and ground
emission correctly. Power is conserved up to the interference term between direct and
reflected rays, which integrates to the change of the input resistance the ground would cause:
the coupling neglected here (a few per cent for a mast of a wavelength or more; measured in
tests/test_ground.py).

Neglected
---------
* the ground wave and surface wave (the field is ray optics: far field, plane-wave reflection);
* the ground's near-field coupling to the currents, and so its effect on the feed impedance
  and the current distribution (the currents are the free-space solution);
* finite extent of the ground, the curvature of the Earth, terrain slope and roughness,
  vegetation, buildings and layered soil (one homogeneous half-space);
* the mast itself and any guy wires or feed line on it.

Ground classes
--------------
Relative permittivity and conductivity after ITU-R P.527-3, Fig. 1 (the low-frequency values of
its curves, also the constants of the ITU-R P.368 ground-wave curves; recalled from memory):
sea water 70 / 5 S/m, fresh water 80 / 3e-3 S/m, wet ground 30 / 1e-2 S/m, medium dry ground
15 / 1e-3 S/m, very dry ground 3 / 1e-4 S/m. Above about 100 MHz the curves of the three soils
rise in conductivity; ITU-R P.2040 (Table 3) fits them from 1 to 10 GHz as eps_r = a f^b,
sigma = c f^d (f in GHz): very dry (3, 0, 1.5e-4, 2.52), medium dry (15, -0.1, 0.035, 1.63), wet
(30, -0.4, 0.15, 1.30). Here a soil's permittivity is the P.527 value up to 1 GHz and the P.2040
fit above (the two agree at 1 GHz), and its conductivity the larger of the P.527 value and the
P.2040 power law (continued below 1 GHz down to where it meets the low-frequency value, at
0.11, 0.13 and 0.85 GHz for medium dry, wet and very dry ground: a continuation of ours, which
the P.527 curves follow in shape). Water keeps its low-frequency values (the relaxation of
water lowers eps_r and raises the loss above a few GHz: a warning says so above 3 GHz).
``concrete`` (a flat roof) is P.2040-3 Table 3 (5.24, 0, 0.0462, 0.7822), fitted from 1 to
100 GHz; below 1 GHz it is extrapolated and a warning says so. ``custom`` takes
``ground_permittivity`` and ``ground_conductivity_s_per_m`` as given.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from planner.constants import SPEED_OF_LIGHT_M_S, VACUUM_PERMITTIVITY_F_PER_M
from planner.errors import UserError, warn

__all__ = [
    "GroundClass",
    "GROUND_CLASSES",
    "GROUND_CHOICES",
    "NEGLECTED",
    "Ground",
    "ground_constants",
    "complex_permittivity",
    "reflection_coefficients",
    "make_ground",
    "check_clearance",
    "ground_note",
    "ground_from_notes",
    "field_over_ground",
    "gains_over_ground_dbic",
    "lobe_period_deg",
    "check_table_step",
]

NOTE_KEY = "ground_model"
"""Key of the ground description in ``WireModel.notes`` (text: see :func:`ground_note`)."""


class GroundClass(NamedTuple):
    """Constants of a ground class: low-frequency values and an optional power-law fit in GHz."""

    permittivity: float
    conductivity_s_per_m: float
    fit: tuple[float, float, float, float] | None  # (a, b, c, d): eps = a f^b, sigma = c f^d, f in GHz
    fit_range_ghz: tuple[float, float] | None
    source: str


_P527 = "ITU-R P.527-3 Fig. 1"
_P2040 = "ITU-R P.2040 Table 3"

GROUND_CLASSES: dict[str, GroundClass] = {
    "sea-water": GroundClass(70.0, 5.0, None, None, f"{_P527} (average salinity, 20 C)"),
    "fresh-water": GroundClass(80.0, 3e-3, None, None, f"{_P527} (20 C)"),
    "wet-ground": GroundClass(30.0, 1e-2, (30.0, -0.4, 0.15, 1.30), (1.0, 10.0), f"{_P527}; {_P2040} above 0.13 GHz"),
    "medium-dry-ground": GroundClass(15.0, 1e-3, (15.0, -0.1, 0.035, 1.63), (1.0, 10.0), f"{_P527}; {_P2040} above 0.11 GHz"),
    "very-dry-ground": GroundClass(3.0, 1e-4, (3.0, 0.0, 1.5e-4, 2.52), (1.0, 10.0), f"{_P527}; {_P2040} above 0.85 GHz"),
    "concrete": GroundClass(5.24, 0.0, (5.24, 0.0, 0.0462, 0.7822), (1.0, 100.0), "ITU-R P.2040-3 Table 3 (concrete)"),
}
"""Ground class name -> constants (see the module docstring for the sources and the blend)."""

GROUND_CHOICES = ("none", *GROUND_CLASSES, "custom")
"""Values of the template parameter ``ground``."""

NEGLECTED = (
    "ground wave and surface wave; the ground's near-field coupling to the currents and its effect on the feed "
    "impedance (free-space currents); finite ground extent, Earth curvature, terrain slope and roughness, layered soil; "
    "the mast"
)

_WATER = ("sea-water", "fresh-water")


def ground_constants(name: str, frequency_hz: float) -> tuple[float, float]:
    """(relative permittivity, conductivity in S/m) of a ground class at ``frequency_hz``."""
    if name not in GROUND_CLASSES:
        raise UserError(f"ground {name!r} is unknown; allowed: {', '.join(GROUND_CHOICES)}")
    entry = GROUND_CLASSES[name]
    f_ghz = float(frequency_hz) / 1e9
    eps, sigma = entry.permittivity, entry.conductivity_s_per_m
    if entry.fit is not None:
        a, b, c, d = entry.fit
        assert entry.fit_range_ghz is not None  # every class in GROUND_CLASSES with a fit gives its range
        low, high = entry.fit_range_ghz
        if name == "concrete":
            eps, sigma = a * f_ghz**b, c * f_ghz**d
        else:
            if f_ghz > 1.0:
                eps = a * f_ghz**b
            sigma = max(sigma, c * f_ghz**d)
        if f_ghz > high or (name == "concrete" and f_ghz < low):
            warn(
                f"ground {name!r}: {f_ghz:g} GHz is outside {low:g}..{high:g} GHz where the {_P2040} fit holds; "
                "the constants are extrapolated"
            )
    elif name in _WATER and f_ghz > 3.0:
        warn(f"ground {name!r}: above 3 GHz the relaxation of water lowers its permittivity; the low-frequency constants are used")
    return float(eps), float(sigma)


def complex_permittivity(permittivity, conductivity_s_per_m, frequency_hz):
    """eps_c = eps_r - j sigma / (omega eps0) (e^{jwt}; scipy.constants.VACUUM_PERMITTIVITY_F_PER_M); broadcasts."""
    omega = 2.0 * np.pi * np.asarray(frequency_hz, dtype=float)
    return np.asarray(permittivity, dtype=float) - 1j * np.asarray(conductivity_s_per_m, dtype=float) / (
        omega * VACUUM_PERMITTIVITY_F_PER_M
    )


def reflection_coefficients(grazing_deg, eps_c) -> tuple[np.ndarray, np.ndarray]:
    """Fresnel (Gamma_h, Gamma_v) of a flat non-magnetic half-space at grazing angles ``grazing_deg``.

    Convention of the module docstring: Gamma_h multiplies the horizontal (phi) component,
    Gamma_v the vertical-plane (theta) component of the field toward the mirrored direction;
    over a perfect conductor (eps_c -> infinity) they tend to -1 and +1. ``eps_c`` complex
    (imaginary part <= 0), broadcasts against the angles; the angles are clipped to 0..90 deg.
    """
    psi = np.radians(np.clip(np.asarray(grazing_deg, dtype=float), 0.0, 90.0))
    eps = np.asarray(eps_c, dtype=complex)
    sin_psi = np.sin(psi)
    root = np.sqrt(eps - np.cos(psi) ** 2)
    gamma_h = (sin_psi - root) / (sin_psi + root)
    gamma_v = (eps * sin_psi - root) / (eps * sin_psi + root)
    return gamma_h, gamma_v


@dataclass(frozen=True)
class Ground:
    """A homogeneous flat ground ``mast_height_m`` below the model's z = 0 plane, at one frequency."""

    name: str
    permittivity: float
    conductivity_s_per_m: float
    frequency_hz: float
    mast_height_m: float

    @property
    def eps_c(self) -> complex:
        return complex(complex_permittivity(self.permittivity, self.conductivity_s_per_m, self.frequency_hz))

    @property
    def wavenumber(self) -> float:
        return 2.0 * math.pi * self.frequency_hz / SPEED_OF_LIGHT_M_S

    def describe(self) -> str:
        """``<class> (eps_r ..., sigma ... S/m at ... MHz)`` for a table header."""
        return (
            f"{self.name} (eps_r {self.permittivity:.4g}, sigma {self.conductivity_s_per_m:.4g} S/m at "
            f"{self.frequency_hz / 1e6:.6g} MHz), flat, {self.mast_height_m:g} m below the model's z = 0 plane"
        )

    def source(self) -> str:
        return GROUND_CLASSES[self.name].source if self.name in GROUND_CLASSES else "given constants"


def make_ground(
    name: str | None,
    frequency_hz: float,
    mast_height_m: float | None,
    *,
    permittivity: float | None = None,
    conductivity_s_per_m: float | None = None,
) -> Ground | None:
    """Validate the ground parameters of a template; None for no ground (free space).

    Refuses (one-line UserError) a mast height without a ground, a ground without a mast
    height, the two constants without ``ground = "custom"`` and ``custom`` without both.
    """
    if name is None or name == "none":
        if mast_height_m is not None:
            raise UserError("mast_height_m needs a ground; allowed: set ground to one of " + ", ".join(GROUND_CHOICES[1:]))
        if permittivity is not None or conductivity_s_per_m is not None:
            raise UserError("ground_permittivity / ground_conductivity_s_per_m need ground = custom")
        return None
    if name not in GROUND_CHOICES:
        raise UserError(f"ground {name!r} is unknown; allowed: {', '.join(GROUND_CHOICES)}")
    if mast_height_m is None:
        raise UserError(
            f"ground = {name}: mast_height_m is missing; allowed: the height in m from the ground to the model's z = 0 plane"
        )
    if name == "custom":
        if permittivity is None or conductivity_s_per_m is None:
            raise UserError("ground = custom needs both ground_permittivity (>= 1) and ground_conductivity_s_per_m (>= 0)")
        eps, sigma = float(permittivity), float(conductivity_s_per_m)
        if not (math.isfinite(eps) and eps >= 1.0):
            raise UserError(f"ground_permittivity = {permittivity!r}; allowed: a relative permittivity >= 1")
        if not (math.isfinite(sigma) and sigma >= 0.0):
            raise UserError(f"ground_conductivity_s_per_m = {conductivity_s_per_m!r}; allowed: a conductivity >= 0 S/m")
    else:
        if permittivity is not None or conductivity_s_per_m is not None:
            raise UserError(f"ground = {name}: ground_permittivity / ground_conductivity_s_per_m are only for ground = custom")
        eps, sigma = ground_constants(name, frequency_hz)
    height = float(mast_height_m)
    if not (math.isfinite(height) and height > 0.0):
        raise UserError(f"mast_height_m = {mast_height_m!r}; allowed: a positive height in m")
    return Ground(name, eps, sigma, float(frequency_hz), height)


def check_clearance(wires: Sequence, mast_height_m: float) -> None:
    """Refuse a mast so low that a wire would touch or pass below the ground plane z = -H."""
    for i, wire in enumerate(wires):
        low = float(np.min(wire.points[:, 2])) + float(mast_height_m)
        if low <= wire.radius_m:
            label = wire.name or f"#{i}"
            need = float(mast_height_m) - low + wire.radius_m
            raise UserError(
                f"mast_height_m = {mast_height_m:g} m puts wire {label!r} at or below the ground; allowed: more than {need:.4g} m"
            )


def ground_note(ground: Ground) -> str:
    """The ground as text for ``WireModel.notes[NOTE_KEY]`` (read back by :func:`ground_from_notes`)."""
    return (
        f"name={ground.name}; permittivity={ground.permittivity!r}; conductivity_s_per_m={ground.conductivity_s_per_m!r}; "
        f"frequency_hz={ground.frequency_hz!r}; mast_height_m={ground.mast_height_m!r}"
    )


def ground_from_notes(notes: Mapping[str, str] | None) -> Ground | None:
    """The :class:`Ground` a model's notes describe, or None (no ground)."""
    text = (notes or {}).get(NOTE_KEY)
    if not text:
        return None
    items = dict(part.strip().split("=", 1) for part in text.split(";"))
    return Ground(
        items["name"],
        float(items["permittivity"]),
        float(items["conductivity_s_per_m"]),
        float(items["frequency_hz"]),
        float(items["mast_height_m"]),
    )


FarField = Callable[[np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]]


def field_over_ground(far_field: FarField, azimuth_deg, elevation_deg, ground: Ground) -> tuple[np.ndarray, np.ndarray]:
    """(E_theta, E_phi) of the antenna over ``ground`` from its free-space ``far_field(az, el)``.

    Upper hemisphere (el >= 0): direct plus reflected ray; lower: the transmitted part (module
    docstring). Angles broadcast like numpy; two calls of ``far_field`` over the whole grid.
    """
    az, el = np.broadcast_arrays(np.asarray(azimuth_deg, dtype=float), np.asarray(elevation_deg, dtype=float))
    f_theta, f_phi = far_field(az, el)
    m_theta, m_phi = far_field(az, -el)
    gamma_h, gamma_v = reflection_coefficients(np.abs(el), ground.eps_c)
    phase = np.exp(-2j * ground.wavenumber * ground.mast_height_m * np.sin(np.radians(el)))
    up = el >= 0.0
    e_theta = np.where(up, f_theta + gamma_v * m_theta * phase, f_theta * np.sqrt(np.maximum(1.0 - np.abs(gamma_v) ** 2, 0.0)))
    e_phi = np.where(up, f_phi + gamma_h * m_phi * phase, f_phi * np.sqrt(np.maximum(1.0 - np.abs(gamma_h) ** 2, 0.0)))
    return e_theta, e_phi


def gains_over_ground_dbic(solution, azimuth_deg, elevation_deg, port_voltages, ground: Ground) -> tuple[np.ndarray, np.ndarray]:
    """Partial gains (RHCP, LHCP) in dBic over ``ground``, relative to the free-space input power
    of ``solution`` (a free-space ``planner.antenna.synth.mom.Solution``), floored at GAIN_FLOOR_DBIC."""
    if solution.segmentation.ground != "free-space":
        raise ValueError("gains over real ground need the free-space solution of the model")
    from planner.antenna.synth.mom import partial_gains_dbic

    az, el = np.broadcast_arrays(np.asarray(azimuth_deg, dtype=float), np.asarray(elevation_deg, dtype=float))
    e_theta, e_phi = field_over_ground(lambda a, e: solution.far_field(a, e, port_voltages), az, el, ground)
    return partial_gains_dbic(e_theta, e_phi, az, el, solution.input_power_w(port_voltages))


def lobe_period_deg(ground: Ground, elevation_deg: float = 0.0) -> float:
    """Elevation period (deg) of the ground lobes near ``elevation_deg``: the path phase 2 k H sin el
    advances by 2 pi when sin el changes by lambda / (2 H)."""
    lam = SPEED_OF_LIGHT_M_S / ground.frequency_hz
    return math.degrees(lam / (2.0 * ground.mast_height_m * math.cos(math.radians(elevation_deg))))


def check_table_step(ground: Ground, elevation_step_deg: float) -> None:
    """Warn when a table's elevation step is too coarse for the ground lobes (fewer than four
    samples a period near the horizon: interpolation between rows would miss the nulls)."""
    period_deg = lobe_period_deg(ground)
    if elevation_step_deg > period_deg / 4.0:
        warn(
            f"elevation_step_deg = {elevation_step_deg:g}: the ground lobes of a {ground.mast_height_m:g} m mast repeat every "
            f"{period_deg:.2g} deg near the horizon and the table cannot resolve them; use at most {period_deg / 4.0:.2g} deg"
        )

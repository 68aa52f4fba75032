"""Feedlines: a catalog of generic coaxial cables, connectors, mismatch, line noise, phasing lines.

Attenuation model
    Matched loss per 100 m = k1 sqrt(f_MHz) + k2 f_MHz: the first term is conductor (skin
    effect) loss, the second dielectric loss, the usual two-term fit to cable data. Each
    catalog cable is fitted at import, by non-negative least squares on relative error, to
    the points in :data:`CATALOG_POINTS`. Those points are **from memory, datasheet-typical,
    +/-25 %** for the generic type (brands differ; a real run should use the maker's table
    through :func:`cable_from_points`). Asked outside the range of its points, a cable warns.

Connectors
    :data:`CONNECTOR_LOSS_DB` = 0.1 dB a connector (common practice, no published source).

Mismatch
    Mismatch loss = -10 log10(1 - |Gamma|^2), Gamma = (Z - Z0)/(Z + Z0), VSWR = (1+|Gamma|)/(1-|Gamma|)
    (Pozar, Microwave Engineering).

Line noise
    A matched line of loss L (linear, >= 1) at physical temperature T adds (L - 1) T of noise
    temperature referred to its input (its output sees T (1 - 1/L)).

Phasing lines
    Quarter-wave length vf c / (4 f); input impedance of a terminated line
    Zin = Z0 (ZL + Z0 tanh(gamma l)) / (Z0 + ZL tanh(gamma l)), gamma l = alpha l + j beta l
    (Pozar); lossless reduces to Zin = Z0 (ZL + j Z0 tan(beta l)) / (Z0 + j ZL tan(beta l)).
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

import numpy as np
from scipy.optimize import nnls

from planner.constants import SPEED_OF_LIGHT_M_S
from planner.errors import UserError, warn

CONNECTOR_LOSS_DB = 0.1
"""Insertion loss of one good coaxial connector at VHF/UHF (common practice, no published source)."""

NEPER_DB = 20.0 * math.log10(math.e)
"""dB in one neper (8.686 dB)."""


@dataclass(frozen=True)
class Cable:
    """A coaxial cable type: loss per 100 m = k1 sqrt(f_MHz) + k2 f_MHz, valid on [fit_min_hz, fit_max_hz]."""

    name: str
    impedance_ohm: float
    velocity_factor: float
    k1_db_per_100m_sqrt_mhz: float
    k2_db_per_100m_per_mhz: float
    fit_min_hz: float
    fit_max_hz: float
    note: str = ""

    def loss_db_per_100m(self, frequency_hz):
        """Matched loss (dB per 100 m) at ``frequency_hz`` (number or array); no range check."""
        f_mhz = np.asarray(frequency_hz, dtype=float) / 1e6
        loss = self.k1_db_per_100m_sqrt_mhz * np.sqrt(f_mhz) + self.k2_db_per_100m_per_mhz * f_mhz
        return float(loss) if np.ndim(loss) == 0 else loss


# Datasheet-typical matched attenuation, dB per 100 m, at (MHz, dB/100 m). FROM MEMORY,
# generic types, +/-25 %: makers' tables for the same type differ by about that much.
# Velocity factors: solid polyethylene 0.66, foamed polyethylene about 0.78-0.84,
# PTFE about 0.695 (common practice, from memory).
CATALOG_POINTS: dict[str, dict] = {
    "RG-174": dict(
        impedance_ohm=50.0,
        velocity_factor=0.66,
        points=[(10, 9.5), (50, 19.0), (100, 28.0), (200, 39.0), (400, 56.0), (1000, 95.0)],
        note="thin 2.8 mm, solid PE; short jumpers only",
    ),
    "RG-316": dict(
        impedance_ohm=50.0,
        velocity_factor=0.695,
        points=[(10, 10.0), (50, 20.0), (100, 28.0), (200, 40.0), (400, 57.0), (1000, 95.0)],
        note="thin 2.5 mm, PTFE; jumpers, high temperature",
    ),
    "RG-58": dict(
        impedance_ohm=50.0,
        velocity_factor=0.66,
        points=[(10, 4.6), (50, 10.5), (100, 15.5), (200, 22.0), (400, 31.5), (1000, 54.0)],
        note="5 mm, solid PE",
    ),
    "RG-8X": dict(
        impedance_ohm=50.0,
        velocity_factor=0.82,
        points=[(10, 3.3), (50, 7.5), (100, 10.8), (200, 15.5), (400, 22.5), (1000, 37.0)],
        note="6 mm, foamed PE",
    ),
    "RG-213": dict(
        impedance_ohm=50.0,
        velocity_factor=0.66,
        points=[(10, 2.0), (50, 4.6), (100, 6.8), (200, 9.9), (400, 15.0), (1000, 26.0)],
        note="10.3 mm, solid PE",
    ),
    "RG-214": dict(
        impedance_ohm=50.0,
        velocity_factor=0.66,
        points=[(10, 2.2), (50, 5.0), (100, 7.2), (200, 10.5), (400, 15.8), (1000, 27.0)],
        note="10.8 mm, solid PE, double silver-plated braid",
    ),
    "RG-142": dict(
        impedance_ohm=50.0,
        velocity_factor=0.695,
        points=[(10, 4.3), (50, 9.5), (100, 13.5), (200, 19.5), (400, 28.0), (1000, 46.0)],
        note="5 mm, PTFE, double silver-plated braid",
    ),
    "RG-6": dict(
        impedance_ohm=75.0,
        velocity_factor=0.83,
        points=[(10, 2.0), (50, 4.9), (100, 6.9), (200, 9.5), (400, 13.8), (1000, 22.0)],
        note="75 ohm, 6.9 mm, foamed PE (TV type); mismatched in a 50 ohm system",
    ),
}


def fit_attenuation(points: Sequence[Sequence[float]] | np.ndarray) -> tuple[float, float]:
    """(k1, k2) >= 0 fitting loss = k1 sqrt(f_MHz) + k2 f_MHz to [(f_MHz, dB/100 m), ...].

    Non-negative least squares on the relative error, so low-frequency points weigh as much
    as high-frequency ones.
    """
    table = np.asarray(points, dtype=float)
    f_mhz, loss = table[:, 0], table[:, 1]
    design = np.column_stack([np.sqrt(f_mhz), f_mhz]) / loss[:, None]
    (k1, k2), _ = nnls(design, np.ones_like(loss))
    return float(k1), float(k2)


def _check_line_constants(name: str, impedance_ohm: float, velocity_factor: float) -> None:
    if not (np.isfinite(impedance_ohm) and impedance_ohm > 0):
        raise UserError(f"cable '{name}': impedance_ohm must be a positive number, got {impedance_ohm!r}")
    if not (0 < velocity_factor <= 1):
        raise UserError(f"cable '{name}': velocity_factor must be in (0, 1], got {velocity_factor!r}")


def cable_from_points(
    name: str,
    points: Iterable[Sequence[float]],
    impedance_ohm: float = 50.0,
    velocity_factor: float = 0.66,
    note: str = "",
) -> Cable:
    """A user cable fitted to its maker's table ``[(frequency_mhz, db_per_100m), ...]``.

    Needs at least two distinct positive frequencies with positive losses; the fit range is
    the range of the given frequencies.
    """
    try:
        table = np.asarray([tuple(map(float, p)) for p in points], dtype=float)
    except (TypeError, ValueError):
        raise UserError(f"cable '{name}': points must be a list of [frequency_mhz, db_per_100m] pairs") from None
    if table.ndim != 2 or table.shape[1] != 2:
        raise UserError(f"cable '{name}': points must be a list of [frequency_mhz, db_per_100m] pairs")
    if not np.all(np.isfinite(table)) or np.any(table <= 0):
        raise UserError(f"cable '{name}': frequencies and losses in points must be positive numbers")
    if len(np.unique(table[:, 0])) < 2:
        raise UserError(f"cable '{name}': points need at least two different frequencies")
    _check_line_constants(name, impedance_ohm, velocity_factor)
    k1, k2 = fit_attenuation(table)
    return Cable(
        name=name,
        impedance_ohm=float(impedance_ohm),
        velocity_factor=float(velocity_factor),
        k1_db_per_100m_sqrt_mhz=k1,
        k2_db_per_100m_per_mhz=k2,
        fit_min_hz=float(table[:, 0].min()) * 1e6,
        fit_max_hz=float(table[:, 0].max()) * 1e6,
        note=note,
    )


def cable_from_coefficients(
    name: str,
    k1_db_per_100m_sqrt_mhz: float,
    k2_db_per_100m_per_mhz: float,
    *,
    impedance_ohm: float = 50.0,
    velocity_factor: float = 0.66,
    fit_min_hz: float = 1e6,
    fit_max_hz: float = 3e9,
    note: str = "",
) -> Cable:
    """A user cable given directly by its k1, k2 coefficients (dB/100 m) and validity range."""
    k1, k2 = float(k1_db_per_100m_sqrt_mhz), float(k2_db_per_100m_per_mhz)
    if not (np.isfinite(k1) and np.isfinite(k2)) or k1 < 0 or k2 < 0 or k1 + k2 == 0:
        raise UserError(f"cable '{name}': k1 and k2 must be non-negative numbers, not both zero")
    if not (0 < fit_min_hz < fit_max_hz):
        raise UserError(f"cable '{name}': need 0 < fit_min_hz < fit_max_hz")
    _check_line_constants(name, impedance_ohm, velocity_factor)
    return Cable(name, float(impedance_ohm), float(velocity_factor), k1, k2, float(fit_min_hz), float(fit_max_hz), note)


def _build_catalog() -> dict[str, Cable]:
    return {
        name: cable_from_points(
            name,
            spec["points"],
            spec["impedance_ohm"],
            spec["velocity_factor"],
            note=spec["note"] + " (catalog values from memory, datasheet-typical, +/-25 %)",
        )
        for name, spec in CATALOG_POINTS.items()
    }


CABLES: dict[str, Cable] = _build_catalog()
"""The generic catalog, keyed by type name."""


def _key(name: str) -> str:
    return re.sub(r"[\s_\-/]", "", str(name)).upper()


def get_cable(name: str, user_cables: Mapping[str, Cable] | None = None) -> Cable:
    """Look a cable up by name (case, spaces and dashes ignored); user cables win over the catalog."""
    for table in (user_cables or {}, CABLES):
        for candidate_name, cable in table.items():
            if _key(candidate_name) == _key(name):
                return cable
    allowed = sorted(set(CABLES) | set(user_cables or {}))
    raise UserError(
        f"unknown cable '{name}'; allowed: {', '.join(allowed)}; or define your own in the scenario as a "
        "[[cable]] table with name, impedance_ohm, velocity_factor and loss_db_per_100m = "
        "[[frequency_mhz, loss_db_per_100m], ...] (planner cables lists the catalog)"
    )


def cable_loss_db(cable: Cable, frequency_hz, length_m: float):
    """Matched loss (dB) of ``length_m`` of ``cable`` at ``frequency_hz`` (number or array).

    Warns (PlannerWarning) when the frequency lies outside the cable's fit range.
    """
    length_m = float(length_m)
    if not np.isfinite(length_m) or length_m < 0:
        raise UserError(f"cable '{cable.name}': length_m must be zero or positive, got {length_m!r}")
    f = np.asarray(frequency_hz, dtype=float)
    if not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise UserError(f"cable '{cable.name}': frequency must be positive")
    if np.any(f < cable.fit_min_hz * (1 - 1e-9)) or np.any(f > cable.fit_max_hz * (1 + 1e-9)):
        warn(
            f"cable '{cable.name}': {f.min() / 1e6:g}-{f.max() / 1e6:g} MHz is outside its loss table "
            f"({cable.fit_min_hz / 1e6:g}-{cable.fit_max_hz / 1e6:g} MHz); the loss is extrapolated"
        )
    loss = cable.loss_db_per_100m(f) * (length_m / 100.0)
    return float(loss) if np.ndim(loss) == 0 else loss


def feedline_loss_db(
    runs: Sequence[tuple[Cable | str, float]],
    frequency_hz,
    *,
    connectors: int = 0,
    user_cables: Mapping[str, Cable] | None = None,
):
    """Total matched loss (dB) of cable runs ``[(cable or name, length_m), ...]`` plus connectors."""
    if int(connectors) != connectors or connectors < 0:
        raise UserError(f"connectors must be a whole number >= 0, got {connectors!r}")
    total = np.zeros(np.shape(frequency_hz)) + CONNECTOR_LOSS_DB * int(connectors)
    for cable, length_m in runs:
        if not isinstance(cable, Cable):
            cable = get_cable(cable, user_cables)
        total = total + cable_loss_db(cable, frequency_hz, length_m)
    return float(total) if np.ndim(total) == 0 else total


# --- mismatch -----------------------------------------------------------------------------


def reflection_coefficient(z_load, z0: float = 50.0):
    """Gamma = (ZL - Z0) / (ZL + Z0) (complex; Pozar). An infinite ZL (open) gives 1."""
    z = np.asarray(z_load, dtype=complex)
    with np.errstate(invalid="ignore", divide="ignore"):
        gamma = np.where(np.isinf(z), 1.0 + 0j, (z - z0) / (z + z0))
    return complex(gamma) if np.ndim(gamma) == 0 else gamma


def vswr_from_impedance(z_load, z0: float = 50.0):
    """VSWR = (1 + |Gamma|) / (1 - |Gamma|) of a load on a line of impedance ``z0`` (inf at |Gamma| = 1)."""
    if not (np.isfinite(z0) and z0 > 0):
        raise UserError(f"reference impedance z0 must be positive, got {z0!r}")
    mag = np.abs(np.asarray(reflection_coefficient(z_load, z0)))
    with np.errstate(divide="ignore", invalid="ignore"):
        vswr = np.where(mag >= 1.0, np.inf, (1.0 + mag) / (1.0 - mag))
    return float(vswr) if np.ndim(vswr) == 0 else vswr


def mismatch_loss_db(vswr):
    """Mismatch loss (dB) = -10 log10(1 - |Gamma|^2), |Gamma| = (VSWR - 1)/(VSWR + 1) (Pozar)."""
    s = np.asarray(vswr, dtype=float)
    if np.any(~(s >= 1.0)):
        raise UserError(f"vswr must be a number >= 1, got {vswr!r}")
    with np.errstate(divide="ignore", invalid="ignore"):
        mag = np.where(np.isinf(s), 1.0, (s - 1.0) / (s + 1.0))
        loss = -10.0 * np.log10(1.0 - mag**2) + 0.0  # + 0.0: no "-0.0" at VSWR 1
    return float(loss) if np.ndim(loss) == 0 else loss


def mismatch_loss_from_impedance_db(z_load, z0: float = 50.0):
    """Mismatch loss (dB) of a load impedance on a line of impedance ``z0``."""
    mag = np.abs(np.asarray(reflection_coefficient(z_load, z0)))
    with np.errstate(divide="ignore"):
        loss = -10.0 * np.log10(1.0 - np.minimum(mag, 1.0) ** 2)
    return float(loss) if np.ndim(loss) == 0 else loss


# --- noise --------------------------------------------------------------------------------


def line_noise_temperature_k(loss_db, physical_temperature_k: float = 290.0):
    """Noise temperature (K) that a matched line of ``loss_db`` at ``physical_temperature_k`` adds at its input: (L - 1) T."""
    loss = np.asarray(loss_db, dtype=float)
    if np.any(~(loss >= 0)):
        raise UserError(f"feedline loss_db must be >= 0, got {loss_db!r}")
    if not (physical_temperature_k >= 0):
        raise UserError(f"feedline physical temperature must be >= 0 K, got {physical_temperature_k!r}")
    t = (10.0 ** (loss / 10.0) - 1.0) * physical_temperature_k
    return float(t) if np.ndim(t) == 0 else t


# --- phasing lines ------------------------------------------------------------------------


def _check_frequency_vf(frequency_hz: float, velocity_factor: float) -> None:
    if not (np.isfinite(frequency_hz) and frequency_hz > 0):
        raise UserError(f"frequency_hz must be a positive number, got {frequency_hz!r}")
    if not (0 < velocity_factor <= 1):
        raise UserError(f"velocity_factor must be in (0, 1], got {velocity_factor!r}")


def wavelength_in_line_m(frequency_hz: float, velocity_factor: float) -> float:
    """Guided wavelength vf c / f (m)."""
    _check_frequency_vf(frequency_hz, velocity_factor)
    return velocity_factor * SPEED_OF_LIGHT_M_S / frequency_hz


def quarter_wave_length_m(frequency_hz: float, velocity_factor: float) -> float:
    """Physical length (m) of a quarter-wave line: vf c / (4 f)."""
    return wavelength_in_line_m(frequency_hz, velocity_factor) / 4.0


def velocity_factor_from_length(length_m: float, frequency_hz: float, electrical_deg: float = 90.0) -> float:
    """Velocity factor implied by a line of ``length_m`` that is ``electrical_deg`` long at ``frequency_hz``.

    For example a line cut to resonate as a quarter wave (90 deg) at a measured frequency.
    """
    if not (np.isfinite(length_m) and length_m > 0):
        raise UserError(f"length_m must be positive, got {length_m!r}")
    if not (np.isfinite(electrical_deg) and electrical_deg > 0):
        raise UserError(f"electrical_deg must be positive, got {electrical_deg!r}")
    _check_frequency_vf(frequency_hz, 1.0)
    vf = length_m / (SPEED_OF_LIGHT_M_S / frequency_hz * electrical_deg / 360.0)
    if vf > 1.0:
        raise UserError(
            f"a {length_m:g} m line {electrical_deg:g} deg long at {frequency_hz / 1e6:g} MHz implies "
            f"velocity factor {vf:.3f} > 1; check the length, frequency and electrical length"
        )
    return float(vf)


def line_gamma_length(length_m, frequency_hz: float, velocity_factor: float, loss_db=0.0):
    """gamma l of a line (complex, nepers + j radians): loss_db / 8.686 + j 2 pi l / lambda_g (Pozar).

    ``loss_db`` is the matched loss of that length; arrays of lengths (and losses) are accepted.
    """
    beta_l = 2.0 * np.pi * np.asarray(length_m, dtype=float) / wavelength_in_line_m(frequency_hz, velocity_factor)
    gamma_l = np.asarray(loss_db, dtype=float) / NEPER_DB + 1j * beta_l
    return complex(gamma_l) if np.ndim(gamma_l) == 0 else gamma_l


def line_input_impedance(
    z0: float,
    z_load,
    length_m: float,
    frequency_hz: float,
    velocity_factor: float,
    loss_db: float = 0.0,
):
    """Input impedance (ohm, complex) of a line of impedance ``z0`` terminated by ``z_load``.

    ``loss_db`` is the matched loss of this whole length (0 for a lossless line).
    Zin = Z0 (ZL + Z0 tanh(gamma l)) / (Z0 + ZL tanh(gamma l)) with gamma l = loss_db/8.686 + j 2 pi l / lambda_g
    (Pozar). ``z_load`` may be ``numpy.inf`` (open circuit) or 0 (short); arrays are accepted.
    """
    if not (np.isfinite(z0) and z0 > 0):
        raise UserError(f"line impedance z0 must be positive, got {z0!r}")
    if not (np.isfinite(length_m) and length_m >= 0):
        raise UserError(f"length_m must be zero or positive, got {length_m!r}")
    if not (np.isfinite(loss_db) and loss_db >= 0):
        raise UserError(f"loss_db must be zero or positive, got {loss_db!r}")
    t = np.tanh(line_gamma_length(length_m, frequency_hz, velocity_factor, loss_db))
    zl = np.asarray(z_load, dtype=complex)
    with np.errstate(invalid="ignore", divide="ignore"):
        zin = np.where(np.isinf(zl), z0 / t, z0 * (zl + z0 * t) / (z0 + zl * t))
    return complex(zin) if np.ndim(zin) == 0 else zin

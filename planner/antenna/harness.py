"""Phasing-harness arithmetic behind ``planner harness``.

A circularly polarized omni made of two orthogonal elements (crossed dipoles, crossed loops) is
usually fed through a phasing line: element a at the feed point, element b through a line a
quarter wave (90 deg) longer. This module answers the questions of the person cutting that line:

* how long is a quarter wave of this cable (``feedline.quarter_wave_length_m``: vf c / (4 f));
* what velocity factor does a measured quarter-wave piece imply
  (``feedline.velocity_factor_from_length``);
* what impedance does the line present at the feed when it ends in a load
  (``feedline.line_input_impedance``, Pozar);
* how much does a length (or velocity-factor) error spoil the circular polarization.

Phase error and the polarization it leaves
------------------------------------------
Frame and sense as in :mod:`planner.antenna`: x east, y north, z up, time dependence e^{jwt};
a wave travelling up (+z) with E ~ x - j y is right-hand circular (IEEE Std 145). Element a
radiates x at the zenith, element b (a turned +90 deg about the up axis) radiates y; the line
makes b lag, so the zenith field is ``E = x + rho exp(-j (90 deg + d)) y`` with ``rho`` the
amplitude ratio |E_b|/|E_a| and ``d`` the phase error. A line longer than a quarter wave by
``dl`` adds the lag ``d = 360 deg * dl / lambda_g``, lambda_g = vf c / f (positive d: too long).

The circular components are the projections on the unit vectors (x - j y)/sqrt 2 (RHCP) and
(x + j y)/sqrt 2 (LHCP)::

    E_R = (E_x + j E_y) / sqrt 2,      E_L = (E_x - j E_y) / sqrt 2

The polarization ellipse has semi-axes (|E_R| + |E_L|)/sqrt 2 and ||E_R| - |E_L||/sqrt 2
(Stutzman, *Polarization in Electromagnetic Systems*), so the axial ratio is
``AR = (|E_R| + |E_L|) / ||E_R| - |E_L||`` (reported in dB, 20 log10, >= 0; capped at
``planner.antenna.AXIAL_RATIO_CAP_DB`` for a linear state; ``axial_ratio_db_from_circular`` lives
with the other polarization quantities in :mod:`planner.antenna.table`). Received by an ideal RHCP antenna,
the wave keeps the fraction |E_R|^2 / (|E_R|^2 + |E_L|^2) of its power: the polarization loss
against RHCP is ``-10 log10`` of that (clipped at ``planner.link.polarization.MAX_LOSS_DB``).

This idealisation ignores the coupling between the elements and the fact that their driving
impedances are not the line's impedance; :func:`harness_report` given the solver's 2x2 port
impedance matrix (and optionally the solution, for the far field) solves the real network with
:func:`planner.antenna.synth.feed.phasing_line` and reports the actual current ratio and zenith axial ratio.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from planner.antenna.table import axial_ratio_db_from_circular
from planner.errors import UserError
from planner.errors import positive_number as _positive
from planner.link.feedline import (
    SPEED_OF_LIGHT_M_S,
    line_input_impedance,
    mismatch_loss_db,
    quarter_wave_length_m,
    velocity_factor_from_length,
    vswr_from_impedance,
    wavelength_in_line_m,
)
from planner.link.polarization import MAX_LOSS_DB, MIN_EFFICIENCY

__all__ = [
    "phase_error_deg",
    "circular_components_from_phase_error",
    "axial_ratio_db_from_phase_error",
    "polarization_loss_db_from_phase_error",
    "axial_ratio_db_from_circular",
    "harness_report",
    "HARNESS_UNITS",
    "EQUAL_CURRENTS_NOTE",
    "current_ratio_from_header",
    "axial_ratio_db_from_current_ratio",
    "ratio_cut_effects",
]

EQUAL_CURRENTS_NOTE = (
    "the axial ratio and polarization loss here assume equal element currents (|I_b / I_a| = 1) and two "
    "orthogonal elements with equal patterns; only the phase error comes from the line"
)
"""Said with every ``planner harness`` report that starts from the ideal ratio 1 at -90 deg."""


def _finite(name: str, value: Any) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise UserError(f"{name}: must be a number, got {value!r}") from None
    if not math.isfinite(number):
        raise UserError(f"{name}: must be a finite number, got {value!r}")
    return number


def _velocity_factor(value: Any) -> float:
    vf = _finite("velocity_factor", value)
    if not 0.0 < vf <= 1.0:
        raise UserError(f"velocity_factor: must be in (0, 1] (e.g. 0.66 solid PE, 0.78-0.85 foam), got {value!r}")
    return vf


def phase_error_deg(length_error_m, frequency_hz: float, velocity_factor: float):
    """Extra lag (deg) that ``length_error_m`` of line adds at ``frequency_hz``: 360 dl / (vf c / f).

    Positive for a line that is too long (more delay), negative for one too short; arrays accepted.
    """
    frequency_hz = _positive("frequency_hz", frequency_hz)
    velocity_factor = _velocity_factor(velocity_factor)
    dl = np.asarray(length_error_m, dtype=float)
    if not np.all(np.isfinite(dl)):
        raise UserError(f"length_error_m: must be a finite number of metres, got {length_error_m!r}")
    d = 360.0 * dl / wavelength_in_line_m(frequency_hz, velocity_factor)
    return float(d) if np.ndim(d) == 0 else d


def circular_components_from_phase_error(d_deg, amplitude_ratio=1.0) -> tuple[np.ndarray, np.ndarray]:
    """(E_R, E_L) of the zenith field ``x + rho exp(-j (90 + d)) y`` (see the module docstring)."""
    d = np.asarray(d_deg, dtype=float)
    rho = np.asarray(amplitude_ratio, dtype=float)
    if not np.all(np.isfinite(d)):
        raise UserError(f"phase error: must be a finite number of degrees, got {d_deg!r}")
    if not np.all(np.isfinite(rho) & (rho >= 0)):
        raise UserError(f"amplitude_ratio: must be a number >= 0 (|E_b| / |E_a|), got {amplitude_ratio!r}")
    e_x = np.ones(np.broadcast(d, rho).shape, dtype=complex)
    e_y = rho * np.exp(-1j * np.radians(90.0 + d))
    root2 = math.sqrt(2.0)
    return (e_x + 1j * e_y) / root2, (e_x - 1j * e_y) / root2


def _loss_against_rhcp_db(e_r, e_l) -> np.ndarray:
    power_r = np.abs(e_r) ** 2
    total = power_r + np.abs(e_l) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        fraction = np.where(total > 0, power_r / np.where(total > 0, total, 1.0), MIN_EFFICIENCY)
    return np.minimum(-10.0 * np.log10(np.maximum(fraction, MIN_EFFICIENCY)), MAX_LOSS_DB) + 0.0


def axial_ratio_db_from_phase_error(d_deg, amplitude_ratio=1.0):
    """Axial ratio (dB, >= 0) of ``x + rho exp(-j (90 + d)) y``; 0 dB for d = 0 and rho = 1."""
    e_r, e_l = circular_components_from_phase_error(d_deg, amplitude_ratio)
    return axial_ratio_db_from_circular(e_r, e_l)


def polarization_loss_db_from_phase_error(d_deg, amplitude_ratio=1.0):
    """Loss (dB) of that wave into an ideal RHCP antenna: -10 log10(|E_R|^2 / (|E_R|^2 + |E_L|^2))."""
    e_r, e_l = circular_components_from_phase_error(d_deg, amplitude_ratio)
    loss = _loss_against_rhcp_db(e_r, e_l)
    return float(loss) if np.ndim(loss) == 0 else loss


HARNESS_UNITS: dict[str, str] = {
    "frequency_mhz": "MHz",
    "free_space_wavelength_m": "m",
    "velocity_factor_nominal": "",
    "velocity_factor_measured": "",
    "velocity_factor_used": "",
    "quarter_wave_length_nominal_m": "m",
    "quarter_wave_length_m": "m",
    "nominal_cut_error_m": "m",
    "nominal_cut_phase_error_deg": "deg",
    "nominal_cut_axial_ratio_db": "dB",
    "length_error_m": "m",
    "line_length_m": "m",
    "line_electrical_length_deg": "deg",
    "phase_error_deg": "deg",
    "axial_ratio_db": "dB",
    "polarization_loss_db": "dB",
    "z0_ohm": "ohm",
    "load_ohm": "ohm",
    "input_impedance_ohm": "ohm",
    "input_vswr": "",
    "input_mismatch_loss_db": "dB",
    "network_current_ratio_magnitude": "",
    "network_phase_deg": "deg",
    "network_phase_error_deg": "deg",
    "network_axial_ratio_db": "dB",
    "network_polarization_loss_db": "dB",
    "network_feed_impedance_ohm": "ohm",
    "network_feed_vswr": "",
    "network_mismatch_loss_db": "dB",
    "zenith_axial_ratio_db": "dB",
    "zenith_polarization_loss_db": "dB",
}
"""Unit of every key :func:`harness_report` may return (the unit is also the key's suffix)."""


def harness_report(
    frequency_hz: float,
    velocity_factor: float,
    measured_length_m: float | None = None,
    length_error_m: float = 0.0,
    z0_ohm: float = 50.0,
    load_ohm: complex | None = None,
    *,
    impedance_matrix=None,
    solution=None,
) -> dict[str, Any]:
    """Everything about one phasing line, as ``{name_with_unit: value}`` (units: :data:`HARNESS_UNITS`).

    ``velocity_factor`` is the nominal (datasheet) value. ``measured_length_m``, when given, is the
    length of a piece of this cable measured to be a quarter wave at ``frequency_hz`` (e.g. by the
    dip of an open stub); the velocity factor it implies is then used for the line, and the report
    says what cutting to the nominal velocity factor would have cost. ``length_error_m`` is how much
    longer (positive) or shorter than the quarter wave the line is actually cut. ``load_ohm``, when
    given, terminates the line: its input impedance is reported against ``z0_ohm``.

    ``impedance_matrix`` (the solver's 2x2 port impedance matrix of elements a and b) adds the
    real network: element a at the feed point, b through this line of impedance ``z0_ohm``
    (:func:`planner.antenna.synth.feed.phasing_line`). ``solution`` (a solver solution, which provides the
    matrix itself) adds the zenith axial ratio of the real far field.
    """
    frequency_hz = _positive("frequency_hz", frequency_hz)
    vf_nominal = _velocity_factor(velocity_factor)
    z0_ohm = _positive("z0_ohm", z0_ohm)
    length_error_m = _finite("length_error_m", length_error_m)
    report: dict[str, Any] = {
        "frequency_mhz": frequency_hz / 1e6,
        "free_space_wavelength_m": SPEED_OF_LIGHT_M_S / frequency_hz,
        "velocity_factor_nominal": vf_nominal,
    }
    quarter_nominal = quarter_wave_length_m(frequency_hz, vf_nominal)
    report["quarter_wave_length_nominal_m"] = quarter_nominal
    if measured_length_m is not None:
        measured = _positive("measured_length_m", measured_length_m)
        vf_used = velocity_factor_from_length(measured, frequency_hz, 90.0)
        report["velocity_factor_measured"] = vf_used
        nominal_error = quarter_nominal - measured
        nominal_phase = phase_error_deg(nominal_error, frequency_hz, vf_used)
        report["nominal_cut_error_m"] = nominal_error
        report["nominal_cut_phase_error_deg"] = nominal_phase
        report["nominal_cut_axial_ratio_db"] = axial_ratio_db_from_phase_error(nominal_phase)
    else:
        vf_used = vf_nominal
    quarter = quarter_wave_length_m(frequency_hz, vf_used)
    line_length = quarter + length_error_m
    if line_length <= 0:
        raise UserError(
            f"length_error_m: {length_error_m:g} m would leave no line (the quarter wave is {quarter:.4f} m); "
            f"allowed: more than {-quarter:.4f} m"
        )
    d = phase_error_deg(length_error_m, frequency_hz, vf_used)
    report.update(
        {
            "velocity_factor_used": vf_used,
            "quarter_wave_length_m": quarter,
            "length_error_m": length_error_m,
            "line_length_m": line_length,
            "line_electrical_length_deg": 360.0 * line_length / wavelength_in_line_m(frequency_hz, vf_used),
            "phase_error_deg": d,
            "axial_ratio_db": axial_ratio_db_from_phase_error(d),
            "polarization_loss_db": polarization_loss_db_from_phase_error(d),
            "z0_ohm": z0_ohm,
        }
    )
    if load_ohm is not None:
        try:
            z_load = complex(load_ohm)
        except (TypeError, ValueError):
            raise UserError(f"load_ohm: must be an impedance such as 50 or 73+42j, got {load_ohm!r}") from None
        if not (math.isfinite(z_load.real) and math.isfinite(z_load.imag)) or z_load.real < 0:
            raise UserError(f"load_ohm: needs a finite, non-negative resistance (e.g. 73+42j), got {load_ohm!r}")
        z_in = line_input_impedance(z0_ohm, z_load, line_length, frequency_hz, vf_used)
        report["load_ohm"] = z_load
        report["input_impedance_ohm"] = z_in
        vswr = vswr_from_impedance(z_in, z0_ohm)
        report["input_vswr"] = vswr
        report["input_mismatch_loss_db"] = mismatch_loss_db(vswr)
    if solution is not None and impedance_matrix is None:
        impedance_matrix = solution.port_impedance_matrix()
    if impedance_matrix is not None:
        from planner.antenna.synth.feed import phasing_line  # the solver side is optional here

        result = phasing_line(
            impedance_matrix,
            line_length_m=line_length,
            line_z0_ohm=z0_ohm,
            velocity_factor=vf_used,
            frequency_hz=frequency_hz,
        )
        ratio = complex(result.current_ratio)
        report["network_current_ratio_magnitude"] = abs(ratio)
        report["network_phase_deg"] = result.phase_deg
        # The ideal is -90 deg; the error is the extra lag (same sign convention as phase_error_deg).
        network_error = -90.0 - result.phase_deg
        network_error = (network_error + 180.0) % 360.0 - 180.0
        report["network_phase_error_deg"] = network_error
        report["network_axial_ratio_db"] = axial_ratio_db_from_phase_error(network_error, abs(ratio))
        report["network_polarization_loss_db"] = polarization_loss_db_from_phase_error(network_error, abs(ratio))
        report["network_feed_impedance_ohm"] = result.feed_impedance_ohm
        report["network_feed_vswr"] = result.vswr_50
        report["network_mismatch_loss_db"] = result.mismatch_loss_db
        if solution is not None:
            rhcp_dbic, lhcp_dbic = solution.gains_dbic(0.0, 90.0, result.port_voltages)
            g_r = 10.0 ** (float(np.asarray(rhcp_dbic).ravel()[0]) / 10.0)
            g_l = 10.0 ** (float(np.asarray(lhcp_dbic).ravel()[0]) / 10.0)
            report["zenith_axial_ratio_db"] = float(axial_ratio_db_from_circular(math.sqrt(g_r), math.sqrt(g_l)))
            report["zenith_polarization_loss_db"] = float(_loss_against_rhcp_db(math.sqrt(g_r), math.sqrt(g_l)))
    return report


def current_ratio_from_header(header, source: str = "pattern table") -> tuple[float, float] | None:
    """(|I_b / I_a|, phase deg) from a table's ``current_ratio_b_over_a = 1.0773 at -91.49 deg (...)``
    header line, or None when the table has none (one-port and closed-form tables)."""
    text = header.get("current_ratio_b_over_a")
    if text is None:
        return None
    magnitude, sep, rest = text.partition(" at ")
    try:
        values = (float(magnitude), float(rest.split()[0]))
    except (IndexError, ValueError):
        values = (math.nan, math.nan)
    if not sep or not all(math.isfinite(v) for v in values) or values[0] < 0:
        raise UserError(
            f"{source}: header line current_ratio_b_over_a = {text!r} is not '<magnitude> at <phase> deg' (e.g. 1.0773 at -91.49 deg)"
        )
    return values


def axial_ratio_db_from_current_ratio(ratio_magnitude, ratio_phase_deg):
    """Axial ratio (dB) of ``x + rho exp(j phi) y``: element b's field over a's is the current ratio
    (orthogonal elements with equal patterns); the same as :func:`axial_ratio_db_from_phase_error`
    with ``d = -90 - phi``."""
    return axial_ratio_db_from_phase_error(-90.0 - np.asarray(ratio_phase_deg, dtype=float), ratio_magnitude)


def ratio_cut_effects(
    ratio_magnitude: float, ratio_phase_deg: float, frequency_hz: float, velocity_factor: float, errors_m
) -> list[dict[str, float]]:
    """What a phasing line cut ``errors_m`` long (+) or short (-) does, starting from the current
    ratio ``ratio_magnitude`` at ``ratio_phase_deg`` instead of the ideal 1 at -90 deg.

    A longer line delays element b by ``360 dl / lambda_g`` more (the ratio's phase falls by that);
    the amplitude ratio is kept (a line whose impedance matches the element's changes only the
    phase, module docstring). Rows: ``length_error_m``, ``current_ratio_magnitude``,
    ``current_ratio_phase_deg``, ``phase_error_deg`` (from quadrature), ``axial_ratio_db``,
    ``polarization_loss_db`` (against RHCP).
    """
    rho = _finite("current ratio magnitude", ratio_magnitude)
    if rho < 0:
        raise UserError(f"current ratio magnitude: must be >= 0, got {ratio_magnitude!r}")
    phase0 = _finite("current ratio phase", ratio_phase_deg)
    rows = []
    for error in np.atleast_1d(np.asarray(errors_m, dtype=float)):
        phase = phase0 - float(phase_error_deg(float(error), frequency_hz, velocity_factor))
        phase = (phase + 180.0) % 360.0 - 180.0
        d = (-90.0 - phase + 180.0) % 360.0 - 180.0
        rows.append(
            {
                "length_error_m": float(error),
                "current_ratio_magnitude": rho,
                "current_ratio_phase_deg": phase,
                "phase_error_deg": d,
                "axial_ratio_db": float(axial_ratio_db_from_phase_error(d, rho)),
                "polarization_loss_db": float(polarization_loss_db_from_phase_error(d, rho)),
            }
        )
    return rows

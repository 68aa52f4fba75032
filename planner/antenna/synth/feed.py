"""Feed networks for a pair of elements, as circuit theory on the solver's port impedance matrix.

The solver gives the 2x2 open-circuit impedance matrix Z of the two ports "a" and "b"
(``V = Z I``, mutual coupling included: ``Z[0, 1]`` is the voltage at a per ampere into b). A feed
network is whatever fixes the two port currents; this module solves two of them exactly and
returns the port voltages that, applied to the solver as delta-gap sources, reproduce those
currents (so the far field of the fed antenna is ``solution.far_field(..., port_voltages)``).

Sense
-----
Frame x east, y north, z up, time dependence e^{jwt} (as in :mod:`planner.antenna`). Element b
is element a turned +90 deg about the up axis (east -> north: the right-hand sense about +z), with
its port oriented the same way. Then a current ratio ``I_b / I_a = -j`` (b lags by 90 deg) makes
the zenith field ~ x - j y, which is RHCP for a wave going up (IEEE Std 145); ``+j`` is LHCP.

Ideal quadrature
----------------
``ideal_quadrature(Z)`` imposes ``I_a = 1 A``, ``I_b = -j A`` (RHCP) and returns ``V = Z I``. With
coupling the two *active* (driving-point) impedances ``Z_a = V_a / I_a = Z_aa - j Z_ab`` and
``Z_b = V_b / I_b = Z_bb + j Z_ba`` differ from the self impedances and from each other. The
network that would impose these currents is not specified, so the feed impedance is *defined* as
the two active impedances in parallel, ``Z_a Z_b / (Z_a + Z_b)``: what a source would see if each
port were brought to the common feed point through an ideal lossless phase shifter that does not
transform impedance. Without coupling and with a matched lossless quarter-wave line this equals
the :func:`phasing_line` result exactly.

Phasing line
------------
``phasing_line(...)``: element a is connected directly across the feed point, element b through a
line (impedance Z0, velocity factor vf, matched loss alpha dB/m) of length l; both are in parallel
at the feed point, driven by 1 V. The line is the two-port (Pozar, *Microwave Engineering*, ABCD
matrix of a transmission line)::

    [V_in]   [cosh(gl)      Z0 sinh(gl)] [V_b]
    [I_in] = [sinh(gl)/Z0   cosh(gl)   ] [I_b],    g l = alpha l / 8.686 + j 2 pi l / (vf c / f)

With ``V_a = V_in = 1`` and ``V = Z I``, the port currents solve the 2x2 linear system::

    Z_aa I_a + Z_ab I_b = 1
    cosh(gl) (Z_ba I_a + Z_bb I_b) + Z0 sinh(gl) I_b = 1

The feed impedance is ``1 / (I_a + I_in)``, with the line's input current computed from the
transformed active impedance of b (``planner.link.feedline.line_input_impedance``, Pozar's formula).
The VSWR against 50 ohm and the mismatch loss come from ``planner.link.feedline``.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass, field

import numpy as np

from planner.errors import UserError, positive_number
from planner.link.feedline import (
    line_gamma_length,
    line_input_impedance,
    mismatch_loss_db,
    vswr_from_impedance,
)

__all__ = ["FeedResult", "ideal_quadrature", "phasing_line", "single_port", "REFERENCE_IMPEDANCE_OHM"]

REFERENCE_IMPEDANCE_OHM = 50.0
"""Impedance against which the feed VSWR and mismatch loss are reported."""

SENSES = ("rhcp", "lhcp")


@dataclass(frozen=True)
class FeedResult:
    """The state of a fed antenna.

    ``port_voltages`` / ``port_currents``: per port (order of the impedance matrix, a then b),
    complex, for the network's normalisation (``ideal_quadrature``: I_a = 1 A; ``phasing_line``:
    1 V at the feed point). ``current_ratio`` = I_b / I_a, ``phase_deg`` its angle (-90 for an
    ideal RHCP feed). ``feed_impedance_ohm`` is what the source sees (see the module docstring for
    the ideal case), ``vswr_50`` and ``mismatch_loss_db`` against ``reference_impedance_ohm``.
    ``active_impedance_ohm``: V_k / I_k per port. ``input_power_w``: power the source delivers;
    ``port_power_w``: power into the ports (the elements); ``network_efficiency`` their ratio (line
    loss; 1 for a lossless network).
    """

    port_voltages: np.ndarray
    port_currents: np.ndarray
    current_ratio: complex
    phase_deg: float
    feed_impedance_ohm: complex
    vswr_50: float
    mismatch_loss_db: float
    active_impedance_ohm: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=complex))
    input_power_w: float = float("nan")
    port_power_w: float = float("nan")
    network_efficiency: float = 1.0
    reference_impedance_ohm: float = REFERENCE_IMPEDANCE_OHM
    description: str = ""


def _matrix(z, size: int = 2) -> np.ndarray:
    m = np.asarray(z, dtype=complex)
    if m.shape != (size, size):
        raise ValueError(f"the port impedance matrix must be {size}x{size}, got shape {m.shape}")
    if not np.all(np.isfinite(m)):
        raise ValueError("the port impedance matrix holds non-finite values")
    return m


def _mismatch(z_feed: complex, reference_ohm: float) -> tuple[float, float]:
    if not (math.isfinite(z_feed.real) and math.isfinite(z_feed.imag)) or z_feed.real <= 0:
        return float("inf"), float("inf")
    vswr = float(vswr_from_impedance(z_feed, reference_ohm))
    return vswr, float(mismatch_loss_db(vswr))


def _power(v: np.ndarray, i: np.ndarray) -> float:
    return float(0.5 * np.real(np.sum(v * np.conj(i))))


def _ratio_and_phase(currents: np.ndarray) -> tuple[complex, float]:
    if currents[0] == 0:
        return complex("nan"), float("nan")
    ratio = complex(currents[1] / currents[0])
    return ratio, math.degrees(cmath.phase(ratio))


def ideal_quadrature(Z, sense: str = "rhcp", *, reference_ohm: float = REFERENCE_IMPEDANCE_OHM) -> FeedResult:
    """Equal currents in quadrature: I_a = 1 A, I_b = -j A for RHCP (+j for LHCP).

    Element b must be element a turned +90 deg about the up axis (module docstring). The port
    voltages are V = Z I; the feed impedance is the parallel combination of the two active
    impedances (a definition, see the module docstring).
    """
    if sense not in SENSES:
        raise UserError(f"sense: {sense!r} is not known; allowed: {', '.join(SENSES)}")
    z = _matrix(Z)
    currents = np.array([1.0, -1j if sense == "rhcp" else 1j], dtype=complex)
    voltages = z @ currents
    active = voltages / currents
    with np.errstate(divide="ignore", invalid="ignore"):
        z_feed = complex(active[0] * active[1] / (active[0] + active[1]))
    vswr, mismatch = _mismatch(z_feed, reference_ohm)
    ratio, phase = _ratio_and_phase(currents)
    power = _power(voltages, currents)
    return FeedResult(
        port_voltages=voltages,
        port_currents=currents,
        current_ratio=ratio,
        phase_deg=phase,
        feed_impedance_ohm=z_feed,
        vswr_50=vswr,
        mismatch_loss_db=mismatch,
        active_impedance_ohm=active,
        input_power_w=power,
        port_power_w=power,
        network_efficiency=1.0,
        reference_impedance_ohm=reference_ohm,
        description=f"ideal quadrature ({sense.upper()}): I_b = {'-' if sense == 'rhcp' else '+'}j I_a, "
        "feed impedance = the two active impedances in parallel",
    )


def phasing_line(
    Z,
    line_length_m: float,
    line_z0_ohm: float,
    velocity_factor: float,
    loss_db_per_m: float = 0.0,
    frequency_hz: float | None = None,
    *,
    reference_ohm: float = REFERENCE_IMPEDANCE_OHM,
) -> FeedResult:
    """Element a at the feed point, element b through a line; both in parallel, 1 V at the feed.

    Solved exactly with the line's ABCD matrix and the full 2x2 Z (mutual coupling included); see
    the module docstring. ``loss_db_per_m`` is the line's matched loss. ``frequency_hz`` is
    required (keyword kept last to follow the usual argument order).
    """
    if frequency_hz is None:
        raise UserError("frequency_hz: the phasing line needs the frequency (a positive number of hertz)")
    frequency_hz = positive_number("frequency_hz", frequency_hz, "a positive number of hertz")
    z0 = positive_number("line_z0_ohm", line_z0_ohm, "a positive impedance in ohm (e.g. 50 or 75)")
    vf = float(velocity_factor)
    if not (math.isfinite(vf) and 0.0 < vf <= 1.0):
        raise UserError(f"velocity_factor: must be in (0, 1], got {velocity_factor!r}")
    length = float(line_length_m)
    if not (math.isfinite(length) and length >= 0.0):
        raise UserError(f"line_length_m: must be zero or a positive number of metres, got {line_length_m!r}")
    alpha = float(loss_db_per_m)
    if not (math.isfinite(alpha) and alpha >= 0.0):
        raise UserError(f"loss_db_per_m: must be zero or positive (matched loss in dB per metre), got {loss_db_per_m!r}")
    z = _matrix(Z)
    loss_db = alpha * length
    gamma_l = line_gamma_length(length, frequency_hz, vf, loss_db)
    a_line, b_line = cmath.cosh(gamma_l), z0 * cmath.sinh(gamma_l)
    system = np.array(
        [[z[0, 0], z[0, 1]], [a_line * z[1, 0], a_line * z[1, 1] + b_line]],
        dtype=complex,
    )
    currents = np.linalg.solve(system, np.array([1.0, 1.0], dtype=complex))
    voltages = z @ currents
    # Current into the line at the feed point, from b's active impedance seen through the line
    # (Pozar's input-impedance formula, planner.link.feedline).
    z_b_active = complex(voltages[1] / currents[1]) if currents[1] != 0 else complex("inf")
    z_line_in = line_input_impedance(z0, z_b_active, length, frequency_hz, vf, loss_db)
    i_line = 1.0 / z_line_in
    z_feed = complex(1.0 / (currents[0] + i_line))
    vswr, mismatch = _mismatch(z_feed, reference_ohm)
    ratio, phase = _ratio_and_phase(currents)
    port_power = _power(voltages, currents)
    input_power = float(0.5 * np.real(1.0 * np.conj(currents[0] + i_line)))
    with np.errstate(divide="ignore", invalid="ignore"):
        active = voltages / currents
    efficiency = port_power / input_power if input_power > 0 else float("nan")
    return FeedResult(
        port_voltages=voltages,
        port_currents=currents,
        current_ratio=ratio,
        phase_deg=phase,
        feed_impedance_ohm=z_feed,
        vswr_50=vswr,
        mismatch_loss_db=mismatch,
        active_impedance_ohm=active,
        input_power_w=input_power,
        port_power_w=port_power,
        network_efficiency=efficiency,
        reference_impedance_ohm=reference_ohm,
        description=(
            f"phasing line: a at the feed point, b through {length:.4f} m of {z0:g} ohm line, velocity factor "
            f"{vf:g}, {alpha:g} dB/m; both in parallel at the feed point"
        ),
    )


def single_port(Z, *, reference_ohm: float = REFERENCE_IMPEDANCE_OHM) -> FeedResult:
    """A one-port element (port "feed") driven by 1 V: I = V / Z."""
    z = _matrix(Z, size=1)
    voltages = np.array([1.0], dtype=complex)
    currents = voltages / z[0, 0]
    z_feed = complex(z[0, 0])
    vswr, mismatch = _mismatch(z_feed, reference_ohm)
    power = _power(voltages, currents)
    return FeedResult(
        port_voltages=voltages,
        port_currents=currents,
        current_ratio=complex("nan"),
        phase_deg=float("nan"),
        feed_impedance_ohm=z_feed,
        vswr_50=vswr,
        mismatch_loss_db=mismatch,
        active_impedance_ohm=np.array([z_feed]),
        input_power_w=power,
        port_power_w=power,
        network_efficiency=1.0,
        reference_impedance_ohm=reference_ohm,
        description="single port driven by 1 V",
    )

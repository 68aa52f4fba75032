"""Polarization states and the mismatch between a wave and an antenna.

Conventions
-----------
Sense follows IEEE Std 145: right-hand circular (RHCP) rotates clockwise when viewed
as the wave leaves the transmitter; positive = RHCP, negative = LHCP.  A state is
described by its *ellipticity angle* tau and its *tilt angle*:

* ``tan(tau) = +-1 / AR`` with AR >= 1 the (voltage) axial ratio, the sign giving the
  sense; tau = +45 deg is RHCP, -45 deg LHCP, 0 linear.  Unlike the axial ratio, tau
  has no infinity for a linear state.
* Everything below needs only ``sin(2 tau)`` and ``cos(2 tau)``, so states are carried
  as that pair (``cos(2 tau) >= 0`` always, ``sin^2 + cos^2 = 1``).

Efficiency (Stutzman, *Polarization in Electromagnetic Systems*)
----------------------------------------------------------------
The fraction of the power a wave could deliver that an antenna actually receives is::

    p = 1/2 [1 + sin2tau_w sin2tau_a + cos2tau_w cos2tau_a cos(2 dtilt)]

with ``dtilt`` the tilt difference between the wave's ellipse and the ellipse of the
wave the antenna is matched to.  This is ``cos^2`` of half the angle between the two
points on the Poincare sphere, whose Stokes unit vectors are
``(cos2tau cos2tilt, cos2tau sin2tilt, sin2tau)``.

It is Stutzman's axial-ratio form.  With signed axial ratios ``r`` (|r| >= 1,
sign = sense) ``tan(tau) = 1/r``, hence::

    sin2tau = 2 tan(tau) / (1 + tan^2 tau) = 2 r / (r^2 + 1)
    cos2tau = (1 - tan^2 tau) / (1 + tan^2 tau) = (r^2 - 1) / (r^2 + 1)

and substituting::

    p = 1/2 + [4 r_w r_a + (1 - r_w^2)(1 - r_a^2) cos 2dtilt] / [2 (1 + r_w^2)(1 + r_a^2)]

because ``(r_w^2 - 1)(r_a^2 - 1) = (1 - r_w^2)(1 - r_a^2)``.  The tests check this
numerically, and against an explicit Jones-vector computation.

Antennas described by partial gains
-----------------------------------
A pattern table gives the RHCP and LHCP partial gains G_R, G_L (linear) per direction.
With ``u = ln(10)/20 * (G_R_dB - G_L_dB)`` (the log of the ratio of the circular field
components)::

    sin2tau_a = (G_R - G_L) / (G_R + G_L) = tanh(u)
    cos2tau_a = 2 sqrt(G_R G_L) / (G_R + G_L) = sech(u)

and received power is proportional to ``(G_R + G_L) * p``.  For an RHCP wave
``(G_R + G_L) p = (G_R + G_L)(1 + sin2tau_a)/2 = G_R`` exactly: the partial gain is the
gain for that sense, as it should be.

What the station does not know: the tilt
----------------------------------------
Neither a pattern table (azimuth-symmetric or not) nor the scenario knows the tilt of
the satellite's ellipse relative to the ground antenna's: it changes along a pass with
the viewing geometry and the spacecraft attitude, and ionospheric Faraday rotation
turns it further (much more at VHF than at UHF).  The model therefore treats the tilt
difference as uniformly random for every wave kind:

* ``expected_loss_db`` is the loss of the tilt-averaged efficiency.  ``cos(2 dtilt)``
  averages to zero, so ``p_mean = (1 + sin2tau_w sin2tau_a) / 2``.
* ``fade_loss_db`` is the loss not exceeded ``fade_percentile`` % of the time.  With
  dtilt uniform, ``c = cos(2 dtilt)`` has the arcsine law on [-1, 1]:
  ``P(c <= x) = 1 - arccos(x) / pi``, so its lower x-quantile at level ``s`` is
  ``-cos(pi s)``.  Since p grows with c, the loss is below L with probability q when
  p is above its lower (1 - q)-quantile, i.e. at ``c = -cos(pi (1 - q)) = cos(pi q)``::

      p_fade = 1/2 [1 + sin2tau_w sin2tau_a + cos2tau_w cos2tau_a cos(pi q)]

"linear" (a fixed linear antenna on the spacecraft) and "linear-tumbling" (a spinning
or tumbling spacecraft) therefore get the same numbers: in both cases the tilt seen
by the station sweeps over the pass.  We chose the percentile rather than the worst
tilt for the fixed kinds because the worst tilt of a linear wave into a linear-looking
part of a ground pattern (near the horizon) is a null, which would report the clip
value for every such sample and say nothing useful.  For an exactly circular wave or
an exactly circular antenna (cos2tau = 0) there is no tilt dependence and both losses
are equal.

Efficiencies are clipped at ``MIN_EFFICIENCY`` = 1e-6 (a 60 dB loss) so that a
cross-polarized null gives a large finite loss instead of an infinity.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np
from numpy.typing import ArrayLike

from planner.errors import UserError

WAVE_KINDS = ("rhcp", "lhcp", "linear", "linear-tumbling")
WaveKind = Literal["rhcp", "lhcp", "linear", "linear-tumbling"]

MIN_EFFICIENCY = 1e-6  # clip for a cross-polarized null: at most 60 dB loss
MAX_LOSS_DB = -10.0 * np.log10(MIN_EFFICIENCY)

_DB_TO_NEPER_FIELD = np.log(10.0) / 20.0  # field ratio in dB -> natural log of the ratio


def axial_ratio_db_to_tau(axial_ratio_db: ArrayLike, sense: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Ellipticity of a state from its axial ratio (dB, >= 0, may be inf) and sense.

    ``sense`` is +1 for RHCP, -1 for LHCP (any positive / negative number works); 0 is
    accepted only as "linear" and gives the linear state whatever the axial ratio.
    Returns ``(sin2tau, cos2tau)`` (broadcast arrays), the pair the efficiency needs.
    The axial ratio in dB is 20 log10 of the ratio of the ellipse's major to minor axis.
    """
    ar_db = np.asarray(axial_ratio_db, dtype=float)
    sign = np.sign(np.asarray(sense, dtype=float))
    if np.any(ar_db < 0):
        raise UserError(f"axial_ratio_db must be >= 0 dB (0 is circular, inf is linear); got {np.min(ar_db)!r}")
    # t = tan|tau| = 1/AR in [0, 1]; linear (sense 0 or AR = inf) is t = 0.
    t = np.where(sign == 0, 0.0, 10.0 ** (-ar_db / 20.0))
    denominator = 1.0 + t * t
    sin2tau = sign * 2.0 * t / denominator
    cos2tau = (1.0 - t * t) / denominator
    sin2tau, cos2tau = np.broadcast_arrays(sin2tau, cos2tau)
    return sin2tau, cos2tau


def tau_from_partial_gains(gain_rhcp_dbic: ArrayLike, gain_lhcp_dbic: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Ellipticity of an antenna from its RHCP and LHCP partial gains (dBic).

    Returns ``(sin2tau, cos2tau)`` = ``((G_R - G_L)/(G_R + G_L), 2 sqrt(G_R G_L)/(G_R + G_L))``,
    computed as ``(tanh u, sech u)`` with u the natural log of the field ratio, which
    neither overflows nor loses precision for a deep cross-polarized null.  A partial
    gain of -inf (no field in that sense) gives an exactly circular state.
    """
    g_r = np.asarray(gain_rhcp_dbic, dtype=float)
    g_l = np.asarray(gain_lhcp_dbic, dtype=float)
    with np.errstate(invalid="ignore"):
        u = (g_r - g_l) * _DB_TO_NEPER_FIELD
    sin2tau = np.tanh(u)
    e = np.exp(-np.abs(u))  # in [0, 1], 0 for an infinite ratio
    cos2tau = 2.0 * e / (1.0 + e * e)
    sin2tau, cos2tau = np.broadcast_arrays(sin2tau, cos2tau)
    return sin2tau, cos2tau


def efficiency(
    sin2tau_w: ArrayLike,
    cos2tau_w: ArrayLike,
    sin2tau_a: ArrayLike,
    cos2tau_a: ArrayLike,
    cos2dtilt: ArrayLike,
) -> np.ndarray:
    """Stutzman's polarization efficiency between a wave (w) and an antenna (a).

    ``p = 1/2 [1 + sin2tau_w sin2tau_a + cos2tau_w cos2tau_a cos2dtilt]``, vectorized
    with broadcasting.  The result is clipped to [0, 1], which only removes rounding.
    """
    p = 0.5 * (
        1.0
        + np.asarray(sin2tau_w, dtype=float) * np.asarray(sin2tau_a, dtype=float)
        + np.asarray(cos2tau_w, dtype=float) * np.asarray(cos2tau_a, dtype=float) * np.asarray(cos2dtilt, dtype=float)
    )
    return np.clip(p, 0.0, 1.0)


@dataclass(frozen=True)
class WavePolarization:
    """Polarization of the satellite's wave.

    ``kind``: "rhcp", "lhcp" (elliptical with ``axial_ratio_db``, 0 = circular),
    "linear" (a fixed linear antenna) or "linear-tumbling" (a spinning or tumbling
    spacecraft).  ``axial_ratio_db`` is ignored for the linear kinds (a linear wave's
    axial ratio is infinite).
    """

    kind: WaveKind
    axial_ratio_db: float = 0.0

    def __post_init__(self) -> None:
        if self.kind not in WAVE_KINDS:
            raise UserError(f"polarization = {self.kind!r} is not known; allowed: {', '.join(WAVE_KINDS)}")
        ar = float(self.axial_ratio_db)
        if not ar >= 0.0:  # also catches NaN
            raise UserError(f"axial_ratio_db = {self.axial_ratio_db!r} must be >= 0 dB (0 is circular)")

    @property
    def is_linear(self) -> bool:
        return self.kind in ("linear", "linear-tumbling")

    def tau(self) -> tuple[float, float]:
        """``(sin2tau, cos2tau)`` of the wave."""
        if self.is_linear:
            return 0.0, 1.0
        sense = 1.0 if self.kind == "rhcp" else -1.0
        s, c = axial_ratio_db_to_tau(self.axial_ratio_db, sense)
        return float(s), float(c)


def _loss_db(p: np.ndarray) -> np.ndarray:
    return -10.0 * np.log10(np.maximum(p, MIN_EFFICIENCY))


def polarization_loss_db(
    wave: WavePolarization,
    gain_rhcp_dbic: ArrayLike,
    gain_lhcp_dbic: ArrayLike,
    *,
    fade_percentile: float = 90.0,
) -> tuple[np.ndarray, np.ndarray]:
    """Polarization mismatch loss (dB, >= 0) of ``wave`` into an antenna with these partial gains.

    The loss is relative to the antenna's *total* gain G_R + G_L: received power is
    ``(G_R + G_L) * p`` and the loss is ``-10 log10 p``.  The tilt difference is taken as
    uniformly random (see the module docstring): ``expected_loss_db`` is the loss of the
    tilt-averaged efficiency, ``fade_loss_db`` the loss not exceeded ``fade_percentile``
    % of the time.  Both are broadcast arrays of the gains' shape, clipped at 60 dB.
    """
    if not isinstance(wave, WavePolarization):
        raise TypeError("wave must be a WavePolarization")
    q = float(fade_percentile)
    if not 0.0 <= q <= 100.0:
        raise UserError(f"fade_percentile = {fade_percentile!r} must be between 0 and 100 (%)")
    sin_w, cos_w = wave.tau()
    sin_a, cos_a = tau_from_partial_gains(gain_rhcp_dbic, gain_lhcp_dbic)
    # Mean of cos(2 dtilt) over a uniform tilt is 0; its level-(1 - q) lower quantile
    # (arcsine law) is cos(pi q).
    p_mean = efficiency(sin_w, cos_w, sin_a, cos_a, 0.0)
    p_fade = efficiency(sin_w, cos_w, sin_a, cos_a, np.cos(np.pi * q / 100.0))
    return _loss_db(p_mean), _loss_db(p_fade)

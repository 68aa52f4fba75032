"""Required Eb/N0 from the modulation and the target bit error rate (AWGN, theory only).

Bit error probabilities on the additive white Gaussian noise channel (Sklar, *Digital
Communications*; Proakis, *Digital Communications*), with ``g = Eb/N0`` (linear) and
``Q(x) = erfc(x / sqrt 2) / 2``:

* bpsk: ``Q(sqrt(2 g))`` (coherent);
* qpsk: ``Q(sqrt(2 g))`` (coherent, Gray-coded: per bit the same as BPSK);
* dbpsk: ``exp(-g) / 2`` (differentially coherent);
* fsk-coherent: ``Q(sqrt(g))`` (orthogonal binary FSK, coherent);
* fsk-noncoherent: ``exp(-g / 2) / 2`` (orthogonal binary FSK, envelope detection);
* gmsk: ``Q(sqrt(2 alpha g))`` (Murota & Hirade, IEEE Trans. Commun. 1981; below).

"afsk-fm" (audio FSK through an FM voice channel) and "fm" have no such formula here:
their threshold depends on the FM detector, audio filtering and the modem in the audio
path, so the scenario must give ``required_cn0_dbhz`` for them.

Implementation loss and coding gain are not applied here; the link budget applies them.

GMSK
----
Murota & Hirade give ``Pb = Q(sqrt(2 alpha Eb/N0))`` for coherent detection, alpha set
by the Gaussian filter's bandwidth-time product BT.  The values commonly quoted from
them (e.g. Rappaport, *Wireless Communications*) are alpha = 0.68 at BT = 0.25 and
alpha = 0.85 at BT = infinity (MSK with the same receiver) -- recalled from memory and
matched by third-party code citing Rappaport for BT = 0.25; one web page attaches 0.68
to BT = 0.3 instead, a reminder that the anchor is uncertain to a few hundredths of BT.
No published table of alpha against BT was found, so between these two points the
curve is **our modelling choice**, not a published one:

* the degradation against MSK in dB, ``D(BT) = 10 log10(0.85 / alpha)``, is taken
  proportional to the square of the fraction ``lam(BT)`` of the Gaussian-filtered
  frequency pulse that spills outside its own bit (the intersymbol interference that
  causes the loss; squared because a small phase error costs energy to second order):
  ``D(BT) = D(0.25) (lam(BT) / lam(0.25))^2`` with ``D(0.25) = 10 log10(0.85/0.68)``;
* with the pulse ``g(t) = [Q(a(t - 1/2)) - Q(a(t + 1/2))] / 2``, ``a = 2 pi BT / sqrt(ln 2)``
  (Murota & Hirade's pulse, T = 1, area 1/2), the fraction of its area inside
  |t| <= 1/2 is, in closed form,
  ``2 Phi(a) - 1 - 2 (phi(0) - phi(a)) / a`` (Phi, phi the normal cdf and pdf), so
  ``lam = 1 - that``.

This reproduces both published points exactly (lam -> 0 as BT -> infinity), is smooth,
and decreases monotonically as BT grows.  It gives about 0.26 dB at BT = 0.5 and 0.06 dB
at BT = 1.  Accepted BT: 0.1 to 1.0; below 0.2 the curve is extrapolated far from the
anchor and a warning says so.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import brentq
from scipy.special import erfc, log_ndtr, ndtr

from planner.errors import UserError, warn

MODULATIONS = ("bpsk", "qpsk", "dbpsk", "fsk-coherent", "fsk-noncoherent", "gmsk", "afsk-fm", "fm")
NO_THEORY = ("afsk-fm", "fm")

GMSK_ALPHA_BT_025 = 0.68  # Murota & Hirade via Rappaport (from memory, see docstring)
GMSK_ALPHA_MSK = 0.85  # BT = infinity with the same receiver (from memory)
GMSK_BT_ANCHOR = 0.25
GMSK_BT_MIN, GMSK_BT_MAX = 0.1, 1.0
GMSK_BT_WARN_BELOW = 0.2

# Bracket for the inversion, dB.  Wide enough for any target BER in (0, 0.5) that a
# float can represent: at +60 dB every BER here is below 1e-300.
_EBN0_BRACKET_DB = (-120.0, 60.0)


def q_function(x: ArrayLike) -> np.ndarray:
    """Gaussian tail probability ``Q(x) = erfc(x / sqrt 2) / 2``."""
    return 0.5 * erfc(np.asarray(x, dtype=float) / math.sqrt(2.0))


def _normalize(modulation: str) -> str:
    name = str(modulation).strip().lower()
    if name not in MODULATIONS:
        raise UserError(f"modulation = {modulation!r} is not known; allowed: {', '.join(MODULATIONS)}")
    return name


def _no_theory(name: str) -> UserError:
    return UserError(f"modulation '{name}' has no Eb/N0 threshold; give required_cn0_dbhz in the scenario")


def _spill_fraction(bt: float) -> float:
    """Fraction of the Gaussian-filtered rectangular frequency pulse outside its own bit."""
    a = 2.0 * math.pi * bt / math.sqrt(math.log(2.0))
    phi0 = 1.0 / math.sqrt(2.0 * math.pi)
    phi_a = phi0 * math.exp(-0.5 * a * a)
    inside = 2.0 * float(ndtr(a)) - 1.0 - 2.0 * (phi0 - phi_a) / a
    return 1.0 - inside


def _check_bt(gmsk_bt: float) -> float:
    bt = float(gmsk_bt)
    if not GMSK_BT_MIN <= bt <= GMSK_BT_MAX:
        raise UserError(f"gmsk_bt = {gmsk_bt!r} is outside the modelled range {GMSK_BT_MIN} to {GMSK_BT_MAX}")
    if bt < GMSK_BT_WARN_BELOW:
        warn(
            f"gmsk_bt = {bt:g} is below {GMSK_BT_WARN_BELOW}: the GMSK degradation is "
            f"extrapolated from the published point at BT = {GMSK_BT_ANCHOR}"
        )
    return bt


def gmsk_degradation_db(gmsk_bt: float) -> float:
    """Eb/N0 penalty of GMSK with this BT against MSK with the same receiver (dB, >= 0)."""
    bt = _check_bt(gmsk_bt)
    d_anchor = 10.0 * math.log10(GMSK_ALPHA_MSK / GMSK_ALPHA_BT_025)
    return d_anchor * (_spill_fraction(bt) / _spill_fraction(GMSK_BT_ANCHOR)) ** 2


def gmsk_alpha(gmsk_bt: float) -> float:
    """Murota & Hirade's alpha for this BT (0.68 at 0.25, tending to 0.85; see module docstring)."""
    return GMSK_ALPHA_MSK * 10.0 ** (-gmsk_degradation_db(gmsk_bt) / 10.0)


def _log_ber(name: str, ebn0: np.ndarray, alpha: float) -> np.ndarray:
    """Natural log of the bit error probability at linear Eb/N0 (no underflow).

    ``alpha`` is the GMSK factor (ignored for the other modulations).
    """
    if name in ("bpsk", "qpsk"):
        return log_ndtr(-np.sqrt(2.0 * ebn0))
    if name == "dbpsk":
        return math.log(0.5) - ebn0
    if name == "fsk-coherent":
        return log_ndtr(-np.sqrt(ebn0))
    if name == "fsk-noncoherent":
        return math.log(0.5) - 0.5 * ebn0
    if name == "gmsk":
        return log_ndtr(-np.sqrt(2.0 * alpha * ebn0))
    raise _no_theory(name)


def bit_error_rate(modulation: str, ebn0_db: ArrayLike, *, gmsk_bt: float = 0.5) -> np.ndarray:
    """Theoretical bit error probability on AWGN at ``ebn0_db`` (array in, array out)."""
    name = _normalize(modulation)
    if name in NO_THEORY:
        raise _no_theory(name)
    alpha = gmsk_alpha(gmsk_bt) if name == "gmsk" else 1.0
    ebn0 = 10.0 ** (np.asarray(ebn0_db, dtype=float) / 10.0)
    return np.exp(_log_ber(name, ebn0, alpha))


def required_ebn0_db(modulation: str, target_ber: float, *, gmsk_bt: float = 0.5) -> float:
    """Eb/N0 (dB) at which the theoretical BER equals ``target_ber`` (theory only).

    Solved with ``scipy.optimize.brentq`` on the log of the BER, which is smooth and
    monotone in Eb/N0 for every modulation here.
    """
    name = _normalize(modulation)
    if name in NO_THEORY:
        raise _no_theory(name)
    ber = float(target_ber)
    if not 0.0 < ber < 0.5:
        raise UserError(f"target_ber = {target_ber!r} must be between 0 and 0.5 (exclusive), e.g. 1e-5")
    alpha = gmsk_alpha(gmsk_bt) if name == "gmsk" else 1.0  # validated (and warned) once
    log_target = math.log(ber)

    def excess(ebn0_db: float) -> float:
        ebn0 = 10.0 ** (ebn0_db / 10.0)
        return float(_log_ber(name, np.asarray(ebn0), alpha)) - log_target

    lo, hi = _EBN0_BRACKET_DB
    if excess(lo) <= 0.0:
        raise UserError(f"target_ber = {target_ber!r} is too close to 0.5 to resolve for {name}; give a smaller target")
    return float(brentq(excess, lo, hi, xtol=1e-12, rtol=4.0 * np.finfo(float).eps, maxiter=200))

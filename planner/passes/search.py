"""The numerics of the pass search: the coarse grid, interpolation and vectorized root finding.

The grid step per orbit is chosen so that no pass above 1 deg falls between two samples
unseen (see ``coarse_step_s``); between samples the position is the cubic Hermite
interpolant of SGP4's positions and velocities (Burden & Faires, Numerical Analysis);
AOS and LOS are found by bisection, culmination and near-zero extremes by golden-section
search, each on many brackets at once.
"""

from __future__ import annotations

import math

import numpy as np

# Clearance (deg) beyond which a sampled extreme cannot cross zero between two
# grid points: generous against the few tenths of a degree a low LEO peak moves.
_EXTREME_SEARCH_DEG = 10.0
_BISECTION_STEPS = 22  # 60 s bracket / 2**22 ~ 15 microseconds
_EXTREME_TOLERANCE_S = 1e-3  # near-zero extremes: only their sign matters
_TCA_TOLERANCE_S = 1e-4  # culmination to 0.1 ms (elevation to 1e-4 deg even at the zenith)
_GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0


def coarse_step_s(period_s: float) -> float:
    """Search grid step for an orbit of this period: 1/100 of it, in whole seconds, 5 to 60 s.

    Why no pass above 1 deg is missed: the lowest LEO (about 350 km, period about
    5500 s) stays above 1 deg elevation for about 3 minutes even on a pass that just
    reaches it (a chord of about 11 deg of ground track), so at a step of at most
    60 s, and at 1/100 of the period for faster orbits, at least two samples fall
    inside it and it shows as a sign change of the clearance.  Lower passes and mask
    shadows shorter than a step show as a sampled local extreme of the clearance
    within 10 deg of zero and are found by a golden-section search between the
    neighbouring samples.  Eccentric orbits are handed the period of their perigee
    angular rate (see ``_perigee_period_s``), where they move fastest.  Whole seconds
    let satellites of similar orbits share one grid, and a satellite's grid never
    depends on which others are predicted with it.
    """
    return float(np.clip(np.floor(period_s / 100.0), 5.0, 60.0))


def _perigee_period_s(satrec) -> float:
    """2 pi over the angular rate at perigee, n (1 + e)^2 / (1 - e^2)^(3/2) (Kepler's 2nd law)."""
    period_s = 2.0 * math.pi / satrec.no_kozai * 60.0
    e = min(max(satrec.ecco, 0.0), 0.999)
    return period_s * (1.0 - e) ** 1.5 / math.sqrt(1.0 + e)


def _search_grid(duration_s: float, step_s: float) -> np.ndarray:
    grid = np.arange(0.0, duration_s, step_s)
    return np.append(grid, duration_s) if len(grid) == 0 or grid[-1] < duration_s else grid


def _hermite(r0, v0, r1, v1, h, tau, with_velocity=False):
    """Cubic Hermite interpolation of position (and its derivative) between two samples.

    ``r0, v0, r1, v1`` are (m, 3) positions (km) and velocities (km/s) at the ends of
    intervals of length ``h`` (s); ``tau`` in [0, 1] is the fraction of the interval.
    Returns the position and (if asked) velocity as (x, y, z) tuples of arrays.
    The interpolant's error is (t - t0)^2 (t - t1)^2 r''''(xi) / 4!, at most
    h^4 / 384 |r''''| at mid-interval (Burden & Faires, Numerical Analysis, Hermite
    error term).  For a LEO orbit |r''''| ~ omega^4 |r| = (2 pi / 5400 s)^4 x 6900 km
    = 1.3e-8 km/s^4, so at the 60 s maximum step the bound is 0.4 m (0.3 m at 54 s);
    SGP4's velocities agree with the derivative of its positions to about 2 cm/s for
    near-circular orbits, adding at most 4/27 h dv ~ 0.2 m.  Measured against SGP4 at
    mid-step: 0.26 m (350 km), 0.29 m (550 km); eccentric orbits, whose SGP4
    velocities are less consistent (about 1 m/s), 0.8 m (e = 0.2) and 1.6 m
    (e = 0.74 at perigee): all far below what AOS/LOS to 1 s or elevation to
    0.01 deg need.  At tau = 0 and tau = 1 the samples are returned exactly.
    """
    tau2 = tau * tau
    tau3 = tau2 * tau
    h00 = 2.0 * tau3 - 3.0 * tau2 + 1.0
    h10 = (tau3 - 2.0 * tau2 + tau) * h
    h01 = 3.0 * tau2 - 2.0 * tau3
    h11 = (tau3 - tau2) * h
    position = tuple(h00 * r0[:, i] + h10 * v0[:, i] + h01 * r1[:, i] + h11 * v1[:, i] for i in range(3))
    if not with_velocity:
        return position, None
    d00 = (6.0 * tau2 - 6.0 * tau) / h
    d10 = 3.0 * tau2 - 4.0 * tau + 1.0
    d11 = 3.0 * tau2 - 2.0 * tau
    velocity = tuple(d00 * (r0[:, i] - r1[:, i]) + d10 * v0[:, i] + d11 * v1[:, i] for i in range(3))
    return position, velocity


def _golden_extreme(
    function, low: np.ndarray, high: np.ndarray, maximize: bool, tolerance_s: float = _EXTREME_TOLERANCE_S
) -> tuple[np.ndarray, np.ndarray]:
    """Vectorized golden-section search for an extreme of ``function`` in each [low, high].

    One new evaluation per step (the other inner point is kept); as many steps as take
    the widest bracket below ``tolerance_s``.
    """
    a, b = low.astype(float).copy(), high.astype(float).copy()
    if not len(a):
        return a, function(a)
    sign = 1.0 if maximize else -1.0
    widest = float(np.max(b - a))
    steps = int(np.ceil(np.log(max(widest, tolerance_s) / tolerance_s) / -np.log(_GOLDEN)))
    c = b - _GOLDEN * (b - a)
    d = a + _GOLDEN * (b - a)
    fc, fd = sign * function(c), sign * function(d)
    for _ in range(steps):
        lower = fc > fd  # the extreme lies in [a, d]
        b = np.where(lower, d, b)
        a = np.where(lower, a, c)
        new = np.where(lower, b - _GOLDEN * (b - a), a + _GOLDEN * (b - a))
        f_new = sign * function(new)
        c, d = np.where(lower, new, d), np.where(lower, c, new)
        fc, fd = np.where(lower, f_new, fd), np.where(lower, fc, f_new)
    best = 0.5 * (a + b)
    return best, function(best)


def _bisect_roots(function, left: np.ndarray, right: np.ndarray) -> np.ndarray:
    """Vectorized bisection for a zero of ``function`` in each [left, right] (signs differ).

    The bracket ends on the positive side of the zero are returned (within 15 us of it),
    so AOS and LOS samples never fall below the mask.
    """
    left, right = left.astype(float).copy(), right.astype(float).copy()
    if not len(left):
        return left
    left_positive = function(left) > 0
    for _ in range(_BISECTION_STEPS):
        middle = 0.5 * (left + right)
        same_as_left = (function(middle) > 0) == left_positive
        left = np.where(same_as_left, middle, left)
        right = np.where(same_as_left, right, middle)
    return np.where(left_positive, left, right)

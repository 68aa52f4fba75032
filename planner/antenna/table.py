"""The pattern table: partial RHCP/LHCP gains on an elevation (x azimuth) grid, its
interpolation, and the polarization quantities that follow from two partial gains.

Frame and conventions
---------------------
Local east-north-up: x east, y north, z up. ``azimuth_deg`` is a compass bearing (from north toward
east), ``elevation_deg`` is above the local horizon. RHCP and LHCP follow IEEE Std 145: with time
dependence e^{jwt}, a wave travelling along +z with E ~ (x - j y) is right-hand (RHCP). The two gain
columns are partial gains: the gain for an RHCP wave and for an LHCP wave; their linear sum is the
total gain (the power gain for a wave matched in polarization).

Interpolation choice
--------------------
Tables are interpolated bilinearly in dB (elevation, and azimuth with wrap-around at 360), which is
the usual practice for pattern tables: gains vary smoothly in dB over lobes. Gains below
``GAIN_FLOOR_DBIC`` (-60 dBic: "no field") are raised to the floor on loading so a deep null does
not drag its neighbours to -inf. Within one grid step of a null, dB interpolation lies below the
true gain (the null is spread over the step), which errs on the pessimistic side for margins.

Axial ratios follow Stutzman, *Polarization in Electromagnetic Systems* (see the functions).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

GAIN_FLOOR_DBIC = -60.0
"""Gain written (and clipped to on loading) where there is no field: a zero of the model."""

AXIAL_RATIO_CAP_DB = 60.0
"""Axial ratio reported for a linearly polarized (or field-free) direction."""


# --------------------------------------------------------------------------------------------
# Polarization quantities from the two partial gains
# --------------------------------------------------------------------------------------------


def db_to_linear(value_db: np.ndarray | float) -> np.ndarray:
    with np.errstate(over="ignore"):
        return np.power(10.0, np.asarray(value_db, dtype=float) / 10.0)


def linear_to_db(value: np.ndarray | float) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return 10.0 * np.log10(np.asarray(value, dtype=float))


def axial_ratio_db_from_partial_gains(gain_rhcp: np.ndarray | float, gain_lhcp: np.ndarray | float) -> np.ndarray:
    """Axial ratio (dB, >= 0) from LINEAR partial gains G_R, G_L.

    The RHCP and LHCP field amplitudes are sqrt(G_R) and sqrt(G_L); the polarization ellipse has
    major axis sqrt(G_R) + sqrt(G_L) and minor axis |sqrt(G_R) - sqrt(G_L)| (Stutzman,
    Polarization in Electromagnetic Systems), so AR = (sqrt G_R + sqrt G_L)/|sqrt G_R - sqrt G_L|.
    A linear (or field-free) direction has an infinite ratio, reported as ``AXIAL_RATIO_CAP_DB``;
    an undefined gain (NaN) gives NaN, not the cap.
    """
    a = np.sqrt(np.maximum(np.asarray(gain_rhcp, dtype=float), 0.0))
    b = np.sqrt(np.maximum(np.asarray(gain_lhcp, dtype=float), 0.0))
    major = a + b
    minor = np.abs(a - b)
    cap = 10.0 ** (AXIAL_RATIO_CAP_DB / 20.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(minor * cap > major, major / np.where(minor > 0, minor, 1.0), cap)
    return np.where(np.isnan(major), np.nan, 20.0 * np.log10(ratio))


def sense_from_partial_gains(gain_rhcp: np.ndarray | float, gain_lhcp: np.ndarray | float) -> np.ndarray:
    """+1 where RHCP dominates, -1 where LHCP dominates, 0 where they are equal (linear) or undefined (NaN)."""
    difference = np.asarray(gain_rhcp, dtype=float) - np.asarray(gain_lhcp, dtype=float)
    return np.sign(np.where(np.isnan(difference), 0.0, difference)).astype(int)


def _axial_ratio_db(e_r, e_l) -> np.ndarray:
    major = np.abs(e_r) + np.abs(e_l)
    minor = np.abs(np.abs(e_r) - np.abs(e_l))
    cap = 10.0 ** (AXIAL_RATIO_CAP_DB / 20.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(minor * cap > major, major / np.where(minor > 0, minor, 1.0), cap)
    return 20.0 * np.log10(ratio)


def axial_ratio_db_from_circular(e_r, e_l):
    """Axial ratio (dB, >= 0) of a field with circular components ``e_r``, ``e_l`` (complex or
    magnitudes): 20 log10((|E_R| + |E_L|) / ||E_R| - |E_L||), capped for a linear state."""
    ar = _axial_ratio_db(np.asarray(e_r), np.asarray(e_l))
    return float(ar) if np.ndim(ar) == 0 else ar


# --------------------------------------------------------------------------------------------
# The table
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class PatternTable:
    """A tabulated antenna pattern: partial RHCP/LHCP gains on an elevation (x azimuth) grid.

    ``elevation_deg`` is ascending from -90 to 90; ``azimuth_deg`` ascending in [0, 360) or None
    for an azimuth-symmetric table; the gain arrays have shape (n_el, n_az), or (n_el,) when
    symmetric. Gains below ``GAIN_FLOOR_DBIC`` are raised to it.
    """

    path: Path | None
    frequency_hz: float
    header: dict[str, str]
    elevation_deg: np.ndarray
    azimuth_deg: np.ndarray | None
    gain_rhcp_dbic: np.ndarray
    gain_lhcp_dbic: np.ndarray
    feed_vswr: float | None = None
    feed_impedance_ohm: complex | None = None
    radiation_efficiency: float | None = None

    def __post_init__(self) -> None:
        el = np.array(self.elevation_deg, dtype=float)
        if el.ndim != 1 or len(el) < 2:
            raise ValueError("elevation_deg must be a 1-D grid of at least 2 values")
        if np.any(np.diff(el) <= 0) or el[0] != -90.0 or el[-1] != 90.0:
            raise ValueError("elevation_deg must ascend strictly from -90 to 90")
        if self.azimuth_deg is None:
            az = None
            shape: tuple[int, ...] = (len(el),)
        else:
            az = np.array(self.azimuth_deg, dtype=float)
            if az.ndim != 1 or len(az) < 1:
                raise ValueError("azimuth_deg must be a 1-D grid")
            if np.any(np.diff(az) <= 0) or az[0] < 0.0 or az[-1] >= 360.0:
                raise ValueError("azimuth_deg must ascend strictly within [0, 360)")
            shape = (len(el), len(az))
        gains = []
        for name in ("gain_rhcp_dbic", "gain_lhcp_dbic"):
            g = np.array(getattr(self, name), dtype=float)
            if g.shape != shape:
                raise ValueError(f"{name} has shape {g.shape}, expected {shape}")
            if not np.all(np.isfinite(g)):
                raise ValueError(f"{name} holds non-finite values")
            g = np.maximum(g, GAIN_FLOOR_DBIC)
            g.setflags(write=False)
            gains.append(g)
        el.setflags(write=False)
        if az is not None:
            az.setflags(write=False)
        if not (math.isfinite(self.frequency_hz) and self.frequency_hz > 0):
            raise ValueError("frequency_hz must be positive")
        object.__setattr__(self, "elevation_deg", el)
        object.__setattr__(self, "azimuth_deg", az)
        object.__setattr__(self, "gain_rhcp_dbic", gains[0])
        object.__setattr__(self, "gain_lhcp_dbic", gains[1])
        object.__setattr__(self, "frequency_hz", float(self.frequency_hz))
        object.__setattr__(self, "header", dict(self.header))

    @property
    def symmetric(self) -> bool:
        """True for an azimuth-symmetric table (no azimuth column)."""
        return self.azimuth_deg is None

    @property
    def name(self) -> str:
        return self.path.name if self.path is not None else self.header.get("model", "pattern")

    # -- interpolation ------------------------------------------------------------------------

    def gains_dbic(self, azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> tuple[np.ndarray, np.ndarray]:
        """Partial gains (RHCP, LHCP) in dBic, bilinear in dB; arrays broadcast against each other.

        Azimuth wraps at 360 deg; elevation is clipped to -90..90. A symmetric table ignores the
        azimuth (it still takes part in broadcasting).
        """
        az, el = np.broadcast_arrays(np.asarray(azimuth_deg, dtype=float), np.asarray(elevation_deg, dtype=float))
        grid_el = self.elevation_deg
        el_c = np.clip(el, -90.0, 90.0)
        i = np.clip(np.searchsorted(grid_el, el_c, side="right") - 1, 0, len(grid_el) - 2)
        t = (el_c - grid_el[i]) / (grid_el[i + 1] - grid_el[i])
        if self.azimuth_deg is None:
            out = []
            for g in (self.gain_rhcp_dbic, self.gain_lhcp_dbic):
                out.append((1.0 - t) * g[i] + t * g[i + 1])
            return out[0], out[1]
        grid_az = self.azimuth_deg
        n_az = len(grid_az)
        ext_az = np.append(grid_az, grid_az[0] + 360.0)
        a = np.mod(az, 360.0)
        a = np.where(a >= 360.0, a - 360.0, a)  # np.mod(-1e-17, 360) == 360.0
        a = np.where(a < grid_az[0], a + 360.0, a)
        j = np.clip(np.searchsorted(ext_az, a, side="right") - 1, 0, n_az - 1)
        u = (a - ext_az[j]) / (ext_az[j + 1] - ext_az[j])
        j1 = np.where(j + 1 == n_az, 0, j + 1)
        out = []
        for g in (self.gain_rhcp_dbic, self.gain_lhcp_dbic):
            low = (1.0 - u) * g[i, j] + u * g[i, j1]
            high = (1.0 - u) * g[i + 1, j] + u * g[i + 1, j1]
            out.append((1.0 - t) * low + t * high)
        return out[0], out[1]

    def total_gain_dbi(self, azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> np.ndarray:
        """Total gain G_R + G_L in dB (the gain for a polarization-matched wave)."""
        r, l = self.gains_dbic(azimuth_deg, elevation_deg)
        return linear_to_db(db_to_linear(r) + db_to_linear(l))

    def axial_ratio_db(self, azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> np.ndarray:
        """Axial ratio in dB (>= 0; ``AXIAL_RATIO_CAP_DB`` where linear or at the floor)."""
        r, l = self.gains_dbic(azimuth_deg, elevation_deg)
        return axial_ratio_db_from_partial_gains(db_to_linear(r), db_to_linear(l))

    def sense(self, azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> np.ndarray:
        """+1 RHCP, -1 LHCP, 0 where the two partial gains are equal."""
        r, l = self.gains_dbic(azimuth_deg, elevation_deg)
        return sense_from_partial_gains(r, l)


def sphere_mean_gain(table: PatternTable, *, nodes_per_step: int = 4) -> float:
    """Total gain averaged over the sphere, (1/4 pi) integral of G dOmega, of the table as
    interpolated by :meth:`PatternTable.gains_dbic` (bilinear in dB).

    Gauss-Legendre nodes inside every grid step (elevation, and azimuth with wrap-around), with the
    cos(E) solid-angle weight; exact up to rounding for the interpolant, however coarse the grid.
    A lossless antenna gives 1 (energy conservation), a lossy one less; more than 1 is unphysical.
    """
    x, w = np.polynomial.legendre.leggauss(nodes_per_step)
    x, w = 0.5 * (x + 1.0), 0.5 * w  # on [0, 1]

    def nodes(grid: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        low, step = grid[:-1, None], np.diff(grid)[:, None]
        return (low + step * x).ravel(), (step * w).ravel()

    el, w_el = nodes(table.elevation_deg)
    w_el = np.radians(w_el) * np.cos(np.radians(el))
    if table.azimuth_deg is None:
        az, w_az = np.zeros(1), np.ones(1)
    else:
        az, w_az = nodes(np.append(table.azimuth_deg, table.azimuth_deg[0] + 360.0))
        w_az = w_az / 360.0
    rhcp, lhcp = table.gains_dbic(az[None, :], el[:, None])
    gain = db_to_linear(rhcp) + db_to_linear(lhcp)
    return float(w_el @ gain @ w_az / 2.0)

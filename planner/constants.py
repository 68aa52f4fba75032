"""Physical constants the program uses, in SI units, defined once.

The exact SI values and CODATA constants come from ``scipy.constants``; the Earth's radii are
the WGS84 equatorial radius (NIMA TR8350.2) and the mean radius ITU-R P.676 Annex 1 uses for
its ray path through the atmosphere's layers.
"""

from math import log10

from scipy.constants import Boltzmann, c, epsilon_0, mu_0

SPEED_OF_LIGHT_M_S = c
"""299 792 458 m/s, exact (SI definition of the metre)."""

BOLTZMANN_J_PER_K = Boltzmann
"""1.380649e-23 J/K, exact (SI definition of the kelvin)."""

BOLTZMANN_DBW_PER_K_HZ = 10.0 * log10(Boltzmann)
"""Boltzmann's constant in dBW/K/Hz: -228.60."""

VACUUM_PERMITTIVITY_F_PER_M = epsilon_0
VACUUM_PERMEABILITY_H_PER_M = mu_0

EARTH_EQUATORIAL_RADIUS_KM = 6378.137
"""WGS84 semi-major axis (NIMA TR8350.2)."""

EARTH_MEAN_RADIUS_KM = 6371.0
"""The Earth radius of the layered ray path in ITU-R P.676 Annex 1 (from memory)."""

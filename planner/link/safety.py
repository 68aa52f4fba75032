"""RF exposure estimate for a station transmitter, and the cautions that go with it.

Far-field power density S = EIRP / (4 pi R^2) (FCC OET Bulletin 65, eq. 3), against
the general-population maximum permissible exposure: 0.2 mW/cm^2 from 30 to 300 MHz,
f/1500 mW/cm^2 (f in MHz) from 300 to 1500 MHz, 1.0 mW/cm^2 from 1.5 to 100 GHz
(FCC 47 CFR 1.1310, from memory). Close to an antenna the far-field formula is not
valid; this is a planning estimate, never a compliance evaluation. The distance printed
for the public is rounded up to 0.1 m, so that the estimate there is within the limit.
"""

from __future__ import annotations

from dataclasses import dataclass
from math import ceil, pi

CAUTION = (
    "RF exposure: a far-field planning estimate, not a compliance evaluation. "
    "Follow your local rules (and your licence's conditions) for exposure assessment; "
    "keep people out of the near field of any transmitting antenna."
)

STATION_CAUTIONS = (
    "Masts and antennas: keep them well clear of power lines (at least the fall height plus a margin); "
    "a mast that touches a line can kill. Use guying and foundations rated for your wind zone.",
    "Lightning and grounding: bond the feedline shield and mast to the station ground at the entry point "
    "and fit surge protection as your local electrical code requires; disconnect feedlines in storms.",
)

DISTANCES_M = (0.5, 1.0, 2.0, 5.0, 10.0, 20.0)

# What general_public_limit_mw_cm2 implements, for the printed lines.
LIMIT_BASIS = "FCC 47 CFR 1.1310 general population/uncontrolled MPE"

# The recommended distance is given to this step, rounded up, and never less than one step.
DISTANCE_STEP_M = 0.1


def general_public_limit_mw_cm2(frequency_hz: float) -> float:
    """General-population MPE power density (mW/cm^2), FCC 47 CFR 1.1310 (from memory)."""
    f_mhz = frequency_hz / 1e6
    if f_mhz < 30.0:
        return 180.0 / f_mhz**2  # 1.34-30 MHz band
    if f_mhz <= 300.0:
        return 0.2
    if f_mhz <= 1500.0:
        return f_mhz / 1500.0
    return 1.0


def power_density_mw_cm2(eirp_w: float, distance_m: float) -> float:
    """Far-field power density (mW/cm^2) at a distance from an EIRP (FCC OET 65, eq. 3)."""
    watts_per_m2 = eirp_w / (4.0 * pi * distance_m**2)
    return watts_per_m2 * 0.1  # 1 W/m^2 = 0.1 mW/cm^2


def min_distance_m(eirp_w: float, frequency_hz: float) -> float:
    """Distance (m) at which the far-field estimate falls to the general-public limit, unrounded."""
    limit_w_m2 = general_public_limit_mw_cm2(frequency_hz) * 10.0
    return (eirp_w / (4.0 * pi * limit_w_m2)) ** 0.5


def recommended_distance_m(eirp_w: float, frequency_hz: float) -> float:
    """The distance to keep the public at: :func:`min_distance_m` rounded up to :data:`DISTANCE_STEP_M`.

    Rounded up, never to the nearest step, so that at the printed distance the estimate is within
    the limit; the step is counted in whole tenths so that float rounding cannot land one short.
    """
    limit = general_public_limit_mw_cm2(frequency_hz)
    steps = max(1, ceil(min_distance_m(eirp_w, frequency_hz) / DISTANCE_STEP_M - 1e-9))
    while True:
        distance_m = round(steps * DISTANCE_STEP_M, 1)
        if power_density_mw_cm2(eirp_w, distance_m) <= limit:
            return distance_m
        steps += 1


@dataclass
class ExposureRow:
    distance_m: float
    power_density_mw_cm2: float
    limit_mw_cm2: float

    @property
    def within_limit(self) -> bool:
        return self.power_density_mw_cm2 <= self.limit_mw_cm2


def exposure_table(eirp_w: float, frequency_hz: float, distances_m=DISTANCES_M) -> list[ExposureRow]:
    limit = general_public_limit_mw_cm2(frequency_hz)
    return [ExposureRow(d, power_density_mw_cm2(eirp_w, d), limit) for d in distances_m]

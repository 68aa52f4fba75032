"""The element-set model: :class:`ElementSet` and the ranges every element set obeys.

Whatever the file form, an element set becomes an ``ElementSet`` holding an ``sgp4``
``Satrec`` initialised for WGS72 in the improved operation mode ('i'), the same as
``Satrec.twoline2rv`` gives. Here too are the rules every reader applies alike: the years
an epoch (or any time a user gives) may fall in, the catalog-number bounds of the
five-column TLE field (Alpha-5) and of the OMM's plain integer, the plausible mean-motion
range, the printable-name rule for control characters (Python docs, ``str.isprintable``),
the units sgp4 stores the mean-motion derivatives in (as ``Satrec.twoline2rv`` converts
them) and the check that SGP4 accepted the elements at their epoch.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import UTC, datetime

from sgp4.api import SGP4_ERRORS, Satrec

from planner.errors import UserError

# A circular orbit at the Earth's surface goes round about 17 times a day; more
# than 20 rev/day cannot be an orbit (plausibility bound, common practice).
MAX_MEAN_MOTION_REV_PER_DAY = 20.0
MAX_CATALOG_NUMBER = 339999  # largest five-character (Alpha-5) catalog number, 'Z9999'

_MINUTES_PER_DAY = 1440.0
_REV_PER_DAY_PER_RAD_PER_MIN = _MINUTES_PER_DAY / (2.0 * math.pi)
# Units of the TLE / OMM mean-motion derivatives as sgp4 stores them (rad/min^2,
# rad/min^3), the same factors Satrec.twoline2rv applies.
_NDOT_UNITS = _REV_PER_DAY_PER_RAD_PER_MIN * _MINUTES_PER_DAY
_NDDOT_UNITS = _REV_PER_DAY_PER_RAD_PER_MIN * _MINUTES_PER_DAY * _MINUTES_PER_DAY
_SGP4_EPOCH0 = datetime(1949, 12, 31, tzinfo=UTC)  # sgp4init counts days from here


@dataclass(frozen=True)
class ElementSet:
    """One satellite's mean elements, ready for SGP4."""

    name: str  # OBJECT_NAME / 3LE title line; "" when a plain 2-line TLE has none
    norad_id: int
    epoch: datetime  # UTC, timezone-aware
    satrec: Satrec  # WGS72, opsmode 'i', same as Satrec.twoline2rv
    source: str  # "path:line" where the entry starts (for messages)

    @property
    def period_s(self) -> float:
        """Orbital period from the (Kozai) mean motion, in seconds."""
        return 2.0 * math.pi / self.satrec.no_kozai * 60.0

    @property
    def label(self) -> str:
        """``NAME (ID)`` for messages; ``unnamed (ID)`` without a name."""
        return f"{self.name or 'unnamed'} ({self.norad_id})"


def _utc(moment: datetime) -> datetime:
    return moment.replace(tzinfo=UTC) if moment.tzinfo is None else moment.astimezone(UTC)


def _check_range(where: str, name: str, value: float, low: float, high: float, *, high_open=False):
    inside = low <= value < high if high_open else low <= value <= high
    if not math.isfinite(value) or not inside:
        bracket = ")" if high_open else "]"
        raise UserError(f"{where}: {name} is {value:g}; allowed [{low:g}, {high:g}{bracket}")


def _check_mean_motion(where: str, name: str, rev_per_day: float) -> None:
    if not math.isfinite(rev_per_day) or rev_per_day <= 0.0:
        raise UserError(f"{where}: {name} is {rev_per_day:g} rev/day; it must be above 0")
    if rev_per_day >= MAX_MEAN_MOTION_REV_PER_DAY:
        raise UserError(
            f"{where}: {name} is {rev_per_day:g} rev/day; an Earth orbit makes fewer than "
            f"{MAX_MEAN_MOTION_REV_PER_DAY:g} revolutions a day"
        )


def _check_satrec(where: str, satrec: Satrec) -> None:
    if satrec.error != 0:
        reason = SGP4_ERRORS.get(satrec.error, f"error code {satrec.error}")
        raise UserError(f"{where}: SGP4 rejects these elements at their epoch: {reason}")


def _days_since_sgp4_epoch0(epoch: datetime) -> float:
    delta = epoch - _SGP4_EPOCH0
    return delta.days + (delta.seconds + delta.microseconds / 1e6) / 86400.0

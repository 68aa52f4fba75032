"""Ranges every input obeys: years, catalog numbers, printable names, radio frequencies.

The element-file readers, the pattern tables and the scenario file all check these bounds,
so each is stated here once with its reason. The module needs only the standard library:
checking a scenario's years or names must not pull in numpy, sgp4 or the antenna models.

* Years: every time a user gives (an element-set epoch, a window) lies in 1957 to 2100.
* Catalog numbers: an OMM's NORAD_CAT_ID is at most nine digits.
* Names: a printed name holds no character a terminal would not show as itself
  (``str.isprintable``, Python docs).
* Radio frequencies: 1 MHz to 50 GHz, where the noise and atmosphere models are used.
"""

from __future__ import annotations

from datetime import UTC, datetime

__all__ = [
    "EARLIEST_YEAR",
    "LATEST_YEAR",
    "SUPPORTED_YEARS",
    "MAX_OMM_CATALOG_NUMBER",
    "FREQUENCY_MIN_MHZ",
    "FREQUENCY_MAX_MHZ",
    "in_supported_years",
    "control_character",
]

# Years an element-set epoch, a window or any time a user gives must fall in (inclusive).
# 1957: the first artificial satellite was launched in October 1957, so no element set is
# older. 2100: far beyond any element set's useful life (SGP4 errors grow by kilometres a
# day from the epoch) and well inside what datetime and the time scales can represent.
EARLIEST_YEAR = 1957
LATEST_YEAR = 2100
SUPPORTED_YEARS = f"{EARLIEST_YEAR} to {LATEST_YEAR}"
_EARLIEST_UTC = datetime(EARLIEST_YEAR, 1, 1, tzinfo=UTC)
_AFTER_LATEST_UTC = datetime(LATEST_YEAR + 1, 1, 1, tzinfo=UTC)

# The OMM carries NORAD_CAT_ID as a plain integer, not in five columns. Catalog numbers of
# up to 9 digits were announced for when the five-character field runs out (from memory),
# so an OMM may hold up to 999999999; anything longer is a mistake, not a catalog number.
MAX_OMM_CATALOG_NUMBER = 999_999_999

# Radio frequencies a link may use and a pattern table may be designed for: the link
# frequencies a scenario accepts (downlink_mhz, uplink_mhz) and a table's frequency_mhz,
# 1 MHz to 50 GHz. Inside it the models of planner.link.noise (ITU-R P.372 lines from 0.3 MHz,
# extrapolated beyond their stated ranges with a warning) and planner.link.atmosphere
# (ITU-R P.676, stated for 1-1000 GHz, its low-frequency tail used below 1 GHz) are evaluated;
# a frequency outside it serves no link the planner computes, so it is a unit mistake.
FREQUENCY_MIN_MHZ = 1.0
FREQUENCY_MAX_MHZ = 50_000.0


def _utc(moment: datetime) -> datetime:
    """``moment`` in UTC; a naive datetime is taken as UTC already."""
    return moment.replace(tzinfo=UTC) if moment.tzinfo is None else moment.astimezone(UTC)


def in_supported_years(moment: datetime) -> bool:
    """True when ``moment`` (naive means UTC) falls in EARLIEST_YEAR..LATEST_YEAR, UTC.

    Times near year 1 or 9999 with an offset cannot even be converted to UTC (OverflowError);
    they are outside, not an error.
    """
    try:
        return _EARLIEST_UTC <= _utc(moment) < _AFTER_LATEST_UTC
    except (OverflowError, ValueError):
        return False


def control_character(text: str) -> tuple[int, str] | None:
    """(1-based position, escaped form like ``\\x1b``) of the first character a terminal would not
    show as itself, or None when every character prints.

    The one rule for every name the program prints (TLE titles, OMM OBJECT_NAME, scenario
    names): an ESC sequence, BEL, any other C0 or C1 control character or DEL could recolour
    or rewrite the user's terminal. ``str.isprintable`` is False for exactly these and for
    the other Unicode "Other" and "Separator" characters except the ASCII space (Python docs,
    str.isprintable), such as tabs, line separators and text-direction overrides.
    """
    for index, char in enumerate(text, start=1):
        if not char.isprintable():
            return index, char.encode("unicode_escape").decode("ascii")
    return None

"""Element sets: reading TLE, three-line TLE and CCSDS OMM (XML, CSV, JSON), with checks.

Every element set becomes an :class:`ElementSet` holding an ``sgp4`` ``Satrec``
initialised for WGS72 in the improved operation mode ('i'), the same as
``Satrec.twoline2rv`` gives. Nothing is propagated here: the pass engine does
that and reports SGP4 errors per satellite. Initialisation is checked, though
(``satrec.error`` must be 0).

Formats (detected from the content, the file extension only breaks ties):

* TLE: two 69-column lines per element set, optionally preceded by a title
  line (three-line form; a title may start with ``"0 "``). Columns as in the
  NORAD two-line element format (Spacetrack Report #3; CelesTrak's format
  documentation), checksum in column 69: the sum of the digits of columns 1-68,
  each '-' counting 1, modulo 10.
* OMM XML: CCSDS 502.0-B NDM/XML layout, ``ndm/omm/body/segment`` with
  ``metadata`` and ``data/meanElements`` + ``data/tleParameters``.
* OMM CSV: a header row of OMM keywords (OBJECT_NAME, EPOCH, MEAN_MOTION, ...),
  one element set a row.
* OMM JSON: a list of objects with the same keywords, or a single object.

Every problem raises :class:`planner.errors.UserError` with one line that starts
``path:line:`` and says what is allowed.
"""

from __future__ import annotations

import bisect
import csv
import io
import json
import math
import re
from dataclasses import dataclass
from datetime import datetime, timedelta, timezone
from decimal import Decimal
from pathlib import Path
from xml.parsers import expat

from sgp4.alpha5 import from_alpha5
from sgp4.api import SGP4_ERRORS, WGS72, Satrec

from planner.errors import UserError, warn
from planner.limits import ELEMENTS_FILE_LIMIT_BYTES, ReadWording, read_text_capped

__all__ = [
    "ElementSet",
    "read_elements",
    "select_element_set",
    "element_age_days",
    "check_element_age",
    "tle_checksum",
    "STALE_WARNING_DAYS",
    "STALE_REFUSAL_DAYS",
    "EARLIEST_YEAR",
    "LATEST_YEAR",
    "SUPPORTED_YEARS",
    "MAX_OMM_CATALOG_NUMBER",
    "in_supported_years",
    "control_character",
]

TLE_LINE_COLUMNS = 69
STALE_WARNING_DAYS = 7.0
STALE_REFUSAL_DAYS = 30.0
# A circular orbit at the Earth's surface goes round about 17 times a day; more
# than 20 rev/day cannot be an orbit (plausibility bound, common practice).
MAX_MEAN_MOTION_REV_PER_DAY = 20.0
MAX_CATALOG_NUMBER = 339999  # largest five-character (Alpha-5) catalog number, 'Z9999'
# The OMM carries NORAD_CAT_ID as a plain integer, not in five columns. Catalog numbers of
# up to 9 digits were announced for when the five-character field runs out (from memory),
# so an OMM may hold up to 999999999; anything longer is a mistake, not a catalog number.
MAX_OMM_CATALOG_NUMBER = 999_999_999

# Years an element-set epoch, a window or any time a user gives must fall in (inclusive).
# 1957: the first artificial satellite was launched in October 1957, so no element set is
# older. 2100: far beyond any element set's useful life (SGP4 errors grow by kilometres a
# day from the epoch) and well inside what datetime and the time scales can represent.
EARLIEST_YEAR = 1957
LATEST_YEAR = 2100
SUPPORTED_YEARS = f"{EARLIEST_YEAR} to {LATEST_YEAR}"
_EARLIEST_UTC = datetime(EARLIEST_YEAR, 1, 1, tzinfo=timezone.utc)
_AFTER_LATEST_UTC = datetime(LATEST_YEAR + 1, 1, 1, tzinfo=timezone.utc)

_MINUTES_PER_DAY = 1440.0
_REV_PER_DAY_PER_RAD_PER_MIN = _MINUTES_PER_DAY / (2.0 * math.pi)
# Units of the TLE / OMM mean-motion derivatives as sgp4 stores them (rad/min^2,
# rad/min^3), the same factors Satrec.twoline2rv applies.
_NDOT_UNITS = _REV_PER_DAY_PER_RAD_PER_MIN * _MINUTES_PER_DAY
_NDDOT_UNITS = _REV_PER_DAY_PER_RAD_PER_MIN * _MINUTES_PER_DAY * _MINUTES_PER_DAY
_SGP4_EPOCH0 = datetime(1949, 12, 31, tzinfo=timezone.utc)  # sgp4init counts days from here

_OMM_KEYWORDS = frozenset(
    {
        "CCSDS_OMM_VERS", "CREATION_DATE", "ORIGINATOR", "OBJECT_NAME", "OBJECT_ID",
        "CENTER_NAME", "REF_FRAME", "TIME_SYSTEM", "MEAN_ELEMENT_THEORY", "EPOCH",
        "MEAN_MOTION", "ECCENTRICITY", "INCLINATION", "RA_OF_ASC_NODE",
        "ARG_OF_PERICENTER", "MEAN_ANOMALY", "EPHEMERIS_TYPE", "CLASSIFICATION_TYPE",
        "NORAD_CAT_ID", "ELEMENT_SET_NO", "REV_AT_EPOCH", "BSTAR", "MEAN_MOTION_DOT",
        "MEAN_MOTION_DDOT", "SEMIMAJOR_AXIS", "PERIOD", "APOAPSIS", "PERIAPSIS",
    }
)
_OMM_REQUIRED = (
    "EPOCH", "MEAN_MOTION", "ECCENTRICITY", "INCLINATION", "RA_OF_ASC_NODE",
    "ARG_OF_PERICENTER", "MEAN_ANOMALY", "NORAD_CAT_ID", "BSTAR",
)


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


# --------------------------------------------------------------------------- reading


def read_elements(path: str | Path) -> list[ElementSet]:
    """Read every element set in a TLE, 3LE or OMM (XML/CSV/JSON) file."""
    label = str(path)
    text = read_text_capped(path, what="element file", limit_bytes=ELEMENTS_FILE_LIMIT_BYTES, wording=_READ_WORDING)
    if not text.strip():
        raise _empty(label)
    kind = _detect_format(text, Path(path).suffix.lower())
    reader = {"tle": _read_tle, "xml": _read_omm_xml, "csv": _read_omm_csv, "json": _read_omm_json}[kind]
    element_sets = reader(text, label)
    if not element_sets:
        raise _empty(label)
    return element_sets


_READ_WORDING = ReadWording(
    not_found="{path}: cannot read: No such file or directory",
    folder="{path}: cannot read: Is a directory",
    not_text="{path}: cannot read: not UTF-8 text (byte {offset}); expected TLE, 3LE or OMM (XML/CSV/JSON)",
    other="{path}: cannot read: {reason}",
)
"""The messages ``read_elements`` has always given for a file it cannot read."""


def _empty(label: str) -> UserError:
    return UserError(f"{label}: no element sets found; expected TLE, 3LE or OMM (XML/CSV/JSON)")


def _detect_format(text: str, suffix: str) -> str:
    head = text.lstrip()
    if head.startswith("<"):
        return "xml"
    if head[:1] in ("[", "{"):
        return "json"
    first_line = head.split("\n", 1)[0].strip()
    if "," in first_line:
        names = {cell.strip().strip('"').strip().upper() for cell in first_line.split(",")}
        if len(names & _OMM_KEYWORDS) >= 2:
            return "csv"
    if first_line[:2] in ("1 ", "2 ") or first_line[:2] == "0 ":
        return "tle"
    return {".xml": "xml", ".json": "json", ".csv": "csv"}.get(suffix, "tle")


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


def _clip(text: str, limit: int = 40) -> str:
    """A short, single-line rendering of user text for a message."""
    text = text if len(text) <= limit else text[: limit - 3] + "..."
    return repr(text)


# --------------------------------------------------------------------------- TLE


def tle_checksum(line: str) -> int:
    """Checksum of a TLE line: digits of columns 1-68 count their value, '-' counts 1, mod 10."""
    total = 0
    for char in line[:68]:
        if char.isdigit() and char.isascii():
            total += int(char)
        elif char == "-":
            total += 1
    return total % 10


def _looks_like_element_line(text: str) -> bool:
    """True for a line meant as TLE line 1 or 2 (even with a wrong column 1)."""
    if len(text) >= 2 and text[0] in "12" and text[1] == " ":
        return True
    # The decimal points of a TLE line in their fixed columns, whatever column 1 says.
    if len(text) >= 60 and text[1] == " ":
        if text[23] == "." or (text[11] == "." and text[20] == "."):
            return True
    return False


def _split_lines(text: str) -> list[tuple[int, str]]:
    """Non-blank lines with their 1-based numbers, trailing whitespace removed."""
    out = []
    for number, raw in enumerate(re.split(r"\r\n|\r|\n", text), start=1):
        stripped = raw.rstrip()
        if stripped:
            out.append((number, stripped))
    return out


def _read_tle(text: str, label: str) -> list[ElementSet]:
    lines = _split_lines(text)
    element_sets: list[ElementSet] = []
    i = 0
    while i < len(lines):
        start_number, start_text = lines[i]
        title = ""
        if not _looks_like_element_line(start_text):
            bad = control_character(start_text)
            if bad is not None:
                raise UserError(
                    f"{label}:{start_number}: title line holds the control character {bad[1]} at "
                    f"column {bad[0]}; a satellite name is printable text (no control characters)"
                )
            title = start_text.strip()
            if title.startswith("0 "):
                title = title[2:].strip()
            title = " ".join(title.split())
            i += 1
            if i >= len(lines):
                raise UserError(
                    f"{label}:{start_number}: title line {_clip(start_text)} has no TLE lines "
                    "after it (file truncated?); expected a title, then line 1 and line 2"
                )
            number, text1 = lines[i]
            if not _looks_like_element_line(text1):
                raise UserError(
                    f"{label}:{number}: expected TLE line 1 after the title on line {start_number}, "
                    f"found {_clip(text1)}; a title line is followed by lines starting '1 ' and '2 '"
                )
        number1, line1 = lines[i]
        has_next = i + 1 < len(lines) and _looks_like_element_line(lines[i + 1][1])
        if has_next and lines[i + 1][1][0] == "1" and line1[0] == "1":
            has_next = False  # two line 1s in a row: the first lacks its line 2
        if line1[0] != "1":
            if line1[0] == "2" and not has_next:
                raise UserError(
                    f"{label}:{number1}: TLE line 2 without a line 1 before it; "
                    "each element set is line 1 then line 2"
                )
            raise UserError(
                f"{label}:{number1}: column 1 is {line1[0]!r}; the first line of an element set "
                "must start with '1'"
            )
        if not has_next:
            raise UserError(
                f"{label}:{number1}: TLE line 1 without line 2 (file truncated?); "
                "each element set is line 1 then line 2"
            )
        number2, line2 = lines[i + 1]
        if line2[0] != "2":
            raise UserError(
                f"{label}:{number2}: column 1 is {line2[0]!r}; the second line of an element set "
                "must start with '2'"
            )
        source = f"{label}:{start_number if title else number1}"
        element_sets.append(_tle_element_set(title, label, number1, line1, number2, line2, source))
        i += 2
    return element_sets


# Fixed-column fields: (first column, last column, field name, pattern, what is allowed).
_SATNUM = (r" *[0-9]+|[A-HJ-NP-Z][0-9]{4}", "a 5-digit catalog number (or Alpha-5 like A0001)")
_DECIMAL = (r" *[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+) *", "a decimal number")
_EXP = (r"[ +-][0-9]{5}[+-][0-9]", "mantissa and exponent like ' 12345-4' (means 0.12345e-4)")
_LINE1_SEPARATORS = (2, 9, 18, 33, 44, 53, 62, 64)
_LINE2_SEPARATORS = (2, 8, 17, 26, 34, 43, 52)


def _column_field(label, number, line, first, last, name, spec) -> str:
    pattern, allowed = spec
    value = line[first - 1 : last]
    if not re.fullmatch(pattern, value):
        raise UserError(
            f"{label}:{number}: {name} (columns {first}-{last}) is {_clip(value)}; expected {allowed}"
        )
    return value


def _satnum(text: str) -> int:
    text = text.strip()
    return from_alpha5(text) if text[0].isalpha() else int(text)


def _implied_decimal(text: str) -> float:
    """' 12345-4' -> 0.12345e-4 (TLE implied-decimal field)."""
    sign = "-" if text[0] == "-" else ""
    return float(f"{sign}0.{text[1:6]}e{text[6]}{text[7]}")


def _check_line_shape(label: str, number: int, line: str, which: int) -> None:
    if len(line) != TLE_LINE_COLUMNS:
        raise UserError(
            f"{label}:{number}: TLE line {which} is {len(line)} columns long; a TLE line has "
            f"{TLE_LINE_COLUMNS} (file truncated or line wrapped?)"
        )
    if not line.isascii() or not line.isprintable():
        bad = next(c for c in line if not (c.isascii() and c.isprintable()))
        raise UserError(
            f"{label}:{number}: TLE line {which} contains {bad!r} at column {line.index(bad) + 1}; "
            "TLE lines are printable ASCII"
        )
    given = line[68]
    computed = tle_checksum(line)
    if not given.isdigit():
        raise UserError(
            f"{label}:{number}: checksum (column 69) is {given!r}, computed {computed}; "
            "it must be a digit"
        )
    if int(given) != computed:
        raise UserError(
            f"{label}:{number}: checksum is {given}, computed {computed} "
            "(digits of columns 1-68 count their value, '-' counts 1, sum mod 10)"
        )
    for column in _LINE1_SEPARATORS if which == 1 else _LINE2_SEPARATORS:
        if line[column - 1] != " ":
            raise UserError(
                f"{label}:{number}: column {column} of TLE line {which} is {line[column - 1]!r}; "
                "it must be a space (TLE fields sit in fixed columns; is the line shifted?)"
            )


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


def _tle_element_set(
    title: str, label: str, number1: int, line1: str, number2: int, line2: str, source: str
) -> ElementSet:
    _check_line_shape(label, number1, line1, 1)
    _check_line_shape(label, number2, line2, 2)
    where1, where2 = f"{label}:{number1}", f"{label}:{number2}"

    satnum1 = _column_field(label, number1, line1, 3, 7, "catalog number", _SATNUM)
    satnum2 = _column_field(label, number2, line2, 3, 7, "catalog number", _SATNUM)
    norad_id = _satnum(satnum1)
    if _satnum(satnum2) != norad_id:
        raise UserError(
            f"{where2}: catalog number {satnum2.strip()} does not match {satnum1.strip()} on line "
            f"{number1}; both lines of an element set carry the same number"
        )

    # Line 1
    _column_field(label, number1, line1, 8, 8, "classification", (r"[A-Z ]", "U, C, S or blank"))
    year_text = _column_field(label, number1, line1, 19, 20, "epoch year", (r"[0-9]{2}", "two digits"))
    day_text = _column_field(
        label, number1, line1, 21, 32, "epoch day of year",
        (r" *[0-9]{1,3}\.[0-9]* *", "day of year with fraction, like 003.50000000"),
    )
    ndot_text = _column_field(label, number1, line1, 34, 43, "mean motion first derivative", _DECIMAL)
    nddot_text = _column_field(label, number1, line1, 45, 52, "mean motion second derivative", _EXP)
    bstar_text = _column_field(label, number1, line1, 54, 61, "BSTAR drag term", _EXP)
    ephemeris_type = _column_field(
        label, number1, line1, 63, 63, "ephemeris type", (r"[0-9 ]", "a digit (0 for SGP4)")
    )
    _column_field(label, number1, line1, 65, 68, "element set number", (r" *[0-9]*", "up to 4 digits"))
    if ephemeris_type == "4":
        raise UserError(
            f"{where1}: ephemeris type is 4 (SGP4-XP elements); this planner propagates SGP4 "
            "elements (type 0)"
        )

    two_digit_year = int(year_text)
    # TLE convention: 57-99 are 1957-1999, 00-56 are 2000-2056, always inside EARLIEST_YEAR to
    # LATEST_YEAR; only the day of year can be out of range.
    year = 2000 + two_digit_year if two_digit_year < 57 else 1900 + two_digit_year
    day_of_year = Decimal(day_text.strip())
    days_in_year = (datetime(year + 1, 1, 1) - datetime(year, 1, 1)).days
    if not 1 <= day_of_year < days_in_year + 1:
        raise UserError(
            f"{where1}: epoch day of year is {day_text.strip()}; {year} allows 1 to "
            f"{days_in_year}.99999999"
        )
    epoch = datetime(year, 1, 1, tzinfo=timezone.utc) + timedelta(
        microseconds=int(((day_of_year - 1) * 86_400_000_000).to_integral_value())
    )

    # Line 2
    inclination_text = _column_field(label, number2, line2, 9, 16, "inclination", _DECIMAL)
    raan_text = _column_field(label, number2, line2, 18, 25, "right ascension of the ascending node", _DECIMAL)
    eccentricity_text = _column_field(
        label, number2, line2, 27, 33, "eccentricity",
        (r" *[0-9]+", "7 digits with an implied leading decimal point, like 0001234"),
    )
    argp_text = _column_field(label, number2, line2, 35, 42, "argument of perigee", _DECIMAL)
    anomaly_text = _column_field(label, number2, line2, 44, 51, "mean anomaly", _DECIMAL)
    mean_motion_text = _column_field(label, number2, line2, 53, 63, "mean motion", _DECIMAL)
    _column_field(label, number2, line2, 64, 68, "revolution number", (r" *[0-9]*", "up to 5 digits"))

    inclination_deg = float(inclination_text)
    raan_deg = float(raan_text)
    eccentricity = float("0." + eccentricity_text.replace(" ", "0"))
    argp_deg = float(argp_text)
    anomaly_deg = float(anomaly_text)
    mean_motion = float(mean_motion_text)
    _check_range(where2, "inclination (deg)", inclination_deg, 0.0, 180.0)
    _check_range(where2, "right ascension of the ascending node (deg)", raan_deg, 0.0, 360.0)
    _check_range(where2, "eccentricity", eccentricity, 0.0, 1.0, high_open=True)
    _check_range(where2, "argument of perigee (deg)", argp_deg, 0.0, 360.0)
    _check_range(where2, "mean anomaly (deg)", anomaly_deg, 0.0, 360.0)
    _check_mean_motion(where2, "mean motion", mean_motion)

    try:
        satrec = Satrec.twoline2rv(line1, line2, WGS72)
    except (ValueError, RuntimeError) as exc:  # not expected after the checks above
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise UserError(f"{where1}: SGP4 cannot read this element set: {first}") from None

    # The sgp4 reader must see exactly what was checked above.
    expected = {
        "inclination": (satrec.inclo, math.radians(inclination_deg)),
        "right ascension of the ascending node": (satrec.nodeo, math.radians(raan_deg)),
        "eccentricity": (satrec.ecco, eccentricity),
        "argument of perigee": (satrec.argpo, math.radians(argp_deg)),
        "mean anomaly": (satrec.mo, math.radians(anomaly_deg)),
        "mean motion": (satrec.no_kozai, mean_motion / _REV_PER_DAY_PER_RAD_PER_MIN),
        "BSTAR drag term": (satrec.bstar, _implied_decimal(bstar_text)),
        "mean motion first derivative": (satrec.ndot, float(ndot_text) / _NDOT_UNITS),
        "mean motion second derivative": (satrec.nddot, _implied_decimal(nddot_text) / _NDDOT_UNITS),
    }
    for name, (got, want) in expected.items():
        if not math.isclose(got, want, rel_tol=1e-9, abs_tol=1e-15):
            raise UserError(
                f"{where1}: {name} is not in the standard TLE layout (SGP4's reader takes it as "
                f"{got:g}, not {want:g}); rewrite the element set in standard columns"
            )
    sgp4_epoch_days = satrec.jdsatepoch + satrec.jdsatepochF - 2433281.5
    if abs(sgp4_epoch_days - _days_since_sgp4_epoch0(epoch)) > 1e-6:
        raise UserError(
            f"{where1}: epoch {year_text}{day_text.strip()} is not in the standard TLE layout; "
            "write it as YYDDD.DDDDDDDD in columns 19-32"
        )
    _check_satrec(where1, satrec)
    return ElementSet(name=title, norad_id=norad_id, epoch=epoch, satrec=satrec, source=source)


def _check_satrec(where: str, satrec: Satrec) -> None:
    if satrec.error != 0:
        reason = SGP4_ERRORS.get(satrec.error, f"error code {satrec.error}")
        raise UserError(f"{where}: SGP4 rejects these elements at their epoch: {reason}")


def _days_since_sgp4_epoch0(epoch: datetime) -> float:
    delta = epoch - _SGP4_EPOCH0
    return delta.days + (delta.seconds + delta.microseconds / 1e6) / 86400.0


# --------------------------------------------------------------------------- OMM (all forms)

_NUMBER_RE = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_INTEGER_RE = re.compile(r"[+-]?[0-9]+")
_EPOCH_RE = re.compile(
    r"(?P<year>[0-9]{4})-(?:(?P<month>[0-9]{2})-(?P<day>[0-9]{2})|(?P<doy>[0-9]{3}))"
    r"[T ](?P<hour>[0-9]{2}):(?P<minute>[0-9]{2}):(?P<second>[0-9]{2})(?P<fraction>\.[0-9]*)?"
    r"(?:Z|[+-]00:?00)?"
)
_OBJECT_ID_RE = re.compile(r"([0-9]{4})-([0-9]{3})([A-Z]{0,3})")


def _omm_field(where: str, fields: dict, key: str, default, pattern, expected: str) -> str | None:
    """The text of an OMM keyword, checked against ``pattern``; None means use ``default``."""
    value = fields.get(key)
    if value is None:
        if default is None:
            raise UserError(f"{where}: required keyword {key} is missing; an OMM for SGP4 needs "
                            + ", ".join(_OMM_REQUIRED))
        return None
    if not pattern.fullmatch(value):
        raise UserError(f"{where}: {key} is {_clip(value)}; expected {expected}")
    return value


def _omm_number(where: str, fields: dict, key: str, default: float | None = None) -> float:
    value = _omm_field(where, fields, key, default, _NUMBER_RE, "a number")
    if value is None:
        return default
    number = float(value)
    if not math.isfinite(number):
        raise UserError(f"{where}: {key} is {_clip(value)}; expected a finite number")
    return number


def _omm_integer(where: str, fields: dict, key: str, low: int, high: int, default: int | None = None) -> int:
    """A whole-number keyword within ``low``..``high``.

    The digits are counted before ``int()`` sees them: Python refuses to convert more than
    4300 digits (Python docs, "Integer string conversion length limitation"), and no bound
    here has more than a few digits anyway.
    """
    value = _omm_field(where, fields, key, default, _INTEGER_RE, "a whole number")
    if value is None:
        return default
    digits = value.lstrip("+-").lstrip("0")
    if len(digits) > len(str(high)):
        shown = value if len(value) <= 20 else f"{value[:12]}... ({len(digits)} digits)"
        raise UserError(f"{where}: {key} is {shown}; allowed {low} to {high}")
    number = int(value)
    if not low <= number <= high:
        raise UserError(f"{where}: {key} is {number}; allowed {low} to {high}")
    return number


def _omm_epoch(where: str, fields: dict) -> datetime:
    value = fields.get("EPOCH")
    if value is None:
        raise UserError(f"{where}: required keyword EPOCH is missing; an OMM for SGP4 needs "
                        + ", ".join(_OMM_REQUIRED))
    allowed = "expected ISO 8601 UTC like 2027-01-03T12:00:00.000000 (fraction and trailing Z optional)"
    match = _EPOCH_RE.fullmatch(value)
    if not match:
        raise UserError(f"{where}: EPOCH is {_clip(value)}; {allowed}")
    year = int(match["year"])
    if not EARLIEST_YEAR <= year <= LATEST_YEAR:
        raise UserError(f"{where}: EPOCH year is {year}; allowed {SUPPORTED_YEARS}")
    try:
        if match["doy"] is not None:
            day_of_year = int(match["doy"])
            if not 1 <= day_of_year <= 366:
                raise ValueError("day of year out of range")
            date = datetime(year, 1, 1, tzinfo=timezone.utc) + timedelta(days=day_of_year - 1)
            if date.year != year:
                raise ValueError("day of year out of range")
        else:
            date = datetime(year, int(match["month"]), int(match["day"]), tzinfo=timezone.utc)
        clock = date.replace(hour=int(match["hour"]), minute=int(match["minute"]),
                             second=int(match["second"]))
    except ValueError:
        raise UserError(f"{where}: EPOCH is {_clip(value)}, not a calendar date and time; {allowed}") from None
    fraction = match["fraction"] or "."
    microseconds = int((Decimal("0" + fraction) * 1_000_000).to_integral_value()) if fraction != "." else 0
    epoch = clock + timedelta(microseconds=microseconds)
    if not in_supported_years(epoch):  # 2100-12-31T23:59:59.9999999 rounds into 2101
        raise UserError(f"{where}: EPOCH is {_clip(value)}; allowed {SUPPORTED_YEARS}")
    return epoch


def _omm_element_set(fields: dict, where: str, source: str) -> ElementSet:
    """Validate one OMM's keywords (values are stripped text or None) and build the satrec."""
    theory = fields.get("MEAN_ELEMENT_THEORY")
    if theory is not None and theory.upper() != "SGP4":
        raise UserError(f"{where}: MEAN_ELEMENT_THEORY is {_clip(theory)}; this planner propagates SGP4 elements")
    for key, allowed in (("CENTER_NAME", "EARTH"), ("REF_FRAME", "TEME"), ("TIME_SYSTEM", "UTC")):
        value = fields.get(key)
        if value is not None and value.upper() != allowed:
            raise UserError(f"{where}: {key} is {_clip(value)}; SGP4 mean elements need {allowed}")

    epoch = _omm_epoch(where, fields)
    mean_motion = _omm_number(where, fields, "MEAN_MOTION")
    eccentricity = _omm_number(where, fields, "ECCENTRICITY")
    inclination_deg = _omm_number(where, fields, "INCLINATION")
    raan_deg = _omm_number(where, fields, "RA_OF_ASC_NODE")
    argp_deg = _omm_number(where, fields, "ARG_OF_PERICENTER")
    anomaly_deg = _omm_number(where, fields, "MEAN_ANOMALY")
    norad_id = _omm_integer(where, fields, "NORAD_CAT_ID", 1, MAX_OMM_CATALOG_NUMBER)
    bstar = _omm_number(where, fields, "BSTAR")
    ndot = _omm_number(where, fields, "MEAN_MOTION_DOT", 0.0)
    nddot = _omm_number(where, fields, "MEAN_MOTION_DDOT", 0.0)
    ephemeris_type = _omm_integer(where, fields, "EPHEMERIS_TYPE", 0, 9, 0)
    element_set_no = _omm_integer(where, fields, "ELEMENT_SET_NO", 0, 9999, 999)  # 4 TLE columns
    rev_at_epoch = _omm_integer(where, fields, "REV_AT_EPOCH", 0, 99999, 0)  # 5 TLE columns
    classification = fields.get("CLASSIFICATION_TYPE") or "U"

    _check_mean_motion(where, "MEAN_MOTION", mean_motion)
    _check_range(where, "ECCENTRICITY", eccentricity, 0.0, 1.0, high_open=True)
    _check_range(where, "INCLINATION (deg)", inclination_deg, 0.0, 180.0)
    _check_range(where, "RA_OF_ASC_NODE (deg)", raan_deg, 0.0, 360.0)
    _check_range(where, "ARG_OF_PERICENTER (deg)", argp_deg, 0.0, 360.0)
    _check_range(where, "MEAN_ANOMALY (deg)", anomaly_deg, 0.0, 360.0)
    if ephemeris_type == 4:
        raise UserError(f"{where}: EPHEMERIS_TYPE is 4 (SGP4-XP elements); this planner propagates "
                        "SGP4 elements (type 0)")
    if len(classification) != 1 or not ("A" <= classification.upper() <= "Z"):
        raise UserError(f"{where}: CLASSIFICATION_TYPE is {_clip(classification)}; expected one letter (U, C or S)")

    name = _omm_name(where, fields.get("OBJECT_NAME") or "")
    satrec = Satrec()
    # sgp4 takes catalog numbers up to the Alpha-5 limit only; the number plays no part in
    # the propagation, so a larger one lives on the ElementSet alone and SGP4 is given 0.
    satnum = norad_id if norad_id <= MAX_CATALOG_NUMBER else 0
    satrec.sgp4init(
        WGS72, "i", satnum, _days_since_sgp4_epoch0(epoch), bstar, ndot / _NDOT_UNITS, nddot / _NDDOT_UNITS,
        eccentricity, math.radians(argp_deg), math.radians(inclination_deg), math.radians(anomaly_deg),
        mean_motion / _REV_PER_DAY_PER_RAD_PER_MIN, math.radians(raan_deg),
    )
    satrec.classification = classification.upper()
    object_id = _OBJECT_ID_RE.fullmatch(fields.get("OBJECT_ID") or "")
    satrec.intldesg = f"{object_id[1][2:]}{object_id[2]}{object_id[3]}" if object_id else ""
    satrec.ephtype = ephemeris_type
    satrec.elnum = element_set_no
    satrec.revnum = rev_at_epoch
    _check_satrec(where, satrec)
    return ElementSet(name=name, norad_id=norad_id, epoch=epoch, satrec=satrec, source=source)


def _omm_name(where: str, text: str) -> str:
    """OBJECT_NAME with runs of spaces made one; control characters are refused, not folded."""
    bad = control_character(text)
    if bad is not None:
        raise UserError(f"{where}: OBJECT_NAME holds the control character {bad[1]} at character "
                        f"{bad[0]}; a satellite name is printable text (no control characters)")
    return " ".join(text.split())


def _clean_value(value: str | None) -> str | None:
    if value is None:
        return None
    value = value.strip()
    return value or None


# --------------------------------------------------------------------------- OMM CSV


def _read_omm_csv(text: str, label: str) -> list[ElementSet]:
    reader = csv.reader(io.StringIO(text, newline=""))
    header: list[str] | None = None
    header_line = 0
    element_sets: list[ElementSet] = []
    try:
        for row in reader:
            line = reader.line_num
            if not any(cell.strip() for cell in row):
                continue
            if header is None:
                header = [cell.strip().upper() for cell in row]
                header_line = line
                unknown_all = not set(header) & _OMM_KEYWORDS
                missing = [key for key in _OMM_REQUIRED if key not in header]
                if unknown_all or missing:
                    raise UserError(
                        f"{label}:{line}: OMM CSV header lacks "
                        + (", ".join(missing) if missing else "OMM keywords")
                        + "; the first row names OMM keywords such as " + ", ".join(_OMM_REQUIRED)
                    )
                duplicates = sorted({key for key in header if key and header.count(key) > 1})
                if duplicates:
                    raise UserError(f"{label}:{line}: OMM CSV header repeats {', '.join(duplicates)}; "
                                    "name each keyword once")
                continue
            if len(row) != len(header):
                raise UserError(
                    f"{label}:{line}: row has {len(row)} fields, the header on line {header_line} "
                    f"has {len(header)}; one value per header keyword"
                )
            fields = {key: _clean_value(cell) for key, cell in zip(header, row) if key}
            element_sets.append(_omm_element_set(fields, f"{label}:{line}", f"{label}:{line}"))
    except csv.Error as exc:
        raise UserError(f"{label}:{reader.line_num}: not valid CSV: {exc}") from None
    return element_sets


# --------------------------------------------------------------------------- OMM JSON


def _json_entry_lines(text: str) -> list[int]:
    """Line number where each top-level entry starts (a list) or [line] for one object."""
    newlines = [i for i, char in enumerate(text) if char == "\n"]

    def line_of(index: int) -> int:
        return bisect.bisect_right(newlines, index - 1) + 1

    decoder = json.JSONDecoder(parse_int=str)
    index = len(text) - len(text.lstrip())
    if text[index] != "[":
        return [line_of(index)]
    starts = []
    index += 1
    while True:
        while text[index].isspace():
            index += 1
        if text[index] == "]":
            return starts
        starts.append(line_of(index))
        _, index = decoder.raw_decode(text, index)
        while text[index].isspace():
            index += 1
        if text[index] == ",":
            index += 1


def _read_omm_json(text: str, label: str) -> list[ElementSet]:
    try:
        # NaN/Infinity and integers stay text: the keyword checks read them (and int() of
        # more than 4300 digits would raise; Python docs, integer string conversion limit).
        data = json.loads(text, parse_constant=lambda name: name, parse_int=str)
    except json.JSONDecodeError as exc:
        raise UserError(f"{label}:{exc.lineno}: not valid JSON: {exc.msg} (column {exc.colno})") from None
    except RecursionError:
        raise UserError(f"{label}: not valid OMM JSON: nested too deeply") from None
    if isinstance(data, dict):
        entries = [data]
    elif isinstance(data, list):
        entries = data
    else:
        raise UserError(f"{label}:1: OMM JSON must be a list of objects or one object, "
                        f"found a {type(data).__name__}")
    try:
        lines = _json_entry_lines(text)
    except (ValueError, IndexError, RecursionError):  # pragma: no cover - json.loads accepted it
        lines = []
    if len(lines) != len(entries):
        lines = [1] * len(entries)
    element_sets = []
    for index, (entry, line) in enumerate(zip(entries, lines), start=1):
        where = f"{label}:{line}: entry {index}"
        if not isinstance(entry, dict):
            raise UserError(f"{where}: expected an object of OMM keywords, found a {type(entry).__name__}")
        fields: dict[str, str | None] = {}
        for key, value in entry.items():
            key = str(key).strip().upper()
            if value is None:
                fields[key] = None
            elif isinstance(value, bool) or isinstance(value, (list, dict)):
                raise UserError(f"{where}: {key} is {_clip(json.dumps(value))}; expected a number or text")
            elif isinstance(value, float):
                fields[key] = repr(value)
            else:
                fields[key] = _clean_value(str(value))
        element_sets.append(_omm_element_set(fields, where, f"{label}:{line}"))
    return element_sets


# --------------------------------------------------------------------------- OMM XML


class _Node:
    __slots__ = ("tag", "line", "children", "text")

    def __init__(self, tag: str, line: int):
        self.tag = tag
        self.line = line
        self.children: list[_Node] = []
        self.text = ""

    def child(self, tag: str) -> _Node | None:
        return next((c for c in self.children if c.tag == tag), None)

    def iter(self, tag: str):
        stack = [self]
        while stack:
            node = stack.pop()
            if node.tag == tag:
                yield node
            stack.extend(reversed(node.children))


def _local_name(name: str) -> str:
    return name.rsplit("}", 1)[-1].rsplit(":", 1)[-1]


def _parse_xml(text: str, label: str) -> _Node:
    parser = expat.ParserCreate(encoding="UTF-8")  # the text is decoded already, whatever it declares
    stack: list[_Node] = []
    roots: list[_Node] = []

    def start(name, _attributes):
        node = _Node(_local_name(name), parser.CurrentLineNumber)
        (stack[-1].children if stack else roots).append(node)
        stack.append(node)

    def end(_name):
        stack.pop()

    def characters(data):
        if stack:
            stack[-1].text += data

    def no_doctype(*_args):
        raise UserError(f"{label}:{parser.CurrentLineNumber}: OMM XML must not carry a DOCTYPE "
                        "declaration; remove it")

    parser.StartElementHandler = start
    parser.EndElementHandler = end
    parser.CharacterDataHandler = characters
    parser.StartDoctypeDeclHandler = no_doctype
    try:
        parser.Parse(text.encode("utf-8"), True)
    except expat.ExpatError as exc:
        raise UserError(
            f"{label}:{exc.lineno}: not well-formed XML: {expat.ErrorString(exc.code)} "
            f"(column {exc.offset + 1})"
        ) from None
    except RecursionError:  # pragma: no cover - expat builds no Python recursion
        raise UserError(f"{label}: not valid OMM XML: nested too deeply") from None
    return roots[0]


def _read_omm_xml(text: str, label: str) -> list[ElementSet]:
    root = _parse_xml(text, label)
    segments = list(root.iter("segment"))
    if not segments:
        raise UserError(
            f"{label}:{root.line}: no OMM segment found; expected CCSDS NDM/XML "
            "ndm/omm/body/segment with metadata and data"
        )
    element_sets = []
    for number, segment in enumerate(segments, start=1):
        where = f"{label}:{segment.line}: segment {number}"
        metadata = segment.child("metadata")
        data = segment.child("data")
        if metadata is None or data is None:
            missing = "metadata" if metadata is None else "data"
            raise UserError(f"{where}: <segment> has no <{missing}>; an OMM segment holds "
                            "<metadata> and <data> (with <meanElements> and <tleParameters>)")
        mean_elements = data.child("meanElements")
        if mean_elements is None:
            raise UserError(f"{label}:{data.line}: segment {number}: <data> has no <meanElements>; "
                            "it holds EPOCH, MEAN_MOTION, ECCENTRICITY, ...")
        fields: dict[str, str | None] = {}
        lines: dict[str, int] = {}
        for block in (metadata, mean_elements, data.child("tleParameters")):
            if block is None:
                continue
            for item in block.children:
                if item.tag.upper() == "COMMENT":
                    continue
                fields[item.tag.upper()] = _clean_value(item.text)
                lines[item.tag.upper()] = item.line
        try:
            element_sets.append(_omm_element_set(fields, where, f"{label}:{segment.line}"))
        except UserError as exc:
            # Point at the keyword's own line when the message names a keyword we saw.
            message = str(exc)
            for key, line in lines.items():
                if message.startswith(f"{where}: {key} "):
                    message = f"{label}:{line}: segment {number}: " + message[len(where) + 2 :]
                    break
            raise UserError(message) from None
    return element_sets


# --------------------------------------------------------------------------- selection and age


def _normalize_name(name: str) -> str:
    return " ".join(name.split()).casefold()


def _available(element_sets: list[ElementSet], limit: int = 5) -> str:
    labels = list(dict.fromkeys(es.label for es in element_sets))
    shown = ", ".join(labels[:limit])
    if len(labels) > limit:
        shown += f" and {len(labels) - limit} more"
    return shown


def select_element_set(
    element_sets: list[ElementSet],
    *,
    norad_id: int | None = None,
    name: str | None = None,
    source: str = "",
) -> ElementSet:
    """Pick one satellite's element set: by NORAD id, else by name (case and spacing ignored).

    When a file holds several element sets of the same satellite, the one with the latest
    epoch is taken. ``source`` names the file in messages (default: from the element sets).
    """
    if not source:
        source = element_sets[0].source.rsplit(":", 1)[0] if element_sets else "elements"
    if norad_id is None and (name is None or not name.strip()):
        raise UserError(f"{source}: no satellite chosen; give norad_id or name "
                        f"(available: {_available(element_sets) or 'none'})")
    if not element_sets:
        raise UserError(f"{source}: no element sets to choose from; expected TLE, 3LE or OMM (XML/CSV/JSON)")
    if norad_id is not None:
        matches = [es for es in element_sets if es.norad_id == norad_id]
        wanted = f"NORAD id {norad_id}"
    else:
        key = _normalize_name(name)
        matches = [es for es in element_sets if _normalize_name(es.name) == key]
        wanted = f"name {name.strip()!r}"
    if not matches:
        raise UserError(f"{source}: no element set for {wanted}; available: {_available(element_sets)}")
    ids = sorted({es.norad_id for es in matches})
    if len(ids) > 1:
        raise UserError(
            f"{source}: {wanted} is ambiguous, it matches {_available(matches)}; choose by norad_id"
        )
    return max(matches, key=lambda es: es.epoch)


def _utc(moment: datetime) -> datetime:
    return moment.replace(tzinfo=timezone.utc) if moment.tzinfo is None else moment.astimezone(timezone.utc)


def element_age_days(element_set: ElementSet, window_start: datetime, window_end: datetime) -> float:
    """Days from the element epoch to the window; 0 when the epoch lies inside it.

    Naive datetimes are taken as UTC.
    """
    start, end = _utc(window_start), _utc(window_end)
    if end < start:
        start, end = end, start
    epoch = element_set.epoch
    if epoch < start:
        return (start - epoch).total_seconds() / 86400.0
    if epoch > end:
        return (epoch - end).total_seconds() / 86400.0
    return 0.0


def check_element_age(
    element_sets: list[ElementSet],
    window_start: datetime,
    window_end: datetime,
    *,
    allow_stale: bool = False,
) -> None:
    """Warn beyond 7 days between epoch and window; refuse beyond 30 unless ``allow_stale``.

    SGP4 predictions degrade with distance from the epoch (along-track errors of the order
    of kilometres a day for LEO; common practice, no published source), hence the limits.
    """
    for element_set in element_sets:
        age = element_age_days(element_set, window_start, window_end)
        head = f"{element_set.source}: elements for {element_set.label} are {age:.1f} days from the window"
        if age > STALE_REFUSAL_DAYS and not allow_stale:
            raise UserError(
                f"{head}; refused beyond {STALE_REFUSAL_DAYS:g} days (use --allow-stale to go on)"
            )
        if age > STALE_REFUSAL_DAYS:
            warn(f"{head}; beyond {STALE_REFUSAL_DAYS:g} days, going on because of --allow-stale; "
                 "pass times may be far off, fetch newer elements")
        elif age > STALE_WARNING_DAYS:
            warn(f"{head}; beyond {STALE_WARNING_DAYS:g} days pass times drift, fetch newer elements")

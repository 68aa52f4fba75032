"""TLE and three-line TLE: two 69-column lines per element set, optionally after a title line.

Columns as in the NORAD two-line element format (Spacetrack Report #3; CelesTrak's format
documentation), checksum in column 69: the sum of the digits of columns 1-68, each '-'
counting 1, modulo 10. Every field is checked in its fixed columns before sgp4's own
reader (``Satrec.twoline2rv``) sees the lines, and what that reader took is compared with
what was checked. A title may start with ``"0 "``.
"""

from __future__ import annotations

import math
import re
from datetime import UTC, datetime, timedelta
from decimal import Decimal

from sgp4.alpha5 import from_alpha5
from sgp4.api import WGS72, Satrec

from planner.bounds import control_character
from planner.elements.model import (
    _NDDOT_UNITS,
    _NDOT_UNITS,
    _REV_PER_DAY_PER_RAD_PER_MIN,
    ElementSet,
    _check_mean_motion,
    _check_range,
    _check_satrec,
    _days_since_sgp4_epoch0,
)
from planner.errors import UserError
from planner.errors import quoted as _clip

TLE_LINE_COLUMNS = 69


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
                raise UserError(f"{label}:{number1}: TLE line 2 without a line 1 before it; each element set is line 1 then line 2")
            raise UserError(f"{label}:{number1}: column 1 is {line1[0]!r}; the first line of an element set must start with '1'")
        if not has_next:
            raise UserError(
                f"{label}:{number1}: TLE line 1 without line 2 (file truncated?); each element set is line 1 then line 2"
            )
        number2, line2 = lines[i + 1]
        if line2[0] != "2":
            raise UserError(f"{label}:{number2}: column 1 is {line2[0]!r}; the second line of an element set must start with '2'")
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
        raise UserError(f"{label}:{number}: {name} (columns {first}-{last}) is {_clip(value)}; expected {allowed}")
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
            f"{label}:{number}: TLE line {which} contains {bad!r} at column {line.index(bad) + 1}; TLE lines are printable ASCII"
        )
    given = line[68]
    computed = tle_checksum(line)
    if not given.isdigit():
        raise UserError(f"{label}:{number}: checksum (column 69) is {given!r}, computed {computed}; it must be a digit")
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


def _tle_element_set(title: str, label: str, number1: int, line1: str, number2: int, line2: str, source: str) -> ElementSet:
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
        label,
        number1,
        line1,
        21,
        32,
        "epoch day of year",
        (r" *[0-9]{1,3}\.[0-9]* *", "day of year with fraction, like 003.50000000"),
    )
    ndot_text = _column_field(label, number1, line1, 34, 43, "mean motion first derivative", _DECIMAL)
    nddot_text = _column_field(label, number1, line1, 45, 52, "mean motion second derivative", _EXP)
    bstar_text = _column_field(label, number1, line1, 54, 61, "BSTAR drag term", _EXP)
    ephemeris_type = _column_field(label, number1, line1, 63, 63, "ephemeris type", (r"[0-9 ]", "a digit (0 for SGP4)"))
    _column_field(label, number1, line1, 65, 68, "element set number", (r" *[0-9]*", "up to 4 digits"))
    if ephemeris_type == "4":
        raise UserError(f"{where1}: ephemeris type is 4 (SGP4-XP elements); this planner propagates SGP4 elements (type 0)")

    two_digit_year = int(year_text)
    # TLE convention: 57-99 are 1957-1999, 00-56 are 2000-2056, always inside EARLIEST_YEAR to
    # LATEST_YEAR; only the day of year can be out of range.
    year = 2000 + two_digit_year if two_digit_year < 57 else 1900 + two_digit_year
    day_of_year = Decimal(day_text.strip())
    days_in_year = (datetime(year + 1, 1, 1) - datetime(year, 1, 1)).days
    if not 1 <= day_of_year < days_in_year + 1:
        raise UserError(f"{where1}: epoch day of year is {day_text.strip()}; {year} allows 1 to {days_in_year}.99999999")
    epoch = datetime(year, 1, 1, tzinfo=UTC) + timedelta(microseconds=int(((day_of_year - 1) * 86_400_000_000).to_integral_value()))

    # Line 2
    inclination_text = _column_field(label, number2, line2, 9, 16, "inclination", _DECIMAL)
    raan_text = _column_field(label, number2, line2, 18, 25, "right ascension of the ascending node", _DECIMAL)
    eccentricity_text = _column_field(
        label,
        number2,
        line2,
        27,
        33,
        "eccentricity",
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

"""CCSDS OMM keywords (CCSDS 502.0-B) to an :class:`ElementSet`, whatever the file form.

The XML, CSV and JSON readers each gather one OMM's keywords as stripped text (or None)
and hand them here: the keywords are checked (number syntax, integer bounds, an ISO 8601
UTC epoch, SGP4 mean elements in TEME about the Earth) and the satrec is built with
``sgp4init`` in the units ``Satrec.twoline2rv`` uses.
"""

from __future__ import annotations

import math
import re
from datetime import UTC, datetime, timedelta
from decimal import Decimal

from sgp4.api import WGS72, Satrec

from planner.bounds import (
    EARLIEST_YEAR,
    LATEST_YEAR,
    MAX_OMM_CATALOG_NUMBER,
    SUPPORTED_YEARS,
    control_character,
    in_supported_years,
)
from planner.elements.model import (
    _NDDOT_UNITS,
    _NDOT_UNITS,
    _REV_PER_DAY_PER_RAD_PER_MIN,
    MAX_CATALOG_NUMBER,
    ElementSet,
    _check_mean_motion,
    _check_range,
    _check_satrec,
    _days_since_sgp4_epoch0,
)
from planner.errors import UserError
from planner.errors import quoted as _clip

_OMM_KEYWORDS = frozenset(
    {
        "CCSDS_OMM_VERS",
        "CREATION_DATE",
        "ORIGINATOR",
        "OBJECT_NAME",
        "OBJECT_ID",
        "CENTER_NAME",
        "REF_FRAME",
        "TIME_SYSTEM",
        "MEAN_ELEMENT_THEORY",
        "EPOCH",
        "MEAN_MOTION",
        "ECCENTRICITY",
        "INCLINATION",
        "RA_OF_ASC_NODE",
        "ARG_OF_PERICENTER",
        "MEAN_ANOMALY",
        "EPHEMERIS_TYPE",
        "CLASSIFICATION_TYPE",
        "NORAD_CAT_ID",
        "ELEMENT_SET_NO",
        "REV_AT_EPOCH",
        "BSTAR",
        "MEAN_MOTION_DOT",
        "MEAN_MOTION_DDOT",
        "SEMIMAJOR_AXIS",
        "PERIOD",
        "APOAPSIS",
        "PERIAPSIS",
    }
)
_OMM_REQUIRED = (
    "EPOCH",
    "MEAN_MOTION",
    "ECCENTRICITY",
    "INCLINATION",
    "RA_OF_ASC_NODE",
    "ARG_OF_PERICENTER",
    "MEAN_ANOMALY",
    "NORAD_CAT_ID",
    "BSTAR",
)


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
            raise UserError(f"{where}: required keyword {key} is missing; an OMM for SGP4 needs " + ", ".join(_OMM_REQUIRED))
        return None
    if not pattern.fullmatch(value):
        raise UserError(f"{where}: {key} is {_clip(value)}; expected {expected}")
    return value


def _omm_number(where: str, fields: dict, key: str, default: float | None = None) -> float:
    value = _omm_field(where, fields, key, default, _NUMBER_RE, "a number")
    if value is None:
        assert default is not None  # _omm_field refuses a missing keyword that has no default
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
        assert default is not None  # _omm_field refuses a missing keyword that has no default
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
        raise UserError(f"{where}: required keyword EPOCH is missing; an OMM for SGP4 needs " + ", ".join(_OMM_REQUIRED))
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
            date = datetime(year, 1, 1, tzinfo=UTC) + timedelta(days=day_of_year - 1)
            if date.year != year:
                raise ValueError("day of year out of range")
        else:
            date = datetime(year, int(match["month"]), int(match["day"]), tzinfo=UTC)
        clock = date.replace(hour=int(match["hour"]), minute=int(match["minute"]), second=int(match["second"]))
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
        raise UserError(f"{where}: EPHEMERIS_TYPE is 4 (SGP4-XP elements); this planner propagates SGP4 elements (type 0)")
    if len(classification) != 1 or not ("A" <= classification.upper() <= "Z"):
        raise UserError(f"{where}: CLASSIFICATION_TYPE is {_clip(classification)}; expected one letter (U, C or S)")

    name = _omm_name(where, fields.get("OBJECT_NAME") or "")
    satrec = Satrec()
    # sgp4 takes catalog numbers up to the Alpha-5 limit only; the number plays no part in
    # the propagation, so a larger one lives on the ElementSet alone and SGP4 is given 0.
    satnum = norad_id if norad_id <= MAX_CATALOG_NUMBER else 0
    satrec.sgp4init(
        WGS72,
        "i",
        satnum,
        _days_since_sgp4_epoch0(epoch),
        bstar,
        ndot / _NDOT_UNITS,
        nddot / _NDDOT_UNITS,
        eccentricity,
        math.radians(argp_deg),
        math.radians(inclination_deg),
        math.radians(anomaly_deg),
        mean_motion / _REV_PER_DAY_PER_RAD_PER_MIN,
        math.radians(raan_deg),
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
        raise UserError(
            f"{where}: OBJECT_NAME holds the control character {bad[1]} at character "
            f"{bad[0]}; a satellite name is printable text (no control characters)"
        )
    return " ".join(text.split())


def _clean_value(value: str | None) -> str | None:
    if value is None:
        return None
    value = value.strip()
    return value or None

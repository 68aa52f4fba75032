"""The ranges every input obeys (planner.bounds).

External references used here:
* The first artificial satellite was launched on 4 October 1957 (NASA NSSDCA master catalog,
  entry 1957-001B; from memory): the earliest allowed year holds that day.
* Python docs, str.isprintable and the "unicode_escape" codec: which characters print, and
  how a non-printing one is written (\\x1b, \\u2028).
* ECMA-48 / ISO 6429: C0 controls 0x00-0x1f, DEL 0x7f, C1 controls 0x80-0x9f.
* ITU-R P.676 (gaseous attenuation) is stated for 1-1000 GHz; ITU-R P.372 (radio noise) gives
  man-made noise lines from 0.3 MHz. The frequency range lies where those models are used.
"""

from __future__ import annotations

import os
import subprocess
import sys
from datetime import UTC, datetime, timedelta, timezone
from pathlib import Path

import pytest

from planner.bounds import (
    EARLIEST_YEAR,
    FREQUENCY_MAX_MHZ,
    FREQUENCY_MIN_MHZ,
    LATEST_YEAR,
    MAX_OMM_CATALOG_NUMBER,
    SUPPORTED_YEARS,
    control_character,
    in_supported_years,
)

REPO = Path(__file__).resolve().parents[1]


def test_years_hold_the_first_launch_and_end_with_2100():
    # 1957-10-04: first artificial satellite (NSSDCA 1957-001B, from memory).
    assert in_supported_years(datetime(1957, 10, 4, 19, 28, tzinfo=UTC))
    assert not in_supported_years(datetime(1956, 12, 31, 23, 59, 59, tzinfo=UTC))
    assert in_supported_years(datetime(2100, 12, 31, 23, 59, 59, tzinfo=UTC))
    assert not in_supported_years(datetime(2101, 1, 1, tzinfo=UTC))
    assert SUPPORTED_YEARS == f"{EARLIEST_YEAR} to {LATEST_YEAR}" == "1957 to 2100"


def test_years_are_judged_in_utc():
    # 2101-01-01T00:30+01:00 is 2100-12-31T23:30Z (ISO 8601 offsets; Python docs, astimezone).
    plus_one = timezone(timedelta(hours=1))
    assert in_supported_years(datetime(2101, 1, 1, 0, 30, tzinfo=plus_one))
    # 1957-01-01T00:30+01:00 is 1956-12-31T23:30Z: outside.
    assert not in_supported_years(datetime(1957, 1, 1, 0, 30, tzinfo=plus_one))
    # Naive times are taken as UTC.
    assert in_supported_years(datetime(1957, 1, 1))
    assert not in_supported_years(datetime(2101, 1, 1))


def test_times_that_cannot_be_converted_to_utc_are_outside_not_an_error():
    # datetime.min with a positive offset lies before year 1 in UTC: astimezone raises
    # OverflowError (Python docs, datetime.astimezone).
    with pytest.raises(OverflowError):
        datetime.min.replace(tzinfo=timezone(timedelta(hours=5))).astimezone(UTC)
    assert not in_supported_years(datetime.min.replace(tzinfo=timezone(timedelta(hours=5))))
    assert not in_supported_years(datetime.max.replace(tzinfo=timezone(timedelta(hours=-5))))


def test_omm_catalog_number_bound_is_nine_digits():
    # Nine-digit catalog numbers (from memory): the largest is 10**9 - 1.
    assert MAX_OMM_CATALOG_NUMBER == 10**9 - 1
    # The Alpha-5 TLE field tops out at 'Z9999' = 33 * 10000 + 9999 = 339999 (Alpha-5 letters
    # A-Z without I and O stand for 10-33; common practice, no published source), inside it.
    assert 339_999 < MAX_OMM_CATALOG_NUMBER


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # ECMA-48 C0 (ESC, BEL, unit separator, TAB), DEL, C1 (CSI, NEL); escapes as Python's
        # unicode_escape writes them (Python docs).
        ("TARN\x1b[2J", (5, "\\x1b")),
        ("\x07", (1, "\\x07")),
        ("A\x1fB", (2, "\\x1f")),
        ("A\tB", (2, "\\t")),
        ("AB\x7f", (3, "\\x7f")),
        ("\x9b2J", (1, "\\x9b")),
        ("X\x85", (2, "\\x85")),
        # Unicode line separator (Zl) and right-to-left override (Cf): not printable (Python docs).
        ("one\u2028two", (4, "\\u2028")),
        ("ab\u202ecd", (3, "\\u202e")),
    ],
)
def test_control_character_finds_the_first_non_printing_character(text, expected):
    assert control_character(text) == expected


def test_printable_names_pass():
    # The ASCII space and letters outside ASCII print (Python docs, str.isprintable).
    assert control_character("Cobbleford Fell é ÅØ 北") is None
    assert control_character("") is None


def test_frequency_range_lies_where_the_link_models_are_used():
    # 1 MHz to 50 GHz: no lower than P.372's 0.3 MHz, no higher than P.676's 1000 GHz.
    assert FREQUENCY_MIN_MHZ == 1.0 and FREQUENCY_MAX_MHZ == 50_000.0
    assert 0.3 <= FREQUENCY_MIN_MHZ < FREQUENCY_MAX_MHZ <= 1_000_000.0


def test_bounds_need_only_the_standard_library():
    code = (
        "import sys, planner.bounds; "
        "print(sorted(m for m in sys.modules if m.split('.')[0] in ('numpy', 'sgp4', 'pydantic') "
        "or m.startswith('planner.')))"
    )
    done = subprocess.run(
        [sys.executable, "-c", code],
        capture_output=True,
        text=True,
        check=True,
        cwd=REPO,
        env={**os.environ, "PYTHONPATH": str(REPO)},
    )
    assert done.stdout.strip() == "['planner.bounds']"

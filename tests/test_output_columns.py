"""The column writer of pass tables against the row writer it replaces, and against the formats.

References: RFC 4180 (CSV fields, quoting), OWASP "CSV Injection" (cells a spreadsheet runs
as formulas), the Python docs of ``csv`` and ``json`` (reading the text back), ISO 8601.
"""

from __future__ import annotations

import csv
import io
import json
from datetime import UTC, datetime, timedelta

import numpy as np
import pytest

from planner.cli.common import adhoc_study
from planner.output.columns import iso_utc_strings, pass_table, table_csv, table_json
from planner.output.export import PASS_COLUMNS, iso_utc, pass_row, to_csv, to_json
from planner.passes import Pass
from planner.scenario import load_scenario
from planner.study import Study
from tests.conftest import DEMO, ROOT


def _row_writers(passes, columns=PASS_COLUMNS):
    """CSV and JSON as the row writer makes them (one dict per pass)."""
    rows = [pass_row(p) for p in passes]
    return to_csv(rows, columns), to_json([{name: row[name] for name in columns} for row in rows])


def _column_writers(passes, columns=PASS_COLUMNS):
    table = pass_table(passes)
    return table_csv(table, columns), table_json(table, columns)


def _invented_pass(satellite: str, aos_utc: datetime, value: float) -> Pass:
    return Pass(
        satellite, 99990, aos_utc, aos_utc + timedelta(seconds=300.25), aos_utc + timedelta(seconds=600.5),
        value, value, 2.675, 359.995, 1234.55, False, False, None,
    )  # fmt: skip


def test_demo_scenario_gives_the_same_bytes():
    study = Study.from_scenario(load_scenario(DEMO))
    passes = study.passes(tracks=False)
    assert len(passes) > 50
    assert _column_writers(passes) == _row_writers(passes)


def test_elements_quick_look_gives_the_same_bytes():
    # The example catalog over a day from an invented site, as `planner passes --elements` builds it.
    study = adhoc_study(
        ROOT / "sample_tle" / "example_catalog.tle", 47.3, 8.5, 400.0, "2027-01-04T00:00:00Z", 1.0, 5.0, 10.0, None, True
    )
    passes = study.passes(tracks=False)
    assert len(passes) > 1000
    assert _column_writers(passes) == _row_writers(passes)


def test_awkward_values_give_the_same_bytes():
    # Formula-like and quoted names (OWASP CSV Injection; RFC 4180 quoting), a non-ASCII name
    # (json escapes it by default, Python docs), NaN (null in JSON), times on the half second
    # (rounded up, as iso_utc rounds) and decimals on the rounding edge (Python round, exact).
    start = datetime(2027, 1, 4, 11, 59, 59, 500000, tzinfo=UTC)
    names = ["=SUM(A1)", "-12", "+CMD", "@x", 'A,"B"', "Ørsund-1", "PLAIN"]
    values = [float("nan"), -0.0, 12.345, 0.125, 89.995, 1e-7, 45.0]
    passes = [_invented_pass(n, start + timedelta(hours=k), v) for k, (n, v) in enumerate(zip(names, values))]
    csv_text, json_text = _column_writers(passes)
    assert (csv_text, json_text) == _row_writers(passes)
    cells = list(csv.reader(io.StringIO(csv_text)))  # Python docs: csv.reader undoes RFC 4180 quoting
    assert [row[0] for row in cells[1:]] == ["'=SUM(A1)", "-12", "'+CMD", "'@x", 'A,"B"', "Ørsund-1", "PLAIN"]
    assert cells[1][2] == "2027-01-04T12:00:00Z"
    read_back = json.loads(json_text)
    assert read_back[0]["max_elevation_deg"] is None and read_back[5]["satellite"] == "Ørsund-1"


def test_no_passes_give_the_same_bytes():
    assert _column_writers([]) == _row_writers([]) == (",".join(PASS_COLUMNS) + "\n", "[]\n")


@pytest.mark.parametrize("microsecond", [0, 499999, 500000, 999999])
def test_times_round_to_the_nearest_second_like_iso_utc(microsecond):
    # ISO 8601 extended format, UTC designator Z; half a second rounds up.
    moment = datetime(1969, 12, 31, 23, 59, 59, microsecond, tzinfo=UTC)
    vectorized = iso_utc_strings(np.array([moment.replace(tzinfo=None)], dtype="datetime64[us]"))
    assert vectorized.tolist() == [iso_utc(moment)]

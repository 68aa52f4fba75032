"""The `planner passes` command end to end: contracts, quick-look mode and bad input.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import csv
import io
import json
from datetime import UTC, datetime, timedelta

import pytest

from planner.cli.common import parse_utc as _parse_utc
from planner.elements import read_elements
from planner.errors import UserError
from planner.passes import predict_passes
from planner.passes.station import Station
from tests.conftest import DEMO, ROOT
from tests.conftest import run_planner as run
from tests.orbit_factory import make_tle, write_three_line
from tests.test_hardening import assert_user_error as assert_one_error_line
from tests.test_hardening import run_cli

CONTRACT = [
    "satellite",
    "norad_id",
    "aos_utc",
    "tca_utc",
    "los_utc",
    "duration_s",
    "max_elevation_deg",
    "aos_azimuth_deg",
    "tca_azimuth_deg",
    "los_azimuth_deg",
    "min_range_km",
]


def assert_user_error(result, *fragments):
    """Exit code 2, exactly one line on stderr naming what is wrong, no traceback."""
    assert result.returncode == 2, result.stderr
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert len(lines) == 1, result.stderr
    assert "Traceback" not in result.stderr
    for fragment in fragments:
        assert fragment in lines[0], lines[0]
    return lines[0]


def test_csv_follows_the_contract(tmp_path):
    # Output contract: one row a pass with these columns, UTC ending in Z.
    out = tmp_path / "passes.csv"
    result = run("passes", DEMO, "--format", "csv", "--output", out)
    assert result.returncode == 0, result.stderr
    rows = list(csv.DictReader(io.StringIO(out.read_text())))
    assert list(rows[0].keys()) == CONTRACT
    assert len(rows) > 50
    for row in rows:
        for key in ("aos_utc", "tca_utc", "los_utc"):
            assert row[key].endswith("Z")
        assert row["aos_utc"] <= row["tca_utc"] <= row["los_utc"]
        assert 0.0 < float(row["max_elevation_deg"]) <= 90.0


def test_json_has_the_same_keys():
    result = run("passes", DEMO, "--format", "json", "--satellite", "TARNBECK")
    assert result.returncode == 0, result.stderr
    data = json.loads(result.stdout)
    assert data and all(list(item) == CONTRACT for item in data)
    assert {item["satellite"] for item in data} == {"TARNBECK"}


def test_quick_look_needs_no_scenario():
    result = run(
        "passes",
        "--elements",
        ROOT / "sample_tle" / "demo.tle",
        "--lat",
        "52.137",
        "--lon",
        "-1.804",
        "--start",
        "2027-01-04T00:00:00Z",
        "--days",
        "1",
        "--min-elevation-deg",
        "5",
        "--satellite",
        "99903",
        "--format",
        "json",
    )
    assert result.returncode == 0, result.stderr
    data = json.loads(result.stdout)
    assert data and {item["norad_id"] for item in data} == {99903}
    assert min(item["max_elevation_deg"] for item in data) > 5.0


def test_table_prints_the_week():
    result = run("passes", DEMO)
    assert result.returncode == 0, result.stderr
    assert "WRENLING-1" in result.stdout and "passes of 5 satellites" in result.stdout


def test_omm_and_tle_forms_give_the_same_passes():
    # The same orbits written as TLE and as CCSDS OMM (XML, CSV, JSON) must give the same
    # passes: the OMM carries the TLE's printed values (CCSDS 502.0-B-3, OMM).
    station = Station("demo", 52.137, -1.804, 142.0)
    start = datetime(2027, 1, 4, tzinfo=UTC)
    end = start + timedelta(days=2)
    reference = predict_passes(read_elements(ROOT / "sample_tle" / "demo.tle"), station, start, end)
    for name in ("demo_omm.xml", "demo_omm.csv", "demo_omm.json", "demo.2le"):
        other = predict_passes(read_elements(ROOT / "sample_tle" / name), station, start, end)
        assert len(other) == len(reference), name
        for a, b in zip(reference, other):
            assert a.norad_id == b.norad_id
            assert abs((a.aos_utc - b.aos_utc).total_seconds()) < 0.05, name
            assert abs((a.los_utc - b.los_utc).total_seconds()) < 0.05, name
            assert a.max_elevation_deg == pytest.approx(b.max_elevation_deg, abs=1e-3), name


# --- bad input: one clear line, exit code 2, no traceback, no output file ---------------


def scenario_with(tmp_path, replace_from="", replace_to="", elements=None):
    text = DEMO.read_text().replace("../sample_tle/demo.tle", str(elements or ROOT / "sample_tle" / "demo.tle"))
    if replace_from:
        assert replace_from in text
        text = text.replace(replace_from, replace_to, 1)
    path = tmp_path / "scenario.toml"
    path.write_text(text)
    return path


def test_unknown_scenario_key(tmp_path):
    path = scenario_with(tmp_path, "altitude_m = 142", "altitude_m = 142\nantenna_colour = 'red'")
    out = tmp_path / "out.csv"
    assert_user_error(run("passes", path, "--format", "csv", "--output", out), "scenario.toml", "antenna_colour")
    assert not out.exists()


def test_latitude_91(tmp_path):
    path = scenario_with(tmp_path, "latitude_deg = 52.137", "latitude_deg = 91")
    assert_user_error(run("passes", path), "scenario.toml", "latitude_deg", "90")


def test_quick_look_latitude_91():
    assert_user_error(run("passes", "--elements", ROOT / "sample_tle" / "demo.tle", "--lat", "91", "--lon", "0"), "--lat")


def test_bad_checksum(tmp_path):
    line1, line2 = make_tle(99950, height_km=500, inclination_deg=97.4)
    broken = line1[:-1] + str((int(line1[-1]) + 1) % 10)
    elements = tmp_path / "bad.tle"
    elements.write_text(f"BROKEN\n{broken}\n{line2}\n")
    out = tmp_path / "out.json"
    result = run("passes", "--elements", elements, "--lat", "50", "--lon", "0", "--format", "json", "--output", out)
    assert_user_error(result, "bad.tle:2", "checksum")
    assert not out.exists()


def test_truncated_line(tmp_path):
    line1, line2 = make_tle(99951, height_km=500, inclination_deg=97.4)
    elements = tmp_path / "short.tle"
    elements.write_text(f"CUT\n{line1}\n{line2[:40]}\n")
    assert_user_error(run("passes", "--elements", elements, "--lat", "50", "--lon", "0"), "short.tle:3")


def test_stale_epoch_refused_then_allowed(tmp_path):
    # Elements 40 days before the window: refused beyond 30 days unless --allow-stale,
    # which still warns (SGP4 error grows by km/day; common practice, no published source).
    old = datetime(2027, 1, 4, tzinfo=UTC) - timedelta(days=40)
    elements = tmp_path / "old.tle"
    write_three_line(elements, [("OLDSAT", make_tle(99952, height_km=600, inclination_deg=97.8, epoch=old))])
    args = ["passes", "--elements", elements, "--lat", "50", "--lon", "0", "--start", "2027-01-04T00:00:00Z"]
    assert_user_error(run(*args), "OLDSAT", "30 days")
    allowed = run(*args, "--allow-stale", "--format", "json")
    assert allowed.returncode == 0
    assert "warning" in allowed.stderr and "Traceback" not in allowed.stderr
    assert isinstance(json.loads(allowed.stdout), list)


def test_missing_files(tmp_path):
    assert_user_error(run("passes", tmp_path / "nope.toml"), "nope.toml")
    assert_user_error(run("passes", "--elements", tmp_path / "nope.tle", "--lat", "1", "--lon", "2"), "nope.tle")
    path = scenario_with(tmp_path, elements=tmp_path / "missing.tle")
    assert_user_error(run("passes", path), "missing.tle")


def test_unknown_satellite_and_format(tmp_path):
    assert_user_error(run("passes", DEMO, "--satellite", "NOSUCHSAT"), "NOSUCHSAT")
    assert_user_error(run("passes", DEMO, "--format", "xml"), "--format")


def test_output_folder_missing(tmp_path):
    assert_user_error(run("passes", DEMO, "--format", "csv", "--output", tmp_path / "no" / "x.csv"), "does not exist")


# --------------------------------------------------------------------------- times and numbers in options

# Every time lies in 1957 to 2100 (planner.elements.EARLIEST_YEAR / LATEST_YEAR: the first artificial
# satellite, and beyond any element set's useful life; common practice, no published source).
# Near year 1 and 9999 datetime arithmetic overflows (Python docs, datetime.MINYEAR / MAXYEAR), which
# used to end the command with a traceback.
OUT_OF_RANGE_TIMES = [
    "0001-01-01T00:00:00Z",
    "9999-12-31T23:59:59Z",
    "9999-12-31T23:59:59-23:59",
    "1956-12-31T23:59:59Z",
    "2101-01-01T00:00:00Z",
]


@pytest.mark.parametrize("moment", OUT_OF_RANGE_TIMES)
def test_budget_at_a_time_outside_1957_to_2100_is_one_line(moment):
    run = run_cli("budget", DEMO, "--satellite", "TARNBECK", "--candidate", "turnstile-far", "--at", moment, "--allow-stale")
    assert_one_error_line(run, f"--at: {moment!r} is out of range", "1957 to 2100")


@pytest.mark.parametrize("moment", OUT_OF_RANGE_TIMES)
def test_quick_look_start_outside_1957_to_2100_is_one_line(moment):
    run = run_cli(
        "passes",
        "--elements",
        ROOT / "sample_tle" / "demo.tle",
        "--lat",
        "52",
        "--lon",
        "0",
        "--start",
        moment,
        "--days",
        "1",
        "--allow-stale",
    )
    assert_one_error_line(run, f"--start: {moment!r} is out of range", "1957 to 2100")


def test_quick_look_window_ending_after_2100_is_one_line():
    run = run_cli(
        "passes",
        "--elements",
        ROOT / "sample_tle" / "demo.tle",
        "--lat",
        "52",
        "--lon",
        "0",
        "--start",
        "2100-12-31T00:00:00Z",
        "--days",
        "2",
        "--allow-stale",
    )
    assert_one_error_line(run, "--days: the window from 2100-12-31T00:00:00+00:00 for 2 days ends in 2101")


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("1957-01-01T00:00:00Z", datetime(1957, 1, 1, tzinfo=UTC)),
        ("2100-12-31T23:59:59.999999Z", datetime(2100, 12, 31, 23, 59, 59, 999999, tzinfo=UTC)),
        ("2101-01-01T00:30:00+01:00", datetime(2100, 12, 31, 23, 30, tzinfo=UTC)),  # in 2100 as UTC
        ("2027-01-04T00:00:00", datetime(2027, 1, 4, tzinfo=UTC)),
    ],  # naive is UTC
)
def test_times_at_the_edges_of_the_years_are_accepted(text, expected):
    assert _parse_utc("--at", text) == expected


def test_a_long_non_time_is_clipped_in_the_message():
    with pytest.raises(UserError) as info:
        _parse_utc("--at", "x" * 5000)
    assert len(str(info.value)) < 200 and "is not an ISO 8601 time" in str(info.value)


def test_catalog_number_of_thousands_of_digits_is_one_line():
    # int() of more than 4300 digits raises (Python docs, integer string conversion length limitation).
    run = run_cli(
        "passes",
        "--elements",
        ROOT / "sample_tle" / "demo.tle",
        "--lat",
        "52",
        "--lon",
        "0",
        "--start",
        "2027-01-04T00:00:00Z",
        "--days",
        "1",
        "--satellite",
        "9" * 5000,
    )
    line = assert_one_error_line(run, "--satellite:", "(5000 digits) is not a catalog number", "1 to 999999999")
    assert len(line) < 300


def test_version_option_prints_the_package_version():
    # The one version source is planner.__version__ (pyproject reads it; packaging metadata agrees).
    import importlib.metadata

    import planner

    result = run("--version")
    assert result.returncode == 0, result.stderr
    assert result.stdout.strip() == f"planner {planner.__version__}"
    assert importlib.metadata.version("planner") == planner.__version__


def test_help_prints_toml_table_names_and_plain_flags():
    # Help is plain text: the scenario's table names keep their TOML brackets (TOML v1.0: "[table]",
    # "[[array of tables]]"), and an on/off flag takes no value, so none is shown (common practice,
    # no published source).
    result = run("rank", "--help")
    assert result.returncode == 0, result.stderr
    assert "[catalog] and [[satellite]]" in " ".join(result.stdout.split())
    flags = [line for line in result.stdout.splitlines() if line.strip().startswith(("--quiet", "--force", "--allow-stale"))]
    assert len(flags) == 3 and not any("<bool>" in line for line in flags), flags

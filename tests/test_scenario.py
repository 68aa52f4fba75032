"""Scenario file loading and validation (planner.scenario).

External facts the checks rest on, each repeated beside its check:
- TOML v1.0.0 (toml.io): offset date-times carry a time zone (RFC 3339), local ones do not;
  Python's tomllib is the reference parser.
- WGS84 geodetic coordinates: latitude -90..90 deg, longitude -180..180 deg (definition).
- NORAD catalog numbers in the alpha-5 scheme reach 339999 (common practice, no published
  source beyond the catalog operator's format notes); an OMM may carry 9 digits (the 9-digit
  catalog numbers announced for the future; from memory).
- ITU Radio Regulations Article 5: amateur-satellite allocations 144-146 MHz and 435-438 MHz
  (from memory).
- A bit error ratio of 0.5 is what guessing gives, so a target BER must be below it
  (common practice).
The sgp4 package (Vallado et al. 2006 implementation) writes and reads back the TLEs used here.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import math
import os
import shutil
import subprocess
import sys
from datetime import UTC, datetime, timedelta
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from pydantic import ValidationError
from sgp4.api import WGS72, Satrec
from sgp4.exporter import export_tle

from planner.errors import UserError
from planner.scenario import (
    SatelliteConfig,
    Scenario,
    StationConfig,
    WindowConfig,
    describe_validation_error,
    load_scenario,
    validated,
)

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "scenarios" / "demo.toml"
REAL_ELEMENTS = REPO / "sample_tle" / "demo.tle"
DEMO_TEXT = DEMO.read_text(encoding="utf-8")

DEMO_SATELLITES = {
    99901: "WRENLING-1",
    99902: "TARNBECK",
    99903: "OSTRAVEL-2",
    99904: "CALDERWISP",
    99905: "MERROWFALL",
}


def _tle_lines(norad_id: int, index: int) -> tuple[str, str]:
    """An invented sun-synchronous-like LEO orbit, written by sgp4's own exporter."""
    epoch = datetime(2027, 1, 3, 12, tzinfo=UTC)
    epoch_days = (epoch - datetime(1949, 12, 31, tzinfo=UTC)).total_seconds() / 86400.0
    sat = Satrec()
    sat.sgp4init(
        WGS72,
        "i",
        norad_id,
        epoch_days,
        2.0e-4,  # bstar
        0.0,
        0.0,
        0.001 + 0.0002 * index,  # eccentricity
        math.radians(90.0),  # argument of perigee
        math.radians(97.4 + 0.3 * index),  # inclination
        math.radians(30.0 * index),  # mean anomaly
        (15.0 + 0.1 * index) * 2.0 * math.pi / 1440.0,  # mean motion, rad/min
        math.radians(40.0 + 25.0 * index),  # right ascension of the ascending node
    )
    return export_tle(sat)


def _write_generated_elements(path: Path) -> None:
    lines = []
    for index, (norad_id, name) in enumerate(DEMO_SATELLITES.items()):
        line1, line2 = _tle_lines(norad_id, index)
        lines += [name, line1, line2]
    path.write_text("\n".join(lines) + "\n", encoding="ascii")


def _catalog_numbers(path: Path) -> set[int]:
    """NORAD numbers of the TLE entries in a file, as the sgp4 package reads them."""
    lines = [line.rstrip() for line in path.read_text(encoding="utf-8").splitlines()]
    numbers = set()
    for first, second in zip(lines, lines[1:]):
        if first.startswith("1 ") and second.startswith("2 "):
            numbers.add(Satrec.twoline2rv(first, second).satnum)
    return numbers


@pytest.fixture(scope="module")
def tree(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """A copy of the repository layout: scenarios/ beside sample_tle/ with generated elements."""
    root = tmp_path_factory.mktemp("tree")
    (root / "scenarios").mkdir()
    (root / "sample_tle").mkdir()
    _write_generated_elements(root / "sample_tle" / "demo.tle")
    shutil.copytree(REPO / "patterns", root / "patterns")  # candidates name shipped tables
    return root


def _variant(tree: Path, old: str, new: str, name: str = "variant.toml", count: int = 1) -> Path:
    assert old in DEMO_TEXT, old
    path = tree / "scenarios" / name
    path.write_text(DEMO_TEXT.replace(old, new, count), encoding="utf-8")
    return path


def _user_error(path: Path) -> str:
    with pytest.raises(UserError) as info:
        load_scenario(path)
    message = str(info.value)
    assert "\n" not in message and "\r" not in message, message
    assert message.startswith(f"{path}: "), message
    return message


# ------------------------------------------------------------------ the demo scenario


def _check_demo(scenario: Scenario, elements: Path, scenario_path: Path) -> None:
    station = scenario.station
    assert station.name == "Cobbleford Fell Radio Society"
    assert (station.latitude_deg, station.longitude_deg, station.altitude_m) == (52.137, -1.804, 142.0)
    assert station.horizon_mask == [(0.0, 3.0), (40.0, 8.0), (90.0, 4.0), (180.0, 6.0), (270.0, 2.0)]
    assert station.noise_environment == "rural"

    window = scenario.window
    assert window.start_utc == datetime(2027, 1, 4, tzinfo=UTC)
    assert window.start_utc.utcoffset() == timedelta(0)
    assert window.end_utc - window.start_utc == timedelta(days=7)
    assert window.step_s == 10.0

    assert {sat.norad_id: sat.name for sat in scenario.satellite} == DEMO_SATELLITES
    for sat in scenario.satellite:
        assert sat.elements == elements
        assert sat.elements.is_absolute()
        # ITU Radio Regulations Art. 5 amateur-satellite bands (from memory).
        assert 435.0 <= sat.downlink_mhz <= 438.0 or 144.0 <= sat.downlink_mhz <= 146.0, sat.name
        assert sat.downlink_frequency_hz == pytest.approx(sat.downlink_mhz * 1e6)
        if sat.modulation in ("fm", "afsk-fm"):
            assert sat.required_cn0_dbhz is not None, sat.name
    voice = [sat for sat in scenario.satellite if sat.uplink_mhz is not None]
    assert voice and all(sat.uplink_frequency_hz == pytest.approx(sat.uplink_mhz * 1e6) for sat in voice)
    assert scenario.source_path == scenario_path.resolve()


def test_demo_scenario_loads_with_generated_elements(tree: Path) -> None:
    path = tree / "scenarios" / "demo.toml"
    path.write_text(DEMO_TEXT, encoding="utf-8")
    # The generated file really holds the five catalog numbers (read back by sgp4).
    assert _catalog_numbers(tree / "sample_tle" / "demo.tle") == set(DEMO_SATELLITES)
    _check_demo(load_scenario(path), (tree / "sample_tle" / "demo.tle").resolve(), path)


@pytest.mark.skipif(not REAL_ELEMENTS.exists(), reason="sample_tle/demo.tle not written yet")
def test_real_demo_scenario_loads() -> None:
    scenario = load_scenario(DEMO)
    _check_demo(scenario, REAL_ELEMENTS.resolve(), DEMO)
    # Every satellite the scenario names is in the shipped elements file.
    assert set(DEMO_SATELLITES) <= _catalog_numbers(REAL_ELEMENTS)


def test_relative_elements_are_resolved_against_the_scenario_folder(tree: Path, monkeypatch) -> None:
    path = tree / "scenarios" / "demo.toml"
    path.write_text(DEMO_TEXT, encoding="utf-8")
    monkeypatch.chdir(tree / "sample_tle")  # the working folder must not matter
    scenario = load_scenario(Path("..") / "scenarios" / "demo.toml")
    assert scenario.satellite[0].elements == (tree / "sample_tle" / "demo.tle").resolve()
    assert scenario.source_path == path.resolve()


# ------------------------------------------------------------------ good variants


def test_ints_accepted_where_floats_are_expected(tree: Path) -> None:
    path = _variant(tree, "latitude_deg = 52.137", "latitude_deg = 52")
    scenario = load_scenario(path)
    assert scenario.station.latitude_deg == 52.0 and isinstance(scenario.station.latitude_deg, float)
    assert isinstance(scenario.window.days, float)


def test_offset_and_quoted_start_times_are_converted_to_utc(tree: Path) -> None:
    # TOML v1.0.0 offset date-time (RFC 3339): 01:00+01:00 is 00:00Z.
    path = _variant(tree, "start_utc = 2027-01-04T00:00:00Z", "start_utc = 2027-01-04T01:00:00+01:00")
    assert load_scenario(path).window.start_utc == datetime(2027, 1, 4, tzinfo=UTC)
    path = _variant(tree, "start_utc = 2027-01-04T00:00:00Z", 'start_utc = "2027-01-03T19:00:00-05:00"')
    start = load_scenario(path).window.start_utc
    assert start == datetime(2027, 1, 4, tzinfo=UTC) and start.tzinfo == UTC


def test_horizon_mask_flat_or_sorted(tree: Path) -> None:
    mask = "horizon_mask = [[0, 3], [40, 8], [90, 4], [180, 6], [270, 2]]"
    assert load_scenario(_variant(tree, mask, "horizon_mask = 5")).station.horizon_mask == 5.0
    shuffled = "horizon_mask = [[270, 2], [0.5, 3], [180, 6.5]]"
    assert load_scenario(_variant(tree, mask, shuffled)).station.horizon_mask == [
        (0.5, 3.0),
        (180.0, 6.5),
        (270.0, 2.0),
    ]


def test_defaults_and_end_of_window() -> None:
    window = WindowConfig(start_utc="2027-01-04T00:00:00Z")
    assert (window.days, window.step_s) == (7.0, 10.0)
    assert window.end_utc == datetime(2027, 1, 11, tzinfo=UTC)
    assert StationConfig(name="X", latitude_deg=0, longitude_deg=0).horizon_mask == 0.0


# ------------------------------------------------------------------ bad inputs

MASK = "horizon_mask = [[0, 3], [40, 8], [90, 4], [180, 6], [270, 2]]"
BAD_CASES = [
    # pytest.param(old text, new text, fragments the one-line message must hold, id=...)
    pytest.param(
        "[station]",
        'antennas = "x"\n[station]',
        ["antennas: unknown key", "allowed keys: station, window, satellite"],
        id="unknown top-level key",
    ),
    pytest.param(
        "lna_gain_db = 20",
        "lna_gain_dbb = 20",
        ["receiver.lna_gain_dbb: unknown key", "lna_gain_db"],
        id="unknown key in receiver",
    ),
    pytest.param(
        "[station]",
        'source_path = "x"\n[station]',
        ["source_path: unknown key"],
        id="source_path is not a file key",
    ),
    pytest.param(
        "latitude_deg = 52.137",
        "lattitude_deg = 52.137",
        [
            "station.lattitude_deg: unknown key",
            "did you mean latitude_deg?",
            "allowed keys: name, latitude_deg, longitude_deg",
        ],
        id="unknown station key",
    ),
    # WGS84 latitude is -90..90 (definition).
    pytest.param(
        "latitude_deg = 52.137",
        "latitude_deg = 91",
        ["station.latitude_deg: 91 is out of range", "-90 to 90"],
        id="latitude 91",
    ),
    # WGS84 longitude is -180..180 (definition); the 0..360 convention is refused.
    pytest.param(
        "longitude_deg = -1.804",
        "longitude_deg = -181",
        ["station.longitude_deg: -181 is out of range", "-180 to 180"],
        id="longitude -181",
    ),
    pytest.param(
        "longitude_deg = -1.804",
        "longitude_deg = 200",
        ["station.longitude_deg: 200 is out of range"],
        id="longitude 200 (0-360 convention refused)",
    ),
    pytest.param(
        "days = 7",
        "days = 0",
        ["window.days: 0 is out of range", "more than 0, up to 31"],
        id="days 0",
    ),
    pytest.param("days = 7", "days = 40", ["window.days: 40 is out of range"], id="days 40"),
    # A window shorter than its step holds no sample; 1e-185 days (found by the mutation fuzz
    # below) even ended where it started.  Common practice, no published source.
    pytest.param(
        "days = 7",
        "days = 1e-185",
        ["window.days: 1e-185 days is shorter than one step of 10 s", "one step or more, here 0.000116 days or more"],
        id="days shorter than a step",
    ),
    pytest.param(
        "step_s = 10",
        "step_s = 0.1",
        ["window.step_s: 0.1 is out of range", "0.5 to 600"],
        id="step 0.1",
    ),
    pytest.param(
        "days = 7",
        'days = "seven"',
        ["window.days: expected a number, got 'seven'"],
        id="string for a number",
    ),
    pytest.param(
        "latitude_deg = 52.137",
        'latitude_deg = "52.137"',
        ["station.latitude_deg: expected a number, got '52.137'"],
        id="quoted number",
    ),
    pytest.param(
        "step_s = 10",
        "step_s = true",
        ["window.step_s: expected a number, got true"],
        id="boolean for a number",
    ),
    pytest.param(
        "altitude_m = 142",
        "altitude_m = inf",
        ["station.altitude_m: inf is not a finite number"],
        id="inf",
    ),
    pytest.param(
        "altitude_m = 142",
        "altitude_m = nan",
        ["station.altitude_m: nan is not a finite number"],
        id="nan",
    ),
    pytest.param(
        "downlink_mhz = 435.84",
        "downlink_mhz = 0",
        ["satellite #2 (TARNBECK).downlink_mhz: 0 is out of range", "1 to 50000"],
        id="downlink 0",
    ),
    # BER 0.5 is what guessing gives (common practice).
    pytest.param(
        "target_ber = 1e-5",
        "target_ber = 0.5",
        ["satellite #1 (WRENLING-1).target_ber: 0.5 is out of range"],
        id="target BER 0.5",
    ),
    pytest.param(
        "norad_id = 99903",
        "norad_id = 99903.5",
        ["satellite #3 (OSTRAVEL-2).norad_id: expected a whole number"],
        id="fractional catalog number",
    ),
    # 9-digit catalog numbers stop at 999999999 (from memory; see the module notes).
    pytest.param(
        "norad_id = 99903",
        "norad_id = 1000000000",
        ["satellite #3 (OSTRAVEL-2).norad_id: 1000000000 is out of range", "1 to 999999999"],
        id="catalog number too large",
    ),
    pytest.param(
        'modulation = "bpsk"',
        'modulation = "psk31"',
        ["satellite #2 (TARNBECK).modulation: 'psk31' is not one of the choices", '"gmsk"'],
        id="unknown modulation",
    ),
    pytest.param(
        'noise_environment = "rural"',
        'noise_environment = "urban"',
        ["station.noise_environment: 'urban' is not one of the choices", '"quiet-rural"'],
        id="unknown noise environment",
    ),
    pytest.param(
        MASK,
        "horizon_mask = [[0, 3], [400, 8]]",
        ["station.horizon_mask: point 2: azimuth 400 is out of range", "360"],
        id="mask azimuth 400",
    ),
    pytest.param(
        MASK,
        "horizon_mask = [[0, 3], [360, 8]]",
        ["station.horizon_mask: point 2: azimuth 360 is out of range"],
        id="mask azimuth 360",
    ),
    pytest.param(
        MASK,
        "horizon_mask = [[0, 3], [90, 8], [90, 4]]",
        ["station.horizon_mask: point 3: azimuth 90 is already given by point 2"],
        id="mask duplicate azimuths",
    ),
    pytest.param(
        MASK,
        "horizon_mask = [[0, 3], [90, 95]]",
        ["station.horizon_mask: point 2: elevation 95 is out of range", "-10 to 90"],
        id="mask elevation 95",
    ),
    pytest.param(
        MASK,
        "horizon_mask = []",
        ["station.horizon_mask: the list of points is empty"],
        id="mask empty",
    ),
    pytest.param(
        MASK,
        "horizon_mask = [[0, 3, 4]]",
        ["station.horizon_mask: point 1 is [0, 3, 4]"],
        id="mask not pairs",
    ),
    pytest.param(
        MASK,
        "horizon_mask = 95",
        ["station.horizon_mask: minimum elevation 95 is out of range"],
        id="mask flat 95",
    ),
    pytest.param(
        'name = "Cobbleford Fell Radio Society"\n',
        "",
        ["station.name: missing required key"],
        id="missing required key",
    ),
    pytest.param(
        DEMO_TEXT[DEMO_TEXT.index("[window]") : DEMO_TEXT.index("# ----")],
        "",
        ["window: missing required table", "start_utc"],
        id="missing required table",
    ),
    pytest.param(
        "downlink_mhz = 437.275\n",
        "",
        ["satellite #3 (OSTRAVEL-2).downlink_mhz: missing required key", "1 to 50000"],
        id="missing satellite key",
    ),
    # TOML v1.0.0: a local date-time has no offset, so it is not an instant.
    pytest.param(
        "start_utc = 2027-01-04T00:00:00Z",
        "start_utc = 2027-01-04T00:00:00",
        ["window.start_utc: 2027-01-04T00:00:00 has no time zone"],
        id="naive datetime",
    ),
    pytest.param(
        "start_utc = 2027-01-04T00:00:00Z",
        'start_utc = "2027-01-04T00:00:00"',
        ["window.start_utc: 2027-01-04T00:00:00 has no time zone"],
        id="naive datetime string",
    ),
    pytest.param(
        "start_utc = 2027-01-04T00:00:00Z",
        "start_utc = 2027-01-04",
        ["window.start_utc: 2027-01-04 is a date without a time of day"],
        id="date without time",
    ),
    pytest.param(
        "start_utc = 2027-01-04T00:00:00Z",
        "start_utc = 9999-12-31T23:00:00Z",
        ["window.start_utc: 9999-12-31T23:00:00+00:00 is out of range"],
        id="start far in the future",
    ),
    pytest.param(
        '"../sample_tle/demo.tle"',
        '"../sample_tle/x.tle"',
        ["satellite #1 (WRENLING-1).elements: file ../sample_tle/x.tle does not exist"],
        id="missing elements file",
    ),
    pytest.param(
        '"../sample_tle/demo.tle"',
        '"../sample_tle"',
        ["satellite #1 (WRENLING-1).elements: ../sample_tle is not a file"],
        id="elements is a folder",
    ),
    pytest.param(
        'name = "TARNBECK"',
        'name = "WRENLING-1"',
        ["satellite #2 (WRENLING-1).name: 'WRENLING-1' is already the name of satellite #1"],
        id="duplicate satellite names",
    ),
    pytest.param(
        'name = "TARNBECK"',
        'name = "  "',
        ["satellite #2.name: the name is empty"],
        id="empty name",
    ),
    pytest.param(
        'name = "TARNBECK"',
        'name = "TARN\\nBECK"',
        ["satellite #2 (TARN\\nBECK).name", "holds the control character \\n at character 5"],
        id="name with a newline",
    ),
    # Losses between the antenna and the LNA (candidate keys, defaults in [receiver]).
    pytest.param(
        'name = "turnstile-close"\n',
        'name = "turnstile-close"\npre_lna_loss_db = -1\n',
        ["candidate #1 (turnstile-close).pre_lna_loss_db: -1 is out of range; allowed: 0 to 10"],
        id="negative pre-LNA loss",
    ),
    pytest.param(
        'name = "turnstile-close"\n',
        'name = "turnstile-close"\npre_lna_connectors = 1.5\n',
        ["candidate #1 (turnstile-close).pre_lna_connectors: expected a whole number, got 1.5", "0 to 30"],
        id="fractional pre-LNA connectors",
    ),
    pytest.param(
        'name = "turnstile-close"\n',
        'name = "turnstile-close"\npre_lna_feedline = [{ cable = "RG-58" }]\n',
        ["candidate #1 (turnstile-close).pre_lna_feedline #1.length_m: missing required key", "more than 0, up to 1000"],
        id="pre-LNA run without a length",
    ),
    pytest.param(
        'name = "turnstile-close"\n',
        'name = "turnstile-close"\npre_lna_los_db = 0.2\n',
        ["candidate #1 (turnstile-close).pre_lna_los_db: unknown key (did you mean pre_lna_loss_db?)"],
        id="misspelt pre-LNA key",
    ),
    pytest.param(
        "lna_gain_db = 20",
        "lna_gain_db = 20\npre_lna_loss_db = 11",
        ["receiver.pre_lna_loss_db: 11 is out of range; allowed: 0 to 10"],
        id="receiver pre-LNA loss too large",
    ),
    # tomllib (the reference parser) reports the line of the broken table header.
    pytest.param(
        "[window]",
        "[window",
        ["not valid TOML: ", f"line {DEMO_TEXT[: DEMO_TEXT.index('[window]')].count(chr(10)) + 1},"],
        id="not TOML",
    ),
]


@pytest.mark.parametrize(("old", "new", "fragments"), BAD_CASES)
def test_bad_input_gives_one_line_user_error(tree: Path, old: str, new: str, fragments: list[str]) -> None:
    message = _user_error(_variant(tree, old, new))
    for fragment in fragments:
        assert fragment in message, (fragment, message)


def test_no_satellites(tree: Path) -> None:
    head = DEMO_TEXT.split("[[satellite]]")[0]
    path = tree / "scenarios" / "nosat.toml"
    path.write_text("satellite = []\n" + head, encoding="utf-8")  # top-level key before the tables
    expected = "satellite: no satellites are given; allowed: one or more [[satellite]] tables"
    assert expected in _user_error(path)
    path.write_text(head, encoding="utf-8")  # no [[satellite]] and no [catalog] at all
    assert expected in _user_error(path)


def test_single_bracket_satellite_table(tree: Path) -> None:
    head, first = DEMO_TEXT.split("[[satellite]]")[:2]
    path = tree / "scenarios" / "single.toml"
    path.write_text(head + "[satellite]" + first, encoding="utf-8")
    expected = "satellite: expected [[satellite]] tables (double brackets), got a single table"
    assert expected in _user_error(path)


def test_missing_file(tmp_path: Path) -> None:
    path = tmp_path / "nothing.toml"
    message = _user_error(path)
    assert message == f"{path}: cannot read: No such file or directory"


def test_not_utf8(tmp_path: Path) -> None:
    path = tmp_path / "latin1.toml"
    path.write_bytes('[station]\nname = "Caf\u00e9"\n'.encode("latin-1"))
    assert "not valid TOML: not UTF-8 text" in _user_error(path)


def test_several_problems_are_counted(tree: Path) -> None:
    old = "latitude_deg = 52.137\nlongitude_deg = -1.804"
    path = _variant(tree, old, "latitude_deg = 91\nlongitude_deg = 200")
    message = _user_error(path)
    assert "station.latitude_deg: 91 is out of range" in message and message.endswith("(and 1 more problem)")


def test_describe_validation_error_directly() -> None:
    data = {
        "station": {"name": "S", "latitude_deg": 0, "longitude_deg": 0},
        "window": {"start_utc": "2027-01-04T00:00:00Z", "step_s": 0.1},
        "satellite": [],
    }
    with pytest.raises(ValidationError) as info:
        Scenario.model_validate(data)
    line = describe_validation_error(info.value, "my.toml", data=data)
    assert line.startswith("my.toml: window.step_s: 0.1 is out of range; allowed: 0.5 to 600")
    # The empty satellite list is checked once the fields are valid (a whole-scenario rule).
    assert "\n" not in line
    data["window"]["step_s"] = 10
    with pytest.raises(ValidationError) as info:
        Scenario.model_validate(data)
    assert "satellite: no satellites are given" in describe_validation_error(info.value, "my.toml", data=data)
    # Without model= the model is found from the error's title (the class name).
    station = {"name": "S", "lattitude_deg": 0, "longitude_deg": 0}
    with pytest.raises(ValidationError) as info:
        StationConfig.model_validate(station)
    line = describe_validation_error(info.value, "cli", data=station)
    assert line.startswith("cli: lattitude_deg: unknown key (did you mean latitude_deg?); allowed keys: name,")


def test_validated_with_option_names(tmp_path: Path) -> None:
    with pytest.raises(UserError) as info:
        validated(
            StationConfig,
            {"name": "cli", "latitude_deg": 91, "longitude_deg": 0},
            "command line",
            key_names={"latitude_deg": "--lat"},
        )
    assert str(info.value) == "command line: --lat: 91 is out of range; allowed: -90 to 90"
    elements = tmp_path / "x.tle"
    elements.write_text("", encoding="ascii")
    values = {"name": "A", "elements": "x.tle", "downlink_mhz": 437}
    sat = validated(SatelliteConfig, values, "command line", context={"base_dir": tmp_path})
    assert sat.elements == elements.resolve()
    assert sat.norad_id is None and sat.uplink_frequency_hz is None


def test_scenario_built_in_code_has_no_source_path(tree: Path) -> None:
    scenario = load_scenario(_variant(tree, "days = 7", "days = 2"))
    rebuilt = Scenario.model_validate(scenario.model_dump())
    assert rebuilt.source_path is None
    assert "source_path" not in scenario.model_dump()
    assert rebuilt.window.days == 2.0


# ------------------------------------------------------------------ property test

TOKENS = [
    "=",
    '"',
    "'",
    "[",
    "]",
    "[[",
    "]]",
    "{",
    "}",
    ",",
    ".",
    "-",
    "+",
    "#",
    "\n",
    " ",
    "\t",
    "0",
    "1",
    "9",
    "1e999",
    "-1e999",
    "nan",
    "inf",
    "true",
    "false",
    "T",
    "Z",
    ":",
    "_",
    "\\",
    "\u00e9",
    "\x00",
    "\u2028",
    "satellite",
    "station",
    "window",
    "latitude_deg",
    "name",
    "2027-01-04",
    "00:00:00",
]

_datetimes = st.datetimes(min_value=datetime(1, 1, 2), max_value=datetime(9999, 12, 30))
_toml_values = st.one_of(
    st.integers(min_value=-(10**30), max_value=10**30).map(str),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),  # repr gives TOML spellings (inf, nan, 1e+16)
    st.booleans().map(lambda b: "true" if b else "false"),
    st.text(max_size=12).map(lambda t: '"' + t.replace("\\", "\\\\").replace('"', '\\"') + '"'),
    _datetimes.map(lambda d: d.isoformat()),  # TOML local date-time
    _datetimes.map(lambda d: d.isoformat() + "Z"),  # TOML offset date-time
    st.lists(st.lists(st.integers(-500, 500), max_size=3), max_size=4).map(str),
)


@st.composite
def _mutated(draw: st.DrawFn) -> str:
    text = DEMO_TEXT
    for _ in range(draw(st.integers(1, 4))):
        kind = draw(st.sampled_from(["delete", "insert", "value", "line"]))
        if kind == "delete":
            start = draw(st.integers(0, len(text)))
            text = text[:start] + text[start + draw(st.integers(1, 30)) :]
        elif kind == "insert":
            at = draw(st.integers(0, len(text)))
            tokens = draw(st.lists(st.sampled_from(TOKENS), min_size=1, max_size=4))
            text = text[:at] + "".join(tokens) + text[at:]
        elif kind == "value":
            lines = text.split("\n")
            assignments = [i for i, line in enumerate(lines) if " = " in line and not line.startswith("#")]
            if assignments:
                i = draw(st.sampled_from(assignments))
                lines[i] = lines[i].split(" = ")[0] + " = " + draw(_toml_values)
            text = "\n".join(lines)
        else:
            lines = text.split("\n")
            i = draw(st.integers(0, len(lines) - 1))
            if draw(st.booleans()):
                del lines[i]
            else:
                lines.insert(draw(st.integers(0, len(lines))), lines[i])
            text = "\n".join(lines)
    return text


@settings(
    max_examples=300,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(text=_mutated())
def test_mutations_give_a_scenario_or_a_user_error(tree: Path, text: str) -> None:
    path = tree / "scenarios" / "mutated.toml"
    path.write_text(text, encoding="utf-8")
    try:
        scenario = load_scenario(path)
    except UserError as exc:
        message = str(exc)
        assert message.startswith(f"{path}: ") and "\n" not in message and "\r" not in message, message
        assert message.isprintable(), message
        return
    # Anything accepted satisfies the documented ranges.
    assert -90 <= scenario.station.latitude_deg <= 90
    assert -180 <= scenario.station.longitude_deg <= 180
    assert 0 < scenario.window.days <= 31 and 0.5 <= scenario.window.step_s <= 600
    assert scenario.window.start_utc.utcoffset() == timedelta(0)
    assert scenario.window.end_utc > scenario.window.start_utc
    names = [sat.name for sat in scenario.satellite]
    assert names and len(set(names)) == len(names)
    assert all(sat.elements.is_file() and math.isfinite(sat.downlink_mhz) for sat in scenario.satellite)


def test_pre_lna_cable_is_checked_like_the_feedline(tree: Path) -> None:
    # An unknown cable in pre_lna_feedline: one line naming the file, the key and the cables allowed,
    # when the study is made (every candidate is resolved before any computation).
    from planner.study import Study

    path = _variant(
        tree, 'name = "turnstile-close"\n', 'name = "turnstile-close"\npre_lna_feedline = [{ cable = "RG-999", length_m = 1 }]\n'
    )
    scenario = load_scenario(path)
    with pytest.raises(UserError) as info:
        Study.from_scenario(scenario)
    message = str(info.value)
    assert "\n" not in message
    assert message.startswith(f"{path}: candidate #1 (turnstile-close).pre_lna_feedline #1: "), message
    assert "RG-999" in message and "RG-58" in message


# ------------------------------------------------------------------ ranges of every value


# Python's int() refuses more than 4300 digits (Python docs, "Integer string conversion length
# limitation"), and tomllib reads TOML integers with int(): 5000 digits must still give one line
# naming the line and key, without repeating the number.
@pytest.mark.parametrize(
    ("old", "key"),
    [
        ("days = 7", "days"),
        ("latitude_deg = 52.137", "latitude_deg"),
        ("norad_id = 99903", "norad_id"),
        ("connectors = 3", "connectors"),
        ("[40, 8]", "horizon_mask"),
    ],
)
def test_integers_of_thousands_of_digits_name_line_and_key(tree: Path, old: str, key: str) -> None:
    huge = "9" * 5000
    new = f"{key} = {huge}" if old.startswith(key) else f"[{huge}, 8]"
    path = _variant(tree, old, new)
    line = DEMO_TEXT[: DEMO_TEXT.index(old)].count("\n") + 1
    with pytest.raises(UserError) as info:
        load_scenario(path)
    message = str(info.value)
    assert message.startswith(f"{path}:{line}: {key}: a whole number of 5000 digits"), message
    assert "\n" not in message and len(message) < 300 and huge[:100] not in message


def test_integers_just_under_the_conversion_limit_are_out_of_range_in_short(tree: Path) -> None:
    message = _user_error(_variant(tree, "days = 7", "days = " + "9" * 4000))
    assert "window.days: 999999999999... (4000 digits) is too large a number" in message
    assert len(message) < 300


@pytest.mark.parametrize(
    ("start", "days", "problem", "allowed"),
    [
        # 1957: the first artificial satellite; 2100: beyond any element set's useful life
        # (planner.bounds.EARLIEST_YEAR / LATEST_YEAR; common practice, no published source).
        ("0001-01-01T00:00:00Z", "7", "window.start_utc: 0001-01-01T00:00:00+00:00 is out of range", "1957 to 2100"),
        ("9999-12-31T23:59:59Z", "7", "window.start_utc: 9999-12-31T23:59:59+00:00 is out of range", "1957 to 2100"),
        ("9999-12-31T23:59:59-23:59", "7", "window.start_utc: 9999-12-31T23:59:59-23:59 is out of range", "1957 to 2100"),
        ("1956-12-31T23:59:59Z", "7", "window.start_utc: 1956-12-31T23:59:59+00:00 is out of range", "1957 to 2100"),
        (
            "2100-12-31T00:00:00Z",
            "7",
            "window.days: the window from 2100-12-31T00:00:00+00:00 for 7 days ends in 2101",
            "a window that ends by the end of 2100",
        ),
        # timedelta holds at most 999999999 days (Python docs, datetime.timedelta), so these would
        # overflow start + days; the 31-day limit refuses them first.
        ("2027-01-04T00:00:00Z", "1e300", "window.days: 1e+300 is out of range", "more than 0, up to 31"),
        ("2027-01-04T00:00:00Z", "3000000000", "window.days: 3000000000 is out of range", "more than 0, up to 31"),
    ],
)
def test_window_outside_1957_to_2100_is_refused(tree: Path, start: str, days: str, problem: str, allowed: str) -> None:
    text = DEMO_TEXT.replace("start_utc = 2027-01-04T00:00:00Z", f"start_utc = {start}").replace("days = 7", f"days = {days}")
    path = tree / "scenarios" / "window.toml"
    path.write_text(text, encoding="utf-8")
    message = _user_error(path)
    head, _, allowed_part = message.partition("; allowed: ")
    assert problem in head and allowed in allowed_part, message


@pytest.mark.parametrize(("start", "days"), [("1957-01-01T00:00:00Z", "7"), ("2100-12-24T00:00:00Z", "7")])
def test_window_edges_inside_the_years_are_accepted(tree: Path, start: str, days: str) -> None:
    text = DEMO_TEXT.replace("start_utc = 2027-01-04T00:00:00Z", f"start_utc = {start}").replace("days = 7", f"days = {days}")
    path = tree / "scenarios" / "edge.toml"
    path.write_text(text, encoding="utf-8")
    window = load_scenario(path).window
    assert window.start_utc == datetime.fromisoformat(start.replace("Z", "+00:00"))
    assert window.end_utc <= datetime(2101, 1, 1, tzinfo=UTC)


def test_nine_digit_catalog_number_is_accepted(tree: Path) -> None:
    scenario = load_scenario(_variant(tree, "norad_id = 99903", "norad_id = 999999999"))
    assert scenario.satellite_named("OSTRAVEL-2").norad_id == 999_999_999


# ESC, BEL, DEL, a C1 CSI and a text-direction override, written as TOML \u escapes (TOML v1.0.0,
# basic strings): control characters of ECMA-48 / ISO 6429 (C0, C1, DEL) and a Unicode format
# character, none printable for Python's str.isprintable (Python docs).
_CONTROLS = [("\\u001b", "\\x1b"), ("\\u0007", "\\x07"), ("\\u007f", "\\x7f"), ("\\u009b", "\\x9b"), ("\\u202e", "\\u202e")]
_CABLE = '\n[[cable]]\nname = "{name}"\nloss_db_per_100m = [[100, 5.0]]\n'


@pytest.mark.parametrize(("toml_escape", "shown"), _CONTROLS)
@pytest.mark.parametrize(
    ("old", "where"),
    [
        ('name = "Cobbleford Fell Radio Society"', "station.name"),
        ('name = "TARNBECK"', "satellite #2"),
        ('name = "turnstile-far"', "candidate #2"),
        (None, "cable #1"),
    ],
)
def test_names_with_control_characters_are_refused(tree: Path, old, where: str, toml_escape: str, shown: str) -> None:
    name = f"BAD{toml_escape}[2JNAME"
    if old is None:
        path = tree / "scenarios" / "cable.toml"
        path.write_text(DEMO_TEXT + _CABLE.format(name=name), encoding="utf-8")
    else:
        path = _variant(tree, old, f'name = "{name}"')
    message = _user_error(path)
    assert where in message and f"holds the control character {shown} at character 4" in message, message
    assert message.isprintable(), message


def test_loading_a_scenario_needs_neither_numpy_nor_the_element_or_antenna_readers(tree: Path) -> None:
    # The scenario checks its years, names and frequencies against planner.bounds alone, so
    # validating a file (here the demo, every key of the format) stays a light import.
    path = tree / "scenarios" / "light.toml"
    path.write_text(DEMO_TEXT, encoding="utf-8")
    code = (
        "import sys; from planner.scenario import load_scenario; "
        f"load_scenario({str(path)!r}); "
        "print(sorted(m for m in sys.modules if m.split('.')[0] in ('numpy', 'scipy', 'sgp4') "
        "or m.startswith(('planner.elements', 'planner.antenna', 'planner.link'))))"
    )
    done = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, env={**os.environ, "PYTHONPATH": str(REPO)}
    )
    assert done.stdout.strip() == "[]", done.stdout

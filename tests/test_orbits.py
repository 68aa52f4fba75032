"""Element-set reading and checks (planner.elements) and the invented demo element files.

External references used here:
* TLE format and checksum: NORAD two-line element format as documented in Spacetrack
  Report #3 (Hoots & Roehrich 1980) and CelesTrak's "NORAD Two-Line Element Set Format"
  page: column 69 is the sum of the digits of columns 1-68, each '-' counting 1, modulo 10.
* The sgp4 package's shipped verification file SGP4-VER.TLE (Vallado et al., "Revisiting
  Spacetrack Report #3", AIAA 2006-6753), read from the installed package.
* sgp4 (Satrec.twoline2rv, sgp4_array) and skyfield (EarthSatellite, TEME frame) as
  reference libraries.
* CCSDS 502.0-B Orbit Data Messages (OMM keywords, NDM/XML layout).
* Kepler's third law T = 2 pi sqrt(a^3 / mu) (Vallado, Fundamentals of Astrodynamics and
  Applications).

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import dataclasses
import json
import math
import string
import warnings
from datetime import UTC, datetime, timedelta
from pathlib import Path

import numpy as np
import pytest
import sgp4
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from sgp4.api import Satrec, jday

from planner.elements import (
    ElementSet,
    check_element_age,
    control_character,
    element_age_days,
    read_elements,
    select_element_set,
    tle_checksum,
)
from planner.errors import PlannerWarning, UserError

REPO = Path(__file__).resolve().parent.parent
SAMPLES = REPO / "sample_tle"
SAMPLE_FILES = ("demo.tle", "demo.2le", "demo_omm.xml", "demo_omm.csv", "demo_omm.json")
EXPECTED = [
    (99901, "WRENLING-1"),
    (99902, "TARNBECK"),
    (99903, "OSTRAVEL-2"),
    (99904, "CALDERWISP"),
    (99905, "MERROWFALL"),
]
EPOCH = datetime(2027, 1, 3, 12, 0, 0, tzinfo=UTC)
SGP4_VER = Path(sgp4.__file__).resolve().parent / "SGP4-VER.TLE"


def published_checksum(line: str) -> int:
    """Checksum rule as published (Spacetrack Report #3; CelesTrak TLE format page):
    over columns 1-68, digits add their value, '-' adds 1, everything else 0; modulo 10."""
    return sum(int(c) if c in "0123456789" else (1 if c == "-" else 0) for c in line[:68]) % 10


def with_checksum(line: str) -> str:
    """Columns 1-68 of ``line`` plus a correct column 69."""
    return line[:68] + str(published_checksum(line[:68]))


def demo_lines() -> list[str]:
    return (SAMPLES / "demo.tle").read_text().splitlines()


def write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text)
    return path


def expect_user_error(path: Path, line: int | None, *fragments: str) -> str:
    """read_elements(path) raises a one-line UserError naming the file (and line)."""
    with pytest.raises(UserError) as info:
        read_elements(path)
    message = str(info.value)
    assert "\n" not in message and "\r" not in message
    prefix = f"{path}:{line}:" if line is not None else f"{path}:"
    assert message.startswith(prefix), message
    for fragment in fragments:
        assert fragment in message, message
    return message


# --------------------------------------------------------------------------- checksum


def test_checksum_rule_by_hand():
    # Worked by hand from the published rule: '1' + '2' + '-'(1) + '3' = 7; letters, spaces,
    # '+' and '.' count 0.
    assert tle_checksum("12-3") == 7
    assert tle_checksum("A+. -") == 1
    # 9 + 1 + 9 + 1 = 20 -> 0 (mod 10)
    assert tle_checksum("9-9-") == 0
    # Only columns 1-68 count: a 69th character is the checksum itself.
    assert tle_checksum("0" * 67 + "1" + "9") == 1


def test_checksum_of_sgp4_verification_lines():
    # The first verification case in sgp4's shipped SGP4-VER.TLE (satellite 00005), first 69
    # columns (the file appends start/stop/step times to line 2).
    lines = [raw.rstrip("\n") for raw in SGP4_VER.read_text().splitlines() if raw[:2] in ("1 ", "2 ")]
    line1, line2 = lines[0][:69], lines[1][:69]
    assert line1.startswith("1 00005U") and line2.startswith("2 00005 ")
    for line in (line1, line2):
        assert int(line[68]) == published_checksum(line) == tle_checksum(line)
    # Across the whole file our checksum agrees with the published rule on every line.
    for line in lines:
        assert tle_checksum(line[:69]) == published_checksum(line[:69])


def test_sgp4_verification_entries_read_like_twoline2rv(tmp_path):
    # Every verification element set whose printed checksums hold is accepted, and the satrec
    # equals the one sgp4's own reader builds (deep-space, blank designator and blank element
    # number cases included).
    lines = [raw.rstrip("\n")[:69] for raw in SGP4_VER.read_text().splitlines() if raw[:2] in ("1 ", "2 ")]
    accepted = 0
    for line1, line2 in zip(lines[::2], lines[1::2]):
        if int(line1[68]) != published_checksum(line1) or int(line2[68]) != published_checksum(line2):
            continue  # a few cases in the file deliberately carry other checksums
        path = write(tmp_path, "ver.tle", f"{line1}\n{line2}\n")
        (element_set,) = read_elements(path)
        reference = Satrec.twoline2rv(line1, line2)
        assert element_set.norad_id == reference.satnum
        for attribute in (
            "inclo",
            "nodeo",
            "ecco",
            "argpo",
            "mo",
            "no_kozai",
            "bstar",
            "jdsatepoch",
            "jdsatepochF",
            "ndot",
            "nddot",
        ):
            assert getattr(element_set.satrec, attribute) == getattr(reference, attribute)
        assert element_set.satrec.operationmode == "i"
        accepted += 1
    assert accepted >= 25


# --------------------------------------------------------------------------- sample files


@pytest.mark.parametrize("file_name", SAMPLE_FILES)
def test_sample_files_parse_into_the_five_demo_satellites(file_name):
    element_sets = read_elements(SAMPLES / file_name)
    assert [es.norad_id for es in element_sets] == [norad_id for norad_id, _ in EXPECTED]
    want_names = ["" for _ in EXPECTED] if file_name == "demo.2le" else [name for _, name in EXPECTED]
    assert [es.name for es in element_sets] == want_names
    for es in element_sets:
        assert isinstance(es, ElementSet)
        assert es.epoch == EPOCH and es.epoch.tzinfo is not None
        assert es.satrec.error == 0
        assert es.source.startswith(f"{SAMPLES / file_name}:")


def test_tle_satrec_is_the_one_twoline2rv_builds():
    lines = demo_lines()
    for es, index in zip(read_elements(SAMPLES / "demo.tle"), range(0, len(lines), 3)):
        reference = Satrec.twoline2rv(lines[index + 1], lines[index + 2])
        for attribute in ("satnum", "inclo", "nodeo", "ecco", "argpo", "mo", "no_kozai", "bstar", "jdsatepoch", "jdsatepochF"):
            assert getattr(es.satrec, attribute) == getattr(reference, attribute)
        assert es.source == f"{SAMPLES / 'demo.tle'}:{index + 1}"


def test_demo_tles_load_in_skyfield_and_agree_with_our_satrec():
    # skyfield (reference library) reads the same lines; its TEME position matches sgp4's
    # output from our satrec (the same SGP4 underneath, so agreement is at rounding level).
    from skyfield.api import EarthSatellite, load
    from skyfield.sgp4lib import TEME

    timescale = load.timescale(builtin=True)
    lines = demo_lines()
    hours = np.arange(0.0, 24.0, 3.0)
    times = timescale.utc(2027, 1, 4, hours)
    whole, fraction = jday(2027, 1, 4, 0, 0, 0)
    for es, index in zip(read_elements(SAMPLES / "demo.tle"), range(0, len(lines), 3)):
        satellite = EarthSatellite(lines[index + 1], lines[index + 2], lines[index], timescale)
        assert abs((satellite.epoch.utc_datetime() - es.epoch).total_seconds()) < 1e-3
        reference_km = satellite.at(times).frame_xyz(TEME).km.T
        error, ours_km, _ = es.satrec.sgp4_array(np.full(hours.shape, whole), fraction + hours / 24.0)
        assert not error.any()
        assert np.abs(ours_km - reference_km).max() < 1e-6  # km, i.e. 1 mm


@pytest.mark.parametrize("omm_file", ["demo_omm.xml", "demo_omm.csv", "demo_omm.json"])
def test_tle_and_omm_of_the_same_orbit_agree_within_a_metre(omm_file):
    # The OMM files carry exactly the digits the TLE prints, so the two satrecs differ only by
    # floating-point rounding in unit conversions and the epoch's representation (well under a
    # millimetre). 1 m is far above that and far below what a slip of one unit in the last
    # printed digit would cause: 1e-4 deg of an angle at a = 6900 km is 12 m, 1e-8 rev/day of
    # mean motion grows to 0.4 m along track in a day and mostly more in angles. So the check
    # catches any copying or unit error between the forms.
    tle_sets = read_elements(SAMPLES / "demo.tle")
    omm_sets = read_elements(SAMPLES / omm_file)
    whole, fraction = jday(2027, 1, 3, 12, 0, 0)
    hours = np.array([0.0, 1.0, 4.5, 9.0, 13.25, 18.0, 24.0])
    jd = np.full(hours.shape, whole)
    fr = fraction + hours / 24.0
    for tle_set, omm_set in zip(tle_sets, omm_sets, strict=True):
        assert (tle_set.norad_id, tle_set.name, tle_set.epoch) == (omm_set.norad_id, omm_set.name, omm_set.epoch)
        e1, r1, v1 = tle_set.satrec.sgp4_array(jd, fr)
        e2, r2, v2 = omm_set.satrec.sgp4_array(jd, fr)
        assert not e1.any() and not e2.any()
        assert np.linalg.norm(r1 - r2, axis=1).max() < 1e-3  # km
        assert np.linalg.norm(v1 - v2, axis=1).max() < 1e-6  # km/s


@pytest.mark.parametrize("omm_file", ["demo_omm.xml", "demo_omm.csv", "demo_omm.json"])
def test_omm_satrec_prints_back_as_the_same_tle(omm_file):
    # sgp4's own exporter (reference library) prints the satrec built from the OMM; it must
    # give the shipped TLE lines character for character, checksums included.
    from sgp4.exporter import export_tle

    lines = demo_lines()
    for es, index in zip(read_elements(SAMPLES / omm_file), range(0, len(lines), 3), strict=True):
        assert export_tle(es.satrec) == (lines[index + 1], lines[index + 2])


def test_omm_files_carry_the_digits_the_tle_prints():
    lines = demo_lines()
    rows = (SAMPLES / "demo_omm.csv").read_text().splitlines()
    header = rows[0].split(",")
    for index, row in zip(range(0, len(lines), 3), rows[1:], strict=True):
        line1, line2 = lines[index + 1], lines[index + 2]
        record = dict(zip(header, row.split(",")))
        # Column positions from the TLE format (CelesTrak / Spacetrack Report #3).
        assert record["MEAN_MOTION"] == line2[52:63].strip()
        assert record["INCLINATION"] == line2[8:16].strip()
        assert record["RA_OF_ASC_NODE"] == line2[17:25].strip()
        assert record["ARG_OF_PERICENTER"] == line2[34:42].strip()
        assert record["MEAN_ANOMALY"] == line2[43:51].strip()
        assert record["ECCENTRICITY"] == "0." + line2[26:33]
        assert record["NORAD_CAT_ID"] == line1[2:7]
        mantissa, exponent = line1[54:59], int(line1[59:61])
        assert math.isclose(float(record["BSTAR"]), float(f"0.{mantissa}") * 10.0**exponent, rel_tol=1e-12)


def test_generator_reproduces_the_shipped_files(tmp_path):
    from tests.orbit_factory import load_demo_element_generator

    module = load_demo_element_generator()
    assert module.main(["--output-dir", str(tmp_path)]) == 0
    for file_name in SAMPLE_FILES:
        assert (tmp_path / file_name).read_bytes() == (SAMPLES / file_name).read_bytes(), file_name

    # Sun-synchronous inclinations, worked here from the J2 nodal regression of a circular orbit
    # (Vallado, Fundamentals of Astrodynamics and Applications, secular J2 effects):
    # dOmega/dt = -3/2 n J2 (R/a)^2 cos i = 360 deg per tropical year (365.2422 d), with
    # J2 = 1.08262668e-3 (WGS84/EGM96, from memory), R = 6378.137 km, mu = 398600.4418 km^3/s^2:
    # 97.593 deg at 550 km, 98.603 deg at 800 km. The 800 km value also matches the about
    # 98.6 deg of sun-synchronous inclination tables (e.g. Wertz & Larson SMAD; from memory).
    def by_hand_deg(height_km):
        a_km = 6378.137 + height_km
        n_rad_s = math.sqrt(398600.4418 / a_km**3)
        node_rate_rad_s = 2 * math.pi / (365.2422 * 86400)
        return math.degrees(math.acos(-node_rate_rad_s / (1.5 * n_rad_s * 1.08262668e-3 * (6378.137 / a_km) ** 2)))

    assert by_hand_deg(550.0) == pytest.approx(97.593, abs=0.001)
    assert by_hand_deg(800.0) == pytest.approx(98.6, abs=0.1)
    assert module.sun_synchronous_inclination_deg(550.0) == pytest.approx(by_hand_deg(550.0), abs=0.001)
    assert module.sun_synchronous_inclination_deg(800.0) == pytest.approx(by_hand_deg(800.0), abs=0.001)

    # Periods: Kepler's third law T = 2 pi sqrt(a^3/mu), a = 6378.137 km + h, mu = 398600.4418
    # km^3/s^2. The TLE prints mean motion to 1e-8 rev/day (relative 1e-9), so 1e-8 relative.
    heights_km = {99901: 550.0, 99902: 420.0, 99903: 800.0, 99904: 520.0, 99905: 600.0}
    for es in read_elements(SAMPLES / "demo.tle"):
        a_km = 6378.137 + heights_km[es.norad_id]
        assert es.period_s == pytest.approx(2 * math.pi * math.sqrt(a_km**3 / 398600.4418), rel=1e-8)
    # A 420 km orbit goes round in about 92.8 minutes (common practice, no published source).
    tarnbeck = select_element_set(read_elements(SAMPLES / "demo.tle"), norad_id=99902)
    assert tarnbeck.period_s / 60.0 == pytest.approx(92.8, abs=0.2)
    wrenling = select_element_set(read_elements(SAMPLES / "demo.tle"), norad_id=99901)
    assert math.degrees(wrenling.satrec.inclo) == pytest.approx(97.59, abs=0.01)


# --------------------------------------------------------------------------- accepted variants


def test_three_line_titles_with_zero_prefix_crlf_blank_lines_and_trailing_spaces(tmp_path):
    lines = demo_lines()
    text = "\r\n\r\n"
    for index in range(0, len(lines), 3):
        text += f"0 {lines[index]}   \r\n{lines[index + 1]}  \r\n\r\n{lines[index + 2]}\t\r\n\r\n"
    element_sets = read_elements(write(tmp_path, "crlf.txt", text))
    assert [(es.norad_id, es.name) for es in element_sets] == EXPECTED
    assert element_sets[0].source.endswith(":3")


def test_alpha5_catalog_number(tmp_path):
    # Alpha-5: A0001 is 10 * 10000 + 1 = 100001 ('A' = 10; I and O are skipped).
    lines = demo_lines()
    line1 = with_checksum(lines[1][:2] + "A0001" + lines[1][7:])
    line2 = with_checksum(lines[2][:2] + "A0001" + lines[2][7:])
    (element_set,) = read_elements(write(tmp_path, "alpha5.tle", f"{line1}\n{line2}\n"))
    assert element_set.norad_id == 100001 == element_set.satrec.satnum


@pytest.mark.parametrize(
    "epoch_text",
    ["2027-01-03T12:00:00.000000", "2027-01-03T12:00:00", "2027-01-03T12:00:00Z", "2027-01-03T12:00:00.000Z", "2027-003T12:00:00"],
)
def test_omm_epoch_forms(tmp_path, epoch_text):
    entries = json.loads((SAMPLES / "demo_omm.json").read_text())
    entry = dict(entries[0], EPOCH=epoch_text)
    (element_set,) = read_elements(write(tmp_path, "one.json", json.dumps(entry)))
    assert element_set.epoch == EPOCH
    assert element_set.norad_id == 99901


def test_omm_json_with_values_as_text(tmp_path):
    # Some OMM JSON services quote every value; the numbers must still be read.
    entries = json.loads((SAMPLES / "demo_omm.json").read_text())
    quoted = [{key: str(value) for key, value in entry.items()} for entry in entries]
    element_sets = read_elements(write(tmp_path, "quoted.json", json.dumps(quoted)))
    assert [(es.norad_id, es.name) for es in element_sets] == EXPECTED


# --------------------------------------------------------------------------- bad input


def test_bad_checksum(tmp_path):
    lines = demo_lines()
    given_digit = (published_checksum(lines[2]) + 3) % 10
    lines[2] = lines[2][:68] + str(given_digit)
    path = write(tmp_path, "bad_checksum.tle", "\n".join(lines) + "\n")
    expect_user_error(path, 3, f"checksum is {given_digit}, computed {published_checksum(lines[2])}")


def test_truncated_line(tmp_path):
    lines = demo_lines()
    lines[5] = lines[5][:50]
    path = write(tmp_path, "cut.tle", "\n".join(lines) + "\n")
    expect_user_error(path, 6, "50 columns", "69")


def test_short_file_line_1_only(tmp_path):
    lines = demo_lines()
    path = write(tmp_path, "short.tle", f"{lines[0]}\n{lines[1]}\n")
    expect_user_error(path, 2, "line 1 without line 2")


def test_wrong_line_number_column(tmp_path):
    lines = demo_lines()
    lines[2] = with_checksum("3" + lines[2][1:])
    path = write(tmp_path, "col1.tle", "\n".join(lines) + "\n")
    expect_user_error(path, 3, "column 1", "'2'")


def test_line_2_without_line_1(tmp_path):
    lines = demo_lines()
    path = write(tmp_path, "l2.tle", f"{lines[0]}\n{lines[2]}\n")
    expect_user_error(path, 2, "line 2 without a line 1")


def test_mismatched_catalog_numbers(tmp_path):
    lines = demo_lines()
    lines[5] = with_checksum(lines[5][:2] + "99909" + lines[5][7:])
    path = write(tmp_path, "mismatch.tle", "\n".join(lines) + "\n")
    expect_user_error(path, 6, "catalog number 99909", "99902")


def test_unparseable_field_is_named(tmp_path):
    lines = demo_lines()
    lines[2] = with_checksum(lines[2][:52] + " 15.05x9064" + lines[2][63:])
    path = write(tmp_path, "field.tle", "\n".join(lines) + "\n")
    expect_user_error(path, 3, "mean motion", "columns 53-63")


def test_tle_eccentricity_field_not_digits(tmp_path):
    lines = demo_lines()
    lines[2] = with_checksum(lines[2][:26] + "-001000" + lines[2][33:])
    path = write(tmp_path, "ecc.tle", "\n".join(lines) + "\n")
    expect_user_error(path, 3, "eccentricity", "columns 27-33")


@pytest.mark.parametrize(
    ("columns", "text", "fragment"),
    [
        ((8, 16), "181.0000", "inclination"),
        ((17, 25), "361.0000", "right ascension"),
        ((52, 63), "21.00000000", "mean motion"),
        ((52, 63), " 0.00000000", "mean motion"),
    ],
)
def test_tle_ranges(tmp_path, columns, text, fragment):
    lines = demo_lines()
    start, end = columns
    lines[2] = with_checksum(lines[2][:start] + text.rjust(end - start) + lines[2][end:])
    path = write(tmp_path, "range.tle", "\n".join(lines) + "\n")
    expect_user_error(path, 3, fragment)


def test_tle_epoch_day_out_of_range(tmp_path):
    lines = demo_lines()
    lines[1] = with_checksum(lines[1][:18] + "27366.50000000" + lines[1][32:])  # 2027 has 365 days
    path = write(tmp_path, "epoch.tle", "\n".join(lines) + "\n")
    expect_user_error(path, 2, "epoch day of year", "365")


def test_omm_eccentricity_out_of_range(tmp_path):
    rows = (SAMPLES / "demo_omm.csv").read_text().splitlines()
    header = rows[0].split(",")
    cells = rows[2].split(",")
    cells[header.index("ECCENTRICITY")] = "1.2"
    rows[2] = ",".join(cells)
    path = write(tmp_path, "ecc.csv", "\n".join(rows) + "\n")
    expect_user_error(path, 3, "ECCENTRICITY", "1.2")


def test_omm_csv_missing_keyword(tmp_path):
    rows = [row.split(",") for row in (SAMPLES / "demo_omm.csv").read_text().splitlines()]
    column = rows[0].index("MEAN_MOTION")
    text = "\n".join(",".join(cell for i, cell in enumerate(row) if i != column) for row in rows)
    path = write(tmp_path, "missing.csv", text + "\n")
    expect_user_error(path, 1, "MEAN_MOTION")


def test_omm_csv_bad_number(tmp_path):
    rows = (SAMPLES / "demo_omm.csv").read_text().splitlines()
    header = rows[0].split(",")
    cells = rows[3].split(",")
    cells[header.index("MEAN_MOTION")] = "14.27x"
    rows[3] = ",".join(cells)
    path = write(tmp_path, "number.csv", "\n".join(rows) + "\n")
    expect_user_error(path, 4, "MEAN_MOTION", "'14.27x'", "number")


def test_omm_json_missing_keyword_names_entry(tmp_path):
    entries = json.loads((SAMPLES / "demo_omm.json").read_text())
    del entries[1]["BSTAR"]
    path = write(tmp_path, "missing.json", json.dumps(entries, indent=2))
    lines = path.read_text().splitlines()
    start_line = [i + 1 for i, line in enumerate(lines) if line == "  {"][1]
    expect_user_error(path, start_line, "entry 2", "BSTAR", "missing")


def test_omm_json_bad_number_names_entry(tmp_path):
    entries = json.loads((SAMPLES / "demo_omm.json").read_text())
    entries[2]["INCLINATION"] = "ninety-seven"
    path = write(tmp_path, "bad.json", json.dumps(entries))
    expect_user_error(path, 1, "entry 3", "INCLINATION", "number")


def test_omm_json_nan_is_refused(tmp_path):
    entries = json.loads((SAMPLES / "demo_omm.json").read_text())
    text = json.dumps(entries[:1]).replace('"BSTAR": 0.00011', '"BSTAR": NaN')
    assert "NaN" in text
    expect_user_error(write(tmp_path, "nan.json", text), 1, "BSTAR")


def test_omm_xml_missing_keyword_and_bad_number(tmp_path):
    text = (SAMPLES / "demo_omm.xml").read_text()
    lines = text.splitlines()
    segment_lines = [i + 1 for i, line in enumerate(lines) if line.strip() == "<segment>"]
    missing = text.replace("<INCLINATION>97.8000</INCLINATION>", "", 1)
    expect_user_error(write(tmp_path, "missing.xml", missing), segment_lines[2], "segment 3", "INCLINATION")
    bad = text.replace("<MEAN_MOTION>15.48880433</MEAN_MOTION>", "<MEAN_MOTION>fast</MEAN_MOTION>", 1)
    bad_line = [i + 1 for i, line in enumerate(bad.splitlines()) if "fast" in line][0]
    expect_user_error(write(tmp_path, "bad.xml", bad), bad_line, "segment 2", "MEAN_MOTION", "number")


def test_omm_bad_epoch(tmp_path):
    rows = (SAMPLES / "demo_omm.csv").read_text().splitlines()
    rows[1] = rows[1].replace("2027-01-03T12:00:00.000000", "2027-01-03 noon")
    expect_user_error(write(tmp_path, "epoch.csv", "\n".join(rows)), 2, "EPOCH", "ISO 8601")
    rows[1] = rows[1].replace("2027-01-03 noon", "2027-02-30T12:00:00")
    expect_user_error(write(tmp_path, "epoch2.csv", "\n".join(rows)), 2, "EPOCH", "calendar")


def test_malformed_xml_and_json(tmp_path):
    expect_user_error(write(tmp_path, "broken.xml", "<ndm>\n<omm>\n</ndm>\n"), 3, "XML")
    expect_user_error(write(tmp_path, "broken.json", '[\n{"EPOCH": 1,\n]\n'), 3, "JSON")


def test_missing_file(tmp_path):
    path = tmp_path / "absent.tle"
    expect_user_error(path, None, "cannot read")


def test_empty_file(tmp_path):
    path = write(tmp_path, "empty.tle", "\n  \n\r\n")
    message = expect_user_error(path, None, "no element sets found")
    assert message == f"{path}: no element sets found; expected TLE, 3LE or OMM (XML/CSV/JSON)"


# --------------------------------------------------------------------------- element age


@pytest.fixture(scope="module")
def demo_sets():
    return read_elements(SAMPLES / "demo.tle")


def test_element_age_days(demo_sets):
    es = demo_sets[0]
    assert element_age_days(es, EPOCH - timedelta(days=1), EPOCH + timedelta(days=1)) == 0.0
    assert element_age_days(es, EPOCH + timedelta(days=3), EPOCH + timedelta(days=10)) == pytest.approx(3.0)
    assert element_age_days(es, EPOCH - timedelta(days=9), EPOCH - timedelta(days=2)) == pytest.approx(2.0)


def test_age_three_days_no_warning(demo_sets):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        check_element_age(demo_sets, EPOCH + timedelta(days=3), EPOCH + timedelta(days=10))


def test_age_ten_days_warns(demo_sets):
    with pytest.warns(PlannerWarning, match=r"WRENLING-1 \(99901\) are 10\.0 days from the window"):
        check_element_age(demo_sets[:1], EPOCH + timedelta(days=10), EPOCH + timedelta(days=17))
    # Elements from after the window count the same way.
    with pytest.warns(PlannerWarning, match="10.0 days"):
        check_element_age(demo_sets[:1], EPOCH - timedelta(days=17), EPOCH - timedelta(days=10))


def test_age_forty_days_refused_unless_allowed(demo_sets):
    start, end = EPOCH + timedelta(days=40), EPOCH + timedelta(days=47)
    with pytest.raises(UserError) as info:
        check_element_age(demo_sets, start, end)
    message = str(info.value)
    assert "\n" not in message and "demo.tle:1" in message and "--allow-stale" in message
    assert "40.0 days" in message
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        check_element_age(demo_sets, start, end, allow_stale=True)
    assert len(caught) == len(demo_sets)
    assert all(issubclass(w.category, PlannerWarning) for w in caught)


# --------------------------------------------------------------------------- selection


def test_select_by_id_and_name(demo_sets):
    assert select_element_set(demo_sets, norad_id=99903).name == "OSTRAVEL-2"
    assert select_element_set(demo_sets, name="  ostravel-2 ").norad_id == 99903
    assert select_element_set(demo_sets, norad_id=99905, name="ignored when an id is given").name == "MERROWFALL"


def test_select_unknown_lists_available(demo_sets):
    with pytest.raises(UserError) as info:
        select_element_set(demo_sets, norad_id=12345, source="sample_tle/demo.tle")
    message = str(info.value)
    assert message.startswith("sample_tle/demo.tle:") and "12345" in message
    assert "WRENLING-1 (99901)" in message and "MERROWFALL (99905)" in message
    with pytest.raises(UserError) as info:
        select_element_set(demo_sets, name="NO SUCH SAT")
    assert "demo.tle" in str(info.value) and "TARNBECK (99902)" in str(info.value)


def test_select_ambiguous_name_and_latest_epoch(demo_sets):
    twin = dataclasses.replace(demo_sets[1], norad_id=99999)
    with pytest.raises(UserError, match="ambiguous"):
        select_element_set([*demo_sets, twin], name="TARNBECK")
    newer = dataclasses.replace(demo_sets[1], epoch=EPOCH + timedelta(days=1))
    assert select_element_set([demo_sets[1], newer], norad_id=99902) is newer


# --------------------------------------------------------------------------- robustness

_VALID_TEXT = (SAMPLES / "demo.tle").read_text()

_edit = st.one_of(
    st.tuples(st.just("replace"), st.integers(0, 10_000), st.sampled_from(string.printable)),
    st.tuples(st.just("insert"), st.integers(0, 10_000), st.sampled_from(string.printable)),
    st.tuples(st.just("delete"), st.integers(0, 10_000), st.just("")),
    st.tuples(st.just("drop_line"), st.integers(0, 100), st.just("")),
    st.tuples(st.just("repeat_line"), st.integers(0, 100), st.just("")),
)


@pytest.fixture(scope="module")
def fuzz_dir(tmp_path_factory):
    return tmp_path_factory.mktemp("orbits-fuzz")


def _mutate(text: str, edits) -> str:
    for kind, position, char in edits:
        if kind in ("drop_line", "repeat_line"):
            lines = text.split("\n")
            index = position % len(lines)
            lines[index : index + 1] = [] if kind == "drop_line" else [lines[index]] * 2
            text = "\n".join(lines)
            continue
        index = position % (len(text) + 1)
        if kind == "replace":
            text = text[:index] + char + text[index + 1 :]
        elif kind == "insert":
            text = text[:index] + char + text[index:]
        else:
            text = text[:index] + text[index + 1 :]
    return text


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(_edit, min_size=1, max_size=6), st.sampled_from(["mutated.tle", "mutated.txt"]))
def test_mutated_tle_gives_element_sets_or_user_error(fuzz_dir, edits, file_name):
    path = fuzz_dir / file_name
    path.write_text(_mutate(_VALID_TEXT, edits), newline="")
    try:
        element_sets = read_elements(path)
    except UserError as exc:
        message = str(exc)
        assert "\n" not in message and "\r" not in message
        assert message.startswith(str(path))
    else:
        assert element_sets
        for es in element_sets:
            assert es.satrec.error == 0 and es.epoch.tzinfo is not None
            assert es.period_s > 0


# --------------------------------------------------------------------------- ranges of every field

# Python refuses int() of more than 4300 digits (Python docs, "Integer string conversion length
# limitation", sys.int_info.default_max_str_digits); 5000 digits must give a one-line error that
# does not repeat the number.
HUGE = "7" * 5000


def _omm_forms(tmp_path: Path, key: str, value: str) -> list[tuple[Path, int]]:
    """The first demo OMM with ``key`` set to ``value`` as CSV, XML, JSON number and JSON text,
    each with the line its error must name."""
    forms = []
    rows = (SAMPLES / "demo_omm.csv").read_text().splitlines()
    header = rows[0].split(",")
    cells = rows[1].split(",")
    cells[header.index(key)] = value
    forms.append((write(tmp_path, "huge.csv", f"{rows[0]}\n{','.join(cells)}\n"), 2))
    xml = (SAMPLES / "demo_omm.xml").read_text()
    old = next(line for line in xml.splitlines() if f"<{key}>" in line)
    xml = xml.replace(old, f"            <{key}>{value}</{key}>", 1)
    line = next(i + 1 for i, text in enumerate(xml.splitlines()) if f"<{key}>" in text)
    forms.append((write(tmp_path, "huge.xml", xml), line))
    entry = json.loads((SAMPLES / "demo_omm.json").read_text())[0]
    entry[key] = 0
    as_number = json.dumps(entry).replace(f'"{key}": 0', f'"{key}": {value}')
    forms.append((write(tmp_path, "huge-number.json", as_number), 1))
    entry[key] = value
    forms.append((write(tmp_path, "huge-text.json", json.dumps(entry)), 1))
    return forms


@pytest.mark.parametrize("key", ["NORAD_CAT_ID", "MEAN_MOTION", "REV_AT_EPOCH", "ELEMENT_SET_NO", "BSTAR"])
def test_omm_numbers_of_thousands_of_digits_are_refused_in_one_short_line(tmp_path, key):
    for path, line in _omm_forms(tmp_path, key, HUGE):
        message = expect_user_error(path, line, key)
        assert len(message) < 300 and HUGE[:100] not in message, message


def test_omm_catalog_number_of_nine_digits_propagates_like_a_small_one(tmp_path):
    # NORAD_CAT_ID: a positive whole number of at most 9 digits (the 9-digit catalog numbers
    # announced for when the 5-character TLE field runs out; from memory). The number plays no
    # part in SGP4 (Spacetrack Report #3), so the orbit must come out the same.
    (tmp_path / "small").mkdir()
    (tmp_path / "large").mkdir()
    small_path, _ = _omm_forms(tmp_path / "small", "NORAD_CAT_ID", "99901")[0]
    large_path, _ = _omm_forms(tmp_path / "large", "NORAD_CAT_ID", "999999999")[0]
    (small,), (large,) = read_elements(small_path), read_elements(large_path)
    assert large.norad_id == 999_999_999 and small.norad_id == 99901
    jd, fr = jday(2027, 1, 4, 6, 0, 0.0)
    assert large.satrec.sgp4(jd, fr) == small.satrec.sgp4(jd, fr)
    assert select_element_set([small, large], norad_id=999_999_999) is large


@pytest.mark.parametrize("value", ["0", "1000000000", "-5"])
def test_omm_catalog_number_outside_one_to_nine_digits_is_refused(tmp_path, value):
    path, line = _omm_forms(tmp_path, "NORAD_CAT_ID", value)[0]
    expect_user_error(path, line, "NORAD_CAT_ID", "allowed 1 to 999999999")


def _with_catalog_number(text: str) -> list[str]:
    lines = demo_lines()[:3]
    return [lines[0], with_checksum(lines[1][:2] + text + lines[1][7:]), with_checksum(lines[2][:2] + text + lines[2][7:])]


def test_tle_alpha5_edge_z9999_is_the_largest_number(tmp_path):
    # Alpha-5 (CelesTrak/NORAD two-line element format documentation, columns 3-7): a letter
    # A-Z without I and O, worth 10..33, then 4 digits; Z9999 = 33 * 10000 + 9999 = 339999.
    (element_set,) = read_elements(write(tmp_path, "z.tle", "\n".join(_with_catalog_number("Z9999")) + "\n"))
    assert element_set.norad_id == 339999


@pytest.mark.parametrize("text", ["I0001", "O0001", "a0001", "Z999A", "1 234"])
def test_tle_catalog_number_outside_the_five_character_field_is_refused(tmp_path, text):
    # I and O are not Alpha-5 letters (they read as 1 and 0); same source as above.
    path = write(tmp_path, "bad.tle", "\n".join(_with_catalog_number(text)) + "\n")
    expect_user_error(path, 2, "catalog number (columns 3-7)", "Alpha-5")


def _tle_with_epoch(year: int, day_text: str) -> str:
    lines = demo_lines()[:3]
    lines[1] = with_checksum(lines[1][:18] + f"{year % 100:02d}{day_text}" + lines[1][32:])
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize(
    ("two_digit_year", "day_text", "expected"),
    [
        # TLE epoch year convention (CelesTrak/NORAD two-line element format documentation):
        # 57-99 are 1957-1999, 00-56 are 2000-2056.
        (56, "001.00000000", datetime(2056, 1, 1, tzinfo=UTC)),
        (57, "001.00000000", datetime(1957, 1, 1, tzinfo=UTC)),
        (0, "001.00000000", datetime(2000, 1, 1, tzinfo=UTC)),
        # 2028 is a leap year (Gregorian rule: divisible by 4, not a century), day 366 exists.
        (28, "366.50000000", datetime(2028, 12, 31, 12, tzinfo=UTC)),
    ],
)
def test_tle_epoch_edges_are_accepted(tmp_path, two_digit_year, day_text, expected):
    (element_set,) = read_elements(write(tmp_path, "edge.tle", _tle_with_epoch(two_digit_year, day_text)))
    assert element_set.epoch == expected


@pytest.mark.parametrize(("two_digit_year", "day_text"), [(27, "000.50000000"), (56, "367.00000000"), (0, "999.00000000")])
def test_tle_epoch_day_outside_its_year_is_refused(tmp_path, two_digit_year, day_text):
    path = write(tmp_path, "day.tle", _tle_with_epoch(two_digit_year, day_text))
    expect_user_error(path, 2, "epoch day of year")


@pytest.mark.parametrize(
    "epoch_text",
    [
        "0001-01-01T00:00:00",
        "9999-12-31T23:59:59",
        "1956-12-31T23:59:59",
        "2101-01-01T00:00:00",
        "2100-12-31T23:59:59.9999999",
    ],  # the last rounds to the microsecond into 2101
)
def test_omm_epoch_outside_1957_to_2100_is_refused(tmp_path, epoch_text):
    # 1957: the first artificial satellite; 2100: past any element set's useful life
    # (planner.elements.EARLIEST_YEAR / LATEST_YEAR; common practice, no published source).
    path, line = _omm_forms(tmp_path, "EPOCH", epoch_text)[0]
    expect_user_error(path, line, "EPOCH", "1957 to 2100")


@pytest.mark.parametrize("epoch_text", ["1957-01-01T00:00:00", "2100-12-31T23:59:59.999999"])
def test_omm_epoch_edges_are_accepted(tmp_path, epoch_text):
    path, _ = _omm_forms(tmp_path, "EPOCH", epoch_text)[3]  # JSON, the epoch as text
    (element_set,) = read_elements(path)
    assert element_set.epoch == datetime.fromisoformat(epoch_text + "+00:00")


# ESC (0x1b), BEL (0x07), DEL (0x7f), CSI as a C1 control (0x9b), a C0 unit separator (0x1f) and
# a text-direction override (U+202E): control characters of ECMA-48 / ISO 6429 (C0 0x00-0x1f,
# C1 0x80-0x9f; DEL 0x7f) and a Unicode format character, all non-printable for Python's
# str.isprintable (Python docs).
CONTROL_CHARACTERS = [
    ("\x1b", "\\x1b"),
    ("\x07", "\\x07"),
    ("\x7f", "\\x7f"),
    ("\x9b", "\\x9b"),
    ("\x1f", "\\x1f"),
    ("\u202e", "\\u202e"),
]


@pytest.mark.parametrize(("char", "escaped"), CONTROL_CHARACTERS)
def test_tle_title_with_a_control_character_is_refused(tmp_path, char, escaped):
    lines = demo_lines()
    lines[3] = f"TARN{char}[2JBECK"
    path = write(tmp_path, "title.tle", "\n".join(lines) + "\n")
    message = expect_user_error(path, 4, "title line", escaped, "column 5")
    assert char not in message


@pytest.mark.parametrize(("char", "escaped"), CONTROL_CHARACTERS)
def test_omm_object_name_with_a_control_character_is_refused(tmp_path, char, escaped):
    for path, line in (_omm_forms(tmp_path, "OBJECT_NAME", f"WREN{char}[2JLING")[i] for i in (0, 3)):  # CSV, JSON
        message = expect_user_error(path, line, "OBJECT_NAME", escaped, "character 5")
        assert char not in message


def test_printable_names_with_spaces_and_accents_are_kept():
    assert control_character("WRENLING-1 (Cobbleford) é") is None
    assert control_character("A\tB") == (2, "\\t")

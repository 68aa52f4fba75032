"""The station's time zone: local hours of passes, the hour table and the calendar.

Sources (docs/references.md, "Time zones and clocks"): the IANA time zone database as zoneinfo reads it;
EU summer time starts on the last Sunday of March at 01:00 UTC (Directive 2000/84/EC, art. 2);
New Zealand daylight time ends on the first Sunday of April at 03:00 NZDT (New Zealand Daylight
Time Order 2007; both rules from memory, and checked against zoneinfo too); mean solar time is UT + east longitude / 15 h (Explanatory Supplement to the
Astronomical Almanac, local mean time); RFC 5545 for the calendar (TZID, VTIMEZONE, UTC "Z").
"""

from __future__ import annotations

import dataclasses
import re
import warnings
from datetime import UTC, datetime, timedelta
from zoneinfo import ZoneInfo

import pytest
from icalendar import Calendar

from planner.decision.forecast import forecast, hour_table, numbered_passes, pass_table, schedule
from planner.errors import PlannerWarning, UserError
from planner.output.export import calendar_ics
from planner.scenario import load_scenario
from planner.study import Study
from planner.timezones import LOCAL_MEAN_SOLAR, local_hours, local_text
from tests.conftest import DEMO, ROOT, run_planner

LONDON = "Europe/London"
# The demo scenario with its station's time_zone line taken out: a station that names no zone.
DEMO_WITHOUT_ZONE = re.sub(r"^time_zone = .*\n", "", DEMO.read_text(), count=1, flags=re.M)
# EU summer time 2027 begins Sunday 28 March at 01:00 UTC (Directive 2000/84/EC, art. 2).
LONDON_SPRING_FORWARD_UTC = datetime(2027, 3, 28, 1, 0, tzinfo=UTC)


def across_the_change(scenario, time_zone: str):
    """The demo scenario over the day around the 2027 spring-forward, its station on ``time_zone``."""
    window = scenario.window.model_copy(update={"start_utc": datetime(2027, 3, 27, 12, tzinfo=UTC), "days": 1})
    station = scenario.station.model_copy(update={"time_zone": time_zone})
    return scenario.model_copy(update={"window": window, "station": station})


def with_zone(study: Study, time_zone: str) -> Study:
    """The same study with the station's clock changed (passes and budgets unchanged)."""
    return dataclasses.replace(study, station=dataclasses.replace(study.station, time_zone=time_zone))


@pytest.fixture(scope="module")
def london():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PlannerWarning)  # element age, P.372 extrapolation notes
        study = Study.from_scenario(across_the_change(load_scenario(DEMO), LONDON), allow_stale=True)
        numbered = numbered_passes(study)
        first = study.candidate_names[0]
        return study, numbered, forecast(study, [first], numbered=numbered)


# ------------------------------------------------------------------ local hours


def test_local_hour_is_the_zoneinfo_civil_hour_across_the_clock_change(london):
    study, numbered, _ = london
    table = pass_table(study, numbered)
    zone = ZoneInfo(LONDON)  # outside reference: the IANA database through zoneinfo
    for row in table.itertuples():
        assert row.local_hour == row.tca_utc.astimezone(zone).hour
        # By the directive: GMT (UTC + 0) before 01:00 UTC on 28 March, BST (UTC + 1) after.
        offset_h = 1 if row.tca_utc >= LONDON_SPRING_FORWARD_UTC else 0
        assert row.local_hour == (row.tca_utc.astimezone(UTC).hour + offset_h) % 24
    # The window really crosses the change: passes on both sides.
    assert (table["tca_utc"] < LONDON_SPRING_FORWARD_UTC).any()
    assert (table["tca_utc"] >= LONDON_SPRING_FORWARD_UTC).any()


@pytest.mark.parametrize(
    ("zone", "utc", "hour"),
    [
        # London, spring forward at 01:00 UTC: 00:30 GMT, then 02:30 BST (01:xx local never happens).
        (LONDON, datetime(2027, 3, 28, 0, 30, tzinfo=UTC), 0),
        (LONDON, datetime(2027, 3, 28, 1, 30, tzinfo=UTC), 2),
        # Auckland, 4 April 2027 03:00 NZDT (14:00 UTC on the 3rd) back to 02:00 NZST: hour 2 twice.
        ("Pacific/Auckland", datetime(2027, 4, 3, 12, 30, tzinfo=UTC), 1),
        ("Pacific/Auckland", datetime(2027, 4, 3, 13, 30, tzinfo=UTC), 2),
        ("Pacific/Auckland", datetime(2027, 4, 3, 14, 30, tzinfo=UTC), 2),
        ("Pacific/Auckland", datetime(2027, 4, 3, 15, 30, tzinfo=UTC), 3),
    ],
)
def test_local_hours_at_the_daylight_saving_changes(zone, utc, hour):
    got = local_hours([utc], zone, 0.0)
    assert got.tolist() == [hour]  # the rule's hour, worked by hand from the cited orders
    assert got[0] == utc.astimezone(ZoneInfo(zone)).hour  # and zoneinfo's conversion


def test_local_mean_solar_is_utc_plus_longitude_over_15(london):
    study, numbered, _ = london
    longitude_deg = study.station.longitude_deg
    table = pass_table(with_zone(study, LOCAL_MEAN_SOLAR), numbered)
    for row in table.itertuples():
        # Mean solar time = UT + east longitude / 15 h (Explanatory Supplement, local mean time).
        assert row.local_hour == (row.tca_utc.astimezone(UTC) + timedelta(hours=longitude_deg / 15.0)).hour
    # Far east of Greenwich the mean-solar hour runs ahead: 23:30 UTC at 165 E is 10:30 next day.
    assert local_hours([datetime(2027, 3, 27, 23, 30, tzinfo=UTC)], LOCAL_MEAN_SOLAR, 165.0).tolist() == [10]
    assert local_hours([datetime(2027, 3, 27, 0, 30, tzinfo=UTC)], LOCAL_MEAN_SOLAR, -165.0).tolist() == [13]


def test_default_is_utc_and_the_hour_table_names_its_clock(london, tmp_path):
    assert load_scenario(scenario_with_zone(tmp_path, "# no time_zone key")).station.time_zone == "UTC"
    study, numbered, result = london
    utc_table = pass_table(with_zone(study, "UTC"), numbered)
    assert list(utc_table["local_hour"]) == [t.astimezone(UTC).hour for t in utc_table["tca_utc"]]
    hours = hour_table(result.outcomes, LONDON)
    assert set(hours["time_zone"]) == {LONDON}
    assert list(hours.columns) == [
        "candidate",
        "local_hour",
        "passes",
        "usable_passes",
        "usable_minutes",
        "data_volume_mbit",
        "time_zone",
    ]
    assert hours["passes"].sum() == len(result.outcomes)


# ------------------------------------------------------------------ the key


def scenario_with_zone(tmp_path, line: str):
    """The demo scenario with ``line`` added to [station], in a folder where its relative paths resolve."""
    for folder in ("sample_tle", "patterns"):
        (tmp_path / folder).symlink_to(ROOT / folder, target_is_directory=True)
    (tmp_path / "scenarios").mkdir()
    text = DEMO_WITHOUT_ZONE.replace('noise_environment = "rural"\n', f'noise_environment = "rural"\n{line}\n', 1)
    assert line in text
    path = tmp_path / "scenarios" / "zone.toml"
    path.write_text(text)
    return path


@pytest.mark.parametrize("value", ['"local_mean_solar"', '"local-mean-solar"'])
def test_both_spellings_of_mean_solar_are_one_name(tmp_path, value):
    scenario = load_scenario(scenario_with_zone(tmp_path, f"time_zone = {value}"))
    assert scenario.station.time_zone == LOCAL_MEAN_SOLAR


@pytest.mark.parametrize("value", ['"Mars/Olympus_Mons"', '"../../etc/passwd"', '""', '"Europe"', '"europe/london "', "1"])
def test_unknown_time_zone_is_one_line_naming_the_key(tmp_path, value):
    path = scenario_with_zone(tmp_path, f"time_zone = {value}")
    with pytest.raises(UserError) as info:
        load_scenario(path)
    message = str(info.value)
    assert "\n" not in message and message.startswith(str(path)), message
    assert "station.time_zone" in message and '"Europe/London"' in message, message
    if value.startswith('"'):
        assert repr(value.strip('"')) in message, message  # the value, quoted as planner.errors.quoted does


def test_unknown_time_zone_from_the_command_line(tmp_path):
    path = scenario_with_zone(tmp_path, 'time_zone = "Atlantis/Capital"')
    run = run_planner("week", path, "--quiet")
    assert run.returncode == 2
    lines = run.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("planner: error: "), run.stderr
    assert "time_zone" in lines[0] and "'Atlantis/Capital'" in lines[0] and "Europe/London" in lines[0]


# ------------------------------------------------------------------ calendar


def kept_instants(result, study):
    """(start, end) of each kept pass, cut to the whole second, as the calendar should hold them."""
    candidate = result.candidates[0]
    kept = schedule(result.outcomes_of(candidate)).chosen.sort_values("first_usable_s")
    return candidate, [
        (
            (study.start_utc + timedelta(seconds=float(r.first_usable_s))).replace(microsecond=0),
            (study.start_utc + timedelta(seconds=float(r.last_usable_s))).replace(microsecond=0),
            r,
        )
        for r in kept.itertuples()
    ]


def test_calendar_in_the_station_zone_keeps_the_instants(london):
    study, _, result = london
    candidate, expected = kept_instants(result, study)
    assert len(expected) > 1
    calendar = Calendar.from_ical(calendar_ics(result.outcomes, study, candidate))
    zones = list(calendar.walk("VTIMEZONE"))
    assert [str(z["TZID"]) for z in zones] == [LONDON]  # RFC 5545 3.6.5: a VTIMEZONE per TZID used
    events = sorted(calendar.walk("VEVENT"), key=lambda e: e.decoded("dtstart"))
    assert len(events) == len(expected)
    abbreviations = set()
    for event, (start, end, row) in zip(events, expected):
        assert event["DTSTART"].params["TZID"] == LONDON and event["DTEND"].params["TZID"] == LONDON
        assert event.decoded("dtstart").astimezone(UTC) == start
        assert event.decoded("dtend").astimezone(UTC) == end
        description = str(event["DESCRIPTION"])
        local_aos = row.aos_utc.astimezone(ZoneInfo(LONDON))
        assert f"AOS {local_aos:%Y-%m-%d %H:%M:%S} {local_aos.tzname()}" in description
        assert local_text(row.los_utc, LONDON, 0.0) in description
        abbreviations.add(local_aos.tzname())
    assert abbreviations == {"GMT", "BST"}  # events on both sides of the change


@pytest.mark.parametrize("time_zone", ["UTC", LOCAL_MEAN_SOLAR])
def test_calendar_in_utc_keeps_the_z_form(london, time_zone):
    study, _, result = london
    study = with_zone(study, time_zone)
    candidate, expected = kept_instants(result, study)
    text = calendar_ics(result.outcomes, study, candidate)
    calendar = Calendar.from_ical(text)
    assert list(calendar.walk("VTIMEZONE")) == []
    assert b"TZID" not in text
    starts = [line for line in text.decode().splitlines() if line.startswith("DTSTART")]
    assert starts and all(line.startswith("DTSTART:") and line.endswith("Z") for line in starts)  # RFC 5545 3.3.5
    events = sorted(calendar.walk("VEVENT"), key=lambda e: e.decoded("dtstart"))
    assert [e.decoded("dtstart") for e in events] == [start for start, _, _ in expected]
    if time_zone == LOCAL_MEAN_SOLAR:
        offset_h = study.station.longitude_deg / 15.0
        first_aos = expected[0][2].aos_utc.astimezone(UTC) + timedelta(hours=offset_h)
        assert f"AOS {first_aos:%Y-%m-%d %H:%M:%S} LMST" in str(events[0]["DESCRIPTION"])


# ------------------------------------------------------------------ terminal


def test_week_prints_the_hour_table_on_the_station_clock(london):
    from rich.console import Console

    from planner.cli.forecast import _print_hours

    study, _, result = london
    console = Console(record=True, width=200)
    _print_hours(console, study, result)
    text = console.export_text()
    assert f"usable minutes by local hour of TCA ({LONDON})" in " ".join(text.split())  # the title may wrap
    rows = [line.strip("│ ").split("│") for line in text.splitlines() if line.startswith("│")]
    printed_hours = [int(cells[0]) for cells in rows]
    assert printed_hours == sorted(set(result.outcomes["local_hour"]))  # every hour with a pass, once
    minutes = sum(float(cells[1]) for cells in rows)
    assert minutes == pytest.approx(result.weekly["usable_minutes"].sum(), abs=0.05 * len(rows))  # 0.1 min rounding


# ------------------------------------------------------------------ network stations

PARTNER = """
[[network_station]]
name = "Antipodes partner site"
latitude_deg = -41.3
longitude_deg = 174.8
time_zone = "{zone}"
"""


def network_scenario(tmp_path, zone: str):
    path = tmp_path / "network.toml"
    path.write_text(DEMO_WITHOUT_ZONE.replace('"../', f'"{ROOT}/') + PARTNER.format(zone=zone))
    return path


def test_each_network_station_keeps_its_own_zone(tmp_path):
    scenario = load_scenario(network_scenario(tmp_path, "Pacific/Auckland"))
    home = Study.from_scenario(scenario, allow_stale=True)
    partner = home.at_station("Antipodes partner site")
    assert (home.station.time_zone, partner.station.time_zone) == ("UTC", "Pacific/Auckland")
    # 4 January 2027 00:00 UTC is 13:00 NZDT (UTC + 13, New Zealand daylight time; from memory).
    assert local_hours([home.start_utc], partner.station.time_zone, partner.station.longitude_deg).tolist() == [13]


def test_unknown_zone_of_a_network_station_names_that_station(tmp_path):
    path = network_scenario(tmp_path, "Pacific/Nowhere")
    with pytest.raises(UserError) as info:
        load_scenario(path)
    message = str(info.value)
    assert "network_station" in message and "time_zone" in message and "'Pacific/Nowhere'" in message, message

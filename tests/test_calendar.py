"""The one-receiver calendar, the passes it drops for conflicts, and `planner passes --candidate`.

Sources: RFC 5545 (iCalendar; the written calendar is parsed back with the icalendar library),
weighted interval scheduling (Kleinberg & Tardos, Algorithm Design, ch. 6) for the schedule the
calendar follows, and the program's own output contracts (docs/references.md).
"""

from __future__ import annotations

import csv
import io
import json
from datetime import UTC, datetime, timedelta
from itertools import combinations

import numpy as np
import pandas as pd
import pytest
from icalendar import Calendar

from planner.decision.forecast import dropped_for_conflicts, forecast, schedule
from planner.output.export import REPORT_FILES, iso_utc
from planner.scenario import load_scenario
from planner.study import Study
from tests.conftest import run_planner as run
from tests.test_cli_passes import CONTRACT, assert_user_error
from tests.test_recommend import short_scenario


@pytest.fixture(scope="module")
def compared(tmp_path_factory):
    """One `compare` run writing the calendar, the JSON document and the report, with the study's forecast."""
    folder = tmp_path_factory.mktemp("calendar")
    path = short_scenario(folder)
    result = run(
        "compare",
        path,
        "--format",
        "json",
        "--output",
        folder / "compare.json",
        "--calendar",
        folder / "plan.ics",
        "--report",
        folder / "report",
        "--quiet",
    )
    assert result.returncode == 0, result.stderr
    study = Study.from_scenario(load_scenario(path))
    document = json.loads((folder / "compare.json").read_text())
    outcomes = forecast(study, [document["recommended"]]).outcomes
    return folder, path, study, outcomes, document


def _events(folder):
    # RFC 5545 sec. 3.6.1: a VEVENT's DTEND is the non-inclusive end of the event.
    calendar = Calendar.from_ical((folder / "plan.ics").read_bytes())
    return sorted(calendar.walk("VEVENT"), key=lambda e: e.decoded("dtstart"))


def _key(satellite, aos) -> tuple[str, str]:
    return str(satellite), aos if isinstance(aos, str) else iso_utc(aos)


def test_calendar_holds_exactly_the_kept_passes_and_none_overlap(compared):
    folder, _, study, outcomes, _ = compared
    events = _events(folder)
    kept = schedule(outcomes).chosen
    # Weighted interval scheduling (Kleinberg & Tardos, Algorithm Design, ch. 6): one event per
    # pass the schedule keeps, no more (the usable passes it drops are left out).
    assert len(events) == len(kept) > 0
    assert len(kept) < int(outcomes["usable"].sum()), "the demo window should hold a conflict"
    # RFC 5545 sec. 3.6.1 (DTEND non-inclusive): two events overlap when each starts before the
    # other ends; touching end points do not overlap.
    for a, b in combinations(events, 2):
        assert not (a.decoded("dtstart") < b.decoded("dtend") and b.decoded("dtstart") < a.decoded("dtend")), (
            str(a.get("summary")),
            str(b.get("summary")),
        )
    # RFC 5545 sec. 3.8.4.7: UID is unique per event; ours is catalog number and AOS, as before.
    uids = [str(e.get("uid")) for e in events]
    expected = {f"{r['norad_id']}-{iso_utc(r['aos_utc']).replace(':', '')}@planner": r for r in kept.to_dict("records")}
    assert sorted(uids) == sorted(expected)  # every kept pass once
    for event, uid in zip(events, uids):
        record = expected[uid]
        start = study.start_utc + timedelta(seconds=record["first_usable_s"])
        end = study.start_utc + timedelta(seconds=record["last_usable_s"])
        # RFC 5545 sec. 3.3.5: DATE-TIME has whole seconds; the times are cut to the second.
        assert timedelta(0) <= start - event.decoded("dtstart") < timedelta(seconds=1)
        assert timedelta(0) <= end - event.decoded("dtend") < timedelta(seconds=1)
        description = str(event.get("description"))
        assert f"Peak margin {record['max_margin_db']:.1f} dB" in description
        assert f"min {record['min_margin_db']:.1f}, median {record['median_margin_db']:.1f} dB" in description


def test_dropped_and_kept_passes_are_all_the_usable_passes(compared):
    # Output contract of `planner compare --format json`: `dropped_for_conflicts` lists the usable
    # passes of the recommended set-up that the one-receiver schedule leaves out; with the kept
    # passes (the calendar) they are every usable pass, each once.
    folder, _, _, outcomes, document = compared
    dropped = document["dropped_for_conflicts"]
    assert dropped, "the demo window should hold a conflict"
    events = _events(folder)
    kept = {(str(e.get("summary")).split(" pass")[0], str(e.get("uid")).split("-", 1)[1].split("@")[0]) for e in events}
    usable = outcomes[outcomes["usable"]]
    every = {(s, iso_utc(a).replace(":", "")) for s, a in zip(usable["satellite"], usable["aos_utc"])}
    left_out = {(row["satellite"], row["aos_utc"].replace(":", "")) for row in dropped}
    assert len(left_out) == len(dropped) and not (left_out & kept)
    assert left_out | kept == every
    # Each dropped pass overlaps the kept pass it names, and that pass is in the calendar.
    records = {_key(r["satellite"], r["aos_utc"]): r for r in usable.to_dict("records")}
    for row in dropped:
        partner_key = (row["conflicts_with_satellite"], row["conflicts_with_aos_utc"])
        assert (partner_key[0], partner_key[1].replace(":", "")) in kept
        partner = records[partner_key]
        begin = datetime.fromisoformat(row["usable_start_utc"].replace("Z", "+00:00"))
        finish = datetime.fromisoformat(row["usable_end_utc"].replace("Z", "+00:00"))
        partner_start = partner["aos_utc"] + timedelta(seconds=partner["first_usable_s"] - partner["aos_s"])
        partner_end = partner["aos_utc"] + timedelta(seconds=partner["last_usable_s"] - partner["aos_s"])
        assert begin < partner_end and partner_start < finish
        assert row["overlap_s"] > 0
    # The report's dropped.csv holds the same rows (output contract of the report folder).
    assert "dropped.csv" in REPORT_FILES
    with open(folder / "report" / "dropped.csv", newline="") as handle:
        rows = list(csv.DictReader(handle))
    assert [(r["satellite"], r["aos_utc"], r["conflicts_with_satellite"]) for r in rows] == [
        (d["satellite"], d["aos_utc"], d["conflicts_with_satellite"]) for d in dropped
    ]


def test_a_dropped_pass_names_the_kept_pass_it_overlaps_longest():
    # Weighted interval scheduling (Kleinberg & Tardos, Algorithm Design, ch. 6), worked by hand:
    # [0, 100] worth 5, [80, 150] worth 4 and [100, 200] worth 3. Keeping the first and the third
    # (touching at 100) gives 8 against 4 for the middle one alone, so the middle one is dropped;
    # it overlaps the first by 20 s and the third by 50 s.
    start = datetime(2027, 1, 4, tzinfo=UTC)
    starts, ends, values = np.array([0.0, 80.0, 100.0]), np.array([100.0, 150.0, 200.0]), [5.0, 4.0, 3.0]
    outcomes = pd.DataFrame(
        {
            "candidate": ["c"] * 3,
            "satellite": ["A", "B", "C"],
            "norad_id": [99001, 99002, 99003],
            "pass_number": [1, 1, 1],
            "aos_utc": [start + timedelta(seconds=s - 10) for s in starts],
            "aos_s": starts - 10,
            "first_usable_s": starts,
            "last_usable_s": ends,
            "usable_s": ends - starts,
            "usable": [True] * 3,
            "value": values,
        }
    )
    result = schedule(outcomes)
    assert list(result.chosen["satellite"]) == ["A", "C"] and result.value == 8.0
    dropped = dropped_for_conflicts(result)
    assert list(dropped["satellite"]) == ["B"]
    row = dropped.iloc[0]
    assert row["conflicts_with_satellite"] == "C" and row["overlap_s"] == pytest.approx(50.0)
    assert row["usable_start_utc"] == start + timedelta(seconds=80)
    assert row["usable_end_utc"] == start + timedelta(seconds=150)


def test_passes_with_a_candidate_agree_with_the_forecast(compared):
    # Output contract of `planner passes --format csv`: the plain header is unchanged, and
    # --candidate adds four trailing columns, filled from that candidate's forecast outcomes.
    _, path, study, outcomes, document = compared
    name = document["recommended"]
    plain = run("passes", path, "--format", "csv")
    assert plain.returncode == 0, plain.stderr
    assert next(csv.reader(io.StringIO(plain.stdout))) == CONTRACT
    result = run("passes", path, "--format", "csv", "--candidate", name)
    assert result.returncode == 0, result.stderr
    rows = list(csv.DictReader(io.StringIO(result.stdout)))
    assert list(rows[0]) == [*CONTRACT, "usable_start_utc", "usable_end_utc", "usable_s", "max_margin_db"]
    assert [(r["satellite"], r["aos_utc"]) for r in rows] == [
        (r["satellite"], r["aos_utc"]) for r in csv.DictReader(io.StringIO(plain.stdout))
    ]
    by_pass = {_key(r["satellite"], r["aos_utc"]): r for r in outcomes.to_dict("records")}
    assert len(by_pass) == len(rows)
    usable_rows = 0
    for row in rows:
        record = by_pass[(row["satellite"], row["aos_utc"])]
        if not record["usable"]:
            assert row["usable_start_utc"] == row["usable_end_utc"] == row["usable_s"] == row["max_margin_db"] == ""
            continue
        usable_rows += 1
        assert float(row["usable_s"]) == pytest.approx(record["usable_s"], abs=1e-6)
        assert float(row["max_margin_db"]) == pytest.approx(record["max_margin_db"], abs=0.005)
        assert row["usable_start_utc"] == iso_utc(study.start_utc + timedelta(seconds=record["first_usable_s"]))
        assert row["usable_end_utc"] == iso_utc(study.start_utc + timedelta(seconds=record["last_usable_s"]))
    assert usable_rows == int(outcomes["usable"].sum()) > 0


def test_passes_refuses_an_unknown_candidate_in_one_line(compared):
    _, path, study, _, _ = compared
    result = run("passes", path, "--candidate", "no-such-set-up")
    line = assert_user_error(result, "no-such-set-up", "allowed")
    assert all(name in line for name in study.candidate_names)

"""From margins to a decision: ranking, explanation, robustness, exports and the commands.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import csv
import io
import json
from datetime import timedelta

import pytest
from icalendar import Calendar

from planner.decision.forecast import forecast
from planner.decision.recommend import _band_minutes, recommend
from planner.output.export import calendar_ics
from planner.scenario import load_scenario
from planner.study import Study
from tests.conftest import DEMO, ROOT
from tests.conftest import run_planner as run


def short_scenario(tmp_path, days=1.5, extra_candidates="", replace=()):
    """The demo scenario over a shorter window, with absolute paths so it can live anywhere."""
    text = DEMO.read_text().replace('"../', f'"{ROOT}/').replace("days = 7", f"days = {days}")
    for old, new in replace:
        assert old in text
        text = text.replace(old, new)
    path = tmp_path / "short.toml"
    path.write_text(text + extra_candidates)
    return path


@pytest.fixture(scope="module")
def demo_short(tmp_path_factory):
    path = short_scenario(tmp_path_factory.mktemp("short"))
    study = Study.from_scenario(load_scenario(path))
    result = forecast(study)
    return path, study, result, recommend(result, study.satellites, study.candidates)


DOMINATED = """
[[candidate]]
# The close turnstile behind 60 m of thin cable with the LNA in the shack: worse everywhere.
name = "close-on-thin-cable"
pattern = "{root}/patterns/turnstile-close.csv"
feedline = [{{ cable = "RG-174", length_m = 60.0 }}]
connectors = 6
lna_position = "receiver"
"""


def test_a_dominant_candidate_is_recommended(tmp_path):
    # Constructed case: the same antenna and LNA, one with a short low-loss feed and one
    # behind 60 m of thin cable with the LNA after it. Friis and the cable loss make the
    # first better at every sample, so it must be recommended, and robustly.
    path = short_scenario(
        tmp_path,
        extra_candidates=DOMINATED.format(root=ROOT),
        replace=[
            (
                'feedline = [{ cable = "RG-213", length_m = 20.0 }]\nconnectors = 4\n\n[[candidate]]\n# The same turnstile',
                'feedline = [{ cable = "RG-213", length_m = 2.0 }]\nconnectors = 2\n\n[[candidate]]\n# The same turnstile',
            )
        ],
    )
    study = Study.from_scenario(load_scenario(path))
    result = forecast(study, ["turnstile-close", "close-on-thin-cable"])
    decision = recommend(result, study.satellites, study.candidates)
    assert decision.recommended == "turnstile-close"
    assert decision.robust
    by_name = {s.candidate: s for s in decision.ranking}
    assert by_name["turnstile-close"].score > by_name["close-on-thin-cable"].score


def test_explanation_names_the_bands_where_candidates_differ(demo_short):
    # The close- and far-reflector turnstiles trade horizon for overhead (image theory,
    # Balanis ch. 4); the explanation must name each band where the recommended set-up
    # and the runner-up differ by a notable amount, and no other band.
    _, study, result, decision = demo_short
    best, runner = decision.ranking[0].candidate, decision.ranking[1].candidate
    bands = _band_minutes(result.outcomes)
    difference = bands.loc[best] - bands.loc[runner]
    assert (difference.abs() >= 0.5).any()
    for band, minutes in difference.items():
        mentioned = f"{band} deg (" in decision.explanation
        assert mentioned == (abs(minutes) >= 0.5), (band, minutes, decision.explanation)
    assert decision.recommended in decision.explanation and runner in decision.explanation


def test_robustness_shifts_are_reported(demo_short):
    _, study, _, decision = demo_short
    assert set(decision.winner_by_shift_db) == {0.0, -2.0, 2.0}
    assert decision.winner_by_shift_db[0.0] == decision.recommended
    assert ("holds" in decision.explanation) == decision.robust


def test_calendar_parses_back_with_the_same_passes(demo_short):
    # RFC 5545 via the icalendar library: parse the file back and find every pass the
    # one-receiver schedule keeps for the recommended set-up (the schedule the score is, weighted
    # interval scheduling, Kleinberg & Tardos, Algorithm Design, ch. 6), with its first and last
    # usable moment. tests/test_calendar.py checks overlaps and the passes left out.
    _, study, result, decision = demo_short
    text = calendar_ics(result.outcomes, study, decision.recommended)
    events = [c for c in Calendar.from_ical(text).walk("VEVENT")]
    usable = decision.schedules[decision.recommended].chosen.sort_values("first_usable_s")
    assert len(events) == len(usable) > 0
    for event, record in zip(events, usable.to_dict("records")):
        start = study.start_utc + timedelta(seconds=record["first_usable_s"])
        end = study.start_utc + timedelta(seconds=record["last_usable_s"])
        assert abs((event.decoded("dtstart") - start).total_seconds()) < 1.0
        assert abs((event.decoded("dtend") - end).total_seconds()) < 1.0
        assert record["satellite"] in str(event.get("summary"))
    assert len({str(e.get("uid")) for e in events}) == len(events)


def test_compare_json_follows_the_contract(demo_short, tmp_path):
    # Output contract: {"recommended": NAME, "ranking": [{"candidate", "score", "usable_minutes",
    # "data_volume_mbit"}...], "explanation": TEXT}
    path = demo_short[0]
    out = tmp_path / "compare.json"
    result = run("compare", path, "--format", "json", "--output", out, "--quiet")
    assert result.returncode == 0, result.stderr
    document = json.loads(out.read_text())
    assert {"recommended", "ranking", "explanation"} <= set(document)
    assert document["recommended"] == document["ranking"][0]["candidate"]
    for entry in document["ranking"]:
        assert {"candidate", "score", "usable_minutes", "data_volume_mbit"} <= set(entry)
    scores = [e["score"] for e in document["ranking"]]
    assert scores == sorted(scores, reverse=True)
    # The demo receives at 435-438 MHz, above the 0.3-250 MHz of ITU-R P.372's man-made noise lines:
    # that is said once, as a modelling note of the comparison, not as a warning on stderr.
    assert document["model_notes"] == ["ITU-R P.372 rural noise is given for 0.3-250 MHz; it is extrapolated above 250 MHz here"]
    assert "P.372" not in result.stderr


def test_week_csv_follows_the_contract(demo_short):
    path = demo_short[0]
    result = run("week", path, "--format", "csv", "--quiet")
    assert result.returncode == 0, result.stderr
    rows = list(csv.DictReader(io.StringIO(result.stdout)))
    assert list(rows[0]) == ["candidate", "satellite", "passes", "usable_passes", "usable_minutes", "data_volume_mbit", "dropouts"]
    scenario = load_scenario(path)
    assert len(rows) == len(scenario.candidate) * len(scenario.satellite)  # one row per candidate and satellite
    for row in rows:
        assert int(row["usable_passes"]) <= int(row["passes"])


def test_report_folder_holds_tables_figures_and_summary(demo_short, tmp_path):
    path = demo_short[0]
    report = tmp_path / "report"
    result = run("compare", path, "--report", report, "--calendar", tmp_path / "plan.ics", "--quiet")
    assert result.returncode == 0, result.stderr
    assert "Recommended:" in result.stdout
    for name in ("summary.md", "weekly.csv", "passes.csv", "bands.csv", "hours.csv", "compare.json", "calendar.ics"):
        assert (report / name).stat().st_size > 0, name
    pngs = sorted(p.stem for p in (report / "figures").glob("*.png"))
    svgs = sorted(p.stem for p in (report / "figures").glob("*.svg"))
    assert pngs == svgs and {"elevation-cuts", "usable-minutes", "margin-by-band", "pass-margins"} <= set(pngs)
    assert sum(stem.startswith("sky-") for stem in pngs) == 5
    assert "Recommended" in (report / "summary.md").read_text()
    assert (tmp_path / "plan.ics").read_bytes().startswith(b"BEGIN:VCALENDAR")
    # hours.csv names its clock: the demo station gives no time_zone, so UTC.
    hours = (report / "hours.csv").read_text().splitlines()
    assert hours[0].split(",")[:2] == ["candidate", "local_hour"] and hours[0].endswith(",time_zone")
    assert len(hours) > 1 and all(line.endswith(",UTC") for line in hours[1:])
    assert "calendar times: UTC" in (report / "summary.md").read_text()
    # The recommended set-up's build sheet, and the terminal output's last line points to the command.
    sheet = json.loads((report / "build_sheet.json").read_text())
    recommended = json.loads((report / "compare.json").read_text())["recommended"]
    assert sheet["candidate"] == recommended and sheet["build_data"] is True
    assert sheet["phasing_line"]["cut_cm"] > 0 and sheet["cut_tolerances"]
    markdown = (report / "build_sheet.md").read_text()
    assert markdown.startswith(f"# Build sheet: {recommended}") and "Cut tolerances" in markdown
    assert result.stdout.strip().splitlines()[-1].startswith(f"What to cut and assemble for {recommended}: planner sheet ")


def test_compare_needs_candidates(tmp_path):
    text = DEMO.read_text().replace('"../', f'"{ROOT}/')
    text = text[: text.index("[[candidate]]")] + text[text.index("[criteria]") :]
    path = tmp_path / "nocand.toml"
    path.write_text(text)
    result = run("compare", path, "--quiet")
    assert result.returncode == 2 and "candidate" in result.stderr and "Traceback" not in result.stderr

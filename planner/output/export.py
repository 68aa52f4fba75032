"""Machine-readable outputs: the output column contracts as CSV and JSON."""

from __future__ import annotations

import json
import math
from collections.abc import Iterable, Sequence
from datetime import UTC, datetime, timedelta

from planner.passes import Pass

PASS_COLUMNS = (
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
)


def iso_utc(moment: datetime) -> str:
    """ISO 8601 UTC to the nearest second, ending in ``Z``."""
    moment = moment.astimezone(UTC)
    rounded = (moment + timedelta(microseconds=500_000)).replace(microsecond=0)
    return rounded.strftime("%Y-%m-%dT%H:%M:%SZ")


def pass_row(p: Pass) -> dict:
    """One pass as the contract's columns (angles to 0.01 deg, ranges to 0.1 km)."""
    return {
        "satellite": p.satellite,
        "norad_id": p.norad_id,
        "aos_utc": iso_utc(p.aos_utc),
        "tca_utc": iso_utc(p.tca_utc),
        "los_utc": iso_utc(p.los_utc),
        "duration_s": round(p.duration_s, 1),
        "max_elevation_deg": round(p.max_elevation_deg, 2),
        "aos_azimuth_deg": round(p.aos_azimuth_deg, 2),
        "tca_azimuth_deg": round(p.tca_azimuth_deg, 2),
        "los_azimuth_deg": round(p.los_azimuth_deg, 2),
        "min_range_km": round(p.min_range_km, 1),
    }


# A cell starting with one of these is read as a formula by spreadsheet programs (OWASP,
# "CSV Injection": =, +, -, @, tab and carriage return).
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def csv_cell(value) -> str:
    """One CSV field (RFC 4180): quoted when it must be; text a spreadsheet would run as a formula
    gets a leading apostrophe and quotes, so it shows as text. Numbers are never changed."""
    if value is None:
        return ""
    text = str(value)
    formula = isinstance(value, str) and text.startswith(FORMULA_STARTS) and not _is_number(text)
    if formula:
        text = "'" + text
    if formula or any(c in text for c in ',"\n\r'):
        return '"' + text.replace('"', '""') + '"'
    return text


def to_csv(rows: Iterable[dict], columns: Sequence[str]) -> str:
    """Rows as CSV with a header row, one line per row ending in LF; keys not in ``columns`` are left out."""
    names = list(columns)
    lines = [",".join(csv_cell(name) for name in names)]
    lines += [",".join(csv_cell(row.get(name)) for name in names) for row in rows]
    return "\n".join(lines) + "\n"


def _finite(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def to_json(data) -> str:
    """JSON with NaN/inf written as null (strict JSON readers refuse NaN)."""

    def clean(obj):
        if isinstance(obj, dict):
            return {k: clean(v) for k, v in obj.items()}
        if isinstance(obj, (list, tuple)):
            return [clean(v) for v in obj]
        return _finite(obj)

    return json.dumps(clean(data), indent=2) + "\n"


WEEK_COLUMNS = ("candidate", "satellite", "passes", "usable_passes", "usable_minutes", "data_volume_mbit", "dropouts")


def week_rows(weekly) -> list[dict]:
    """The weekly table as the contract's rows (minutes to 0.01, megabits to 0.001)."""
    rows = []
    for record in weekly.to_dict("records"):
        rows.append(
            {
                "candidate": record["candidate"],
                "satellite": record["satellite"],
                "passes": int(record["passes"]),
                "usable_passes": int(record["usable_passes"]),
                "usable_minutes": round(float(record["usable_minutes"]), 2),
                "data_volume_mbit": round(float(record["data_volume_mbit"]), 3),
                "dropouts": int(record["dropouts"]),
                "one_receiver_limit": False,  # every usable pass counts, overlapping or not
            }
        )
    return rows


def calendar_ics(outcomes, study, candidate: str) -> bytes:
    """RFC 5545 iCalendar of the passes one receiver takes with one candidate.

    The events are the one-receiver schedule's kept passes (``planner.decision.forecast.schedule``),
    so no two overlap; the passes it drops for a conflict are not in the calendar (the comparison
    lists them). DTSTART/DTEND are the first and last usable moments of the pass, cut to the whole
    second (both are cut alike, so passes that do not overlap still do not). The UID is stable for
    the same satellite and AOS, so re-importing a calendar updates rather than duplicates.

    Times are written on the station's clock (``study.station.time_zone``, see
    :func:`_calendar_time`) so calendar apps show the station's local time; the instants stay
    exact.  The description gives AOS, TCA and LOS in UTC and AOS/LOS in local time with the
    zone's abbreviation.
    """
    from icalendar import Calendar, Event

    from planner.decision.forecast import schedule
    from planner.timezones import local_text, zone_label

    zone_name, longitude_deg = study.station.time_zone, study.station.longitude_deg
    calendar = Calendar()
    calendar.add("prodid", "-//planner//ground-station pass plan//EN")
    calendar.add("version", "2.0")
    calendar.add("x-wr-calname", f"{study.station.name}: one-receiver plan ({candidate})")
    kept = schedule(outcomes[outcomes["candidate"] == candidate]).chosen.sort_values("first_usable_s", kind="stable")
    for record in kept.to_dict("records"):
        start = study.start_utc + timedelta(seconds=float(record["first_usable_s"]))
        end = study.start_utc + timedelta(seconds=float(record["last_usable_s"]))
        event = Event()
        event.add("uid", f"{record['norad_id']}-{iso_utc(record['aos_utc']).replace(':', '')}@planner")
        event.add("dtstamp", study.start_utc)
        event.add("dtstart", _calendar_time(start.replace(microsecond=0), zone_name))
        event.add("dtend", _calendar_time(end.replace(microsecond=0), zone_name))
        event.add("summary", f"{record['satellite']} pass, max el {record['max_elevation_deg']:.0f} deg")
        event.add("location", study.station.name)
        event.add(
            "description",
            f"Candidate {candidate}. Peak margin {record['max_margin_db']:.1f} dB "
            f"(min {record['min_margin_db']:.1f}, median {record['median_margin_db']:.1f} dB). "
            f"AOS {iso_utc(record['aos_utc'])}, TCA {iso_utc(record['tca_utc'])}, LOS {iso_utc(record['los_utc'])}. "
            f"Usable {iso_utc(start)} to {iso_utc(end)} ({record['usable_s']:.0f} s), {record['dropouts']} dropouts, "
            f"{record['data_volume_bit'] / 1e6:.2f} Mbit. "
            f"Local time, {zone_label(zone_name, longitude_deg)}: "
            f"AOS {local_text(record['aos_utc'], zone_name, longitude_deg)}, "
            f"LOS {local_text(record['los_utc'], zone_name, longitude_deg)}.",
        )
        calendar.add_component(event)
    timezone = _vtimezone(zone_name, study.start_utc, study.end_utc)
    if timezone is not None and len(kept):
        calendar.subcomponents.insert(0, timezone)
    return calendar.to_ical()


def _calendar_time(moment: datetime, zone_name: str) -> datetime:
    """An instant as a calendar writes it: the station's IANA zone (DTSTART;TZID=...), else UTC.

    UTC itself and ``local-mean-solar`` (a clock no calendar app knows) keep the UTC ``Z`` form.
    """
    from planner.timezones import is_mean_solar, zone_info

    if zone_name == "UTC" or is_mean_solar(zone_name):
        return moment.astimezone(UTC)
    return moment.astimezone(zone_info(zone_name))


def _vtimezone(zone_name: str, start_utc: datetime, end_utc: datetime):
    """The VTIMEZONE (RFC 5545, 3.6.5) an event with TZID needs, covering the window; None for UTC forms.

    icalendar builds it from the zoneinfo rules; a day either side of the window keeps every
    event's local time inside the span it describes.
    """
    from icalendar import Timezone

    from planner.timezones import is_mean_solar, zone_info

    if zone_name == "UTC" or is_mean_solar(zone_name):
        return None
    return Timezone.from_tzinfo(
        zone_info(zone_name),
        first_date=(start_utc - timedelta(days=1)).date(),
        last_date=(end_utc + timedelta(days=1)).date(),
    )


def pass_of_widest_spread(forecast) -> tuple[str, int] | None:
    """(satellite, pass_number) of the pass whose usable time differs most between candidates.

    Ties go to the higher pass; passes no candidate can use are passed over when others exist.
    """
    outcomes = forecast.outcomes
    if outcomes.empty:
        return None
    by_pass = outcomes.groupby(["satellite", "pass_number"]).agg(
        spread_s=("usable_s", lambda u: u.max() - u.min()),
        best_s=("usable_s", "max"),
        max_elevation_deg=("max_elevation_deg", "first"),
    )
    if (by_pass["best_s"] > 0).any():
        by_pass = by_pass[by_pass["best_s"] > 0]
    satellite, pass_number = by_pass.sort_values(["spread_s", "max_elevation_deg"], ascending=False).index[0]
    return satellite, int(pass_number)


def write_figures(folder, study, forecast, recommendation, *, rules=None) -> list:
    """Every report figure as PNG and SVG in ``folder``; returns the paths written.

    ``rules`` (planner.fileio.WriteRules) decide which files may be written; by default any."""
    from planner.fileio import REPLACE_ANY, ensure_folder
    from planner.output import plots

    rules = rules or REPLACE_ANY
    folder = ensure_folder(folder, "figure folder")
    threshold = study.scenario.criteria.min_margin_db
    written = []
    samples = forecast.samples
    best = recommendation.recommended
    colours = plots.candidate_colours(list(forecast.outcomes["candidate"].unique()))
    for satellite in samples["satellite"].unique():
        mine = samples[(samples["candidate"] == best) & (samples["satellite"] == satellite)]
        fig = plots.sky_chart(
            mine,
            title=f"{satellite}: tracks over {study.station.name}, margin with {best}",
            min_margin_db=threshold,
            horizon_mask=study.station.mask,
        )
        written += plots.save_figure(fig, folder, f"sky-{_slug(satellite)}", rules=rules)
    patterns = {name: study.candidate(name).pattern for name in forecast.outcomes["candidate"].unique()}
    written += plots.save_figure(plots.elevation_cuts(patterns, colours=colours), folder, "elevation-cuts", rules=rules)
    chosen = pass_of_widest_spread(forecast)
    if chosen is not None:
        satellite, number = chosen
        frames = {
            name: group
            for name, group in samples[(samples["satellite"] == satellite) & (samples["pass_number"] == number)].groupby(
                "candidate", sort=False
            )
        }
        title = f"{satellite} pass {number}: the pass where the candidates differ most"
        written += plots.save_figure(
            plots.pass_margins(frames, title=title, min_margin_db=threshold, colours=colours), folder, "pass-margins", rules=rules
        )
    written += plots.save_figure(plots.usable_minutes_bars(forecast.weekly, colours=colours), folder, "usable-minutes", rules=rules)
    written += plots.save_figure(
        plots.margin_by_band(samples, min_margin_db=threshold, colours=colours), folder, "margin-by-band", rules=rules
    )
    return written


FIGURE_STEMS = ("elevation-cuts", "pass-margins", "usable-minutes", "margin-by-band")
"""The figures of every comparison; each satellite adds its sky chart, ``sky-<name>``."""
REPORT_FILES = (
    "weekly.csv",
    "passes.csv",
    "bands.csv",
    "hours.csv",
    "ranking.csv",
    "dropped.csv",
    "compare.json",
    "calendar.ics",
    "summary.md",
    "build_sheet.md",
    "build_sheet.json",
)


def figure_file_names(satellites: Sequence[str]) -> list[str]:
    """Every file :func:`write_figures` may write for these satellites (PNG and SVG of each figure)."""
    stems = [*FIGURE_STEMS, *(f"sky-{_slug(name)}" for name in satellites)]
    return [f"{stem}.{fmt}" for stem in stems for fmt in ("png", "svg")]


def report_file_names(satellites: Sequence[str]) -> list[str]:
    """Every file :func:`write_report` may write, relative to the report folder."""
    return [*REPORT_FILES, *(f"figures/{name}" for name in figure_file_names(satellites))]


def _slug(text: str) -> str:
    return "".join(c.lower() if c.isalnum() else "-" for c in text).strip("-")


def _hours_zone(study) -> str:
    """The clock the hour tables count in, as their ``time_zone`` column names it."""
    from planner.timezones import zone_label

    return zone_label(study.station.time_zone, study.station.longitude_deg)


def _markdown_table(rows: list[dict]) -> str:
    if not rows:
        return "(none)\n"
    keys = list(rows[0])
    lines = ["| " + " | ".join(keys) + " |", "|" + "---|" * len(keys)]
    lines += ["| " + " | ".join(str(r[k]) for k in keys) + " |" for r in rows]
    return "\n".join(lines) + "\n"


def write_report(folder, study, forecast, recommendation, *, rules=None) -> list:
    """A report folder: tables as CSV, figures, the recommended set-up's calendar, summary.md."""
    from pathlib import Path

    from planner.decision.forecast import NO_RECEIVER_LIMIT_TEXT, ONE_RECEIVER_LIMIT_TEXT, band_table, hour_table
    from planner.decision.recommend import DROPPED_ROW_KEYS
    from planner.fileio import REPLACE_ANY, ensure_folder, write_atomically
    from planner.link.safety import STATION_CAUTIONS

    rules = rules or REPLACE_ANY
    folder = ensure_folder(folder, "report folder")
    written = []
    outcomes = forecast.outcomes.drop(columns=["usable_windows"], errors="ignore")
    tables = {
        "weekly.csv": (week_rows(forecast.weekly), WEEK_COLUMNS),
        "passes.csv": (_records(outcomes), list(outcomes.columns)),
        "bands.csv": (_records(band_table(forecast.outcomes)), None),
        "hours.csv": (_records(hour_table(forecast.outcomes, _hours_zone(study))), None),
        "ranking.csv": (recommendation.to_contract()["ranking"], None),
        "dropped.csv": (recommendation.dropped_rows(), DROPPED_ROW_KEYS),
    }
    for name, (rows, columns) in tables.items():
        columns = columns or (list(rows[0]) if rows else [])
        written.append(write_atomically(folder / name, to_csv(rows, columns), rules=rules))
    written.append(write_atomically(folder / "compare.json", to_json(recommendation.to_contract()), rules=rules))
    written.append(
        write_atomically(folder / "calendar.ics", calendar_ics(forecast.outcomes, study, recommendation.recommended), rules=rules)
    )
    figures = write_figures(folder / "figures", study, forecast, recommendation, rules=rules)
    written += figures
    written += _write_build_sheet(folder, study, recommendation, rules)
    ranking = [
        {
            "candidate": s.candidate,
            f"score ({recommendation.score_unit})": f"{s.score:.2f}",
            "usable passes": s.usable_passes,
            "usable minutes": f"{s.usable_minutes:.1f}",
            "data volume (Mbit)": f"{s.data_volume_mbit:.1f}",
            "dropouts": s.dropouts,
            "lost to conflicts": f"{s.lost_to_conflicts:.2f}",
            "usable passes, no limit": s.all_usable_passes,
            "dropouts, no limit": s.all_dropouts,
        }
        for s in recommendation.ranking
    ]
    summary = [
        f"# Antenna set-up for {study.station.name}",
        "",
        f"Window: {iso_utc(study.start_utc)} to {iso_utc(study.end_utc)}; objective: {recommendation.objective}; "
        f"a sample counts at {study.scenario.criteria.min_margin_db:g} dB margin or more, a pass at "
        f"{study.scenario.criteria.min_usable_s:g} s usable.",
        "",
        f"**Recommended: {recommendation.recommended}**"
        + ("" if recommendation.robust else " (sensitive to the budget; see below)"),
        "",
        recommendation.explanation,
        "",
        "## Ranking (one receiver)",
        "",
        ONE_RECEIVER_LIMIT_TEXT + ' The "no limit" columns count every usable pass, as planner week does.',
        "",
        _markdown_table(ranking),
        "## Per candidate and satellite (no one-receiver limit)",
        "",
        NO_RECEIVER_LIMIT_TEXT,
        "",
        _markdown_table([{k: v for k, v in row.items() if k != "one_receiver_limit"} for row in week_rows(forecast.weekly)]),
        "## Files",
        "",
        "- `weekly.csv`, `passes.csv`, `bands.csv`, `hours.csv`, `ranking.csv`, `compare.json`",
        f"- `calendar.ics`: the passes one receiver takes with {recommendation.recommended} (RFC 5545)",
        f"- local hours (`hours.csv`, `local_hour` in `passes.csv`) and calendar times: {_hours_zone(study)}",
        f"- `dropped.csv`: the usable passes of {recommendation.recommended} left out for a conflict, "
        "each with the kept pass it overlaps",
        f"- `build_sheet.md`, `build_sheet.json`: what to cut and assemble for {recommendation.recommended}",
        "- `figures/`: " + ", ".join(sorted({Path(p).stem for p in figures})) + " (PNG and SVG)",
        "",
        *(["## Modelling notes", "", *[f"- {n}." for n in recommendation.model_notes], ""] if recommendation.model_notes else []),
        "## Before you build",
        "",
        *[f"- {c}" for c in STATION_CAUTIONS],
        "",
    ]
    written.append(write_atomically(folder / "summary.md", "\n".join(summary), rules=rules))
    return written


def _write_build_sheet(folder, study, recommendation, rules) -> list:
    """The recommended set-up's build sheet as Markdown and JSON (``planner.antenna.buildsheet``)."""
    from planner.antenna.buildsheet import render_markdown, study_sheet
    from planner.fileio import write_atomically

    sheet = study_sheet(
        study,
        recommendation.recommended,
        selection=f"Candidate {recommendation.recommended}: recommended by this comparison.",
        strict=False,
    )
    return [
        write_atomically(folder / "build_sheet.md", render_markdown(sheet), rules=rules),
        write_atomically(folder / "build_sheet.json", to_json(sheet.to_dict()), rules=rules),
    ]


def _records(frame) -> list[dict]:
    records = []
    for record in frame.to_dict("records"):
        clean = {}
        for key, value in record.items():
            if isinstance(value, datetime):
                value = iso_utc(value)
            elif isinstance(value, float):
                value = round(value, 4)
            clean[key] = value
        records.append(clean)
    return records

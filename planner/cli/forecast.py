"""The `week`, `compare` and `rank` commands: forecasts, the recommendation and catalog ranking."""

from __future__ import annotations

import sys
from pathlib import Path

import typer
from rich.console import Console
from rich.table import Table

from planner.cli import common
from planner.cli.app import app
from planner.errors import UserError
from planner.fileio import WriteRules


def forecast_with_progress(study, candidates, quiet: bool, *, keep_samples: bool = True):
    """Run the forecast with a progress bar on stderr (silenced by --quiet).

    ``keep_samples=False`` for commands that report per pass and per week only (catalogs).
    """
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    from planner.decision.forecast import forecast

    if quiet:
        return forecast(study, candidates, keep_samples=keep_samples)
    progress = Progress(
        TextColumn("budgets"),
        BarColumn(),
        TextColumn("{task.completed}/{task.total}"),
        TimeElapsedColumn(),
        console=Console(stderr=True),
        transient=True,
    )
    with progress:
        task = progress.add_task("budgets", total=None)

        def report(done: int, total: int) -> None:
            progress.update(task, completed=done, total=total)

        return forecast(study, candidates, progress=report, keep_samples=keep_samples)


def chosen_candidates(study, candidate):
    if not study.candidate_names:
        raise UserError(f"{study.scenario.source_path}: no [[candidate]] tables; add at least one set-up to compare")
    if candidate:
        for name in candidate:
            study.candidate(name)  # refuses unknown names with the allowed list
        return list(candidate)
    return study.candidate_names


@app.command()
def week(
    scenario: Path = typer.Argument(..., help="Scenario TOML file."),
    candidate: list[str] | None = typer.Option(None, "--candidate", help="Only this candidate; repeatable."),
    format: str = common.FORMAT_ANY,
    output: Path | None = common.OUTPUT,
    quiet: bool = common.QUIET,
    station: list[str] | None = common.STATIONS,
    allow_stale: bool = common.ALLOW_STALE,
    force: bool = common.FORCE,
) -> None:
    """Weekly forecast per candidate and satellite: passes, usable passes, minutes, data volume."""
    from planner.output.export import WEEK_COLUMNS, to_csv, to_json, week_rows

    common.check_format(format)
    if format == "table" and output is not None:
        raise UserError("--output: a table is for the terminal; use --format csv or json with --output")
    studies = common.load_studies(scenario, allow_stale, station)
    rules = common.write_rules(force, scenario=studies[0].scenario, inputs=(scenario,))
    common.check_outputs(rules, {"--output": output})
    several = len(studies) > 1
    rows = []
    for study in studies:
        result = forecast_with_progress(study, chosen_candidates(study, candidate), quiet, keep_samples=False)
        rows += common.with_station(week_rows(result.weekly), study, several)
        if format == "table":
            _print_week(study, result)
    if format == "csv":
        common.emit(to_csv(rows, [*WEEK_COLUMNS, *(["station"] if several else [])]), output, rules)
    elif format == "json":
        common.emit(to_json(rows), output, rules)


def _band_lines(study, weekly) -> list[str]:
    """For each candidate of several bands, which table hears which satellite."""
    import pandas as pd

    lines = []
    for name in pd.unique(weekly["candidate"]):
        if len(study.candidate(name).band_list) < 2:
            continue
        mine = weekly[weekly["candidate"] == name]
        heard = "; ".join(f"{s} on {t}" for s, t in zip(mine["satellite"], mine["pattern_table"], strict=True))
        lines.append(f"{name} has {len(study.candidate(name).band_list)} bands: {heard}")
    return lines


def _print_week(study, result) -> None:
    from planner.decision.forecast import NO_RECEIVER_LIMIT_TEXT, band_table, usable_rule_text
    from planner.decision.recommend import voice_satellites, voice_text

    console = common.stdout()
    table = Table(
        title=f"{result.days:g}-day forecast at {study.station.name}, every usable pass (no one-receiver limit)",
        title_justify="left",
        caption=NO_RECEIVER_LIMIT_TEXT,
        caption_justify="left",
    )
    for heading in ("candidate", "satellite", "passes", "usable", "usable min", "min/day", "Mbit", "Mbit/day", "dropouts"):
        table.add_column(heading, justify="left" if heading in ("candidate", "satellite") else "right")
    for record in result.weekly.to_dict("records"):
        table.add_row(
            record["candidate"],
            record["satellite"],
            str(record["passes"]),
            str(record["usable_passes"]),
            f"{record['usable_minutes']:.1f}",
            f"{record['usable_minutes_per_day']:.1f}",
            f"{record['data_volume_mbit']:.1f}",
            f"{record['data_volume_mbit_per_day']:.1f}",
            str(record["dropouts"]),
        )
    console.print(table)
    for line in _band_lines(study, result.weekly):
        console.print(line, soft_wrap=True, markup=False)
    bands = band_table(result.outcomes)
    pivot = bands.pivot_table(index="candidate", columns="elevation_band", values="usable_minutes", aggfunc="sum", fill_value=0.0)
    band_view = Table(title="usable minutes by maximum elevation of the pass (deg)", title_justify="left")
    band_view.add_column("candidate")
    for band in pivot.columns:
        band_view.add_column(str(band), justify="right")
    for name, values in pivot.iterrows():
        band_view.add_row(str(name), *[f"{v:.1f}" for v in values])
    console.print(band_view)
    _print_hours(console, study, result)
    console.print(usable_rule_text(study.scenario.criteria, study.satellites), soft_wrap=False, markup=False)
    console.print(
        "Dropouts: below-threshold gaps between the usable windows of a usable pass (a pattern null or a fade mid-pass).",
        soft_wrap=False,
        markup=False,
    )
    voice = voice_text(voice_satellites(study.satellites), study.scenario.criteria.objective)
    if voice:
        console.print(voice, soft_wrap=False, markup=False)


def _print_hours(console, study, result) -> None:
    """Usable minutes per local hour of TCA on the station's clock; hours without passes left out."""
    from planner.decision.forecast import hour_table
    from planner.timezones import zone_label

    label = zone_label(study.station.time_zone, study.station.longitude_deg)
    hours = hour_table(result.outcomes, label)
    pivot = hours.pivot_table(index="local_hour", columns="candidate", values="usable_minutes", aggfunc="sum", fill_value=0.0)
    with_passes = hours.groupby("local_hour")["passes"].sum()
    view = Table(title=f"usable minutes by local hour of TCA ({label})", title_justify="left")
    view.add_column("hour", justify="right")
    for name in pivot.columns:
        view.add_column(str(name), justify="right", overflow="fold")  # long names wrap, never cut
    for hour, values in pivot.iterrows():
        if with_passes.get(hour, 0) > 0:
            view.add_row(f"{int(hour):02d}", *[f"{v:.1f}" for v in values])
    console.print(view)


@app.command()
def compare(
    scenario: Path = typer.Argument(..., help="Scenario TOML file."),
    candidate: list[str] | None = typer.Option(None, "--candidate", help="Only these candidates; repeatable."),
    format: str = common.FORMAT_TABLE_JSON,
    output: Path | None = common.OUTPUT,
    calendar: Path | None = typer.Option(
        None, "--calendar", help="Write the passes one receiver takes with the recommended set-up as iCalendar."
    ),
    figures: Path | None = typer.Option(None, "--figures", help="Write the figures (PNG and SVG) into this folder."),
    report: Path | None = typer.Option(None, "--report", help="Write a report folder: tables, figures, calendar, summary."),
    quiet: bool = common.QUIET,
    station: list[str] | None = common.STATIONS,
    allow_stale: bool = common.ALLOW_STALE,
    force: bool = common.FORCE,
) -> None:
    """Compare the candidate set-ups and recommend one, with the reasons and a robustness check."""
    from planner.output.export import to_json

    if format not in ("table", "json"):
        raise UserError(f"--format: {format!r} is not a format here; allowed: table, json")
    if format == "table" and output is not None:
        raise UserError("--output: the comparison table is for the terminal; use --format json with --output")
    for option, folder in (("--figures", figures), ("--report", report)):
        common.check_folder_outputs(WriteRules(), option, folder, ())
    studies = common.load_studies(scenario, allow_stale, station)
    rules = common.write_rules(force, scenario=studies[0].scenario, inputs=(scenario,))
    common.check_outputs(rules, {"--output": output})
    several = len(studies) > 1
    documents = []
    for study in studies:
        # A network writes each station's files apart: a sub-folder, or the station in the file name.
        slug = common.station_slug(study.station.name)
        where = dict(
            calendar=calendar
            if not several or calendar is None
            else calendar.with_name(f"{calendar.stem}-{slug}{calendar.suffix}"),
            figures=figures if not several or figures is None else figures / slug,
            report=report if not several or report is None else report / slug,
        )
        _check_compare_outputs(rules, study, **where)
        decision = _compare_one(study, candidate, quiet, format, rules, **where)
        documents.append(dict(station=study.station.name, **decision.to_contract()) if several else decision.to_contract())
    if format == "json":
        common.emit(to_json({"stations": documents} if several else documents[0]), output, rules)


def _check_compare_outputs(rules, study, *, calendar, figures, report) -> None:
    """Refuse, before the forecast, every file of compare's outputs the rules forbid."""
    from planner.output.export import figure_file_names, report_file_names

    satellites = [t.display_name for t in study.targets]
    common.check_outputs(rules, {"--calendar": calendar})
    common.check_folder_outputs(rules, "--figures", figures, figure_file_names(satellites))
    common.check_folder_outputs(rules, "--report", report, report_file_names(satellites))


def _compare_one(study, candidate, quiet, format, rules, *, calendar, figures, report):
    from planner.decision.recommend import recommend
    from planner.fileio import write_atomically
    from planner.output.export import calendar_ics, write_figures, write_report

    result = forecast_with_progress(study, chosen_candidates(study, candidate), quiet)
    decision = recommend(result, study.satellites, study.candidates)
    if calendar is not None:
        write_atomically(calendar, calendar_ics(result.outcomes, study, decision.recommended), rules=rules)
        print(f"wrote {calendar}", file=sys.stderr)
    if figures is not None:
        written = write_figures(figures, study, result, decision, rules=rules)
        print(f"wrote {len(written)} figure files in {figures}", file=sys.stderr)
    if report is not None:
        write_report(report, study, result, decision, rules=rules)
    if format == "json":
        return decision
    from planner.decision.forecast import ONE_RECEIVER_LIMIT_TEXT

    console = common.stdout()
    table = Table(
        title=f"Candidates at {study.station.name}, one receiver, {result.days:g} days",
        title_justify="left",
        caption=ONE_RECEIVER_LIMIT_TEXT,
        caption_justify="left",
    )
    for heading in (
        "rank",
        "candidate",
        f"score ({decision.score_unit})",
        "usable passes",
        "usable min",
        "Mbit",
        "dropouts",
        "lost to conflicts",
    ):
        table.add_column(heading, justify="left" if heading == "candidate" else "right")
    for rank, score in enumerate(decision.ranking, start=1):
        table.add_row(
            str(rank),
            score.candidate,
            f"{score.score:.2f}",
            str(score.usable_passes),
            f"{score.usable_minutes:.1f}",
            f"{score.data_volume_mbit:.1f}",
            str(score.dropouts),
            f"{score.lost_to_conflicts:.2f}",
        )
    console.print(table)
    console.print(decision.explanation, soft_wrap=False, markup=False)
    for note in decision.model_notes:
        console.print(f"Modelling note: {note}.", soft_wrap=False, markup=False)
    _print_dropped(console, decision)
    if report is not None:
        console.print(f"Report written to {report}/ (summary.md, build_sheet.md, tables, figures/, calendar.ics).")
    console.print(
        f"What to cut and assemble for {decision.recommended}: planner sheet {common.shown_path(study.scenario.source_path)}",
        soft_wrap=True,
        markup=False,
    )
    return decision


# Rows of the dropped-pass table shown in the terminal; the JSON and the report have them all.
_DROPPED_SHOWN = 20


def _print_dropped(console, decision) -> None:
    """The recommended set-up's usable passes one receiver cannot take, and what each clashes with."""
    rows = decision.dropped_rows()
    if not rows:
        console.print(f"One receiver takes every usable pass of {decision.recommended}.")
        return
    table = Table(
        title=f"Usable passes of {decision.recommended} dropped for conflicts (one receiver); times UTC",
        title_justify="left",
    )
    for heading in ("satellite", "AOS", "usable from", "to", "conflicts with", "its AOS", "overlap s"):
        table.add_column(heading, justify="right" if heading == "overlap s" else "left", no_wrap=True)
    for row in rows[:_DROPPED_SHOWN]:
        table.add_row(
            row["satellite"],
            row["aos_utc"].replace("T", " ")[:19],
            row["usable_start_utc"][11:19],
            row["usable_end_utc"][11:19],
            row["conflicts_with_satellite"] or "-",
            (row["conflicts_with_aos_utc"] or "-").replace("T", " ")[:19],
            "-" if row["overlap_s"] is None else f"{row['overlap_s']:.0f}",
        )
    console.print(table)
    if len(rows) > _DROPPED_SHOWN:
        console.print(f"... and {len(rows) - _DROPPED_SHOWN} more (all in --format json and the report's dropped.csv).")


@app.command()
def rank(
    scenario: Path = typer.Argument(..., help="Scenario TOML file (its [catalog] and [[satellite]] entries are ranked)."),
    candidate: str = typer.Option(..., "--candidate", help="Candidate set-up to rank the objects with."),
    station: str | None = common.STATION,
    top: int = typer.Option(25, "--top", help="How many objects to list (the CSV/JSON has them all)."),
    format: str = common.FORMAT_ANY,
    output: Path | None = common.OUTPUT,
    quiet: bool = common.QUIET,
    allow_stale: bool = common.ALLOW_STALE,
    force: bool = common.FORCE,
) -> None:
    """Rank every object of the scenario (a whole catalog) by usable contact time for one set-up."""
    from planner.output.export import to_csv, to_json

    common.check_format(format)
    if top < 1:
        raise UserError(f"--top: {top} is out of range; allowed 1 or more")
    study = common.load_study(scenario, allow_stale, station)
    rules = common.write_rules(force, scenario=study.scenario, inputs=(scenario,))
    common.check_outputs(rules, {"--output": output})
    study.candidate(candidate)
    result = forecast_with_progress(study, [candidate], quiet, keep_samples=False)
    weekly = result.weekly.sort_values(["usable_minutes", "data_volume_mbit", "satellite"], ascending=[False, False, True])
    ids = {c.name: c.norad_id for c in study.satellites}
    rows = [
        {
            "rank": position,
            "satellite": record["satellite"],
            "norad_id": ids.get(record["satellite"]),
            "passes": int(record["passes"]),
            "usable_passes": int(record["usable_passes"]),
            "usable_minutes": round(float(record["usable_minutes"]), 2),
            "usable_minutes_per_day": round(float(record["usable_minutes_per_day"]), 2),
            "data_volume_mbit": round(float(record["data_volume_mbit"]), 3),
        }
        for position, record in enumerate(weekly.to_dict("records"), start=1)
    ]
    if format == "csv":
        common.emit(to_csv(rows, list(rows[0]) if rows else ["rank"]), output, rules)
        return
    if format == "json":
        common.emit(to_json(rows), output, rules)
        return
    if output is not None:
        raise UserError("--output: a table is for the terminal; use --format csv or json with --output")
    table = Table(
        title=f"{len(rows)} objects ranked by usable time at {study.station.name} with {candidate}, {result.days:g} days",
        title_justify="left",
    )
    for heading in ("rank", "satellite", "catalog no.", "passes", "usable", "usable min", "min/day", "Mbit"):
        table.add_column(heading, justify="left" if heading == "satellite" else "right")
    for row in rows[:top]:
        table.add_row(
            str(row["rank"]),
            row["satellite"],
            str(row["norad_id"]),
            str(row["passes"]),
            str(row["usable_passes"]),
            f"{row['usable_minutes']:.1f}",
            f"{row['usable_minutes_per_day']:.1f}",
            f"{row['data_volume_mbit']:.1f}",
        )
    common.stdout().print(table)

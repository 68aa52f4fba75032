"""The `passes` command: every pass over the station, as a table, CSV or JSON."""

from __future__ import annotations

from pathlib import Path
from typing import cast

import typer
from rich.console import JustifyMethod
from rich.table import Table

from planner.cli import common
from planner.cli.app import app
from planner.errors import UserError


def _print_passes_table(study, passes) -> None:
    from planner.output.export import iso_utc

    station = study.station
    title = (
        f"Passes over {station.name} ({station.latitude_deg:.4f}, {station.longitude_deg:.4f}), "
        f"{iso_utc(study.start_utc)} to {iso_utc(study.end_utc)}; times UTC, angles deg"
    )
    table = Table(title=title, title_justify="left")
    for heading, justify in (
        ("satellite", "left"),
        ("date", "left"),
        ("AOS", "left"),
        ("TCA", "left"),
        ("LOS", "left"),
        ("min:s", "right"),
        ("max el", "right"),
        ("az AOS/TCA/LOS", "right"),
        ("range km", "right"),
        ("clipped", "left"),
    ):
        table.add_column(heading, justify=cast(JustifyMethod, justify), no_wrap=True)
    for p in passes:
        minutes, seconds = divmod(int(round(p.duration_s)), 60)
        # A pass under way at the window's start or end is cut there.
        notes = [n for n, flag in (("start", p.aos_clipped), ("end", p.los_clipped)) if flag]
        aos = iso_utc(p.aos_utc)
        table.add_row(
            p.satellite,
            aos[:10],
            aos[11:19],
            iso_utc(p.tca_utc)[11:19],
            iso_utc(p.los_utc)[11:19],
            f"{minutes}:{seconds:02d}",
            f"{p.max_elevation_deg:.1f}",
            f"{common.azimuth(p.aos_azimuth_deg)}/{common.azimuth(p.tca_azimuth_deg)}/{common.azimuth(p.los_azimuth_deg)}",
            f"{p.min_range_km:.0f}",
            "+".join(notes),
        )
    console = common.stdout()
    console.print(table)
    console.print(f"{len(passes)} passes of {len(study.targets)} satellites.")


@app.command()
def passes(
    scenario: Path | None = typer.Argument(None, help="Scenario TOML file (omit for the quick-look options)."),
    elements: Path | None = typer.Option(None, "--elements", help="TLE/3LE/OMM file for a quick look without a scenario."),
    lat: float | None = typer.Option(None, "--lat", help="Site latitude, deg north (quick look)."),
    lon: float | None = typer.Option(None, "--lon", help="Site longitude, deg east (quick look)."),
    alt_m: float = typer.Option(0.0, "--alt-m", help="Site height above the ellipsoid, m (quick look)."),
    start: str | None = typer.Option(None, "--start", help="Window start, ISO 8601 UTC (quick look; default now)."),
    days: float = typer.Option(1.0, "--days", help="Window length in days (quick look)."),
    min_elevation_deg: float = typer.Option(0.0, "--min-elevation-deg", help="Flat horizon mask, deg (quick look)."),
    satellite: list[str] | None = typer.Option(
        None, "--satellite", help="Only this satellite (name or catalog number); repeatable."
    ),
    step_s: float = typer.Option(10.0, "--step-s", help="Track step, s (quick look; a scenario sets its own)."),
    station: list[str] | None = common.STATIONS,
    format: str = common.FORMAT_ANY,
    output: Path | None = common.OUTPUT,
    allow_stale: bool = common.ALLOW_STALE,
    force: bool = common.FORCE,
) -> None:
    """Predict every pass over the station, with AOS, TCA, LOS and sky track."""
    from planner.output.export import PASS_COLUMNS, pass_row, to_csv, to_json

    common.check_format(format)
    if format == "table" and output is not None:
        raise UserError("--output: a table is for the terminal; use --format csv or json with --output")
    if scenario is not None:
        if elements is not None:
            raise UserError("passes: give either a SCENARIO file or --elements, not both")
        studies = common.load_studies(scenario, allow_stale, station)
        if satellite:
            names = {t.display_name for t in studies[0].targets}
            unknown = [
                s for s in satellite if s not in names and not any(str(t.element_set.norad_id) == s for t in studies[0].targets)
            ]
            if unknown:
                shown = sorted(names)[:10]
                raise UserError(f"{scenario}: --satellite {unknown[0]!r} is not in the scenario; allowed: {', '.join(shown)}")
            studies = [
                study.with_targets(
                    [t for t in study.targets if t.display_name in satellite or str(t.element_set.norad_id) in satellite]
                )
                for study in studies
            ]
    elif elements is not None:
        studies = [common.adhoc_study(elements, lat, lon, alt_m, start, days, min_elevation_deg, step_s, satellite, allow_stale)]
    else:
        raise UserError("passes: give a SCENARIO file, or --elements FILE with --lat and --lon")
    rules = common.write_rules(force, scenario=studies[0].scenario, inputs=(scenario, elements))
    common.check_outputs(rules, {"--output": output})
    several = len(studies) > 1
    rows = []
    for study in studies:
        found = study.passes()
        if format == "table":
            _print_passes_table(study, found)
        rows += common.with_station([pass_row(p) for p in found], study, several)
    if format == "json":
        common.emit(to_json(rows), output, rules)
    elif format == "csv":
        common.emit(to_csv(rows, [*PASS_COLUMNS, *(["station"] if several else [])]), output, rules)

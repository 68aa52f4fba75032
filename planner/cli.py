"""Command line: parses options, calls the library, prints. No computation lives here."""

from __future__ import annotations

import sys
import warnings
from datetime import datetime, timedelta, timezone
from pathlib import Path
from typing import Optional

import typer
from rich.console import Console
from rich.table import Table

from planner.errors import PlannerWarning, UserError

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    help="Plan a satellite ground station: passes, link margins and the antenna set-up to build.",
)

FORMATS = ("table", "csv", "json")


@app.callback()
def _root() -> None:
    """Plan a satellite ground station: passes, link margins and the antenna set-up to build."""


def _stdout() -> Console:
    """Console for tables; a pipe or a file gets a 132-column page instead of 80."""
    console = Console()
    if not console.is_terminal:
        console = Console(width=132)
    return console


def _azimuth(value_deg: float) -> str:
    return f"{round(value_deg) % 360:d}"


def _emit(text: str, output: Optional[Path]) -> None:
    """Write machine output to a file atomically, or to stdout."""
    from planner.fileio import write_atomically

    if output is None:
        sys.stdout.write(text)
    else:
        write_atomically(output, text)
        print(f"wrote {output}", file=sys.stderr)


def _check_format(value: str) -> str:
    if value not in FORMATS:
        raise UserError(f"--format: {value!r} is not a format; allowed: {', '.join(FORMATS)}")
    return value


def _parse_utc(option: str, text: str) -> datetime:
    try:
        moment = datetime.fromisoformat(text.replace("Z", "+00:00"))
    except ValueError:
        raise UserError(f"{option}: {text!r} is not an ISO 8601 time; allowed e.g. 2027-01-04T00:00:00Z") from None
    if moment.tzinfo is None:
        moment = moment.replace(tzinfo=timezone.utc)
    return moment.astimezone(timezone.utc)


def _adhoc_study(elements, lat, lon, alt_m, start, days, min_elevation_deg, step_s, satellites, allow_stale):
    """A study built from options alone: one element file, one site, a flat mask."""
    from planner.orbits import check_element_age, read_elements, select_element_set
    from planner.passes import Target
    from planner.scenario import StationConfig, WindowConfig, validated
    from planner.station import Station
    from planner.study import Study

    if lat is None or lon is None:
        raise UserError("passes: give a SCENARIO file, or --elements with --lat and --lon for a quick look")
    station_config = validated(
        StationConfig,
        dict(name="ad-hoc site", latitude_deg=lat, longitude_deg=lon, altitude_m=alt_m, horizon_mask=min_elevation_deg),
        "command line",
        key_names={"latitude_deg": "--lat", "longitude_deg": "--lon", "altitude_m": "--alt-m", "horizon_mask": "--min-elevation-deg"},
    )
    start_utc = _parse_utc("--start", start) if start else datetime.now(timezone.utc).replace(second=0, microsecond=0)
    window = validated(WindowConfig, dict(start_utc=start_utc, days=days, step_s=step_s), "command line", key_names={"days": "--days", "step_s": "--step-s", "start_utc": "--start"})
    element_sets = read_elements(elements)
    if satellites:
        chosen = []
        for wanted in satellites:
            key = dict(norad_id=int(wanted)) if wanted.strip().isdigit() else dict(name=wanted)
            chosen.append(select_element_set(element_sets, source=str(elements), **key))
        element_sets = chosen
    check_element_age(element_sets, window.start_utc, window.end_utc, allow_stale=allow_stale)
    return Study(
        scenario=None,
        station=Station.from_config(station_config),
        targets=[Target(e) for e in element_sets],
        start_utc=window.start_utc,
        end_utc=window.end_utc,
        step_s=window.step_s,
    )


def _load_study(scenario: Path, allow_stale: bool):
    from planner.scenario import load_scenario
    from planner.study import Study

    return Study.from_scenario(load_scenario(scenario), allow_stale=allow_stale)


def _print_passes_table(study, passes) -> None:
    from planner.export import iso_utc

    station = study.station
    title = (
        f"Passes over {station.name} ({station.latitude_deg:.4f}, {station.longitude_deg:.4f}), "
        f"{iso_utc(study.start_utc)} to {iso_utc(study.end_utc)}; times UTC, angles deg"
    )
    table = Table(title=title, title_justify="left")
    for heading, justify in (
        ("satellite", "left"), ("date", "left"), ("AOS", "left"), ("TCA", "left"), ("LOS", "left"),
        ("min:s", "right"), ("max el", "right"), ("az AOS/TCA/LOS", "right"), ("range km", "right"),
        ("note", "left"),
    ):
        table.add_column(heading, justify=justify, no_wrap=True)
    for p in passes:
        minutes, seconds = divmod(int(round(p.duration_s)), 60)
        notes = [n for n, flag in (("up at window start", p.aos_clipped), ("up at window end", p.los_clipped)) if flag]
        aos = iso_utc(p.aos_utc)
        table.add_row(
            p.satellite, aos[:10], aos[11:19], iso_utc(p.tca_utc)[11:19], iso_utc(p.los_utc)[11:19],
            f"{minutes}:{seconds:02d}", f"{p.max_elevation_deg:.1f}",
            f"{_azimuth(p.aos_azimuth_deg)}/{_azimuth(p.tca_azimuth_deg)}/{_azimuth(p.los_azimuth_deg)}",
            f"{p.min_range_km:.0f}", ", ".join(notes),
        )
    console = _stdout()
    console.print(table)
    console.print(f"{len(passes)} passes of {len(study.targets)} satellites.")


@app.command()
def passes(
    scenario: Optional[Path] = typer.Argument(None, help="Scenario TOML file (omit for the quick-look options)."),
    elements: Optional[Path] = typer.Option(None, "--elements", help="TLE/3LE/OMM file for a quick look without a scenario."),
    lat: Optional[float] = typer.Option(None, "--lat", help="Site latitude, deg north (quick look)."),
    lon: Optional[float] = typer.Option(None, "--lon", help="Site longitude, deg east (quick look)."),
    alt_m: float = typer.Option(0.0, "--alt-m", help="Site height above the ellipsoid, m (quick look)."),
    start: Optional[str] = typer.Option(None, "--start", help="Window start, ISO 8601 UTC (quick look; default now)."),
    days: float = typer.Option(1.0, "--days", help="Window length in days (quick look)."),
    min_elevation_deg: float = typer.Option(0.0, "--min-elevation-deg", help="Flat horizon mask, deg (quick look)."),
    satellite: Optional[list[str]] = typer.Option(None, "--satellite", help="Only this satellite (name or catalog number); repeatable."),
    step_s: float = typer.Option(10.0, "--step-s", help="Track step, s (quick look; a scenario sets its own)."),
    format: str = typer.Option("table", "--format", help="table, csv or json."),
    output: Optional[Path] = typer.Option(None, "--output", help="Write to this file (atomically) instead of stdout."),
    allow_stale: bool = typer.Option(False, "--allow-stale", help="Go on with element sets more than 30 days from the window."),
) -> None:
    """Predict every pass over the station, with AOS, TCA, LOS and sky track."""
    from planner.export import PASS_COLUMNS, pass_row, to_csv, to_json

    _check_format(format)
    if scenario is not None:
        if elements is not None:
            raise UserError("passes: give either a SCENARIO file or --elements, not both")
        study = _load_study(scenario, allow_stale)
        if satellite:
            names = {t.display_name for t in study.targets}
            unknown = [s for s in satellite if s not in names and not any(str(t.element_set.norad_id) == s for t in study.targets)]
            if unknown:
                raise UserError(f"{scenario}: --satellite {unknown[0]!r} is not in the scenario; allowed: {', '.join(sorted(names))}")
            study.targets = [t for t in study.targets if t.display_name in satellite or str(t.element_set.norad_id) in satellite]
    elif elements is not None:
        study = _adhoc_study(elements, lat, lon, alt_m, start, days, min_elevation_deg, step_s, satellite, allow_stale)
    else:
        raise UserError("passes: give a SCENARIO file, or --elements FILE with --lat and --lon")
    found = study.passes()
    if format == "table" and output is None:
        _print_passes_table(study, found)
    elif format == "json":
        _emit(to_json([pass_row(p) for p in found]), output)
    elif format == "csv":
        _emit(to_csv((pass_row(p) for p in found), PASS_COLUMNS), output)
    else:
        raise UserError("--output: a table is for the terminal; use --format csv or json with --output")


def _show_warning(message, category, filename, lineno, file=None, line=None):
    if issubclass(category, PlannerWarning):
        print(f"planner: warning: {message}", file=sys.stderr)
    else:
        print(f"planner: warning: {category.__name__}: {message}", file=sys.stderr)


def main() -> None:
    """Entry point: user errors -> one line and exit code 2; bugs -> exit code 1."""
    warnings.simplefilter("always", PlannerWarning)
    warnings.showwarning = _show_warning
    try:
        app()  # standalone: typer itself reports usage errors (exit code 2) and exits
    except UserError as error:
        print(f"planner: error: {error}", file=sys.stderr)
        sys.exit(2)
    except KeyboardInterrupt:
        print("planner: interrupted", file=sys.stderr)
        sys.exit(130)

if __name__ == "__main__":
    main()

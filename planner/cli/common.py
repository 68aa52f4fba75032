"""What every command shares: options, loading a study, the write rules, output and time parsing."""

from __future__ import annotations

import sys
from datetime import UTC, datetime
from pathlib import Path

import typer
from rich.console import Console

from planner.errors import UserError, quoted

FORMATS = ("table", "csv", "json")

# Options several commands take, declared once.
FORCE = typer.Option(False, "--force", help="Replace output files that already exist (never the run's own input files).")
ALLOW_STALE = typer.Option(False, "--allow-stale", help="Go on with element sets more than 30 days from the window.")
QUIET = typer.Option(False, "--quiet", help="No progress bar.")
OUTPUT = typer.Option(None, "--output", help="Write the CSV or JSON to this file (atomically) instead of stdout.")
FORMAT_ANY = typer.Option("table", "--format", help="table, csv or json.")
FORMAT_TABLE_JSON = typer.Option("table", "--format", help="table or json.")
STATIONS = typer.Option(None, "--station", help="Only this station of the scenario's network; repeatable.")
STATION = typer.Option(None, "--station", help="Station of the scenario's network (default: the home station).")


def stdout() -> Console:
    """Console for tables; a pipe or a file gets a 132-column page instead of 80."""
    console = Console()
    if not console.is_terminal:
        console = Console(width=132)
    return console


def azimuth(value_deg: float) -> str:
    return f"{round(value_deg) % 360:d}"


def shown_path(path: Path | None) -> str:
    """A path as a user would type it again: relative to the working folder when it lies inside."""
    if path is None:
        return "SCENARIO"
    try:
        return str(Path(path).resolve().relative_to(Path.cwd().resolve()))
    except ValueError:
        return str(path)


def emit(text: str, output: Path | None, rules) -> None:
    """Write machine output to a file atomically (under the run's write rules), or to stdout."""
    from planner.fileio import write_atomically

    if output is None:
        sys.stdout.write(text)
    else:
        write_atomically(output, text, rules=rules)
        print(f"wrote {output}", file=sys.stderr)


def write_rules(force: bool, *, scenario=None, inputs: tuple = ()):
    """The run's write rules: its input files (the scenario and every file it names) are protected."""
    from planner.fileio import WriteRules

    files = list(inputs)
    if scenario is not None:
        files += scenario.input_files()
    return WriteRules.for_run(files, force=force)


def check_outputs(rules, outputs: dict[str, Path | None]) -> None:
    """Refuse, before any computation, an output file the rules forbid (option name -> path)."""
    for option, path in outputs.items():
        if path is not None:
            output_folder(option, path)
            rules.check(path, option)


def output_folder(option: str, path: Path) -> Path:
    """The existing folder ``path`` is written into, or one UserError line."""
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        what = "is not a folder" if folder.exists() else "does not exist"
        raise UserError(f"{option}: {path}: folder {folder} {what}; create it first")
    return folder


def check_folder_outputs(rules, option: str, folder: Path | None, names) -> None:
    """Refuse an output folder that is a file, or that holds files of these names the rules forbid."""
    if folder is None:
        return
    if folder.exists() and not folder.is_dir():
        raise UserError(f"{option}: {folder} exists and is not a folder")
    for parent in folder.parents:
        if parent.exists():
            if not parent.is_dir():
                raise UserError(f"{option}: {folder}: {parent} is a file, not a folder")
            break
    if folder.is_dir():
        for name in names:
            if (folder / name).exists() or (folder / name).is_symlink():
                rules.check(folder / name, option)


def figure_target(option: str, figure: Path, rules) -> tuple[Path, str]:
    """(folder, stem) of a figure given as a stem; .png and .svg are added to it."""
    stem = figure.name
    if stem in ("", ".", ".."):
        raise UserError(f"{option}: {figure} is not a figure stem; give a file name without extension, e.g. out/cuts")
    folder = output_folder(option, figure)
    for suffix in (".png", ".svg"):
        rules.check(folder / f"{stem}{suffix}", option)
    return folder, stem


def check_format(value: str) -> str:
    if value not in FORMATS:
        raise UserError(f"--format: {value!r} is not a format; allowed: {', '.join(FORMATS)}")
    return value


def parse_utc(option: str, text: str) -> datetime:
    """An ISO 8601 time (naive means UTC) as aware UTC, inside the years every time must lie in.

    Checked before any arithmetic: near year 1 or 9999 the conversion to UTC, the element age
    and the time scales overflow.
    """
    from planner.elements import SUPPORTED_YEARS, in_supported_years

    allowed = f"allowed an ISO 8601 time in the years {SUPPORTED_YEARS}, e.g. 2027-01-04T00:00:00Z"
    try:
        moment = datetime.fromisoformat(text.replace("Z", "+00:00"))
    except ValueError:
        raise UserError(f"{option}: {quoted(text)} is not an ISO 8601 time; {allowed}") from None
    if moment.tzinfo is None:
        moment = moment.replace(tzinfo=UTC)
    if not in_supported_years(moment):
        raise UserError(f"{option}: {quoted(text)} is out of range; {allowed}")
    return moment.astimezone(UTC)


def satellite_choice(wanted: str) -> dict:
    """``--satellite``: ASCII digits are a catalog number (at most 9 of them), anything else a name."""
    from planner.elements import MAX_OMM_CATALOG_NUMBER

    digits = wanted.strip()
    if not (digits.isascii() and digits.isdigit()):
        return dict(name=wanted)
    if len(digits.lstrip("0")) > len(str(MAX_OMM_CATALOG_NUMBER)):  # before int(): 4300 digits raise
        raise UserError(
            f"--satellite: {quoted(digits)} ({len(digits)} digits) is not a catalog number; "
            f"allowed 1 to {MAX_OMM_CATALOG_NUMBER}, or a satellite name"
        )
    return dict(norad_id=int(digits))


def adhoc_study(elements, lat, lon, alt_m, start, days, min_elevation_deg, step_s, satellites, allow_stale):
    """A study built from options alone: one element file, one site, a flat mask."""
    from planner.elements import check_element_age, read_elements, select_element_set
    from planner.passes import Target
    from planner.passes.station import Station
    from planner.scenario import StationConfig, WindowConfig, validated
    from planner.study import Study

    if lat is None or lon is None:
        raise UserError("passes: give a SCENARIO file, or --elements with --lat and --lon for a quick look")
    station_config = validated(
        StationConfig,
        dict(name="ad-hoc site", latitude_deg=lat, longitude_deg=lon, altitude_m=alt_m, horizon_mask=min_elevation_deg),
        "command line",
        key_names={
            "latitude_deg": "--lat",
            "longitude_deg": "--lon",
            "altitude_m": "--alt-m",
            "horizon_mask": "--min-elevation-deg",
        },
    )
    start_utc = parse_utc("--start", start) if start else datetime.now(UTC).replace(second=0, microsecond=0)
    window = validated(
        WindowConfig,
        dict(start_utc=start_utc, days=days, step_s=step_s),
        "command line",
        key_names={"days": "--days", "step_s": "--step-s", "start_utc": "--start"},
    )
    element_sets = read_elements(elements)
    if satellites:
        chosen = []
        for wanted in satellites:
            chosen.append(select_element_set(element_sets, source=str(elements), **satellite_choice(wanted)))
        element_sets = chosen
    check_element_age(element_sets, window.start_utc, window.end_utc, allow_stale=allow_stale)
    return Study.for_targets(
        Station.from_config(station_config), [Target(e) for e in element_sets], window.start_utc, window.end_utc, window.step_s
    )


def load_study(scenario: Path, allow_stale: bool, station: str | None = None):
    from planner.scenario import load_scenario
    from planner.study import Study

    return Study.from_scenario(load_scenario(scenario), allow_stale=allow_stale, station=station)


def load_studies(scenario: Path, allow_stale: bool, stations: list[str] | None):
    """One study per station asked for (default: every station of the scenario)."""
    home = load_study(scenario, allow_stale)
    names = stations or home.station_names
    for name in names:
        home.scenario.station_named(name)  # refuse unknown names before computing anything
    return [home if name == home.station_config.name else home.at_station(name) for name in names]


def with_station(rows: list[dict], study, several: bool) -> list[dict]:
    """Rows for a network get a trailing station column; a single station keeps the contract."""
    return [dict(row, station=study.station.name) for row in rows] if several else rows


def station_slug(name: str) -> str:
    return "".join(c.lower() if c.isalnum() else "-" for c in name).strip("-")

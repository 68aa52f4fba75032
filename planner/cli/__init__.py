"""Command line: parses options, calls the library, prints. No computation lives here."""

from __future__ import annotations

import sys
import warnings
from datetime import datetime, timedelta, timezone
from pathlib import Path
from typing import Optional

import numpy as np
import typer
from rich.console import Console
from rich.table import Table

from planner.errors import PlannerWarning, UserError
from planner.fileio import WriteRules

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    help="Plan a satellite ground station: passes, link margins and the antenna set-up to build.",
)

FORMATS = ("table", "csv", "json")

# Shared by every command that writes files.
FORCE = typer.Option(False, "--force", help="Replace output files that already exist (never the run's own input files).")


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


def _emit(text: str, output: Optional[Path], rules) -> None:
    """Write machine output to a file atomically (under the run's write rules), or to stdout."""
    from planner.fileio import write_atomically

    if output is None:
        sys.stdout.write(text)
    else:
        write_atomically(output, text, rules=rules)
        print(f"wrote {output}", file=sys.stderr)


def _write_rules(force: bool, *, scenario=None, inputs: tuple = ()):
    """The run's write rules: its input files (the scenario and every file it names) are protected."""
    from planner.fileio import WriteRules

    files = list(inputs)
    if scenario is not None:
        files += scenario.input_files()
    return WriteRules.for_run(files, force=force)


def _check_outputs(rules, outputs: dict[str, Optional[Path]]) -> None:
    """Refuse, before any computation, an output file the rules forbid (option name -> path)."""
    for option, path in outputs.items():
        if path is not None:
            _output_folder(option, path)
            rules.check(path, option)


def _output_folder(option: str, path: Path) -> Path:
    """The existing folder ``path`` is written into, or one UserError line."""
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        what = "is not a folder" if folder.exists() else "does not exist"
        raise UserError(f"{option}: {path}: folder {folder} {what}; create it first")
    return folder


def _check_folder_outputs(rules, option: str, folder: Optional[Path], names) -> None:
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


def _figure_target(option: str, figure: Path, rules) -> tuple[Path, str]:
    """(folder, stem) of a figure given as a stem; .png and .svg are added to it."""
    stem = figure.name
    if stem in ("", ".", ".."):
        raise UserError(f"{option}: {figure} is not a figure stem; give a file name without extension, e.g. out/cuts")
    folder = _output_folder(option, figure)
    for suffix in (".png", ".svg"):
        rules.check(folder / f"{stem}{suffix}", option)
    return folder, stem


def _check_format(value: str) -> str:
    if value not in FORMATS:
        raise UserError(f"--format: {value!r} is not a format; allowed: {', '.join(FORMATS)}")
    return value


def _shown(text: str, limit: int = 40) -> str:
    """A user's option value for a message: quoted, escaped, clipped to ``limit`` characters."""
    return repr(text if len(text) <= limit else text[: limit - 3] + "...")


def _parse_utc(option: str, text: str) -> datetime:
    """An ISO 8601 time (naive means UTC) as aware UTC, inside the years every time must lie in.

    Checked before any arithmetic: near year 1 or 9999 the conversion to UTC, the element age
    and the time scales overflow.
    """
    from planner.elements import SUPPORTED_YEARS, in_supported_years

    allowed = f"allowed an ISO 8601 time in the years {SUPPORTED_YEARS}, e.g. 2027-01-04T00:00:00Z"
    try:
        moment = datetime.fromisoformat(text.replace("Z", "+00:00"))
    except ValueError:
        raise UserError(f"{option}: {_shown(text)} is not an ISO 8601 time; {allowed}") from None
    if moment.tzinfo is None:
        moment = moment.replace(tzinfo=timezone.utc)
    if not in_supported_years(moment):
        raise UserError(f"{option}: {_shown(text)} is out of range; {allowed}")
    return moment.astimezone(timezone.utc)


def _satellite_choice(wanted: str) -> dict:
    """``--satellite``: ASCII digits are a catalog number (at most 9 of them), anything else a name."""
    from planner.elements import MAX_OMM_CATALOG_NUMBER

    digits = wanted.strip()
    if not (digits.isascii() and digits.isdigit()):
        return dict(name=wanted)
    if len(digits.lstrip("0")) > len(str(MAX_OMM_CATALOG_NUMBER)):  # before int(): 4300 digits raise
        raise UserError(f"--satellite: {_shown(digits)} ({len(digits)} digits) is not a catalog number; "
                        f"allowed 1 to {MAX_OMM_CATALOG_NUMBER}, or a satellite name")
    return dict(norad_id=int(digits))


def _adhoc_study(elements, lat, lon, alt_m, start, days, min_elevation_deg, step_s, satellites, allow_stale):
    """A study built from options alone: one element file, one site, a flat mask."""
    from planner.elements import check_element_age, read_elements, select_element_set
    from planner.passes import Target
    from planner.scenario import StationConfig, WindowConfig, validated
    from planner.passes.station import Station
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
            chosen.append(select_element_set(element_sets, source=str(elements), **_satellite_choice(wanted)))
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


def _load_study(scenario: Path, allow_stale: bool, station: Optional[str] = None):
    from planner.scenario import load_scenario
    from planner.study import Study

    return Study.from_scenario(load_scenario(scenario), allow_stale=allow_stale, station=station)


def _load_studies(scenario: Path, allow_stale: bool, stations: Optional[list[str]]):
    """One study per station asked for (default: every station of the scenario)."""
    home = _load_study(scenario, allow_stale)
    names = stations or home.station_names
    for name in names:
        home.scenario.station_named(name)  # refuse unknown names before computing anything
    return [home if name == home.station_config.name else home.at_station(name) for name in names]


def _with_station(rows: list[dict], study, several: bool) -> list[dict]:
    """Rows for a network get a trailing station column; a single station keeps the contract."""
    return [dict(row, station=study.station.name) for row in rows] if several else rows


def _station_slug(name: str) -> str:
    return "".join(c.lower() if c.isalnum() else "-" for c in name).strip("-")


def _print_passes_table(study, passes) -> None:
    from planner.output.export import iso_utc

    station = study.station
    title = (
        f"Passes over {station.name} ({station.latitude_deg:.4f}, {station.longitude_deg:.4f}), "
        f"{iso_utc(study.start_utc)} to {iso_utc(study.end_utc)}; times UTC, angles deg"
    )
    table = Table(title=title, title_justify="left")
    for heading, justify in (
        ("satellite", "left"), ("date", "left"), ("AOS", "left"), ("TCA", "left"), ("LOS", "left"),
        ("min:s", "right"), ("max el", "right"), ("az AOS/TCA/LOS", "right"), ("range km", "right"),
        ("clipped", "left"),
    ):
        table.add_column(heading, justify=justify, no_wrap=True)
    for p in passes:
        minutes, seconds = divmod(int(round(p.duration_s)), 60)
        # A pass under way at the window's start or end is cut there.
        notes = [n for n, flag in (("start", p.aos_clipped), ("end", p.los_clipped)) if flag]
        aos = iso_utc(p.aos_utc)
        table.add_row(
            p.satellite, aos[:10], aos[11:19], iso_utc(p.tca_utc)[11:19], iso_utc(p.los_utc)[11:19],
            f"{minutes}:{seconds:02d}", f"{p.max_elevation_deg:.1f}",
            f"{_azimuth(p.aos_azimuth_deg)}/{_azimuth(p.tca_azimuth_deg)}/{_azimuth(p.los_azimuth_deg)}",
            f"{p.min_range_km:.0f}", "+".join(notes),
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
    station: Optional[list[str]] = typer.Option(None, "--station", help="Only this station of the scenario's network; repeatable."),
    format: str = typer.Option("table", "--format", help="table, csv or json."),
    output: Optional[Path] = typer.Option(None, "--output", help="Write to this file (atomically) instead of stdout."),
    allow_stale: bool = typer.Option(False, "--allow-stale", help="Go on with element sets more than 30 days from the window."),
    force: bool = FORCE,
) -> None:
    """Predict every pass over the station, with AOS, TCA, LOS and sky track."""
    from planner.output.export import PASS_COLUMNS, pass_row, to_csv, to_json

    _check_format(format)
    if format == "table" and output is not None:
        raise UserError("--output: a table is for the terminal; use --format csv or json with --output")
    if scenario is not None:
        if elements is not None:
            raise UserError("passes: give either a SCENARIO file or --elements, not both")
        studies = _load_studies(scenario, allow_stale, station)
        if satellite:
            names = {t.display_name for t in studies[0].targets}
            unknown = [s for s in satellite if s not in names and not any(str(t.element_set.norad_id) == s for t in studies[0].targets)]
            if unknown:
                shown = sorted(names)[:10]
                raise UserError(f"{scenario}: --satellite {unknown[0]!r} is not in the scenario; allowed: {', '.join(shown)}")
            for study in studies:
                study.targets = [t for t in study.targets if t.display_name in satellite or str(t.element_set.norad_id) in satellite]
    elif elements is not None:
        studies = [_adhoc_study(elements, lat, lon, alt_m, start, days, min_elevation_deg, step_s, satellite, allow_stale)]
    else:
        raise UserError("passes: give a SCENARIO file, or --elements FILE with --lat and --lon")
    rules = _write_rules(force, scenario=studies[0].scenario, inputs=(scenario, elements))
    _check_outputs(rules, {"--output": output})
    several = len(studies) > 1
    rows = []
    for study in studies:
        found = study.passes()
        if format == "table":
            _print_passes_table(study, found)
        rows += _with_station([pass_row(p) for p in found], study, several)
    if format == "json":
        _emit(to_json(rows), output, rules)
    elif format == "csv":
        _emit(to_csv(rows, [*PASS_COLUMNS, *(["station"] if several else [])]), output, rules)


def _geometry_for_budget(study, satellite_name, pass_number, at, elevation_deg, range_km, azimuth_deg):
    """(azimuth_deg, elevation_deg, range_km, time label, the pass or None) for a budget."""
    from planner.link.budget import ORBIT_RADIUS_MARGIN_KM, orbit_radii_km, slant_range_km, slant_range_limits_km
    from planner.output.export import iso_utc
    from planner.passes import Observer, predict_passes

    target = next(t for t in study.targets if t.display_name == study.satellite_config(satellite_name).name)
    chosen = [x is not None for x in (pass_number, at, elevation_deg)]
    if sum(chosen) != 1:
        raise UserError("budget: give exactly one of --pass N, --at ISO_TIME or --elevation-deg E")
    if pass_number is not None:
        found = predict_passes(target, study.station, study.start_utc, study.end_utc, step_s=study.step_s)
        if not 1 <= pass_number <= len(found):
            raise UserError(f"--pass: {pass_number} is out of range; {target.display_name} has {len(found)} passes in the window (1 to {len(found)})")
        chosen_pass = found[pass_number - 1]
        observer = Observer(study.station, chosen_pass.tca_utc, 0.0)
        look = observer.look(target.element_set.satrec, np.array([0.0]))
        return look.azimuth_deg[0], look.elevation_deg[0], look.range_km[0], f"TCA of pass {pass_number}, {iso_utc(chosen_pass.tca_utc)}", chosen_pass
    if at is not None:
        from planner.elements import check_element_age

        moment = _parse_utc("--at", at)
        check_element_age([target.element_set], moment, moment, allow_stale=study.allow_stale)
        look = Observer(study.station, moment, 0.0).look(target.element_set.satrec, np.array([0.0]))
        if not np.isfinite(look.elevation_deg[0]):
            raise UserError(f"--at: SGP4 cannot propagate {target.display_name} to {iso_utc(moment)}")
        if look.elevation_deg[0] < study.station.mask.min_elevation_at(look.azimuth_deg)[0]:
            from planner.errors import warn

            warn(f"{target.display_name} is below the horizon mask at {iso_utc(moment)} (elevation {look.elevation_deg[0]:.1f} deg)")
        return look.azimuth_deg[0], look.elevation_deg[0], look.range_km[0], iso_utc(moment), None
    if not -90.0 <= elevation_deg <= 90.0:
        raise UserError(f"--elevation-deg: {elevation_deg:g} is out of range; allowed -90 to 90")
    if azimuth_deg is not None and not np.isfinite(azimuth_deg):
        raise UserError(f"--azimuth-deg: {azimuth_deg:g} is not a finite number; allowed e.g. 0 to 360")
    azimuth = float(azimuth_deg or 0.0) % 360.0
    satrec = target.element_set.satrec
    if range_km is None:
        if elevation_deg < 0:
            raise UserError("--elevation-deg: below 0 give --range-km as well")
        radius_km = orbit_radii_km(satrec)[1]
        range_km = float(slant_range_km(elevation_deg, radius_km, study.station, azimuth))
        label = (f"elevation {elevation_deg:g} deg, range {range_km:.0f} km to the orbit's mean radius {radius_km:.0f} km "
                 "from the station's WGS84 position")
    else:
        if not np.isfinite(range_km) or range_km <= 0:
            raise UserError(f"--range-km: {range_km:g} is out of range; allowed a finite number more than 0")
        shortest, longest = slant_range_limits_km(satrec, study.station, elevation_deg, azimuth)
        if not shortest <= range_km <= longest:
            perigee, _, apogee = orbit_radii_km(satrec)
            raise UserError(
                f"--range-km: {range_km:g} km is out of reach of {target.display_name}'s orbit at elevation {elevation_deg:g} deg; "
                f"allowed {shortest:.0f} to {longest:.0f} km (the straight lines to its perigee and apogee radii, "
                f"{perigee:.0f} and {apogee:.0f} km, widened by {ORBIT_RADIUS_MARGIN_KM:g} km)"
            )
        label = f"elevation {elevation_deg:g} deg, range {range_km:g} km"
    return azimuth, elevation_deg, range_km, label, None


def _print_exposure(study, out) -> None:
    """RF exposure estimate for the station transmitter at each uplink frequency."""
    from planner.link.budget import uplink_setup
    from planner.link.safety import CAUTION, exposure_table, min_distance_m

    if study.scenario.transmitter is None:
        return
    for sat in study.satellites:
        if sat.uplink_mhz is None:
            continue
        setup = uplink_setup(study, sat.name)
        eirp_w = 10.0 ** (setup.eirp_dbw / 10.0)
        rows = exposure_table(eirp_w, setup.frequency_hz)
        print(f"RF exposure near the station antenna, {sat.uplink_mhz:g} MHz uplink to {sat.name}, EIRP {eirp_w:.1f} W:", file=out)
        for row in rows:
            flag = "within" if row.within_limit else "ABOVE"
            print(f"  {row.distance_m:5.1f} m: {row.power_density_mw_cm2:8.4f} mW/cm^2 ({flag} the general-public limit {row.limit_mw_cm2:.3f})", file=out)
        print(f"  keep the public at least {min_distance_m(eirp_w, setup.frequency_hz):.1f} m from the antenna (far-field estimate)", file=out)
    print(CAUTION, file=out)


@app.command()
def budget(
    scenario: Path = typer.Argument(..., help="Scenario TOML file."),
    satellite: str = typer.Option(..., "--satellite", help="Satellite name (or catalog number) from the scenario."),
    candidate: Optional[str] = typer.Option(None, "--candidate", help="Candidate set-up (required for the downlink)."),
    pass_number: Optional[int] = typer.Option(None, "--pass", help="Budget at the TCA of the N-th pass (1 = first) in the window."),
    at: Optional[str] = typer.Option(None, "--at", help="Budget at this time, ISO 8601 UTC."),
    elevation_deg: Optional[float] = typer.Option(None, "--elevation-deg", help="Budget at this elevation (deg)."),
    range_km: Optional[float] = typer.Option(None, "--range-km", help="Slant range with --elevation-deg (default: from the orbit height)."),
    azimuth_deg: Optional[float] = typer.Option(None, "--azimuth-deg", help="Azimuth with --elevation-deg (default 0)."),
    direction: str = typer.Option("downlink", "--direction", help="downlink (satellite to station) or uplink."),
    station: Optional[str] = typer.Option(None, "--station", help="Station of the scenario's network (default: the home station)."),
    format: str = typer.Option("table", "--format", help="table or json."),
    output: Optional[Path] = typer.Option(None, "--output", help="Write JSON to this file (atomically)."),
    allow_stale: bool = typer.Option(False, "--allow-stale", help="Go on with element sets more than 30 days from the window."),
    force: bool = FORCE,
) -> None:
    """Print the link budget as a ladder of terms, each one recomputable by hand."""
    from planner.link.budget import LADDER, downlink_setup, evaluate, ladder_values, pass_budget, uplink_setup
    from planner.output.export import to_json

    if format not in ("table", "json"):
        raise UserError(f"--format: {format!r} is not a format here; allowed: table, json")
    if direction not in ("downlink", "uplink"):
        raise UserError(f"--direction: {direction!r}; allowed: downlink, uplink")
    study = _load_study(scenario, allow_stale, station)
    rules = _write_rules(force, scenario=study.scenario, inputs=(scenario,))
    _check_outputs(rules, {"--output": output})
    sat_name = study.satellite_config(satellite).name
    if direction == "downlink":
        if candidate is None:
            allowed = ", ".join(study.candidate_names) or "none in this scenario"
            raise UserError(f"--candidate: a downlink budget needs a candidate set-up; allowed: {allowed}")
        study.candidate(candidate)  # refuse an unknown candidate before any computation
    az, el, rng, label, chosen_pass = _geometry_for_budget(study, satellite, pass_number, at, elevation_deg, range_km, azimuth_deg)
    setup = downlink_setup(study, sat_name, candidate) if direction == "downlink" else uplink_setup(study, sat_name)
    row = evaluate(setup, [az], [el], [rng]).iloc[0]
    values = ladder_values(setup, row)
    summary = None
    if chosen_pass is not None:
        along = pass_budget(setup, chosen_pass)
        threshold = study.scenario.criteria.min_margin_db
        steps = np.diff(along["time_s"].to_numpy(), append=along["time_s"].to_numpy()[-1])
        summary = {
            "samples": int(len(along)),
            "min_margin_db": float(along["margin_db"].min()),
            "median_margin_db": float(along["margin_db"].median()),
            "max_margin_db": float(along["margin_db"].max()),
            "seconds_at_or_above_min_margin": float(steps[along["margin_db"].to_numpy() >= threshold].sum()),
            "min_margin_criterion_db": threshold,
        }
    if format == "json":
        document = {
            "satellite": sat_name,
            "direction": direction,
            "candidate": setup.candidate,
            "geometry": label,
            **values,
            "noise": setup.noise_terms,
            "notes": setup.notes,
            "terms": [{"key": k, "value": values[k], "unit": u, "meaning": m} for k, u, m in LADDER],
        }
        if summary:
            document["pass_summary"] = summary
        _emit(to_json(document), output, rules)
        _print_exposure(study, sys.stderr)
        return
    if output is not None:
        raise UserError("--output: the ladder is for the terminal; use --format json with --output")
    table = Table(title=f"{direction} budget: {sat_name} -> {setup.candidate}; {label}", title_justify="left")
    for heading, justify in (("term", "left"), ("value", "right"), ("unit", "left"), ("meaning", "left")):
        table.add_column(heading, justify=justify)
    for key, unit, meaning in LADDER:
        value = values[key]
        if value is None:
            continue
        table.add_row(key, f"{value:.2f}", unit, meaning)
    console = _stdout()
    console.print(table)
    noise = ", ".join(f"{k} {v:.1f}" for k, v in setup.noise_terms.items())
    console.print(f"noise temperatures (K): {noise}")
    for note in setup.notes:
        console.print(f"note: {note}", soft_wrap=True, markup=False)
    if summary:
        console.print(
            f"along the pass ({summary['samples']} samples): margin min {summary['min_margin_db']:.1f} dB, "
            f"median {summary['median_margin_db']:.1f} dB, max {summary['max_margin_db']:.1f} dB; "
            f"{summary['seconds_at_or_above_min_margin']:.0f} s at or above {summary['min_margin_criterion_db']:g} dB"
        )
    _print_exposure(study, sys.stdout)


def _forecast_with_progress(study, candidates, quiet: bool, *, keep_samples: bool = True):
    """Run the forecast with a progress bar on stderr (silenced by --quiet).

    ``keep_samples=False`` for commands that report per pass and per week only (catalogs).
    """
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    from planner.decision.forecast import forecast

    if quiet:
        return forecast(study, candidates, keep_samples=keep_samples)
    progress = Progress(
        TextColumn("budgets"), BarColumn(), TextColumn("{task.completed}/{task.total}"), TimeElapsedColumn(),
        console=Console(stderr=True), transient=True,
    )
    with progress:
        task = progress.add_task("budgets", total=None)

        def report(done: int, total: int) -> None:
            progress.update(task, completed=done, total=total)

        return forecast(study, candidates, progress=report, keep_samples=keep_samples)


def _chosen_candidates(study, candidate):
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
    candidate: Optional[list[str]] = typer.Option(None, "--candidate", help="Only this candidate; repeatable."),
    format: str = typer.Option("table", "--format", help="table, csv or json."),
    output: Optional[Path] = typer.Option(None, "--output", help="Write to this file (atomically)."),
    quiet: bool = typer.Option(False, "--quiet", help="No progress bar."),
    station: Optional[list[str]] = typer.Option(None, "--station", help="Only this station of the scenario's network; repeatable."),
    allow_stale: bool = typer.Option(False, "--allow-stale", help="Go on with element sets more than 30 days from the window."),
    force: bool = FORCE,
) -> None:
    """Weekly forecast per candidate and satellite: passes, usable passes, minutes, data volume."""
    from planner.output.export import WEEK_COLUMNS, to_csv, to_json, week_rows

    _check_format(format)
    if format == "table" and output is not None:
        raise UserError("--output: a table is for the terminal; use --format csv or json with --output")
    studies = _load_studies(scenario, allow_stale, station)
    rules = _write_rules(force, scenario=studies[0].scenario, inputs=(scenario,))
    _check_outputs(rules, {"--output": output})
    several = len(studies) > 1
    rows = []
    for study in studies:
        result = _forecast_with_progress(study, _chosen_candidates(study, candidate), quiet, keep_samples=False)
        rows += _with_station(week_rows(result.weekly), study, several)
        if format == "table":
            _print_week(study, result)
    if format == "csv":
        _emit(to_csv(rows, [*WEEK_COLUMNS, *(["station"] if several else [])]), output, rules)
    elif format == "json":
        _emit(to_json(rows), output, rules)


def _print_week(study, result) -> None:
    from planner.decision.forecast import band_table

    console = _stdout()
    table = Table(title=f"{result.days:g}-day forecast at {study.station.name} (usable: margin >= "
                  f"{study.scenario.criteria.min_margin_db:g} dB for >= {study.scenario.criteria.min_usable_s:g} s)", title_justify="left")
    for heading in ("candidate", "satellite", "passes", "usable", "usable min", "min/day", "Mbit", "Mbit/day", "dropouts"):
        table.add_column(heading, justify="left" if heading in ("candidate", "satellite") else "right")
    for record in result.weekly.to_dict("records"):
        table.add_row(
            record["candidate"], record["satellite"], str(record["passes"]), str(record["usable_passes"]),
            f"{record['usable_minutes']:.1f}", f"{record['usable_minutes_per_day']:.1f}",
            f"{record['data_volume_mbit']:.1f}", f"{record['data_volume_mbit_per_day']:.1f}", str(record["dropouts"]),
        )
    console.print(table)
    bands = band_table(result.outcomes)
    pivot = bands.pivot_table(index="candidate", columns="elevation_band", values="usable_minutes", aggfunc="sum", fill_value=0.0)
    band_view = Table(title="usable minutes by maximum elevation of the pass (deg)", title_justify="left")
    band_view.add_column("candidate")
    for band in pivot.columns:
        band_view.add_column(str(band), justify="right")
    for name, values in pivot.iterrows():
        band_view.add_row(str(name), *[f"{v:.1f}" for v in values])
    console.print(band_view)


@app.command()
def compare(
    scenario: Path = typer.Argument(..., help="Scenario TOML file."),
    candidate: Optional[list[str]] = typer.Option(None, "--candidate", help="Only these candidates; repeatable."),
    format: str = typer.Option("table", "--format", help="table or json."),
    output: Optional[Path] = typer.Option(None, "--output", help="Write the JSON to this file (atomically)."),
    calendar: Optional[Path] = typer.Option(None, "--calendar", help="Write the recommended set-up's usable passes as iCalendar."),
    figures: Optional[Path] = typer.Option(None, "--figures", help="Write the figures (PNG and SVG) into this folder."),
    report: Optional[Path] = typer.Option(None, "--report", help="Write a report folder: tables, figures, calendar, summary."),
    quiet: bool = typer.Option(False, "--quiet", help="No progress bar."),
    station: Optional[list[str]] = typer.Option(None, "--station", help="Only this station of the scenario's network; repeatable."),
    allow_stale: bool = typer.Option(False, "--allow-stale", help="Go on with element sets more than 30 days from the window."),
    force: bool = FORCE,
) -> None:
    """Compare the candidate set-ups and recommend one, with the reasons and a robustness check."""
    from planner.output.export import to_json

    if format not in ("table", "json"):
        raise UserError(f"--format: {format!r} is not a format here; allowed: table, json")
    if format == "table" and output is not None:
        raise UserError("--output: the comparison table is for the terminal; use --format json with --output")
    for option, folder in (("--figures", figures), ("--report", report)):
        _check_folder_outputs(WriteRules(), option, folder, ())
    studies = _load_studies(scenario, allow_stale, station)
    rules = _write_rules(force, scenario=studies[0].scenario, inputs=(scenario,))
    _check_outputs(rules, {"--output": output})
    several = len(studies) > 1
    documents = []
    for study in studies:
        # A network writes each station's files apart: a sub-folder, or the station in the file name.
        slug = _station_slug(study.station.name)
        where = dict(
            calendar=calendar if not several or calendar is None else calendar.with_name(f"{calendar.stem}-{slug}{calendar.suffix}"),
            figures=figures if not several or figures is None else figures / slug,
            report=report if not several or report is None else report / slug,
        )
        _check_compare_outputs(rules, study, **where)
        decision = _compare_one(study, candidate, quiet, format, rules, **where)
        documents.append(dict(station=study.station.name, **decision.to_contract()) if several else decision.to_contract())
    if format == "json":
        _emit(to_json({"stations": documents} if several else documents[0]), output, rules)


def _check_compare_outputs(rules, study, *, calendar, figures, report) -> None:
    """Refuse, before the forecast, every file of compare's outputs the rules forbid."""
    from planner.output.export import figure_file_names, report_file_names

    satellites = [t.display_name for t in study.targets]
    _check_outputs(rules, {"--calendar": calendar})
    _check_folder_outputs(rules, "--figures", figures, figure_file_names(satellites))
    _check_folder_outputs(rules, "--report", report, report_file_names(satellites))


def _compare_one(study, candidate, quiet, format, rules, *, calendar, figures, report):
    from planner.output.export import calendar_ics, write_figures, write_report
    from planner.fileio import write_atomically
    from planner.decision.recommend import recommend

    result = _forecast_with_progress(study, _chosen_candidates(study, candidate), quiet)
    decision = recommend(result, study)
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
    console = _stdout()
    table = Table(title=f"Candidates at {study.station.name}, one receiver, {result.days:g} days", title_justify="left")
    for heading in ("rank", "candidate", f"score ({decision.score_unit})", "usable passes", "usable min", "Mbit", "dropouts", "lost to conflicts"):
        table.add_column(heading, justify="left" if heading == "candidate" else "right")
    for rank, score in enumerate(decision.ranking, start=1):
        table.add_row(
            str(rank), score.candidate, f"{score.score:.2f}", str(score.usable_passes), f"{score.usable_minutes:.1f}",
            f"{score.data_volume_mbit:.1f}", str(score.dropouts), f"{score.lost_to_conflicts:.2f}",
        )
    console.print(table)
    console.print(decision.explanation, soft_wrap=False, markup=False)
    if report is not None:
        console.print(f"Report written to {report}/ (summary.md, tables, figures/, calendar.ics).")
    return decision


@app.command()
def rank(
    scenario: Path = typer.Argument(..., help="Scenario TOML file (its [catalog] and [[satellite]] entries are ranked)."),
    candidate: str = typer.Option(..., "--candidate", help="Candidate set-up to rank the objects with."),
    station: Optional[str] = typer.Option(None, "--station", help="Station of the scenario's network (default: the home station)."),
    top: int = typer.Option(25, "--top", help="How many objects to list (the CSV/JSON has them all)."),
    format: str = typer.Option("table", "--format", help="table, csv or json."),
    output: Optional[Path] = typer.Option(None, "--output", help="Write to this file (atomically)."),
    quiet: bool = typer.Option(False, "--quiet", help="No progress bar."),
    allow_stale: bool = typer.Option(False, "--allow-stale", help="Go on with element sets more than 30 days from the window."),
    force: bool = FORCE,
) -> None:
    """Rank every object of the scenario (a whole catalog) by usable contact time for one set-up."""
    from planner.output.export import to_csv, to_json

    _check_format(format)
    if top < 1:
        raise UserError(f"--top: {top} is out of range; allowed 1 or more")
    study = _load_study(scenario, allow_stale, station)
    rules = _write_rules(force, scenario=study.scenario, inputs=(scenario,))
    _check_outputs(rules, {"--output": output})
    study.candidate(candidate)
    result = _forecast_with_progress(study, [candidate], quiet, keep_samples=False)
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
        _emit(to_csv(rows, list(rows[0]) if rows else ["rank"]), output, rules)
        return
    if format == "json":
        _emit(to_json(rows), output, rules)
        return
    if output is not None:
        raise UserError("--output: a table is for the terminal; use --format csv or json with --output")
    table = Table(title=f"{len(rows)} objects ranked by usable time at {study.station.name} with {candidate}, {result.days:g} days",
                  title_justify="left")
    for heading in ("rank", "satellite", "catalog no.", "passes", "usable", "usable min", "min/day", "Mbit"):
        table.add_column(heading, justify="left" if heading == "satellite" else "right")
    for row in rows[:top]:
        table.add_row(str(row["rank"]), row["satellite"], str(row["norad_id"]), str(row["passes"]), str(row["usable_passes"]),
                      f"{row['usable_minutes']:.1f}", f"{row['usable_minutes_per_day']:.1f}", f"{row['data_volume_mbit']:.1f}")
    _stdout().print(table)


@app.command()
def sweep(
    scenario: Path = typer.Argument(..., help="Scenario TOML file."),
    candidate: str = typer.Option(..., "--candidate", help="Candidate whose reflector spacing is swept."),
    reflector_spacing: str = typer.Option(..., "--reflector-spacing", help="START:STOP:STEP in wavelengths (0.1:1:0.05) or metres (0.05m:0.6m:0.05m)."),
    figure: Optional[Path] = typer.Option(None, "--figure", help="Write the sweep figure here (a stem: .png and .svg are added)."),
    station: Optional[str] = typer.Option(None, "--station", help="Station of the scenario's network (default: the home station)."),
    format: str = typer.Option("table", "--format", help="table, csv or json."),
    output: Optional[Path] = typer.Option(None, "--output", help="Write CSV/JSON to this file (atomically)."),
    quiet: bool = typer.Option(False, "--quiet", help="No progress bar."),
    allow_stale: bool = typer.Option(False, "--allow-stale", help="Go on with element sets more than 30 days from the window."),
    force: bool = FORCE,
) -> None:
    """Weekly usable minutes and data volume against reflector spacing; names the best spacing."""
    from rich.progress import BarColumn, Progress, TextColumn

    from planner.output import plots
    from planner.output.export import to_csv, to_json
    from planner.decision.sweep import parse_spacing_range, sweep_reflector

    _check_format(format)
    study = _load_study(scenario, allow_stale, station)
    rules = _write_rules(force, scenario=study.scenario, inputs=(scenario,))
    _check_outputs(rules, {"--output": output})
    figure_at = None if figure is None else _figure_target("--figure", figure, rules)
    base = study.candidate(candidate)
    spacings = parse_spacing_range(reflector_spacing, base.pattern.frequency_hz)
    if quiet:
        result = sweep_reflector(study, candidate, spacings)
    else:
        bar = Progress(TextColumn("spacings"), BarColumn(), TextColumn("{task.completed}/{task.total}"), console=Console(stderr=True), transient=True)
        with bar:
            task = bar.add_task("spacings", total=len(spacings))
            result = sweep_reflector(study, candidate, spacings, progress=lambda done, total: bar.update(task, completed=done))
    if figure_at is not None:
        chart = plots.sweep_chart(result.table, result.per_satellite, title=f"{candidate}: reflector spacing sweep",
                                  best_spacing_wavelengths=result.best_spacing_wavelengths)
        for path in plots.save_figure(chart, *figure_at, rules=rules):
            print(f"wrote {path}", file=sys.stderr)
    rows = [{k: (round(v, 4) if isinstance(v, float) else v) for k, v in r.items()} for r in result.table.to_dict("records")]
    if format == "csv":
        _emit(to_csv(rows, list(result.table.columns)), output, rules)
        return
    if format == "json":
        _emit(to_json({"candidate": candidate, "objective": result.objective, "spacings": rows,
                       "best_spacing_wavelengths": result.best_spacing_wavelengths,
                       "runner_up_spacing_wavelengths": result.runner_up_spacing_wavelengths,
                       "margin_of_victory": result.margin_of_victory, "summary": result.summary()}), output, rules)
        return
    if output is not None:
        raise UserError("--output: a table is for the terminal; use --format csv or json with --output")
    table = Table(title=f"Reflector spacing sweep for {candidate} ({result.objective})", title_justify="left")
    for heading in ("spacing wl", "spacing cm", "score", "usable min", "Mbit", "usable passes", "dropouts"):
        table.add_column(heading, justify="right")
    for r in result.table.to_dict("records"):
        mark = " *" if r["spacing_wavelengths"] == result.best_spacing_wavelengths else ""
        table.add_row(f"{r['spacing_wavelengths']:.3g}{mark}", f"{r['spacing_m'] * 100:.1f}", f"{r['score']:.2f}",
                      f"{r['usable_minutes']:.1f}", f"{r['data_volume_mbit']:.1f}", str(r["usable_passes"]), str(r["dropouts"]))
    console = _stdout()
    console.print(table)
    console.print(result.summary())


pattern_app = typer.Typer(help="Antenna pattern tables: build them from models, inspect them.", no_args_is_help=True)
app.add_typer(pattern_app, name="pattern")


def _key_values(items: list[str]) -> dict[str, str]:
    values = {}
    for item in items:
        key, sep, value = item.partition("=")
        if not sep or not key.strip():
            raise UserError(f"pattern build: {item!r} is not KEY=VALUE; e.g. spacing_wavelengths=0.2")
        values[key.strip()] = value.strip()
    return values


@pattern_app.command("build")
def pattern_build(
    template: Optional[str] = typer.Argument(None, help="Template (omit to regenerate every shipped table): image-turnstile, isotropic-rhcp (analytic); dipole, turnstile, crossed-loops (wire model, method of moments)."),
    parameters: Optional[list[str]] = typer.Argument(None, help="KEY=VALUE template parameters, e.g. spacing_wavelengths=0.2 reflector=pec exponent=4."),
    spacing_wl: Optional[float] = typer.Option(None, "--spacing-wl", help="Feed height above the reflector, wavelengths (spacing_wavelengths=...)."),
    frequency_mhz: Optional[float] = typer.Option(None, "--frequency-mhz", help="Design frequency, MHz (default 436)."),
    out: Optional[Path] = typer.Option(None, "--out", help="Output file (one template) or folder (all shipped tables)."),
    list_parameters: bool = typer.Option(False, "--list", help="List the template's parameters with their ranges, then stop."),
    force: bool = FORCE,
) -> None:
    """Generate pattern tables from the project's own antenna models."""
    from planner.antenna import write_pattern
    from planner.antenna.registry import SHIPPED_PATTERNS, build_pattern, build_shipped_patterns
    from planner.antenna.registry import TEMPLATES as ANALYTIC
    from planner.antenna.synth.templates import TEMPLATES as WIRE

    rules = _write_rules(force)
    if template is None:
        folder = out or Path("patterns")
        if not folder.is_dir():
            raise UserError(f"--out: folder {folder} does not exist")
        _check_folder_outputs(rules, "--out", folder, SHIPPED_PATTERNS)
        for path in build_shipped_patterns(folder, rules=rules):
            print(f"wrote {path}", file=sys.stderr)
        return
    if template not in ANALYTIC and template not in WIRE:
        raise UserError(f"pattern build: template {template!r} is unknown; allowed: {', '.join([*ANALYTIC, *WIRE])}")
    if list_parameters:
        if template in WIRE:
            from planner.antenna.synth.tables import template_options

            specs = dict(WIRE[template][1], **template_options(template))
            for name, spec in specs.items():
                print(f"{name} = {spec.default!r}  ({spec.allowed}) {spec.help}")
        else:
            import inspect

            for name, parameter in inspect.signature(ANALYTIC[template]).parameters.items():
                print(f"{name} = {parameter.default!r}" if parameter.default is not inspect.Parameter.empty else f"{name} (required)")
        return
    if out is None:
        raise UserError("--out: give the file to write the pattern table to")
    _check_outputs(rules, {"--out": out})
    values: dict[str, object] = _key_values(parameters or [])
    if spacing_wl is not None:
        values["spacing_wavelengths"] = spacing_wl
    if frequency_mhz is not None:
        values["frequency_hz"] = frequency_mhz * 1e6
    if template in WIRE:
        from planner.antenna.synth.tables import build_template_table

        command = "planner pattern build " + " ".join([template, *[f"{k}={v}" for k, v in values.items()]])
        table = build_template_table(template, values, command=command)
    else:
        values.setdefault("frequency_hz", 436e6)
        table = build_pattern(template, **values)
    write_pattern(out, table, rules=rules)
    for key in ("feed_impedance_ohm", "feed_vswr", "radiation_efficiency"):
        if key in table.header:
            print(f"{key}: {table.header[key]}", file=sys.stderr)
    print(f"wrote {out}", file=sys.stderr)


@app.command()
def harness(
    frequency_mhz: Optional[float] = typer.Option(None, "--frequency-mhz", help="Operating frequency, MHz (not with --pattern)."),
    velocity_factor: float = typer.Option(0.66, "--velocity-factor", help="Velocity factor of the phasing line."),
    measured_length_m: Optional[float] = typer.Option(None, "--measured-length-m", help="A quarter-wave line as measured (gives the implied velocity factor)."),
    length_error_m: float = typer.Option(0.0, "--length-error-m", help="How much longer (+) or shorter (-) than a quarter wave the line is cut."),
    z0_ohm: float = typer.Option(50.0, "--z0-ohm", help="Line impedance, ohm."),
    load_ohm: Optional[str] = typer.Option(None, "--load-ohm", help="Load at the far end, e.g. 50 or 100-40j (gives the impedance seen through the line)."),
    format: str = typer.Option("table", "--format", help="table or json."),
    pattern: Optional[Path] = typer.Option(None, "--pattern", help="A pattern table built with feed=harness: how cut errors on its phasing line and matching section move the axial ratio, VSWR and margin overhead."),
    cut_error_mm: float = typer.Option(5.0, "--cut-error-mm", help="With --pattern: the cut error tried, mm (each part is cut this much short, exact and long)."),
) -> None:
    """Phasing-harness arithmetic: quarter-wave length, implied velocity factor, and what a cutting error costs."""
    from planner.output.export import to_json
    from planner.antenna.harness import HARNESS_UNITS, harness_report

    if format not in ("table", "json"):
        raise UserError(f"--format: {format!r} is not a format here; allowed: table, json")
    if pattern is not None:
        if frequency_mhz is not None or measured_length_m is not None or load_ohm is not None or length_error_m != 0.0:
            raise UserError("--pattern: the table gives the frequency and the harness; allowed with it: --cut-error-mm, --format")
        _harness_sensitivity(pattern, cut_error_mm, format)
        return
    if frequency_mhz is None:
        raise UserError("--frequency-mhz: give the operating frequency in MHz (1 to 50000), or --pattern FILE")
    if not 1.0 <= frequency_mhz <= 50000.0:
        raise UserError(f"--frequency-mhz: {frequency_mhz:g} is out of range; allowed 1 to 50000")
    load = None
    if load_ohm is not None:
        try:
            load = complex(load_ohm.replace(" ", "").replace("i", "j"))
        except ValueError:
            raise UserError(f"--load-ohm: {load_ohm!r} is not an impedance; e.g. 50 or 100-40j") from None
    report = harness_report(frequency_mhz * 1e6, velocity_factor, measured_length_m=measured_length_m,
                            length_error_m=length_error_m, z0_ohm=z0_ohm, load_ohm=load)
    if format == "json":
        clean = {k: ({"re": v.real, "im": v.imag} if isinstance(v, complex) else v) for k, v in report.items()}
        sys.stdout.write(to_json(clean))
        return
    table = Table(title=f"Phasing harness at {frequency_mhz:g} MHz", title_justify="left")
    for heading, justify in (("quantity", "left"), ("value", "right"), ("unit", "left")):
        table.add_column(heading, justify=justify)
    for key, value in report.items():
        if isinstance(value, complex):
            text = f"{value.real:.2f} {'+' if value.imag >= 0 else '-'} j{abs(value.imag):.2f}"
        elif isinstance(value, float):
            text = f"{value:.4g}"
        else:
            text = str(value)
        table.add_row(key, text, HARNESS_UNITS.get(key, ""))
    _stdout().print(table)


def _harness_sensitivity(pattern: Path, cut_error_mm: float, format: str) -> None:
    """``planner harness --pattern FILE``: the table's harness rebuilt and cut wrong."""
    from planner.output.export import to_json
    from planner.antenna import load_pattern
    from planner.antenna.synth.design import cut_sensitivity
    from planner.antenna.synth.tables import harness_from_header

    if not (np.isfinite(cut_error_mm) and 0.0 < cut_error_mm <= 50.0):
        raise UserError(f"--cut-error-mm: {cut_error_mm:g} is out of range; allowed more than 0 up to 50")
    table = load_pattern(pattern)
    design = harness_from_header(table.header, str(pattern))
    error_m = cut_error_mm / 1000.0
    rows = cut_sensitivity(design, (-error_m, 0.0, error_m))
    sense = design.sense.upper()
    if format == "json":
        sys.stdout.write(to_json({"pattern": str(pattern), "frequency_mhz": design.frequency_hz / 1e6, "sense": sense,
                                  "phasing_line": design.phasing.describe(), "matching_section": design.match.describe(),
                                  "rows": rows}))
        return
    console = _stdout()
    console.print(f"phasing line: {design.phasing.describe()}", soft_wrap=True)
    console.print(f"matching section: {design.match.describe()}", soft_wrap=True)
    out = Table(title=f"Cut errors at {design.frequency_hz / 1e6:g} MHz, {sense} wave overhead", title_justify="left")
    for heading in ("part", "error", "zenith axial ratio dB", "feed VSWR", f"{sense} gain change dB",
                    "mismatch loss change dB", "margin change dB"):
        out.add_column(heading, justify="left" if heading == "part" else "right")
    for r in rows:
        out.add_row(r["part"], f"{r['error']:+g} {r['error_unit']}", f"{r['axial_ratio_db']:.2f}", f"{r['vswr']:.3f}",
                    f"{r['gain_change_db']:+.3f}", f"{r['mismatch_change_db']:+.3f}", f"{r['margin_change_db']:+.3f}")
    console.print(out)


@pattern_app.command("show")
def pattern_show(
    file: Path = typer.Argument(..., help="Pattern table (CSV)."),
    azimuth_deg: float = typer.Option(0.0, "--azimuth-deg", help="Azimuth of the elevation cut, deg."),
    step_deg: float = typer.Option(10.0, "--step-deg", help="Elevation step of the printed cut, deg."),
    figure: Optional[Path] = typer.Option(None, "--figure", help="Also write the elevation cuts as a figure (stem; .png and .svg)."),
    force: bool = FORCE,
) -> None:
    """Elevation cut, axial ratio against elevation, and the feed data a pattern table carries."""
    from planner.output import plots
    from planner.antenna import load_pattern

    if not 0.5 <= step_deg <= 90:
        raise UserError(f"--step-deg: {step_deg:g} is out of range; allowed 0.5 to 90")
    if not np.isfinite(azimuth_deg):
        raise UserError(f"--azimuth-deg: {azimuth_deg:g} is not a finite number; allowed e.g. 0 to 360")
    rules = _write_rules(force, inputs=(file,))
    figure_at = None if figure is None else _figure_target("--figure", figure, rules)
    table = load_pattern(file)
    console = _stdout()
    for key in ("model", "parameters", "feed_impedance_ohm", "feed_vswr", "radiation_efficiency", "generated_by"):
        if key in table.header:
            console.print(f"{key}: {table.header[key]}", soft_wrap=True)
    console.print(f"frequency: {table.frequency_hz / 1e6:g} MHz; {'azimuth-symmetric' if table.symmetric else 'with azimuth'}")
    elevation = np.arange(-90.0, 90.0 + 1e-9, step_deg)
    azimuth = np.full_like(elevation, azimuth_deg % 360.0)
    rhcp, lhcp = table.gains_dbic(azimuth, elevation)
    total = table.total_gain_dbi(azimuth, elevation)
    axial = table.axial_ratio_db(azimuth, elevation)
    sense = table.sense(azimuth, elevation)
    cut = Table(title=f"elevation cut at azimuth {azimuth_deg % 360:g} deg", title_justify="left")
    for heading in ("elevation deg", "RHCP dBic", "LHCP dBic", "total dBi", "axial ratio dB", "sense"):
        cut.add_column(heading, justify="right")
    for row in zip(elevation, rhcp, lhcp, total, axial, sense):
        el, r, l, t, ar, sn = row
        cut.add_row(f"{el:g}", f"{r:.2f}", f"{l:.2f}", f"{t:.2f}", f"{ar:.1f}", {1: "RHCP", -1: "LHCP"}.get(int(sn), "linear"))
    console.print(cut)
    if figure_at is not None:
        for path in plots.save_figure(plots.elevation_cuts({file.stem: table}, azimuth_deg=azimuth_deg), *figure_at, rules=rules):
            print(f"wrote {path}", file=sys.stderr)


_WARNED: set[str] = set()


def _show_warning(message, category, filename, lineno, file=None, line=None):
    """One line on stderr per distinct warning (a model's validity note is said once a run)."""
    text = f"planner: warning: {message}" if issubclass(category, PlannerWarning) else f"planner: warning: {category.__name__}: {message}"
    if text not in _WARNED:
        _WARNED.add(text)
        print(text, file=sys.stderr)


def main() -> None:
    """Entry point: user errors -> one line and exit code 2; bugs -> exit code 1."""
    warnings.simplefilter("always", PlannerWarning)
    warnings.showwarning = _show_warning
    try:
        # Not standalone, so typer's own usage errors come here and are reported in one line too.
        result = app(standalone_mode=False)
    except UserError as error:
        print(f"planner: error: {error}", file=sys.stderr)
        sys.exit(2)
    except KeyboardInterrupt:
        print("planner: interrupted", file=sys.stderr)
        sys.exit(130)
    except OSError as error:  # a filesystem problem no reader or writer foresaw: still one line
        where = error.filename if error.filename is not None else "file system"
        print(f"planner: error: {where}: {error.strerror or error}", file=sys.stderr)
        sys.exit(2)
    except Exception as error:  # noqa: BLE001 - the command-line parser's own exceptions
        if hasattr(error, "format_message") and hasattr(error, "exit_code"):
            message = " ".join(str(error.format_message()).split())
            if message:  # an empty message: the help text was already shown (no command given)
                print(f"planner: error: {message} (see planner --help)", file=sys.stderr)
            sys.exit(error.exit_code)
        if type(error).__name__ == "Abort":
            print("planner: interrupted", file=sys.stderr)
            sys.exit(130)
        raise
    sys.exit(result if isinstance(result, int) else 0)


if __name__ == "__main__":
    main()

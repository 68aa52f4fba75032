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

# The columns `--candidate` adds after the contract's, in CSV and JSON.
USABLE_COLUMNS = ("usable_start_utc", "usable_end_utc", "usable_s", "max_margin_db")


def usable_by_pass(study, candidate: str, numbered) -> list[dict]:
    """For each of ``numbered``'s passes, in order, the :data:`USABLE_COLUMNS` for one candidate.

    Computed through the forecast (one budget per satellite, the samples summarized and dropped);
    the values are None for a pass the candidate cannot use (``usable`` false in its outcome).
    """
    from planner.decision.forecast import forecast, usable_span_utc
    from planner.output.export import iso_utc

    outcomes = forecast(study, [candidate], keep_samples=False, numbered=numbered).outcomes
    firsts, lasts = usable_span_utc(outcomes)
    by_pass = {}
    for k, record in enumerate(outcomes.to_dict("records")):
        usable = bool(record["usable"])
        by_pass[(record["satellite"], int(record["pass_number"]))] = {
            "usable_start_utc": iso_utc(firsts[k]) if usable else None,
            "usable_end_utc": iso_utc(lasts[k]) if usable else None,
            "usable_s": round(float(record["usable_s"]), 6) if usable else None,
            "max_margin_db": round(float(record["max_margin_db"]), 2) if usable else None,
        }
    empty = dict.fromkeys(USABLE_COLUMNS)
    return [by_pass.get((p.satellite, number), empty) for number, p in numbered]


def _print_passes_table(study, passes, usable=None, candidate=None) -> None:
    from planner.output.export import iso_utc

    station = study.station
    title = (
        f"Passes over {station.name} ({station.latitude_deg:.4f}, {station.longitude_deg:.4f}), "
        f"{iso_utc(study.start_utc)} to {iso_utc(study.end_utc)}; times UTC, angles deg"
        + (f"; usable span and peak margin (dB) with {candidate}" if candidate else "")
    )
    table = Table(title=title, title_justify="left", collapse_padding=usable is not None)
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
        *((("usable", "left"), ("peak", "right")) if usable else ()),
    ):
        table.add_column(heading, justify=cast(JustifyMethod, justify), no_wrap=True)
    for k, p in enumerate(passes):
        minutes, seconds = divmod(int(round(p.duration_s)), 60)
        # A pass under way at the window's start or end is cut there.
        notes = [n for n, flag in (("start", p.aos_clipped), ("end", p.los_clipped)) if flag]
        aos = iso_utc(p.aos_utc)
        extra = []
        if usable:
            row = usable[k]
            extra = (
                ["-", "-"]
                if row["usable_s"] is None
                else [f"{row['usable_start_utc'][11:19]}-{row['usable_end_utc'][11:19]}", f"{row['max_margin_db']:.1f}"]
            )
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
            *extra,
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
    candidate: str | None = typer.Option(
        None, "--candidate", help="Add each pass's usable start and end and peak margin with this candidate set-up."
    ),
    station: list[str] | None = common.STATIONS,
    format: str = common.FORMAT_ANY,
    output: Path | None = common.OUTPUT,
    allow_stale: bool = common.ALLOW_STALE,
    force: bool = common.FORCE,
) -> None:
    """Predict every pass over the station, with AOS, TCA, LOS and sky track."""
    from planner.output.columns import concatenated, table_csv, table_json
    from planner.output.export import PASS_COLUMNS

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
        if candidate is not None:
            studies[0].candidate(candidate)  # unknown names: one line with the allowed ones
    elif elements is not None:
        if candidate is not None:
            raise UserError("--candidate: candidate set-ups come from a scenario's [[candidate]] tables; give a SCENARIO file")
        studies = [common.adhoc_study(elements, lat, lon, alt_m, start, days, min_elevation_deg, step_s, satellite, allow_stale)]
    else:
        raise UserError("passes: give a SCENARIO file, or --elements FILE with --lat and --lon")
    rules = common.write_rules(force, scenario=studies[0].scenario, inputs=(scenario, elements))
    common.check_outputs(rules, {"--output": output})
    several = len(studies) > 1
    tables = []
    for study in studies:
        found, usable = _passes_and_usable(study, candidate)
        if format == "table":
            _print_passes_table(study, found, usable, candidate)
        else:
            tables.append(_pass_columns(study, found, usable, several))
    columns = [*PASS_COLUMNS, *(USABLE_COLUMNS if candidate is not None else ()), *(["station"] if several else [])]
    if format == "json":
        common.emit(table_json(concatenated(tables, columns), columns), output, rules)
    elif format == "csv":
        common.emit(table_csv(concatenated(tables, columns), columns), output, rules)


def _passes_and_usable(study, candidate: str | None) -> tuple[list, list[dict] | None]:
    """The study's passes, and with a candidate the usable columns of each.

    The pass list alone predicts no tracks and leaves the budget modules unimported (a
    second of start-up); --candidate needs the tracks for the budget along each pass.
    """
    if candidate is None:
        return study.passes(tracks=False), None
    from planner.decision.forecast import numbered_passes

    numbered = numbered_passes(study)
    return [p for _, p in numbered], usable_by_pass(study, candidate, numbered)


def _pass_columns(study, found, usable, several: bool) -> dict:
    """One study's passes as output columns: the contract's, then --candidate's, then the station's."""
    import numpy as np

    from planner.output.columns import pass_table

    table = pass_table(found)
    if usable is not None:
        for name in USABLE_COLUMNS:
            table[name] = np.array([row[name] for row in usable], dtype=object)
    if several:
        table["station"] = np.full(len(found), study.station.name, dtype=object)
    return table

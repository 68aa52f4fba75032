"""The `budget` command: the link budget as a ladder of terms at one moment or elevation."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import cast

import typer
from rich.console import JustifyMethod
from rich.table import Table

from planner.cli import common
from planner.cli.app import app
from planner.errors import UserError


def _print_exposure(study, sat_name: str, out) -> None:
    """RF exposure estimate for the station transmitter on the uplink of the budget's satellite.

    Only that satellite's: the estimate is about transmitting to the satellite asked for, and the
    budget of one satellite says nothing of the station's other uplinks. Nothing without a
    [transmitter] or when the satellite has no uplink.
    """
    from planner.link.safety import CAUTION, DISTANCE_STEP_M, LIMIT_BASIS, exposure_table, recommended_distance_m

    sat = study.satellite_config(sat_name)
    if study.scenario.transmitter is None or sat.uplink_mhz is None:
        return
    setup = study.uplink_setup(sat.name)
    eirp_w = 10.0 ** (setup.eirp_dbw / 10.0)
    rows = exposure_table(eirp_w, setup.frequency_hz)
    limit = rows[0].limit_mw_cm2
    print(f"RF exposure near the station antenna, {sat.uplink_mhz:g} MHz uplink to {sat.name}, EIRP {eirp_w:.1f} W:", file=out)
    print(f"  general-public limit {limit:.3f} mW/cm^2 ({LIMIT_BASIS} at {sat.uplink_mhz:g} MHz)", file=out)
    for row in rows:
        flag = "within" if row.within_limit else "ABOVE"
        print(f"  {row.distance_m:5.1f} m: {row.power_density_mw_cm2:8.4f} mW/cm^2 ({flag} the limit)", file=out)
    distance_m = recommended_distance_m(eirp_w, setup.frequency_hz)
    print(
        f"  keep the public at least {distance_m:.1f} m from the antenna (far-field estimate, rounded up to "
        f"{DISTANCE_STEP_M:g} m so that the density there is within the limit)",
        file=out,
    )
    print(CAUTION, file=out)


def _ends(direction: str, station_name: str, sat_name: str, candidate: str) -> str:
    """Who transmits to whom, in signal order: the station's transmitter up, the satellite down to a candidate."""
    if direction == "uplink":
        return f"{station_name} -> {sat_name}"
    return f"{sat_name} -> {candidate}"


@app.command()
def budget(
    scenario: Path = typer.Argument(..., help="Scenario TOML file."),
    satellite: str = typer.Option(..., "--satellite", help="Satellite name (or catalog number) from the scenario."),
    candidate: str | None = typer.Option(None, "--candidate", help="Candidate set-up (required for the downlink)."),
    pass_number: int | None = typer.Option(None, "--pass", help="Budget at the TCA of the N-th pass (1 = first) in the window."),
    at: str | None = typer.Option(None, "--at", help="Budget at this time, ISO 8601 UTC."),
    elevation_deg: float | None = typer.Option(None, "--elevation-deg", help="Budget at this elevation (deg)."),
    range_km: float | None = typer.Option(
        None, "--range-km", help="Slant range with --elevation-deg (default: from the orbit height)."
    ),
    azimuth_deg: float | None = typer.Option(None, "--azimuth-deg", help="Azimuth with --elevation-deg (default 0)."),
    direction: str = typer.Option("downlink", "--direction", help="downlink (satellite to station) or uplink."),
    station: str | None = common.STATION,
    format: str = common.FORMAT_TABLE_JSON,
    output: Path | None = common.OUTPUT,
    allow_stale: bool = common.ALLOW_STALE,
    force: bool = common.FORCE,
) -> None:
    """Print the link budget as a ladder of terms, each one recomputable by hand."""
    from planner.link.budget import LADDER, evaluate, ladder_values, pass_budget, pass_summary, pattern_file_name
    from planner.link.geometry import budget_geometry
    from planner.output.export import to_json

    if format not in ("table", "json"):
        raise UserError(f"--format: {format!r} is not a format here; allowed: table, json")
    if direction not in ("downlink", "uplink"):
        raise UserError(f"--direction: {direction!r}; allowed: downlink, uplink")
    study = common.load_study(scenario, allow_stale, station)
    rules = common.write_rules(force, scenario=study.scenario, inputs=(scenario,))
    common.check_outputs(rules, {"--output": output})
    sat_name = study.satellite_config(satellite).name
    if direction == "downlink":
        if candidate is None:
            allowed = ", ".join(study.candidate_names) or "none in this scenario"
            raise UserError(f"--candidate: a downlink budget needs a candidate set-up; allowed: {allowed}")
        study.candidate(candidate)  # refuse an unknown candidate before any computation
    moment = None if at is None else common.parse_utc("--at", at)
    az, el, rng, label, chosen_pass = budget_geometry(
        study, satellite, pass_number, moment, elevation_deg, range_km, azimuth_deg, direction=direction
    )
    setup = study.downlink_setup(sat_name, candidate) if direction == "downlink" else study.uplink_setup(sat_name)
    row = evaluate(setup, [az], [el], [rng]).iloc[0]
    values = ladder_values(setup, row)
    summary = None
    if chosen_pass is not None:
        summary = pass_summary(pass_budget(setup, chosen_pass), study.criteria.min_margin_db)
    if format == "json":
        document = {
            "satellite": sat_name,
            "direction": direction,
            "candidate": setup.candidate,
            "pattern_table": None if setup.pattern is None else pattern_file_name(setup.pattern),
            "geometry": label,
            **values,
            "noise": setup.noise_terms,
            "notes": setup.notes,
            "model_notes": setup.model_notes,
            "terms": [
                {"key": r.key, "value": values[r.key], "unit": r.unit, "meaning": r.meaning, "stage": r.stage} for r in LADDER
            ],
        }
        if summary:
            document["pass_summary"] = summary
        common.emit(to_json(document), output, rules)
        _print_exposure(study, sat_name, sys.stderr)
        return
    if output is not None:
        raise UserError("--output: the ladder is for the terminal; use --format json with --output")
    table = Table(
        title=f"{direction} budget: {_ends(direction, study.station.name, sat_name, setup.candidate)}; {label}",
        title_justify="left",
    )
    for heading, justify in (("stage", "left"), ("term", "left"), ("value", "right"), ("unit", "left"), ("meaning", "left")):
        table.add_column(heading, justify=cast(JustifyMethod, justify))
    stage = None
    for row in LADDER:
        value = values[row.key]
        if value is None:
            continue
        table.add_row(row.stage if row.stage != stage else "", row.key, f"{value:.2f}", row.unit, row.meaning)
        stage = row.stage
    console = common.stdout()
    console.print(table)
    noise = ", ".join(f"{k} {v:.1f}" for k, v in setup.noise_terms.items())
    console.print(f"noise temperatures (K): {noise}")
    if setup.pattern is not None:
        console.print(
            f"antenna: pattern table {pattern_file_name(setup.pattern)} ({setup.pattern.frequency_hz / 1e6:g} MHz)",
            soft_wrap=True,
            markup=False,
        )
    for note in setup.notes:
        console.print(f"note: {note}", soft_wrap=True, markup=False)
    for note in setup.model_notes:
        console.print(f"modelling note: {note}", soft_wrap=True, markup=False)
    if summary:
        console.print(
            f"along the pass ({summary['samples']} samples): margin min {summary['min_margin_db']:.1f} dB, "
            f"median {summary['median_margin_db']:.1f} dB, max {summary['max_margin_db']:.1f} dB; "
            f"{summary['seconds_at_or_above_min_margin']:.0f} s at or above {summary['min_margin_criterion_db']:g} dB"
        )
    _print_exposure(study, sat_name, sys.stdout)

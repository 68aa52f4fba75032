"""The `sheet` command: the build sheet of the recommended set-up, or of a named candidate."""

from __future__ import annotations

from pathlib import Path

import typer

from planner.cli import common
from planner.cli.app import app
from planner.errors import UserError


@app.command()
def sheet(
    scenario: Path = typer.Argument(..., help="Scenario TOML file."),
    candidate: str | None = typer.Option(
        None, "--candidate", help="The candidate to build (default: the one the comparison recommends)."
    ),
    format: str = common.FORMAT_TABLE_JSON,
    output: Path | None = common.OUTPUT,
    quiet: bool = common.QUIET,
    station: str | None = common.STATION,
    allow_stale: bool = common.ALLOW_STALE,
    force: bool = common.FORCE,
) -> None:
    """Build sheet: element dimensions, reflector, cut lengths, feed impedance and cut tolerances."""
    from planner.antenna.buildsheet import render_text, sheets_to_dict, study_sheets
    from planner.output.export import to_json

    if format not in ("table", "json"):
        raise UserError(f"--format: {format!r} is not a format here; allowed: table, json")
    study = common.load_study(scenario, allow_stale, station)
    rules = common.write_rules(force, scenario=study.scenario, inputs=(scenario,))
    common.check_outputs(rules, {"--output": output})
    if candidate is not None:
        study.candidate(candidate)  # refuses unknown names with the allowed list
        name, selection = candidate, f"Candidate {candidate}, as asked (--candidate)."
    else:
        name, selection = _recommended(study, quiet)
    sheets = study_sheets(study, name, selection=selection)
    text = to_json(sheets_to_dict(sheets)) if format == "json" else "\n".join(render_text(s) for s in sheets)
    common.emit(text, output, rules)


def _recommended(study, quiet: bool) -> tuple[str, str]:
    """The candidate the comparison recommends at this station, and a line saying so."""
    from planner.cli.forecast import chosen_candidates, forecast_with_progress
    from planner.decision.recommend import recommend

    result = forecast_with_progress(study, chosen_candidates(study, None), quiet)
    decision = recommend(result, study.satellites, study.candidates)
    return decision.recommended, (
        f"Candidate {decision.recommended}: recommended by the comparison at {study.station.name} "
        f"(planner compare; objective {decision.objective})."
    )

"""The `sweep` command: scores against reflector spacing."""

from __future__ import annotations

import sys
from pathlib import Path

import typer
from rich.console import Console
from rich.table import Table

from planner.cli import common
from planner.cli.app import app
from planner.errors import UserError


@app.command()
def sweep(
    scenario: Path = typer.Argument(..., help="Scenario TOML file."),
    candidate: str = typer.Option(..., "--candidate", help="Candidate whose reflector spacing is swept."),
    reflector_spacing: str = typer.Option(
        ..., "--reflector-spacing", help="START:STOP:STEP in wavelengths (0.1:1:0.05) or metres (0.05m:0.6m:0.05m)."
    ),
    figure: Path | None = typer.Option(None, "--figure", help="Write the sweep figure here (a stem: .png and .svg are added)."),
    station: str | None = common.STATION,
    format: str = common.FORMAT_ANY,
    output: Path | None = common.OUTPUT,
    quiet: bool = common.QUIET,
    allow_stale: bool = common.ALLOW_STALE,
    force: bool = common.FORCE,
) -> None:
    """Weekly usable minutes and data volume against reflector spacing; names the best spacing."""
    from rich.progress import BarColumn, Progress, TextColumn

    from planner.decision.sweep import parse_spacing_range, single_band, sweep_reflector
    from planner.output import plots
    from planner.output.export import to_csv, to_json

    common.check_format(format)
    study = common.load_study(scenario, allow_stale, station)
    rules = common.write_rules(force, scenario=study.scenario, inputs=(scenario,))
    common.check_outputs(rules, {"--output": output})
    figure_at = None if figure is None else common.figure_target("--figure", figure, rules)
    base = single_band(study, candidate)
    spacings = parse_spacing_range(reflector_spacing, base.pattern.frequency_hz)
    if quiet:
        result = sweep_reflector(study, candidate, spacings)
    else:
        bar = Progress(
            TextColumn("spacings"),
            BarColumn(),
            TextColumn("{task.completed}/{task.total}"),
            console=Console(stderr=True),
            transient=True,
        )
        with bar:
            task = bar.add_task("spacings", total=len(spacings))
            result = sweep_reflector(study, candidate, spacings, progress=lambda done, total: bar.update(task, completed=done))
    if figure_at is not None:
        chart = plots.sweep_chart(
            result.table,
            result.per_satellite,
            title=f"{candidate}: reflector spacing sweep",
            best_spacing_wavelengths=result.best_spacing_wavelengths,
        )
        for path in plots.save_figure(chart, *figure_at, rules=rules):
            print(f"wrote {path}", file=sys.stderr)
    rows = [{k: (round(v, 4) if isinstance(v, float) else v) for k, v in r.items()} for r in result.table.to_dict("records")]
    if format == "csv":
        common.emit(to_csv(rows, list(result.table.columns)), output, rules)
        return
    if format == "json":
        common.emit(
            to_json(
                {
                    "candidate": candidate,
                    "objective": result.objective,
                    "spacings": rows,
                    "best_spacing_wavelengths": result.best_spacing_wavelengths,
                    "runner_up_spacing_wavelengths": result.runner_up_spacing_wavelengths,
                    "margin_of_victory": result.margin_of_victory,
                    "summary": result.summary(),
                }
            ),
            output,
            rules,
        )
        return
    if output is not None:
        raise UserError("--output: a table is for the terminal; use --format csv or json with --output")
    table = Table(title=f"Reflector spacing sweep for {candidate} ({result.objective})", title_justify="left")
    for heading in ("spacing wl", "spacing cm", "score", "usable min", "Mbit", "usable passes", "dropouts"):
        table.add_column(heading, justify="right")
    for r in result.table.to_dict("records"):
        mark = " *" if r["spacing_wavelengths"] == result.best_spacing_wavelengths else ""
        table.add_row(
            f"{r['spacing_wavelengths']:.3g}{mark}",
            f"{r['spacing_m'] * 100:.1f}",
            f"{r['score']:.2f}",
            f"{r['usable_minutes']:.1f}",
            f"{r['data_volume_mbit']:.1f}",
            str(r["usable_passes"]),
            str(r["dropouts"]),
        )
    console = common.stdout()
    console.print(table)
    console.print(result.summary())

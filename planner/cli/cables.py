"""The `cables` command: the cable catalog (and a scenario's own [[cable]] tables) with their loss."""

from __future__ import annotations

import json
import math
from pathlib import Path

import typer
from rich.table import Table

from planner.cli import common
from planner.cli.app import app
from planner.errors import UserError

DEFAULT_FREQUENCIES_MHZ = (145.0, 435.0)
"""Where the loss is shown with neither a scenario nor --frequency-mhz: the 2 m and 70 cm bands."""


def cable_rows(scenario_cables: dict, frequencies_hz: list[float]) -> list[dict]:
    """One row per cable (the scenario's first, then the catalog's): line constants and loss per 100 m."""
    from planner.link.feedline import CABLES, cable_loss_db

    rows = []
    for source, table in (("scenario", scenario_cables), ("catalog", CABLES)):
        for cable in table.values():
            loss = cable_loss_db(cable, frequencies_hz, 100.0) if frequencies_hz else []
            rows.append(
                {
                    "name": cable.name,
                    "source": source,
                    "impedance_ohm": cable.impedance_ohm,
                    "velocity_factor": cable.velocity_factor,
                    "loss_db_per_100m": [round(float(x), 3) for x in loss],
                    "note": cable.note,
                }
            )
    return rows


def scenario_frequencies_mhz(scenario) -> list[float]:
    """Each satellite's downlink and uplink (and the catalog radio's), once each, in rising order."""
    radios = [*scenario.satellite, *([scenario.catalog] if scenario.catalog is not None else [])]
    found = {radio.downlink_mhz for radio in radios} | {radio.uplink_mhz for radio in radios if radio.uplink_mhz}
    return sorted(found)


def _checked_frequencies_mhz(values: list[float]) -> list[float]:
    from planner.bounds import FREQUENCY_MAX_MHZ, FREQUENCY_MIN_MHZ

    for value in values:
        if not (math.isfinite(value) and FREQUENCY_MIN_MHZ <= value <= FREQUENCY_MAX_MHZ):
            raise UserError(
                f"--frequency-mhz: {value:g} is out of range; allowed {FREQUENCY_MIN_MHZ:g} to {FREQUENCY_MAX_MHZ:g} MHz"
            )
    return sorted(set(values))


@app.command("cables")
def cables(
    scenario: Path | None = typer.Argument(None, help="Scenario whose [[cable]] tables and frequencies to show (optional)."),
    frequency_mhz: list[float] | None = typer.Option(
        None, "--frequency-mhz", help="Show the loss at this frequency, MHz; repeatable (default: the scenario's, or 145 and 435)."
    ),
    output_format: str = common.FORMAT_TABLE_JSON,
) -> None:
    """The cable catalog and the scenario's own cables: impedance, velocity factor, loss in dB/100 m."""
    from planner.choices import canonical_choice
    from planner.scenario import load_scenario
    from planner.study import cable_catalog

    output_format = canonical_choice(output_format)
    if output_format not in ("table", "json"):
        raise UserError(f"--format: {output_format!r} is not a format here; allowed: table, json")
    loaded = load_scenario(scenario) if scenario is not None else None
    if frequency_mhz:
        frequencies = _checked_frequencies_mhz(frequency_mhz)
    elif loaded is not None:
        frequencies = scenario_frequencies_mhz(loaded)
    else:
        frequencies = list(DEFAULT_FREQUENCIES_MHZ)
    rows = cable_rows(cable_catalog(loaded) if loaded is not None else {}, [f * 1e6 for f in frequencies])
    if output_format == "json":
        print(json.dumps({"frequencies_mhz": frequencies, "cables": rows}, indent=2))
        return
    table = Table(title="Cables: matched loss in dB per 100 m", title_justify="left")
    for heading in ("cable", "from", "impedance ohm", "velocity factor", *[f"{f:g} MHz" for f in frequencies]):
        table.add_column(heading, justify="left" if heading in ("cable", "from") else "right")
    for row in rows:
        losses = [f"{x:.1f}" for x in row["loss_db_per_100m"]]
        table.add_row(row["name"], row["source"], f"{row['impedance_ohm']:g}", f"{row['velocity_factor']:g}", *losses)
    console = common.stdout()
    console.print(table)
    console.print(
        "Define your own in a scenario: [[cable]] with name, impedance_ohm, velocity_factor and "
        "loss_db_per_100m = [[frequency_mhz, loss_db_per_100m], ...] from its datasheet.",
        soft_wrap=True,
        markup=False,
    )

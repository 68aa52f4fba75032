"""The `pattern build` and `pattern show` commands: pattern tables from the models, and their cuts."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import typer
from rich.table import Table

from planner.cli import common
from planner.cli.app import pattern_app
from planner.errors import UserError


def _key_values(items: list[str]) -> dict[str, str]:
    values = {}
    for item in items:
        key, sep, value = item.partition("=")
        if not sep or not key.strip():
            raise UserError(f"pattern build: {item!r} is not KEY=VALUE; e.g. spacing_wavelengths=0.2")
        values[key.strip()] = value.strip()
    if "frequency_mhz" in values:  # as --frequency-mhz and --list give it; the models take hertz
        text = values.pop("frequency_mhz")
        try:
            values["frequency_hz"] = str(float(text) * 1e6)
        except ValueError:
            raise UserError(f"pattern build: frequency_mhz={text!r} is not a number; e.g. frequency_mhz=436") from None
    return values


@pattern_app.command("build")
def pattern_build(
    template: str | None = typer.Argument(
        None,
        help="Template (omit to regenerate every shipped table): image-turnstile, isotropic-rhcp (analytic); dipole, turnstile, crossed-loops (wire model, method of moments).",
    ),
    parameters: list[str] | None = typer.Argument(
        None, help="KEY=VALUE template parameters, e.g. spacing_wavelengths=0.2 reflector=pec exponent=4."
    ),
    spacing_wl: float | None = typer.Option(
        None, "--spacing-wl", help="Feed height above the reflector, wavelengths (spacing_wavelengths=...)."
    ),
    frequency_mhz: float | None = typer.Option(None, "--frequency-mhz", help="Design frequency, MHz (default 436)."),
    out: Path | None = typer.Option(None, "--out", help="Output file (one template) or folder (all shipped tables)."),
    list_parameters: bool = typer.Option(False, "--list", help="List the template's parameters with their ranges, then stop."),
    force: bool = common.FORCE,
) -> None:
    """Generate pattern tables from the project's own antenna models."""
    from planner.antenna import write_pattern
    from planner.antenna.registry import SHIPPED_PATTERNS, build_pattern, build_shipped_patterns
    from planner.antenna.registry import TEMPLATES as ANALYTIC
    from planner.antenna.synth.templates import TEMPLATES as WIRE

    rules = common.write_rules(force)
    if template is None:
        folder = out or Path("patterns")
        if not folder.is_dir():
            raise UserError(f"--out: folder {folder} does not exist")
        common.check_folder_outputs(rules, "--out", folder, SHIPPED_PATTERNS)
        for path in build_shipped_patterns(folder, rules=rules):
            print(f"wrote {path}", file=sys.stderr)
        return
    if template not in ANALYTIC and template not in WIRE:
        raise UserError(f"pattern build: template {template!r} is unknown; allowed: {', '.join([*ANALYTIC, *WIRE])}")
    if list_parameters:
        if template in WIRE:
            from planner.antenna.synth.tables import template_options
            from planner.antenna.synth.templates import describe_parameter

            specs = dict(WIRE[template][1], **template_options(template))
            for name, spec in specs.items():
                print(describe_parameter(name, spec))
        else:
            import inspect

            for name, parameter in inspect.signature(ANALYTIC[template]).parameters.items():
                if parameter.default is inspect.Parameter.empty:
                    print(f"{name}: required")
                elif name == "frequency_hz":
                    print(f"frequency_mhz: default {parameter.default / 1e6:g} MHz")
                else:
                    print(f"{name}: default {parameter.default!r}")
        return
    if out is None:
        raise UserError("--out: give the file to write the pattern table to")
    common.check_outputs(rules, {"--out": out})
    values: dict[str, object] = dict(_key_values(parameters or []))
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


@pattern_app.command("show")
def pattern_show(
    file: Path = typer.Argument(..., help="Pattern table (CSV)."),
    azimuth_deg: float = typer.Option(0.0, "--azimuth-deg", help="Azimuth of the elevation cut, deg."),
    step_deg: float = typer.Option(10.0, "--step-deg", help="Elevation step of the printed cut, deg."),
    figure: Path | None = typer.Option(None, "--figure", help="Also write the elevation cuts as a figure (stem; .png and .svg)."),
    force: bool = common.FORCE,
) -> None:
    """Elevation cut, axial ratio against elevation, and the feed data a pattern table carries."""
    from planner.antenna import load_pattern
    from planner.antenna.harness import current_ratio_from_header
    from planner.output import plots

    if not 0.5 <= step_deg <= 90:
        raise UserError(f"--step-deg: {step_deg:g} is out of range; allowed 0.5 to 90")
    if not np.isfinite(azimuth_deg):
        raise UserError(f"--azimuth-deg: {azimuth_deg:g} is not a finite number; allowed e.g. 0 to 360")
    rules = common.write_rules(force, inputs=(file,))
    figure_at = None if figure is None else common.figure_target("--figure", figure, rules)
    table = load_pattern(file)
    console = common.stdout()
    for key in ("model", "parameters", "feed_impedance_ohm", "feed_vswr", "radiation_efficiency", "generated_by"):
        if key in table.header:
            console.print(f"{key}: {table.header[key]}", soft_wrap=True)
    ratio = current_ratio_from_header(table.header, str(file))
    if ratio is not None:
        console.print(f"current ratio I_b / I_a: amplitude {ratio[0]:.4f}, phase {ratio[1]:.2f} deg (ideal RHCP: 1 at -90 deg)")
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

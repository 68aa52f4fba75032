"""The `harness` command: phasing-line and matching-section checks, and cut-error sensitivity."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import cast

import numpy as np
import typer
from rich.console import JustifyMethod
from rich.table import Table

from planner.cli import common
from planner.cli.app import app
from planner.errors import UserError


@app.command()
def harness(
    frequency_mhz: float | None = typer.Option(None, "--frequency-mhz", help="Operating frequency, MHz (not with --pattern)."),
    velocity_factor: float = typer.Option(0.66, "--velocity-factor", help="Velocity factor of the phasing line."),
    measured_length_m: float | None = typer.Option(
        None, "--measured-length-m", help="A quarter-wave line as measured (gives the implied velocity factor)."
    ),
    length_error_m: float = typer.Option(
        0.0, "--length-error-m", help="How much longer (+) or shorter (-) than a quarter wave the line is cut."
    ),
    z0_ohm: float = typer.Option(50.0, "--z0-ohm", help="Line impedance, ohm."),
    load_ohm: str | None = typer.Option(
        None, "--load-ohm", help="Load at the far end, e.g. 50 or 100-40j (gives the impedance seen through the line)."
    ),
    format: str = common.FORMAT_TABLE_JSON,
    pattern: Path | None = typer.Option(
        None,
        "--pattern",
        help="A pattern table built with feed=harness: how cut errors on its phasing line and matching section move the axial ratio, VSWR and margin overhead.",
    ),
    cut_error_mm: float = typer.Option(
        5.0, "--cut-error-mm", help="With --pattern: the cut error tried, mm (each part is cut this much short, exact and long)."
    ),
) -> None:
    """Phasing-harness arithmetic: quarter-wave length, implied velocity factor, and what a cutting error costs."""
    from planner.antenna.harness import EQUAL_CURRENTS_NOTE, HARNESS_UNITS, harness_report
    from planner.output.export import to_json

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
    report = harness_report(
        frequency_mhz * 1e6,
        velocity_factor,
        measured_length_m=measured_length_m,
        length_error_m=length_error_m,
        z0_ohm=z0_ohm,
        load_ohm=load,
    )
    if format == "json":
        clean = {k: ({"re": v.real, "im": v.imag} if isinstance(v, complex) else v) for k, v in report.items()}
        sys.stdout.write(to_json({**clean, "notes": [EQUAL_CURRENTS_NOTE]}))
        return
    table = Table(title=f"Phasing harness at {frequency_mhz:g} MHz", title_justify="left")
    for heading, justify in (("quantity", "left"), ("value", "right"), ("unit", "left")):
        table.add_column(heading, justify=cast(JustifyMethod, justify))
    for key, value in report.items():
        if isinstance(value, complex):
            text = f"{value.real:.2f} {'+' if value.imag >= 0 else '-'} j{abs(value.imag):.2f}"
        elif isinstance(value, float):
            text = f"{value:.4g}"
        else:
            text = str(value)
        table.add_row(key, text, HARNESS_UNITS.get(key, ""))
    console = common.stdout()
    console.print(table)
    console.print(f"Note: {EQUAL_CURRENTS_NOTE}.", soft_wrap=True, markup=False)


def _harness_sensitivity(pattern: Path, cut_error_mm: float, format: str) -> None:
    """``planner harness --pattern FILE``: the table's harness rebuilt and cut wrong."""
    from planner.antenna import load_pattern
    from planner.antenna.harness import ratio_cut_effects
    from planner.antenna.synth.design import cut_sensitivity
    from planner.antenna.synth.tables import harness_from_header
    from planner.output.export import to_json

    if not (np.isfinite(cut_error_mm) and 0.0 < cut_error_mm <= 50.0):
        raise UserError(f"--cut-error-mm: {cut_error_mm:g} is out of range; allowed more than 0 up to 50")
    table = load_pattern(pattern)
    design = harness_from_header(table.header, str(pattern))
    error_m = cut_error_mm / 1000.0
    rows = cut_sensitivity(design, (-error_m, 0.0, error_m))
    sense = design.sense.upper()
    start, start_text = _starting_ratio(table.header, str(pattern), design.sense)
    ratio_rows = ratio_cut_effects(*start, design.frequency_hz, design.phasing.cable.velocity_factor, (-error_m, 0.0, error_m))
    if format == "json":
        sys.stdout.write(
            to_json(
                {
                    "pattern": str(pattern),
                    "frequency_mhz": design.frequency_hz / 1e6,
                    "sense": sense,
                    "phasing_line": design.phasing.describe(),
                    "matching_section": design.match.describe(),
                    "rows": rows,
                    "current_ratio": {"magnitude": start[0], "phase_deg": start[1], "source": start_text},
                    "current_ratio_rows": ratio_rows,
                }
            )
        )
        return
    console = common.stdout()
    console.print(f"phasing line: {design.phasing.describe()}", soft_wrap=True)
    console.print(f"matching section: {design.match.describe()}", soft_wrap=True)
    out = Table(title=f"Cut errors at {design.frequency_hz / 1e6:g} MHz, {sense} wave overhead", title_justify="left")
    for heading in (
        "part",
        "error",
        "zenith axial ratio dB",
        "feed VSWR",
        f"{sense} gain change dB",
        "mismatch loss change dB",
        "margin change dB",
    ):
        out.add_column(heading, justify="left" if heading == "part" else "right")
    for r in rows:
        out.add_row(
            r["part"],
            f"{r['error']:+g} {r['error_unit']}",
            f"{r['axial_ratio_db']:.2f}",
            f"{r['vswr']:.3f}",
            f"{r['gain_change_db']:+.3f}",
            f"{r['mismatch_change_db']:+.3f}",
            f"{r['margin_change_db']:+.3f}",
        )
    console.print(out)
    _print_ratio_rows(console, ratio_rows, start_text)


def _starting_ratio(header, source: str, sense: str) -> tuple[tuple[float, float], str]:
    """The current ratio the ratio arithmetic starts from: the table's, or the ideal when it has none."""
    from planner.antenna.harness import current_ratio_from_header

    ratio = current_ratio_from_header(header, source)
    if ratio is not None:
        return ratio, f"the table's current ratio {ratio[0]:.4f} at {ratio[1]:.2f} deg (current_ratio_b_over_a)"
    ideal = -90.0 if sense == "rhcp" else 90.0
    return (1.0, ideal), f"the ideal 1 at {ideal:g} deg (the table has no current_ratio_b_over_a line)"


def _print_ratio_rows(console, rows: list[dict], start_text: str) -> None:
    """The phasing-line rows computed from the current ratio alone (orthogonal elements, equal patterns)."""
    out = Table(
        title=f"Phasing-line cut errors from {start_text}; orthogonal elements with equal patterns",
        title_justify="left",
    )
    for heading in ("error", "|I_b/I_a|", "phase deg", "phase error deg", "axial ratio dB", "loss vs RHCP dB"):
        out.add_column(heading, justify="right")
    for r in rows:
        out.add_row(
            f"{r['length_error_m'] * 1e3:+g} mm",
            f"{r['current_ratio_magnitude']:.4f}",
            f"{r['current_ratio_phase_deg']:.2f}",
            f"{r['phase_error_deg']:+.2f}",
            f"{r['axial_ratio_db']:.2f}",
            f"{r['polarization_loss_db']:.3f}",
        )
    console.print(out)

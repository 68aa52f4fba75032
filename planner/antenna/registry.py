"""The pattern templates by name: the analytic builders (``TEMPLATES``), one-off builds from
text parameters, the ``builder`` header line resolved to a template (analytic or wire) and
rebuilt, and the tables shipped in patterns/ with the recipe of each.

This module sits above the wire solver (planner.antenna.synth), which it calls for the wire
templates; the solver never imports it, and neither does the package front door.
"""

from __future__ import annotations

import inspect
from collections.abc import Callable
from pathlib import Path
from typing import Any

from planner.antenna.analytic import DEMO_FREQUENCY_HZ, isotropic_rhcp, turnstile_over_reflector
from planner.antenna.synth.tables import build_template_table
from planner.antenna.synth.templates import TEMPLATES as WIRE
from planner.antenna.table import PatternTable
from planner.antenna.tablefile import BUILDER_ALIASES, write_pattern
from planner.errors import UserError, quoted
from planner.fileio import REPLACE_ANY, WriteRules

__all__ = [
    "TEMPLATES",
    "build_pattern",
    "BUILDER_ALIASES",
    "builder_template",
    "rebuild_pattern",
    "SHIPPED_PATTERNS",
    "build_shipped_patterns",
]

TEMPLATES: dict[str, Callable[..., PatternTable]] = {
    "image-turnstile": turnstile_over_reflector,
    "isotropic-rhcp": isotropic_rhcp,
}


def build_pattern(template: str, **params: Any) -> PatternTable:
    """Build a one-off table from a template name and its parameters (numbers or numeric text)."""
    if template not in TEMPLATES:
        raise UserError(f"pattern template {template!r} is unknown; allowed: {', '.join(TEMPLATES)}")
    builder = TEMPLATES[template]
    allowed = [name for name in inspect.signature(builder).parameters]
    kwargs: dict[str, float] = {}
    for name, value in params.items():
        if name not in allowed:
            raise UserError(f"pattern template {template!r}: unknown parameter {name!r}; allowed: {', '.join(allowed)}")
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise UserError(f"pattern template {template!r}: {name} must be a number, got {value!r}") from None
        kwargs[name] = number
    required = [n for n, p in inspect.signature(builder).parameters.items() if p.default is inspect.Parameter.empty]
    for name in required:
        if name not in kwargs:
            raise UserError(f"pattern template {template!r}: missing parameter {name!r}; parameters: {', '.join(allowed)}")
    return builder(**kwargs)


def builder_template(builder: str, source: str = "pattern table") -> str:
    """The template name a header's ``builder`` line stands for, or one UserError line."""
    name = BUILDER_ALIASES.get(builder, builder)
    if name in TEMPLATES or name in WIRE:
        return name
    allowed = ", ".join([*TEMPLATES, *WIRE])
    raise UserError(f"{source}: builder {quoted(builder, 63)} is not one of planner's templates; allowed: {allowed}")


def rebuild_pattern(builder: str, parameters: dict[str, str], source: str = "pattern table") -> PatternTable:
    """Build the table a header describes: its template (``builder``) with its parameters (text).

    Parameters are checked as ``planner pattern build`` checks them: the analytic templates take
    numbers only, the wire templates their own typed and ranged parameters.
    """
    template = builder_template(builder, source)
    if template in TEMPLATES:
        return build_pattern(template, **parameters)
    return _wire_table(template, **parameters)


# The demo station's candidates as a careful builder would make them (planner.antenna.synth): elements
# trimmed to resonance, a designed phasing line and matching section, a four-rod reflector and a
# 4 m mast over the medium dry ground of the demo site. One table keeps a common mistake.
VHF_FREQUENCY_HZ = 145.9e6  # the VHF table of the two-band example (scenarios/two-band.toml)
_DEMO_MAST = {"frequency_hz": DEMO_FREQUENCY_HZ, "ground": "medium-dry-ground", "mast_height_m": 4.0}
_BUILT = {**_DEMO_MAST, "trim": "resonance", "feed": "harness"}
_TALL = {"width_to_height": 0.5, "exponent": 6.0}

SHIPPED_PATTERNS: dict[str, tuple[Callable[..., PatternTable], dict[str, Any]]] = {
    "turnstile-close.csv": (
        lambda **kw: _wire_table("turnstile", **kw),
        {**_BUILT, "reflector": "rods", "spacing_wavelengths": 0.25},
    ),
    "turnstile-far.csv": (
        lambda **kw: _wire_table("turnstile", **kw),
        {**_BUILT, "reflector": "rods", "spacing_wavelengths": 0.75},
    ),
    "loops-round-close.csv": (
        lambda **kw: _wire_table("crossed-loops", **kw),
        {**_BUILT, "reflector": "rods", "spacing_wavelengths": 0.15},
    ),
    "loops-tall-far.csv": (
        lambda **kw: _wire_table("crossed-loops", **kw),
        {**_BUILT, **_TALL, "reflector": "rods", "spacing_wavelengths": 0.6},
    ),
    "loops-tall-free.csv": (
        lambda **kw: _wire_table("crossed-loops", **kw),
        {**_BUILT, **_TALL, "spacing_wavelengths": 0.6},
    ),
    # The common mistake: tall loops cut to exactly one wavelength and never trimmed, joined by a
    # textbook quarter wave of 50 ohm solid-PE line and no matching section.
    "loops-untrimmed.csv": (
        lambda **kw: _wire_table("crossed-loops", **kw),
        {**_DEMO_MAST, **_TALL, "reflector": "rods", "spacing_wavelengths": 0.6, "feed": "line", "velocity_factor": 0.66},
    ),
    "isotropic-rhcp.csv": (isotropic_rhcp, {"frequency_hz": DEMO_FREQUENCY_HZ}),
    # The VHF antenna of the two-band example: the close turnstile built for 145.9 MHz.
    "turnstile-vhf-close.csv": (
        lambda **kw: _wire_table("turnstile", **kw),
        {**_BUILT, "frequency_hz": VHF_FREQUENCY_HZ, "reflector": "rods", "spacing_wavelengths": 0.25},
    ),
}
"""File name -> (builder, keyword arguments) of every table shipped in patterns/."""


def _wire_table(template: str, **values: Any) -> PatternTable:
    """A table from the wire solver (planner.antenna.synth.tables)."""
    return build_template_table(template, values, command="planner pattern build")


def build_shipped_patterns(folder: str | Path, *, rules: WriteRules = REPLACE_ANY) -> list[Path]:
    """(Re)generate every shipped table into ``folder`` (which must exist); returns the paths."""
    folder = Path(folder)
    written = []
    for name, (builder, kwargs) in SHIPPED_PATTERNS.items():
        written.append(write_pattern(folder / name, builder(**kwargs), rules=rules))
    return written

"""Pattern tables from a solved wire model: the bridge from the solver to ``planner.antenna``.

:func:`build_pattern_table` samples the solved, fed antenna's partial RHCP/LHCP gains on the
table grid (elevation -90..90, azimuth 0..350 by default) and writes the provenance into the
header. :func:`build_template_table` does the whole chain from a template name and its parameters
(validate, build the model, solve, feed, tabulate); it is what ``planner pattern build TEMPLATE``
calls. A table's header names its template (``builder``) and its ``parameters``, so the header alone
is enough to rebuild it with one parameter changed (the reflector sweep,
``planner.antenna.registry.rebuild_pattern``); :func:`harness_from_header` designs again the harness a
``feed=harness`` table was built with (``planner harness`` cut-error check).

Gains
-----
The gain columns are partial gains relative to the power delivered at the feed point: the wire
(skin-effect) loss is in them (the solver's gains are relative to the port input power) and so is
the phasing-line loss (the table adds 10 log10 of the feed network's efficiency). The mismatch of
the feed impedance to 50 ohm is not: it is in ``feed_vswr``, which the link budget applies.
``radiation_efficiency`` in the header is the product of the two efficiencies (informational).

Below the horizon: over an infinite PEC plane there is no field (the table holds the floor,
``planner.antenna.GAIN_FLOOR_DBIC``); over a wire reflector or in free space it is the computed
field, leakage around and through the screen included.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np

from planner.antenna.analytic import check_frequency, pattern_grid
from planner.antenna.synth import design, mom
from planner.antenna.synth.design import MATCHES, SIZE_PARAMETERS
from planner.antenna.synth.feed import FeedResult, ideal_quadrature, phasing_line, single_port
from planner.antenna.synth.geometry import WireModel
from planner.antenna.synth.templates import TEMPLATES, Parameter, check_parameters
from planner.antenna.table import GAIN_FLOOR_DBIC, PatternTable
from planner.antenna.tablefile import BUILDER_ALIASES, format_number
from planner.errors import UserError, warn
from planner.link.feedline import CABLES, quarter_wave_length_m

__all__ = [
    "MODEL_DESCRIPTION",
    "FEED_PARAMETERS",
    "TRIM_PARAMETERS",
    "template_options",
    "solve_template",
    "build_pattern_table",
    "build_template_table",
    "feed_model",
    "harness_from_header",
]

MODEL_DESCRIPTION = "thin-wire method of moments (Galerkin, piecewise-linear basis, reduced kernel)"

FEEDS = ("quadrature", "line", "harness")

LINE_OPTIONS = ("line_length_m", "line_z0_ohm", "velocity_factor", "line_loss_db_per_m")
"""Options of ``feed = line`` only."""

HARNESS_OPTIONS = ("phasing_cable", "match")
"""Options of ``feed = harness`` only."""

FEED_PARAMETERS: dict[str, Parameter] = {
    "feed": Parameter(
        str,
        "quadrature",
        FEEDS,
        "quadrature (ideal equal currents 90 deg apart), line (b through a given phasing line) or harness (phasing line and matching section designed, see planner.antenna.synth.design)",
    ),
    "sense": Parameter(
        str, "rhcp", ("rhcp", "lhcp"), "sense of the ideal quadrature feed, or the sense the harness is designed for"
    ),
    "line_length_m": Parameter(
        float, None, (1e-4, 10.0), "m; feed=line: phasing-line length (default: a quarter wave at the velocity factor)"
    ),
    "line_z0_ohm": Parameter(float, 50.0, (10.0, 300.0), "ohm; feed=line: phasing-line impedance"),
    "velocity_factor": Parameter(
        float, 0.66, (0.3, 1.0), "feed=line: phasing-line velocity factor (about 0.66 solid PE, 0.8 foam)"
    ),
    "line_loss_db_per_m": Parameter(float, 0.0, (0.0, 10.0), "dB/m; feed=line: phasing-line matched loss"),
    "phasing_cable": Parameter(
        str,
        "auto",
        ("auto", *(name.lower() for name in CABLES)),
        "feed=harness: catalog cable of the phasing line, or auto (the one giving the best zenith axial ratio)",
    ),
    "match": Parameter(
        str,
        "auto",
        MATCHES,
        "feed=harness: matching section to 50 ohm; auto takes the quarter-wave transformer when it reaches VSWR <= 1.5, else the L-network",
    ),
}
"""Feed options of two-port templates (a one-port template is driven at its port)."""

TRIMS = ("none", "resonance")

TRIM_PARAMETERS: dict[str, Parameter] = {
    "trim": Parameter(
        str,
        None,
        TRIMS,
        "none (default: the size as given) or resonance (the size parameter adjusted at the design frequency, see planner.antenna.synth.design)",
    ),
    "target_reactance_ohm": Parameter(
        float, None, (-1000.0, 1000.0), "ohm; trim=resonance: element reactance to trim to (default 0)"
    ),
    "target_resistance_ohm": Parameter(
        float,
        None,
        (1.0, 2000.0),
        "ohm; trim=resonance: trim to the impedance closest to this resistance + j target_reactance_ohm instead",
    ),
}
"""Trim options of the templates with a size parameter (``design.SIZE_PARAMETERS``)."""

GRID_PARAMETERS: dict[str, Parameter] = {
    "elevation_step_deg": Parameter(float, 1.0, (0.1, 30.0), "deg; elevation grid step (must divide 180)"),
    "azimuth_step_deg": Parameter(float, 10.0, (0.5, 90.0), "deg; azimuth grid step (must divide 360)"),
}


def _fmt_value(value: Any) -> str:
    if isinstance(value, bool) or isinstance(value, str):
        return str(value)
    if isinstance(value, (int, float, np.floating, np.integer)):
        return format_number(float(value))
    return str(value)


def _parameters_text(parameters: Mapping[str, Any]) -> str:
    items = []
    for key, value in parameters.items():
        if value is None:
            continue
        text = _fmt_value(value)
        if any(ch in text for ch in ";=\n\r"):
            raise ValueError(f"parameter {key!r} = {text!r} cannot go into a header")
        items.append(f"{key}={text}")
    return "; ".join(items)


def _complex_text(z: complex) -> str:
    return f"{z.real:.3f}{z.imag:+.3f}j"


def build_pattern_table(
    model: WireModel,
    solution: mom.Solution,
    feed: FeedResult,
    *,
    frequency_hz: float,
    template: str,
    parameters: Mapping[str, Any],
    command: str,
    elevation_step_deg: float = 1.0,
    azimuth_step_deg: float = 10.0,
    builder: str | None = None,
) -> PatternTable:
    """Tabulate the fed antenna's partial gains and describe how they were made.

    ``parameters`` (name -> value) go into the ``parameters`` header line as ``k=v; ...`` (None
    values left out); ``command`` is written verbatim as ``generated_by``; ``builder`` (a function
    under ``planner.antenna.synth`` taking ``parameters`` as keywords) lets the table be rebuilt.
    """
    frequency_hz = check_frequency(frequency_hz)
    assert model.frequency_hz is not None  # WireModel.__post_init__ refuses a model without a frequency
    if abs(frequency_hz - model.frequency_hz) > 1e-9 * model.frequency_hz:
        raise ValueError(f"frequency_hz {frequency_hz:g} differs from the model's {model.frequency_hz:g}")
    elevation, azimuth = pattern_grid(elevation_step_deg, azimuth_step_deg)
    from planner.antenna.synth import ground as real_ground

    voltages = np.asarray(feed.port_voltages, dtype=complex)
    ground = real_ground.ground_from_notes(getattr(model, "notes", None))
    if ground is None:
        rhcp, lhcp = solution.gains_dbic(azimuth[None, :], elevation[:, None], voltages)
    else:
        rhcp, lhcp = real_ground.gains_over_ground_dbic(solution, azimuth[None, :], elevation[:, None], voltages, ground)
        real_ground.check_table_step(ground, elevation_step_deg)
    network = float(feed.network_efficiency)
    if not (math.isfinite(network) and 0.0 < network <= 1.0 + 1e-9):
        raise ValueError(f"feed network efficiency {network!r} is not in (0, 1]")
    network = min(network, 1.0)
    shift = 10.0 * math.log10(network)
    rhcp = np.nan_to_num(np.asarray(rhcp, dtype=float) + shift, nan=GAIN_FLOOR_DBIC, neginf=GAIN_FLOOR_DBIC)
    lhcp = np.nan_to_num(np.asarray(lhcp, dtype=float) + shift, nan=GAIN_FLOOR_DBIC, neginf=GAIN_FLOOR_DBIC)
    if model.ground == "pec":
        below = elevation < 0.0
        rhcp[below] = GAIN_FLOOR_DBIC
        lhcp[below] = GAIN_FLOOR_DBIC
    wire_efficiency = float(solution.radiation_efficiency(voltages))
    efficiency = min(max(wire_efficiency * network, 1e-9), 1.0)
    input_w = float(solution.input_power_w(voltages))
    radiated_w = float(solution.radiated_power_w(voltages))
    lost_w = float(solution.ohmic_loss_w(voltages) + solution.load_loss_w(voltages))
    balance = radiated_w / (input_w - lost_w) if input_w - lost_w > 0 else float("nan")

    z_feed = complex(feed.feed_impedance_ohm)
    notes = dict(getattr(model, "notes", {}) or {})
    header: dict[str, str] = {
        "frequency_mhz": format_number(frequency_hz / 1e6),
        "model": f"{MODEL_DESCRIPTION}; template {template}",
        "generated_by": command,
        "parameters": _parameters_text(parameters),
    }
    if builder:
        header["builder"] = builder
    header["geometry"] = notes.get("geometry", f"{len(model.wires)} wires, ports {', '.join(model.port_names)}")
    if "reflector" in notes:
        header["reflector"] = notes["reflector"]
    if ground is not None:
        header["ground"] = f"{ground.describe()}; {ground.source()}"
        header["mast_height_m"] = format_number(ground.mast_height_m)
        header["ground_model"] = (
            "free-space currents; direct ray plus the ray reflected by the flat ground with the Fresnel coefficients "
            "(image theory, Gamma_h -> -1 and Gamma_v -> +1 over a perfect conductor), path phase exp(-j 2 k H sin el)"
        )
        header["ground_neglected"] = real_ground.NEGLECTED
    else:
        header["ground"] = "infinite perfectly conducting plane z = 0 (images)" if model.ground == "pec" else "none (free space)"
    header["solver"] = solution.solver_summary() if hasattr(solution, "solver_summary") else MODEL_DESCRIPTION
    header["frame"] = (
        "x east, y north, z up; element a along/in the east plane, b turned +90 deg about up; azimuth_deg from north "
        "toward east, elevation_deg above the horizon; RHCP/LHCP per IEEE Std 145 (e^{jwt})"
    )
    header["feed"] = feed.description or "feed network"
    ports = ", ".join(
        f"{name}: I={_complex_text(complex(i))} A, V={_complex_text(complex(v))} V"
        for name, i, v in zip(model.port_names, feed.port_currents, feed.port_voltages)
    )
    header["port_excitation"] = ports
    if len(feed.port_currents) == 2:
        header["current_ratio_b_over_a"] = (
            f"{abs(complex(feed.current_ratio)):.4f} at {feed.phase_deg:.2f} deg (ideal RHCP: 1 at -90 deg)"
        )
    if math.isfinite(z_feed.real) and math.isfinite(z_feed.imag) and z_feed.real > 0:
        header["feed_impedance_ohm"] = _complex_text(z_feed)
    if math.isfinite(feed.vswr_50):
        header["feed_vswr"] = f"{feed.vswr_50:.3f}"
        header["feed_mismatch_loss_db"] = f"{feed.mismatch_loss_db:.3f}"
    header["feed_reference_ohm"] = format_number(feed.reference_impedance_ohm)
    header["radiation_efficiency"] = f"{efficiency:.4f}"
    header["efficiency_terms"] = (
        f"wire loss {wire_efficiency:.4f} x feed network {network:.4f} (both in the gain columns; mismatch not)"
    )
    header["energy_check"] = (
        f"radiated power integrated over the far-field sphere / (input - losses) = {balance:.4f} (1 for an exact solution)"
    )
    header["gain_reference"] = (
        "partial gains for RHCP and LHCP waves in dBic relative to the power delivered at the feed point (wire and "
        "phasing-line loss included, mismatch to the feed line not: see feed_vswr); total gain is their sum"
    )
    if ground is not None:
        header["below_horizon"] = (
            "the part of the free-space field that enters the ground, each polarization scaled by sqrt(1 - |Gamma|^2): "
            "how the ground's thermal emission couples in (the reflected part is in the upper hemisphere, toward the sky)"
        )
    else:
        header["below_horizon"] = (
            f"an infinite perfect conductor passes no field: {format_number(GAIN_FLOOR_DBIC)} dBic (the floor) below the horizon"
            if model.ground == "pec"
            else "computed field (a finite or absent reflector lets it through)"
        )
    return PatternTable(
        path=None,
        frequency_hz=frequency_hz,
        header=header,
        elevation_deg=elevation,
        azimuth_deg=azimuth,
        gain_rhcp_dbic=rhcp,
        gain_lhcp_dbic=lhcp,
        feed_vswr=float(feed.vswr_50) if math.isfinite(feed.vswr_50) else None,
        feed_impedance_ohm=z_feed if "feed_impedance_ohm" in header else None,
        radiation_efficiency=efficiency,
    )


# --------------------------------------------------------------------------------------------
# The whole chain from a template
# --------------------------------------------------------------------------------------------


def _check_options(template: str, specs: Mapping[str, Parameter], values: Mapping[str, Any]) -> dict[str, Any]:
    from planner.antenna.synth.templates import _coerce  # same validation and messages as the templates

    return {name: (_coerce(template, name, spec, values[name]) if name in values else spec.default) for name, spec in specs.items()}


def feed_model(solution: mom.Solution, options: Mapping[str, Any], frequency_hz: float) -> FeedResult:
    """The feed network named by ``options`` (keys of :data:`FEED_PARAMETERS`) on the solved model."""
    z = solution.port_impedance_matrix()
    if z.shape == (1, 1):
        return single_port(z)
    if options.get("feed", "quadrature") == "quadrature":
        return ideal_quadrature(z, options.get("sense") or "rhcp")
    if options.get("feed") == "harness":
        return design.design_harness(
            solution,
            phasing_cable=options.get("phasing_cable"),
            match=options.get("match") or "none",
            sense=options.get("sense") or "rhcp",
        ).feed
    vf = options.get("velocity_factor") or 0.66
    length = options.get("line_length_m")
    if length is None:
        length = quarter_wave_length_m(frequency_hz, vf)
    return phasing_line(
        z,
        line_length_m=length,
        line_z0_ohm=options.get("line_z0_ohm") or 50.0,
        velocity_factor=vf,
        loss_db_per_m=options.get("line_loss_db_per_m") or 0.0,
        frequency_hz=frequency_hz,
    )


TWO_PORT_TEMPLATES = ("turnstile", "crossed-loops")
"""Templates with ports "a" and "b" (they take the feed options); the others have one port "feed"."""


def template_options(template: str) -> dict[str, Parameter]:
    """Every option a template's table takes besides its own parameters: the grid steps, the trim
    options (templates with a size parameter) and the feed options (two-port templates)."""
    return dict(
        GRID_PARAMETERS,
        **(TRIM_PARAMETERS if template in SIZE_PARAMETERS else {}),
        **(FEED_PARAMETERS if template in TWO_PORT_TEMPLATES else {}),
    )


def _resolve_options(template: str, options: dict[str, Any], given: Mapping[str, Any], frequency_hz: float) -> dict[str, Any]:
    """Refuse options that do not apply to the chosen feed or trim; blank the ones not used (so they
    stay out of the header) and write the defaults that are used."""
    if template in TWO_PORT_TEMPLATES:
        feed = options["feed"]
        unused = {"quadrature": LINE_OPTIONS + HARNESS_OPTIONS, "line": HARNESS_OPTIONS, "harness": LINE_OPTIONS}[feed]
        wrong = [k for k in unused if k in given]
        if wrong:
            users = "feed=line" if wrong[0] in LINE_OPTIONS else "feed=harness"
            raise UserError(
                f"template {template!r}: {wrong[0]} applies to {users} only, not feed={feed}; allowed with "
                f"feed={feed}: " + (", ".join(k for k in FEED_PARAMETERS if k not in unused) or "none")
            )
        for key in unused:
            options[key] = None
        if feed == "line":
            options["sense"] = None  # set by the line, not chosen
            if options["line_length_m"] is None:
                options["line_length_m"] = round(quarter_wave_length_m(frequency_hz, options["velocity_factor"]), 9)
        if feed == "harness":
            options["match"] = options["match"] or "none"  # an explicit none
    if template in SIZE_PARAMETERS:
        if options["trim"] is None:
            wrong = [k for k in ("target_reactance_ohm", "target_resistance_ohm") if k in given]
            if wrong:
                raise UserError(f"template {template!r}: {wrong[0]} applies to trim=resonance only; allowed: trim=resonance")
        elif options["target_reactance_ohm"] is None:
            options["target_reactance_ohm"] = 0.0
    return options


def solve_template(template: str, values: Mapping[str, Any] | None = None):
    """Validate, build, trim (if asked) and solve a template; no feed, no table.

    Returns ``(params, options, model, solution, trim)``: the checked template parameters (the
    size as given), the checked options (:func:`template_options`, unused ones None), the wire
    model and its solution (at the trimmed size when trimmed) and the ``design.TrimResult`` or None.
    """
    values = dict(values or {})
    if template not in TEMPLATES:
        raise UserError(f"template {template!r} is unknown; allowed: {', '.join(TEMPLATES)}")
    function, specs = TEMPLATES[template]
    extra = template_options(template)
    allowed = list(specs) + list(extra)
    unknown = [k for k in values if k not in allowed]
    if unknown:
        raise UserError(f"template {template!r}: unknown parameter {unknown[0]!r}; allowed: {', '.join(allowed)}")
    params = check_parameters(template, {k: v for k, v in values.items() if k in specs})
    given = {k: v for k, v in values.items() if k in extra}
    options = _check_options(template, extra, given)
    options = _resolve_options(template, options, given, float(params["frequency_hz"]))
    # The table's grid is checked against the memory limit now, not after minutes of solving.
    pattern_grid(options["elevation_step_deg"], options["azimuth_step_deg"])
    trim = None
    if options.get("trim") == "resonance":
        trim = design.trim_to_resonance(
            template,
            params,
            target_reactance_ohm=options["target_reactance_ohm"],
            target_resistance_ohm=options["target_resistance_ohm"],
            sense=options.get("sense") or "rhcp",
        )
        model, solution = trim.model, trim.solution
    else:
        model = function(**params)
        solution = mom.solve(model)
    return params, options, model, solution, trim


def _insert_after(header: dict[str, str], key: str, extra: Mapping[str, str]) -> None:
    """Put ``extra`` into ``header`` right after ``key`` (at the end if it is missing), in place."""
    items = list(header.items())
    at = next((k + 1 for k, (name, _) in enumerate(items) if name == key), len(items))
    items[at:at] = [(k, v) for k, v in extra.items() if k not in header]
    header.clear()
    header.update(items)


def build_template_table(template: str, values: Mapping[str, Any] | None = None, *, command: str | None = None) -> PatternTable:
    """Validate, build, trim, solve, feed and tabulate a template (``values``: numbers or text).

    ``values`` may hold the template's parameters (``templates.TEMPLATES``), the grid steps
    ``elevation_step_deg`` and ``azimuth_step_deg``, the trim options (:data:`TRIM_PARAMETERS`) and,
    for two-port templates, the feed options (:data:`FEED_PARAMETERS`). ``command`` is written as
    ``generated_by`` (default: the call). The ``parameters`` header line records the options as
    asked (``trim=resonance``, ``phasing_cable=auto``), not what the design found, so a rebuild
    with one parameter changed trims and designs again; the ``trimmed``, ``phasing_line...`` and
    ``matching...`` lines say what was found.
    """
    params, options, model, solution, trim = solve_template(template, values)
    harness = None
    if options.get("feed") == "harness":
        harness = design.design_harness(
            solution, phasing_cable=options["phasing_cable"], match=options["match"], sense=options["sense"] or "rhcp"
        )
        feed = harness.feed
    else:
        feed = feed_model(solution, options, model.frequency_hz)
    recorded = {**params, **options}
    if command is None:
        command = " ".join(
            ["planner pattern build", template, *(f"{k}={_fmt_value(v)}" for k, v in recorded.items() if v is not None)]
        )
    table = build_pattern_table(
        model,
        solution,
        feed,
        frequency_hz=model.frequency_hz,
        template=template,
        parameters=recorded,
        command=command,
        elevation_step_deg=options["elevation_step_deg"],
        azimuth_step_deg=options["azimuth_step_deg"],
        builder=template,
    )
    extra: dict[str, str] = {}
    if trim is not None:
        extra.update(trim.header())
    if harness is not None:
        extra.update(harness.header())
    if extra:
        _insert_after(table.header, "feed", extra)
    return table


def harness_from_header(header: Mapping[str, str], source: str = "pattern table") -> design.HarnessDesign:
    """Rebuild the harness a ``feed=harness`` table was made with, from its ``builder`` and
    ``parameters`` header lines (the model is trimmed, solved and the harness designed again)."""
    builder = header.get("builder", "")
    template = BUILDER_ALIASES.get(builder, builder)
    if template not in TWO_PORT_TEMPLATES:
        raise UserError(
            f"{source}: builder {builder or '(none)'!r} is not a two-port wire template; allowed: tables built by "
            "planner pattern build turnstile|crossed-loops ... feed=harness"
        )
    values = {}
    for item in header.get("parameters", "").split(";"):
        key, sep, value = item.partition("=")
        if sep:
            values[key.strip()] = value.strip()
    if values.get("feed") != "harness":
        raise UserError(
            f"{source}: the table was built with feed={values.get('feed', 'quadrature')}; allowed: a table built "
            "with feed=harness (planner pattern build ... feed=harness)"
        )
    _, options, _, solution, _ = solve_template(template, values)
    harness = design.design_harness(
        solution, phasing_cable=options["phasing_cable"], match=options["match"], sense=options["sense"] or "rhcp"
    )
    recorded = header.get("phasing_line_cut_cm")
    if recorded is not None and recorded != harness.header()["phasing_line_cut_cm"]:
        warn(
            f"{source}: the rebuilt phasing line is {harness.header()['phasing_line_cut_cm']} cm, the table says {recorded} cm "
            "(made by another version of planner?); the sensitivity is for the rebuilt one"
        )
    return harness

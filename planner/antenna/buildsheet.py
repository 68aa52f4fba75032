"""The build sheet: what to cut and assemble for one candidate set-up, and how exactly.

A pattern table made by ``planner pattern build`` names its wire template (``builder``), the
parameters it was asked for (``parameters``) and what trimming found (``trimmed``). The sheet
rebuilds the wire model through the template's own code at the trimmed size and reads the
dimensions off the wires (loop width, height and perimeter, dipole length, wire diameter,
reflector span, feed height above the reflector plane). The phasing line and matching section
come from the header (cable, velocity factor, cut length).

Cut tolerances
--------------
For each cut (element size, reflector spacing, phasing line, matching section) the sheet finds
the cut error, long (+) and short (-), that moves the *margin* by 0.5 dB. The margin change of a
cut error is defined as the worst, over directions at elevations from the lowest point of the
station's horizon mask up to 90 deg (every 5 deg, at 8 azimuths), and over two kinds of
satellite wave (RHCP, and a tumbling linear wave, which gets half the total gain), of the change
of the realized co-polar gain ``10 log10(G_wave M)``: ``G_wave`` the partial gain of the wave in
that direction (network loss included), ``M = 1 - |Gamma|^2`` the mismatch factor at the 50 ohm
feedline. Every other term of the link budget is the same for a mis-cut antenna, so this is the
change of the link margin toward that satellite. The gains are the free-space far field of the
solved currents (the ground's reflected ray multiplies nominal and mis-cut alike and is left
out).

The line cuts re-solve only the harness circuit (``design.harness_state``: the same port
impedance matrix, the line or section a little longer or shorter), which costs microseconds, so
their tolerance is found by secant steps to within 0.01 dB. The element size and the reflector
spacing change the geometry: each try is a new solve of the wire model on the table's own mesh
(about 0.3 s for the shipped loops), with the phasing line and matching section kept as cut; the
search is a log-log secant (margin change ~ error^p) with a bracket, at most
:data:`SOLVES_PER_SIDE` solves per side, stopped within 0.05 dB.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np

from planner.errors import UserError, warn

__all__ = [
    "BuildSheet",
    "Dimension",
    "CutTolerance",
    "build_sheet",
    "study_sheet",
    "has_build_data",
    "header_parameters",
    "template_parameters",
    "CutModel",
    "cut_model",
    "cut_tolerances",
    "find_tolerance_m",
    "render_text",
    "render_markdown",
    "MARGIN_CHANGE_DB",
    "TOLERANCE_DEFINITION",
    "SHEET_CAUTIONS",
]

MARGIN_CHANGE_DB = 0.5
"""The margin change a cut tolerance allows."""

SOLVES_PER_SIDE = 5
"""Wire solves at most per direction (long, short) of an element-size or spacing tolerance."""

_LINE_EVALUATIONS = 40
_LINE_ACCURACY_DB = 0.01
_SOLVE_ACCURACY_DB = 0.05
_ELEVATION_STEP_DEG = 5.0
_AZIMUTHS_DEG = tuple(np.arange(0.0, 360.0, 45.0))

TOLERANCE_DEFINITION = (
    "margin change = the worst change, over elevations from the lowest point of the station's horizon mask "
    "to 90 deg (5 deg steps, 8 azimuths) and over an RHCP and a tumbling linear satellite wave, of the realized "
    "co-polar gain 10 log10(G M) (partial gain of that wave, network loss included, times the mismatch factor "
    "1 - |Gamma|^2 at 50 ohm); free-space far field of the solved currents. A tolerance is the cut error that "
    f"changes the margin by {MARGIN_CHANGE_DB:g} dB; +/- gives the smaller of the long and short sides. Element size: "
    "both elements' perimeter (loops) or tip-to-tip length (dipoles) off by the same amount, the phasing line and "
    "matching section as cut; reflector spacing: the elements raised (+) or lowered (-) above the reflector"
)

SHEET_CAUTIONS = (
    "Raising a mast: two or more people, guy it as you raise it, and never work on it in wind; a falling "
    "mast is as dangerous as a power line.",
    "Fit a coaxial surge arrestor where the feedline enters the building and bond it to the station ground.",
    "Local building, electrical and planning codes and licensed installers' practice come first: where "
    "they differ from this sheet, follow them.",
)
"""Cautions printed with every sheet after ``planner.link.safety.STATION_CAUTIONS``."""


@dataclass(frozen=True)
class Dimension:
    """One dimension a builder measures: what, its value in cm and where it is measured."""

    name: str
    value_cm: float
    measured: str

    def to_dict(self) -> dict[str, Any]:
        return {"name": self.name, "value_cm": round(self.value_cm, 3), "measured": self.measured}


@dataclass(frozen=True)
class CutTolerance:
    """The cut error, long and short, that changes the margin by :data:`MARGIN_CHANGE_DB`.

    ``long_mm`` / ``short_mm`` are None when no error up to ``searched_mm`` reaches it (the cut is
    then not critical); ``change_at_tolerance_db`` are the margin changes found at the two errors.
    """

    part: str
    long_mm: float | None
    short_mm: float | None
    searched_long_mm: float
    searched_short_mm: float
    evaluations: int
    method: str
    change_at_tolerance_db: tuple[float | None, float | None] = (None, None)

    @property
    def tolerance_mm(self) -> float | None:
        """The +/- figure: the smaller side (None when neither side reaches the margin change)."""
        sides = [s for s in (self.long_mm, self.short_mm) if s is not None]
        return min(sides) if sides else None

    def text(self) -> str:
        if self.tolerance_mm is None:
            return f"beyond +{self.searched_long_mm:.0f} / -{self.searched_short_mm:.0f} mm (not critical)"
        long = "-" if self.long_mm is None else f"+{self.long_mm:.1f}"
        short = "-" if self.short_mm is None else f"-{self.short_mm:.1f}"
        return f"+/- {self.tolerance_mm:.1f} mm (long {long}, short {short})"

    def to_dict(self) -> dict[str, Any]:
        return {
            "part": self.part,
            "tolerance_mm": _round(self.tolerance_mm),
            "long_mm": _round(self.long_mm),
            "short_mm": _round(self.short_mm),
            "searched_long_mm": round(self.searched_long_mm, 2),
            "searched_short_mm": round(self.searched_short_mm, 2),
            "evaluations": self.evaluations,
            "method": self.method,
        }


def _round(value: float | None, digits: int = 2) -> float | None:
    return None if value is None else round(value, digits)


@dataclass(frozen=True)
class BuildSheet:
    """Everything a builder needs for one candidate (see the module docstring); JSON via :meth:`to_dict`."""

    candidate: str
    pattern_file: str
    frequency_mhz: float | None
    selection: str
    build_data: bool
    summary: str
    template: str | None = None
    elements: tuple[Dimension, ...] = ()
    reflector: tuple[Dimension, ...] = ()
    reflector_kind: str | None = None
    spacing: Dimension | None = None
    mast_height_m: float | None = None
    ground: str | None = None
    phasing_line: dict[str, Any] | None = None
    matching_section: dict[str, Any] | None = None
    feed_impedance_ohm: complex | None = None
    feed_vswr: float | None = None
    tolerances: tuple[CutTolerance, ...] = ()
    tolerance_definition: str | None = None
    feedline: tuple[dict[str, Any], ...] = ()
    connectors: int = 0
    lna_position: str | None = None
    pre_lna: dict[str, Any] = field(default_factory=dict)
    cautions: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """The JSON contract (units in the key names)."""
        z = self.feed_impedance_ohm
        return {
            "candidate": self.candidate,
            "pattern_file": self.pattern_file,
            "frequency_mhz": self.frequency_mhz,
            "selection": self.selection,
            "build_data": self.build_data,
            "summary": self.summary,
            "template": self.template,
            "elements": [d.to_dict() for d in self.elements],
            "reflector_kind": self.reflector_kind,
            "reflector": [d.to_dict() for d in self.reflector],
            "reflector_spacing": None if self.spacing is None else self.spacing.to_dict(),
            "mast_height_m": self.mast_height_m,
            "ground": self.ground,
            "phasing_line": self.phasing_line,
            "matching_section": self.matching_section,
            "feed_impedance_ohm": None if z is None else {"re": round(z.real, 3), "im": round(z.imag, 3)},
            "feed_vswr": None if self.feed_vswr is None else round(self.feed_vswr, 3),
            "cut_tolerances": [t.to_dict() for t in self.tolerances],
            "margin_change_db": MARGIN_CHANGE_DB if self.tolerances else None,
            "tolerance_definition": self.tolerance_definition,
            "feedline": list(self.feedline),
            "connectors": self.connectors,
            "lna_position": self.lna_position,
            "pre_lna": dict(self.pre_lna),
            "cautions": list(self.cautions),
        }


# --------------------------------------------------------------------------------------------
# Header and geometry
# --------------------------------------------------------------------------------------------


def header_parameters(header: dict[str, str]) -> dict[str, str]:
    """The ``parameters`` header line as ``{name: text}``."""
    values = {}
    for item in header.get("parameters", "").split(";"):
        key, sep, value = item.partition("=")
        if sep:
            values[key.strip()] = value.strip()
    return values


def _trimmed_wavelengths(header: dict[str, str], size_parameter: str, source: str) -> float | None:
    """The trimmed size from ``trimmed = <parameter> <wavelengths> (<m> m)``, or None if untrimmed."""
    text = header.get("trimmed")
    if text is None:
        return None
    name, _, rest = text.partition(" ")
    try:
        value = float(rest.split()[0])
    except (IndexError, ValueError):
        value = math.nan
    if name != size_parameter or not math.isfinite(value):
        raise UserError(f"{source}: header line trimmed = {text!r} is not '{size_parameter} <wavelengths> (<metres> m)'")
    return value


def template_parameters(header: dict[str, str], source: str) -> tuple[str, dict[str, Any]]:
    """(template, checked template parameters at the trimmed size) from a table header."""
    from planner.antenna.synth.design import SIZE_PARAMETERS
    from planner.antenna.synth.templates import TEMPLATES, check_parameters
    from planner.antenna.tablefile import BUILDER_ALIASES

    builder = header.get("builder", "")
    template = BUILDER_ALIASES.get(builder, builder)
    if template not in TEMPLATES:
        raise UserError(f"{source}: builder {builder!r} is not a wire template; allowed: {', '.join(TEMPLATES)}")
    specs = TEMPLATES[template][1]
    values = {k: v for k, v in header_parameters(header).items() if k in specs}
    params = check_parameters(template, values)
    size = SIZE_PARAMETERS.get(template)
    if size is not None:
        trimmed = _trimmed_wavelengths(header, size, source)
        if trimmed is not None:
            params[size] = trimmed
    return template, params


def has_build_data(header: dict[str, str]) -> bool:
    """Whether the table names a wire template (``builder``) whose geometry can be rebuilt."""
    from planner.antenna.synth.templates import TEMPLATES
    from planner.antenna.tablefile import BUILDER_ALIASES

    builder = header.get("builder", "")
    return BUILDER_ALIASES.get(builder, builder) in TEMPLATES


def _path_length_m(points: np.ndarray) -> float:
    return float(np.sum(np.linalg.norm(np.diff(points, axis=0), axis=1)))


def _element_dimensions(template: str, model, params: dict[str, Any]) -> tuple[Dimension, ...]:
    """Element dimensions read off the rebuilt wires (cm)."""
    wires = {w.name: w for w in model.wires}
    diameter = Dimension("wire diameter", 200.0 * params["radius_m"], "conductor outside diameter")
    if template == "crossed-loops":
        pts = np.asarray(wires["a"].points)
        width = float(np.ptp(pts[:, 0]))
        height = float(np.ptp(pts[:, 2]))
        return (
            Dimension("loop perimeter (each loop)", 100.0 * _path_length_m(pts), "wire length around the loop, gap to gap"),
            Dimension("loop width", 100.0 * width, "wire centre line to centre line, horizontally"),
            Dimension("loop height", 100.0 * height, "feed gap to top, wire centre line"),
            Dimension("crossing gap", 100.0 * (model.ports[1].position[2] - model.ports[0].position[2]), "loop a below b"),
            diameter,
        )
    if template == "turnstile":
        pts = np.asarray(wires["a"].points)
        return (
            Dimension("dipole length (each, tip to tip)", 100.0 * _path_length_m(pts), "including the feed gap"),
            Dimension("half-dipole (each arm)", 50.0 * _path_length_m(pts), "from the centre of the feed gap to the tip"),
            Dimension("crossing gap", 100.0 * (model.ports[1].position[2] - model.ports[0].position[2]), "dipole a below b"),
            diameter,
        )
    pts = np.asarray(model.wires[0].points)
    return (Dimension("dipole length (tip to tip)", 100.0 * _path_length_m(pts), "including the feed gap"), diameter)


def _reflector_dimensions(model, params: dict[str, Any]) -> tuple[str | None, tuple[Dimension, ...]]:
    kind = params.get("reflector")
    rods = [w for w in model.wires if w.name.startswith("reflector")]
    radius = params.get("reflector_radius_m") or params["radius_m"]
    if kind == "rods" and rods:
        return "four rods crossed at 45 deg steps, joined at the centre", (
            Dimension("rod length (each, tip to tip)", 100.0 * _path_length_m(np.asarray(rods[0].points)), "through the centre"),
            Dimension("rod diameter", 200.0 * radius, "conductor outside diameter"),
        )
    if kind == "grid" and rods:
        pts = np.concatenate([np.asarray(w.points) for w in rods])
        side = float(np.ptp(pts[:, 0]))
        pitch = float(np.min(np.diff(np.unique(np.round(pts[:, 1], 9)))))
        return "square wire grid", (
            Dimension("grid side", 100.0 * side, "outer wire to outer wire"),
            Dimension("grid pitch", 100.0 * pitch, "wire centre to wire centre"),
            Dimension("grid wire diameter", 200.0 * radius, "conductor outside diameter"),
        )
    if kind == "pec":
        return "a metal plane (the model's is infinite: make it as large as the mast allows)", ()
    return None, ()


def _spacing(template: str, model) -> Dimension:
    """The feed height above the model's z = 0 plane: the reflector plane, when there is one."""
    reflector = any(w.name.startswith("reflector") for w in model.wires) or model.ground == "pec"
    heights = [float(p.position[2]) for p in model.ports]
    point = "the midpoint between the two feed gaps (loop a's gap is half the crossing gap lower, b's higher)"
    if template == "turnstile":
        point = "the midpoint between the two dipoles' centres (a half the crossing gap lower, b higher)"
    elif template == "dipole":
        point = "the dipole's centre"
    if reflector:
        return Dimension("reflector spacing", 100.0 * float(np.mean(heights)), f"reflector plane (rod axes) to {point}")
    return Dimension("feed height", 100.0 * float(np.mean(heights)), f"mast reference point (no reflector) to {point}")


def _header_float(header: dict[str, str], key: str) -> float | None:
    try:
        return float(header[key])
    except (KeyError, ValueError):
        return None


def _phasing_line(header: dict[str, str], frequency_hz: float) -> dict[str, Any] | None:
    from planner.link.feedline import wavelength_in_line_m

    cut_cm = _header_float(header, "phasing_line_cut_cm")
    vf = _header_float(header, "phasing_line_velocity_factor")
    if cut_cm is None or vf is None:
        return None
    electrical = 360.0 * cut_cm / 100.0 / wavelength_in_line_m(frequency_hz, vf)
    return {
        "cable": header.get("phasing_line_cable"),
        "velocity_factor": vf,
        "electrical_length_deg": round(electrical, 2),
        "cut_cm": cut_cm,
        "measured": "cable ends to the connection points (element a's feed gap and element b's)",
        "connection": "element a at the feed point, element b through the line",
    }


def _matching_section(header: dict[str, str], frequency_hz: float) -> dict[str, Any] | None:
    from planner.link.feedline import wavelength_in_line_m

    text = header.get("matching_section")
    if text is None:
        return None
    out: dict[str, Any] = {"description": text}
    cut_cm = _header_float(header, "matching_section_cut_cm")
    vf = _header_float(header, "matching_section_velocity_factor")
    if cut_cm is not None and vf is not None:
        out.update(
            cable=header.get("matching_section_cable"),
            velocity_factor=vf,
            electrical_length_deg=round(360.0 * cut_cm / 100.0 / wavelength_in_line_m(frequency_hz, vf), 2),
            cut_cm=cut_cm,
            measured="cable ends to the connection points (feed point and the 50 ohm feedline's connector)",
        )
    if "matching_components" in header:
        out["components"] = header["matching_components"]
    return out


# --------------------------------------------------------------------------------------------
# Margin change of a cut error
# --------------------------------------------------------------------------------------------


def sky_directions(lowest_elevation_deg: float) -> tuple[np.ndarray, np.ndarray]:
    """(azimuth_deg, elevation_deg) arrays of the directions a margin change is taken over."""
    low = min(max(float(lowest_elevation_deg), 0.0), 90.0)
    elevations = np.unique(np.append(np.arange(low, 90.0, _ELEVATION_STEP_DEG), 90.0))
    az, el = np.meshgrid(np.asarray(_AZIMUTHS_DEG), elevations)
    return az.ravel(), el.ravel()


def direction_fields(solution, azimuth_deg: np.ndarray, elevation_deg: np.ndarray) -> np.ndarray:
    """(2 ports, 2 components, n directions): (E_theta, E_phi) of 1 V on each port, the other shorted."""
    out = []
    for k in range(len(solution.port_names)):
        unit = np.zeros(len(solution.port_names), dtype=complex)
        unit[k] = 1.0
        out.append(np.stack(solution.far_field(azimuth_deg, elevation_deg, unit)))
    return np.asarray(out)


def realized_gains_db(state, fields: np.ndarray) -> np.ndarray:
    """(2, n) realized gains 10 log10(G M) toward an RHCP wave and a tumbling linear wave.

    Partial gain G = 4 pi U / P_feed with U = |E|^2 / (2 eta0) and P_feed the port power over the
    network efficiency (as ``design.harness_state`` at the zenith); a tumbling linear wave meets half
    the total gain (random tilt, Stutzman).
    """
    from planner.antenna.synth.mom import ETA0_OHM

    v = np.asarray(state.phasing.port_voltages, dtype=complex)
    i = np.asarray(state.phasing.port_currents, dtype=complex)
    e_theta = v[0] * fields[0, 0] + v[1] * fields[1, 0]
    e_phi = v[0] * fields[0, 1] + v[1] * fields[1, 1]
    e_r = (e_theta + 1j * e_phi) / math.sqrt(2.0)
    e_l = (e_theta - 1j * e_phi) / math.sqrt(2.0)
    p_feed = 0.5 * float(np.real(np.sum(v * np.conj(i)))) / state.network_efficiency
    scale = 4.0 * math.pi / (2.0 * ETA0_OHM) / p_feed
    rhcp = scale * np.abs(e_r) ** 2
    tumbling = 0.5 * scale * (np.abs(e_r) ** 2 + np.abs(e_l) ** 2)
    mismatch = 10.0 ** (-state.mismatch_loss_db / 10.0)
    return 10.0 * np.log10(np.maximum(np.stack([rhcp, tumbling]) * mismatch, 1e-30))


@dataclass(frozen=True)
class CutModel:
    """A built candidate, ready to be cut wrong: the solved model, its harness and the directions."""

    template: str
    params: dict[str, Any]
    design: Any  # planner.antenna.synth.design.HarnessDesign
    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    fields: np.ndarray
    nominal_db: np.ndarray

    def _state(self, z, zenith_fields, *, phasing_error_m: float = 0.0, match_error_m: float = 0.0):
        from planner.antenna.synth.design import harness_state

        d = self.design
        return harness_state(
            z,
            zenith_fields,
            d.frequency_hz,
            d.phasing.cable,
            d.phasing.length_m + phasing_error_m,
            d.match,
            sense=d.sense,
            match_cut_error_m=match_error_m,
        )

    def margin_change_db(self, part: str, error_m: float) -> float:
        """The margin change (module docstring) when ``part`` is cut ``error_m`` long (+) or short (-).

        ``part``: "phasing line", "matching section" (harness circuit only), "element size" or
        "reflector spacing" (a new wire solve each call).
        """
        d = self.design
        if part in ("phasing line", "matching section"):
            key = "phasing_error_m" if part == "phasing line" else "match_error_m"
            state = self._state(d.port_impedance_matrix, d.fields, **{key: error_m})
            fields = self.fields
        else:
            solution = self.solve_perturbed(part, error_m)
            from planner.antenna.synth.design import port_fields

            state = self._state(solution.port_impedance_matrix(), port_fields(solution))
            fields = direction_fields(solution, self.azimuth_deg, self.elevation_deg)
        return float(np.max(np.abs(realized_gains_db(state, fields) - self.nominal_db)))

    def solve_perturbed(self, part: str, error_m: float):
        """The wire model solved with the element perimeter/length or the reflector spacing off by ``error_m``."""
        from planner.antenna.synth import mom
        from planner.antenna.synth.design import SIZE_PARAMETERS
        from planner.antenna.synth.templates import build_model, wavelength_m

        lam = wavelength_m(self.params["frequency_hz"])
        key = SIZE_PARAMETERS[self.template] if part == "element size" else "spacing_wavelengths"
        params = dict(self.params, **{key: self.params[key] + error_m / lam})
        return mom.solve(build_model(self.template, **params))


def cut_model(template: str, params: dict[str, Any], header: dict[str, str], lowest_elevation_deg: float, source: str) -> CutModel:
    """Solve the candidate at its trimmed size and design its harness as the table's builder did."""
    from planner.antenna.synth import mom
    from planner.antenna.synth.design import design_harness
    from planner.antenna.synth.templates import build_model

    options = header_parameters(header)
    solution = mom.solve(build_model(template, **params))
    cable = options.get("phasing_cable", "auto")
    harness = design_harness(solution, phasing_cable=cable, match=options.get("match", "auto"), sense=options.get("sense", "rhcp"))
    recorded = header.get("phasing_line_cut_cm")
    if recorded is not None and recorded != harness.header()["phasing_line_cut_cm"]:
        warn(
            f"{source}: the rebuilt phasing line is {harness.header()['phasing_line_cut_cm']} cm, the table says {recorded} cm "
            "(made by another version of planner?); the tolerances are for the rebuilt one"
        )
    az, el = sky_directions(lowest_elevation_deg)
    fields = direction_fields(solution, az, el)
    nominal = realized_gains_db(harness.state, fields)
    return CutModel(template, params, harness, az, el, fields, nominal)


# --------------------------------------------------------------------------------------------
# Tolerance search
# --------------------------------------------------------------------------------------------


def find_tolerance_m(
    change_db: Callable[[float], float], sign: float, first_m: float, limit_m: float, evaluations: int, accuracy_db: float
) -> tuple[float | None, float | None, int]:
    """The error ``sign * e`` (e > 0) at which ``change_db`` reaches :data:`MARGIN_CHANGE_DB`.

    Log-log secant on (e, change): the change of a small cut error grows as a power of it, so
    the secant through two tries in log-log is nearly exact; a bracket [below, above] is kept and
    a step that would leave it becomes its geometric mean. Returns (e or None if ``limit_m`` is
    not enough, the change found there, evaluations used).
    """
    target = MARGIN_CHANGE_DB
    below: tuple[float, float] | None = None
    above: tuple[float, float] | None = None
    e = min(first_m, limit_m)
    best: tuple[float, float] | None = None
    for count in range(1, evaluations + 1):
        w = change_db(sign * e)
        if best is None or abs(w - target) < abs(best[1] - target):
            best = (e, w)
        if abs(w - target) <= accuracy_db:
            return e, w, count
        if w < target:
            below = (e, w)
        else:
            above = (e, w)
        if above is None:
            if e >= limit_m:
                return None, None, count
            grow = 4.0 if w <= 1e-6 else min(4.0, target / w)
            e = min(e * max(grow, 1.2), limit_m)
            continue
        if below is None:
            e = e * max(0.25, min(0.9, target / max(w, 1e-12)))
            continue
        (e1, w1), (e2, w2) = below, above
        if w1 > 1e-9 and w2 > w1:
            p = math.log(w2 / w1) / math.log(e2 / e1)
            guess = e1 * (target / w1) ** (1.0 / p) if p > 0 else math.sqrt(e1 * e2)
        else:
            guess = math.sqrt(e1 * e2) if e1 > 0 else 0.5 * e2
        low, high = min(e1, e2), max(e1, e2)
        e = guess if low < guess < high else math.sqrt(low * high)
    if above is None or best is None:
        return None, None, evaluations
    return best[0], best[1], evaluations


def _tolerance(model: CutModel, part: str, first_m: float, limit_short_m: float, limit_long_m: float, solves: bool) -> CutTolerance:
    evaluations = SOLVES_PER_SIDE if solves else _LINE_EVALUATIONS
    accuracy = _SOLVE_ACCURACY_DB if solves else _LINE_ACCURACY_DB

    def change(e: float) -> float:
        return model.margin_change_db(part, e)

    long_m, long_db, n_long = find_tolerance_m(change, +1.0, first_m, limit_long_m, evaluations, accuracy)
    short_m, short_db, n_short = find_tolerance_m(change, -1.0, first_m, limit_short_m, evaluations, accuracy)
    method = (
        f"wire solve per try on the table's mesh, log-log secant, {n_long + n_short} solves"
        if solves
        else f"harness circuit re-solved per try, log-log secant to {_LINE_ACCURACY_DB:g} dB"
    )
    return CutTolerance(
        part,
        None if long_m is None else long_m * 1e3,
        None if short_m is None else short_m * 1e3,
        1e3 * limit_long_m,
        1e3 * limit_short_m,
        n_long + n_short,
        method,
        (long_db, short_db),
    )


def cut_tolerances(model: CutModel, *, elements: bool = True) -> tuple[CutTolerance, ...]:
    """Tolerances of the phasing line, the matching section (quarter wave), and with ``elements``
    the element size and the reflector spacing."""
    from planner.antenna.synth.design import SIZE_PARAMETERS
    from planner.antenna.synth.templates import wavelength_m

    d = model.design
    lam = wavelength_m(model.params["frequency_hz"])
    out = [_tolerance(model, "phasing line", 0.005, 0.9 * d.phasing.length_m, 0.1 * lam, solves=False)]
    if d.match.kind == "quarter-wave":
        _, section_m = d.match._line_parts()
        out.append(_tolerance(model, "matching section", 0.005, 0.9 * section_m, 0.1 * lam, solves=False))
    if elements:
        size = model.params[SIZE_PARAMETERS[model.template]] * lam
        out.append(_tolerance(model, "element size", 0.005 * size, 0.1 * size, 0.1 * size, solves=True))
        if model.params.get("reflector") not in (None, "none"):
            spacing = model.params["spacing_wavelengths"] * lam
            out.append(_tolerance(model, "reflector spacing", 0.02 * spacing, 0.3 * spacing, 0.3 * spacing, solves=True))
    return tuple(out)


# --------------------------------------------------------------------------------------------
# The sheet
# --------------------------------------------------------------------------------------------


def _feed_facts(candidate, default_lna_position: str | None) -> dict[str, Any]:
    runs = tuple({"cable": cable.name, "length_m": length} for cable, length in candidate.feedline)
    pre = {
        "feedline": [{"cable": c.name, "length_m": length} for c, length in candidate.pre_lna_feedline],
        "connectors": candidate.pre_lna_connectors,
        "loss_db": candidate.pre_lna_loss_db,
    }
    lna = candidate.lna_position or default_lna_position
    return dict(feedline=runs, connectors=candidate.connectors, lna_position=lna, pre_lna=pre)


def _cautions() -> tuple[str, ...]:
    from planner.link.safety import STATION_CAUTIONS

    return (*STATION_CAUTIONS, *SHEET_CAUTIONS)


def build_sheet(
    candidate,
    *,
    lowest_elevation_deg: float = 0.0,
    selection: str = "",
    default_lna_position: str | None = None,
    tolerances: bool = True,
) -> BuildSheet:
    """The build sheet of a ``planner.study.Candidate`` (module docstring).

    ``lowest_elevation_deg``: the lowest point of the station's horizon mask (the margin change is
    taken from there to 90 deg). ``selection`` says how the candidate was chosen (printed).
    ``default_lna_position``: the ``[receiver]`` one, for a candidate that does not set its own.
    ``tolerances=False`` skips the cut-tolerance solves.
    """
    table = candidate.pattern
    header = dict(table.header)
    pattern_file = str(table.path) if table.path is not None else candidate.name
    source = pattern_file
    frequency_hz = table.frequency_hz
    facts = _feed_facts(candidate, default_lna_position)
    base = BuildSheet(
        candidate=candidate.name,
        pattern_file=pattern_file,
        frequency_mhz=None if frequency_hz is None else frequency_hz / 1e6,
        selection=selection,
        build_data=False,
        summary="",
        cautions=_cautions(),
        **facts,
    )
    if not has_build_data(header):
        model = header.get("model", "no model named")
        return replace(
            base,
            summary=f"no build data: the pattern table ({model}) names no wire template to build from; "
            "the feedline, connectors and LNA position below are what the scenario gives",
            feed_vswr=table.feed_vswr,
            feed_impedance_ohm=table.feed_impedance_ohm,
        )
    from planner.antenna.synth.templates import build_model

    template, params = template_parameters(header, source)
    model = build_model(template, **params)
    kind, reflector = _reflector_dimensions(model, params)
    sheet = replace(
        base,
        build_data=True,
        summary=f"{template} at {frequency_hz / 1e6:g} MHz, dimensions from the template rebuilt at the trimmed size",
        template=template,
        elements=_element_dimensions(template, model, params),
        reflector=reflector,
        reflector_kind=kind,
        spacing=_spacing(template, model),
        mast_height_m=_header_float(header, "mast_height_m"),
        ground=header.get("ground"),
        phasing_line=_phasing_line(header, frequency_hz),
        matching_section=_matching_section(header, frequency_hz),
        feed_impedance_ohm=table.feed_impedance_ohm,
        feed_vswr=table.feed_vswr,
    )
    if tolerances and header_parameters(header).get("feed") == "harness":
        cuts = cut_model(template, params, header, lowest_elevation_deg, source)
        sheet = replace(sheet, tolerances=cut_tolerances(cuts), tolerance_definition=TOLERANCE_DEFINITION)
    return sheet


# --------------------------------------------------------------------------------------------
# Text
# --------------------------------------------------------------------------------------------


def _lines(sheet: BuildSheet) -> list[str]:
    # The file's name only: the folder is the scenario's, and a report travels without it.
    out = [f"Build sheet: {sheet.candidate} (pattern table {Path(sheet.pattern_file).name})"]
    if sheet.selection:
        out.append(sheet.selection)
    if not sheet.build_data:
        out.append(f"This table has {sheet.summary}.")
    else:
        out.append(f"Antenna: {sheet.summary}.")
        out.append("Elements:")
        out += [f"  {d.name}: {d.value_cm:.2f} cm ({d.measured})" for d in sheet.elements]
        if sheet.reflector_kind:
            out.append(f"Reflector: {sheet.reflector_kind}")
            out += [f"  {d.name}: {d.value_cm:.2f} cm ({d.measured})" for d in sheet.reflector]
        if sheet.spacing is not None:
            out.append(f"  {sheet.spacing.name}: {sheet.spacing.value_cm:.2f} cm, {sheet.spacing.measured}")
        if sheet.mast_height_m is not None:
            plane = "reflector plane" if sheet.reflector_kind else "mast reference point"
            out.append(f"Mast: {plane} {sheet.mast_height_m:g} m above the ground; ground {sheet.ground or 'not given'}")
        for title, part in (("Phasing line", sheet.phasing_line), ("Matching section", sheet.matching_section)):
            if part is None:
                continue
            if "cut_cm" in part:
                out.append(
                    f"{title}: {part['cable']}, velocity factor {part['velocity_factor']:g}, cut {part['cut_cm']:.2f} cm "
                    f"({part['electrical_length_deg']:.1f} deg electrical), measured {part['measured']}"
                )
            else:
                out.append(f"{title}: {part['description']}" + (f"; parts {part['components']}" if "components" in part else ""))
    if sheet.feed_impedance_ohm is not None or sheet.feed_vswr is not None:
        z = sheet.feed_impedance_ohm
        z_text = "not given" if z is None else f"{z.real:.1f} {'+' if z.imag >= 0 else '-'} j{abs(z.imag):.1f} ohm"
        vswr = "not given" if sheet.feed_vswr is None else f"{sheet.feed_vswr:.2f}"
        out.append(f"Expected at the 50 ohm feedline: impedance {z_text}, VSWR {vswr}")
    if sheet.tolerances:
        out.append(f"Cut tolerances (margin within {MARGIN_CHANGE_DB:g} dB):")
        out += [f"  {t.part}: {t.text()}; {t.method}" for t in sheet.tolerances]
        out.append(f"  ({sheet.tolerance_definition})")
    runs = ", ".join(f"{r['length_m']:g} m of {r['cable']}" for r in sheet.feedline) or "none given"
    out.append(f"Feedline: {runs}; {sheet.connectors} connectors; LNA at: {sheet.lna_position or 'not given'}")
    pre = sheet.pre_lna
    if pre.get("feedline") or pre.get("connectors") or pre.get("loss_db"):
        pre_runs = ", ".join(f"{r['length_m']:g} m of {r['cable']}" for r in pre["feedline"]) or "no cable"
        out.append(f"Before the LNA: {pre_runs}; {pre['connectors']} connectors; {pre['loss_db']:g} dB other loss")
    out.append("Safety:")
    out += [f"  - {c}" for c in sheet.cautions]
    return out


def render_text(sheet: BuildSheet) -> str:
    """The sheet as plain text for the terminal."""
    return "\n".join(_lines(sheet)) + "\n"


def render_markdown(sheet: BuildSheet) -> str:
    """The sheet as Markdown (the report's ``build_sheet.md``)."""
    lines = _lines(sheet)
    body = [f"# {lines[0]}"]
    for line in lines[1:]:
        if line.startswith("  "):
            body.append(f"- {line.strip().removeprefix('- ')}")
        else:
            body += ["", line]
    return "\n".join(body) + "\n"


def study_sheet(study, candidate_name: str, *, selection: str = "", tolerances: bool = True, strict: bool = True) -> BuildSheet:
    """The sheet of a study's candidate, at its station's horizon mask and receiver.

    ``strict=False`` (the report, written after a whole comparison) turns a table whose build data
    cannot be rebuilt into a warning and a sheet with the feedline facts only, instead of an error.
    """
    candidate = study.candidate(candidate_name)
    try:
        return build_sheet(
            candidate,
            lowest_elevation_deg=study.station.mask.lowest_deg,
            selection=selection,
            default_lna_position=study.receiver.lna_position,
            tolerances=tolerances,
        )
    except UserError as error:
        if strict:
            raise
        warn(f"build sheet of {candidate_name}: {error}; the sheet lists the feedline only")
        return replace(
            build_sheet(
                replace(candidate, pattern=replace(candidate.pattern, header={})),
                selection=selection,
                default_lna_position=study.receiver.lna_position,
            ),
            summary=f"no build data: {error}",
        )

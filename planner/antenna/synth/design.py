"""Candidates as a builder would build them: elements trimmed to resonance, a designed phasing
harness and a matching section to 50 ohm.

Everything here is circuit theory on the solver's port impedance matrix plus the far field, which
is linear in the port voltages; only trimming changes the geometry and needs new solves.

Trimming (:func:`trim_to_resonance`)
------------------------------------
The element's size parameter (``length_wavelengths`` of a dipole or turnstile,
``circumference_wavelengths`` of crossed loops) is adjusted at the design frequency until the
element's feed impedance has the target reactance (``target_reactance_ohm``, default 0), or, when a
``target_resistance_ohm`` is given too, until it is the impedance closest (in ohms) to
``R + jX`` that the size can reach. The impedance trimmed is:

* one port (dipole): the port's input impedance;
* two ports (turnstile, crossed loops): the mean of the two ports' *active* impedances under ideal
  quadrature, ``((Z_aa - j Z_ab) + (Z_bb + j Z_ba)) / 2`` for RHCP (signs of the ``j`` terms swapped
  for LHCP): what each element sees in operation, coupling included. Both elements are trimmed by
  the same size (they are one template parameter).

The search is a safeguarded secant (Gauss-Newton with the secant slope when the target is an
impedance): it starts at the untrimmed size, steps at most 10 % of the size at a time, keeps a
bracket once the reactance changes sign and bisects when a secant step would leave it, and stops
when the reactance is within :data:`TRIM_TOLERANCE_OHM` of the target (or, for an impedance target,
when the step falls under 1e-6 wavelength). For crossed loops of more than 48 segments the search
first runs on a 48-segment copy of the model (a solve costs a fifth) and then starts the full model
at that size with that slope: usually one or two full solves are left. The last solve is the one
tabulated (nothing is solved twice).

Phasing harness (:func:`design_phasing_line`)
---------------------------------------------
Element a at the feed point, element b through a line (``planner.antenna.synth.feed.phasing_line``, exact
with mutual coupling and the line's matched loss). For each candidate cable (every cable of
``planner.link.feedline.CABLES``, or the one named) the zenith field
``E = V_a F_a + V_b F_b`` (``F_k``: the zenith field of 1 V on port k, the other port shorted;
``V = Z I``) is computed on a grid of electrical lengths 2..362 deg in 0.5 deg steps at once (a
2x2 system solved by Cramer's rule per length), the best grid point is refined by a bounded
scalar minimisation (Brent), and the cable with the best zenith axial ratio wins (within
0.05 dB, the one with the lower line loss). The cross-polar ratio |E_L| / |E_R| (RHCP) is
minimised, so the sense is right as well as the axial ratio.

With no coupling and a real element resistance R, element a alone draws ``1 / R`` and element b
``1 / (R cos bl + j Z0 sin bl)``: quadrature needs ``bl = 90 deg`` and equal amplitudes need
``Z0 = R``. A line whose impedance differs from R leaves an amplitude ratio R / Z0 (AR = 20 log10 of
it): tall loops (about 55 ohm at resonance) suit a 50 ohm line, round loops (140-170 ohm) need a
line no catalog cable offers, and the design reports the axial ratio that is left.

Matching section (:func:`design_match`)
---------------------------------------
On the impedance after the phasing line, ``Z_L``:

* ``quarter-wave``: a quarter-wave transformer. For a real load Pozar's ``Z_t = sqrt(Z0 R_L)``; for
  a complex load the input impedance ``Z_t^2 / Z_L`` is nearest 50 ohm (smallest |Gamma|) when
  ``Z_t^2 = 50 |Z_L|``, so the ideal is ``sqrt(50 |Z_L|)``. It is built from the catalog cable whose
  impedance is nearest the ideal, a quarter guided wavelength long; the residual VSWR is computed
  exactly with ``planner.link.feedline.line_input_impedance`` on the complex load, the cable's loss
  included. Two identical cables in parallel count as a cable of half the impedance (two 75 ohm
  lines make 37.5 ohm); a cable of 50 ohm itself is no transformer and is left out.
* ``l-network``: a lossless L-section (Pozar, *Microwave Engineering*, sec. 5.1): for R_L > 50 ohm a
  shunt susceptance B across the load and a series reactance X toward the line, for R_L < 50 ohm a
  series X at the load and a shunt B across the line. Of Pozar's two solutions the one with the
  smaller normalised reactances |X| / 50 + 50 |B| is taken (less stored energy, wider bandwidth).
  Reported as nH / pF at the design frequency; ideal components (no loss).
* ``auto`` (default): the quarter-wave section when it reaches VSWR <= 1.5, else the L-network.
* ``none``: the feed impedance is left as it is.

Adding a matching network type: write a function ``(load_ohm, frequency_hz, ...) -> MatchSection``
that fills ``input_impedance_ohm`` exactly (and ``efficiency`` if it has loss), add its name to
:data:`MATCHES` and a branch to :func:`design_match` (and to :func:`_perturbed_match` if it has a
cut length or components a builder can get wrong).
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any, TypedDict

import numpy as np
from scipy.optimize import minimize_scalar

from planner.antenna.synth import mom
from planner.antenna.synth.feed import REFERENCE_IMPEDANCE_OHM, FeedResult, phasing_line
from planner.antenna.synth.geometry import WireModel
from planner.antenna.table import axial_ratio_db_from_circular
from planner.errors import UserError
from planner.link.feedline import (
    CABLES,
    Cable,
    get_cable,
    line_gamma_length,
    line_input_impedance,
    mismatch_loss_db,
    vswr_from_impedance,
    wavelength_in_line_m,
)

__all__ = [
    "SIZE_PARAMETERS",
    "MATCHES",
    "TRIM_TOLERANCE_OHM",
    "TrimResult",
    "element_impedance_ohm",
    "trim_to_resonance",
    "quarter_wave_impedance_ohm",
    "MatchSection",
    "l_network_solutions",
    "l_network",
    "transformer_cables",
    "quarter_wave_section",
    "design_match",
    "PhasingDesign",
    "port_fields",
    "design_phasing_line",
    "HarnessDesign",
    "design_harness",
    "harness_state",
    "cut_sensitivity",
]

SIZE_PARAMETERS = {"dipole": "length_wavelengths", "turnstile": "length_wavelengths", "crossed-loops": "circumference_wavelengths"}
"""The template parameter that trimming adjusts (in wavelengths at the design frequency)."""

COARSE_SEGMENTS = 48
"""Segments per loop of the cheap copy on which the crossed-loop trim starts (the template default)."""

TRIM_TOLERANCE_OHM = 0.05
"""A trim has converged when the element reactance is this close to the target."""

_SLOPE_GUESS_OHM_PER_WAVELENGTH = 1500.0
"""First-step slope dX/d(size) near the first series resonance (our solver gives about 1300-1700 ohm
per wavelength of loop perimeter or dipole length); only the size of the first step depends on it."""

_MAX_TRIM_SOLVES = 12

MATCHES = ("none", "quarter-wave", "l-network", "auto")

AUTO_QUARTER_WAVE_VSWR = 1.5
"""``match = auto`` takes the quarter-wave section when it reaches this VSWR or better."""

_TIE_DB = 0.05
"""Cables whose zenith axial ratios are this close are ranked by line loss."""


# --------------------------------------------------------------------------------------------
# Trimming
# --------------------------------------------------------------------------------------------


def element_impedance_ohm(port_impedance_matrix, sense: str = "rhcp") -> complex:
    """The impedance trimmed (module docstring): the port impedance of a one-port model, else the
    mean active impedance of the two ports under ideal quadrature of ``sense``."""
    z = np.asarray(port_impedance_matrix, dtype=complex)
    if z.shape == (1, 1):
        return complex(z[0, 0])
    q = -1j if sense == "rhcp" else 1j  # I_b / I_a
    active_a = z[0, 0] + q * z[0, 1]
    active_b = z[1, 1] + z[1, 0] / q
    return complex(0.5 * (active_a + active_b))


@dataclass(frozen=True)
class TrimResult:
    """A trimmed element: the size found, the impedance there and the solved model at that size."""

    template: str
    size_parameter: str
    untrimmed_wavelengths: float
    trimmed_wavelengths: float
    trimmed_m: float
    element_impedance_ohm: complex
    target_text: str
    solves: tuple[tuple[str, int], ...]
    parameters: dict
    model: WireModel
    solution: mom.Solution

    def header(self) -> dict[str, str]:
        """Header lines of a pattern table built from this trim."""
        solves = ", ".join(f"{count} at {label}" for label, count in self.solves)
        z = self.element_impedance_ohm
        return {
            "trim": (
                f"resonance: {self.size_parameter} adjusted from {self.untrimmed_wavelengths:g} until {self.target_text}; "
                f"safeguarded secant, solves: {solves}"
            ),
            "trimmed": f"{self.size_parameter} {self.trimmed_wavelengths:.5f} ({self.trimmed_m:.5f} m)",
            "element_impedance_ohm": f"{z.real:.3f}{z.imag:+.3f}j",
        }


def _trim_search(
    evaluate: Callable[[float], complex],
    x0: float,
    bounds: tuple[float, float],
    residual: Callable[[complex], complex],
    slope: complex,
    reactance_only: bool,
) -> tuple[float, list[tuple[float, complex]]]:
    """Safeguarded secant / Gauss-Newton on ``residual(evaluate(x))``; returns the best evaluated x
    and every (x, residual) pair in order. ``slope`` is d residual / dx for the first step."""
    low, high = bounds
    points: list[tuple[float, complex]] = []
    bracket: list[float] | None = None  # [x with residual < 0, x with residual > 0] (reactance only)
    x = x0
    for _ in range(_MAX_TRIM_SOLVES):
        r = residual(evaluate(x))
        points.append((x, r))
        if reactance_only:
            if abs(r.real) <= TRIM_TOLERANCE_OHM:
                break
            negative = [p for p, v in points if v.real < 0]
            positive = [p for p, v in points if v.real > 0]
            if negative and positive:
                # the sign change nearest the latest point
                bracket = sorted([min(negative, key=lambda p: abs(p - x)), min(positive, key=lambda p: abs(p - x))])
        if len(points) >= 2:
            (x_prev, r_prev), (x_last, r_last) = points[-2], points[-1]
            if x_last != x_prev:
                slope = (r_last - r_prev) / (x_last - x_prev)
        if abs(slope) == 0 or not np.isfinite(abs(slope)):
            break
        step = -float((np.conj(slope) * r).real) / abs(slope) ** 2
        step = float(np.clip(step, -0.1 * x, 0.1 * x))
        new = float(np.clip(x + step, low, high))
        if bracket is not None and not (bracket[0] < new < bracket[1] or bracket[1] < new < bracket[0]):
            new = 0.5 * (bracket[0] + bracket[1])
        if not reactance_only and abs(new - x) < 1e-6:
            break
        if new == x:
            break
        x = new
    best = min(points, key=lambda p: abs(p[1].real) if reactance_only else abs(p[1]))
    return best[0], points


def trim_to_resonance(
    template: str,
    parameters: Mapping[str, Any],
    *,
    target_reactance_ohm: float = 0.0,
    target_resistance_ohm: float | None = None,
    sense: str = "rhcp",
) -> TrimResult:
    """Adjust the template's size parameter until the element impedance (module docstring) has
    ``target_reactance_ohm`` (or is closest to ``target_resistance_ohm + j target_reactance_ohm``).

    ``parameters`` are the template's checked parameters (``templates.check_parameters``); the size
    parameter's value there is where the search starts.
    """
    from planner.antenna.synth.templates import TEMPLATES

    if template not in SIZE_PARAMETERS:
        raise UserError(f"trim: template {template!r} cannot be trimmed; allowed: {', '.join(SIZE_PARAMETERS)}")
    function, specs = TEMPLATES[template]
    name = SIZE_PARAMETERS[template]
    x0 = float(parameters[name])
    low, high = specs[name].allowed  # a number parameter's allowed range is (low, high)
    bounds = (float(low), float(high))
    target = complex(target_resistance_ohm or 0.0, target_reactance_ohm)
    reactance_only = target_resistance_ohm is None
    if reactance_only:
        target_text = f"the element reactance is {target_reactance_ohm:g} ohm"

        def residual(z: complex) -> complex:
            return complex(z.imag - target_reactance_ohm, 0.0)
    else:
        target_text = f"the element impedance is closest to {target.real:g}{target.imag:+g}j ohm"

        def residual(z: complex) -> complex:
            return z - target

    if template != "dipole":
        target_text += f" (the mean active impedance of a and b under ideal {sense.upper()} quadrature)"

    def solver(values: dict) -> tuple[Callable[[float], complex], dict]:
        cache: dict[float, tuple[WireModel, mom.Solution, complex]] = {}

        def evaluate(x: float) -> complex:
            model = function(**dict(values, **{name: x}))
            solution = mom.solve(model)
            z = element_impedance_ohm(solution.port_impedance_matrix(), sense)
            cache[x] = (model, solution, z)
            return z

        return evaluate, cache

    solves: list[tuple[str, int]] = []
    slope: complex = complex(_SLOPE_GUESS_OHM_PER_WAVELENGTH, 0.0)
    if not reactance_only:
        slope = complex(0.0, _SLOPE_GUESS_OHM_PER_WAVELENGTH)  # near resonance Z moves mostly along jX
    start = x0
    segments = parameters.get("segments")
    if template == "crossed-loops" and segments is not None and segments > COARSE_SEGMENTS:
        coarse, _ = solver(dict(parameters, segments=COARSE_SEGMENTS))
        start, points = _trim_search(coarse, x0, bounds, residual, slope, reactance_only)
        solves.append((f"{COARSE_SEGMENTS} segments", len(points)))
        if len(points) >= 2:
            (xa, ra), (xb, rb) = points[-2], points[-1]
            if xa != xb:
                slope = (rb - ra) / (xb - xa)
    evaluate, cache = solver(dict(parameters))
    best, points = _trim_search(evaluate, start, bounds, residual, slope, reactance_only)
    solves.append((f"{segments} segments" if segments is not None else "full model", len(points)))
    if reactance_only and abs(residual(cache[best][2]).real) > max(1.0, 10 * TRIM_TOLERANCE_OHM):
        z = cache[best][2]
        raise UserError(
            f"trim: the element reactance did not reach target_reactance_ohm = {target_reactance_ohm:g} near "
            f"{name} = {x0:g} (closest {z.imag:+.1f} ohm at {best:.4f}); allowed: a target the element can reach "
            "near its untrimmed size (start closer to resonance, or trim = none)"
        )
    model, solution, z = cache[best]
    lam = model.wavelength_m
    return TrimResult(
        template=template,
        size_parameter=name,
        untrimmed_wavelengths=x0,
        trimmed_wavelengths=best,
        trimmed_m=best * lam,
        element_impedance_ohm=z,
        target_text=target_text,
        solves=tuple(solves),
        parameters=dict(parameters, **{name: best}),
        model=model,
        solution=solution,
    )


# --------------------------------------------------------------------------------------------
# Matching sections
# --------------------------------------------------------------------------------------------


def quarter_wave_impedance_ohm(load_ohm: complex, reference_ohm: float = REFERENCE_IMPEDANCE_OHM) -> float:
    """Ideal impedance of a quarter-wave transformer from ``load_ohm`` to ``reference_ohm``:
    sqrt(Z0 R_L) for a real load (Pozar), sqrt(Z0 |Z_L|) for a complex one (module docstring)."""
    return math.sqrt(reference_ohm * abs(complex(load_ohm)))


@dataclass(frozen=True)
class MatchSection:
    """A matching section on the load ``load_impedance_ohm`` and what the 50 ohm line then sees.

    ``kind``: one of :data:`MATCHES` (``auto`` resolved). Quarter-wave: ``cable``, ``length_m``
    (physical), ``ideal_impedance_ohm``. L-network: ``series_reactance_ohm`` (X),
    ``shunt_susceptance_s`` (B), ``shunt_at_load`` (True: B across the load, X toward the line).
    ``efficiency``: power into the load / power into the section (the cable's loss; 1 if lossless).
    """

    kind: str
    frequency_hz: float
    load_impedance_ohm: complex
    input_impedance_ohm: complex
    vswr: float
    mismatch_loss_db: float
    efficiency: float = 1.0
    cable: Cable | None = None
    length_m: float | None = None
    ideal_impedance_ohm: float | None = None
    series_reactance_ohm: float | None = None
    shunt_susceptance_s: float | None = None
    shunt_at_load: bool | None = None
    reference_ohm: float = REFERENCE_IMPEDANCE_OHM

    def components(self) -> str:
        """The L-network's parts as a builder buys them (nH / pF at the design frequency)."""
        if self.kind != "l-network":
            return ""
        omega = 2.0 * math.pi * self.frequency_hz
        series = _part(self.series_reactance_ohm, omega, series=True)
        shunt = _part(self.shunt_susceptance_s, omega, series=False)
        if self.shunt_at_load:
            return f"shunt {shunt} across the antenna feed, then series {series} to the {self.reference_ohm:g} ohm line"
        return f"series {series} at the antenna feed, then shunt {shunt} across the {self.reference_ohm:g} ohm line"

    def _line_parts(self) -> tuple[Cable, float]:
        """A quarter-wave section's cable and physical length in metres (both always set on one)."""
        # _line_section, the only maker of quarter-wave sections, sets both
        assert self.kind == "quarter-wave" and self.cable is not None and self.length_m is not None
        return self.cable, self.length_m

    def describe(self) -> str:
        if self.kind == "none":
            return "none (the feed impedance goes to the line as it is)"
        if self.kind == "quarter-wave":
            cable, length_m = self._line_parts()
            return (
                f"quarter-wave transformer of {cable.name} ({cable.impedance_ohm:g} ohm, velocity factor "
                f"{cable.velocity_factor:g}; ideal {self.ideal_impedance_ohm:.1f} ohm), cut {length_m * 100:.2f} cm"
            )
        return f"lossless L-network (Pozar sec. 5.1): {self.components()}"


def _part(value: float | None, omega: float, *, series: bool) -> str:
    """A reactance (series, ohm) or susceptance (shunt, S) as an inductor or capacitor value."""
    if value is None or value == 0:
        return "nothing (0)"
    inductive = value > 0 if series else value < 0
    if inductive:
        henry = value / omega if series else -1.0 / (omega * value)
        return f"L {henry * 1e9:.2f} nH"
    farad = -1.0 / (omega * value) if series else value / omega
    return f"C {farad * 1e12:.2f} pF"


def _section(kind: str, frequency_hz: float, load: complex, z_in: complex, reference_ohm: float, **extra) -> MatchSection:
    vswr = float(vswr_from_impedance(z_in, reference_ohm)) if z_in.real > 0 else float("inf")
    return MatchSection(
        kind=kind,
        frequency_hz=frequency_hz,
        load_impedance_ohm=load,
        input_impedance_ohm=z_in,
        vswr=vswr,
        mismatch_loss_db=float(mismatch_loss_db(vswr)),
        reference_ohm=reference_ohm,
        **extra,
    )


def _l_input(load: complex, x: float, b: float, shunt_at_load: bool) -> complex:
    if shunt_at_load:
        return 1j * x + 1.0 / (1j * b + 1.0 / load)
    return 1.0 / (1j * b + 1.0 / (load + 1j * x))


def l_network_solutions(load_ohm: complex, reference_ohm: float = REFERENCE_IMPEDANCE_OHM) -> list[tuple[float, float, bool]]:
    """Pozar's two L-section solutions ``(X ohm, B siemens, shunt_at_load)`` matching ``load_ohm``
    to ``reference_ohm`` (Microwave Engineering, sec. 5.1, eqs. for R_L > Z0 and R_L < Z0)."""
    z = complex(load_ohm)
    r, x_l, z0 = z.real, z.imag, float(reference_ohm)
    if not r > 0:
        raise UserError(f"match: the load {z:.2f} ohm has no positive resistance; allowed: a load with R > 0")
    out = []
    if r > z0:
        root = math.sqrt(r / z0) * math.sqrt(r * r + x_l * x_l - z0 * r)
        for sign in (1.0, -1.0):
            b = (x_l + sign * root) / (r * r + x_l * x_l)
            if b == 0:
                continue
            x = 1.0 / b + x_l * z0 / r - z0 / (b * r)
            out.append((x, b, True))
    else:
        for sign in (1.0, -1.0):
            x = sign * math.sqrt(r * (z0 - r)) - x_l
            b = sign * math.sqrt((z0 - r) / r) / z0
            out.append((x, b, False))
    return out


def l_network(load_ohm: complex, frequency_hz: float, reference_ohm: float = REFERENCE_IMPEDANCE_OHM) -> MatchSection:
    """The lossless L-network bringing ``load_ohm`` to ``reference_ohm`` (the solution with the
    smaller normalised reactances, module docstring)."""
    load = complex(load_ohm)
    solutions = l_network_solutions(load, reference_ohm)
    x, b, shunt_at_load = min(solutions, key=lambda s: abs(s[0]) / reference_ohm + abs(s[1]) * reference_ohm)
    z_in = _l_input(load, x, b, shunt_at_load)
    return _section(
        "l-network",
        frequency_hz,
        load,
        z_in,
        reference_ohm,
        series_reactance_ohm=x,
        shunt_susceptance_s=b,
        shunt_at_load=shunt_at_load,
    )


def _line_efficiency(cable_z0: float, load: complex, gamma_l: complex) -> float:
    """Power into the load / power into the line (ABCD matrix of the line, Pozar), load current 1 A."""
    a, b = cmath.cosh(gamma_l), cable_z0 * cmath.sinh(gamma_l)
    c, d = cmath.sinh(gamma_l) / cable_z0, cmath.cosh(gamma_l)
    v_l, i_l = load, 1.0
    v_in, i_in = a * v_l + b * i_l, c * v_l + d * i_l
    p_in = (v_in * i_in.conjugate()).real
    return float((v_l * i_l.conjugate()).real / p_in) if p_in > 0 else float("nan")


def _line_section(
    cable: Cable, load: complex, length_m: float, frequency_hz: float, reference_ohm: float, ideal: float | None
) -> MatchSection:
    alpha_db_per_m = float(cable.loss_db_per_100m(frequency_hz)) / 100.0
    loss_db = alpha_db_per_m * length_m
    z_in = complex(line_input_impedance(cable.impedance_ohm, load, length_m, frequency_hz, cable.velocity_factor, loss_db))
    gamma_l = line_gamma_length(length_m, frequency_hz, cable.velocity_factor, loss_db)
    return _section(
        "quarter-wave",
        frequency_hz,
        load,
        z_in,
        reference_ohm,
        cable=cable,
        length_m=length_m,
        ideal_impedance_ohm=ideal,
        efficiency=_line_efficiency(cable.impedance_ohm, load, gamma_l),
    )


def transformer_cables(cables: Sequence[Cable] | None = None, reference_ohm: float = REFERENCE_IMPEDANCE_OHM) -> list[Cable]:
    """Cables a quarter-wave transformer can be made of: each cable of ``cables`` (default the
    catalog) and two of it in parallel (half the impedance, the same velocity factor and dB per
    metre: common practice, no published source), leaving out those of the reference impedance (a
    quarter wave of it only turns the reflection coefficient's phase; |Gamma| stays)."""
    pool = list(cables) if cables else list(CABLES.values())
    pairs = [
        replace(
            c,
            name=f"2 x {c.name} in parallel",
            impedance_ohm=c.impedance_ohm / 2.0,
            note=f"two {c.name} side by side, joined at both ends",
        )
        for c in pool
    ]
    return [c for c in pool + pairs if abs(c.impedance_ohm - reference_ohm) > 1e-9 * reference_ohm]


def quarter_wave_section(
    load_ohm: complex, frequency_hz: float, cables: Sequence[Cable] | None = None, reference_ohm: float = REFERENCE_IMPEDANCE_OHM
) -> MatchSection:
    """A quarter-wave transformer from the cable (of :func:`transformer_cables`) whose impedance is
    nearest the ideal ``quarter_wave_impedance_ohm``, the lower-loss one on a tie; residual VSWR exact."""
    load = complex(load_ohm)
    ideal = quarter_wave_impedance_ohm(load, reference_ohm)
    pool = transformer_cables(cables, reference_ohm)
    if not pool:
        raise UserError(
            f"match = quarter-wave: no cable other than {reference_ohm:g} ohm to make it of; allowed: l-network or none"
        )
    cable = min(pool, key=lambda c: (abs(c.impedance_ohm - ideal), float(c.loss_db_per_100m(frequency_hz))))
    length = wavelength_in_line_m(frequency_hz, cable.velocity_factor) / 4.0
    return _line_section(cable, load, length, frequency_hz, reference_ohm, ideal)


def design_match(
    load_ohm: complex, frequency_hz: float, kind: str = "auto", reference_ohm: float = REFERENCE_IMPEDANCE_OHM
) -> MatchSection:
    """The matching section ``kind`` (one of :data:`MATCHES`) on ``load_ohm``."""
    if kind not in MATCHES:
        raise UserError(f"match: {kind!r} is not known; allowed: {', '.join(MATCHES)}")
    load = complex(load_ohm)
    if kind == "none":
        return _section("none", frequency_hz, load, load, reference_ohm)
    if kind == "l-network":
        return l_network(load, frequency_hz, reference_ohm)
    quarter = quarter_wave_section(load, frequency_hz, reference_ohm=reference_ohm)
    if kind == "quarter-wave" or quarter.vswr <= AUTO_QUARTER_WAVE_VSWR:
        return quarter
    return l_network(load, frequency_hz, reference_ohm)


def _perturbed_match(
    match: MatchSection, cut_error_m: float = 0.0, component_error: float = 0.0, load_ohm: complex | None = None
) -> MatchSection:
    """The same section built with a cut error (quarter-wave) or a relative component error
    (L-network, both parts), on ``load_ohm`` (default: its design load)."""
    load = match.load_impedance_ohm if load_ohm is None else complex(load_ohm)
    if match.kind == "quarter-wave":
        cable, length_m = match._line_parts()
        length = length_m + cut_error_m
        if length <= 0:
            raise UserError(f"cut error {cut_error_m * 1e3:g} mm leaves no matching section (it is {length_m * 1e3:.1f} mm)")
        return _line_section(cable, load, length, match.frequency_hz, match.reference_ohm, match.ideal_impedance_ohm)
    if match.kind == "l-network":
        # l_network, the only maker of L-network sections, sets both parts
        assert match.series_reactance_ohm is not None and match.shunt_susceptance_s is not None
        x = match.series_reactance_ohm * (1.0 + component_error)
        b = match.shunt_susceptance_s * (1.0 + component_error)
        z_in = _l_input(load, x, b, bool(match.shunt_at_load))
        return replace(
            match,
            load_impedance_ohm=load,
            input_impedance_ohm=z_in,
            **_vswr_fields(z_in, match.reference_ohm),
            series_reactance_ohm=x,
            shunt_susceptance_s=b,
        )
    return replace(match, load_impedance_ohm=load, input_impedance_ohm=load, **_vswr_fields(load, match.reference_ohm))


class _VswrFields(TypedDict):
    """The MatchSection fields that follow from the input impedance."""

    vswr: float
    mismatch_loss_db: float


def _vswr_fields(z_in: complex, reference_ohm: float) -> _VswrFields:
    vswr = float(vswr_from_impedance(z_in, reference_ohm)) if z_in.real > 0 else float("inf")
    return {"vswr": vswr, "mismatch_loss_db": float(mismatch_loss_db(vswr))}


# --------------------------------------------------------------------------------------------
# Phasing line
# --------------------------------------------------------------------------------------------


def port_fields(solution: mom.Solution, azimuth_deg: float = 0.0, elevation_deg: float = 90.0) -> np.ndarray:
    """(n_ports, 2) array: (E_theta, E_phi) in V of 1 V on each port in turn (the others shorted);
    the fed antenna's field in that direction is ``voltages @ port_fields``."""
    rows = []
    for k in range(len(solution.port_names)):
        unit = np.zeros(len(solution.port_names), dtype=complex)
        unit[k] = 1.0
        e_theta, e_phi = solution.far_field(azimuth_deg, elevation_deg, unit)
        rows.append([complex(np.ravel(e_theta)[0]), complex(np.ravel(e_phi)[0])])
    return np.array(rows, dtype=complex)


def _line_terms(length_m, z0: float, velocity_factor: float, alpha_db_per_m: float, frequency_hz: float):
    length = np.asarray(length_m, dtype=float)
    gamma_l = line_gamma_length(length, frequency_hz, velocity_factor, alpha_db_per_m * length)
    return np.cosh(gamma_l), z0 * np.sinh(gamma_l)


def _fed_state(z: np.ndarray, a_line, b_line):
    """Port currents and voltages (arrays over candidate lines) with 1 V at the feed point:
    Z_aa I_a + Z_ab I_b = 1, A (Z_ba I_a + Z_bb I_b) + B I_b = 1 (Cramer's rule)."""
    m11 = a_line * z[1, 1] + b_line
    det = z[0, 0] * m11 - z[0, 1] * a_line * z[1, 0]
    i_a = (m11 - z[0, 1]) / det
    i_b = (z[0, 0] - a_line * z[1, 0]) / det
    v_a = z[0, 0] * i_a + z[0, 1] * i_b
    v_b = z[1, 0] * i_a + z[1, 1] * i_b
    return i_a, i_b, v_a, v_b


def _circular(fields: np.ndarray, v_a, v_b, sense: str):
    e_theta = v_a * fields[0, 0] + v_b * fields[1, 0]
    e_phi = v_a * fields[0, 1] + v_b * fields[1, 1]
    e_r = (e_theta + 1j * e_phi) / math.sqrt(2.0)
    e_l = (e_theta - 1j * e_phi) / math.sqrt(2.0)
    return (e_r, e_l) if sense == "rhcp" else (e_l, e_r)


def _cross_ratio(z, fields, cable: Cable, frequency_hz: float, sense: str):
    alpha = float(cable.loss_db_per_100m(frequency_hz)) / 100.0

    def ratio(length_m):
        a_line, b_line = _line_terms(length_m, cable.impedance_ohm, cable.velocity_factor, alpha, frequency_hz)
        _, _, v_a, v_b = _fed_state(z, a_line, b_line)
        co, cross = _circular(fields, v_a, v_b, sense)
        return np.abs(cross) / np.maximum(np.abs(co), 1e-300)

    return ratio


@dataclass(frozen=True)
class PhasingDesign:
    """The phasing line found: cable, physical length and electrical angle, zenith axial ratio."""

    cable: Cable
    length_m: float
    electrical_deg: float
    loss_db_per_m: float
    axial_ratio_db: float
    feed: FeedResult
    ranking: tuple[tuple[str, float, float], ...] = field(default=())  # (cable, best AR dB, length m)

    def describe(self) -> str:
        c = self.cable
        return (
            f"{c.name} ({c.impedance_ohm:g} ohm, velocity factor {c.velocity_factor:g}, {self.loss_db_per_m:.3f} dB/m), "
            f"{self.electrical_deg:.1f} deg electrical, cut {self.length_m * 100:.2f} cm; element a at the feed point, "
            "b through the line"
        )


def design_phasing_line(
    port_impedance_matrix,
    fields: np.ndarray,
    frequency_hz: float,
    cables: Sequence[Cable] | None = None,
    *,
    sense: str = "rhcp",
) -> PhasingDesign:
    """The phasing line (module docstring) giving the best zenith axial ratio of ``sense``.

    ``fields``: :func:`port_fields` at the zenith. ``cables``: candidates (default every catalog cable).
    """
    z = np.asarray(port_impedance_matrix, dtype=complex)
    if z.shape != (2, 2):
        raise UserError("feed = harness: needs a two-port model (turnstile or crossed-loops)")
    pool = list(cables) if cables else list(CABLES.values())
    angles = np.arange(2.0, 362.0 + 1e-9, 0.5)
    results = []
    for cable in pool:
        wavelength = wavelength_in_line_m(frequency_hz, cable.velocity_factor)
        ratio = _cross_ratio(z, fields, cable, frequency_hz, sense)
        q = ratio(angles / 360.0 * wavelength)
        k = int(np.argmin(q))
        lo, hi = angles[max(k - 1, 0)], angles[min(k + 1, len(angles) - 1)]
        best = minimize_scalar(
            lambda deg: float(ratio(deg / 360.0 * wavelength)),  # noqa: B023 (called at once, in this iteration)
            bounds=(lo, hi),
            method="bounded",
            options={"xatol": 1e-5},
        )
        deg = float(best.x) if best.fun <= q[k] else float(angles[k])
        q_best = float(min(best.fun, q[k]))
        ar = _ratio_to_ar_db(q_best)
        length = deg / 360.0 * wavelength
        loss = float(cable.loss_db_per_100m(frequency_hz)) / 100.0 * length
        results.append((ar, loss, cable, length, deg))
    best_ar = min(r[0] for r in results)
    ar, _, cable, length, deg = min((r for r in results if r[0] <= best_ar + _TIE_DB), key=lambda r: r[1])
    alpha = float(cable.loss_db_per_100m(frequency_hz)) / 100.0
    feed = phasing_line(
        z,
        line_length_m=length,
        line_z0_ohm=cable.impedance_ohm,
        velocity_factor=cable.velocity_factor,
        loss_db_per_m=alpha,
        frequency_hz=frequency_hz,
    )
    ranking = tuple(sorted(((r[2].name, r[0], r[3]) for r in results), key=lambda t: t[1]))
    return PhasingDesign(cable, length, deg, alpha, ar, feed, ranking)


def _ratio_to_ar_db(q: float) -> float:
    """Axial ratio (dB) from the cross-polar ratio |E_cross| / |E_co| (Stutzman)."""
    return float(axial_ratio_db_from_circular(1.0, q))


# --------------------------------------------------------------------------------------------
# The whole harness, and what a cut error does
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class HarnessState:
    """A built harness (possibly with cut errors): zenith polarization and what the 50 ohm line sees."""

    axial_ratio_db: float
    co_polar_gain_dbic: float  # partial gain of the design sense at the zenith, network loss included
    vswr: float
    mismatch_loss_db: float
    feed_impedance_ohm: complex
    network_efficiency: float
    phasing: FeedResult
    match: MatchSection


def harness_state(
    z,
    fields,
    frequency_hz: float,
    cable: Cable,
    phasing_length_m: float,
    match: MatchSection,
    *,
    sense: str = "rhcp",
    match_cut_error_m: float = 0.0,
    match_component_error: float = 0.0,
) -> HarnessState:
    """Solve the harness as built: phasing line of ``phasing_length_m`` of ``cable``, then ``match``
    (rebuilt on the new load, with its own cut or component error)."""
    z = np.asarray(z, dtype=complex)
    alpha = float(cable.loss_db_per_100m(frequency_hz)) / 100.0
    phasing = phasing_line(
        z,
        line_length_m=phasing_length_m,
        line_z0_ohm=cable.impedance_ohm,
        velocity_factor=cable.velocity_factor,
        loss_db_per_m=alpha,
        frequency_hz=frequency_hz,
    )
    built = _perturbed_match(match, match_cut_error_m, match_component_error, load_ohm=phasing.feed_impedance_ohm)
    v = np.asarray(phasing.port_voltages, dtype=complex)
    i = np.asarray(phasing.port_currents, dtype=complex)
    co, cross = _circular(np.asarray(fields), v[0], v[1], sense)
    port_power_w = 0.5 * float(np.real(np.sum(v * np.conj(i))))
    efficiency = float(phasing.network_efficiency) * float(built.efficiency)
    # Partial gain 4 pi U_co / P_feed, U = |E|^2 / (2 eta0), P_feed = port power / network efficiency
    gain = 4.0 * math.pi * abs(co) ** 2 / (2.0 * mom.ETA0_OHM) / (port_power_w / efficiency)
    ar = float(axial_ratio_db_from_circular(abs(co), abs(cross)))
    return HarnessState(
        ar, 10.0 * math.log10(gain), built.vswr, built.mismatch_loss_db, built.input_impedance_ohm, efficiency, phasing, built
    )


@dataclass(frozen=True)
class HarnessDesign:
    """A designed harness: the phasing line, the matching section and the combined feed."""

    frequency_hz: float
    sense: str
    port_impedance_matrix: np.ndarray
    fields: np.ndarray
    phasing: PhasingDesign
    match: MatchSection
    feed: FeedResult
    state: HarnessState

    def header(self) -> dict[str, str]:
        """Header lines for a pattern table (cut lengths in cm for the builder)."""
        z_after = complex(self.phasing.feed.feed_impedance_ohm)
        out = {
            "phasing_line": self.phasing.describe(),
            "phasing_line_cable": self.phasing.cable.name,
            "phasing_line_velocity_factor": f"{self.phasing.cable.velocity_factor:g}",
            "phasing_line_cut_cm": f"{self.phasing.length_m * 100:.2f}",
            "impedance_after_phasing_ohm": f"{z_after.real:.3f}{z_after.imag:+.3f}j",
            "zenith_axial_ratio_db": f"{self.state.axial_ratio_db:.3f}",
            "matching_section": self.match.describe(),
        }
        if self.match.kind == "quarter-wave":
            cable, length_m = self.match._line_parts()
            out["matching_section_cable"] = cable.name
            out["matching_section_velocity_factor"] = f"{cable.velocity_factor:g}"
            out["matching_section_cut_cm"] = f"{length_m * 100:.2f}"
        elif self.match.kind == "l-network":
            out["matching_components"] = self.match.components()
        out["cut_lengths"] = "physical = electrical length x velocity factor, cable ends to the connection points"
        return out


def design_harness(
    solution: mom.Solution, *, phasing_cable: str | None = None, match: str = "auto", sense: str = "rhcp"
) -> HarnessDesign:
    """Phasing line for the best zenith axial ratio, then the matching section, on a solved
    two-port model. ``phasing_cable``: a catalog cable name, or None / ``"auto"`` for the best one."""
    z = solution.port_impedance_matrix()
    if z.shape != (2, 2):
        raise UserError("feed = harness: needs a two-port model (turnstile or crossed-loops)")
    frequency_hz = float(solution.frequency_hz)
    fields = port_fields(solution)
    cables = None if phasing_cable in (None, "auto") else [get_cable(phasing_cable)]
    phasing = design_phasing_line(z, fields, frequency_hz, cables, sense=sense)
    section = design_match(phasing.feed.feed_impedance_ohm, frequency_hz, match)
    state = harness_state(z, fields, frequency_hz, phasing.cable, phasing.length_m, section, sense=sense)
    base = phasing.feed
    feed = replace(
        base,
        feed_impedance_ohm=section.input_impedance_ohm,
        vswr_50=section.vswr,
        mismatch_loss_db=section.mismatch_loss_db,
        network_efficiency=state.network_efficiency,
        input_power_w=base.port_power_w / state.network_efficiency,
        description=(
            f"designed harness: phasing line {phasing.describe()}; matching section {section.describe()}; "
            f"currents as the line gives them (not ideal quadrature)"
        ),
    )
    return HarnessDesign(frequency_hz, sense, z, fields, phasing, section, feed, state)


def cut_sensitivity(
    design: HarnessDesign, errors_m: Sequence[float] = (-0.005, 0.0, 0.005), component_errors: Sequence[float] = (-0.05, 0.0, 0.05)
) -> list[dict[str, Any]]:
    """How the zenith axial ratio, the feed VSWR and the margin for a wave of the design sense
    overhead move when the phasing line or the matching section is cut ``errors_m`` long (+) or
    short (-); for an L-network the components are off by ``component_errors`` (relative) instead.

    Margin change = change of the co-polar partial gain at the zenith (network loss included) minus
    the change of the mismatch loss. Rows: ``part``, ``error``, ``error_unit``, ``axial_ratio_db``,
    ``vswr``, ``gain_change_db``, ``mismatch_change_db``, ``margin_change_db``.
    """
    nominal = design.state
    rows: list[dict[str, Any]] = []

    def row(part: str, error: float, unit: str, state: HarnessState) -> None:
        gain_change = state.co_polar_gain_dbic - nominal.co_polar_gain_dbic
        mismatch_change = state.mismatch_loss_db - nominal.mismatch_loss_db
        rows.append(
            {
                "part": part,
                "error": error,
                "error_unit": unit,
                "axial_ratio_db": state.axial_ratio_db,
                "vswr": state.vswr,
                "gain_change_db": gain_change,
                "mismatch_change_db": mismatch_change,
                "margin_change_db": gain_change - mismatch_change,
            }
        )

    args = (design.port_impedance_matrix, design.fields, design.frequency_hz, design.phasing.cable)
    for e in errors_m:
        length = design.phasing.length_m + e
        if length <= 0:
            raise UserError(f"cut error {e * 1e3:g} mm leaves no phasing line (it is {design.phasing.length_m * 1e3:.1f} mm)")
        row("phasing line", e * 1e3, "mm", harness_state(*args, length, design.match, sense=design.sense))
    if design.match.kind == "quarter-wave":
        for e in errors_m:
            row(
                "matching section",
                e * 1e3,
                "mm",
                harness_state(*args, design.phasing.length_m, design.match, sense=design.sense, match_cut_error_m=e),
            )
    elif design.match.kind == "l-network":
        for e in component_errors:
            row(
                "L-network parts",
                e * 100.0,
                "%",
                harness_state(*args, design.phasing.length_m, design.match, sense=design.sense, match_component_error=e),
            )
    return rows

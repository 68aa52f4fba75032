"""Parametric wire templates for the thin-wire solver: dipole, turnstile, crossed loops.

Every template is generic (a textbook shape with its dimensions as parameters) and returns a
:class:`planner.antenna.synth.geometry.WireModel`: one port ``"feed"`` for a single element, two ports
``"a"`` and ``"b"`` for a pair of elements. Dimensions are given in wavelengths at
``frequency_hz`` (lambda = c / f) except wire radii, which are in metres.

Frame, ports and sense
----------------------
x east, y north, z up (as :mod:`planner.antenna`). Element ``a`` lies along or in a plane
through east; element ``b`` is element ``a`` turned +90 deg about the up axis (east -> north),
its port oriented the same way: a positive port current flows +x at a's gap and +y at b's gap.
Fed with ``I_b = -j I_a`` (b lagging 90 deg: :func:`planner.antenna.synth.feed.ideal_quadrature`) the
zenith field is ~ x - j y, RHCP going up (IEEE Std 145, e^{jwt}).

Crossing without touching
-------------------------
The two elements of a pair cross on the vertical axis (the dipoles at their centres, the loops at
their bottoms and tops). Two separately fed elements must not share a node there (the
segmenter joins nodes closer than 1e-6 m, which would short the two feeds together), so element
``a`` is lowered and element ``b`` raised by half of the crossing gap (parameter
``crossing_gap_m``, default ``max(4 radius, lambda / 1000)``): they cross that far apart, as two
wires passing over each other do, and the requested height (``spacing_wavelengths``) is the mean
height of the two feed gaps. Nothing is joined at the crossing. The wires cross at right angles
where the current is largest and the charge smallest (the feed gaps, and the tops of one-
wavelength loops), so their coupling there is weak and the reduced kernel is adequate. The gap
has a visible cost: toward the zenith b is nearer by the gap, so its field leads by k * gap
(2.1 deg for 4 mm at 436 MHz), which an ideal quadrature feed does not undo (about 0.3 dB of
axial ratio).

Reflectors (``reflector``)
--------------------------
* ``None``: free space; the feed is still placed ``spacing_wavelengths`` above z = 0.
* ``"pec"``: an infinite perfect conductor in the plane z = 0 (solved by images): the feed is
  ``spacing_wavelengths`` above it. No field below the horizon.
* ``"rods"``: four straight rods in the plane z = 0, each ``reflector_size_wavelengths`` long,
  crossing on the vertical axis at azimuths 0, 45, 90, 135 deg and joined there (eight spokes
  from a hub), the usual "crossed-rod" screen (common practice, no published source).
* ``"grid"``: a square mesh ``reflector_size_wavelengths`` on a side in the plane z = 0, rods
  along east and north every ``grid_pitch_wavelengths``, joined at every crossing.
Wire reflectors are finite, so they leak: the pattern below the horizon is the computed field.

Ground below the mast (``ground``, ``mast_height_m``)
---------------------------------------------------
Any template can stand on a mast over flat real ground: ``ground`` is a class of
:data:`planner.antenna.synth.ground.GROUND_CLASSES` (ITU-R P.527 / P.2040 constants) or ``"custom"`` with
``ground_permittivity`` and ``ground_conductivity_s_per_m``; ``mast_height_m`` is the height from
the ground to the model's z = 0 plane (the reflector plane; for a dipole without
``height_wavelengths``, its centre). The model is still solved in free space; the table adds the
ground-reflected ray (see :mod:`planner.antenna.synth.ground`). Refused: a ground under ``reflector =
"pec"`` or a dipole's ``height_wavelengths`` (an infinite plate hides it), a mast height without
a ground, and a mast so low that a wire touches the ground.

Superellipse loops
------------------
A crossed-loop element is a closed loop in a vertical plane, the superellipse
``|u/a|^n + |w/b|^n = 1`` (u horizontal in the loop's plane, w vertical; n = 2 an ellipse, n = 1
a diamond, large n a rectangle with rounded corners; ``width_to_height = a / b``). The loop is a
polygon of ``segments`` vertices placed at equal arc length along the curve, symmetric about the
vertical axis, with a vertex at the bottom (the feed gap) and one at the top. The polygon is then
scaled so that its perimeter (the length of the wire the solver sees) is exactly
``circumference_wavelengths * lambda``; the smooth curve of the same scale is longer by the
polygon's chord deficit (``superellipse_perimeter`` gives it; about 0.07 % at 48 vertices).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from typing import Any, NamedTuple

import numpy as np

from planner.antenna.synth.geometry import MATERIALS, Port, Wire, WireModel
from planner.antenna.synth.ground import GROUND_CHOICES, NOTE_KEY, check_clearance, ground_note, make_ground
from planner.choices import canonical_choice
from planner.constants import SPEED_OF_LIGHT_M_S
from planner.errors import UserError

__all__ = [
    "Parameter",
    "TEMPLATES",
    "REFLECTORS",
    "dipole",
    "turnstile",
    "crossed_loops",
    "superellipse_polygon",
    "superellipse_perimeter",
    "default_crossing_gap_m",
    "check_parameters",
    "build_model",
]

REFLECTORS = ("none", "pec", "rods", "grid")
"""Reflector kinds (``None`` and ``"none"`` are the same: free space)."""


class Parameter(NamedTuple):
    """One template parameter: ``(type, default, allowed, help)``.

    ``allowed`` is ``(low, high)`` (inclusive) for numbers, or a tuple of choices for text.
    ``default`` None means "not set" (the help says what that means).
    """

    type: type
    default: Any
    allowed: tuple
    help: str


def wavelength_m(frequency_hz: float) -> float:
    return SPEED_OF_LIGHT_M_S / frequency_hz


# --------------------------------------------------------------------------------------------
# Parameter validation
# --------------------------------------------------------------------------------------------


def _fmt(value: float) -> str:
    return f"{value:g}"


def _coerce(template: str, name: str, spec: Parameter, value: Any) -> Any:
    """Turn a number or its text into the parameter's type and check the allowed range."""
    lead = f"template {template!r}: {name}"
    if value is None or (isinstance(value, str) and value.strip().lower() in ("", "none")):
        if spec.default is None:
            return None
        if spec.type is str and "none" in spec.allowed:
            return None
        raise UserError(f"{lead} needs a value; allowed: {_allowed_text(spec)}")
    if spec.type is str:
        text = canonical_choice(str(value).lower())  # medium_dry_ground reads as medium-dry-ground
        if text not in spec.allowed:
            raise UserError(f"{lead} = {value!r} is not allowed; allowed: {_allowed_text(spec)}")
        return None if text == "none" else text
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise UserError(f"{lead} = {value!r} is not a number; allowed: {_allowed_text(spec)}") from None
    if not math.isfinite(number):
        raise UserError(f"{lead} = {value!r} must be finite; allowed: {_allowed_text(spec)}")
    if spec.type is int:
        if not number.is_integer():
            raise UserError(f"{lead} = {value!r} must be a whole number; allowed: {_allowed_text(spec)}")
        number = int(number)
    low, high = spec.allowed
    if not low <= number <= high:
        raise UserError(f"{lead} = {_fmt(number)} is outside the allowed range {_allowed_text(spec)}")
    return number


def _allowed_text(spec: Parameter) -> str:
    if spec.type is str:
        return ", ".join(spec.allowed)
    low, high = spec.allowed
    unit = spec.help.split(";")[0].strip() if ";" in spec.help else ""
    kind = "whole numbers " if spec.type is int else ""
    return f"{kind}{_fmt(low)}..{_fmt(high)}" + (f" {unit}" if unit else "")


def describe_parameter(name: str, spec: Parameter) -> str:
    """One line of ``pattern build TEMPLATE --list``: the parameter as typed, its choices or range
    in words, its default and its meaning. A frequency is shown in MHz, as ``frequency_mhz=`` and
    ``--frequency-mhz`` take it."""
    unit, sep, meaning = spec.help.partition(";")
    if not sep or len(unit.split()) > 2 or "(" in unit:  # a unit is a word or two before the ";"
        unit, meaning = "", spec.help
    unit, meaning, scale = unit.strip(), meaning.strip(), 1.0
    if name == "frequency_hz":
        name, unit, scale = "frequency_mhz", "MHz", 1e-6
    suffix = f" {unit}" if unit else ""
    if spec.type is str:
        allowed = "one of: " + ", ".join(spec.allowed)
        default = "none" if spec.default is None else str(spec.default)
    else:
        low, high = (value * scale for value in spec.allowed)
        kind = "a whole number " if spec.type is int else ""
        allowed = f"{kind}from {_fmt(low)} to {_fmt(high)}{suffix}"
        default = "not set (see below)" if spec.default is None else f"{_fmt(spec.default * scale)}{suffix}"
    return f"{name}: {allowed}; default {default}. {meaning}"


def check_parameters(template: str, values: Mapping[str, Any]) -> dict[str, Any]:
    """Validate ``values`` (numbers, or text from the command line) against a template's registry
    entry; returns every parameter of the template with defaults filled in. Problems raise a
    one-line UserError naming the template, the parameter and what is allowed."""
    if template not in TEMPLATES:
        raise UserError(f"template {template!r} is unknown; allowed: {', '.join(TEMPLATES)}")
    _, specs = TEMPLATES[template]
    unknown = [k for k in values if k not in specs]
    if unknown:
        raise UserError(f"template {template!r}: unknown parameter {unknown[0]!r}; allowed: {', '.join(specs)}")
    out: dict[str, Any] = {}
    for name, spec in specs.items():
        out[name] = _coerce(template, name, spec, values[name]) if name in values else spec.default
    even = specs.get("segments")
    if even is not None and out.get("segments") is not None and out["segments"] % 2:
        raise UserError(
            f"template {template!r}: segments = {out['segments']} must be even (a vertex at the bottom gap and one "
            f"at the top); allowed: even whole numbers {_fmt(even.allowed[0])}..{_fmt(even.allowed[1])}"
        )
    return out


def build_model(template: str, **values: Any) -> WireModel:
    """Validate the parameters and build the template's wire model."""
    params = check_parameters(template, values)  # refuses an unknown template with a UserError
    function, _ = TEMPLATES[template]
    return function(**params)


def _validated(template: str, given: Mapping[str, Any]) -> dict[str, Any]:
    return check_parameters(template, {k: v for k, v in given.items()})


# --------------------------------------------------------------------------------------------
# Shapes
# --------------------------------------------------------------------------------------------


def _superellipse_dense(width_to_height: float, exponent: float, samples: int) -> np.ndarray:
    """Right half of the unit-height curve (b = 1, a = width_to_height) from the bottom (0, -1) to
    the top (0, 1), densely, by the polar angle: r(t) = (|cos t / a|^n + |sin t / b|^n)^(-1/n)."""
    a, b, n = float(width_to_height), 1.0, float(exponent)
    t = np.linspace(-0.5 * math.pi, 0.5 * math.pi, samples)
    c, s = np.abs(np.cos(t)), np.abs(np.sin(t))
    r = (np.power(c / a, n) + np.power(s / b, n)) ** (-1.0 / n)
    pts = np.stack([r * np.cos(t), r * np.sin(t)], axis=1)
    pts[0] = (0.0, -b)
    pts[-1] = (0.0, b)
    pts[:, 0] = np.maximum(pts[:, 0], 0.0)
    return pts


def superellipse_perimeter(semi_width_m: float, semi_height_m: float, exponent: float, *, samples: int = 400_001) -> float:
    """Perimeter of the smooth superellipse |u/a|^n + |w/b|^n = 1 (m), by a dense chord sum.

    The polar-angle sampling keeps chords short where the curve turns fast (the corners of a
    large-n shape); with the default sampling the relative error is below 1e-9 for n = 2.
    """
    half = _superellipse_dense(semi_width_m / semi_height_m, exponent, samples) * semi_height_m
    return float(2.0 * np.sum(np.linalg.norm(np.diff(half, axis=0), axis=1)))


def superellipse_polygon(
    circumference_m: float, width_to_height: float = 1.0, exponent: float = 2.0, vertices: int = 48
) -> np.ndarray:
    """Vertices (vertices, 2) of the loop polygon in its own plane, (u, w) with w = 0 at the bottom.

    Order: from the bottom vertex toward +u, up that side, the top vertex at index vertices/2,
    down the -u side (the polyline is open: the bottom is not repeated). Equal arc length between
    vertices along the smooth curve, mirror-symmetric about u = 0; the polygon's perimeter is
    exactly ``circumference_m`` (see the module docstring).
    """
    if vertices % 2 or vertices < 4:
        raise ValueError("vertices must be even and >= 4")
    half = _superellipse_dense(width_to_height, exponent, 200_001)
    arc = np.concatenate([[0.0], np.cumsum(np.linalg.norm(np.diff(half, axis=0), axis=1))])
    m = vertices // 2
    target = np.linspace(0.0, arc[-1], m + 1)
    u = np.interp(target, arc, half[:, 0])
    w = np.interp(target, arc, half[:, 1])
    u[0] = u[-1] = 0.0
    w[0], w[-1] = -1.0, 1.0
    right = np.stack([u, w], axis=1)  # bottom .. top (m + 1 points)
    left = right[-2:0:-1] * np.array([-1.0, 1.0])  # top side back down, without top and bottom
    poly = np.concatenate([right, left])
    closed = np.concatenate([poly, poly[:1]])
    perimeter = float(np.sum(np.linalg.norm(np.diff(closed, axis=0), axis=1)))
    poly = poly * (circumference_m / perimeter)
    poly[:, 1] -= poly[0, 1]  # bottom at w = 0
    return poly


def default_crossing_gap_m(radius_m: float, frequency_hz: float) -> float:
    """Default vertical distance between the two elements where they cross: max(4 radii, lambda / 1000)."""
    return max(4.0 * radius_m, wavelength_m(frequency_hz) / 1000.0)


# --------------------------------------------------------------------------------------------
# Reflector wires
# --------------------------------------------------------------------------------------------


def _reflector_wires(
    kind: str | None, size_wavelengths: float, pitch_wavelengths: float, radius_m: float, material: str, lam: float
) -> list[Wire]:
    if kind in (None, "pec"):
        return []
    half = 0.5 * size_wavelengths * lam
    if kind == "rods":
        wires = []
        for k, az_deg in enumerate((0.0, 45.0, 90.0, 135.0)):
            # azimuth from north toward east: direction (sin az, cos az, 0)
            d = np.array([math.sin(math.radians(az_deg)), math.cos(math.radians(az_deg)), 0.0])
            wires.append(Wire(np.stack([-half * d, np.zeros(3), half * d]), radius_m, material, name=f"reflector-rod-{k}"))
        return wires
    if kind == "grid":
        cells = max(1, round(size_wavelengths / pitch_wavelengths))
        ticks = np.linspace(-half, half, cells + 1)
        wires = []
        for k, y in enumerate(ticks):  # rods along east, one vertex at every crossing
            pts = np.stack([ticks, np.full_like(ticks, y), np.zeros_like(ticks)], axis=1)
            wires.append(Wire(pts, radius_m, material, name=f"reflector-east-{k}"))
        for k, x in enumerate(ticks):  # rods along north
            pts = np.stack([np.full_like(ticks, x), ticks, np.zeros_like(ticks)], axis=1)
            wires.append(Wire(pts, radius_m, material, name=f"reflector-north-{k}"))
        return wires
    raise UserError(f"reflector {kind!r} is unknown; allowed: {', '.join(REFLECTORS)}")


def _ground(kind: str | None) -> str:
    return "pec" if kind == "pec" else "free-space"


def _reflector_note(kind: str | None, size: float, pitch: float) -> str:
    if kind is None:
        return "none (free space)"
    if kind == "pec":
        return "infinite perfectly conducting plane z = 0 (images)"
    if kind == "rods":
        return f"four crossed rods {size:g} wavelength long in the plane z = 0, joined at the centre"
    return f"square grid {size:g} wavelength on a side, pitch {pitch:g} wavelength, in the plane z = 0, joined at crossings"


# --------------------------------------------------------------------------------------------
# Templates
# --------------------------------------------------------------------------------------------

_FREQ = Parameter(float, 436e6, (1e6, 30e9), "Hz; design frequency (lambda = c / f)")
_RADIUS = Parameter(float, 1e-3, (1e-5, 0.05), "m; wire radius")
_MATERIAL = Parameter(str, "copper", tuple(MATERIALS), "conductor (skin-effect loss; pec = lossless)")
_SPW = Parameter(float, 40.0, (10.0, 200.0), "per wavelength; segments per wavelength for straight wires")
_REFLECTOR = Parameter(str, None, REFLECTORS, "none, pec (infinite plane), rods or grid (finite wire screens)")
_SPACING = Parameter(float, 0.25, (0.02, 3.0), "wavelengths; height of the feed point above the reflector plane z = 0")
_REFL_SIZE = Parameter(float, 1.0, (0.3, 3.0), "wavelengths; rod length or grid side of a wire reflector")
_PITCH = Parameter(float, 0.1, (0.03, 0.5), "wavelengths; grid pitch of the grid reflector")
_REFL_RADIUS = Parameter(float, None, (1e-5, 0.05), "m; radius of the reflector wires (default: the element radius)")
_GAP = Parameter(float, None, (1e-5, 0.1), "m; vertical gap where the two elements cross (default: max(4 radii, lambda/1000))")
_GROUND = Parameter(
    str, None, GROUND_CHOICES, "flat ground below the mast: none (free space), an ITU-R P.527 class, concrete, or custom"
)
_GROUND_EPS = Parameter(float, None, (1.0, 100.0), "relative permittivity of a custom ground")
_GROUND_SIGMA = Parameter(float, None, (0.0, 1e8), "S/m; conductivity of a custom ground")
_MAST = Parameter(
    float,
    None,
    (0.01, 100.0),
    "m; height from the ground to the model's z = 0 plane (reflector plane, or the element's reference plane)",
)
_GROUND_SPECS = {
    "ground": _GROUND,
    "ground_permittivity": _GROUND_EPS,
    "ground_conductivity_s_per_m": _GROUND_SIGMA,
    "mast_height_m": _MAST,
}


def _ground_notes(template: str, p: Mapping[str, Any], wires: list[Wire], infinite_plane: str | None) -> dict[str, str]:
    """The ground parameters as a ``WireModel.notes`` entry (empty for none), after the checks:
    no ground under an infinite plane (``infinite_plane`` names what asked for it), no wire at or
    below the ground."""
    try:
        ground = make_ground(
            p["ground"],
            p["frequency_hz"],
            p["mast_height_m"],
            permittivity=p["ground_permittivity"],
            conductivity_s_per_m=p["ground_conductivity_s_per_m"],
        )
        if ground is None:
            return {}
        if infinite_plane is not None:
            raise UserError(
                f"ground = {ground.name} cannot go with {infinite_plane}: the infinite plate hides the ground; "
                "allowed: no ground, or a finite (or no) reflector"
            )
        check_clearance(wires, ground.mast_height_m)
    except UserError as error:
        raise UserError(f"template {template!r}: {error}") from None
    return {NOTE_KEY: ground_note(ground)}


def dipole(
    frequency_hz: float = 436e6,
    length_wavelengths: float = 0.5,
    radius_m: float = 1e-3,
    height_wavelengths: float | None = None,
    material: str = "copper",
    segments_per_wavelength: float = 40.0,
    ground: str | None = None,
    ground_permittivity: float | None = None,
    ground_conductivity_s_per_m: float | None = None,
    mast_height_m: float | None = None,
) -> WireModel:
    """A straight centre-fed dipole along east, port ``"feed"`` at the centre (current +x).

    ``height_wavelengths`` None: free space (centre at the origin); a number: the centre that high
    above an infinite PEC ground plane z = 0. ``ground`` and ``mast_height_m``: a flat real ground
    that far below the centre (free-space dipole only; see ``planner.antenna.synth.ground``).
    """
    p = _validated("dipole", locals())
    lam = wavelength_m(p["frequency_hz"])
    half = 0.5 * p["length_wavelengths"] * lam
    z = 0.0 if p["height_wavelengths"] is None else p["height_wavelengths"] * lam
    points = np.array([[-half, 0.0, z], [0.0, 0.0, z], [half, 0.0, z]])
    wire = Wire(points, p["radius_m"], p["material"], name="dipole")
    plane = None if p["height_wavelengths"] is None else "height_wavelengths (an infinite PEC plane)"
    ground_notes = _ground_notes("dipole", p, [wire], plane)
    return WireModel(
        wires=[wire],
        ports=[Port("feed", points[1], +1)],
        frequency_hz=p["frequency_hz"],
        ground="free-space" if p["height_wavelengths"] is None else "pec",
        segments_per_wavelength=p["segments_per_wavelength"],
        name="dipole",
        notes={
            "geometry": (
                f"dipole along east, {p['length_wavelengths']:g} wavelength ({2 * half:.4f} m), radius {p['radius_m']:g} m "
                f"{p['material']}, "
                + (
                    "free space"
                    if p["height_wavelengths"] is None
                    else f"centre {p['height_wavelengths']:g} wavelength ({z:.4f} m) above an infinite PEC plane"
                )
            ),
            **ground_notes,
        },
    )


def _crossing_heights_m(p: dict, lam: float) -> tuple[float, float]:
    """Heights of elements a and b: ``spacing_wavelengths`` on average, ``crossing_gap_m`` apart."""
    height = p["spacing_wavelengths"] * lam
    gap = p["crossing_gap_m"] if p["crossing_gap_m"] is not None else default_crossing_gap_m(p["radius_m"], p["frequency_hz"])
    if gap < 2.5 * p["radius_m"]:
        raise UserError(
            f"crossing_gap_m = {gap:g} m: the elements would touch where they cross (radius {p['radius_m']:g} m); "
            f"allowed: at least 2.5 radii ({2.5 * p['radius_m']:g} m)"
        )
    return height - 0.5 * gap, height + 0.5 * gap


def turnstile(
    frequency_hz: float = 436e6,
    length_wavelengths: float = 0.5,
    radius_m: float = 1e-3,
    reflector: str | None = None,
    spacing_wavelengths: float = 0.25,
    reflector_size_wavelengths: float = 1.0,
    grid_pitch_wavelengths: float = 0.1,
    reflector_radius_m: float | None = None,
    crossing_gap_m: float | None = None,
    material: str = "copper",
    segments_per_wavelength: float = 40.0,
    ground: str | None = None,
    ground_permittivity: float | None = None,
    ground_conductivity_s_per_m: float | None = None,
    mast_height_m: float | None = None,
) -> WireModel:
    """Two crossed horizontal dipoles: ``"a"`` along east, ``"b"`` along north, centres on the
    vertical axis ``spacing_wavelengths`` above the reflector plane (mean of the two: they cross
    ``crossing_gap_m`` apart, see the module docstring)."""
    p = _validated("turnstile", locals())
    lam = wavelength_m(p["frequency_hz"])
    half = 0.5 * p["length_wavelengths"] * lam
    za, zb = _crossing_heights_m(p, lam)
    height, gap = 0.5 * (za + zb), zb - za
    pa = np.array([[-half, 0.0, za], [0.0, 0.0, za], [half, 0.0, za]])
    pb = np.array([[0.0, -half, zb], [0.0, 0.0, zb], [0.0, half, zb]])
    wires = [Wire(pa, p["radius_m"], p["material"], name="a"), Wire(pb, p["radius_m"], p["material"], name="b")]
    r_refl = p["reflector_radius_m"] if p["reflector_radius_m"] is not None else p["radius_m"]
    wires += _reflector_wires(
        p["reflector"], p["reflector_size_wavelengths"], p["grid_pitch_wavelengths"], r_refl, p["material"], lam
    )
    ground_notes = _ground_notes("turnstile", p, wires, "reflector = pec" if p["reflector"] == "pec" else None)
    return WireModel(
        wires=wires,
        ports=[Port("a", pa[1], +1, wire="a"), Port("b", pb[1], +1, wire="b")],
        frequency_hz=p["frequency_hz"],
        ground=_ground(p["reflector"]),
        segments_per_wavelength=p["segments_per_wavelength"],
        name="turnstile",
        notes={
            "geometry": (
                f"turnstile: dipoles a (east) and b (north), {p['length_wavelengths']:g} wavelength ({2 * half:.4f} m) each, "
                f"radius {p['radius_m']:g} m {p['material']}; centres {p['spacing_wavelengths']:g} wavelength ({height:.4f} m) "
                f"above the reflector plane, crossing {gap * 1e3:.1f} mm apart (a below, b above)"
            ),
            "reflector": _reflector_note(p["reflector"], p["reflector_size_wavelengths"], p["grid_pitch_wavelengths"]),
            **ground_notes,
        },
    )


def crossed_loops(
    frequency_hz: float = 436e6,
    circumference_wavelengths: float = 1.0,
    width_to_height: float = 1.0,
    exponent: float = 2.0,
    segments: int = 48,
    radius_m: float = 1e-3,
    material: str = "copper",
    reflector: str | None = None,
    spacing_wavelengths: float = 0.25,
    reflector_size_wavelengths: float = 1.0,
    grid_pitch_wavelengths: float = 0.1,
    reflector_radius_m: float | None = None,
    crossing_gap_m: float | None = None,
    segments_per_wavelength: float = 40.0,
    ground: str | None = None,
    ground_permittivity: float | None = None,
    ground_conductivity_s_per_m: float | None = None,
    mast_height_m: float | None = None,
) -> WireModel:
    """Two vertical superellipse loops in perpendicular planes, each fed at a gap at its bottom.

    Loop ``"a"`` lies in the east-up plane, loop ``"b"`` in the north-up plane (a turned +90 deg
    about the up axis). The bottom gaps are ``spacing_wavelengths`` above the reflector plane
    (mean of the two: a is lowered and b raised by half of ``crossing_gap_m``, so the loops cross
    at the bottom and at the top that far apart without touching). Each loop is a polygon of
    ``segments`` vertices (one segment per edge), perimeter exactly ``circumference_wavelengths``
    wavelengths. The port current is positive along +x (a) / +y (b) at the gap.
    """
    p = _validated("crossed-loops", locals())
    lam = wavelength_m(p["frequency_hz"])
    poly = superellipse_polygon(p["circumference_wavelengths"] * lam, p["width_to_height"], p["exponent"], p["segments"])
    m = p["segments"] // 2
    # Polyline from the top vertex down the -u side, through the bottom gap moving +u, up the +u
    # side and back to the top (repeated: a closed loop). The gap is an interior vertex.
    order = np.concatenate([np.arange(m, p["segments"]), np.arange(0, m + 1)])
    loop = poly[order]
    bottom_index = p["segments"] - m  # position of vertex 0 in ``order``
    za, zb = _crossing_heights_m(p, lam)
    height, gap = 0.5 * (za + zb), zb - za
    pts_a = np.stack([loop[:, 0], np.zeros(len(loop)), loop[:, 1] + za], axis=1)
    pts_b = np.stack([np.zeros(len(loop)), loop[:, 0], loop[:, 1] + zb], axis=1)
    wires = [
        Wire(pts_a, p["radius_m"], p["material"], name="a", segments_per_edge=1),
        Wire(pts_b, p["radius_m"], p["material"], name="b", segments_per_edge=1),
    ]
    r_refl = p["reflector_radius_m"] if p["reflector_radius_m"] is not None else p["radius_m"]
    wires += _reflector_wires(
        p["reflector"], p["reflector_size_wavelengths"], p["grid_pitch_wavelengths"], r_refl, p["material"], lam
    )
    ground_notes = _ground_notes("crossed-loops", p, wires, "reflector = pec" if p["reflector"] == "pec" else None)
    width = 2.0 * float(np.max(poly[:, 0]))
    tall = float(np.max(poly[:, 1]))
    return WireModel(
        wires=wires,
        ports=[Port("a", pts_a[bottom_index], +1, wire="a"), Port("b", pts_b[bottom_index], +1, wire="b")],
        frequency_hz=p["frequency_hz"],
        ground=_ground(p["reflector"]),
        segments_per_wavelength=p["segments_per_wavelength"],
        name="crossed-loops",
        notes={
            "geometry": (
                f"crossed loops: a (east-up plane) and b (north-up plane), superellipse exponent {p['exponent']:g}, "
                f"width/height {p['width_to_height']:g} ({width:.4f} m x {tall:.4f} m), perimeter "
                f"{p['circumference_wavelengths']:g} wavelength ({p['circumference_wavelengths'] * lam:.4f} m) as a "
                f"{p['segments']}-gon, radius {p['radius_m']:g} m {p['material']}; bottom gaps {p['spacing_wavelengths']:g} "
                f"wavelength ({height:.4f} m) above the reflector plane, loops crossing {gap * 1e3:.1f} mm apart (a below, b above)"
            ),
            "reflector": _reflector_note(p["reflector"], p["reflector_size_wavelengths"], p["grid_pitch_wavelengths"]),
            **ground_notes,
        },
    )


TEMPLATES: dict[str, tuple[Callable[..., WireModel], dict[str, Parameter]]] = {
    "dipole": (
        dipole,
        {
            "frequency_hz": _FREQ,
            "length_wavelengths": Parameter(float, 0.5, (0.05, 3.0), "wavelengths; tip-to-tip length"),
            "radius_m": _RADIUS,
            "height_wavelengths": Parameter(
                float, None, (0.02, 3.0), "wavelengths; centre height above an infinite PEC ground (default: free space)"
            ),
            "material": _MATERIAL,
            "segments_per_wavelength": _SPW,
            **_GROUND_SPECS,
        },
    ),
    "turnstile": (
        turnstile,
        {
            "frequency_hz": _FREQ,
            "length_wavelengths": Parameter(float, 0.5, (0.1, 1.5), "wavelengths; tip-to-tip length of each dipole"),
            "radius_m": _RADIUS,
            "reflector": _REFLECTOR,
            "spacing_wavelengths": _SPACING,
            "reflector_size_wavelengths": _REFL_SIZE,
            "grid_pitch_wavelengths": _PITCH,
            "reflector_radius_m": _REFL_RADIUS,
            "crossing_gap_m": _GAP,
            "material": _MATERIAL,
            "segments_per_wavelength": _SPW,
            **_GROUND_SPECS,
        },
    ),
    "crossed-loops": (
        crossed_loops,
        {
            "frequency_hz": _FREQ,
            "circumference_wavelengths": Parameter(float, 1.0, (0.3, 2.5), "wavelengths; perimeter of each loop"),
            "width_to_height": Parameter(float, 1.0, (0.2, 5.0), "loop width over height (< 1 is a tall loop)"),
            "exponent": Parameter(float, 2.0, (1.0, 50.0), "superellipse exponent n; 2 ellipse, 1 diamond, large n rectangle"),
            "segments": Parameter(int, 48, (16, 200), "polygon vertices (and segments) per loop, even"),
            "radius_m": _RADIUS,
            "material": _MATERIAL,
            "reflector": _REFLECTOR,
            "spacing_wavelengths": _SPACING,
            "reflector_size_wavelengths": _REFL_SIZE,
            "grid_pitch_wavelengths": _PITCH,
            "reflector_radius_m": _REFL_RADIUS,
            "crossing_gap_m": _GAP,
            "segments_per_wavelength": _SPW,
            **_GROUND_SPECS,
        },
    ),
}
"""Template name -> (function, {parameter: Parameter(type, default, allowed, help)}).

Every function parameter is in the registry and every registry entry is a function parameter
(the tests check it), so ``planner pattern build TEMPLATE --param value`` can expose them all."""

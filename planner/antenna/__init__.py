"""Antenna pattern tables: the table and its polarization quantities, the file format, and the
closed-form patterns; the wire solver and the template registry sit below it as modules.

Modules
-------
``table``      PatternTable (partial RHCP/LHCP gains on a grid), bilinear-in-dB interpolation,
               axial ratio and sense from partial gains or circular components, sphere-mean gain.
``tablefile``  the CSV format: parse with the header checks and physical limits, format, capped
               load, atomic write; the ``builder`` header line's older spellings.
``analytic``   closed-form far fields: half-wave dipoles, image theory over a perfect conductor,
               the image-theory turnstile and the isotropic RHCP reference; angle grids and their
               size check.
``registry``   template names, one-off builds, rebuilding a table from its header, the shipped
               tables. It builds on the wire solver, so this front door does not import it: take
               its names from ``planner.antenna.registry``.
``harness``    phasing-harness arithmetic behind ``planner harness``.
``synth``      the thin-wire method-of-moments solver and the wire templates; it builds on
               ``table``, ``tablefile`` and ``analytic`` only.

Everything public of ``table``, ``tablefile`` and ``analytic`` is re-exported here.
"""

from planner.antenna.analytic import (
    DEMO_FREQUENCY_HZ,
    EAST,
    NORTH,
    SPEED_OF_LIGHT_M_S,
    UP,
    HalfWaveDipole,
    angle_count,
    angle_grid,
    check_frequency,
    check_pattern_grid,
    circular_components,
    crossed_dipoles,
    direction_enu,
    far_field,
    finest_step_deg,
    half_wave_dipole_field,
    isotropic_rhcp,
    partial_directivities,
    pattern_grid,
    radiated_power,
    spherical_unit_vectors,
    turnstile_over_reflector,
)
from planner.antenna.table import (
    AXIAL_RATIO_CAP_DB,
    GAIN_FLOOR_DBIC,
    PatternTable,
    axial_ratio_db_from_circular,
    axial_ratio_db_from_partial_gains,
    db_to_linear,
    linear_to_db,
    sense_from_partial_gains,
    sphere_mean_gain,
)
from planner.antenna.tablefile import (
    COLUMNS_ALLOWED,
    COLUMNS_REQUIRED,
    FREQUENCY_MAX_MHZ,
    FREQUENCY_MIN_MHZ,
    GAIN_CEILING_DBIC,
    SPHERE_MEAN_GAIN_TOLERANCE,
    format_number,
    format_pattern,
    load_pattern,
    parse_pattern,
    pattern_points_limit,
    write_pattern,
)

__all__ = [
    # table
    "AXIAL_RATIO_CAP_DB",
    "GAIN_FLOOR_DBIC",
    "PatternTable",
    "axial_ratio_db_from_circular",
    "axial_ratio_db_from_partial_gains",
    "db_to_linear",
    "linear_to_db",
    "sense_from_partial_gains",
    "sphere_mean_gain",
    # tablefile
    "COLUMNS_ALLOWED",
    "COLUMNS_REQUIRED",
    "FREQUENCY_MAX_MHZ",
    "FREQUENCY_MIN_MHZ",
    "GAIN_CEILING_DBIC",
    "SPHERE_MEAN_GAIN_TOLERANCE",
    "format_number",
    "format_pattern",
    "load_pattern",
    "parse_pattern",
    "pattern_points_limit",
    "write_pattern",
    # analytic
    "DEMO_FREQUENCY_HZ",
    "EAST",
    "NORTH",
    "SPEED_OF_LIGHT_M_S",
    "UP",
    "HalfWaveDipole",
    "angle_count",
    "angle_grid",
    "check_frequency",
    "check_pattern_grid",
    "circular_components",
    "crossed_dipoles",
    "direction_enu",
    "far_field",
    "finest_step_deg",
    "half_wave_dipole_field",
    "isotropic_rhcp",
    "partial_directivities",
    "pattern_grid",
    "radiated_power",
    "spherical_unit_vectors",
    "turnstile_over_reflector",
]

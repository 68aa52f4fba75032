"""Pattern synthesis from wire geometry: a thin-wire method-of-moments solver.

Upstream of the planner: it only ever feeds it pattern tables through
``planner.antenna.PatternTable`` / ``write_pattern``; ``planner.link.budget`` never imports it.

Frame: x = east, y = north, z = up (as in ``planner.antenna``); azimuth is a compass bearing
from north toward east, elevation above the horizontal; time convention e^{jwt}; SI units
(metres, hertz, ohms, volts, watts).

API (``geometry.py`` and ``mom.py``; the names below are stable: extend, do not rename)
-------------------------------------------------------------------------------------------
``planner.antenna.synth.geometry``

* ``MATERIALS: dict[str, float | None]`` resistivity in ohm m; ``"pec"`` -> None (lossless),
  ``"copper"`` 1.68e-8, ``"aluminium"`` 2.65e-8, ``"copper-clad-steel"`` (copper's value: the
  skin depth lies in the cladding), ``"brass"``, ``"stainless-steel"``.
* ``resistivity_ohm_m(material: str | float) -> float | None`` (a number is taken as a
  resistivity; an unknown name raises UserError).
* ``skin_depth_m(resistivity_ohm_m, frequency_hz, mu_r=1.0) -> float`` = sqrt(rho / (pi f mu0 mu_r))
* ``surface_resistance_ohm(resistivity_ohm_m, frequency_hz, mu_r=1.0) -> float`` = rho / delta
* ``resistance_per_metre_ohm(resistivity_ohm_m, frequency_hz, radius_m, mu_r=1.0) -> float``
  = Rs / (2 pi a) (skin-effect resistance of a round wire per unit length)
* ``Wire(points, radius_m, material="copper", name="", segments_per_edge=None)``
  ``points``: (n >= 2, 3) polyline in metres (a closed loop repeats its first point at the end);
  ``segments_per_edge``: fixed segment count for every polyline edge (overrides the model's
  ``segments_per_wavelength``; an edge that has to be cut at a port/load/joint point that is
  not already a node counts as two edges).
* ``Port(name, position, direction=+1, wire=None)`` delta-gap source at a node: ``position`` is a
  polyline vertex or any point ON a wire (the segmenter puts a node there); ``direction`` +1/-1
  along the wire's parametrisation (the positive port current and the + side of the gap voltage
  follow it); ``wire`` (name or index) picks the wire when the point lies on several.
* ``Load(position, impedance_ohm, name="", wire=None)`` lumped series impedance at a node.
* ``WireModel(wires, ports, loads=(), frequency_hz=..., ground="free-space"|"pec",
  segments_per_wavelength=40.0, max_segment_ratio=0.25, name="")``
  ``frequency_hz`` is required (keyword); ``ground="pec"`` is an infinite perfect conductor at
  z = 0 handled by images (every wire must stay above it); ``max_segment_ratio``: largest
  radius/segment-length ratio accepted without a thin-wire warning.
  Properties: ``wavelength_m``, ``port_names``.
* ``segment_model(model) -> Segmentation`` (arrays: ``starts``, ``ends``, ``centres``,
  ``tangents``, ``lengths``, ``radii``, ``resistance_per_m``, ``wire_index``; ``node_positions``;
  basis functions: ``basis_node``, pieces ``piece_basis``, ``piece_segment``, ``piece_end``,
  ``piece_sign``; ``port_basis``, ``port_sign``, ``load_basis``, ``load_impedance_ohm``;
  ``expansion_matrix()`` (2 n_segments, n_basis); ``n_segments``, ``n_basis``).
  Wires whose nodes coincide within ``JOIN_TOLERANCE_M`` = 1e-6 m are joined; a wire end lying
  on another wire's edge splits that edge so they join too.

``planner.antenna.synth.mom``

* ``solve(model, *, quadrature_points=4) -> Solution`` (one LU solve, 1 V on each port in turn,
  the other ports shorted).
* ``impedance_matrix(segmentation, frequency_hz, *, quadrature_points=4)`` the Galerkin matrix
  (n_basis, n_basis) with loads and wire loss (for benchmarks and checks).
* ``Solution`` attributes: ``model``, ``segmentation`` (alias ``segments``), ``frequency_hz``, ``wavenumber``,
  ``impedance_matrix`` (n_basis, n_basis), ``currents_per_port`` (n_basis, n_ports),
  ``port_names``; methods (``port_voltages``: sequence of complex volts in port order, or a
  mapping port name -> volts; may be omitted for a one-port model = 1 V):
  ``port_admittance_matrix()``, ``port_impedance_matrix()`` (V = Z I at the ports),
  ``currents(port_voltages)`` basis (node) currents in A, ``port_currents(port_voltages)``,
  ``input_impedance(port_voltages)`` (per-port V/I), ``segment_end_currents(port_voltages)``
  (n_segments, 2) current along each segment's tangent at its start and end,
  ``far_field(azimuth_deg, elevation_deg, port_voltages) -> (E_theta, E_phi)`` (normalised so
  that U = |E|^2 / (2 eta0) W/sr; images included; zero below a PEC ground),
  ``radiation_intensity(az, el, pv)``, ``radiated_power_w(pv)`` (far field integrated over the
  sphere, the upper half over a ground), ``input_power_w(pv)`` = 0.5 Re sum V I*,
  ``ohmic_loss_w(pv)`` (wire skin-effect loss), ``load_loss_w(pv)``, ``radiation_efficiency(pv)``
  = 1 - (ohmic + load loss) / input power, ``directivity_dbi(az, el, pv)``,
  ``gain_dbi(az, el, pv)``, ``gains_dbic(az, el, pv) -> (rhcp, lhcp)`` partial gains relative to
  the input power (losses show), RHCP/LHCP as ``planner.antenna.circular_components``; gains
  are floored at ``planner.antenna.GAIN_FLOOR_DBIC`` (-60 dBic: no field, e.g. below a PEC
  ground); ``solver_summary()`` one line for pattern-table headers.
  Angles broadcast like numpy (e.g. ``az[None, :], el[:, None]`` for a grid).

Method (see ``mom.py``): EFIE in mixed-potential form, piecewise-linear (triangle) basis on
straight segments, Galerkin testing, reduced thin-wire kernel R = sqrt(|r - r'|^2 + a^2), 1/R
part integrated analytically over the source segment (singularity extraction), the smooth
remainder by Gauss-Legendre; Harrington, Field Computation by Moment Methods (1968).
"""

from planner.antenna.synth.geometry import (  # noqa: F401
    MATERIALS,
    Load,
    Port,
    Segmentation,
    Wire,
    WireModel,
    resistance_per_metre_ohm,
    resistivity_ohm_m,
    segment_model,
    skin_depth_m,
    surface_resistance_ohm,
)
from planner.antenna.synth.mom import ETA0_OHM, Solution, impedance_matrix, solve  # noqa: F401,E402

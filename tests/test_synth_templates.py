"""Wire templates (planner.antenna.synth.templates), the feed network (planner.antenna.synth.feed) and pattern tables
from the solver (planner.antenna.synth.tables).

Sources: plane and solid geometry (regular polygons, Ramanujan's ellipse perimeter); Pozar,
Microwave Engineering (line ABCD / Y parameters, input impedance, mismatch); IEEE Std 145 and
Stutzman, Polarization in Electromagnetic Systems (sense, axial ratio); Balanis, Antenna Theory
(energy conservation, image theory); facts of the trade marked "common practice, no published
source".

Full citations: docs/references.md, with the values not yet checked against the published text.
"""

from __future__ import annotations

import inspect
import math

import numpy as np
import pytest
from scipy.constants import c as C_M_S  # reference value of the speed of light (exact, SI)

from planner.antenna.synth import templates
from planner.antenna.synth.feed import ideal_quadrature, phasing_line
from planner.antenna.synth.templates import (
    TEMPLATES,
    crossed_loops,
    default_crossing_gap_m,
    superellipse_perimeter,
    superellipse_polygon,
    turnstile,
)
from planner.errors import UserError

F_HZ = 436e6
LAMBDA_M = C_M_S / F_HZ


def loop_points(model, name):
    wire = next(w for w in model.wires if w.name == name)
    return wire.points


def port(model, name):
    return next(p for p in model.ports if p.name == name)


# --------------------------------------------------------------------------------------------
# Shapes
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("ratio", [1.0, 0.6, 1.7])
@pytest.mark.parametrize("exponent", [1.0, 2.0, 3.5, 12.0])
@pytest.mark.parametrize("circumference", [0.8, 1.0, 1.25])
def test_loop_perimeter_is_the_requested_circumference(ratio, exponent, circumference):
    # The wire the solver sees: sum of the closed polyline's edge lengths, computed here directly.
    model = crossed_loops(F_HZ, circumference_wavelengths=circumference, width_to_height=ratio, exponent=exponent)
    for name in ("a", "b"):
        pts = loop_points(model, name)
        assert np.allclose(pts[0], pts[-1])  # closed
        perimeter = np.sum(np.linalg.norm(np.diff(pts, axis=0), axis=1))
        assert perimeter == pytest.approx(circumference * LAMBDA_M, rel=1e-6)


def test_exponent_two_ratio_one_is_a_circle():
    # Equal arcs on a circle give a regular N-gon: every vertex at the circumradius R from the
    # centre, with perimeter 2 N R sin(pi/N) (elementary geometry).
    n_vertices = 48
    poly = superellipse_polygon(LAMBDA_M, 1.0, 2.0, n_vertices)
    radius = LAMBDA_M / (2 * n_vertices * math.sin(math.pi / n_vertices))
    centre = np.array([0.0, radius])
    distances = np.linalg.norm(poly - centre, axis=1)
    assert np.allclose(distances, radius, rtol=1e-9)
    edges = np.linalg.norm(np.diff(np.vstack([poly, poly[:1]]), axis=0), axis=1)
    assert np.allclose(edges, edges[0], rtol=1e-9)  # regular
    assert poly[0] == pytest.approx([0.0, 0.0], abs=1e-15)  # the gap vertex at the bottom
    assert poly[n_vertices // 2] == pytest.approx([0.0, 2 * radius], rel=1e-9)  # and one at the top


def test_smooth_superellipse_perimeter_against_closed_forms():
    # Circle: 2 pi r.
    assert superellipse_perimeter(0.3, 0.3, 2.0) == pytest.approx(2 * math.pi * 0.3, rel=1e-9)
    # Ellipse: Ramanujan's second approximation (Ramanujan 1914), error ~1e-10 at b/a = 0.5.
    a, b = 1.0, 0.5
    h = ((a - b) / (a + b)) ** 2
    ramanujan = math.pi * (a + b) * (1 + 3 * h / (10 + math.sqrt(4 - 3 * h)))
    assert superellipse_perimeter(a, b, 2.0) == pytest.approx(ramanujan, rel=1e-8)
    # n = 1 is a rhombus: 4 sqrt(a^2 + b^2).
    assert superellipse_perimeter(a, b, 1.0) == pytest.approx(4 * math.hypot(a, b), rel=1e-9)
    # Large n tends to the rectangle 4 (a + b), from below.
    p = [superellipse_perimeter(a, b, n) for n in (4.0, 10.0, 50.0)]
    assert p[0] < p[1] < p[2] < 4 * (a + b)
    assert p[2] > 0.98 * 4 * (a + b)


def test_tall_loop_is_taller_than_wide():
    model = crossed_loops(F_HZ, width_to_height=0.5, exponent=2.0)
    pts = loop_points(model, "a")
    width = pts[:, 0].max() - pts[:, 0].min()
    height = pts[:, 2].max() - pts[:, 2].min()
    assert width / height == pytest.approx(0.5, rel=0.01)  # equal-arc vertices hit the extremes within a chord


# --------------------------------------------------------------------------------------------
# Crossed loops: orientation, gaps, reflectors
# --------------------------------------------------------------------------------------------


def plane_normal(points):
    centred = points - points.mean(axis=0)
    _, s, vt = np.linalg.svd(centred)
    assert s[2] < 1e-9 * s[0]  # planar
    return vt[2]


def test_loops_are_vertical_and_perpendicular():
    model = crossed_loops(F_HZ, width_to_height=0.7, exponent=3.0)
    n_a = plane_normal(loop_points(model, "a"))
    n_b = plane_normal(loop_points(model, "b"))
    assert abs(n_a[2]) < 1e-12 and abs(n_b[2]) < 1e-12  # normals horizontal: vertical planes
    assert abs(n_a @ n_b) < 1e-12  # perpendicular planes
    assert np.allclose(loop_points(model, "a")[:, 1], 0.0)  # a in the east-up plane
    assert np.allclose(loop_points(model, "b")[:, 0], 0.0)  # b in the north-up plane


def test_gaps_at_the_bottom_with_positive_current_east_and_north():
    model = crossed_loops(F_HZ)
    for name, axis in (("a", 0), ("b", 1)):
        pts = loop_points(model, name)
        p = port(model, name)
        assert p.position[2] == pytest.approx(pts[:, 2].min(), abs=1e-12)  # the lowest point
        assert p.position[:2] == pytest.approx([0.0, 0.0], abs=1e-12)  # on the vertical axis
        k = int(np.argmin(np.linalg.norm(pts[:-1] - p.position, axis=1)))
        assert 0 < k < len(pts) - 1  # an interior vertex of the polyline, not its joined ends
        along = pts[k + 1] - pts[k - 1]
        assert along[axis] > 0 and p.direction == +1  # port current flows +x (a) / +y (b)


def test_loops_cross_without_touching():
    model = crossed_loops(F_HZ, radius_m=1e-3)
    gap = default_crossing_gap_m(1e-3, F_HZ)
    assert gap == pytest.approx(4e-3)
    a, b = loop_points(model, "a"), loop_points(model, "b")
    distance = np.min(np.linalg.norm(a[:, None, :] - b[None, :, :], axis=-1))
    assert distance == pytest.approx(gap, rel=1e-9)  # closest at the bottom and the top
    assert port(model, "b").position[2] - port(model, "a").position[2] == pytest.approx(gap, rel=1e-9)


@pytest.mark.parametrize("reflector", ["pec", "rods", "grid"])
def test_reflector_below_the_feed_at_the_spacing(reflector):
    spacing = 0.3
    model = crossed_loops(F_HZ, reflector=reflector, spacing_wavelengths=spacing, reflector_size_wavelengths=0.8)
    feed_height = 0.5 * (port(model, "a").position[2] + port(model, "b").position[2])
    assert feed_height == pytest.approx(spacing * LAMBDA_M, rel=1e-12)
    screen = [w for w in model.wires if w.name.startswith("reflector")]
    if reflector == "pec":
        assert model.ground == "pec" and not screen
        return
    assert model.ground == "free-space" and screen
    z = np.concatenate([w.points[:, 2] for w in screen])
    assert np.allclose(z, 0.0)
    extent = max(np.abs(w.points[:, :2]).max() for w in screen)
    assert extent == pytest.approx(0.4 * LAMBDA_M, rel=1e-12)  # half the size from the axis
    for name in ("a", "b"):
        assert loop_points(model, name)[:, 2].min() > 0.29 * LAMBDA_M


def test_turnstile_geometry():
    model = turnstile(F_HZ, length_wavelengths=0.48, reflector="pec", spacing_wavelengths=0.25)
    a, b = loop_points(model, "a"), loop_points(model, "b")
    assert np.allclose(a[:, 1], 0.0) and np.allclose(b[:, 0], 0.0)  # east and north
    assert np.ptp(a[:, 0]) == pytest.approx(0.48 * LAMBDA_M) and np.ptp(b[:, 1]) == pytest.approx(0.48 * LAMBDA_M)
    assert 0.5 * (a[0, 2] + b[0, 2]) == pytest.approx(0.25 * LAMBDA_M)
    assert model.port_names == ["a", "b"] and model.ground == "pec"


def test_dipole_geometry():
    model = templates.dipole(F_HZ, length_wavelengths=0.5, height_wavelengths=0.25)
    pts = model.wires[0].points
    assert model.port_names == ["feed"] and model.ground == "pec"
    assert np.ptp(pts[:, 0]) == pytest.approx(0.5 * LAMBDA_M)
    assert np.allclose(pts[:, 2], 0.25 * LAMBDA_M)
    assert templates.dipole(F_HZ).ground == "free-space"


# --------------------------------------------------------------------------------------------
# Parameters
# --------------------------------------------------------------------------------------------


def test_registry_matches_the_functions():
    for name, (function, specs) in TEMPLATES.items():
        signature = inspect.signature(function).parameters
        assert list(signature) == list(specs), name
        for key, spec in specs.items():
            assert signature[key].default == spec.default, (name, key)
            assert spec.help


@pytest.mark.parametrize(
    "template, values, words",
    [
        ("crossed-loops", {"exponent": 0.5}, ["exponent", "1..50"]),
        ("crossed-loops", {"width_to_height": "10"}, ["width_to_height", "0.2..5"]),
        ("crossed-loops", {"segments": 47}, ["segments", "even"]),
        ("crossed-loops", {"segments": 40.5}, ["segments", "whole"]),
        ("crossed-loops", {"reflector": "mesh"}, ["reflector", "pec", "grid"]),
        ("crossed-loops", {"spacing_wavelengths": "abc"}, ["spacing_wavelengths", "not a number"]),
        ("crossed-loops", {"height": 1}, ["height", "unknown", "spacing_wavelengths"]),
        ("crossed-loops", {"material": "gold"}, ["material", "copper"]),
        ("turnstile", {"length_wavelengths": 3}, ["length_wavelengths", "0.1..1.5"]),
        ("turnstile", {"crossing_gap_m": 1e-4, "radius_m": 1e-3}, ["crossing_gap_m", "radii"]),
        ("dipole", {"radius_m": -1}, ["radius_m"]),
        ("helix", {}, ["helix", "crossed-loops"]),
    ],
)
def test_bad_parameters_are_one_line_user_errors(template, values, words):
    with pytest.raises(UserError) as info:
        templates.build_model(template, **values)
    message = str(info.value)
    assert "\n" not in message
    for word in words:
        assert word in message


def test_parameters_from_text_and_direct_calls_validate_alike():
    model = templates.build_model("crossed-loops", exponent="3", segments="40", reflector="pec", spacing_wavelengths="0.2")
    assert len(loop_points(model, "a")) == 41 and model.ground == "pec"
    with pytest.raises(UserError, match="exponent"):
        crossed_loops(F_HZ, exponent=0.2)


# --------------------------------------------------------------------------------------------
# Feed network on synthetic impedance matrices
# --------------------------------------------------------------------------------------------


def quarter_wave_m(vf):
    return vf * C_M_S / F_HZ / 4.0  # lambda_g / 4 (transmission-line guide wavelength, Pozar)


def test_matched_quarter_wave_line_gives_exactly_minus_90_deg():
    # Pozar: a lossless line of Z0 terminated in Z0 only delays; a quarter wave delays 90 deg.
    z = np.diag([50.0 + 0j, 50.0 + 0j])
    result = phasing_line(z, quarter_wave_m(0.66), 50.0, 0.66, frequency_hz=F_HZ)
    assert result.phase_deg == pytest.approx(-90.0, abs=1e-9)
    assert abs(result.current_ratio) == pytest.approx(1.0, rel=1e-12)
    assert result.feed_impedance_ohm == pytest.approx(25.0 + 0j, abs=1e-9)  # 50 || 50
    # VSWR of 25 ohm on 50 ohm is 2, mismatch loss -10 log10(1 - 1/9) (Pozar).
    assert result.vswr_50 == pytest.approx(2.0, rel=1e-9)
    assert result.mismatch_loss_db == pytest.approx(-10 * math.log10(1 - 1 / 9), rel=1e-9)
    assert result.network_efficiency == pytest.approx(1.0, abs=1e-12)
    # The ideal quadrature on the same elements is the same state (module definition).
    ideal = ideal_quadrature(z)
    assert ideal.feed_impedance_ohm == pytest.approx(result.feed_impedance_ohm, abs=1e-9)
    assert ideal.current_ratio == pytest.approx(-1j)


def test_one_centimetre_of_extra_line_adds_the_computed_lag():
    z = np.diag([50.0 + 0j, 50.0 + 0j])
    base = phasing_line(z, quarter_wave_m(0.8), 50.0, 0.8, frequency_hz=F_HZ)
    longer = phasing_line(z, quarter_wave_m(0.8) + 0.01, 50.0, 0.8, frequency_hz=F_HZ)
    by_hand = 360.0 * 0.01 / (0.8 * C_M_S / F_HZ)  # beta * dl in degrees (Pozar)
    assert longer.phase_deg - base.phase_deg == pytest.approx(-by_hand, abs=1e-9)


def test_quarter_wave_line_current_does_not_depend_on_the_load():
    # Pozar: the ABCD matrix of a lossless quarter wave is [[0, j Z0], [j/Z0, 0]], so the output
    # current is V_in / (j Z0) whatever the load: I_b / I_a = Z_a / (j Z0) without coupling.
    za, zb = 115.0 - 95.0j, 60.0 + 30.0j
    result = phasing_line(np.diag([za, zb]), quarter_wave_m(0.7), 75.0, 0.7, frequency_hz=F_HZ)
    assert result.current_ratio == pytest.approx(za / (1j * 75.0), rel=1e-9)
    # Zin of the line = Z0^2 / Z_b; the feed sees it in parallel with Z_a.
    zin = 75.0**2 / zb
    assert result.feed_impedance_ohm == pytest.approx(za * zin / (za + zin), rel=1e-9)


@pytest.mark.parametrize("loss_db_per_m", [0.0, 0.8])
def test_phasing_line_against_nodal_analysis_with_coupling(loss_db_per_m):
    # Independent formulation: the line as a Y two-port (Pozar: Y11 = Y22 = coth(gl)/Z0,
    # Y12 = Y21 = -csch(gl)/Z0), the elements as their admittance matrix Y = Z^-1, node voltages
    # (feed point, port b) for 1 A injected at the feed; then scale to 1 V at the feed.
    z = np.array([[95.0 - 40.0j, 12.0 + 9.0j], [12.0 + 9.0j, 110.0 - 70.0j]])
    length, z0, vf = 0.137, 50.0, 0.78
    gl = loss_db_per_m * length / (20 * math.log10(math.e)) + 2j * math.pi * length / (vf * C_M_S / F_HZ)
    y11, y12 = 1 / (z0 * np.tanh(gl)), -1 / (z0 * np.sinh(gl))
    y_el = np.linalg.inv(z)
    # Node equations: unknowns (V_f, V_b); element a is across V_f, element b across V_b.
    y_nodes = np.array([[y_el[0, 0] + y11, y_el[0, 1] + y12], [y_el[1, 0] + y12, y_el[1, 1] + y11]])
    v = np.linalg.solve(y_nodes, np.array([1.0, 0.0]))
    v = v / v[0]
    currents = y_el @ v
    result = phasing_line(z, length, z0, vf, loss_db_per_m=loss_db_per_m, frequency_hz=F_HZ)
    assert result.port_currents == pytest.approx(currents, rel=1e-9)
    assert result.port_voltages == pytest.approx(v, rel=1e-9)
    z_feed = 1.0 / (currents[0] + y11 * v[0] + y12 * v[1])
    assert result.feed_impedance_ohm == pytest.approx(z_feed, rel=1e-9)
    if loss_db_per_m == 0.0:
        assert result.network_efficiency == pytest.approx(1.0, abs=1e-9)
    else:
        assert 0.8 < result.network_efficiency < 1.0


def test_line_loss_on_matched_elements():
    # Matched line into a matched load: the branch passes 10^(-L/10) of its power (Pozar).
    z = np.diag([50.0 + 0j, 50.0 + 0j])
    loss_db_per_m, length = 2.0, quarter_wave_m(0.66)
    result = phasing_line(z, length, 50.0, 0.66, loss_db_per_m=loss_db_per_m, frequency_hz=F_HZ)
    p_a = 0.5 / 50.0  # 1 V across 50 ohm
    p_line_in = 0.5 / 50.0  # the matched line presents 50 ohm
    expected = (p_a + p_line_in * 10 ** (-loss_db_per_m * length / 10)) / (p_a + p_line_in)
    assert result.network_efficiency == pytest.approx(expected, rel=1e-9)


def test_ideal_quadrature_with_coupling():
    z = np.array([[80.0 + 20.0j, 10.0 - 5.0j], [10.0 - 5.0j, 90.0 + 10.0j]])
    result = ideal_quadrature(z)
    i = np.array([1.0, -1j])
    assert result.port_currents == pytest.approx(i)
    assert result.port_voltages == pytest.approx(z @ i)  # V = Z I
    za, zb = (z @ i) / i
    assert result.feed_impedance_ohm == pytest.approx(za * zb / (za + zb))
    assert ideal_quadrature(z, "lhcp").current_ratio == pytest.approx(1j)
    with pytest.raises(UserError, match="sense"):
        ideal_quadrature(z, "right")


def test_feed_input_errors():
    z = np.diag([50.0, 50.0])
    with pytest.raises(UserError, match="velocity_factor"):
        phasing_line(z, 0.1, 50.0, 1.5, frequency_hz=F_HZ)
    with pytest.raises(UserError, match="line_z0_ohm"):
        phasing_line(z, 0.1, -50.0, 0.66, frequency_hz=F_HZ)
    with pytest.raises(UserError, match="frequency_hz"):
        phasing_line(z, 0.1, 50.0, 0.66)


# --------------------------------------------------------------------------------------------
# With the solver
# --------------------------------------------------------------------------------------------

mom = pytest.importorskip("planner.antenna.synth.mom", reason="the wire solver (planner.antenna.synth.mom) is not written yet")


def zenith_axial_ratio_db(solution, voltages):
    from planner.antenna import axial_ratio_db_from_partial_gains

    r, l = solution.gains_dbic(0.0, 90.0, voltages)
    return float(axial_ratio_db_from_partial_gains(10 ** (r / 10), 10 ** (l / 10))), float(r), float(l)


def test_turnstile_ideal_quadrature_is_rhcp_at_the_zenith():
    # Right-hand sense: feeding the second element lagging by 90 deg in the right-hand sense about
    # the upward axis gives RHCP at the zenith (IEEE Std 145).
    solution = mom.solve(turnstile(F_HZ))
    result = ideal_quadrature(solution.port_impedance_matrix())
    ar, r, l = zenith_axial_ratio_db(solution, result.port_voltages)
    assert ar < 0.5 and r > l + 25.0
    # The remaining ellipticity is the crossing gap: b is nearer the zenith by the gap, so its
    # field leads by k * gap; with equal amplitudes that phase error gives this axial ratio
    # (the Stutzman axial ratio of x + e^{-j(90 + d)} y, planner.antenna.harness).
    from planner.antenna.harness import axial_ratio_db_from_phase_error

    d = -360.0 * default_crossing_gap_m(1e-3, F_HZ) / LAMBDA_M
    assert ar == pytest.approx(axial_ratio_db_from_phase_error(d), abs=0.02)
    # The other sense is the mirror image.
    lhcp = ideal_quadrature(solution.port_impedance_matrix(), "lhcp")
    _, r2, l2 = zenith_axial_ratio_db(solution, lhcp.port_voltages)
    assert l2 > r2 + 25.0


@pytest.fixture(scope="module")
def loop_solutions():
    out = {}
    for exponent in (2.0, 6.0):
        model = crossed_loops(F_HZ, exponent=exponent)
        out[exponent] = mom.solve(model)
    return out


def test_one_wavelength_loop_resistance_and_two_in_parallel(loop_solutions):
    # Common practice, no published source: a one-wavelength loop has an input resistance near
    # 100 ohm (round ones 110-125 ohm), two in parallel about 50 ohm. Generous tolerances.
    z = loop_solutions[2.0].port_impedance_matrix()
    assert 85.0 < z[0, 0].real < 140.0
    assert z[1, 1] == pytest.approx(z[0, 0], rel=1e-6)  # the same loop turned
    assert abs(z[0, 1]) < 1e-3 * abs(z[0, 0])  # perpendicular planes: no coupling by symmetry
    both = ideal_quadrature(z).feed_impedance_ohm
    assert 40.0 < both.real < 70.0
    # Rounder loops are higher (common practice, no published source).
    r_round = z[0, 0].real
    r_square = loop_solutions[6.0].port_impedance_matrix()[0, 0].real
    assert r_round > r_square and 100.0 < r_round < 135.0


def test_crossed_loops_over_pec_table_has_the_header_and_loads_back(tmp_path):
    from planner.antenna import load_pattern, sphere_mean_gain, write_pattern
    from planner.antenna.synth.tables import build_pattern_table, build_template_table, feed_model

    values = {"reflector": "pec", "spacing_wavelengths": 0.3, "elevation_step_deg": 2, "azimuth_step_deg": 30}
    table = build_template_table("crossed-loops", values, command="planner pattern build crossed-loops --reflector pec")
    for key in (
        "frequency_mhz",
        "model",
        "generated_by",
        "parameters",
        "geometry",
        "solver",
        "feed_impedance_ohm",
        "feed_vswr",
        "radiation_efficiency",
        "builder",
        "gain_reference",
    ):
        assert key in table.header, key
    assert table.header["generated_by"] == "planner pattern build crossed-loops --reflector pec"
    assert "thin-wire method of moments" in table.header["model"]
    assert "spacing_wavelengths=0.3" in table.header["parameters"]
    path = write_pattern(tmp_path / "loops.csv", table)
    loaded = load_pattern(path)
    assert loaded.frequency_hz == pytest.approx(F_HZ)
    assert loaded.elevation_deg[0] == -90 and loaded.elevation_deg[-1] == 90
    assert list(loaded.azimuth_deg) == [0, 30, 60, 90, 120, 150, 180, 210, 240, 270, 300, 330]
    assert np.allclose(loaded.gain_rhcp_dbic, table.gain_rhcp_dbic, atol=5e-4)
    assert loaded.feed_impedance_ohm == pytest.approx(table.feed_impedance_ohm, abs=1e-3)
    # Over an infinite perfect conductor there is no field below the horizon (image theory).
    assert np.all(loaded.gain_rhcp_dbic[loaded.elevation_deg < 0] == -60.0)
    # RHCP dominates overhead.
    zenith = loaded.elevation_deg == 90
    assert np.all(loaded.gain_rhcp_dbic[zenith] > loaded.gain_lhcp_dbic[zenith] + 15.0)
    # Energy conservation (Balanis): the gain averaged over the sphere equals the
    # radiation efficiency (grid interpolation in dB costs a little on this coarse grid).
    assert sphere_mean_gain(loaded) == pytest.approx(loaded.radiation_efficiency, rel=0.03)
    assert 0.95 < loaded.radiation_efficiency < 1.0  # copper at UHF: small loss

    # The lower-level call gives the same numbers.
    model = crossed_loops(F_HZ, reflector="pec", spacing_wavelengths=0.3)
    solution = mom.solve(model)
    feed = feed_model(solution, {"feed": "quadrature", "sense": "rhcp"}, F_HZ)
    direct = build_pattern_table(
        model,
        solution,
        feed,
        frequency_hz=F_HZ,
        template="crossed-loops",
        parameters={"reflector": "pec"},
        command="test",
        elevation_step_deg=2,
        azimuth_step_deg=30,
    )
    assert np.allclose(direct.gain_rhcp_dbic, table.gain_rhcp_dbic, atol=1e-9)


def test_table_rebuilds_from_its_own_header():
    # The header's builder (a template name) and parameters are enough to make the same table
    # again (the reflector sweep relies on it), with the parameters as text.
    from planner.antenna.registry import rebuild_pattern
    from planner.antenna.synth.tables import build_template_table

    table = build_template_table(
        "turnstile", {"reflector": "rods", "feed": "line", "velocity_factor": 0.8, "elevation_step_deg": 5, "azimuth_step_deg": 45}
    )
    assert table.header["builder"] == "turnstile"
    params = dict(item.strip().split("=") for item in table.header["parameters"].split(";"))
    again = rebuild_pattern(table.header["builder"], params)
    assert np.allclose(again.gain_rhcp_dbic, table.gain_rhcp_dbic, atol=1e-9)
    assert again.header["parameters"] == table.header["parameters"]
    # The phasing line's length was a quarter wave at the velocity factor (Pozar).
    assert float(params["line_length_m"]) == pytest.approx(0.8 * LAMBDA_M / 4, rel=1e-6)


def test_wire_reflector_leaks_below_the_horizon():
    from planner.antenna.synth.tables import build_template_table

    table = build_template_table(
        "turnstile", {"reflector": "rods", "reflector_size_wavelengths": 0.6, "elevation_step_deg": 10, "azimuth_step_deg": 90}
    )
    below = table.elevation_deg < 0
    total = 10 * np.log10(10 ** (table.gain_rhcp_dbic / 10) + 10 ** (table.gain_lhcp_dbic / 10))
    assert np.all(total[below] > -40.0)  # a finite screen lets field through (not the floor)
    assert total[table.elevation_deg == 90].min() > total[table.elevation_deg == -90].max() + 3.0  # but it reflects


def test_harness_report_with_the_solver():
    # The real network: elements a and b of a turnstile, b through a quarter wave; the report's
    # network phase equals the feed module's, and the zenith axial ratio comes from the far field.
    from planner.antenna.harness import harness_report

    solution = mom.solve(turnstile(F_HZ, reflector="pec"))
    report = harness_report(F_HZ, 0.66, z0_ohm=50.0, solution=solution)
    direct = phasing_line(solution.port_impedance_matrix(), quarter_wave_m(0.66), 50.0, 0.66, frequency_hz=F_HZ)
    assert report["network_phase_deg"] == pytest.approx(direct.phase_deg, abs=1e-9)
    ar, _, _ = zenith_axial_ratio_db(solution, direct.port_voltages)
    assert report["zenith_axial_ratio_db"] == pytest.approx(ar, abs=1e-9)
    # Uncoupled identical elements: the zenith field ratio is the current ratio, so the circuit's
    # axial ratio and the far field's agree (image theory keeps the zenith phases equal).
    assert report["zenith_axial_ratio_db"] == pytest.approx(report["network_axial_ratio_db"], abs=0.1)

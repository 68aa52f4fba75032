"""Thin-wire solver speed: matrix fill + solve and far-field time against the segment count, then a
200-segment model (two crossed loops over a PEC ground) solved and tabulated on the pattern-table
grid (elevation step 1 deg, azimuth step 10 deg).

    .venv/bin/python benchmarks/synth.py [--frequency-mhz F] [--repeat R]

Prints wall times in seconds (best of ``--repeat``). The model is built inline: two circular
loops of one wavelength circumference in the vertical east and north planes, fed at the bottom
(the second slightly smaller so the wires do not touch), 0.25 wavelength above the plane.
"""

from __future__ import annotations

import argparse
import sys
import time
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from planner.antenna.synth.geometry import Port, Wire, WireModel, segment_model  # noqa: E402
from planner.antenna.synth.mom import impedance_matrix, solve  # noqa: E402

C = 299_792_458.0


def dipole_model(frequency_hz: float, segments: int) -> WireModel:
    lam = C / frequency_hz
    half = lam / 4.0
    wire = Wire(
        np.array([[0, 0, -half], [0, 0, 0], [0, 0, half]]), lam / 2000.0, "copper", "dipole", segments_per_edge=segments // 2
    )
    return WireModel([wire], [Port("a", (0, 0, 0))], frequency_hz=frequency_hz)


def circle(radius_m: float, centre, plane: str, n: int) -> np.ndarray:
    """Closed polygon of n edges in the vertical 'xz' or 'yz' plane, first vertex at the bottom."""
    ang = np.linspace(0.0, 2.0 * np.pi, n + 1)
    horizontal = radius_m * np.sin(ang)
    z = -radius_m * np.cos(ang)
    zero = np.zeros_like(ang)
    pts = np.stack([horizontal, zero, z], axis=1) if plane == "xz" else np.stack([zero, horizontal, z], axis=1)
    pts = pts + np.asarray(centre, dtype=float)
    pts[-1] = pts[0]
    return pts


def crossed_loops_model(frequency_hz: float, segments_per_loop: int = 100) -> WireModel:
    lam = C / frequency_hz
    radius = lam / (2.0 * np.pi)
    centre = (0.0, 0.0, 0.25 * lam + radius)
    a = circle(radius, centre, "xz", segments_per_loop)
    b = circle(0.97 * radius, centre, "yz", segments_per_loop)
    wires = [Wire(a, 1e-3, "copper", "loop-east", segments_per_edge=1), Wire(b, 1e-3, "copper", "loop-north", segments_per_edge=1)]
    ports = [Port("a", a[0], wire="loop-east"), Port("b", b[0], wire="loop-north")]
    return WireModel(wires, ports, frequency_hz=frequency_hz, ground="pec")


def best(fn, repeat: int):
    times, result = [], None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - t0)
    return min(times), result


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--frequency-mhz", type=float, default=436.0)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args(argv)
    f = args.frequency_mhz * 1e6
    warnings.simplefilter("ignore")

    el = np.arange(-90.0, 90.0 + 0.5, 1.0)
    az = np.arange(0.0, 360.0, 10.0)
    print(f"dipole, free space, {args.frequency_mhz:g} MHz; far field on {len(el)} x {len(az)} directions")
    print(f"{'segments':>9} {'fill s':>9} {'solve s':>9} {'pattern s':>10} {'Z_in ohm':>22}")
    for n in (50, 100, 200, 400):
        model = dipole_model(f, n)
        seg = segment_model(model)
        t_fill, z = best(lambda: impedance_matrix(seg, f), args.repeat)  # noqa: B023 (called at once, in this iteration)
        rhs = np.zeros(seg.n_basis, complex)
        rhs[seg.port_basis[0]] = 1.0
        t_solve, _ = best(lambda: np.linalg.solve(z, rhs), args.repeat)  # noqa: B023 (called at once, in this iteration)
        sol = solve(model)
        t_pat, _ = best(lambda: sol.gains_dbic(az[None, :], el[:, None]), args.repeat)  # noqa: B023 (called at once, in this iteration)
        zin = sol.input_impedance()[0]
        print(f"{n:>9d} {t_fill:9.4f} {t_solve:9.4f} {t_pat:10.4f} {zin.real:10.2f}{zin.imag:+10.2f}j")

    print()
    model = crossed_loops_model(f)

    def full():
        sol = solve(model)
        t1 = time.perf_counter()
        rhcp, lhcp = sol.gains_dbic(az[None, :], el[:, None], [1.0, -1j])
        eff = sol.radiation_efficiency([1.0, -1j])
        return sol, rhcp, lhcp, eff, t1

    t0 = time.perf_counter()
    sol, rhcp, lhcp, eff, t1 = full()
    t2 = time.perf_counter()
    z = sol.port_impedance_matrix()
    print(
        f"crossed loops over PEC ground: {sol.segmentation.n_segments} segments, {sol.segmentation.n_basis} basis functions "
        f"(+ images), 2 ports"
    )
    print(
        f"  solve (segment + fill + LU, 2 ports): {t1 - t0:.3f} s; table {len(el)} x {len(az)} + efficiency: {t2 - t1:.3f} s; total {t2 - t0:.3f} s"
    )
    print(f"  Z11 = {z[0, 0]:.2f} ohm, Z22 = {z[1, 1]:.2f} ohm, Z12 = {z[0, 1]:.2f} ohm; radiation efficiency {eff:.4f}")
    zen = int(np.argmin(np.abs(el - 90.0)))
    print(f"  zenith (quadrature feed, b lagging): RHCP {rhcp[zen, 0]:.2f} dBic, LHCP {lhcp[zen, 0]:.2f} dBic")
    p_in = sol.input_power_w([1.0, -1j])
    p_rad = sol.radiated_power_w([1.0, -1j])
    print(f"  power check: radiated {p_rad:.6g} W + wire loss {sol.ohmic_loss_w([1.0, -1j]):.3g} W vs input {p_in:.6g} W")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

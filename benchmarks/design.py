"""Trimming and harness design speed: 200-segment crossed loops (tall superellipse loops 0.6
wavelength over an infinite reflector) trimmed to resonance, the phasing line and matching section
designed, then the pattern table tabulated; also the same at the template's default 48 segments.

    .venv/bin/python benchmarks/design.py [--segments N] [--repeat R]

Prints wall times in seconds (best of ``--repeat``) for each stage and the number of solves the
trim needed, plus one plain solve of the trimmed model for scale. Target on a 2-core machine:
trim plus harness design under 5 s at 200 segments.
"""

from __future__ import annotations

import argparse
import sys
import time
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from planner.antenna.synth import mom  # noqa: E402
from planner.antenna.synth.design import design_harness, trim_to_resonance  # noqa: E402
from planner.antenna.synth.tables import build_template_table  # noqa: E402
from planner.antenna.synth.templates import check_parameters  # noqa: E402

SHAPE = {"width_to_height": 0.5, "exponent": 6.0, "reflector": "pec", "spacing_wavelengths": 0.6}


def run(segments: int) -> dict[str, float]:
    params = check_parameters("crossed-loops", dict(SHAPE, segments=segments))
    t0 = time.perf_counter()
    trim = trim_to_resonance("crossed-loops", params)
    t1 = time.perf_counter()
    harness = design_harness(trim.solution)
    t2 = time.perf_counter()
    mom.solve(trim.model)
    t3 = time.perf_counter()
    table = build_template_table("crossed-loops", dict(SHAPE, segments=segments, trim="resonance", feed="harness"))
    t4 = time.perf_counter()
    return {
        "trim_s": t1 - t0,
        "harness_s": t2 - t1,
        "one_solve_s": t3 - t2,
        "whole_table_s": t4 - t3,
        "solves": ", ".join(f"{n} at {label}" for label, n in trim.solves),
        "trimmed": table.header["trimmed"],
        "element": table.header["element_impedance_ohm"],
        "phasing": table.header["phasing_line"],
        "match": table.header["matching_section"],
        "zenith_ar_db": harness.state.axial_ratio_db,
        "feed": f"{table.header['feed_impedance_ohm']} ohm, VSWR {table.header['feed_vswr']}",
    }


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--segments", type=int, default=200)
    parser.add_argument("--repeat", type=int, default=2)
    args = parser.parse_args()
    warnings.simplefilter("ignore")  # the thin-wire note on 200-segment loops of 1 mm wire
    for segments in (48, args.segments):
        runs = [run(segments) for _ in range(max(1, args.repeat))]
        best = min(runs, key=lambda r: r["trim_s"] + r["harness_s"])
        print(f"crossed loops, {segments} segments per loop (solves: {best['solves']})")
        print(
            f"  trim {best['trim_s']:.2f} s + harness design {best['harness_s']:.3f} s = "
            f"{best['trim_s'] + best['harness_s']:.2f} s   (one solve {best['one_solve_s']:.2f} s; "
            f"whole table with trim, harness and tabulation {min(r['whole_table_s'] for r in runs):.2f} s)"
        )
        print(f"  {best['trimmed']}; element {best['element']} ohm; zenith axial ratio {best['zenith_ar_db']:.2f} dB")
        print(f"  phasing line {best['phasing']}")
        print(f"  matching section {best['match']}; feed {best['feed']}")


if __name__ == "__main__":
    main()

"""Write the element files of the example scenarios: an invented screening catalog and a polar set.

Every object here is invented: names (EXCAT-0001 ..., SKUAVEN-1 ...), catalog numbers
(80001 ..., 88001 ...) and orbits. The orbits are built exactly as the demo's are (see
``make_demo_elements.py``: Kepler's third law for the mean motion, J2 nodal regression for the
sun-synchronous inclinations, sgp4's ``Satrec.sgp4init`` and ``export_tle``).

The catalog spreads its objects over heights of 400 to 1200 km and over the inclinations a
low-Earth catalog holds (about 40 to 100 deg, many near sun-synchronous), with ascending
nodes and mean anomalies spread by golden-ratio steps so that no two objects fly together.
Nothing is drawn at random, so the files are the same on every run.

Run from the repository root:  python sample_tle/make_example_elements.py [--output-dir DIR]
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
if str(HERE) not in sys.path:
    sys.path.insert(0, str(HERE))

from make_demo_elements import DemoOrbit, build_satrec, export_tle  # noqa: E402

from planner.fileio import REPLACE_ANY, write_atomically  # noqa: E402

CATALOG_SIZE = 300
CATALOG_FIRST_NUMBER = 80001
GOLDEN_FRACTION = 0.6180339887498949  # (sqrt(5) - 1) / 2: the most evenly spreading step on a circle
CATALOG_INCLINATIONS_DEG = (None, 97.6, 53.0, 45.0, 65.0, 82.5, 98.7, 51.6, None, 70.0)
"""Cycled through; None is sun-synchronous at the object's height."""

POLAR_ORBITS = (
    DemoOrbit(88001, "SKUAVEN-1", "2026-981A", 510.0, None, 0.0002, None, 10.5, 60.0, 30.0, 1.0e-4, 1.5e-5, 77, 1210),
    DemoOrbit(88002, "PETRELLO", "2026-982A", 690.0, 98.2, 0.0010, 40.0, None, 120.0, 250.0, 4.0e-5, 3.0e-6, 142, 2260),
    DemoOrbit(88003, "ICEFERN-3", "2026-983C", 450.0, 87.9, 0.0006, 290.0, None, 200.0, 110.0, 2.0e-4, 9.0e-5, 58, 930),
)
"""Near-polar invented satellites heard by the example polar station."""


def catalog_orbits() -> list[DemoOrbit]:
    """The invented screening catalog, in catalog-number order."""
    orbits = []
    for index in range(CATALOG_SIZE):
        spread = (index * GOLDEN_FRACTION) % 1.0
        height_km = 400.0 + 800.0 * ((index * 0.7548776662466927) % 1.0)  # second golden-like step
        inclination = CATALOG_INCLINATIONS_DEG[index % len(CATALOG_INCLINATIONS_DEG)]
        raan = None if inclination is None else 360.0 * spread
        ltan = 6.0 + 12.0 * spread if inclination is None else None
        number = CATALOG_FIRST_NUMBER + index
        orbits.append(
            DemoOrbit(
                number,
                f"EXCAT-{index + 1:04d}",
                f"2026-{700 + index // 26:03d}{'ABCDEFGHJKLMNPQRSTUVWXYZAB'[index % 26]}",
                height_km,
                inclination,
                0.0005 + 0.003 * ((index * 0.381966) % 1.0),
                raan,
                ltan,
                (137.5 * index) % 360.0,
                (222.5 * index) % 360.0,
                1.0e-4,
                1.0e-5,
                1 + index % 999,
                100 + index,
            )
        )
    return orbits


def tle_text(orbits: list[DemoOrbit]) -> str:
    """Three-line TLE text of the orbits."""
    lines = []
    for orbit in orbits:
        line1, line2 = export_tle(build_satrec(orbit))
        lines.append(f"{orbit.name}\n{line1}\n{line2}\n")
    return "".join(lines)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--output-dir", type=Path, default=HERE, help="folder for the files (default: this script's folder)")
    args = parser.parse_args(argv)
    write_atomically(args.output_dir / "example_catalog.tle", tle_text(catalog_orbits()), rules=REPLACE_ANY)
    write_atomically(args.output_dir / "example_polar.tle", tle_text(list(POLAR_ORBITS)), rules=REPLACE_ANY)
    print(f"wrote example_catalog.tle, example_polar.tle in {args.output_dir}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

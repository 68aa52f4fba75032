"""Write the demo element sets: five invented satellites in TLE, 3LE and OMM (XML/CSV/JSON).

Every satellite, name, catalog number, designator and orbit here is invented for the demo
scenario; none describes a real object.

The orbits are set up from a height, an inclination and a few angles:

* mean motion from Kepler's third law, n = sqrt(mu / a^3), a = R + h, with
  R = 6378.137 km (WGS84 equatorial radius) and mu = 398600.4418 km^3/s^2 (WGS84);
* a sun-synchronous inclination from the J2 nodal regression (Vallado, Fundamentals of
  Astrodynamics and Applications, secular J2 effects; also Wertz & Larson, Space Mission
  Analysis and Design): dOmega/dt = -3/2 n J2 (R/p)^2 cos i, set equal to 360 deg per
  tropical year;
* the ascending node of a sun-synchronous orbit from a local time of the ascending node,
  RAAN = right ascension of the mean Sun + 15 deg/h * (LTAN - 12 h), the mean Sun's right
  ascension taken as its mean longitude L = 280.460 deg + 0.9856474 deg/day * (JD - 2451545.0)
  (Astronomical Almanac low-precision solar coordinates; from memory).

The satrecs are built with sgp4's Satrec.sgp4init (WGS72, opsmode 'i') and printed with
sgp4.exporter.export_tle, which computes the checksums. The OMM files carry exactly the
digits the TLE lines print (read back from the printed columns), so every form describes
the same orbit.

Run from the repository root:  python sample_tle/make_demo_elements.py [--output-dir DIR]
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from dataclasses import dataclass
from datetime import UTC, datetime, timedelta
from decimal import Decimal
from pathlib import Path
from xml.sax.saxutils import escape

REPO_ROOT = Path(__file__).resolve().parent.parent
if str(REPO_ROOT) not in sys.path:
    sys.path.insert(0, str(REPO_ROOT))

from sgp4.api import WGS72, Satrec  # noqa: E402
from sgp4.exporter import export_tle  # noqa: E402

from planner.fileio import REPLACE_ANY, write_atomically  # noqa: E402

EARTH_RADIUS_KM = 6378.137  # WGS84 equatorial radius
MU_KM3_S2 = 398600.4418  # WGS84 gravitational parameter
J2 = 1.08262668e-3  # Earth's second zonal harmonic (EGM96 / WGS84 value, from memory)
TROPICAL_YEAR_DAYS = 365.2421897  # mean tropical year (from memory)
EPOCH = datetime(2027, 1, 3, 12, 0, 0, tzinfo=UTC)  # the demo window opens 2027-01-04T00:00Z
SGP4_EPOCH0 = datetime(1949, 12, 31, tzinfo=UTC)  # sgp4init counts days from here
J2000_JD = 2451545.0
J2000 = datetime(2000, 1, 1, 12, 0, 0, tzinfo=UTC)
REV_PER_DAY_PER_RAD_PER_MIN = 1440.0 / (2.0 * math.pi)

OMM_KEYS = (
    "OBJECT_NAME",
    "OBJECT_ID",
    "EPOCH",
    "MEAN_MOTION",
    "ECCENTRICITY",
    "INCLINATION",
    "RA_OF_ASC_NODE",
    "ARG_OF_PERICENTER",
    "MEAN_ANOMALY",
    "EPHEMERIS_TYPE",
    "CLASSIFICATION_TYPE",
    "NORAD_CAT_ID",
    "ELEMENT_SET_NO",
    "REV_AT_EPOCH",
    "BSTAR",
    "MEAN_MOTION_DOT",
    "MEAN_MOTION_DDOT",
)


@dataclass(frozen=True)
class DemoOrbit:
    norad_id: int
    name: str
    object_id: str  # invented international designator, launch numbers no real launch uses
    height_km: float  # height of the semi-major axis above EARTH_RADIUS_KM
    inclination_deg: float | None  # None: sun-synchronous for the height
    eccentricity: float
    raan_deg: float | None  # None: from ltan_h (sun-synchronous orbits)
    ltan_h: float | None  # local time of the ascending node, hours
    argp_deg: float
    mean_anomaly_deg: float
    bstar_per_earth_radius: float
    ndot_over_2_rev_per_day2: float  # the TLE field (half the first derivative)
    element_set_no: int
    rev_at_epoch: int


DEMO_ORBITS = (
    DemoOrbit(99901, "WRENLING-1", "2026-901A", 550.0, None, 0.0001, None, 22.5, 90.0, 10.0, 1.1e-4, 1.8e-5, 211, 1520),
    DemoOrbit(99902, "TARNBECK", "2026-902A", 420.0, 51.64, 0.0005, 120.0, None, 45.0, 200.0, 2.6e-4, 1.5e-4, 318, 4107),
    DemoOrbit(99903, "OSTRAVEL-2", "2026-903B", 800.0, 97.8, 0.0008, 300.0, None, 270.0, 80.0, 2.2e-5, 1.1e-6, 127, 2893),
    DemoOrbit(99904, "CALDERWISP", "2026-904A", 520.0, None, 0.0001, None, 6.0, 0.0, 300.0, 1.3e-4, 2.4e-5, 96, 840),
    DemoOrbit(99905, "MERROWFALL", "2026-905C", 600.0, 43.0, 0.002, 210.0, None, 135.0, 150.0, 6.0e-5, 9.5e-6, 402, 3366),
)


def kepler_mean_motion_rev_per_day(height_km: float) -> float:
    """n = sqrt(mu / a^3) for a = R + h (Kepler's third law), in revolutions a day."""
    a_km = EARTH_RADIUS_KM + height_km
    return math.sqrt(MU_KM3_S2 / a_km**3) * 86400.0 / (2.0 * math.pi)


def sun_synchronous_inclination_deg(height_km: float, eccentricity: float = 0.0) -> float:
    """Inclination whose J2 nodal regression matches the Sun's mean motion (360 deg a tropical year)."""
    a_km = EARTH_RADIUS_KM + height_km
    n_rad_s = math.sqrt(MU_KM3_S2 / a_km**3)
    p_km = a_km * (1.0 - eccentricity**2)
    node_rate_rad_s = 2.0 * math.pi / (TROPICAL_YEAR_DAYS * 86400.0)
    cos_i = -node_rate_rad_s / (1.5 * n_rad_s * J2 * (EARTH_RADIUS_KM / p_km) ** 2)
    return math.degrees(math.acos(cos_i))


def mean_sun_right_ascension_deg(moment: datetime) -> float:
    """Mean longitude of the Sun, L = 280.460 + 0.9856474 d (d days from J2000.0), in [0, 360)."""
    days = (moment - J2000).total_seconds() / 86400.0
    return (280.460 + 0.9856474 * days) % 360.0


def build_satrec(orbit: DemoOrbit) -> Satrec:
    inclination_deg = orbit.inclination_deg
    if inclination_deg is None:
        inclination_deg = sun_synchronous_inclination_deg(orbit.height_km, orbit.eccentricity)
    raan_deg = orbit.raan_deg
    if raan_deg is None:
        raan_deg = (mean_sun_right_ascension_deg(EPOCH) + 15.0 * (orbit.ltan_h - 12.0)) % 360.0
    mean_motion = kepler_mean_motion_rev_per_day(orbit.height_km)
    delta = EPOCH - SGP4_EPOCH0
    epoch_days = delta.days + delta.seconds / 86400.0
    satrec = Satrec()
    satrec.sgp4init(
        WGS72,
        "i",
        orbit.norad_id,
        epoch_days,
        orbit.bstar_per_earth_radius,
        orbit.ndot_over_2_rev_per_day2 / (REV_PER_DAY_PER_RAD_PER_MIN * 1440.0),
        0.0,
        orbit.eccentricity,
        math.radians(orbit.argp_deg),
        math.radians(inclination_deg),
        math.radians(orbit.mean_anomaly_deg),
        mean_motion / REV_PER_DAY_PER_RAD_PER_MIN,
        math.radians(raan_deg),
    )
    if satrec.error:
        raise SystemExit(f"sgp4init failed for {orbit.name}: error {satrec.error}")
    satrec.classification = "U"
    year, number = orbit.object_id.split("-")
    satrec.intldesg = year[2:] + number
    satrec.ephtype = 0
    satrec.elnum = orbit.element_set_no
    satrec.revnum = orbit.rev_at_epoch
    return satrec


def _implied_decimal(field: str) -> Decimal:
    """TLE ' 12345-4' -> Decimal('0.12345E-4')."""
    sign = "-" if field[0] == "-" else ""
    return Decimal(f"{sign}0.{field[1:6]}E{field[6]}{field[7]}")


def omm_fields_from_tle(name: str, line1: str, line2: str) -> dict[str, str]:
    """OMM keyword values as text, carrying exactly the digits the TLE prints."""
    two_digit_year = int(line1[18:20])
    year = 2000 + two_digit_year if two_digit_year < 57 else 1900 + two_digit_year
    day_of_year = Decimal(line1[20:32])
    epoch = datetime(year, 1, 1) + timedelta(microseconds=int(((day_of_year - 1) * 86_400_000_000).to_integral_value()))
    intldesg = line1[9:17].strip()
    launch_year = int(intldesg[:2])
    launch_year += 2000 if launch_year < 57 else 1900
    return {
        "OBJECT_NAME": name,
        "OBJECT_ID": f"{launch_year}-{intldesg[2:]}",
        "EPOCH": epoch.strftime("%Y-%m-%dT%H:%M:%S.%f"),
        "MEAN_MOTION": line2[52:63].strip(),
        "ECCENTRICITY": "0." + line2[26:33],
        "INCLINATION": line2[8:16].strip(),
        "RA_OF_ASC_NODE": line2[17:25].strip(),
        "ARG_OF_PERICENTER": line2[34:42].strip(),
        "MEAN_ANOMALY": line2[43:51].strip(),
        "EPHEMERIS_TYPE": line1[62],
        "CLASSIFICATION_TYPE": line1[7],
        "NORAD_CAT_ID": str(int(line1[2:7])),
        "ELEMENT_SET_NO": str(int(line1[64:68])),
        "REV_AT_EPOCH": str(int(line2[63:68])),
        "BSTAR": _decimal_text(_implied_decimal(line1[53:61])),
        "MEAN_MOTION_DOT": _decimal_text(Decimal(line1[33:43].strip())),
        "MEAN_MOTION_DDOT": _decimal_text(_implied_decimal(line1[44:52])),
    }


def _decimal_text(value: Decimal) -> str:
    text = f"{value:f}"
    return "0" if Decimal(text) == 0 else text


def omm_xml(records: list[dict[str, str]]) -> str:
    """CCSDS 502.0-B NDM/XML: one <omm> a satellite, each with one segment."""

    def items(keys, record, indent):
        return "".join(f"{indent}<{key}>{escape(record[key])}</{key}>\n" for key in keys)

    parts = ['<?xml version="1.0" encoding="UTF-8"?>\n', "<ndm>\n"]
    for record in records:
        metadata = {
            "OBJECT_NAME": record["OBJECT_NAME"],
            "OBJECT_ID": record["OBJECT_ID"],
            "CENTER_NAME": "EARTH",
            "REF_FRAME": "TEME",
            "TIME_SYSTEM": "UTC",
            "MEAN_ELEMENT_THEORY": "SGP4",
        }
        parts += [
            '  <omm id="CCSDS_OMM_VERS" version="2.0">\n',
            "    <header>\n",
            "      <COMMENT>Invented demo satellite; not a real object.</COMMENT>\n",
            f"      <CREATION_DATE>{EPOCH.strftime('%Y-%m-%dT%H:%M:%S')}</CREATION_DATE>\n",
            "      <ORIGINATOR>planner demo data</ORIGINATOR>\n",
            "    </header>\n",
            "    <body>\n",
            "      <segment>\n",
            "        <metadata>\n",
            items(metadata, metadata, " " * 10),
            "        </metadata>\n",
            "        <data>\n",
            "          <meanElements>\n",
            items(
                ("EPOCH", "MEAN_MOTION", "ECCENTRICITY", "INCLINATION", "RA_OF_ASC_NODE", "ARG_OF_PERICENTER", "MEAN_ANOMALY"),
                record,
                " " * 12,
            ),
            "          </meanElements>\n",
            "          <tleParameters>\n",
            items(
                (
                    "EPHEMERIS_TYPE",
                    "CLASSIFICATION_TYPE",
                    "NORAD_CAT_ID",
                    "ELEMENT_SET_NO",
                    "REV_AT_EPOCH",
                    "BSTAR",
                    "MEAN_MOTION_DOT",
                    "MEAN_MOTION_DDOT",
                ),
                record,
                " " * 12,
            ),
            "          </tleParameters>\n",
            "        </data>\n",
            "      </segment>\n",
            "    </body>\n",
            "  </omm>\n",
        ]
    parts.append("</ndm>\n")
    return "".join(parts)


def omm_csv(records: list[dict[str, str]]) -> str:
    rows = [",".join(OMM_KEYS)]
    for record in records:
        rows.append(",".join(record[key] for key in OMM_KEYS))
    return "\n".join(rows) + "\n"


def omm_json(records: list[dict[str, str]]) -> str:
    text_keys = {"OBJECT_NAME", "OBJECT_ID", "EPOCH", "CLASSIFICATION_TYPE"}
    integer_keys = {"EPHEMERIS_TYPE", "NORAD_CAT_ID", "ELEMENT_SET_NO", "REV_AT_EPOCH"}
    out = []
    for record in records:
        entry = {}
        for key in OMM_KEYS:
            value = record[key]
            if key in text_keys:
                entry[key] = value
            elif key in integer_keys:
                entry[key] = int(value)
            else:
                entry[key] = float(value)  # repr of the float is the printed decimal again
        out.append(entry)
    return json.dumps(out, indent=2) + "\n"


def self_check(output_dir: Path, tles: list[tuple[str, str, str]]) -> None:
    """Reload what was written: sgp4's reader, skyfield's EarthSatellite and planner.elements."""
    from skyfield.api import EarthSatellite, load

    from planner.elements import read_elements

    timescale = load.timescale(builtin=True)
    for name, line1, line2 in tles:
        satrec = Satrec.twoline2rv(line1, line2)
        if satrec.error:
            raise SystemExit(f"{name}: twoline2rv error {satrec.error}")
        satellite = EarthSatellite(line1, line2, name, timescale)
        if satellite.model.satnum != satrec.satnum:
            raise SystemExit(f"{name}: skyfield reads a different catalog number")
    expected = [(int(l1[2:7]), name) for name, l1, _ in tles]
    for file_name in ("demo.tle", "demo.2le", "demo_omm.xml", "demo_omm.csv", "demo_omm.json"):
        sets = read_elements(output_dir / file_name)
        got = [(es.norad_id, es.name) for es in sets]
        want = expected if file_name != "demo.2le" else [(i, "") for i, _ in expected]
        if got != want:
            raise SystemExit(f"{file_name}: read back {got}, expected {want}")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument(
        "--output-dir",
        type=Path,
        default=Path(__file__).resolve().parent,
        help="folder for the element files (default: this script's folder)",
    )
    args = parser.parse_args(argv)
    output_dir: Path = args.output_dir

    tles = []
    for orbit in DEMO_ORBITS:
        line1, line2 = export_tle(build_satrec(orbit))
        tles.append((orbit.name, line1, line2))
    records = [omm_fields_from_tle(name, l1, l2) for name, l1, l2 in tles]

    write_atomically(output_dir / "demo.tle", "".join(f"{n}\n{a}\n{b}\n" for n, a, b in tles), rules=REPLACE_ANY)
    write_atomically(output_dir / "demo.2le", "".join(f"{a}\n{b}\n" for _, a, b in tles), rules=REPLACE_ANY)
    write_atomically(output_dir / "demo_omm.xml", omm_xml(records), rules=REPLACE_ANY)
    write_atomically(output_dir / "demo_omm.csv", omm_csv(records), rules=REPLACE_ANY)
    write_atomically(output_dir / "demo_omm.json", omm_json(records), rules=REPLACE_ANY)
    self_check(output_dir, tles)
    for name, line1, line2 in tles:
        print(f"{name}\n{line1}\n{line2}")
    print(f"wrote demo.tle, demo.2le, demo_omm.xml, demo_omm.csv, demo_omm.json in {output_dir}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

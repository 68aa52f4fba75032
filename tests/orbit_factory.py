"""Test helper: invented orbits built with SGP4's own initialiser and exported as TLEs.

Every satellite here is made up for the tests. Building from orbit height and
inclination (Kepler's third law, mu = 398600.4418 km^3/s^2) keeps the tests free of
any real element set.
"""

from __future__ import annotations

import importlib.util
import sys
from datetime import UTC, datetime
from math import pi, sqrt
from pathlib import Path

from sgp4.api import WGS72, Satrec
from sgp4.exporter import export_tle

MU_KM3_S2 = 398600.4418
EARTH_RADIUS_KM = 6378.137
_EPOCH0 = datetime(1949, 12, 31, tzinfo=UTC)


def mean_motion_rad_min(height_km: float, eccentricity: float = 0.0) -> float:
    """Mean motion (rad/min) of an orbit whose semi-major axis is R + height."""
    a = EARTH_RADIUS_KM + height_km
    return sqrt(MU_KM3_S2 / a**3) * 60.0


def make_tle(
    norad_id: int,
    *,
    height_km: float,
    inclination_deg: float,
    eccentricity: float = 0.0005,
    raan_deg: float = 0.0,
    argp_deg: float = 90.0,
    mean_anomaly_deg: float = 0.0,
    epoch: datetime = datetime(2027, 1, 3, 12, tzinfo=UTC),
    bstar: float = 2.0e-5,
) -> tuple[str, str]:
    """Two TLE lines (with real checksums) for an invented orbit."""
    satrec = Satrec()
    epoch_days = (epoch - _EPOCH0).total_seconds() / 86400.0
    satrec.sgp4init(
        WGS72,
        "i",
        norad_id,
        epoch_days,
        bstar,
        0.0,
        0.0,
        eccentricity,
        argp_deg * pi / 180,
        inclination_deg * pi / 180,
        mean_anomaly_deg * pi / 180,
        mean_motion_rad_min(height_km),
        raan_deg * pi / 180,
    )
    satrec.classification = "U"
    satrec.intldesg = "27001A"
    line1, line2 = export_tle(satrec)
    return line1, line2


def write_three_line(path, entries: list[tuple[str, tuple[str, str]]]) -> None:
    """Write [(name, (line1, line2)), ...] as a three-line TLE file."""
    text = "".join(f"{name}\n{l1}\n{l2}\n" for name, (l1, l2) in entries)
    path.write_text(text)


def load_demo_element_generator():
    """The shipped generator of the demo element files (sample_tle/make_demo_elements.py) as a module."""
    path = Path(__file__).resolve().parents[1] / "sample_tle" / "make_demo_elements.py"
    spec = importlib.util.spec_from_file_location("make_demo_elements", path)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up while the class is built
    try:
        spec.loader.exec_module(module)
    finally:
        sys.modules.pop(spec.name, None)
    return module

"""Machine-readable outputs: the column contracts of DESIGN.md as CSV and JSON."""

from __future__ import annotations

import csv
import io
import json
import math
from datetime import datetime, timedelta, timezone
from typing import Iterable, Sequence

from planner.passes import Pass

PASS_COLUMNS = (
    "satellite", "norad_id", "aos_utc", "tca_utc", "los_utc", "duration_s", "max_elevation_deg",
    "aos_azimuth_deg", "tca_azimuth_deg", "los_azimuth_deg", "min_range_km",
)


def iso_utc(moment: datetime) -> str:
    """ISO 8601 UTC to the nearest second, ending in ``Z``."""
    moment = moment.astimezone(timezone.utc)
    rounded = (moment + timedelta(microseconds=500_000)).replace(microsecond=0)
    return rounded.strftime("%Y-%m-%dT%H:%M:%SZ")


def pass_row(p: Pass) -> dict:
    """One pass as the contract's columns (angles to 0.01 deg, ranges to 0.1 km)."""
    return {
        "satellite": p.satellite,
        "norad_id": p.norad_id,
        "aos_utc": iso_utc(p.aos_utc),
        "tca_utc": iso_utc(p.tca_utc),
        "los_utc": iso_utc(p.los_utc),
        "duration_s": round(p.duration_s, 1),
        "max_elevation_deg": round(p.max_elevation_deg, 2),
        "aos_azimuth_deg": round(p.aos_azimuth_deg, 2),
        "tca_azimuth_deg": round(p.tca_azimuth_deg, 2),
        "los_azimuth_deg": round(p.los_azimuth_deg, 2),
        "min_range_km": round(p.min_range_km, 1),
    }


def to_csv(rows: Iterable[dict], columns: Sequence[str]) -> str:
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=list(columns), lineterminator="\n", extrasaction="ignore")
    writer.writeheader()
    for row in rows:
        writer.writerow(row)
    return buffer.getvalue()


def _finite(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def to_json(data) -> str:
    """JSON with NaN/inf written as null (strict JSON readers refuse NaN)."""

    def clean(obj):
        if isinstance(obj, dict):
            return {k: clean(v) for k, v in obj.items()}
        if isinstance(obj, (list, tuple)):
            return [clean(v) for v in obj]
        return _finite(obj)

    return json.dumps(clean(data), indent=2) + "\n"

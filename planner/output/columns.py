"""Pass tables as columns, written as CSV and JSON without a Python object per cell.

A catalog's week is tens of thousands of passes; formatting each time through
``datetime.strftime`` and each row through a dict costs seconds. Here a table is a dict
of numpy arrays (one per column), times are formatted in one ``np.datetime_as_string``
call, and the text of each column is made once, then joined row by row. The bytes are
those of ``planner.output.export.to_csv`` and ``to_json`` on the same rows: the same
rounding (Python's ``round``), the same float text (``repr``), the same quoting.
"""

from __future__ import annotations

import json
from collections.abc import Mapping, Sequence
from datetime import UTC, datetime, timedelta
from itertools import repeat

import numpy as np

from planner.output.export import csv_cell
from planner.passes import Pass

_UNIX_EPOCH_UTC = datetime(1970, 1, 1, tzinfo=UTC)
_MICROSECOND = timedelta(microseconds=1)
_HALF_SECOND = np.timedelta64(500_000, "us")


def _utc_us(moments) -> np.ndarray:
    """Aware datetimes as numpy datetime64 (microseconds, UTC): exact integer microseconds
    from the Unix epoch, ten times quicker than handing numpy naive copies."""
    return np.array([(m - _UNIX_EPOCH_UTC) // _MICROSECOND for m in moments], dtype=np.int64).astype("datetime64[us]")


def _rounded(values, digits: int) -> np.ndarray:
    """Python's ``round`` of each value (exact decimal rounding, unlike ``np.round``)."""
    return np.array(list(map(round, values, repeat(digits))), dtype=np.float64)


def pass_table(passes: Sequence[Pass]) -> dict[str, np.ndarray]:
    """The contract's pass columns (``PASS_COLUMNS``) as arrays, rounded as ``pass_row`` rounds.

    Times are datetime64 (microseconds, UTC), from aware datetimes in any zone.
    """
    aos = _utc_us(p.aos_utc for p in passes)
    los = _utc_us(p.los_utc for p in passes)
    duration_s = (los - aos).astype(np.int64) / 1e6  # exact, as timedelta.total_seconds
    return {
        "satellite": np.array([p.satellite for p in passes], dtype=object),
        "norad_id": np.array([p.norad_id for p in passes], dtype=np.int64),
        "aos_utc": aos,
        "tca_utc": _utc_us(p.tca_utc for p in passes),
        "los_utc": los,
        "duration_s": _rounded(duration_s.tolist(), 1),
        "max_elevation_deg": _rounded([p.max_elevation_deg for p in passes], 2),
        "aos_azimuth_deg": _rounded([p.aos_azimuth_deg for p in passes], 2),
        "tca_azimuth_deg": _rounded([p.tca_azimuth_deg for p in passes], 2),
        "los_azimuth_deg": _rounded([p.los_azimuth_deg for p in passes], 2),
        "min_range_km": _rounded([p.min_range_km for p in passes], 1),
    }


def iso_utc_strings(times: np.ndarray) -> np.ndarray:
    """datetime64 UTC times as ISO 8601 text to the nearest second ending in ``Z`` (as ``iso_utc``)."""
    seconds = (np.asarray(times, dtype="datetime64[us]") + _HALF_SECOND).astype("datetime64[s]")  # floors
    return np.char.add(np.datetime_as_string(seconds, unit="s"), "Z")


def _each_once(values: np.ndarray, write) -> list[str]:
    """``write`` of each cell, called once per distinct value (a catalog repeats names)."""
    made: dict[tuple, str] = {}
    cells = []
    for value in values.tolist():
        key = (type(value), value)  # 1 and 1.0 are equal keys but different text
        text = made.get(key)
        if text is None:
            text = made[key] = write(value)
        cells.append(text)
    return cells


def _csv_cells(values: np.ndarray) -> list[str]:
    """The CSV text of one column, as ``csv_cell`` writes each value."""
    if values.dtype.kind == "M":
        return iso_utc_strings(values).tolist()
    if values.dtype.kind in "fiu":
        return list(map(str, values.tolist()))
    return _each_once(values, csv_cell)


def _json_value(value) -> str:
    if isinstance(value, float) and not np.isfinite(value):
        return "null"  # strict JSON readers refuse NaN, as to_json
    return json.dumps(value)


def _json_cells(values: np.ndarray) -> list[str]:
    """The JSON text of one column, as ``json.dumps`` writes each value in ``to_json``."""
    if values.dtype.kind == "M":
        return [f'"{text}"' for text in iso_utc_strings(values).tolist()]
    if values.dtype.kind in "iu":
        return list(map(str, values.tolist()))
    if values.dtype.kind == "f":
        cells = np.array(list(map(repr, values.tolist())), dtype=object)
        cells[~np.isfinite(values)] = "null"
        return cells.tolist()
    return _each_once(values, _json_value)


def table_csv(table: Mapping[str, np.ndarray], columns: Sequence[str]) -> str:
    """The columns as CSV, byte for byte what ``to_csv`` writes for the same rows."""
    header = ",".join(csv_cell(name) for name in columns)
    body = map(",".join, zip(*(_csv_cells(np.asarray(table[name])) for name in columns)))
    return "\n".join([header, *body]) + "\n"


def table_json(table: Mapping[str, np.ndarray], columns: Sequence[str]) -> str:
    """The columns as a JSON list of objects, byte for byte what ``to_json`` writes for the same rows."""
    cells = [_json_cells(np.asarray(table[name])) for name in columns]
    if not columns or not cells[0]:
        return "[]\n"
    # json.dumps(..., indent=2) of a list of flat objects: the braces at 2 spaces, keys at 4.
    keys = [json.dumps(name).replace("{", "{{").replace("}", "}}") for name in columns]
    template = "  {{\n" + ",\n".join(f"    {key}: {{}}" for key in keys) + "\n  }}"
    return "[\n" + ",\n".join(map(template.format, *cells)) + "\n]\n"


def concatenated(tables: Sequence[Mapping[str, np.ndarray]], columns: Sequence[str]) -> dict[str, np.ndarray]:
    """Several tables with the same columns, one after the other."""
    return {name: np.concatenate([np.asarray(t[name]) for t in tables]) for name in columns}

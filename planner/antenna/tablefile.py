"""The pattern-table file: parsing (with the header checks and the physical limits), formatting,
a capped read from disk and an atomic write.

Table format (our own, see patterns/README.md)
-------------------------------------
A UTF-8 CSV file::

    # frequency_mhz = 436
    # model = ...
    # generated_by = planner pattern build
    # parameters = spacing_wavelengths=0.25; frequency_hz=436000000; ...
    # gain_reference = ...
    elevation_deg,azimuth_deg,gain_rhcp_dbic,gain_lhcp_dbic
    -90,0,-60.000,-60.000
    ...

``#`` lines of the form ``key = value`` before the column row are the header; ``frequency_mhz``
is required, ``model``, ``generated_by``, ``parameters`` and ``gain_reference`` are expected, and
``feed_vswr`` (>= 1), ``feed_impedance_ohm`` (complex, e.g. ``73.1+42.5j``) and
``radiation_efficiency`` (0..1, informational: the gain columns already include it) are optional.
Other keys are kept as text. ``#`` lines that are not ``key = value`` are free comments.
The column row is ``elevation_deg[,azimuth_deg],gain_rhcp_dbic,gain_lhcp_dbic`` (any order); a
table without ``azimuth_deg`` is azimuth-symmetric. Rows may come in any order but must form a full
grid: every elevation has a row at every azimuth. Elevations cover -90..90 deg (the lower half sets
the ground noise an antenna picks up); azimuths lie in [0, 360) (0 and 360 are one direction).

A written table names its builder (``builder = <template>``) so it can be rebuilt from its header
(``planner.antenna.registry``); ``BUILDER_ALIASES`` reads the spellings of earlier versions.
"""

from __future__ import annotations

import math
import re
from pathlib import Path
from typing import Any

import numpy as np

from planner.antenna.table import PatternTable, db_to_linear, sphere_mean_gain
from planner.bounds import FREQUENCY_MAX_MHZ, FREQUENCY_MIN_MHZ
from planner.errors import UserError, quoted
from planner.fileio import REPLACE_ANY, WriteRules, write_atomically
from planner.limits import (
    MEMORY_LIMIT_BYTES,
    PATTERN_BYTES_PER_POINT,
    PATTERN_FILE_LIMIT_BYTES,
    ReadWording,
    check_allocation,
    read_text_capped,
)

GAIN_CEILING_DBIC = 40.0
"""Largest gain a table may hold, in any direction (each column and their sum). The tables are of
fixed, unpointed station antennas, omnidirectional and low-gain (a few dBic); 40 dBic is a beam
about 2 deg wide (G ~ 41253 deg^2 / beam solid angle, Kraus; from memory), which a passing
satellite crosses in seconds, so no fixed antenna this tool compares comes near it (common
practice, no published source). Anything above is a unit or typing error."""

COLUMNS_REQUIRED = ("elevation_deg", "gain_rhcp_dbic", "gain_lhcp_dbic")
COLUMNS_ALLOWED = ("elevation_deg", "azimuth_deg", "gain_rhcp_dbic", "gain_lhcp_dbic")
_COLUMN_ROW_HELP = "elevation_deg[,azimuth_deg],gain_rhcp_dbic,gain_lhcp_dbic"
_KEY_RE = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")


def pattern_points_limit() -> int:
    """Most grid points a pattern table may have: what the reader can hold within the memory
    limit (``planner.limits.PATTERN_BYTES_PER_POINT``)."""
    return int(MEMORY_LIMIT_BYTES // PATTERN_BYTES_PER_POINT)


# A table's header names its builder (``builder = crossed-loops``) so that it can be rebuilt with
# other parameters (the reflector sweep, the harness cut-error check). Only the project's own
# template names are accepted. Headers written by earlier versions held the builder function's
# dotted path; those paths are read as aliases of the template names.
BUILDER_ALIASES = {
    "planner.patterns.turnstile_over_reflector": "image-turnstile",
    "planner.patterns.isotropic_rhcp": "isotropic-rhcp",
    "planner.synth.tables.dipole_table": "dipole",
    "planner.synth.tables.turnstile_table": "turnstile",
    "planner.synth.tables.crossed_loops_table": "crossed-loops",
}


# --------------------------------------------------------------------------------------------
# Reading
# --------------------------------------------------------------------------------------------


_READ_WORDING = ReadWording(
    not_found="{path}: pattern file not found; give the path of a pattern table CSV (see patterns/README.md)",
    folder="{path}: is a folder; give the path of a pattern table CSV file",
    not_text="{path}: not UTF-8 text (bad byte at offset {offset}); a pattern table is a UTF-8 CSV file",
    other="{path}: cannot read the pattern file ({reason})",
)
"""The messages ``load_pattern`` has always given for a file it cannot read."""


def load_pattern(path: str | Path) -> PatternTable:
    """Read and validate a pattern table; problems raise a one-line UserError "path:line: ..."."""
    source = str(path)
    p = Path(path)
    text = read_text_capped(p, what="pattern table", limit_bytes=PATTERN_FILE_LIMIT_BYTES, wording=_READ_WORDING)
    return parse_pattern(text, source=source, path=p)


def _number(text: str, what: str, where: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise UserError(f"{where}: {what} {quoted(text, 24)} is not a number") from None
    if not math.isfinite(value):
        raise UserError(f"{where}: {what} must be a finite number, got {quoted(text, 24)}")
    return value


def _fmt_deg(value: float) -> str:
    text = f"{value:.6f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


# Design frequencies a table may have: the link frequencies of planner.bounds.

# Energy conservation: a passive antenna radiates at most the power it is fed, so its total gain
# G_RHCP + G_LHCP averaged over the sphere equals its radiation efficiency, at most 1 (IEEE Std 145
# definition of gain; Balanis, Antenna Theory, ch. 2, gain and antenna efficiency). The table's mean is taken of its own
# interpolant (sphere_mean_gain), which can fill nulls between rows on a coarse grid and over real
# ground conserves power only to 1-2 % (planner.antenna.synth.ground); 0.6 dB (x 1.15) covers both, and
# gains written to 0.001 dB. The shipped tables give 0.91 to 1.00.
SPHERE_MEAN_GAIN_TOLERANCE = 1.15


def _header_values(header: dict[str, str], header_lines: dict[str, int], source: str, fallback_line: int) -> dict[str, Any]:
    """Check the known header keys; return the typed values."""
    if "frequency_mhz" not in header:
        raise UserError(
            f"{source}:{fallback_line}: missing header line '# frequency_mhz = <MHz>' (required, before the column row)"
        )
    values: dict[str, Any] = {}
    where = f"{source}:{header_lines['frequency_mhz']}"
    mhz = _number(header["frequency_mhz"], "frequency_mhz", where)
    if not FREQUENCY_MIN_MHZ <= mhz <= FREQUENCY_MAX_MHZ:
        raise UserError(
            f"{where}: frequency_mhz {quoted(header['frequency_mhz'], 24)} is out of range; allowed {FREQUENCY_MIN_MHZ:g} to "
            f"{FREQUENCY_MAX_MHZ:g} MHz, the link frequencies the noise and atmosphere models are used for"
        )
    values["frequency_hz"] = mhz * 1e6
    if "feed_vswr" in header:
        where = f"{source}:{header_lines['feed_vswr']}"
        vswr = _number(header["feed_vswr"], "feed_vswr", where)
        if vswr < 1.0:
            raise UserError(f"{where}: feed_vswr must be at least 1 (1 = matched), got {header['feed_vswr']!r}")
        values["feed_vswr"] = vswr
    if "feed_impedance_ohm" in header:
        where = f"{source}:{header_lines['feed_impedance_ohm']}"
        raw = header["feed_impedance_ohm"]
        try:
            z = complex(raw.replace(" ", ""))
        except ValueError:
            raise UserError(f"{where}: feed_impedance_ohm {raw!r} is not a complex number; write e.g. 73.1+42.5j") from None
        if not (math.isfinite(z.real) and math.isfinite(z.imag)) or z.real <= 0:
            raise UserError(f"{where}: feed_impedance_ohm needs a finite positive resistance, e.g. 73.1+42.5j; got {raw!r}")
        values["feed_impedance_ohm"] = z
    if "radiation_efficiency" in header:
        where = f"{source}:{header_lines['radiation_efficiency']}"
        eff = _number(header["radiation_efficiency"], "radiation_efficiency", where)
        if not 0.0 < eff <= 1.0:
            raise UserError(f"{where}: radiation_efficiency must be in (0, 1], got {header['radiation_efficiency']!r}")
        values["radiation_efficiency"] = eff
    return values


def _parse_column_row(line: str, source: str, lineno: int) -> list[str]:
    names = [c.strip() for c in line.split(",")]
    seen: set[str] = set()
    for name in names:
        if name not in COLUMNS_ALLOWED:
            raise UserError(
                f"{source}:{lineno}: unknown column {name!r}; the first non-comment line is the column row "
                f"{_COLUMN_ROW_HELP} (allowed: {', '.join(COLUMNS_ALLOWED)})"
            )
        if name in seen:
            raise UserError(f"{source}:{lineno}: column {name!r} appears twice; allowed once each: {_COLUMN_ROW_HELP}")
        seen.add(name)
    for name in COLUMNS_REQUIRED:
        if name not in seen:
            raise UserError(f"{source}:{lineno}: missing column {name!r}; the column row is {_COLUMN_ROW_HELP}")
    return names


def _check_row_count(text: str, source: str) -> None:
    """Refuse a table with more lines than the reader can hold within the memory limit, before
    splitting it (a count of newlines costs no memory)."""
    lines = text.count("\n") + 1
    most = pattern_points_limit()
    check_allocation(
        f"{source}: the table has {lines:,} lines, each a grid point to read",
        lines,
        PATTERN_BYTES_PER_POINT,
        MEMORY_LIMIT_BYTES,
        f"a table holds at most {most:,} rows (e.g. 0.5 deg x 0.5 deg: 259,920 rows)",
    )


def parse_pattern(text: str, *, source: str = "<pattern>", path: Path | None = None) -> PatternTable:
    """Parse the text of a pattern table (``source`` names it in error messages)."""
    header: dict[str, str] = {}
    header_lines: dict[str, int] = {}
    columns: list[str] | None = None
    column_line = 0
    typed: dict[str, Any] = {}
    rows: list[tuple[int, float, float, float, float]] = []  # line, el, az, rhcp, lhcp
    seen_rows: dict[tuple[float, float], int] = {}
    any_content = False
    _check_row_count(text, source)
    lines = text.split("\n")
    for lineno, raw in enumerate(lines, start=1):
        line = raw.strip()
        if not line:
            continue
        any_content = True
        if line.startswith("#"):
            key, sep, value = line[1:].partition("=")
            key = key.strip()
            if sep and _KEY_RE.fullmatch(key):
                if columns is not None:
                    raise UserError(
                        f"{source}:{lineno}: header line '# {key} = ...' after the column row (line {column_line}); "
                        "header lines come before the column row"
                    )
                if key in header:
                    raise UserError(
                        f"{source}:{lineno}: header key {key!r} repeated (first on line {header_lines[key]}); give it once"
                    )
                header[key] = value.strip()
                header_lines[key] = lineno
            continue  # a free comment
        if columns is None:
            columns = _parse_column_row(line, source, lineno)
            column_line = lineno
            typed = _header_values(header, header_lines, source, lineno)
            continue
        fields = [f.strip() for f in line.split(",")]
        if len(fields) != len(columns):
            raise UserError(
                f"{source}:{lineno}: expected {len(columns)} comma-separated values ({','.join(columns)}), got {len(fields)}"
            )
        where = f"{source}:{lineno}"
        record = {name: _number(value, name, where) for name, value in zip(columns, fields)}
        el = record["elevation_deg"]
        if not -90.0 <= el <= 90.0:
            raise UserError(f"{where}: elevation_deg {quoted(fields[columns.index('elevation_deg')], 24)} outside -90..90")
        az = record.get("azimuth_deg", 0.0)
        if "azimuth_deg" in record and not 0.0 <= az < 360.0:
            raise UserError(
                f"{where}: azimuth_deg {quoted(fields[columns.index('azimuth_deg')], 24)} outside [0, 360) "
                "(0 and 360 are the same direction: give 0 only)"
            )
        for name in ("gain_rhcp_dbic", "gain_lhcp_dbic"):
            if record[name] > GAIN_CEILING_DBIC:
                raise UserError(
                    f"{where}: {name} {quoted(fields[columns.index(name)], 24)} above {GAIN_CEILING_DBIC:g} dBic; "
                    f"allowed up to {GAIN_CEILING_DBIC:g} dBic (gains are in dBic)"
                )
        # Scalar arithmetic in the standard library: a row at a time, numpy's per-call cost would dominate.
        total_dbic = 10.0 * math.log10(10.0 ** (record["gain_rhcp_dbic"] / 10.0) + 10.0 ** (record["gain_lhcp_dbic"] / 10.0))
        if round(total_dbic, 3) > GAIN_CEILING_DBIC:  # to the 0.001 dB gains are written with
            raise UserError(
                f"{where}: total gain gain_rhcp_dbic + gain_lhcp_dbic is {total_dbic:.2f} dBic; "
                f"allowed up to {GAIN_CEILING_DBIC:g} dBic"
            )
        direction = (el + 0.0, az + 0.0)
        if direction in seen_rows:
            at = f"elevation {_fmt_deg(el)} deg" + (f", azimuth {_fmt_deg(az)} deg" if "azimuth_deg" in record else "")
            raise UserError(f"{where}: duplicate row for {at} (first on line {seen_rows[direction]}); give each direction once")
        seen_rows[direction] = lineno
        rows.append((lineno, el, az, record["gain_rhcp_dbic"], record["gain_lhcp_dbic"]))

    if not any_content:
        raise UserError(
            f"{source}:1: empty pattern file; expected '# frequency_mhz = <MHz>' header lines, "
            f"the column row {_COLUMN_ROW_HELP}, then data rows"
        )
    last_line = len(lines) - 1 if lines and lines[-1] == "" else len(lines)
    if columns is None:
        raise UserError(f"{source}:{max(last_line, 1)}: no column row; after the header give {_COLUMN_ROW_HELP}, then data rows")
    if not rows:
        raise UserError(f"{source}:{column_line}: no data rows after the column row")

    symmetric = "azimuth_deg" not in columns
    first_row = rows[0][0]
    elevations = sorted({r[1] + 0.0 for r in rows})
    if len(elevations) < 2:
        raise UserError(
            f"{source}:{first_row}: only one elevation ({_fmt_deg(elevations[0])} deg); "
            "a table needs at least 2 elevations covering -90..90"
        )
    if elevations[0] != -90.0 or elevations[-1] != 90.0:
        raise UserError(
            f"{source}:{first_row}: elevations span {_fmt_deg(elevations[0])}..{_fmt_deg(elevations[-1])} deg; "
            "the table must have rows at -90 and at 90 deg (the lower half sets the ground noise)"
        )
    el_index = {e: k for k, e in enumerate(elevations)}
    if symmetric:
        shape: tuple[int, ...] = (len(elevations),)
        azimuths = None
    else:
        azimuths = sorted({r[2] + 0.0 for r in rows})
        shape = (len(elevations), len(azimuths))
        if len(rows) != shape[0] * shape[1]:
            by_el: dict[float, set[float]] = {}
            first_line: dict[float, int] = {}
            for lineno, e, a, _, _ in rows:
                by_el.setdefault(e + 0.0, set()).add(a + 0.0)
                first_line.setdefault(e + 0.0, lineno)
            for e in elevations:
                missing = [a for a in azimuths if a not in by_el[e]]
                if missing:
                    raise UserError(
                        f"{source}:{first_line[e]}: elevation {_fmt_deg(e)} deg has no row for azimuth "
                        f"{_fmt_deg(missing[0])} deg; every elevation needs a row at each of the "
                        f"{len(azimuths)} azimuths of the grid"
                    )
    az_index = {a: k for k, a in enumerate(azimuths)} if azimuths is not None else None
    rhcp = np.empty(shape)
    lhcp = np.empty(shape)
    for _, e, a, r, l in rows:
        idx = (el_index[e + 0.0],) if az_index is None else (el_index[e + 0.0], az_index[a + 0.0])
        rhcp[idx] = r
        lhcp[idx] = l
    table = PatternTable(
        path=path,
        frequency_hz=typed["frequency_hz"],
        header=header,
        elevation_deg=np.array(elevations),
        azimuth_deg=None if azimuths is None else np.array(azimuths),
        gain_rhcp_dbic=rhcp,
        gain_lhcp_dbic=lhcp,
        feed_vswr=typed.get("feed_vswr"),
        feed_impedance_ohm=typed.get("feed_impedance_ohm"),
        radiation_efficiency=typed.get("radiation_efficiency"),
    )
    # Every table covers elevations -90..90 (checked above), so the mean is over the whole sphere.
    mean = sphere_mean_gain(table)
    if mean > SPHERE_MEAN_GAIN_TOLERANCE:
        totals = db_to_linear(np.array([r[3] for r in rows])) + db_to_linear(np.array([r[4] for r in rows]))
        peak_line = rows[int(np.argmax(totals))][0]
        raise UserError(
            f"{source}:{peak_line}: total gain averages {mean:.2f} over the sphere (largest on this line); a passive "
            "antenna radiates at most the power it is fed, so the mean of G_RHCP + G_LHCP is at most 1, allowed up to "
            f"{SPHERE_MEAN_GAIN_TOLERANCE:g} for interpolation; check the columns are partial RHCP/LHCP gains in dBic"
        )
    return table


# --------------------------------------------------------------------------------------------
# Writing
# --------------------------------------------------------------------------------------------


def format_number(value: float) -> str:
    """Shortest text that reads back to the same float; integers without a decimal point."""
    value = float(value)
    if value.is_integer() and abs(value) < 1e15:
        return str(int(value))
    return repr(value)


def _fmt_gain(value: float) -> str:
    return f"{round(float(value), 3) + 0.0:.3f}"  # + 0.0 turns -0.0 into 0.0


def format_pattern(table: PatternTable) -> str:
    """The table as text: deterministic, so regenerating a table reproduces the file bit for bit."""
    lines = [f"# frequency_mhz = {table.header.get('frequency_mhz', format_number(table.frequency_hz / 1e6))}"]
    for key, value in table.header.items():
        if key == "frequency_mhz":
            continue
        if not _KEY_RE.fullmatch(key):
            raise ValueError(f"header key {key!r} is not an identifier")
        if "\n" in value or "\r" in value:
            raise ValueError(f"header value for {key!r} spans lines")
        lines.append(f"# {key} = {value}")
    el_text = [_fmt_deg(e) for e in table.elevation_deg]
    if table.azimuth_deg is None:
        lines.append("elevation_deg,gain_rhcp_dbic,gain_lhcp_dbic")
        for k, e in enumerate(el_text):
            lines.append(f"{e},{_fmt_gain(table.gain_rhcp_dbic[k])},{_fmt_gain(table.gain_lhcp_dbic[k])}")
    else:
        lines.append("elevation_deg,azimuth_deg,gain_rhcp_dbic,gain_lhcp_dbic")
        az_text = [_fmt_deg(a) for a in table.azimuth_deg]
        for k, e in enumerate(el_text):
            for m, a in enumerate(az_text):
                lines.append(f"{e},{a},{_fmt_gain(table.gain_rhcp_dbic[k, m])},{_fmt_gain(table.gain_lhcp_dbic[k, m])}")
    return "\n".join(lines) + "\n"


def write_pattern(path: str | Path, table: PatternTable, *, rules: WriteRules = REPLACE_ANY) -> Path:
    """Write ``format_pattern(table)`` to ``path`` atomically."""
    return write_atomically(path, format_pattern(table), rules=rules)

"""Antenna pattern tables: the file format, loading, interpolation, polarization per direction,
and the analytic generators behind the shipped tables.

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

Frame and conventions
---------------------
Local east-north-up: x east, y north, z up. ``azimuth_deg`` is a compass bearing (from north toward
east), ``elevation_deg`` is above the local horizon. RHCP and LHCP follow IEEE Std 145: with time
dependence e^{jwt}, a wave travelling along +z with E ~ (x - j y) is right-hand (RHCP). The two gain
columns are partial gains: the gain for an RHCP wave and for an LHCP wave; their linear sum is the
total gain (the power gain for a wave matched in polarization).

Interpolation choice
--------------------
Tables are interpolated bilinearly in dB (elevation, and azimuth with wrap-around at 360), which is
the usual practice for pattern tables: gains vary smoothly in dB over lobes. Gains below
``GAIN_FLOOR_DBIC`` (-60 dBic: "no field") are raised to the floor on loading so a deep null does
not drag its neighbours to -inf. Within one grid step of a null, dB interpolation lies below the
true gain (the null is spread over the step), which errs on the pessimistic side for margins.

Generators
----------
``turnstile_over_reflector`` uses closed-form far fields from Balanis, *Antenna Theory: Analysis and
Design*, ch. 4: the half-wave dipole with a sinusoidal current (element factor
cos(pi/2 cos psi)/sin psi, psi the angle from the dipole axis) and image theory for a horizontal
element at height h above an infinite perfectly conducting plane (image current reversed at -h,
array factor 2 j sin(k h sin E)). Directivity is normalised by integrating the radiation intensity
over the upper hemisphere (Gauss-Legendre in sin E, trapezoid in azimuth); the antenna is lossless,
so gain = directivity. Below the horizon an infinite perfect conductor passes no field, so the
table holds ``GAIN_FLOOR_DBIC`` there; real, finite reflectors leak around their edges (the wire
solver, planner.antenna.synth, models that).
"""

from __future__ import annotations

import inspect
import math
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable, Sequence

import numpy as np

from planner.errors import UserError, positive_number, warn
from planner.fileio import REPLACE_ANY, WriteRules, write_atomically
from planner.limits import (
    MEMORY_LIMIT_BYTES,
    PATTERN_BYTES_PER_POINT,
    PATTERN_FILE_LIMIT_BYTES,
    ReadWording,
    ceil_significant,
    check_allocation,
    read_text_capped,
)

GAIN_FLOOR_DBIC = -60.0
"""Gain written (and clipped to on loading) where there is no field: a zero of the model."""

GAIN_CEILING_DBIC = 40.0
"""Largest gain a table may hold, in any direction (each column and their sum). The tables are of
fixed, unpointed station antennas, omnidirectional and low-gain (a few dBic); 40 dBic is a beam
about 2 deg wide (G ~ 41253 deg^2 / beam solid angle, Kraus; from memory), which a passing
satellite crosses in seconds, so no fixed antenna this tool compares comes near it (common
practice, no published source). Anything above is a unit or typing error."""

AXIAL_RATIO_CAP_DB = 60.0
"""Axial ratio reported for a linearly polarized (or field-free) direction."""

SPEED_OF_LIGHT_M_S = 299_792_458.0  # exact, SI definition of the metre

DEMO_FREQUENCY_HZ = 436e6
"""Frequency label of the shipped tables (the demo UHF downlink band)."""

COLUMNS_REQUIRED = ("elevation_deg", "gain_rhcp_dbic", "gain_lhcp_dbic")
COLUMNS_ALLOWED = ("elevation_deg", "azimuth_deg", "gain_rhcp_dbic", "gain_lhcp_dbic")
_COLUMN_ROW_HELP = "elevation_deg[,azimuth_deg],gain_rhcp_dbic,gain_lhcp_dbic"
_KEY_RE = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")


# --------------------------------------------------------------------------------------------
# Polarization quantities from the two partial gains
# --------------------------------------------------------------------------------------------


def db_to_linear(value_db: np.ndarray | float) -> np.ndarray:
    with np.errstate(over="ignore"):
        return np.power(10.0, np.asarray(value_db, dtype=float) / 10.0)


def linear_to_db(value: np.ndarray | float) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return 10.0 * np.log10(np.asarray(value, dtype=float))


def axial_ratio_db_from_partial_gains(gain_rhcp: np.ndarray | float, gain_lhcp: np.ndarray | float) -> np.ndarray:
    """Axial ratio (dB, >= 0) from LINEAR partial gains G_R, G_L.

    The RHCP and LHCP field amplitudes are sqrt(G_R) and sqrt(G_L); the polarization ellipse has
    major axis sqrt(G_R) + sqrt(G_L) and minor axis |sqrt(G_R) - sqrt(G_L)| (Stutzman,
    Polarization in Electromagnetic Systems), so AR = (sqrt G_R + sqrt G_L)/|sqrt G_R - sqrt G_L|.
    A linear (or field-free) direction has an infinite ratio, reported as ``AXIAL_RATIO_CAP_DB``;
    an undefined gain (NaN) gives NaN, not the cap.
    """
    a = np.sqrt(np.maximum(np.asarray(gain_rhcp, dtype=float), 0.0))
    b = np.sqrt(np.maximum(np.asarray(gain_lhcp, dtype=float), 0.0))
    major = a + b
    minor = np.abs(a - b)
    cap = 10.0 ** (AXIAL_RATIO_CAP_DB / 20.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(minor * cap > major, major / np.where(minor > 0, minor, 1.0), cap)
    return np.where(np.isnan(major), np.nan, 20.0 * np.log10(ratio))


def sense_from_partial_gains(gain_rhcp: np.ndarray | float, gain_lhcp: np.ndarray | float) -> np.ndarray:
    """+1 where RHCP dominates, -1 where LHCP dominates, 0 where they are equal (linear) or undefined (NaN)."""
    difference = np.asarray(gain_rhcp, dtype=float) - np.asarray(gain_lhcp, dtype=float)
    return np.sign(np.where(np.isnan(difference), 0.0, difference)).astype(int)


# --------------------------------------------------------------------------------------------
# The table
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class PatternTable:
    """A tabulated antenna pattern: partial RHCP/LHCP gains on an elevation (x azimuth) grid.

    ``elevation_deg`` is ascending from -90 to 90; ``azimuth_deg`` ascending in [0, 360) or None
    for an azimuth-symmetric table; the gain arrays have shape (n_el, n_az), or (n_el,) when
    symmetric. Gains below ``GAIN_FLOOR_DBIC`` are raised to it.
    """

    path: Path | None
    frequency_hz: float
    header: dict[str, str]
    elevation_deg: np.ndarray
    azimuth_deg: np.ndarray | None
    gain_rhcp_dbic: np.ndarray
    gain_lhcp_dbic: np.ndarray
    feed_vswr: float | None = None
    feed_impedance_ohm: complex | None = None
    radiation_efficiency: float | None = None

    def __post_init__(self) -> None:
        el = np.array(self.elevation_deg, dtype=float)
        if el.ndim != 1 or len(el) < 2:
            raise ValueError("elevation_deg must be a 1-D grid of at least 2 values")
        if np.any(np.diff(el) <= 0) or el[0] != -90.0 or el[-1] != 90.0:
            raise ValueError("elevation_deg must ascend strictly from -90 to 90")
        if self.azimuth_deg is None:
            az = None
            shape: tuple[int, ...] = (len(el),)
        else:
            az = np.array(self.azimuth_deg, dtype=float)
            if az.ndim != 1 or len(az) < 1:
                raise ValueError("azimuth_deg must be a 1-D grid")
            if np.any(np.diff(az) <= 0) or az[0] < 0.0 or az[-1] >= 360.0:
                raise ValueError("azimuth_deg must ascend strictly within [0, 360)")
            shape = (len(el), len(az))
        gains = []
        for name in ("gain_rhcp_dbic", "gain_lhcp_dbic"):
            g = np.array(getattr(self, name), dtype=float)
            if g.shape != shape:
                raise ValueError(f"{name} has shape {g.shape}, expected {shape}")
            if not np.all(np.isfinite(g)):
                raise ValueError(f"{name} holds non-finite values")
            g = np.maximum(g, GAIN_FLOOR_DBIC)
            g.setflags(write=False)
            gains.append(g)
        el.setflags(write=False)
        if az is not None:
            az.setflags(write=False)
        if not (math.isfinite(self.frequency_hz) and self.frequency_hz > 0):
            raise ValueError("frequency_hz must be positive")
        object.__setattr__(self, "elevation_deg", el)
        object.__setattr__(self, "azimuth_deg", az)
        object.__setattr__(self, "gain_rhcp_dbic", gains[0])
        object.__setattr__(self, "gain_lhcp_dbic", gains[1])
        object.__setattr__(self, "frequency_hz", float(self.frequency_hz))
        object.__setattr__(self, "header", dict(self.header))

    @property
    def symmetric(self) -> bool:
        """True for an azimuth-symmetric table (no azimuth column)."""
        return self.azimuth_deg is None

    @property
    def name(self) -> str:
        return self.path.name if self.path is not None else self.header.get("model", "pattern")

    # -- interpolation ------------------------------------------------------------------------

    def gains_dbic(self, azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> tuple[np.ndarray, np.ndarray]:
        """Partial gains (RHCP, LHCP) in dBic, bilinear in dB; arrays broadcast against each other.

        Azimuth wraps at 360 deg; elevation is clipped to -90..90. A symmetric table ignores the
        azimuth (it still takes part in broadcasting).
        """
        az, el = np.broadcast_arrays(np.asarray(azimuth_deg, dtype=float), np.asarray(elevation_deg, dtype=float))
        grid_el = self.elevation_deg
        el_c = np.clip(el, -90.0, 90.0)
        i = np.clip(np.searchsorted(grid_el, el_c, side="right") - 1, 0, len(grid_el) - 2)
        t = (el_c - grid_el[i]) / (grid_el[i + 1] - grid_el[i])
        if self.azimuth_deg is None:
            out = []
            for g in (self.gain_rhcp_dbic, self.gain_lhcp_dbic):
                out.append((1.0 - t) * g[i] + t * g[i + 1])
            return out[0], out[1]
        grid_az = self.azimuth_deg
        n_az = len(grid_az)
        ext_az = np.append(grid_az, grid_az[0] + 360.0)
        a = np.mod(az, 360.0)
        a = np.where(a >= 360.0, a - 360.0, a)  # np.mod(-1e-17, 360) == 360.0
        a = np.where(a < grid_az[0], a + 360.0, a)
        j = np.clip(np.searchsorted(ext_az, a, side="right") - 1, 0, n_az - 1)
        u = (a - ext_az[j]) / (ext_az[j + 1] - ext_az[j])
        j1 = np.where(j + 1 == n_az, 0, j + 1)
        out = []
        for g in (self.gain_rhcp_dbic, self.gain_lhcp_dbic):
            low = (1.0 - u) * g[i, j] + u * g[i, j1]
            high = (1.0 - u) * g[i + 1, j] + u * g[i + 1, j1]
            out.append((1.0 - t) * low + t * high)
        return out[0], out[1]

    def total_gain_dbi(self, azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> np.ndarray:
        """Total gain G_R + G_L in dB (the gain for a polarization-matched wave)."""
        r, l = self.gains_dbic(azimuth_deg, elevation_deg)
        return linear_to_db(db_to_linear(r) + db_to_linear(l))

    def axial_ratio_db(self, azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> np.ndarray:
        """Axial ratio in dB (>= 0; ``AXIAL_RATIO_CAP_DB`` where linear or at the floor)."""
        r, l = self.gains_dbic(azimuth_deg, elevation_deg)
        return axial_ratio_db_from_partial_gains(db_to_linear(r), db_to_linear(l))

    def sense(self, azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> np.ndarray:
        """+1 RHCP, -1 LHCP, 0 where the two partial gains are equal."""
        r, l = self.gains_dbic(azimuth_deg, elevation_deg)
        return sense_from_partial_gains(r, l)


def sphere_mean_gain(table: PatternTable, *, nodes_per_step: int = 4) -> float:
    """Total gain averaged over the sphere, (1/4 pi) integral of G dOmega, of the table as
    interpolated by :meth:`PatternTable.gains_dbic` (bilinear in dB).

    Gauss-Legendre nodes inside every grid step (elevation, and azimuth with wrap-around), with the
    cos(E) solid-angle weight; exact up to rounding for the interpolant, however coarse the grid.
    A lossless antenna gives 1 (energy conservation), a lossy one less; more than 1 is unphysical.
    """
    x, w = np.polynomial.legendre.leggauss(nodes_per_step)
    x, w = 0.5 * (x + 1.0), 0.5 * w  # on [0, 1]

    def nodes(grid: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        low, step = grid[:-1, None], np.diff(grid)[:, None]
        return (low + step * x).ravel(), (step * w).ravel()

    el, w_el = nodes(table.elevation_deg)
    w_el = np.radians(w_el) * np.cos(np.radians(el))
    if table.azimuth_deg is None:
        az, w_az = np.zeros(1), np.ones(1)
    else:
        az, w_az = nodes(np.append(table.azimuth_deg, table.azimuth_deg[0] + 360.0))
        w_az = w_az / 360.0
    rhcp, lhcp = table.gains_dbic(az[None, :], el[:, None])
    gain = db_to_linear(rhcp) + db_to_linear(lhcp)
    return float(w_el @ gain @ w_az / 2.0)


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


def _clip_text(text: str, limit: int = 24) -> str:
    """A value from the file for a message, quoted and escaped, at most ``limit`` characters of it."""
    return repr(text if len(text) <= limit else text[: limit - 3] + "...")


def _number(text: str, what: str, where: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise UserError(f"{where}: {what} {_clip_text(text)} is not a number") from None
    if not math.isfinite(value):
        raise UserError(f"{where}: {what} must be a finite number, got {_clip_text(text)}")
    return value


def _fmt_deg(value: float) -> str:
    text = f"{value:.6f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


# Design frequencies a table may have: the link frequencies a scenario accepts (downlink_mhz,
# uplink_mhz), 1 MHz to 50 GHz. Inside it the models of planner.link.noise (ITU-R P.372 lines from
# 0.3 MHz, extrapolated beyond their stated ranges with a warning) and planner.link.atmosphere
# (ITU-R P.676, stated for 1-1000 GHz, its low-frequency tail used below 1 GHz) are evaluated;
# a table outside it serves no link the planner computes, so it is a unit mistake.
FREQUENCY_MIN_MHZ = 1.0
FREQUENCY_MAX_MHZ = 50_000.0

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
            f"{source}:{fallback_line}: missing header line '# frequency_mhz = <MHz>' "
            "(required, before the column row)"
        )
    values: dict[str, Any] = {}
    where = f"{source}:{header_lines['frequency_mhz']}"
    mhz = _number(header["frequency_mhz"], "frequency_mhz", where)
    if not FREQUENCY_MIN_MHZ <= mhz <= FREQUENCY_MAX_MHZ:
        raise UserError(
            f"{where}: frequency_mhz {_clip_text(header['frequency_mhz'])} is out of range; allowed {FREQUENCY_MIN_MHZ:g} to "
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
    check_allocation(f"{source}: the table has {lines:,} lines, each a grid point to read", lines, PATTERN_BYTES_PER_POINT,
                     MEMORY_LIMIT_BYTES, f"a table holds at most {most:,} rows (e.g. 0.5 deg x 0.5 deg: 259,920 rows)")


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
                    raise UserError(f"{source}:{lineno}: header key {key!r} repeated (first on line {header_lines[key]}); give it once")
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
            raise UserError(f"{where}: elevation_deg {_clip_text(fields[columns.index('elevation_deg')])} outside -90..90")
        az = record.get("azimuth_deg", 0.0)
        if "azimuth_deg" in record and not 0.0 <= az < 360.0:
            raise UserError(
                f"{where}: azimuth_deg {_clip_text(fields[columns.index('azimuth_deg')])} outside [0, 360) "
                "(0 and 360 are the same direction: give 0 only)"
            )
        for name in ("gain_rhcp_dbic", "gain_lhcp_dbic"):
            if record[name] > GAIN_CEILING_DBIC:
                raise UserError(f"{where}: {name} {_clip_text(fields[columns.index(name)])} above {GAIN_CEILING_DBIC:g} dBic; "
                                f"allowed up to {GAIN_CEILING_DBIC:g} dBic (gains are in dBic)")
        total_dbic = float(linear_to_db(db_to_linear(record["gain_rhcp_dbic"]) + db_to_linear(record["gain_lhcp_dbic"])))
        if round(total_dbic, 3) > GAIN_CEILING_DBIC:  # to the 0.001 dB gains are written with
            raise UserError(f"{where}: total gain gain_rhcp_dbic + gain_lhcp_dbic is {total_dbic:.2f} dBic; "
                            f"allowed up to {GAIN_CEILING_DBIC:g} dBic")
        key = (el + 0.0, az + 0.0)
        if key in seen_rows:
            at = f"elevation {_fmt_deg(el)} deg" + (f", azimuth {_fmt_deg(az)} deg" if "azimuth_deg" in record else "")
            raise UserError(f"{where}: duplicate row for {at} (first on line {seen_rows[key]}); give each direction once")
        seen_rows[key] = lineno
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


# --------------------------------------------------------------------------------------------
# Closed-form far fields (Balanis, Antenna Theory, ch. 4)
# --------------------------------------------------------------------------------------------

EAST = (1.0, 0.0, 0.0)
NORTH = (0.0, 1.0, 0.0)
UP = (0.0, 0.0, 1.0)


@dataclass(frozen=True)
class HalfWaveDipole:
    """A thin half-wave dipole with a sinusoidal current: axis (unit vector, ENU), complex feed
    current (relative), centre position in wavelengths (ENU)."""

    axis_enu: tuple[float, float, float]
    current: complex = 1.0
    center_wavelengths: tuple[float, float, float] = (0.0, 0.0, 0.0)

    def image(self) -> "HalfWaveDipole":
        """Image in the plane z = 0 of a perfect conductor: horizontal current reversed, vertical
        kept, position mirrored (Balanis, Antenna Theory, sec. 4.7)."""
        ax, ay, az = self.axis_enu
        px, py, pz = self.center_wavelengths
        return HalfWaveDipole((-ax, -ay, az), self.current, (px, py, -pz))


def direction_enu(azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> np.ndarray:
    """Unit vector(s) toward (azimuth, elevation), ENU, shape (..., 3)."""
    az, el = np.broadcast_arrays(np.radians(azimuth_deg), np.radians(elevation_deg))
    cos_el = np.cos(el)
    return np.stack([cos_el * np.sin(az), cos_el * np.cos(az), np.sin(el)], axis=-1)


def spherical_unit_vectors(azimuth_deg: np.ndarray | float, elevation_deg: np.ndarray | float) -> tuple[np.ndarray, np.ndarray]:
    """theta-hat and phi-hat (ENU, shape (..., 3)) of the spherical frame with polar axis up and
    phi measured from east toward north (phi = 90 deg - azimuth); (theta-hat, phi-hat, r-hat) is
    right-handed."""
    az, el = np.broadcast_arrays(np.radians(azimuth_deg), np.radians(elevation_deg))
    sin_el, cos_el, sin_az, cos_az = np.sin(el), np.cos(el), np.sin(az), np.cos(az)
    theta_hat = np.stack([sin_el * sin_az, sin_el * cos_az, -cos_el], axis=-1)
    phi_hat = np.stack([-cos_az, sin_az, np.zeros_like(az)], axis=-1)
    return theta_hat, phi_hat


def half_wave_dipole_field(dipole: HalfWaveDipole, r_hat: np.ndarray) -> np.ndarray:
    """Complex far-field vector (..., 3) of one dipole toward unit vectors ``r_hat``.

    E ~ I (a - (a.r) r) cos(pi/2 cos psi) / sin^2 psi * exp(j 2 pi r.p): the transverse part of the
    dipole's vector potential (Balanis eq. 4-84), magnitude I cos(pi/2 cos psi)/sin psi, with psi the
    angle from the axis a and p the centre in wavelengths. The common factor
    j eta I0 exp(-jkr)/(2 pi r) is dropped: it cancels in the directivity.
    """
    a = np.asarray(dipole.axis_enu, dtype=float)
    a = a / np.linalg.norm(a)
    cos_psi = np.clip(r_hat @ a, -1.0, 1.0)
    sin2_psi = 1.0 - cos_psi**2
    tiny = 1e-12
    factor = np.where(sin2_psi > tiny, np.cos(0.5 * np.pi * cos_psi) / np.where(sin2_psi > tiny, sin2_psi, 1.0), np.pi / 4.0)
    transverse = a - cos_psi[..., None] * r_hat
    phase = np.exp(2j * np.pi * (r_hat @ np.asarray(dipole.center_wavelengths, dtype=float)))
    return (dipole.current * factor * phase)[..., None] * transverse


def far_field(dipoles: Sequence[HalfWaveDipole], azimuth_deg, elevation_deg, *, pec_ground: bool = False) -> np.ndarray:
    """Superposed complex far field (..., 3) of the dipoles toward (azimuth, elevation).

    With ``pec_ground`` the dipoles stand over an infinite perfect conductor in the plane z = 0:
    images are added (image theory) and the field is zero below the horizon.
    """
    r_hat = direction_enu(azimuth_deg, elevation_deg)
    sources = list(dipoles)
    if pec_ground:
        sources += [d.image() for d in dipoles]
    total = np.zeros(r_hat.shape, dtype=complex)
    for d in sources:
        total += half_wave_dipole_field(d, r_hat)
    if pec_ground:
        total = np.where((r_hat[..., 2] < 0.0)[..., None], 0.0, total)
    return total


def circular_components(field_enu: np.ndarray, azimuth_deg, elevation_deg) -> tuple[np.ndarray, np.ndarray]:
    """RHCP and LHCP amplitudes of an outgoing far field: E_R = (E_theta + j E_phi)/sqrt 2,
    E_L = (E_theta - j E_phi)/sqrt 2 (unit vectors (theta - j phi)/sqrt 2 for RHCP along r, IEEE
    Std 145 with e^{jwt}); |E_R|^2 + |E_L|^2 = |E|^2."""
    theta_hat, phi_hat = spherical_unit_vectors(azimuth_deg, elevation_deg)
    e_theta = np.sum(field_enu * theta_hat, axis=-1)
    e_phi = np.sum(field_enu * phi_hat, axis=-1)
    return (e_theta + 1j * e_phi) / math.sqrt(2.0), (e_theta - 1j * e_phi) / math.sqrt(2.0)


def radiated_power(dipoles: Sequence[HalfWaveDipole], *, pec_ground: bool = False, n_mu: int | None = None, n_azimuth: int = 144) -> float:
    """Integral of |E|^2 over the sphere (upper hemisphere over ground), in the units of ``far_field``.

    dOmega = d(sin E) d(azimuth): Gauss-Legendre in sin E, periodic trapezoid in azimuth (both
    spectrally accurate for these smooth fields).
    """
    extent = max([abs(c) for d in dipoles for c in d.center_wavelengths] + [0.0])
    if n_mu is None:
        n_mu = 96 + int(48 * extent)
    nodes, weights = np.polynomial.legendre.leggauss(n_mu)
    if pec_ground:  # map [-1, 1] to [0, 1]
        mu, w_mu = 0.5 * (nodes + 1.0), 0.5 * weights
    else:
        nodes, weights = np.polynomial.legendre.leggauss(2 * n_mu)
        mu, w_mu = nodes, weights
    az = np.arange(n_azimuth) * (360.0 / n_azimuth)
    el = np.degrees(np.arcsin(mu))
    field_ = far_field(dipoles, az[None, :], el[:, None], pec_ground=pec_ground)
    intensity = np.sum(np.abs(field_) ** 2, axis=-1)
    return float(np.sum(w_mu[:, None] * intensity) * (2.0 * np.pi / n_azimuth))


def partial_directivities(dipoles: Sequence[HalfWaveDipole], azimuth_deg, elevation_deg, *, pec_ground: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Linear RHCP and LHCP partial directivities 4 pi |E_R|^2 / P, 4 pi |E_L|^2 / P."""
    power = radiated_power(dipoles, pec_ground=pec_ground)
    e_r, e_l = circular_components(far_field(dipoles, azimuth_deg, elevation_deg, pec_ground=pec_ground), azimuth_deg, elevation_deg)
    return 4.0 * np.pi * np.abs(e_r) ** 2 / power, 4.0 * np.pi * np.abs(e_l) ** 2 / power


def crossed_dipoles(height_wavelengths: float = 0.0) -> list[HalfWaveDipole]:
    """A turnstile: half-wave dipoles along east and north, centred on the zenith axis at the given
    height, fed with equal amplitude, the north one lagging 90 deg (current -j) so that the field
    at the zenith is x - j y: RHCP going up (IEEE Std 145)."""
    centre = (0.0, 0.0, float(height_wavelengths))
    return [HalfWaveDipole(EAST, 1.0 + 0j, centre), HalfWaveDipole(NORTH, -1j, centre)]


# --------------------------------------------------------------------------------------------
# Generators
# --------------------------------------------------------------------------------------------


def angle_count(step_deg: float, span_deg: float, name: str, closed: bool) -> int:
    """How many grid angles ``step_deg`` makes over ``span_deg`` (its end included when
    ``closed``), without making them; the step must divide the span."""
    step = positive_number(name, step_deg, "a positive number of degrees")
    ratio = span_deg / step
    if not math.isfinite(ratio):
        raise UserError(f"{name}={step:g} asks for more grid angles than can be counted; "
                        f"use a step that divides {span_deg:g} deg, such as 1, 2, 5 or 10")
    count = round(ratio)
    if count < 1 or abs(count * step - span_deg) > 1e-9 * span_deg:
        raise UserError(f"{name}: {step:g} deg does not divide {span_deg:g} deg evenly; pick a divisor such as 1, 2, 5 or 10")
    return count + 1 if closed else count


def angle_grid(step_deg: float, span_deg: float, name: str, closed: bool) -> np.ndarray:
    """0, step, 2 step ... over ``span_deg`` (its end included when ``closed``); the step must divide it."""
    count = angle_count(step_deg, span_deg, name, closed)
    return np.arange(count, dtype=float) * float(step_deg)


def pattern_points_limit() -> int:
    """Most grid points a pattern table may have: what the reader can hold within the memory
    limit (``planner.limits.PATTERN_BYTES_PER_POINT``)."""
    return int(MEMORY_LIMIT_BYTES // PATTERN_BYTES_PER_POINT)


def finest_step_deg(span_deg: float, closed: bool, other_count: int) -> float:
    """The finest step over ``span_deg`` that keeps a grid with ``other_count`` points on the
    other axis within :func:`pattern_points_limit` (rounded up to two significant digits)."""
    most = max(2, pattern_points_limit() // max(1, other_count))
    return ceil_significant(span_deg / (most - 1 if closed else most))


def check_pattern_grid(elevation_step_deg: float, n_elevation: int, azimuth_step_deg: float | None, n_azimuth: int) -> None:
    """Refuse, before anything is allocated, a pattern grid too large to read back within the
    memory limit (``n_azimuth`` 1 and ``azimuth_step_deg`` None for an azimuth-symmetric table)."""
    if azimuth_step_deg is None:
        asked = f"elevation_step_deg={elevation_step_deg:g} asks for {n_elevation:,} elevations"
        hint = f"use elevation_step_deg of at least {finest_step_deg(180.0, True, 1):g} deg"
    else:
        asked = (f"elevation_step_deg={elevation_step_deg:g} and azimuth_step_deg={azimuth_step_deg:g} ask for a "
                 f"{n_elevation:,} x {n_azimuth:,} grid")
        if n_elevation >= n_azimuth / 2:  # the elevation step is the finer one: say what it should be
            hint = (f"at azimuth_step_deg={azimuth_step_deg:g} use elevation_step_deg of at least "
                    f"{finest_step_deg(180.0, True, n_azimuth):g} deg")
        else:
            hint = (f"at elevation_step_deg={elevation_step_deg:g} use azimuth_step_deg of at least "
                    f"{finest_step_deg(360.0, False, n_elevation):g} deg")
    check_allocation(f"{asked}, a table of {n_elevation * n_azimuth:,} points", n_elevation * n_azimuth,
                     PATTERN_BYTES_PER_POINT, MEMORY_LIMIT_BYTES, hint)


def pattern_grid(elevation_step_deg: float, azimuth_step_deg: float | None) -> tuple[np.ndarray, np.ndarray | None]:
    """Elevations -90..90 and azimuths [0, 360) (None for a symmetric table) at the given steps,
    after checking that the grid fits the memory limit (:func:`check_pattern_grid`)."""
    n_el = angle_count(elevation_step_deg, 180.0, "elevation_step_deg", closed=True)
    n_az = 1 if azimuth_step_deg is None else angle_count(azimuth_step_deg, 360.0, "azimuth_step_deg", closed=False)
    check_pattern_grid(elevation_step_deg, n_el, azimuth_step_deg, n_az)
    elevation = angle_grid(elevation_step_deg, 180.0, "elevation_step_deg", closed=True) - 90.0
    azimuth = None if azimuth_step_deg is None else angle_grid(azimuth_step_deg, 360.0, "azimuth_step_deg", closed=False)
    return elevation, azimuth


def check_frequency(frequency_hz: float) -> float:
    """A pattern builder's frequency as a float, or one UserError line."""
    return positive_number("frequency_hz", frequency_hz, "a positive number of hertz")


def _floor_db(gain: np.ndarray) -> np.ndarray:
    return np.maximum(linear_to_db(gain), GAIN_FLOOR_DBIC)


def turnstile_over_reflector(
    spacing_wavelengths: float,
    frequency_hz: float = DEMO_FREQUENCY_HZ,
    *,
    elevation_step_deg: float = 1.0,
    azimuth_step_deg: float = 10.0,
) -> PatternTable:
    """Two crossed horizontal half-wave dipoles in quadrature (RHCP at the zenith) with their
    centre ``spacing_wavelengths`` above an infinite perfectly conducting plane; image theory,
    lossless (gain = directivity). ``frequency_hz`` only labels the table: the geometry is in
    wavelengths, so the spacing in metres is spacing_wavelengths * c / frequency_hz."""
    if not (isinstance(spacing_wavelengths, (int, float)) and math.isfinite(spacing_wavelengths) and 0 < spacing_wavelengths <= 20):
        raise UserError(f"spacing_wavelengths: must be a number in (0, 20] wavelengths, got {spacing_wavelengths!r}")
    frequency_hz = check_frequency(frequency_hz)
    if spacing_wavelengths > 5:
        warn(f"spacing_wavelengths {spacing_wavelengths:g}: the lobes narrow to a few degrees near the horizon; "
             "a 1 deg elevation grid no longer resolves them")
    elevation, azimuth = pattern_grid(elevation_step_deg, azimuth_step_deg)
    d_r, d_l = partial_directivities(crossed_dipoles(spacing_wavelengths), azimuth[None, :], elevation[:, None], pec_ground=True)
    spacing_m = spacing_wavelengths * SPEED_OF_LIGHT_M_S / frequency_hz
    header = {
        "frequency_mhz": format_number(frequency_hz / 1e6),
        "model": (
            f"turnstile: two crossed horizontal half-wave dipoles (thin wire, sinusoidal current) fed equal "
            f"amplitude in quadrature, RHCP at the zenith, centred {format_number(spacing_wavelengths)} wavelength "
            "above an infinite perfectly conducting plane; image theory (Balanis, Antenna Theory, ch. 4)"
        ),
        "frame": (
            "x east, y north, z up; dipoles along east (phase 0) and north (phase -90 deg); azimuth_deg from "
            "north toward east, elevation_deg above the horizon; RHCP/LHCP per IEEE Std 145"
        ),
        "generated_by": "planner pattern build",
        "builder": "image-turnstile",
        "parameters": (
            f"spacing_wavelengths={format_number(spacing_wavelengths)}; frequency_hz={format_number(frequency_hz)}; "
            f"elevation_step_deg={format_number(elevation_step_deg)}; azimuth_step_deg={format_number(azimuth_step_deg)}"
        ),
        "reflector_spacing_m": f"{spacing_m:.4f}",
        "gain_reference": (
            "partial gains for RHCP and LHCP waves in dBic; lossless, so gain = directivity, normalised over "
            "the upper hemisphere; total gain is their sum"
        ),
        "below_horizon": (
            f"an infinite perfect conductor passes no field: {format_number(GAIN_FLOOR_DBIC)} dBic (the floor) "
            "below the horizon and at it; real finite reflectors leak"
        ),
        "feed": (
            "none: closed-form currents with no feed network, so no feed impedance and no mismatch charged; "
            "a cross-check, not a buildable candidate (the wire solver's turnstile template has the feed)"
        ),
        "radiation_efficiency": "1",
    }
    return PatternTable(
        path=None,
        frequency_hz=frequency_hz,
        header=header,
        elevation_deg=elevation,
        azimuth_deg=azimuth,
        gain_rhcp_dbic=_floor_db(d_r),
        gain_lhcp_dbic=_floor_db(d_l),
        radiation_efficiency=1.0,
    )


def isotropic_rhcp(frequency_hz: float = DEMO_FREQUENCY_HZ, *, elevation_step_deg: float = 1.0) -> PatternTable:
    """Reference pattern: 0 dBic RHCP in every direction of the sphere, LHCP at the floor.

    Not a realizable antenna (no antenna is circularly polarized in every direction); it is the
    yardstick against which the other patterns are read."""
    frequency_hz = check_frequency(frequency_hz)
    elevation, _ = pattern_grid(elevation_step_deg, None)
    header = {
        "frequency_mhz": format_number(frequency_hz / 1e6),
        "model": "isotropic RHCP reference: 0 dBic RHCP over the whole sphere, no LHCP (not a realizable antenna)",
        "frame": "azimuth-symmetric; elevation_deg above the horizon; RHCP/LHCP per IEEE Std 145",
        "generated_by": "planner pattern build",
        "builder": "isotropic-rhcp",
        "parameters": f"frequency_hz={format_number(frequency_hz)}; elevation_step_deg={format_number(elevation_step_deg)}",
        "gain_reference": (
            f"partial gains for RHCP and LHCP waves in dBic; LHCP at the floor {format_number(GAIN_FLOOR_DBIC)} dBic "
            "(no field); both hemispheres"
        ),
        "feed": "ideal reference: matched to the 50 ohm line by definition",
        "feed_impedance_ohm": "50.000+0.000j",
        "feed_vswr": "1.000",
        "feed_mismatch_loss_db": "0.000",
        "feed_reference_ohm": "50",
        "radiation_efficiency": "1",
    }
    return PatternTable(
        path=None,
        frequency_hz=frequency_hz,
        header=header,
        elevation_deg=elevation,
        azimuth_deg=None,
        gain_rhcp_dbic=np.zeros(len(elevation)),
        gain_lhcp_dbic=np.full(len(elevation), GAIN_FLOOR_DBIC),
        feed_vswr=1.0,
        feed_impedance_ohm=complex(50.0, 0.0),
        radiation_efficiency=1.0,
    )


TEMPLATES: dict[str, Callable[..., PatternTable]] = {
    "image-turnstile": turnstile_over_reflector,
    "isotropic-rhcp": isotropic_rhcp,
}


def build_pattern(template: str, **params: Any) -> PatternTable:
    """Build a one-off table from a template name and its parameters (numbers or numeric text)."""
    if template not in TEMPLATES:
        raise UserError(f"pattern template {template!r} is unknown; allowed: {', '.join(TEMPLATES)}")
    builder = TEMPLATES[template]
    allowed = [name for name in inspect.signature(builder).parameters]
    kwargs: dict[str, float] = {}
    for name, value in params.items():
        if name not in allowed:
            raise UserError(f"pattern template {template!r}: unknown parameter {name!r}; allowed: {', '.join(allowed)}")
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise UserError(f"pattern template {template!r}: {name} must be a number, got {value!r}") from None
        kwargs[name] = number
    required = [n for n, p in inspect.signature(builder).parameters.items() if p.default is inspect.Parameter.empty]
    for name in required:
        if name not in kwargs:
            raise UserError(f"pattern template {template!r}: missing parameter {name!r}; parameters: {', '.join(allowed)}")
    return builder(**kwargs)


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


def builder_template(builder: str, source: str = "pattern table") -> str:
    """The template name a header's ``builder`` line stands for, or one UserError line."""
    from planner.antenna.synth.templates import TEMPLATES as WIRE

    name = BUILDER_ALIASES.get(builder, builder)
    if name in TEMPLATES or name in WIRE:
        return name
    allowed = ", ".join([*TEMPLATES, *WIRE])
    raise UserError(f"{source}: builder {_clip(builder)!r} is not one of planner's templates; allowed: {allowed}")


def _clip(text: str, limit: int = 60) -> str:
    return text if len(text) <= limit else text[:limit] + "..."


def rebuild_pattern(builder: str, parameters: dict[str, str], source: str = "pattern table") -> PatternTable:
    """Build the table a header describes: its template (``builder``) with its parameters (text).

    Parameters are checked as ``planner pattern build`` checks them: the analytic templates take
    numbers only, the wire templates their own typed and ranged parameters.
    """
    template = builder_template(builder, source)
    if template in TEMPLATES:
        return build_pattern(template, **parameters)
    return _wire_table(template, **parameters)


# The demo station's candidates as a careful builder would make them (planner.antenna.synth): elements
# trimmed to resonance, a designed phasing line and matching section, a four-rod reflector and a
# 4 m mast over the medium dry ground of the demo site. One table keeps a common mistake.
_DEMO_MAST = {"frequency_hz": DEMO_FREQUENCY_HZ, "ground": "medium-dry-ground", "mast_height_m": 4.0}
_BUILT = {**_DEMO_MAST, "trim": "resonance", "feed": "harness"}
_TALL = {"width_to_height": 0.5, "exponent": 6.0}

SHIPPED_PATTERNS: dict[str, tuple[Callable[..., PatternTable], dict[str, Any]]] = {
    "turnstile-close.csv": (
        lambda **kw: _wire_table("turnstile", **kw),
        {**_BUILT, "reflector": "rods", "spacing_wavelengths": 0.25},
    ),
    "turnstile-far.csv": (
        lambda **kw: _wire_table("turnstile", **kw),
        {**_BUILT, "reflector": "rods", "spacing_wavelengths": 0.75},
    ),
    "loops-round-close.csv": (
        lambda **kw: _wire_table("crossed-loops", **kw),
        {**_BUILT, "reflector": "rods", "spacing_wavelengths": 0.15},
    ),
    "loops-tall-far.csv": (
        lambda **kw: _wire_table("crossed-loops", **kw),
        {**_BUILT, **_TALL, "reflector": "rods", "spacing_wavelengths": 0.6},
    ),
    "loops-tall-free.csv": (
        lambda **kw: _wire_table("crossed-loops", **kw),
        {**_BUILT, **_TALL, "spacing_wavelengths": 0.6},
    ),
    # The common mistake: tall loops cut to exactly one wavelength and never trimmed, joined by a
    # textbook quarter wave of 50 ohm solid-PE line and no matching section.
    "loops-untrimmed.csv": (
        lambda **kw: _wire_table("crossed-loops", **kw),
        {**_DEMO_MAST, **_TALL, "reflector": "rods", "spacing_wavelengths": 0.6, "feed": "line", "velocity_factor": 0.66},
    ),
    "isotropic-rhcp.csv": (isotropic_rhcp, {"frequency_hz": DEMO_FREQUENCY_HZ}),
}
"""File name -> (builder, keyword arguments) of every table shipped in patterns/."""


def _wire_table(template: str, **values: Any) -> PatternTable:
    """A table from the wire solver, imported only when asked for (synth is upstream)."""
    from planner.antenna.synth.tables import build_template_table

    return build_template_table(template, values, command="planner pattern build")


def build_shipped_patterns(folder: str | Path, *, rules: WriteRules = REPLACE_ANY) -> list[Path]:
    """(Re)generate every shipped table into ``folder`` (which must exist); returns the paths."""
    folder = Path(folder)
    written = []
    for name, (builder, kwargs) in SHIPPED_PATTERNS.items():
        written.append(write_pattern(folder / name, builder(**kwargs), rules=rules))
    return written

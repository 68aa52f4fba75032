"""Stated limits on what one parameter or one input file can make a run allocate or take.

Every size a user controls (a grid step, a segment count, a sweep range, a window, an input
file) is checked against a figure here BEFORE the work is allocated, so a mistyped value is
refused in one line that gives the estimate and the limit, instead of a MemoryError or an
hour of waiting. The figures are constants (nothing here is ever written); each says why it
is what it is. The per-item costs were measured with ``tracemalloc`` peaks (numpy reports
its buffers to tracemalloc) on the project's own code; they are rounded up, so an estimate
errs on the high side.

To change a limit, change its constant here: every check reads it from this module, and the
messages print it.
"""

from __future__ import annotations

import math
import os
import stat
from dataclasses import dataclass
from pathlib import Path

from planner.errors import UserError

__all__ = [
    "KIB",
    "MIB",
    "GIB",
    "MEMORY_LIMIT_BYTES",
    "RUN_TIME_LIMIT_S",
    "ELEMENTS_FILE_LIMIT_BYTES",
    "SCENARIO_FILE_LIMIT_BYTES",
    "PATTERN_FILE_LIMIT_BYTES",
    "PATTERN_BYTES_PER_POINT",
    "MOM_BYTES_PER_SEGMENT_PAIR",
    "MOM_SECONDS_PER_SEGMENT_PAIR",
    "SWEEP_POINTS_LIMIT",
    "SWEEP_SECONDS_PER_POINT",
    "PROPAGATION_SECONDS_PER_SAMPLE",
    "PROPAGATION_SAMPLES_LIMIT",
    "WINDOW_DAYS_LIMIT",
    "NETWORK_STATIONS_LIMIT",
    "TRACK_STEP_MIN_S",
    "ReadWording",
    "read_text_capped",
    "check_allocation",
    "check_duration",
    "format_bytes",
    "format_seconds",
    "ceil_significant",
]

KIB = 1024
MIB = 1024 * KIB
GIB = 1024 * MIB

# --------------------------------------------------------------------------- the budgets

MEMORY_LIMIT_BYTES = 1 * GIB
"""Estimated peak of one step of a run (a moment-method fill, a pattern grid, a table read).

A run should stay well under about 2 GiB so it fits beside everything else on a laptop with
8 GB (common practice, no published source); one step at 1 GiB leaves the other half for the
interpreter, numpy, the element sets and the forecast. The largest legitimate step, the
default wire-grid reflector (about 920 segments, 0.7 GiB to fill), fits."""

RUN_TIME_LIMIT_S = 3600.0
"""Estimated time of one step past which a request is taken for a mistake: a planning run is
expected to finish within the hour on a 2-core laptop (common practice, no published source)."""

# --------------------------------------------------------------------------- input files

ELEMENTS_FILE_LIMIT_BYTES = 64 * MIB
"""Largest element file read. The project's own OMM XML writer (sample_tle/demo_omm.xml: 5
objects in 7,613 bytes) takes about 1.5 kB an object, so a full public catalog of ~30,000
objects is about 46 MB in OMM XML (the bulkiest format; TLE takes 150 bytes an object). 64 MiB
leaves about 40 % of room. Reading costs about 2.2 kB of memory and 0.7 ms an element set
(measured on TLE, the format with the most sets per byte), so even a 64 MiB TLE file (about
450,000 sets) reads within MEMORY_LIMIT_BYTES, in about five minutes; the pass search then
refuses that many satellites over more than a few days (PROPAGATION_SAMPLES_LIMIT)."""

SCENARIO_FILE_LIMIT_BYTES = 1 * MIB
"""Largest scenario TOML read: the commented demo scenario is 8 kB; a scenario never needs more
than about 1 MB (a catalog goes in its own element file) (common practice, no published source)."""

PATTERN_BYTES_PER_POINT = 2200
"""Memory of one grid point of a pattern table, as the reader needs it (measured 2,130 bytes a
row, most of it the sphere-mean-gain check's 16 quadrature nodes a cell). Building costs less
(220 bytes a point for the closed-form builders, 260 for wire-model tables, measured), but a
table is only of use if it can be read back, so grids are sized at this cost: MEMORY_LIMIT_BYTES
allows about 488,000 points, e.g. 0.5 deg x 0.5 deg (361 x 720 = 259,920 points). Measured
antenna patterns rarely come finer than 1 deg (181 x 360 = 65,160 points) (common practice, no
published source)."""

PATTERN_FILE_LIMIT_BYTES = 32 * MIB
"""Largest pattern table read. At MEMORY_LIMIT_BYTES / PATTERN_BYTES_PER_POINT (about 488,000
rows) of 23 bytes (the shipped tables) to 60 bytes (numbers written with every digit), a
readable table is 11-30 MB, so 32 MiB refuses no table the row check would accept; the row
check does the rest."""

# --------------------------------------------------------------------------- the wire solver

MOM_BYTES_PER_SEGMENT_PAIR = 900
"""Peak memory of ``planner.antenna.synth.mom.solve`` per (segment, segment) pair: the moment matrix is
N x N complex128 (16 bytes a pair; Harrington, Field Computation by Moment Methods, ch. 4: one
entry for each pair of basis and testing functions), and the fill keeps the four segment-end
integral blocks and their combinations alive at once. Measured 803 bytes a pair (free space,
256 and 352 segments) and 870 (over a PEC plane, images doubling the fill); so MEMORY_LIMIT_BYTES
allows about 1,090 segments."""

MOM_SECONDS_PER_SEGMENT_PAIR = 5e-6
"""Fill time per segment pair on one core (measured 4.8 us at 352 segments). The LU solve grows
as N^3 but at the sizes the memory limit allows (about 1,090 segments) it takes a second or two,
so the fill dominates."""

# --------------------------------------------------------------------------- sweeps and windows

SWEEP_POINTS_LIMIT = 60
"""Most reflector spacings in one ``planner sweep``: each is a full solve, trim, harness design
and forecast. 60 points of 0.05 wavelength cover 0.05 to 3 wavelengths, the whole range a
template allows."""

SWEEP_SECONDS_PER_POINT = 5.0
"""Time of one sweep point: measured about 2 s for the demo's built candidates (trim, harness
design, 200 segments over real ground, then the week's forecast of five satellites) on 2 cores;
rounded up for scenarios with more satellites."""

PROPAGATION_SECONDS_PER_SAMPLE = 0.75e-6
"""SGP4 time per (satellite, search-grid time) on one core, measured with ``SatrecArray.sgp4``
(752 ns a sample over 2,000 invented satellites)."""

PROPAGATION_SAMPLES_LIMIT = round(RUN_TIME_LIMIT_S / PROPAGATION_SECONDS_PER_SAMPLE)
"""Most SGP4 search-grid samples one pass prediction may ask for: RUN_TIME_LIMIT_S of
propagation on one core (4.8e9 samples; half the time on two). A full public catalog (~30,000
objects) over the longest window (31 days, a 55 s search grid for LEO) is 1.5e9; the 10,000
objects x 7 days of ``benchmarks/rank.py`` are 1.1e8. Memory is not the bound here: the pass
search works in chunks of bounded size (``planner.passes``), so only the total time is."""

WINDOW_DAYS_LIMIT = 31.0
"""Longest prediction window: SGP4 element sets go stale in days (errors of kilometres a day,
and more than 30 days from their epoch they are refused), so a longer window predicts nothing
trustworthy (common practice, no published source)."""

NETWORK_STATIONS_LIMIT = 50
"""Most [[network_station]] tables in a scenario: a small network, and every command runs the
whole prediction and forecast once per station, so 50 stations of a catalog week (about 65 s
each, README "Networks and catalogs") stay inside RUN_TIME_LIMIT_S."""

TRACK_STEP_MIN_S = 0.5
"""Finest track step: a LEO satellite crosses the sky in about 10 minutes and moves at most about
half a degree in 0.5 s (7.6 km/s at 400 km overhead is 1.1 deg/s), finer than the shipped 1 deg
pattern tables resolve; a geosynchronous
satellite in view for the longest window at this step is one track of 5.4 million samples
(about 400 MB while it is computed) (common practice, no published source)."""


# --------------------------------------------------------------------------- units for messages


def format_bytes(size_bytes: float) -> str:
    """A byte count in binary units for a message: 37 bytes, 4.1 GiB, 512 MiB."""
    value = float(size_bytes)
    units = ("bytes", "kiB", "MiB", "GiB", "TiB", "PiB")
    power = 0
    while value >= 1024.0 and power < len(units) - 1:
        value /= 1024.0
        power += 1
    if power and value < 10:
        return f"{value:.2g} {units[power]}"
    return f"{value:,.0f} {units[power]}"


def format_seconds(seconds: float) -> str:
    """A duration for a message: 40 s, 12 min, 3.5 h, 40 days, 111 years."""
    s = float(seconds)
    if s < 120:
        return f"{s:.2g} s"
    if s < 2 * 3600:
        return f"{s / 60:.0f} min"
    if s < 3 * 86400:
        return f"{s / 3600:.2g} h"
    if s < 1000 * 86400:
        return f"{s / 86400:,.0f} days"
    years = s / (365.25 * 86400)
    return f"{years:,.0f} years" if years < 1e6 else f"{years:.1e} years"


# --------------------------------------------------------------------------- checks


def check_allocation(what: str, count: int, bytes_per_item: float, limit_bytes: float, hint: str) -> None:
    """Refuse, before allocating, work whose estimated memory ``count * bytes_per_item`` exceeds
    ``limit_bytes``: one UserError line "WHAT (ESTIMATE); the limit is LIMIT; HINT".

    ``what`` names the parameter and the size it asks for (e.g. "elevation_step_deg=5e-05 asks
    for a 3,600,001 x 36 grid"); ``hint`` says what would fit.
    """
    estimate = float(count) * float(bytes_per_item)
    if estimate > limit_bytes:
        raise UserError(f"{what} ({format_bytes(estimate)}); the limit is {format_bytes(limit_bytes)}; {hint}")


def check_duration(what: str, count: float, seconds_per_item: float, limit_s: float, hint: str) -> None:
    """Refuse work whose estimated time ``count * seconds_per_item`` exceeds ``limit_s``: one
    UserError line "WHAT (about ESTIMATE); the limit is LIMIT; HINT"."""
    estimate = float(count) * float(seconds_per_item)
    if estimate > limit_s:
        raise UserError(f"{what} (about {format_seconds(estimate)}); the limit is {format_seconds(limit_s)}; {hint}")


# --------------------------------------------------------------------------- reading input files


@dataclass(frozen=True)
class ReadWording:
    """How a reader words the ways reading a file can fail (one line each).

    ``{path}`` is the file as the user gave it, ``{what}`` the kind of file, ``{reason}`` the
    system's explanation, ``{offset}`` the first byte that is not valid text. A reader whose
    messages are part of its contract passes its own wording.
    """

    not_found: str = "{path}: cannot read: No such file or directory"
    folder: str = "{path}: is a folder; give the path of the {what}"
    not_text: str = "{path}: not UTF-8 text (bad byte at offset {offset}); the {what} must be UTF-8 text"
    other: str = "{path}: cannot read: {reason}"


def _size_text(size_bytes: int) -> str:
    """A file size for a message: "1.9 MiB (2,000,000 bytes)", or "37 bytes" when small."""
    if size_bytes < KIB:
        return format_bytes(size_bytes)
    return f"{format_bytes(size_bytes)} ({size_bytes:,} bytes)"


def _regular_file_size(handle) -> int | None:
    """The size of an open regular file, or None for a pipe, a device or a socket."""
    info = os.fstat(handle.fileno())
    return info.st_size if stat.S_ISREG(info.st_mode) else None


def read_text_capped(
    path: str | Path,
    *,
    what: str,
    limit_bytes: int,
    encoding: str = "utf-8-sig",
    label: str | None = None,
    wording: ReadWording = ReadWording(),
) -> str:
    """The text of ``path``, read through one ``open()`` of at most ``limit_bytes + 1`` bytes.

    A regular file larger than the limit is refused from its size without reading it; a pipe or
    a device (``/dev/zero``) is read only up to one byte past the limit. Either way the refusal
    is one UserError line naming the file (``label``, default ``str(path)``), its size (or "more
    than" the limit), and the limit. A missing file, a folder, a permission problem or bytes that
    are not ``encoding`` text are one line each (``wording``).
    """
    name = str(path) if label is None else label
    limit_text = _size_text(limit_bytes)
    try:
        with open(path, "rb") as handle:
            size = _regular_file_size(handle)
            if size is not None and size > limit_bytes:
                raise UserError(f"{name}: the {what} is {_size_text(size)}; the limit is {limit_text}")
            # read(n) sets aside n bytes at once: ask a regular file for no more than it holds
            want = limit_bytes + 1 if size is None else min(size, limit_bytes) + 1
            data = handle.read(want)
            if len(data) == want <= limit_bytes:  # a regular file that grew since fstat
                data += handle.read(limit_bytes + 1 - want)
    except FileNotFoundError:
        raise UserError(wording.not_found.format(path=name, what=what, reason="No such file or directory")) from None
    except IsADirectoryError:
        raise UserError(wording.folder.format(path=name, what=what, reason="Is a directory")) from None
    except OSError as exc:
        raise UserError(wording.other.format(path=name, what=what, reason=exc.strerror or exc)) from None
    if len(data) > limit_bytes:
        raise UserError(f"{name}: the {what} is more than {limit_text}, which is the limit; reading stopped there")
    try:
        return data.decode(encoding)
    except UnicodeDecodeError as exc:
        raise UserError(wording.not_text.format(path=name, what=what, offset=exc.start)) from None


def ceil_significant(value: float, digits: int = 2) -> float:
    """``value`` rounded UP to ``digits`` significant digits (for a "use at least" hint)."""
    if not (math.isfinite(value) and value > 0):
        return value
    scale = 10.0 ** (math.floor(math.log10(value)) - digits + 1)
    return math.ceil(value / scale - 1e-9) * scale

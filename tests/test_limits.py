"""Stated limits: no single parameter or input file makes a run allocate or take past them.

What is checked, and against what:
* Each bound is refused through the real command (``planner.cli.main`` in this process, as
  ``tests/test_hardening.py`` runs it): exit code 2, exactly one ``planner: error:`` line, no
  traceback (the project's error contract, README "Usage"), and the line names the parameter,
  the estimate and the limit.
* Input files are read through one ``open()`` of at most the cap plus one byte: a character
  device that never ends (POSIX ``/dev/zero``) and a FIFO (POSIX mkfifo) are cut off at the cap,
  a regular file over the cap is refused from its size (``os.fstat``), one at the cap is read.
* Memory is measured with ``tracemalloc`` (Python docs, "tracemalloc": ``get_traced_memory()``
  returns the current and peak size of traced blocks; numpy reports its array buffers to it,
  from memory: numpy 1.13 release notes).
* The moment matrix is N x N in the segments (Harrington, Field Computation by Moment Methods,
  ch. 4): its complex128 entries alone are 16 N^2 bytes, a floor for the stated per-pair cost.
* The legitimate values still pass: the shipped defaults, a 1 deg grid, the demo scenario's window,
  a 10,000-object week.
The limits' figures themselves are common practice, no published source (see planner/limits.py).

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import math
import os
import threading
import tracemalloc
from pathlib import Path

import pytest
from sgp4.api import Satrec

from planner import limits
from planner.antenna import format_pattern, turnstile_over_reflector
from planner.antenna.registry import SHIPPED_PATTERNS
from planner.antenna.synth import mom, templates
from planner.antenna.synth.geometry import estimated_segment_count, segment_model
from planner.errors import UserError
from planner.limits import (
    GIB,
    MEMORY_LIMIT_BYTES,
    MIB,
    MOM_BYTES_PER_SEGMENT_PAIR,
    NETWORK_STATIONS_LIMIT,
    PATTERN_BYTES_PER_POINT,
    PATTERN_FILE_LIMIT_BYTES,
    RUN_TIME_LIMIT_S,
    SCENARIO_FILE_LIMIT_BYTES,
    TRACK_STEP_MIN_S,
    WINDOW_DAYS_LIMIT,
    check_allocation,
    format_bytes,
    read_text_capped,
)
from planner.passes import predict as predict_module
from planner.passes.search import _perigee_period_s
from planner.scenario import load_scenario
from tests.conftest import DEMO, ROOT
from tests.orbit_factory import make_tle
from tests.test_hardening import assert_user_error, run_cli

DEMO_TLE = ROOT / "sample_tle" / "demo.tle"
DEV_ZERO = Path("/dev/zero")  # POSIX: a character device that reads as endless zero bytes
START_TEXT = "2027-01-04T00:00:00Z"
QUICK_LOOK = ("--lat", "52.137", "--lon", "-1.804", "--start", START_TEXT)


def demo_scenario(tmp_path: Path, days: float = 1.0) -> Path:
    """The demo scenario with its relative paths made absolute and a shorter window."""
    text = DEMO.read_text().replace('"../', f'"{ROOT}/').replace("days = 7", f"days = {days}")
    path = tmp_path / "demo.toml"
    path.write_text(text)
    return path


def measured(function):
    """``function()``'s result and the peak traced memory while it ran (tracemalloc, Python
    docs); it is run once before, so the modules it imports on first use are not counted."""
    function()
    tracemalloc.start()
    try:
        result = function()
        return result, tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()


# --------------------------------------------------------------------------- units and checks


def test_byte_and_allocation_wording():
    # IEC 80000-13 binary prefixes: 1 MiB = 2^20 bytes, 1 GiB = 2^30 bytes.
    assert (MIB, GIB) == (2**20, 2**30)
    assert format_bytes(512 * MIB) == "512 MiB"
    assert format_bytes(4.1 * GIB) == "4.1 GiB"
    assert format_bytes(37) == "37 bytes"
    check_allocation("fits", 10, 10, 100, "nothing")  # exactly at the limit: allowed
    with pytest.raises(UserError) as info:
        check_allocation("x=1 asks for 101 items", 101, 1 * MIB, 100 * MIB, "use x=2")
    assert str(info.value) == "x=1 asks for 101 items (101 MiB); the limit is 100 MiB; use x=2"


# --------------------------------------------------------------------------- input files


@pytest.mark.skipif(not DEV_ZERO.exists(), reason="no /dev/zero on this system")
def test_dev_zero_as_elements_is_cut_off_at_the_cap():
    run, peak = measured(lambda: run_cli("passes", "--elements", DEV_ZERO, *QUICK_LOOK))
    line = assert_user_error(run, str(DEV_ZERO), "element file", "more than 64 MiB", "limit")
    assert "reading stopped" in line
    # One read of cap + 1 bytes: the run never holds much more than the cap (a read to the end
    # would hold everything the machine has).
    assert peak < 3 * limits.ELEMENTS_FILE_LIMIT_BYTES, peak


def test_a_fifo_is_read_only_to_one_byte_past_the_cap(tmp_path):
    fifo = tmp_path / "elements.fifo"
    os.mkfifo(fifo)  # POSIX mkfifo(3)
    cap = 4096

    def writer():
        try:
            with open(fifo, "wb") as handle:
                handle.write(b"x" * (cap * 10))
        except BrokenPipeError:  # the reader closed its end at the cap, as it should
            pass

    thread = threading.Thread(target=writer)
    thread.start()
    with pytest.raises(UserError) as info:
        read_text_capped(fifo, what="element file", limit_bytes=cap)
    thread.join(timeout=30)
    assert f"{fifo}: the element file is more than 4 kiB (4,096 bytes)" in str(info.value)


def test_a_file_at_the_cap_is_read_and_one_byte_over_is_refused(tmp_path):
    cap = 1000
    at_cap = tmp_path / "at.txt"
    at_cap.write_bytes(b"a" * cap)
    assert read_text_capped(at_cap, what="scenario file", limit_bytes=cap) == "a" * cap
    over = tmp_path / "over.txt"
    over.write_bytes(b"a" * (cap + 1))
    with pytest.raises(UserError) as info:
        read_text_capped(over, what="scenario file", limit_bytes=cap)
    assert str(info.value) == f"{over}: the scenario file is 1,001 bytes; the limit is 1,000 bytes"


def test_scenario_one_byte_over_its_cap_is_refused_and_one_at_it_loads(tmp_path):
    path = demo_scenario(tmp_path)
    text = path.read_bytes()
    padding = SCENARIO_FILE_LIMIT_BYTES - len(text) - 1
    path.write_bytes(text + b"#" + b" " * (padding - 1) + b"\n")  # a TOML comment fills it
    assert path.stat().st_size == SCENARIO_FILE_LIMIT_BYTES
    assert load_scenario(path).window.days == 1.0
    path.write_bytes(path.read_bytes() + b"\n")
    line = assert_user_error(run_cli("passes", path), str(path), "scenario file", "1,048,577 bytes", "the limit is 1 MiB")
    assert line.startswith("planner: error: ")


def test_pattern_file_over_its_cap_is_refused_from_its_size(tmp_path):
    path = tmp_path / "huge.csv"
    with open(path, "wb") as handle:  # a sparse file: nothing is written, the size is set
        handle.truncate(PATTERN_FILE_LIMIT_BYTES + 1)
    assert_user_error(run_cli("pattern", "show", path), str(path), "pattern table", "32 MiB", "the limit is")


def test_reading_failures_are_one_line_naming_the_file(tmp_path):
    missing = tmp_path / "absent.tle"
    with pytest.raises(UserError, match="No such file"):
        read_text_capped(missing, what="element file", limit_bytes=100)
    with pytest.raises(UserError, match="is a folder"):
        read_text_capped(tmp_path, what="element file", limit_bytes=100)
    latin = tmp_path / "latin1.txt"
    latin.write_bytes("caf\u00e9".encode("latin-1"))
    with pytest.raises(UserError, match=r"not UTF-8 text \(bad byte at offset 3\)"):
        read_text_capped(latin, what="element file", limit_bytes=100)
    if os.geteuid() != 0:  # root reads whatever the mode says
        locked = tmp_path / "locked.tle"
        locked.write_text("x")
        locked.chmod(0)
        with pytest.raises(UserError, match="Permission denied"):
            read_text_capped(locked, what="element file", limit_bytes=100)


# --------------------------------------------------------------------------- pattern grids


def test_a_tiny_elevation_step_is_refused_before_allocating(tmp_path):
    out = tmp_path / "fine.csv"
    run, peak = measured(
        lambda: run_cli(
            "pattern", "build", "image-turnstile", "spacing_wavelengths=0.25", "elevation_step_deg=0.00005", "--out", out
        )
    )
    # 180 / 5e-5 + 1 = 3,600,001 elevations x 360 / 10 = 36 azimuths (the default step).
    expected_gib = 3_600_001 * 36 * PATTERN_BYTES_PER_POINT / GIB
    line = assert_user_error(
        run,
        "elevation_step_deg=5e-05",
        "3,600,001 x 36",
        f"({expected_gib:,.0f} GiB)",
        "the limit is 1 GiB",
        "use elevation_step_deg of at least",
    )
    assert not out.exists(), line
    assert peak < 50e6, peak


def test_a_tiny_azimuth_step_is_refused(tmp_path):
    run = run_cli(
        "pattern", "build", "image-turnstile", "spacing_wavelengths=0.25", "azimuth_step_deg=0.001", "--out", tmp_path / "x.csv"
    )
    assert_user_error(
        run, "azimuth_step_deg=0.001", "181 x 360,000", "GiB", "the limit is 1 GiB", "use azimuth_step_deg of at least"
    )


def test_a_one_degree_grid_is_built_and_read_back(tmp_path):
    out = tmp_path / "one-degree.csv"
    run = run_cli(
        "pattern",
        "build",
        "image-turnstile",
        "spacing_wavelengths=0.25",
        "elevation_step_deg=1",
        "azimuth_step_deg=1",
        "--out",
        out,
    )
    assert run.code == 0, run.stderr
    rows = [line for line in out.read_text().splitlines() if line and not line.startswith("#")]
    assert len(rows) == 1 + 181 * 360  # the column row, then -90..90 x 0..359
    assert run_cli("pattern", "show", out).code == 0


def test_wire_table_grid_is_refused_before_solving(tmp_path):
    run = run_cli("pattern", "build", "turnstile", "elevation_step_deg=0.1", "azimuth_step_deg=0.5", "--out", tmp_path / "x.csv")
    assert_user_error(run, "elevation_step_deg=0.1", "1,801 x 720", "GiB", "the limit is 1 GiB")


def test_a_table_with_too_many_rows_is_refused_before_parsing(tmp_path):
    rows = MEMORY_LIMIT_BYTES // PATTERN_BYTES_PER_POINT + 10
    path = tmp_path / "long.csv"
    path.write_text("# frequency_mhz = 436\nelevation_deg,gain_rhcp_dbic,gain_lhcp_dbic\n" + "0,0,-60\n" * rows)
    assert path.stat().st_size < PATTERN_FILE_LIMIT_BYTES  # the size cap alone lets it through
    run, peak = measured(lambda: run_cli("pattern", "show", path))
    assert_user_error(run, str(path), f"{rows + 3:,} lines", "the limit is 1 GiB")
    # The text and its line count only: parsing the rows would take rows x 2,200 bytes = 1 GiB.
    assert peak < 3 * path.stat().st_size + 20e6, peak


def test_sweep_rebuild_from_a_header_asking_a_tiny_azimuth_step_is_refused(tmp_path):
    table = turnstile_over_reflector(0.25, elevation_step_deg=30, azimuth_step_deg=90)
    text = format_pattern(table).replace("azimuth_step_deg=90", "azimuth_step_deg=0.0001")
    pattern = tmp_path / "lying.csv"
    pattern.write_text(text)
    scenario = demo_scenario(tmp_path)
    scenario.write_text(scenario.read_text().replace(f'"{ROOT}/patterns/turnstile-close.csv"', f'"{pattern}"', 1))
    run = run_cli("sweep", scenario, "--candidate", "turnstile-close", "--reflector-spacing", "0.2:0.3:0.1", "--quiet")
    assert_user_error(run, "azimuth_step_deg=0.0001", "7 x 3,600,000", "the limit is 1 GiB")


# --------------------------------------------------------------------------- the wire solver


def test_a_grid_reflector_of_thousands_of_wires_is_refused_with_its_segment_count(tmp_path):
    # 3 wavelengths / 0.03 = 100 cells: 101 rods each way, 3 wavelengths at 200 segments a
    # wavelength = 600 segments a rod; 202 x 600 = 121,200, plus the two 48-segment loops.
    run = run_cli(
        "pattern",
        "build",
        "crossed-loops",
        "reflector=grid",
        "reflector_size_wavelengths=3",
        "grid_pitch_wavelengths=0.03",
        "segments_per_wavelength=200",
        "--out",
        tmp_path / "x.csv",
    )
    expected_tib = 121_296**2 * MOM_BYTES_PER_SEGMENT_PAIR / 2**40
    assert_user_error(
        run,
        "121,296 segments",
        "121,296 x 121,296 moment-matrix",
        f"({expected_tib:.2g} TiB)",
        "the limit is 1 GiB",
        "segments_per_wavelength",
    )


# 200 segments on a 1 mm loop are 3.4 radii long: the segmenter's thin-wire warning is expected.
@pytest.mark.filterwarnings("ignore::planner.errors.PlannerWarning")
def test_segment_estimate_is_the_segmenters_count_and_the_pair_cost_covers_the_real_peak():
    for model in (
        templates.crossed_loops(reflector="grid"),
        templates.turnstile(reflector="rods"),
        templates.crossed_loops(segments=200, reflector="rods"),
        templates.dipole(),
    ):
        assert estimated_segment_count(model) == segment_model(model).n_segments
    assert MOM_BYTES_PER_SEGMENT_PAIR >= 16  # at least the complex128 matrix itself (Harrington)
    model = templates.crossed_loops(reflector="rods")
    n = segment_model(model).n_segments
    assert measured(lambda: mom.solve(model))[1] <= n * n * MOM_BYTES_PER_SEGMENT_PAIR


def test_shipped_wire_models_and_the_default_grid_reflector_fit():
    for name, (_, values) in SHIPPED_PATTERNS.items():
        if name.startswith("isotropic"):
            continue
        template = "turnstile" if name.startswith("turnstile") else "crossed-loops"
        specs = templates.TEMPLATES[template][1]
        model = templates.build_model(template, **{k: v for k, v in values.items() if k in specs})
        mom.check_matrix_size(estimated_segment_count(model))
    mom.check_matrix_size(estimated_segment_count(templates.turnstile(reflector="grid")))
    mom.check_matrix_size(estimated_segment_count(templates.crossed_loops(reflector="grid")))


# --------------------------------------------------------------------------- sweeps and windows


def test_a_sweep_of_billions_of_spacings_is_refused_with_its_time(tmp_path):
    run = run_cli(
        "sweep", demo_scenario(tmp_path), "--candidate", "turnstile-close", "--reflector-spacing", "0.1:0.8:1e-9", "--quiet"
    )
    # (0.8 - 0.1) / 1e-9 + 1 = 700,000,001 spacings at 5 s each: 3.5e9 s = 111 years (365.25 d).
    assert_user_error(run, "--reflector-spacing", "700,000,001 spacings", "111 years", "at most 60")


def test_window_length_and_step_limits_through_the_quick_look():
    run = run_cli("passes", "--elements", DEMO_TLE, *QUICK_LOOK, "--days", str(WINDOW_DAYS_LIMIT + 1))
    assert_user_error(run, "--days", f"up to {WINDOW_DAYS_LIMIT:g}")
    run = run_cli("passes", "--elements", DEMO_TLE, *QUICK_LOOK, "--step-s", str(TRACK_STEP_MIN_S / 5))
    assert_user_error(run, "--step-s", f"{TRACK_STEP_MIN_S:g}")


def test_propagation_past_the_time_limit_is_refused_through_the_command(monkeypatch):
    # The demo file (5 satellites, a day) is far inside the limit; with the limit lowered to a
    # millisecond the same command must refuse, naming the samples and the limit.
    assert run_cli("passes", "--elements", DEMO_TLE, *QUICK_LOOK, "--days", "1").code == 0
    monkeypatch.setattr(predict_module, "RUN_TIME_LIMIT_S", 1e-3)
    run = run_cli("passes", "--elements", DEMO_TLE, *QUICK_LOOK, "--days", "1")
    assert_user_error(run, "5 satellites over 1 days", "SGP4 samples", "the limit is", "shorten the window")


def test_propagation_estimate_against_the_limit():
    satrec = Satrec.twoline2rv(*make_tle(99001, height_km=550, inclination_deg=97.6))
    # benchmarks/rank.py's catalog week (10,000 objects x 7 days) is inside the limit.
    predict_module._check_propagation_time([satrec] * 10_000, 7 * 86400.0)
    # Its search step is 1/100 of the perigee period in whole seconds (planner.passes.coarse_step_s).
    step_s = float(math.floor(_perigee_period_s(satrec) / 100.0))
    count = 120_000
    samples = count * (31 * 86400.0 / step_s + 1.0)
    assert samples * limits.PROPAGATION_SECONDS_PER_SAMPLE > RUN_TIME_LIMIT_S
    with pytest.raises(UserError) as info:
        predict_module._check_propagation_time([satrec] * count, 31 * 86400.0)
    assert f"{samples:,.0f} SGP4 samples" in str(info.value)


def test_the_demo_scenario_window_passes(tmp_path):
    run = run_cli("passes", demo_scenario(tmp_path, days=7), "--format", "csv")
    assert run.code == 0, run.stderr
    assert len(run.stdout.splitlines()) > 1


def test_too_many_network_stations_are_refused_and_a_few_pass(tmp_path):
    path = demo_scenario(tmp_path)
    base = path.read_text()

    def with_stations(count: int) -> str:
        # Invented sites along a parallel; the demo station's keys (README "Networks and catalogs").
        tables = "".join(
            f'\n[[network_station]]\nname = "site-{k}"\nlatitude_deg = 52.0\nlongitude_deg = {k * 0.1:.1f}\n' for k in range(count)
        )
        return base + tables

    path.write_text(with_stations(2))
    assert len(load_scenario(path).stations) == 3
    path.write_text(with_stations(NETWORK_STATIONS_LIMIT + 1))
    assert_user_error(
        run_cli("passes", path), f"{NETWORK_STATIONS_LIMIT + 1} network stations", f"at most {NETWORK_STATIONS_LIMIT}"
    )

"""The wire-geometry commands end to end: pattern build/show, harness, sweep on a solver pattern.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import json

import pytest

from planner.antenna import load_pattern
from tests.conftest import ROOT
from tests.conftest import run_planner as run


def test_pattern_build_makes_crossed_loops_over_a_reflector(tmp_path):
    out = tmp_path / "loops.csv"
    result = run(
        "pattern",
        "build",
        "crossed-loops",
        "width_to_height=0.8",
        "exponent=3",
        "reflector=pec",
        "spacing_wavelengths=0.2",
        "--out",
        out,
    )
    assert result.returncode == 0, result.stderr
    table = load_pattern(out)
    assert table.header["generated_by"].startswith("planner pattern build crossed-loops")
    assert "method of moments" in table.header["model"]
    assert float(table.header["feed_vswr"]) >= 1.0
    # Right-hand sense at the zenith: the second loop lags by 90 deg (IEEE Std 145).
    assert table.sense(0.0, 90.0) == 1 and table.axial_ratio_db(0.0, 90.0) < 1.0
    show = run("pattern", "show", out, "--step-deg", "30")
    assert show.returncode == 0 and "axial ratio" in show.stdout and "feed_impedance_ohm" in show.stdout
    magnitude, _, phase = table.header["current_ratio_b_over_a"].partition(" at ")
    assert f"current ratio I_b / I_a: amplitude {magnitude}, phase {phase.split()[0]} deg" in show.stdout


def test_pattern_build_refuses_bad_parameters(tmp_path):
    for args, fragment in (
        (("crossed-loops", "exponent=0.1"), "exponent"),
        (("crossed-loops", "colour=red"), "colour"),
        (("helix",), "helix"),
        (("crossed-loops", "exponent"), "KEY=VALUE"),
    ):
        result = run("pattern", "build", *args, "--out", tmp_path / "x.csv")
        assert result.returncode == 2 and fragment in result.stderr and "Traceback" not in result.stderr, result.stderr
        assert not (tmp_path / "x.csv").exists()


def test_harness_quarter_wave_and_implied_velocity_factor():
    # At 435 MHz a quarter-wave line of VF 0.8 is 13-14 cm; 9.2 cm measured implies VF 0.5-0.6
    # (common practice, no published source).
    result = run("harness", "--frequency-mhz", "435", "--velocity-factor", "0.8", "--format", "json")
    report = json.loads(result.stdout)
    assert 0.13 <= report["quarter_wave_length_m"] <= 0.14
    measured = json.loads(run("harness", "--frequency-mhz", "435", "--measured-length-m", "0.092", "--format", "json").stdout)
    assert 0.5 <= measured["velocity_factor_measured"] <= 0.6
    assert any("equal element currents" in note for note in report["notes"])


def test_sweep_names_the_best_spacing_of_a_solver_pattern(tmp_path):
    text = (ROOT / "scenarios" / "demo.toml").read_text().replace('"../', f'"{ROOT}/').replace("days = 7", "days = 1")
    scenario = tmp_path / "short.toml"
    scenario.write_text(text)
    result = run(
        "sweep",
        scenario,
        "--candidate",
        "loops-round-close",
        "--reflector-spacing",
        "0.1:0.5:0.2",
        "--format",
        "json",
        "--figure",
        tmp_path / "sweep",
        "--quiet",
    )
    assert result.returncode == 0, result.stderr
    document = json.loads(result.stdout)
    assert len(document["spacings"]) == 3
    assert document["best_spacing_wavelengths"] == pytest.approx(
        max(document["spacings"], key=lambda r: r["score"])["spacing_wavelengths"]
    )
    assert (tmp_path / "sweep.png").exists()

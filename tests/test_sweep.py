"""The reflector-placement sweep: spacing parsing, rebuilding, scoring and the command.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pytest
from scipy.constants import c

from planner.antenna import load_pattern, turnstile_over_reflector, write_pattern
from planner.decision.forecast import forecast
from planner.decision.recommend import score_candidates
from planner.decision.sweep import parse_spacing_range, rebuild_at_spacing, sweep_reflector
from planner.errors import UserError
from planner.scenario import load_scenario
from planner.study import Study
from tests.conftest import DEMO, ROOT


def short_demo(tmp_path, days=1.0):
    text = DEMO.read_text().replace('"../', f'"{ROOT}/').replace("days = 7", f"days = {days}")
    path = tmp_path / "short.toml"
    path.write_text(text)
    return path


def test_spacing_range_in_wavelengths_and_metres():
    assert np.allclose(parse_spacing_range("0.1:0.5:0.1", 436e6), [0.1, 0.2, 0.3, 0.4, 0.5])
    # Metres become wavelengths through lambda = c / f (scipy.constants.c).
    wavelength = c / 436e6
    assert np.allclose(parse_spacing_range("0.05m:0.15m:0.05m", 436e6), np.array([0.05, 0.10, 0.15]) / wavelength)
    for bad in ("0.1:0.5", "a:b:c", "0.5:0.1:0.1", "0.1:0.5:0", "0.1m:0.5:0.1", "0.1:9:0.1", "0.01:2:0.01"):
        with pytest.raises(UserError):
            parse_spacing_range(bad, 436e6)


def test_rebuild_follows_the_header(tmp_path):
    # The header records builder and parameters; rebuilding a written table at another spacing
    # must give the table built there directly. Consistency check, no outside value: the
    # image-theory model itself is checked against Balanis in test_patterns.py.
    for spacing in (0.25, 0.75):
        write_pattern(tmp_path / f"image-{spacing}.csv", turnstile_over_reflector(spacing))
    shipped = load_pattern(tmp_path / "image-0.25.csv")
    again = rebuild_at_spacing(load_pattern(tmp_path / "image-0.75.csv"), 0.25)
    assert np.array_equal(np.round(again.gain_rhcp_dbic, 3), shipped.gain_rhcp_dbic)
    direct = turnstile_over_reflector(0.4)
    assert np.array_equal(rebuild_at_spacing(shipped, 0.4).gain_rhcp_dbic, direct.gain_rhcp_dbic)


def test_sweep_scores_each_spacing_as_a_candidate(tmp_path):
    study = Study.from_scenario(load_scenario(short_demo(tmp_path)))
    result = sweep_reflector(study, "turnstile-close", [0.25, 0.75])
    assert list(result.table["spacing_wavelengths"]) == [0.25, 0.75]
    # Each row equals a plain forecast of the shipped table at that spacing (consistency check,
    # no outside value: the forecast is checked against hand-worked windows in test_forecast.py).
    for spacing, name in ((0.25, "turnstile-close"), (0.75, "turnstile-far")):
        expected = score_candidates(forecast(study, [name]).outcomes, "data-volume")[0][0]
        row = result.table[result.table["spacing_wavelengths"] == spacing].iloc[0]
        assert row["score"] == pytest.approx(expected.score, rel=1e-3)
        assert row["usable_minutes"] == pytest.approx(expected.usable_minutes, rel=1e-3)
    best = result.table["score"].max()
    assert result.table.loc[result.table["spacing_wavelengths"] == result.best_spacing_wavelengths, "score"].iloc[0] == best
    assert result.margin_of_victory >= 0
    assert "spacing_wavelengths=0.25" in study.candidate("turnstile-close").pattern.header["parameters"]


def test_sweep_needs_a_rebuildable_pattern(tmp_path):
    text = (ROOT / "patterns" / "isotropic-rhcp.csv").read_text()
    study = Study.from_scenario(load_scenario(short_demo(tmp_path)))
    with pytest.raises(UserError, match="spacing"):
        sweep_reflector(study, "isotropic-reference", [0.25])
    assert "builder" in text


def test_sweep_command_names_the_best_spacing(tmp_path):
    result = subprocess.run(
        [
            sys.executable,
            "-m",
            "planner",
            "sweep",
            str(short_demo(tmp_path)),
            "--candidate",
            "turnstile-close",
            "--reflector-spacing",
            "0.2:0.8:0.3",
            "--figure",
            str(tmp_path / "sweep"),
            "--format",
            "json",
            "--quiet",
        ],
        capture_output=True,
        text=True,
        cwd=ROOT,
    )
    assert result.returncode == 0, result.stderr
    document = json.loads(result.stdout)
    assert [round(r["spacing_wavelengths"], 6) for r in document["spacings"]] == [0.2, 0.5, 0.8]
    assert document["best_spacing_wavelengths"] in (0.2, 0.5, 0.8)
    assert "Best reflector spacing" in document["summary"]
    assert (tmp_path / "sweep.png").read_bytes().startswith(b"\x89PNG")
    assert (tmp_path / "sweep.svg").exists()

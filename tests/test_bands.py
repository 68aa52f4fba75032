"""Candidates with one antenna per band: [[candidate.band]] tables, chosen per satellite.

The shipped example ``scenarios/two-band.toml`` has one candidate with a VHF table (145.9 MHz)
and a UHF table (436 MHz), and one satellite on each band.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from planner.decision.forecast import compute_samples, numbered_passes
from planner.decision.sweep import single_band
from planner.errors import UserError
from planner.link.budget import PATTERN_FREQUENCY_LIMIT, band_for, nearest_band, pattern_file_name
from planner.scenario import load_scenario
from planner.study import Study
from tests.conftest import ROOT, run_planner

TWO_BAND = ROOT / "scenarios" / "two-band.toml"
VHF_TABLE = "turnstile-vhf-close.csv"
UHF_TABLE = "turnstile-close.csv"
CANDIDATE = "vhf-uhf-turnstiles"


def _text(window_days: float = 7.0) -> str:
    """The two-band example with absolute file paths, so it can be rewritten anywhere."""
    text = TWO_BAND.read_text(encoding="utf-8")
    text = text.replace('"../', f'"{ROOT.as_posix()}/')
    return text.replace("days = 7", f"days = {window_days:g}")


def _write(tmp_path: Path, text: str, name: str = "variant.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def study() -> Study:
    return Study.from_scenario(load_scenario(TWO_BAND))


def test_each_satellite_gets_the_band_nearest_its_frequency(study):
    # The scenario file gives TARNBECK 145.9 MHz and WRENLING-1 436.525 MHz; the table headers
    # give 145.9 and 436 MHz. Nearest in frequency: VHF for the first, UHF for the second.
    candidate = study.candidate(CANDIDATE)
    assert len(candidate.band_list) == 2
    for satellite, table, table_mhz in (("TARNBECK", VHF_TABLE, 145.9), ("WRENLING-1", UHF_TABLE, 436.0)):
        config = study.satellite_config(satellite)
        band = band_for(candidate, config, config.downlink_frequency_hz)
        assert pattern_file_name(band.pattern) == table
        assert band.pattern.frequency_hz == pytest.approx(table_mhz * 1e6)
        # The chosen table is within the 3 % the project applies without a warning.
        assert abs(config.downlink_frequency_hz / band.pattern.frequency_hz - 1) < 0.03


def test_nearest_band_is_chosen_by_relative_offset(study):
    # 250 MHz: 71 % above 145.9 MHz, 43 % below 436 MHz, so the UHF table is nearer (arithmetic).
    assert pattern_file_name(nearest_band(study.candidate(CANDIDATE), 250e6).pattern) == UHF_TABLE
    # 180 MHz: 23 % above 145.9 MHz, 59 % below 436 MHz (arithmetic).
    assert pattern_file_name(nearest_band(study.candidate(CANDIDATE), 180e6).pattern) == VHF_TABLE


def test_single_table_form_is_one_band():
    scenario = load_scenario(ROOT / "scenarios" / "demo.toml")
    config = scenario.candidate_named("turnstile-close")
    assert [band.pattern.name for band in config.bands] == [UHF_TABLE]
    assert config.bands[0].connectors == 4
    candidate = Study.from_scenario(scenario).candidate("turnstile-close")
    assert candidate.band_list == (candidate,)


def test_a_two_band_scenario_survives_a_dump_and_reload():
    # pydantic's model_dump writes every key (None for pattern in the band form); reading the dump
    # back must give the same bands (pydantic documentation, "Serialization").
    scenario = load_scenario(TWO_BAND)
    rebuilt = type(scenario).model_validate(scenario.model_dump())
    assert [band.pattern for band in rebuilt.candidate[0].bands] == [band.pattern for band in scenario.candidate[0].bands]
    assert rebuilt.candidate[0].pattern is None


def test_a_frequency_no_band_covers_is_one_line_naming_everything(tmp_path):
    # 300 MHz lies more than 20 % from both 145.9 MHz (175.08 MHz top) and 436 MHz (348.8 MHz
    # bottom): arithmetic on the limit the project applies (PATTERN_FREQUENCY_LIMIT).
    assert 300 > 145.9 * (1 + PATTERN_FREQUENCY_LIMIT) and 300 < 436 * (1 - PATTERN_FREQUENCY_LIMIT)
    path = _write(tmp_path, _text().replace("downlink_mhz = 145.9", "downlink_mhz = 300"))
    study = Study.from_scenario(load_scenario(path))
    with pytest.raises(UserError) as info:
        study.downlink_setup("TARNBECK", CANDIDATE)
    message = str(info.value)
    assert "\n" not in message
    assert message.startswith(f"{path}: candidate {CANDIDATE} has no band for TARNBECK on 300 MHz; allowed:")
    assert f"{VHF_TABLE} at 145.9 MHz" in message and f"{UHF_TABLE} at 436 MHz" in message


def test_a_frequency_no_band_covers_exits_2_from_the_cli(tmp_path):
    # The user-error contract: "planner: error: ..." on one line, exit status 2.
    path = _write(tmp_path, _text(1).replace("downlink_mhz = 145.9", "downlink_mhz = 300"))
    run = run_planner("budget", path, "--satellite", "TARNBECK", "--candidate", CANDIDATE, "--elevation-deg", "30")
    assert run.returncode == 2
    assert run.stderr.startswith("planner: error: ") and run.stderr.count("\n") == 1
    assert "has no band for TARNBECK on 300 MHz" in run.stderr


@pytest.mark.parametrize(
    ("extra", "key"),
    [('pattern = "../patterns/turnstile-close.csv"\n', "pattern"), ("connectors = 3\n", "connectors")],
)
def test_both_forms_in_one_candidate_name_the_key(tmp_path, extra, key):
    text = _text().replace(f'name = "{CANDIDATE}"\n', f'name = "{CANDIDATE}"\n{extra}'.replace('"../', f'"{ROOT.as_posix()}/'))
    with pytest.raises(UserError) as info:
        load_scenario(_write(tmp_path, text))
    message = str(info.value)
    assert f"candidate #1 ({CANDIDATE}).{key}:" in message
    assert f"{key} is given both for the candidate and in its [[candidate.band]] tables" in message


def test_a_candidate_without_pattern_or_band_is_refused(tmp_path):
    start = _text().index("[[candidate.band]]")
    end = _text().index("[criteria]")
    with pytest.raises(UserError) as info:
        load_scenario(_write(tmp_path, _text()[:start] + _text()[end:]))
    assert "no pattern and no [[candidate.band]] table is given" in str(info.value)


def test_two_bands_give_the_margins_of_the_one_band_set_ups_they_are_made_of(tmp_path):
    # Same physics either way (an outside-the-code check: the budget of a satellite depends only
    # on the antenna that hears it, its run and the receiver): the two-band candidate must give,
    # pass for pass and sample for sample, the margins of a one-table candidate built from the
    # band it uses for that satellite.
    one_band = "".join(
        f'\n[[candidate]]\nname = "{name}"\npattern = "{ROOT.as_posix()}/patterns/{table}"\n'
        'feedline = [{ cable = "RG-213", length_m = 20.0 }]\nconnectors = 4\n'
        for name, table in (("vhf-only", VHF_TABLE), ("uhf-only", UHF_TABLE))
    )
    text = _text(2).replace("[criteria]", one_band + "\n[criteria]")
    study = Study.from_scenario(load_scenario(_write(tmp_path, text)))
    numbered = numbered_passes(study)
    for satellite, alone in (("TARNBECK", "vhf-only"), ("WRENLING-1", "uhf-only")):
        only = study.with_targets([t for t in study.targets if t.name == satellite])
        mine = [(n, p) for n, p in numbered if p.satellite == satellite]
        assert mine, f"{satellite} has passes in the window"
        samples = compute_samples(only, [CANDIDATE, alone], numbered=mine)
        two = samples[samples["candidate"] == CANDIDATE]
        one = samples[samples["candidate"] == alone]
        assert len(two) == len(one) > 0
        np.testing.assert_array_equal(two["pass_number"].to_numpy(), one["pass_number"].to_numpy())
        np.testing.assert_array_equal(two["margin_db"].to_numpy(), one["margin_db"].to_numpy())
        assert np.isfinite(two["margin_db"].to_numpy()).all()


def test_the_sweep_refuses_a_candidate_of_several_bands(study):
    with pytest.raises(UserError) as info:
        single_band(study, CANDIDATE)
    assert f"{CANDIDATE} has 2 bands" in str(info.value)
    assert "allowed: a candidate with a single pattern" in str(info.value)


def test_compare_names_the_table_used_per_satellite():
    # The one CLI run of the example: compare JSON lists the table each satellite is heard on.
    run = run_planner("compare", TWO_BAND, "--format", "json")
    assert run.returncode == 0, run.stderr
    document = json.loads(run.stdout)
    assert document["recommended"] == CANDIDATE
    used = {row["satellite"]: row["pattern_table"] for row in document["pattern_tables"]}
    assert used == {"TARNBECK": VHF_TABLE, "WRENLING-1": UHF_TABLE}


def test_a_two_band_set_up_gets_one_build_sheet_per_band(study):
    from planner.antenna.buildsheet import sheets_to_dict, study_sheets

    name = next(c.name for c in study.candidates.values() if len(c.band_list) == 2)
    sheets = study_sheets(study, name, tolerances=False)
    frequencies_mhz = sorted(s.frequency_mhz for s in sheets)
    assert frequencies_mhz == pytest.approx([145.9, 436.0])
    low, high = sorted(sheets, key=lambda s: s.frequency_mhz)
    # A resonant dipole's length scales with the wavelength (Kraus, Antennas: a half-wave dipole is
    # about 0.47-0.49 wavelength, the shortening depending weakly on the wire's thickness in
    # wavelengths), so the same template trimmed at both frequencies scales by about 436 / 145.9.
    first_low, first_high = low.elements[0], high.elements[0]
    assert first_low.name == first_high.name
    assert first_low.value_cm / first_high.value_cm == pytest.approx(436.0 / 145.9, rel=0.05)
    document = sheets_to_dict(sheets)
    assert document["candidate"] == name and len(document["bands"]) == 2

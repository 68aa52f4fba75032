"""What a new user types: template parameters in words, one spelling of choices, cables, init, examples."""

from __future__ import annotations

import json
import shutil
import sys
from pathlib import Path

import pytest

from planner.antenna.synth.tables import template_options
from planner.antenna.synth.templates import TEMPLATES, check_parameters, describe_parameter
from planner.errors import UserError
from planner.link.feedline import CABLES, CATALOG_POINTS, get_cable
from planner.scenario import load_scenario
from tests.conftest import DEMO, ROOT

EXAMPLES = ("catalog-screen.toml", "polar-station.toml", "custom-cable.toml")


def _run(arguments: list[str], monkeypatch: pytest.MonkeyPatch) -> int:
    """Exit status of ``planner ARGUMENTS`` through the entry point, in this interpreter."""
    from planner.cli import main

    monkeypatch.setattr(sys, "argv", ["planner", *arguments])
    try:
        main()
    except SystemExit as stop:
        return int(stop.code or 0)
    return 0


# ----------------------------------------------------------------- pattern build --list wording


def test_list_says_each_crossed_loops_parameter_in_words_from_its_definition() -> None:
    # The reference is the template's own parameter registry: every choice and bound it defines
    # must appear in the words, and the design frequency in MHz (1 MHz = 1e6 Hz, SI prefix mega).
    specs = dict(TEMPLATES["crossed-loops"][1], **template_options("crossed-loops"))
    for name, spec in specs.items():
        line = describe_parameter(name, spec)
        if spec.type is str:
            assert line.startswith(f"{name}: one of: {', '.join(spec.allowed)};"), line
        elif name == "frequency_hz":
            low, high = spec.allowed
            assert line.startswith(f"frequency_mhz: from {low / 1e6:g} to {high / 1e6:g} MHz; default {spec.default / 1e6:g} MHz")
        else:
            low, high = spec.allowed
            assert f"from {low:g} to {high:g}" in line, line
    reflector = describe_parameter("reflector", specs["reflector"])
    assert reflector.startswith("reflector: one of: none, pec, rods, grid; default none.")
    spacing = describe_parameter("spacing_wavelengths", specs["spacing_wavelengths"])
    assert spacing.startswith(f"spacing_wavelengths: from {specs['spacing_wavelengths'].allowed[0]:g} to ")
    assert "wavelengths; default 0.25 wavelengths." in spacing


# ----------------------------------------------------------------- one spelling for choices


def _demo_with(tmp_path: Path, replacements: dict[str, str]) -> Path:
    text = DEMO.read_text(encoding="utf-8").replace("../", f"{ROOT.as_posix()}/")
    for old, new in replacements.items():
        assert old in text
        text = text.replace(old, new)
    path = tmp_path / "scenario.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_underscore_and_hyphen_spellings_load_to_the_same_scenario(tmp_path: Path) -> None:
    choices = {
        'objective = "data-volume"': "objective = {}",
        'noise_environment = "rural"': "noise_environment = {}",
        'modulation = "fsk-noncoherent"': "modulation = {}",
        'polarization = "linear-tumbling"\nmodulation = "gmsk"': 'polarization = {}\nmodulation = "gmsk"',
    }
    hyphen_values = ['"usable-time"', '"quiet-rural"', '"fsk-noncoherent"', '"linear-tumbling"']
    hyphen = {old: new.format(value) for (old, new), value in zip(choices.items(), hyphen_values)}
    underscore = {old: new.format(value.replace("-", "_")) for (old, new), value in zip(choices.items(), hyphen_values)}
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    first = load_scenario(_demo_with(tmp_path / "a", hyphen))
    second = load_scenario(_demo_with(tmp_path / "b", underscore))
    assert first.model_dump() == second.model_dump()
    assert first.criteria.objective == "usable-time"
    assert first.station.noise_environment == "quiet-rural"


def test_a_wrong_choice_lists_the_hyphen_forms(tmp_path: Path) -> None:
    with pytest.raises(UserError) as error:
        load_scenario(_demo_with(tmp_path, {'objective = "data-volume"': 'objective = "most-data"'}))
    message = str(error.value)
    assert "data-volume" in message and "usable-time" in message
    assert "data_volume" not in message and "\n" not in message


def test_template_choices_take_either_spelling() -> None:
    spellings = (("medium-dry-ground", "copper-clad-steel"), ("medium_dry_ground", "copper_clad_steel"))
    both = [check_parameters("crossed-loops", {"ground": ground, "material": material}) for ground, material in spellings]
    assert both[0] == both[1]
    assert both[0]["ground"] == "medium-dry-ground" and both[0]["material"] == "copper-clad-steel"


# ----------------------------------------------------------------- cables


def test_unknown_cable_is_one_line_naming_the_catalog_and_how_to_define_one() -> None:
    with pytest.raises(UserError) as error:
        get_cable("RG-9999")
    message = str(error.value)
    assert "\n" not in message
    for name in CABLES:
        assert name in message
    for key in ("[[cable]]", "name", "impedance_ohm", "velocity_factor", "loss_db_per_100m"):
        assert key in message


def test_cables_lists_the_catalog_loss_at_its_datasheet_points() -> None:
    # Reference: the datasheet-typical points of each catalog cable (planner/link/feedline.py,
    # CATALOG_POINTS, from memory, +/-25 %). The two-term fit k1 sqrt(f) + k2 f must pass within
    # 15 % of every point (common practice for a two-term coax fit, no published source).
    from planner.cli.cables import cable_rows

    for name, spec in CATALOG_POINTS.items():
        frequencies_mhz = [f for f, _ in spec["points"]]
        (row,) = [r for r in cable_rows({}, [f * 1e6 for f in frequencies_mhz]) if r["name"] == name]
        assert row["impedance_ohm"] == spec["impedance_ohm"] and row["velocity_factor"] == spec["velocity_factor"]
        for listed, (_, datasheet) in zip(row["loss_db_per_100m"], spec["points"]):
            assert listed == pytest.approx(datasheet, rel=0.15), (name, listed, datasheet)


def test_cables_shows_a_scenario_cable_at_the_scenario_frequencies(monkeypatch, capsys) -> None:
    scenario = ROOT / "scenarios" / "custom-cable.toml"
    assert _run(["cables", str(scenario), "--format", "json"], monkeypatch) == 0
    document = json.loads(capsys.readouterr().out)
    # The scenario's only satellite listens on 436.525 MHz (scenarios/custom-cable.toml).
    assert document["frequencies_mhz"] == [436.525]
    (own,) = [row for row in document["cables"] if row["source"] == "scenario"]
    assert own["name"] == "shack-foam-10" and own["velocity_factor"] == 0.85
    # Its datasheet point 8.9 dB/100 m at 432 MHz, as written in the scenario; 436.525 MHz is 1 % above.
    assert own["loss_db_per_100m"][0] == pytest.approx(8.9, rel=0.05)


# ----------------------------------------------------------------- init and the examples


def _repository_copy(tmp_path: Path) -> Path:
    for folder in ("scenarios", "patterns", "sample_tle"):
        shutil.copytree(ROOT / folder, tmp_path / folder)
    return tmp_path


def test_init_then_compare_runs_from_the_repository_root(tmp_path: Path, monkeypatch, capsys) -> None:
    monkeypatch.chdir(_repository_copy(tmp_path))
    assert _run(["init", "x.toml"], monkeypatch) == 0
    assert _run(["compare", "x.toml"], monkeypatch) == 0
    assert "Recommended:" in capsys.readouterr().out
    # An existing file is refused without --force (exit 2, as for every writer) and kept.
    before = (tmp_path / "x.toml").read_bytes()
    assert _run(["init", "x.toml"], monkeypatch) == 2
    assert "--force" in capsys.readouterr().err
    assert (tmp_path / "x.toml").read_bytes() == before
    assert _run(["init", "x.toml", "--force"], monkeypatch) == 0


def test_init_in_a_subfolder_points_back_at_the_shipped_files(tmp_path: Path, monkeypatch) -> None:
    monkeypatch.chdir(_repository_copy(tmp_path))
    (tmp_path / "mine").mkdir()
    assert _run(["init", "mine/station.toml"], monkeypatch) == 0
    scenario = load_scenario(tmp_path / "mine" / "station.toml")
    assert scenario.satellite[0].elements == tmp_path / "sample_tle" / "demo.tle"
    assert [c.pattern.name for c in scenario.candidate] == ["turnstile-close.csv", "loops-tall-far.csv"]
    assert 'elements = "../sample_tle/demo.tle"' in (tmp_path / "mine" / "station.toml").read_text(encoding="utf-8")


@pytest.mark.parametrize("name", EXAMPLES)
def test_example_scenarios_load(name: str) -> None:
    scenario = load_scenario(ROOT / "scenarios" / name)
    assert scenario.candidate


def test_examples_hold_what_they_are_for() -> None:
    catalog = load_scenario(ROOT / "scenarios" / "catalog-screen.toml")
    assert catalog.catalog is not None
    objects = (ROOT / "sample_tle" / "example_catalog.tle").read_text(encoding="utf-8").count("\n1 ")
    assert objects + 1 >= 200  # a few hundred invented objects (the first line-1 has no newline before it)
    polar = load_scenario(ROOT / "scenarios" / "polar-station.toml")
    assert polar.station.latitude_deg < -66.56  # inside the Antarctic circle (about 66.56 deg S, from memory)
    assert isinstance(polar.station.horizon_mask, list)
    cable = load_scenario(ROOT / "scenarios" / "custom-cable.toml")
    own = {c.name for c in cable.cable}
    assert any(run.cable in own for candidate in cable.candidate for run in candidate.feedline)

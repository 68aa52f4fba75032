"""Hostile and careless inputs through the real commands: no traceback, no lost file.

Each case of the table runs one command as a user would type it (``planner.cli.main`` in this
process). What every case must show (the program's error contract, README "Usage"):

* exit code 2 and exactly one ``planner: error:`` line naming what is wrong (warnings may come
  before it), never a Python traceback;
* every input file byte for byte as it was, with its mode and inode (so neither replaced nor
  split from a hard link);
* no file half-written and no temporary file left in the output folder.

Outputs may never land on a run's input: POSIX ``stat(2)`` gives (st_dev, st_ino) that identify
a file whatever path or link leads to it (a hard link shares the inode; a symbolic link is
followed), which is what the refusal compares. CSV cells that a spreadsheet would run as a
formula are neutralised as OWASP's "CSV Injection" guidance describes (a leading apostrophe,
RFC 4180 quoting).

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import os
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import pytest

from planner.antenna import format_pattern, isotropic_rhcp
from tests.orbit_factory import make_tle, write_three_line
from tests.test_hardening import ALPHA, BETA, ELEMENT_TEXTS, PASS_COLUMNS, PATTERN_TEXTS, assert_contract, run_cli, scenario_text

# --------------------------------------------------------------------------- the inputs


def _snapshot(folder: Path) -> dict[str, tuple[str, int, int]]:
    """Every file under ``folder``: (sha256 of its bytes, mode, inode)."""
    state = {}
    for path in sorted(folder.rglob("*")):
        if path.is_file() and not path.is_symlink():
            status = path.stat()
            state[str(path.relative_to(folder))] = (hashlib.sha256(path.read_bytes()).hexdigest(), status.st_mode, status.st_ino)
    return state


@pytest.fixture(scope="module")
def inputs(tmp_path_factory) -> Path:
    """A scenario with its element file and two pattern tables: the files no run may touch."""
    folder = tmp_path_factory.mktemp("inputs")
    (folder / "elements.txt").write_text(ELEMENT_TEXTS["3le"])
    for name, text in PATTERN_TEXTS.items():
        (folder / f"{name}.csv").write_text(text)
    (folder / "scenario.toml").write_text(scenario_text("elements.txt"))
    return folder


# --------------------------------------------------------------------------- the cases


@dataclass
class Case:
    """One command line (``argv(inputs, out)``), what its error line must say, and any set-up."""

    name: str
    argv: Callable[[Path, Path], list]
    says: tuple[str, ...]
    setup: Callable[[Path, Path], None] = field(default=lambda inputs, out: None)


def _file(path: Path, text: str = "old\n") -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text)


def _foreign_builder(inputs: Path, out: Path) -> None:
    # A table whose header asks the sweep to rebuild it with a module object: the loader reads
    # it (the header is free text), the rebuild must refuse it.
    text = format_pattern(isotropic_rhcp(elevation_step_deg=30)).replace("# builder = isotropic-rhcp", "# builder = numpy")
    assert "# builder = numpy" in text
    text = text.replace(
        "# parameters = frequency_hz=436000000; elevation_step_deg=30",
        "# parameters = frequency_hz=436000000; elevation_step_deg=30; spacing_wavelengths=0.25",
    )
    (out / "foreign.csv").write_text(text)
    scenario = scenario_text(inputs / "elements.txt", candidates=("isotropic",)).replace(
        'pattern = "symmetric.csv"', 'pattern = "foreign.csv"'
    )
    (out / "foreign.toml").write_text(scenario)


def _scenario_with(inputs: Path, out: Path, name: str, old: str, new: str) -> None:
    text = scenario_text(inputs / "elements.txt").replace(old, new)
    assert new in text
    (out / name).write_text(text.replace('pattern = "', f'pattern = "{inputs}/'))


def _omm_csv_with(out: Path, name: str, column: str, value: str) -> None:
    rows = list(csv.DictReader(io.StringIO(ELEMENT_TEXTS["csv"])))
    rows[0][column] = value
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=list(rows[0]), lineterminator="\n")
    writer.writeheader()
    writer.writerows(rows)
    (out / name).write_text(buffer.getvalue())


def _three_line_titled(out: Path, title: str) -> None:
    write_three_line(out / "titled.txt", [(title, ALPHA[1]), BETA])


def _table_with_gain(out: Path, gain_dbic: str) -> None:
    lines = PATTERN_TEXTS["symmetric"].splitlines()
    row = next(k for k, line in enumerate(lines) if line.startswith("90,"))
    fields = lines[row].split(",")
    fields[1] = gain_dbic
    lines[row] = ",".join(fields)
    (out / "hot.csv").write_text("\n".join(lines) + "\n")


HUGE = "7" * 5000  # more digits than Python's int() converts by default (Python docs, "int max str digits": 4300)
QUICK_LOOK = ["--lat", "52", "--lon", "-1.8", "--start", "2027-01-04T00:00:00Z"]
SCENARIO = "scenario.toml"
CASES = [
    # An output that is one of the run's inputs, by any path.
    Case(
        "week-output-is-its-scenario",
        lambda i, o: ["week", i / SCENARIO, "--format", "csv", "--output", i / SCENARIO, "--quiet"],
        ("--output", "is one of this run's input files"),
    ),
    Case(
        "force-does-not-unlock-an-input",
        lambda i, o: ["week", i / SCENARIO, "--format", "csv", "--output", i / SCENARIO, "--force"],
        ("is one of this run's input files",),
    ),
    Case(
        "passes-output-is-an-element-file",
        lambda i, o: ["passes", i / SCENARIO, "--format", "csv", "--output", i / "elements.txt"],
        ("is one of this run's input files",),
    ),
    Case(
        "compare-output-is-a-pattern-table",
        lambda i, o: ["compare", i / SCENARIO, "--format", "json", "--output", i / "azimuth.csv", "--force"],
        ("is one of this run's input files",),
    ),
    Case(
        "quick-look-output-is-its-elements",
        lambda i, o: [
            "passes",
            "--elements",
            i / "elements.txt",
            "--lat",
            "52",
            "--lon",
            "-1.8",
            "--start",
            "2027-01-04T00:00:00Z",
            "--format",
            "csv",
            "--output",
            i / "elements.txt",
            "--force",
        ],
        ("is one of this run's input files",),
    ),
    Case(
        "output-through-a-symbolic-link",
        lambda i, o: ["passes", i / SCENARIO, "--format", "csv", "--output", o / "link.csv", "--force"],
        ("is one of this run's input files",),
        setup=lambda i, o: (o / "link.csv").symlink_to(i / SCENARIO),
    ),
    Case(
        "output-through-a-hard-link",
        lambda i, o: ["passes", i / SCENARIO, "--format", "json", "--output", o / "hard.json", "--force"],
        ("is one of this run's input files",),
        setup=lambda i, o: os.link(i / "elements.txt", o / "hard.json"),
    ),
    Case(
        "output-by-a-roundabout-path",
        lambda i, o: ["passes", i / SCENARIO, "--format", "csv", "--output", o / ".." / i.name / SCENARIO, "--force"],
        ("is one of this run's input files",),
        setup=lambda i, o: os.symlink(i, o.parent / i.name) if not (o.parent / i.name).exists() else None,
    ),
    Case(
        "calendar-is-the-scenario",
        lambda i, o: ["compare", i / SCENARIO, "--calendar", i / SCENARIO, "--quiet"],
        ("--calendar", "is one of this run's input files"),
    ),
    Case(
        "pattern-show-figure-onto-its-table",
        lambda i, o: ["pattern", "show", o / "cuts.png", "--figure", o / "cuts", "--force"],
        ("is one of this run's input files",),
        setup=lambda i, o: (o / "cuts.png").write_text(PATTERN_TEXTS["symmetric"]),
    ),
    # Replacing an existing file needs --force.
    Case(
        "existing-output-without-force",
        lambda i, o: ["passes", i / SCENARIO, "--format", "csv", "--output", o / "passes.csv"],
        ("already exists; give --force",),
        setup=lambda i, o: _file(o / "passes.csv"),
    ),
    Case(
        "pattern-build-over-a-pattern-in-use",
        lambda i, o: ["pattern", "build", "isotropic-rhcp", "--out", i / "symmetric.csv"],
        ("--out", "already exists; give --force"),
    ),
    Case(
        "pattern-build-all-over-existing-tables",
        lambda i, o: ["pattern", "build", "--out", o / "tables"],
        ("isotropic-rhcp.csv", "already exists; give --force"),
        setup=lambda i, o: _file(o / "tables" / "isotropic-rhcp.csv"),
    ),
    Case(
        "report-over-an-earlier-report",
        lambda i, o: ["compare", i / SCENARIO, "--report", o / "report", "--quiet"],
        ("--report", "compare.json", "already exists"),
        setup=lambda i, o: _file(o / "report" / "compare.json"),
    ),
    Case(
        "figures-over-earlier-figures",
        lambda i, o: ["compare", i / SCENARIO, "--figures", o / "figs", "--quiet"],
        ("--figures", "sky-alpha.png", "already exists"),
        setup=lambda i, o: _file(o / "figs" / "sky-alpha.png"),
    ),
    Case(
        "sweep-figure-over-an-earlier-one",
        lambda i, o: [
            "sweep",
            i / SCENARIO,
            "--candidate",
            "close",
            "--reflector-spacing",
            "0.2:0.3:0.1",
            "--figure",
            o / "sweep",
            "--quiet",
        ],
        ("--figure", "sweep.svg", "already exists"),
        setup=lambda i, o: _file(o / "sweep.svg"),
    ),
    # Output paths that cannot be written.
    Case(
        "figure-stem-dot",
        lambda i, o: ["pattern", "show", i / "symmetric.csv", "--figure", "."],
        ("--figure", "is not a figure stem"),
    ),
    Case(
        "figure-stem-dotdot",
        lambda i, o: ["pattern", "show", i / "symmetric.csv", "--figure", o / ".."],
        ("--figure", "is not a figure stem"),
    ),
    Case(
        "report-folder-under-a-file",
        lambda i, o: ["compare", i / SCENARIO, "--report", i / SCENARIO / "report"],
        ("--report", "is a file, not a folder"),
    ),
    Case(
        "figures-folder-is-a-file",
        lambda i, o: ["compare", i / SCENARIO, "--figures", o / "plain"],
        ("--figures", "exists and is not a folder"),
        setup=lambda i, o: _file(o / "plain"),
    ),
    Case(
        "output-into-a-missing-folder",
        lambda i, o: ["passes", i / SCENARIO, "--format", "csv", "--output", o / "missing" / "p.csv"],
        ("--output", "does not exist"),
    ),
    Case(
        "output-is-a-folder",
        lambda i, o: ["passes", i / SCENARIO, "--format", "csv", "--output", o, "--force"],
        ("--output", "is a folder"),
    ),
    Case(
        "output-under-a-file",
        lambda i, o: ["week", i / SCENARIO, "--format", "csv", "--output", i / SCENARIO / "w.csv"],
        ("--output", "is not a folder"),
    ),
    Case(
        "pattern-out-in-a-missing-folder",
        lambda i, o: ["pattern", "build", "isotropic-rhcp", "--out", o / "no" / "t.csv"],
        ("--out", "does not exist"),
    ),
    Case(
        "output-onto-a-device",
        lambda i, o: ["passes", i / SCENARIO, "--format", "csv", "--output", "/dev/null", "--force"],
        ("/dev/null", "is not a regular file"),
    ),
    # Numbers, dates and names out of range.
    Case(
        "scenario-integer-of-5000-digits",
        lambda i, o: ["week", o / "huge.toml"],
        ("huge.toml", "5000 digits"),
        setup=lambda i, o: _scenario_with(i, o, "huge.toml", "step_s = 20", f"step_s = {HUGE}"),
    ),
    Case(
        "omm-csv-catalog-number-of-5000-digits",
        lambda i, o: ["passes", "--elements", o / "huge.csv", *QUICK_LOOK],
        ("huge.csv", "NORAD_CAT_ID", "5000 digits"),
        setup=lambda i, o: _omm_csv_with(o, "huge.csv", "NORAD_CAT_ID", HUGE),
    ),
    Case(
        "omm-csv-catalog-number-beyond-nine-digits",
        lambda i, o: ["passes", "--elements", o / "big.csv", *QUICK_LOOK],
        ("big.csv", "NORAD_CAT_ID"),
        setup=lambda i, o: _omm_csv_with(o, "big.csv", "NORAD_CAT_ID", "1000000000"),
    ),
    Case(
        "omm-csv-epoch-in-year-1",
        lambda i, o: ["passes", "--elements", o / "old.csv", *QUICK_LOOK],
        ("old.csv", "1957"),
        setup=lambda i, o: _omm_csv_with(o, "old.csv", "EPOCH", "0001-01-01T00:00:00"),
    ),
    Case(
        "budget-at-year-1",
        lambda i, o: ["budget", i / SCENARIO, "--satellite", "ALPHA", "--candidate", "close", "--at", "0001-01-01T00:00:00Z"],
        ("--at", "1957"),
    ),
    Case(
        "quick-look-start-in-9999",
        lambda i, o: [
            "passes",
            "--elements",
            i / "elements.txt",
            "--lat",
            "52",
            "--lon",
            "-1.8",
            "--start",
            "9999-12-31T23:59:59Z",
        ],
        ("--start", "2100"),
    ),
    Case(
        "tle-title-with-terminal-escapes",
        lambda i, o: ["passes", "--elements", o / "titled.txt", *QUICK_LOOK],
        ("titled.txt", "\\x1b"),
        setup=lambda i, o: _three_line_titled(o, "EVIL\x1b]0;owned\x07\x1b[2J"),
    ),
    Case(
        "scenario-name-with-terminal-escapes",
        lambda i, o: ["passes", o / "named.toml"],
        ("named.toml", "\\x1b"),
        setup=lambda i, o: _scenario_with(i, o, "named.toml", 'name = "Test site"', 'name = "Test\\u001b[31msite"'),
    ),
    Case(
        "pattern-table-of-100-dbic",
        lambda i, o: ["pattern", "show", o / "hot.csv"],
        ("hot.csv", "above 40 dBic"),
        setup=lambda i, o: _table_with_gain(o, "100"),
    ),
    Case(
        "pattern-table-at-an-absurd-frequency",
        lambda i, o: ["pattern", "show", o / "far.csv"],
        ("far.csv", "frequency_mhz"),
        setup=lambda i, o: (o / "far.csv").write_text(
            PATTERN_TEXTS["symmetric"].replace("# frequency_mhz = 436", "# frequency_mhz = 1e30")
        ),
    ),
    # Sizes past the stated limits (planner/limits.py), refused before allocating.
    Case(
        "pattern-grid-of-billions-of-points",
        lambda i, o: [
            "pattern",
            "build",
            "image-turnstile",
            "spacing_wavelengths=0.25",
            "elevation_step_deg=0.00005",
            "--out",
            o / "fine.csv",
        ],
        ("elevation_step_deg", "the limit is"),
    ),
    Case(
        "elements-from-an-endless-device", lambda i, o: ["passes", "--elements", "/dev/zero", *QUICK_LOOK], ("/dev/zero", "limit")
    ),
    Case(
        "sweep-of-billions-of-spacings",
        lambda i, o: ["sweep", i / SCENARIO, "--candidate", "close", "--reflector-spacing", "0.1:1:1e-9"],
        ("--reflector-spacing",),
    ),
    # A header may only name the project's own templates.
    Case(
        "header-builder-names-a-module",
        lambda i, o: ["sweep", o / "foreign.toml", "--candidate", "isotropic", "--reflector-spacing", "0.2:0.3:0.1", "--quiet"],
        ("foreign.csv", "builder 'numpy' is not one of planner's templates"),
        setup=_foreign_builder,
    ),
]


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_hostile_input_is_one_line_and_touches_no_file(case, inputs, tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    case.setup(inputs, out)
    before_inputs, before_out = _snapshot(inputs), _snapshot(out)
    run = run_cli(*case.argv(inputs, out))
    assert_contract(run)
    assert run.code == 2, (run.stdout[-500:], run.stderr)
    line = run.error_lines[0]
    for fragment in case.says:
        assert fragment in line, line
    assert _snapshot(inputs) == before_inputs, "an input file changed"
    assert _snapshot(out) == before_out, "the output folder changed"
    assert not [p for p in out.rglob(".*.tmp")], "a temporary file was left behind"


# --------------------------------------------------------------------------- what must still work


def test_force_replaces_an_earlier_output_atomically(inputs, tmp_path):
    target = tmp_path / "passes.csv"
    target.write_text("an earlier run\n")
    run = run_cli("passes", inputs / SCENARIO, "--format", "csv", "--output", target, "--force")
    assert run.code == 0, run.stderr
    rows = list(csv.DictReader(io.StringIO(target.read_text())))
    assert rows and list(rows[0]) == PASS_COLUMNS
    assert sorted(p.name for p in tmp_path.iterdir()) == ["passes.csv"]


def test_a_report_is_written_again_with_force(inputs, tmp_path):
    report = tmp_path / "report"
    first = run_cli("compare", inputs / SCENARIO, "--report", report, "--quiet")
    assert first.code == 0, first.stderr
    assert (report / "compare.json").is_file() and (report / "figures").is_dir()
    again = run_cli("compare", inputs / SCENARIO, "--report", report, "--quiet")
    assert again.code == 2 and "already exists; give --force" in again.error_lines[0]
    forced = run_cli("compare", inputs / SCENARIO, "--report", report, "--quiet", "--force")
    assert forced.code == 0, forced.stderr
    assert json.loads((report / "compare.json").read_text())["recommended"]


FORMULAS = ['=HYPERLINK("http://example.invalid","x")', "+1+2", "-2+3", "@SUM(A1:A2)"]


def test_names_a_spreadsheet_would_run_are_written_as_text(tmp_path):
    # OWASP "CSV Injection": a cell starting with =, +, - or @ is prefixed with an apostrophe
    # and quoted, so a spreadsheet shows it as text. JSON keeps the name as it is.
    entries = [
        (name, make_tle(99001 + k, height_km=550, inclination_deg=97.6, raan_deg=30 + 40 * k)) for k, name in enumerate(FORMULAS)
    ]
    write_three_line(tmp_path / "odd.txt", entries)
    common = ["passes", "--elements", tmp_path / "odd.txt", "--lat", "52", "--lon", "-1.8", "--start", "2027-01-04T00:00:00Z"]
    as_csv = run_cli(*common, "--format", "csv")
    assert as_csv.code == 0, as_csv.stderr
    names = {row["satellite"] for row in csv.DictReader(io.StringIO(as_csv.stdout))}
    assert names == {"'" + name for name in FORMULAS}
    for line in as_csv.stdout.splitlines()[1:]:
        assert line.startswith("\"'"), line  # quoted, apostrophe first: no cell starts with a formula sign
    as_json = run_cli(*common, "--format", "json")
    assert {row["satellite"] for row in json.loads(as_json.stdout)} == set(FORMULAS)


def test_negative_numbers_are_not_touched():
    # Only text is neutralised: a negative number must stay a number a spreadsheet can add.
    from planner.output.export import to_csv

    text = to_csv([{"name": "-", "margin_db": -3.25, "note": "-3.25"}], ["name", "margin_db", "note"])
    assert text.splitlines()[1] == '"\'-",-3.25,-3.25'


# --------------------------------------------------------------------------- filesystem errors


def test_a_folder_that_cannot_be_created_is_one_line(inputs, tmp_path, monkeypatch):
    # Permission errors are simulated: the tests may run as root, whom a read-only folder does
    # not stop (POSIX: appropriate privileges override file permission bits).
    def refuse(self, *args, **kwargs):
        raise PermissionError(13, "Permission denied", str(self))

    monkeypatch.setattr(Path, "mkdir", refuse)
    run = run_cli("compare", inputs / SCENARIO, "--figures", tmp_path / "figs", "--quiet")
    assert_contract(run)
    assert run.code == 2 and "cannot create folder" in run.error_lines[0] and "Permission denied" in run.error_lines[0]


@pytest.mark.skipif(os.geteuid() == 0, reason="root writes into read-only folders (POSIX privileges)")
def test_a_read_only_folder_is_one_line(inputs, tmp_path):
    folder = tmp_path / "locked"
    folder.mkdir()
    folder.chmod(0o500)
    try:
        run = run_cli("passes", inputs / SCENARIO, "--format", "csv", "--output", folder / "p.csv")
    finally:
        folder.chmod(0o700)
    assert_contract(run)
    assert run.code == 2 and "Permission denied" in run.error_lines[0]


def test_an_unforeseen_filesystem_error_is_one_line_naming_the_path(inputs, monkeypatch):
    from planner.cli import common

    def broken(*args, **kwargs):
        raise OSError(5, "Input/output error", "scenario-on-a-bad-disk.toml")

    monkeypatch.setattr(common, "load_studies", broken)
    run = run_cli("week", inputs / SCENARIO)
    assert_contract(run)
    assert run.code == 2
    assert run.error_lines[0] == "planner: error: scenario-on-a-bad-disk.toml: Input/output error"

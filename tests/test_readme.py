"""Every `planner ...` command in README.md runs as written, from the repository root, on a fresh copy.

The commands are read from README's fenced code blocks (a trailing backslash joins the next line;
``#`` starts a comment, as in a POSIX shell: POSIX Shell Command Language, 2.3 Token Recognition
and 2.2 Quoting, which :mod:`shlex` follows with ``comments=True``, Python docs). Each runs
in-process through :func:`planner.cli.main`, the entry point the installed ``planner`` script
calls, in a temporary copy of scenarios/, patterns/ and sample_tle/, so no shipped file changes.
A command that reads a file an earlier README command writes (``--out``, ``--output``, ``init``)
gets that command run first in the same copy. New README commands are picked up on their own.
"""

from __future__ import annotations

import shlex
import shutil
import sys
from pathlib import Path

import pytest

from tests.conftest import ROOT

COPIED_FOLDERS = ("scenarios", "patterns", "sample_tle")
WRITING_OPTIONS = ("--out", "--output", "--report", "--figures", "--calendar", "--figure")


def readme_commands(text: str) -> list[list[str]]:
    """The ``planner`` commands of the fenced code blocks, as argument lists without the program name."""
    commands, inside, pending = [], False, ""
    for line in text.splitlines():
        if line.strip().startswith("```"):
            inside, pending = not inside, ""
            continue
        if not inside:
            continue
        if line.rstrip().endswith("\\"):
            pending += line.rstrip()[:-1] + " "
            continue
        words = shlex.split(pending + line, comments=True)
        pending = ""
        if words and words[0] == "planner":
            commands.append(words[1:])
    return commands


def written_files(arguments: list[str]) -> set[str]:
    """The files or folders a command writes: values of the writing options, and the file ``init`` writes."""
    found = {arguments[i + 1] for i, word in enumerate(arguments[:-1]) if word in WRITING_OPTIONS}
    if arguments[:1] == ["init"] and len(arguments) > 1:
        found.add(arguments[1])
    return found


def prerequisites(commands: list[list[str]], index: int) -> list[int]:
    """Earlier commands that write a file command ``index`` reads (and theirs, first), in README order."""
    needed: set[int] = set()
    words = commands[index]
    operands = words[2:] if words[:1] == ["pattern"] else words[1:]  # past the command's own name
    for word in operands:
        for earlier in range(index):
            if word in written_files(commands[earlier]) and word not in written_files(commands[index]):
                needed |= {*prerequisites(commands, earlier), earlier}
    return sorted(needed)


def run_in_process(arguments: list[str], monkeypatch: pytest.MonkeyPatch) -> int:
    """Exit status of ``planner ARGUMENTS`` run through the entry point in this interpreter."""
    from planner.cli import main

    monkeypatch.setattr(sys, "argv", ["planner", *arguments])
    try:
        main()
    except SystemExit as stop:
        return stop.code if isinstance(stop.code, int) else (0 if stop.code is None else 1)
    return 0


COMMANDS = readme_commands((ROOT / "README.md").read_text(encoding="utf-8"))


def test_readme_has_commands_and_they_parse_as_written() -> None:
    # The README walks through every command group; a parse that found none would let the
    # replay below pass by running nothing.
    groups = {words[0] for words in COMMANDS}
    assert {"compare", "passes", "budget", "pattern", "harness", "rank", "cables", "init"} <= groups
    continued = readme_commands("```\nplanner passes --lat 1 \\\n    --lon 2  # a comment\n```\n")
    assert continued == [["passes", "--lat", "1", "--lon", "2"]]


@pytest.mark.parametrize("index", range(len(COMMANDS)), ids=[" ".join(c)[:70] for c in COMMANDS])
def test_readme_command_runs_as_written(index: int, tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys) -> None:
    for folder in COPIED_FOLDERS:
        shutil.copytree(ROOT / folder, tmp_path / folder)
    shipped = {p.relative_to(tmp_path): p.read_bytes() for p in tmp_path.rglob("*") if p.is_file()}
    monkeypatch.chdir(tmp_path)
    for earlier in prerequisites(COMMANDS, index):
        assert run_in_process(COMMANDS[earlier], monkeypatch) == 0, capsys.readouterr().err
    status = run_in_process(COMMANDS[index], monkeypatch)
    captured = capsys.readouterr()
    assert status == 0, f"planner {' '.join(COMMANDS[index])}: exit {status}: {captured.err[-2000:]}"
    # A writing command must leave the shipped files alone unless README says it replaces them.
    if "--force" not in COMMANDS[index]:
        changed = [str(p) for p, data in shipped.items() if (tmp_path / p).read_bytes() != data]
        assert not changed, f"planner {' '.join(COMMANDS[index])} changed shipped files: {changed}"

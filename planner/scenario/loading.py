"""Reading a scenario file: the capped read, TOML errors, huge integers, then validation.

:func:`load_scenario` is the only place that reads a scenario file. The read is capped
(:func:`planner.limits.read_text_capped`); the text is parsed by Python's ``tomllib``
(TOML v1.0.0), whose errors become one line naming the file, as do nesting too deep to
parse (RecursionError) and integers longer than Python converts (4300 digits,
``sys.int_info.default_max_str_digits``, Python docs, integer string conversion length
limitation). The parsed tables are validated against :class:`~planner.scenario.schema.Scenario`,
and a problem is reported by :func:`~planner.scenario.messages.describe_validation_error`.
"""

from __future__ import annotations

import os
import re
import tomllib
from pathlib import Path

from pydantic import ValidationError

from planner.errors import UserError
from planner.limits import SCENARIO_FILE_LIMIT_BYTES, ReadWording, read_text_capped
from planner.scenario.messages import _one_line, describe_validation_error
from planner.scenario.schema import Scenario

# A decimal integer of more digits than Python converts (sys.int_info.default_max_str_digits),
# standing alone: not part of a float's fraction or exponent, nor of a word.
_LONG_INTEGER_RE = re.compile(r"(?<![\w.])[+-]?[0-9][0-9_]{4300,}(?![\w.])")
_KEY_AT_LINE_START_RE = re.compile(r"\s*([A-Za-z0-9_-]+)\s*=")


def _too_many_digits(source: str, text: str) -> str:
    """The one-line report for a TOML integer too long to read, at its line and key if found."""
    match = _LONG_INTEGER_RE.search(text)
    allowed = "allowed: a number within the key's range; none accepts thousands of digits"
    if match is None:
        return f"{source}: a whole number has more than 4300 digits; {allowed}"
    line = text.count("\n", 0, match.start()) + 1
    line_text = text.split("\n")[line - 1]
    key = _KEY_AT_LINE_START_RE.match(line_text)
    digits = sum(char.isdigit() for char in match.group())
    where = f"{source}:{line}: {key.group(1)}" if key else f"{source}:{line}"
    return f"{where}: a whole number of {digits} digits ({match.group()[:12]}...); {allowed}"


_READ_WORDING = ReadWording(
    not_found="{path}: cannot read: No such file or directory",
    folder="{path}: cannot read: Is a directory",
    not_text="{path}: not valid TOML: not UTF-8 text (bad byte at offset {offset})",
    other="{path}: cannot read: {reason}",
)
"""The messages ``load_scenario`` has always given for a file it cannot read."""


def load_scenario(path: str | Path) -> Scenario:
    """Read and validate a scenario TOML file; any problem is a one-line UserError."""
    file = Path(path)
    source = _one_line(str(path))
    text = read_text_capped(file, what="scenario file", limit_bytes=SCENARIO_FILE_LIMIT_BYTES, label=source, wording=_READ_WORDING)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise UserError(_one_line(f"{source}: not valid TOML: {exc}")) from None
    except RecursionError:
        raise UserError(f"{source}: not valid TOML: arrays or tables nested too deeply") from None
    except ValueError:  # int() of more than 4300 digits (Python's integer string conversion limit)
        raise UserError(_too_many_digits(source, text)) from None
    base_dir = Path(os.path.normpath(file.absolute())).parent
    try:
        scenario = Scenario.model_validate(data, context={"base_dir": base_dir})
    except ValidationError as exc:
        raise UserError(describe_validation_error(exc, source, data=data, model=Scenario)) from None
    scenario.source_path = Path(os.path.normpath(file.absolute()))
    return scenario

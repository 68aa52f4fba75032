"""OMM JSON: a list of objects of OMM keywords, or a single object.

Numbers are kept as text (``parse_int=str``, NaN and Infinity as their names) so that the
keyword checks see exactly what the file holds; messages name the line where each entry
starts.
"""

from __future__ import annotations

import bisect
import json

from planner.elements.model import ElementSet
from planner.elements.omm import _clean_value, _omm_element_set
from planner.errors import UserError
from planner.errors import quoted as _clip


def _json_entry_lines(text: str) -> list[int]:
    """Line number where each top-level entry starts (a list) or [line] for one object."""
    newlines = [i for i, char in enumerate(text) if char == "\n"]

    def line_of(index: int) -> int:
        return bisect.bisect_right(newlines, index - 1) + 1

    decoder = json.JSONDecoder(parse_int=str)
    index = len(text) - len(text.lstrip())
    if text[index] != "[":
        return [line_of(index)]
    starts: list[int] = []
    index += 1
    while True:
        while text[index].isspace():
            index += 1
        if text[index] == "]":
            return starts
        starts.append(line_of(index))
        _, index = decoder.raw_decode(text, index)
        while text[index].isspace():
            index += 1
        if text[index] == ",":
            index += 1


def _read_omm_json(text: str, label: str) -> list[ElementSet]:
    try:
        # NaN/Infinity and integers stay text: the keyword checks read them (and int() of
        # more than 4300 digits would raise; Python docs, integer string conversion limit).
        data = json.loads(text, parse_constant=lambda name: name, parse_int=str)
    except json.JSONDecodeError as exc:
        raise UserError(f"{label}:{exc.lineno}: not valid JSON: {exc.msg} (column {exc.colno})") from None
    except RecursionError:
        raise UserError(f"{label}: not valid OMM JSON: nested too deeply") from None
    if isinstance(data, dict):
        entries = [data]
    elif isinstance(data, list):
        entries = data
    else:
        raise UserError(f"{label}:1: OMM JSON must be a list of objects or one object, found a {type(data).__name__}")
    try:
        lines = _json_entry_lines(text)
    except (ValueError, IndexError, RecursionError):  # pragma: no cover - json.loads accepted it
        lines = []
    if len(lines) != len(entries):
        lines = [1] * len(entries)
    element_sets = []
    for index, (entry, line) in enumerate(zip(entries, lines), start=1):
        where = f"{label}:{line}: entry {index}"
        if not isinstance(entry, dict):
            raise UserError(f"{where}: expected an object of OMM keywords, found a {type(entry).__name__}")
        fields: dict[str, str | None] = {}
        for key, value in entry.items():
            key = str(key).strip().upper()
            if value is None:
                fields[key] = None
            elif isinstance(value, bool) or isinstance(value, (list, dict)):
                raise UserError(f"{where}: {key} is {_clip(json.dumps(value))}; expected a number or text")
            elif isinstance(value, float):
                fields[key] = repr(value)
            else:
                fields[key] = _clean_value(str(value))
        element_sets.append(_omm_element_set(fields, where, f"{label}:{line}"))
    return element_sets

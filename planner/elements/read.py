"""Reading an element file: a capped read, then the format detected from the content.

The file is read through ``planner.limits.read_text_capped`` (at most
``ELEMENTS_FILE_LIMIT_BYTES``); its form (TLE/3LE, OMM XML, CSV or JSON) is told from the
first characters and the first line, the file extension only breaking ties.
"""

from __future__ import annotations

from pathlib import Path

from planner.elements.model import ElementSet
from planner.elements.omm import _OMM_KEYWORDS
from planner.elements.omm_csv import _read_omm_csv
from planner.elements.omm_json import _read_omm_json
from planner.elements.omm_xml import _read_omm_xml
from planner.elements.tle import _read_tle
from planner.errors import UserError
from planner.limits import ELEMENTS_FILE_LIMIT_BYTES, ReadWording, read_text_capped


def read_elements(path: str | Path) -> list[ElementSet]:
    """Read every element set in a TLE, 3LE or OMM (XML/CSV/JSON) file."""
    label = str(path)
    text = read_text_capped(path, what="element file", limit_bytes=ELEMENTS_FILE_LIMIT_BYTES, wording=_READ_WORDING)
    if not text.strip():
        raise _empty(label)
    kind = _detect_format(text, Path(path).suffix.lower())
    reader = {"tle": _read_tle, "xml": _read_omm_xml, "csv": _read_omm_csv, "json": _read_omm_json}[kind]
    element_sets = reader(text, label)
    if not element_sets:
        raise _empty(label)
    return element_sets


_READ_WORDING = ReadWording(
    not_found="{path}: cannot read: No such file or directory",
    folder="{path}: cannot read: Is a directory",
    not_text="{path}: cannot read: not UTF-8 text (byte {offset}); expected TLE, 3LE or OMM (XML/CSV/JSON)",
    other="{path}: cannot read: {reason}",
)
"""The messages ``read_elements`` has always given for a file it cannot read."""


def _empty(label: str) -> UserError:
    return UserError(f"{label}: no element sets found; expected TLE, 3LE or OMM (XML/CSV/JSON)")


def _detect_format(text: str, suffix: str) -> str:
    head = text.lstrip()
    if head.startswith("<"):
        return "xml"
    if head[:1] in ("[", "{"):
        return "json"
    first_line = head.split("\n", 1)[0].strip()
    if "," in first_line:
        names = {cell.strip().strip('"').strip().upper() for cell in first_line.split(",")}
        if len(names & _OMM_KEYWORDS) >= 2:
            return "csv"
    if first_line[:2] in ("1 ", "2 ") or first_line[:2] == "0 ":
        return "tle"
    return {".xml": "xml", ".json": "json", ".csv": "csv"}.get(suffix, "tle")

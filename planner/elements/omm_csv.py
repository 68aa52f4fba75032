"""OMM CSV: a header row of OMM keywords (OBJECT_NAME, EPOCH, MEAN_MOTION, ...), one element set a row.

Read with the standard ``csv`` module (RFC 4180 quoting); blank rows are skipped, and
messages name the row's line in the file.
"""

from __future__ import annotations

import csv
import io

from planner.elements.model import ElementSet
from planner.elements.omm import _OMM_KEYWORDS, _OMM_REQUIRED, _clean_value, _omm_element_set
from planner.errors import UserError


def _read_omm_csv(text: str, label: str) -> list[ElementSet]:
    reader = csv.reader(io.StringIO(text, newline=""))
    header: list[str] | None = None
    header_line = 0
    element_sets: list[ElementSet] = []
    try:
        for row in reader:
            line = reader.line_num
            if not any(cell.strip() for cell in row):
                continue
            if header is None:
                header = [cell.strip().upper() for cell in row]
                header_line = line
                unknown_all = not set(header) & _OMM_KEYWORDS
                missing = [key for key in _OMM_REQUIRED if key not in header]
                if unknown_all or missing:
                    raise UserError(
                        f"{label}:{line}: OMM CSV header lacks "
                        + (", ".join(missing) if missing else "OMM keywords")
                        + "; the first row names OMM keywords such as "
                        + ", ".join(_OMM_REQUIRED)
                    )
                duplicates = sorted({key for key in header if key and header.count(key) > 1})
                if duplicates:
                    raise UserError(f"{label}:{line}: OMM CSV header repeats {', '.join(duplicates)}; name each keyword once")
                continue
            if len(row) != len(header):
                raise UserError(
                    f"{label}:{line}: row has {len(row)} fields, the header on line {header_line} "
                    f"has {len(header)}; one value per header keyword"
                )
            fields = {key: _clean_value(cell) for key, cell in zip(header, row) if key}
            element_sets.append(_omm_element_set(fields, f"{label}:{line}", f"{label}:{line}"))
    except csv.Error as exc:
        raise UserError(f"{label}:{reader.line_num}: not valid CSV: {exc}") from None
    return element_sets

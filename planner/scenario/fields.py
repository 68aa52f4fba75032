"""Field types and checks of the scenario schema: numbers in ranges, names, file paths.

Each check raises a validation error carrying the two halves of the one-line report (what
is wrong, what is allowed; see :func:`_error`), so the report in
:mod:`planner.scenario.messages` can print it as is. Ranges and the name check are
``Annotated`` metadata hooked into pydantic's validation through
``__get_pydantic_core_schema__`` (pydantic v2 documentation, custom types); a range stays on
its field so the reports can say what is allowed. The bounds shared with the element and
pattern-table readers (the printable-name rule, the frequency range) come from
:mod:`planner.bounds`.
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping
from datetime import date, datetime, time
from pathlib import Path
from typing import Annotated, Any, TypeVar

from pydantic import BeforeValidator, Field, Strict, ValidationInfo
from pydantic_core import PydanticCustomError, core_schema

from planner.bounds import FREQUENCY_MAX_MHZ, FREQUENCY_MIN_MHZ, control_character
from planner.choices import canonical_choice

_ALLOWED_NAME = "one line of text in quotes, 1 to 80 characters"


def _error(problem: str, allowed: str, *, at: tuple[int | str, ...] = ()) -> PydanticCustomError:
    """A validation error carrying the two halves of the one-line report.

    ``at`` extends the error's location below the validated field (a list validator
    pointing at one entry's key).
    """
    context: dict[str, Any] = {"problem": problem, "allowed": allowed}
    if at:
        context["at"] = at
    return PydanticCustomError("scenario_value", "{problem}; allowed: {allowed}", context)


def _num(value: float) -> str:
    """A number the way a user would write it in TOML: 91, 0.5, 1e-05."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        text = str(value)
        return text if len(text) <= 20 else f"{text[:12]}... ({len(text)} digits)"
    if math.isnan(value):
        return "nan"
    if math.isinf(value):
        return "inf" if value > 0 else "-inf"
    if value.is_integer() and abs(value) < 1e15:
        return str(int(value))
    return repr(value)


def _finite(value: float) -> bool:
    """math.isfinite that also takes integers too large for a float (they are not finite here)."""
    try:
        return math.isfinite(value)
    except OverflowError:
        return False


def _show(value: Any) -> str:
    """A short, one-line rendering of a user's value for an error message."""
    if isinstance(value, (bool, int, float)):
        return _num(value)
    if isinstance(value, str):
        text = repr(value)
        return text if len(text) <= 42 else text[:38] + "...'"
    if isinstance(value, (datetime, date, time)):
        return value.isoformat()
    if isinstance(value, Mapping):
        return "a table"
    if isinstance(value, (list, tuple)):
        text = repr(list(value))
        return text if len(text) <= 42 else "a list"
    return f"a {type(value).__name__}"


class _Range:
    """Closed or open bounds on a number, used as ``Annotated`` metadata.

    The bounds are kept on the field so error reports (and documentation) can say what is
    allowed; non-finite values (TOML ``inf``, ``nan``) are always refused.
    """

    def __init__(
        self,
        lo: float | None = None,
        hi: float | None = None,
        *,
        lo_open: bool = False,
        hi_open: bool = False,
    ) -> None:
        self.lo, self.hi, self.lo_open, self.hi_open = lo, hi, lo_open, hi_open

    def allowed(self) -> str:
        lo, hi = self.lo, self.hi
        if lo is not None and hi is not None:
            if not self.lo_open and not self.hi_open:
                return f"{_num(lo)} to {_num(hi)}"
            if self.lo_open and not self.hi_open:
                return f"more than {_num(lo)}, up to {_num(hi)}"
            if not self.lo_open and self.hi_open:
                return f"{_num(lo)} up to but not including {_num(hi)}"
            return f"more than {_num(lo)} and less than {_num(hi)}"
        if lo is not None:
            return f"more than {_num(lo)}" if self.lo_open else f"{_num(lo)} or more"
        if hi is not None:
            return f"less than {_num(hi)}" if self.hi_open else f"{_num(hi)} or less"
        return "any finite number"

    def contains(self, value: float) -> bool:
        if not _finite(value):
            return False
        if self.lo is not None and (value <= self.lo if self.lo_open else value < self.lo):
            return False
        if self.hi is not None and (value >= self.hi if self.hi_open else value > self.hi):
            return False
        return True

    def check(self, value: float) -> float:
        if isinstance(value, float) and not math.isfinite(value):
            raise _error(f"{_num(value)} is not a finite number", self.allowed())
        if not self.contains(value):
            raise _error(f"{_num(value)} is out of range", self.allowed())
        return value

    def __get_pydantic_core_schema__(self, source: Any, handler: Any) -> core_schema.CoreSchema:
        return core_schema.no_info_after_validator_function(self.check, handler(source))


# A float that refuses strings and booleans and accepts ints (pydantic strict mode).
Real = Annotated[float, Strict()]


def _check_name(value: str) -> str:
    if not value.strip():
        raise _error("the name is empty", _ALLOWED_NAME)
    if len(value) > 80:
        raise _error(f"the name is {len(value)} characters long", _ALLOWED_NAME)
    bad = control_character(value)  # the same rule as element-file names
    if bad is not None:
        raise _error(
            f"the name {_show(value)} holds the control character {bad[1]} at character {bad[0]}",
            _ALLOWED_NAME,
        )
    return value


class _NameCheck:
    def __get_pydantic_core_schema__(self, source: Any, handler: Any) -> core_schema.CoreSchema:
        return core_schema.no_info_after_validator_function(_check_name, handler(source))


Name = Annotated[str, Strict(), _NameCheck(), Field(description=_ALLOWED_NAME)]

_Choices = TypeVar("_Choices")
Choice = Annotated[_Choices, BeforeValidator(canonical_choice)]
"""A choice key (``Choice[Literal["data-volume", ...]]``): the underscore spelling reads as the hyphen one."""

Latitude = Annotated[Real, _Range(-90, 90)]
Longitude = Annotated[Real, _Range(-180, 180)]
Altitude = Annotated[Real, _Range(-500, 9000)]
Frequency = Annotated[Real, _Range(FREQUENCY_MIN_MHZ, FREQUENCY_MAX_MHZ)]  # the pattern tables' range too


def _resolve_file(value: Any, info: ValidationInfo, allowed: str) -> Path:
    """A file named in the scenario: relative to the scenario's folder, and it must exist.

    ``info.context`` may hold ``base_dir`` (default: the working folder) and
    ``check_files`` (default True).
    """
    if isinstance(value, Path):
        text = str(value)
    elif isinstance(value, str):
        text = value
    else:
        raise _error(f"expected a file path in quotes, got {_show(value)}", allowed)
    if not text.strip():
        raise _error("the path is empty", allowed)
    if not text.isprintable():
        raise _error(f"the path {_show(text)} holds control characters", allowed)
    context = info.context if isinstance(info.context, Mapping) else {}
    base = context.get("base_dir")
    path = Path(text)
    try:
        path = path.expanduser()
    except RuntimeError:  # '~user' with no such user: keep the text as written
        pass
    if not path.is_absolute():
        path = Path(base if base is not None else Path.cwd()) / path
    path = Path(os.path.normpath(path.absolute()))
    if context.get("check_files", True):
        try:
            exists, is_file = path.exists(), path.is_file()
        except (OSError, ValueError) as exc:
            raise _error(f"file {text} cannot be checked: {exc}", allowed) from None
        if not exists:
            raise _error(f"file {text} does not exist (looked for {path})", allowed)
        if not is_file:
            raise _error(f"{text} is not a file (looked at {path})", allowed)
    return path

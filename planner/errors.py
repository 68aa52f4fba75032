"""Errors and warnings that reach the user.

A :class:`UserError` is something the user can fix (a bad file, a bad value, an
unknown satellite). Its message is one line that names the file, the key or line,
and what is allowed; the command line prints it and exits with code 2.

A :class:`PlannerWarning` is something the user should know but that does not stop
the run (stale elements, an extrapolated model). Library code raises it through
:func:`warn`; the command line prints it as one line on stderr.
"""

from __future__ import annotations

import math
import warnings


class UserError(Exception):
    """A problem with the user's input, reported as one clear line (exit code 2)."""


class PlannerWarning(UserWarning):
    """Something worth knowing that does not stop the run."""


def positive_number(name: str, value, allowed: str = "a positive number") -> float:
    """``value`` as a finite float above zero, or a UserError naming ``name`` and what is allowed."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise UserError(f"{name}: must be {allowed}, got {value!r}") from None
    if not (math.isfinite(number) and number > 0):
        raise UserError(f"{name}: must be {allowed}, got {value!r}")
    return number


def quoted(text: str, limit: int = 40) -> str:
    """User text for a message: quoted and escaped (``repr``), at most ``limit`` characters of it,
    so a hostile value of thousands of characters or terminal escapes is never printed back raw."""
    return repr(text if len(text) <= limit else text[: limit - 3] + "...")


def warn(message: str) -> None:
    """Emit a one-line warning about the user's input or a model's validity."""
    warnings.warn(message, PlannerWarning, stacklevel=2)

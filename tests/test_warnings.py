"""What reaches the user's terminal: the program's own warnings, never a library's.

Python's warnings machinery (docs.python.org, "warnings - Warning control": filters are matched
in order, the most recently inserted first; ``sys.warnoptions`` holds ``-W``/``PYTHONWARNINGS``).
"""

from __future__ import annotations

import sys
import warnings

from planner.cli import _only_planner_warnings
from planner.errors import PlannerWarning


def _shown_after_policy(monkeypatch, warnoptions: list[str]) -> list[type[Warning]]:
    monkeypatch.setattr(sys, "warnoptions", warnoptions)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")  # as `python -W always` leaves the filters
        _only_planner_warnings()
        warnings.warn("a library changes its interface", DeprecationWarning, stacklevel=1)
        warnings.warn("the figure layout has changed", UserWarning, stacklevel=1)
        warnings.warn("future default", FutureWarning, stacklevel=1)
        warnings.warn("elements are 20 days old", PlannerWarning, stacklevel=1)
    return [w.category for w in caught]


def test_only_the_programs_own_warnings_are_shown(monkeypatch):
    assert _shown_after_policy(monkeypatch, []) == [PlannerWarning]


def test_a_developer_asking_with_dash_w_still_sees_library_warnings(monkeypatch):
    # With -W given, the interpreter's filters stand, so every category comes through.
    shown = _shown_after_policy(monkeypatch, ["always"])
    assert DeprecationWarning in shown and UserWarning in shown and PlannerWarning in shown

"""planner: choose a fixed circularly polarized ground-station antenna set-up.

The package follows one data flow, and each subpackage is one stage of it:

    scenario (validated TOML) -> elements (TLE/OMM element sets) -> passes (SGP4 passes over
    the station, with tracks) -> link (the per-sample budget: pattern gain and polarization,
    path loss, atmosphere, feedline, LNA, noise) -> decision (forecast, recommendation, reflector
    sweep) -> output (CSV/JSON, calendar, figures, report)

with ``antenna`` (pattern tables, the wire solver, the harness) feeding the link, ``study`` the
resolved scenario every stage takes, and ``cli`` the command line on top.

This module is the front door for scripts and notebooks::

    from planner import Study, load_scenario, forecast, recommend
    study = Study.from_scenario(load_scenario("scenarios/demo.toml"))
    result = forecast(study)
    decision = recommend(result, study.satellites, study.candidates)

Names are imported when first used, so ``import planner`` stays cheap and the command line
loads only what a command needs.
"""

from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

# Public name -> the module that defines it.
_PUBLIC = {
    # scenario and study
    "load_scenario": "planner.scenario",
    "Scenario": "planner.scenario",
    "Study": "planner.study",
    "Candidate": "planner.study",
    # element sets and passes
    "read_elements": "planner.elements",
    "ElementSet": "planner.elements",
    "predict_passes": "planner.passes",
    "Pass": "planner.passes",
    "Target": "planner.passes",
    "Station": "planner.passes.station",
    # antennas
    "PatternTable": "planner.antenna",
    "load_pattern": "planner.antenna",
    "write_pattern": "planner.antenna",
    "build_pattern": "planner.antenna.registry",
    # the link
    "LinkSetup": "planner.link.budget",
    "evaluate": "planner.link.budget",
    "pass_budget": "planner.link.budget",
    "ladder_values": "planner.link.budget",
    # decisions
    "forecast": "planner.decision.forecast",
    "band_table": "planner.decision.forecast",
    "hour_table": "planner.decision.forecast",
    "recommend": "planner.decision.recommend",
    "sweep_reflector": "planner.decision.sweep",
    # outputs
    "pass_row": "planner.output.export",
    "pass_of_widest_spread": "planner.output.export",
    "to_csv": "planner.output.export",
    "to_json": "planner.output.export",
    "write_report": "planner.output.export",
    # errors
    "UserError": "planner.errors",
    "PlannerWarning": "planner.errors",
}
_MODULES = {"plots": "planner.output.plots", "constants": "planner.constants"}

__all__ = sorted([*_PUBLIC, *_MODULES, "__version__"])


def __getattr__(name: str) -> Any:
    """Import a public name's module on first use (PEP 562)."""
    if name in _PUBLIC:
        return getattr(importlib.import_module(_PUBLIC[name]), name)
    if name in _MODULES:
        return importlib.import_module(_MODULES[name])
    raise AttributeError(f"module 'planner' has no attribute {name!r}")


def __dir__() -> list[str]:
    return __all__

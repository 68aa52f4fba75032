"""Scenario files: the TOML schema, its validation and one-line error reports.

This is the only package that reads a scenario file. :func:`load_scenario` turns a TOML
file into a validated :class:`Scenario`; every problem a user can make (a file that is
missing or not TOML, an unknown key, a value of the wrong type or out of range, an
elements file that does not exist) becomes a :class:`~planner.errors.UserError` whose
message is one line naming the file, the key as the user finds it in the TOML, what is
wrong and what is allowed.

Modules, each building on the ones before it:

* :mod:`~planner.scenario.fields`: field types and checks (numbers in ranges, names, file
  paths) and the validation error that carries a report's two halves.
* :mod:`~planner.scenario.schema`: the models, one per TOML table, and :class:`Scenario`.
* :mod:`~planner.scenario.messages`: a pydantic ValidationError as one line naming the key
  (:func:`describe_validation_error`), and :func:`validated` for command-line options.
* :mod:`~planner.scenario.loading`: :func:`load_scenario` (capped read, TOML errors, huge
  integers, validation).

The bounds shared with the element and pattern-table readers (years, catalog numbers,
printable names, frequencies) come from :mod:`planner.bounds`, so loading a scenario
imports neither numpy nor those readers.
"""

from __future__ import annotations

from planner.scenario.loading import load_scenario
from planner.scenario.messages import describe_validation_error, validated
from planner.scenario.schema import (
    CableConfig,
    CandidateConfig,
    CatalogConfig,
    CriteriaConfig,
    FeedlineRun,
    RadioConfig,
    ReceiverConfig,
    SatelliteConfig,
    Scenario,
    StationConfig,
    TransmitterConfig,
    WindowConfig,
)

__all__ = [
    "StationConfig",
    "WindowConfig",
    "SatelliteConfig",
    "Scenario",
    "RadioConfig",
    "CatalogConfig",
    "CandidateConfig",
    "CableConfig",
    "CriteriaConfig",
    "FeedlineRun",
    "ReceiverConfig",
    "TransmitterConfig",
    "load_scenario",
    "describe_validation_error",
    "validated",
]

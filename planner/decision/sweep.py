"""Reflector-placement sweep: weekly contact time and data volume against reflector spacing.

A candidate's pattern table records in its header the builder that made it and the
parameters (``builder = ...``, ``parameters = spacing_wavelengths=0.25; ...``). The sweep
rebuilds that same model at each spacing, runs the whole forecast for the candidate
(passes are predicted once and shared), and scores each spacing the way candidates are
scored: by the one-receiver schedule's objective.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from planner.constants import SPEED_OF_LIGHT_M_S
from planner.decision.forecast import forecast, numbered_passes
from planner.decision.recommend import score_candidates
from planner.errors import UserError
from planner.limits import SWEEP_POINTS_LIMIT, SWEEP_SECONDS_PER_POINT, format_seconds

SPACING_PARAMETER = "spacing_wavelengths"
MAX_SPACINGS = SWEEP_POINTS_LIMIT  # each spacing is a full solve and forecast; why 60: planner.limits


def parse_spacing_range(text: str, frequency_hz: float) -> np.ndarray:
    """'START:STOP:STEP' in wavelengths (plain numbers, or with a 'wl' suffix) or metres ('m').

    STOP is included when the steps land on it. Returns spacings in wavelengths.
    """
    option = "--reflector-spacing"
    parts = text.split(":")
    if len(parts) != 3:
        raise UserError(f"{option}: {text!r} is not START:STOP:STEP; e.g. 0.1:1.0:0.05 (wavelengths) or 0.05m:0.6m:0.05m")
    units = set()
    values = []
    for part in parts:
        part = part.strip().lower()
        unit = "m" if part.endswith("m") and not part.endswith("wl") else "wl"
        number = part[:-2] if part.endswith("wl") else part[:-1] if part.endswith("m") else part
        try:
            values.append(float(number))
        except ValueError:
            raise UserError(f"{option}: {part!r} is not a number; e.g. 0.1:1.0:0.05 or 0.05m:0.6m:0.05m") from None
        units.add(unit)
    if len(units) != 1:
        raise UserError(f"{option}: {text!r} mixes metres and wavelengths; use one unit for START, STOP and STEP")
    start, stop, step = values
    if not all(math.isfinite(value) for value in values):
        raise UserError(f"{option}: {text!r}; START, STOP and STEP must be finite numbers")
    if not (start > 0 and stop >= start and step > 0):
        raise UserError(f"{option}: {text!r}; allowed: 0 < START <= STOP and STEP > 0")
    count = _spacing_count(option, text, start, stop, step)
    spacings = start + step * np.arange(count)
    if units == {"m"}:
        spacings = spacings / (SPEED_OF_LIGHT_M_S / frequency_hz)
    if spacings.max() > 3.0:
        raise UserError(f"{option}: {text!r} reaches {spacings.max():.2f} wavelengths; allowed up to 3 wavelengths")
    return spacings


def _spacing_count(option: str, text: str, start: float, stop: float, step: float) -> int:
    """How many spacings START:STOP:STEP gives, refused past ``MAX_SPACINGS`` before any is made:
    each is a full solve and forecast, so the message gives the estimated time too."""
    ratio = (stop - start) / step  # finite and >= 0 here, but may be astronomically large
    if ratio + 1 > MAX_SPACINGS:
        asked = f"{math.floor(ratio + 1e-9) + 1:,}" if ratio < 1e15 else f"about {ratio:.2g}"
        raise UserError(
            f"{option}: {text!r} gives {asked} spacings, each a full solve and forecast (about "
            f"{format_seconds((ratio + 1) * SWEEP_SECONDS_PER_POINT)} at {SWEEP_SECONDS_PER_POINT:g} s a spacing); "
            f"allowed at most {MAX_SPACINGS} (use a larger STEP)"
        )
    return int(np.floor(ratio + 1e-9)) + 1


def _builder_and_parameters(pattern) -> tuple[str, dict[str, str]]:
    header = pattern.header
    builder = header.get("builder")
    if not builder:
        raise UserError(
            f"{pattern.path}: the header names no builder, so the sweep cannot rebuild it at other spacings; "
            "sweep a candidate whose pattern planner built (planner pattern build)"
        )
    parameters = {}
    for item in header.get("parameters", "").split(";"):
        if "=" in item:
            key, value = item.split("=", 1)
            parameters[key.strip()] = value.strip()
    if SPACING_PARAMETER not in parameters:
        raise UserError(f"{pattern.path}: the model has no reflector spacing parameter ({SPACING_PARAMETER}); nothing to sweep")
    return builder, parameters


def rebuild_at_spacing(pattern, spacing_wavelengths: float):
    """The candidate's own model rebuilt with another reflector spacing."""
    from planner.antenna.registry import rebuild_pattern

    builder, parameters = _builder_and_parameters(pattern)
    parameters = dict(parameters, **{SPACING_PARAMETER: f"{spacing_wavelengths:.6g}"})
    return rebuild_pattern(builder, parameters, source=str(pattern.path))


@dataclass
class SweepResult:
    candidate: str
    objective: str
    frequency_hz: float
    table: pd.DataFrame  # one row per spacing: spacing_wavelengths, spacing_m, score, minutes, Mbit
    per_satellite: pd.DataFrame  # one row per (spacing, satellite): usable_minutes, data_volume_mbit
    best_spacing_wavelengths: float
    runner_up_spacing_wavelengths: float | None
    margin_of_victory: float  # best score - runner-up score (objective units)
    margin_of_victory_percent: float | None

    def summary(self) -> str:
        best = self.table.loc[self.table["spacing_wavelengths"] == self.best_spacing_wavelengths].iloc[0]
        text = (
            f"Best reflector spacing for {self.candidate}: {best['spacing_wavelengths']:.3g} wavelength "
            f"({best['spacing_m'] * 100:.1f} cm at {self.frequency_hz / 1e6:g} MHz), score {best['score']:.2f} "
            f"({best['usable_minutes']:.0f} usable minutes, {best['data_volume_mbit']:.1f} Mbit with one receiver)."
        )
        if self.runner_up_spacing_wavelengths is not None:
            lead = "" if self.margin_of_victory_percent is None else f", {self.margin_of_victory_percent:.1f} %"
            text += f" The next best, {self.runner_up_spacing_wavelengths:.3g} wavelength, scores {self.margin_of_victory:.2f} less{lead}."
        return text


def single_band(study, candidate_name: str):
    """The named candidate when it has one antenna; a candidate of several bands is refused.

    The sweep moves one table's reflector; with several bands it could not say whose.
    """
    base = study.candidate(candidate_name)
    if len(base.band_list) > 1:
        raise UserError(
            f"{study.source}: --candidate: {candidate_name} has {len(base.band_list)} bands, and the sweep "
            "rebuilds one pattern table; allowed: a candidate with a single pattern (make one from the band "
            "to sweep)"
        )
    return base


def sweep_reflector(study, candidate_name: str, spacings_wavelengths, *, progress=None) -> SweepResult:
    """Score the candidate at each reflector spacing (everything else in the scenario as it is)."""
    base = single_band(study, candidate_name)
    _builder_and_parameters(base.pattern)  # refuse early when the pattern cannot be rebuilt
    objective = study.criteria.objective
    rows, per_satellite = [], []
    wavelength_m = SPEED_OF_LIGHT_M_S / base.pattern.frequency_hz
    numbered = numbered_passes(study)  # the passes do not depend on the antenna: predicted once
    for index, spacing in enumerate(spacings_wavelengths, start=1):
        variant = study.with_candidate(replace(base, pattern=rebuild_at_spacing(base.pattern, float(spacing))))
        result = forecast(variant, [candidate_name], numbered=numbered)
        score = score_candidates(result.outcomes, objective, [candidate_name])[0][0]
        rows.append(
            {
                "spacing_wavelengths": float(spacing),
                "spacing_m": float(spacing) * wavelength_m,
                "score": score.score,
                "usable_minutes": score.usable_minutes,
                "data_volume_mbit": score.data_volume_mbit,
                "usable_passes": score.usable_passes,
                "dropouts": score.dropouts,
            }
        )
        weekly = result.weekly
        for record in weekly.to_dict("records"):
            per_satellite.append(
                {
                    "spacing_wavelengths": float(spacing),
                    "satellite": record["satellite"],
                    "usable_minutes": record["usable_minutes"],
                    "data_volume_mbit": record["data_volume_mbit"],
                }
            )
        if progress is not None:
            progress(index, len(spacings_wavelengths))
    table = pd.DataFrame(rows)
    ordered = table.sort_values(["score", "usable_minutes"], ascending=False)
    best = float(ordered.iloc[0]["spacing_wavelengths"])
    runner = float(ordered.iloc[1]["spacing_wavelengths"]) if len(ordered) > 1 else None
    lead = float(ordered.iloc[0]["score"] - ordered.iloc[1]["score"]) if len(ordered) > 1 else 0.0
    lead_percent = 100.0 * lead / float(ordered.iloc[1]["score"]) if len(ordered) > 1 and ordered.iloc[1]["score"] > 0 else None
    return SweepResult(
        candidate=candidate_name,
        objective=objective,
        frequency_hz=base.pattern.frequency_hz,
        table=table,
        per_satellite=pd.DataFrame(per_satellite),
        best_spacing_wavelengths=best,
        runner_up_spacing_wavelengths=runner,
        margin_of_victory=lead,
        margin_of_victory_percent=lead_percent,
    )

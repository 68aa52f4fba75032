"""Candidate comparison: ranking, a reasoned recommendation, and its robustness.

The score of a candidate is what a station with one receiver can actually collect in
the window: the one-receiver schedule's value under the scenario's objective
(``data-volume``: weight x megabits; ``usable-time``: weight x minutes). The
explanation compares the recommended set-up with the runner-up by maximum-elevation
band, by dropouts (margin falling below the threshold inside a pass, the signature of
pattern nulls) and by satellite. Robustness: every budget is shifted by -/+2 dB and by
the scenario's ``budget_uncertainty_db``; the recommendation holds when the same
candidate ranks first under every shift.

Candidates whose pattern table carries no feed data (no ``feed_vswr`` in its header, none in
the scenario) are compared as if matched; the explanation and the ``notes`` say which.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import UTC, datetime, timedelta

import pandas as pd

from planner.decision.forecast import (
    ELEVATION_BANDS_DEG,
    Forecast,
    band_table,
    dropped_for_conflicts,
    schedule,
    summarize_passes,
)

# A band or satellite difference smaller than this (minutes per week) is not worth a sentence.
_NOTABLE_MINUTES = 0.5


@dataclass
class CandidateScore:
    candidate: str
    score: float  # one-receiver schedule value (objective units)
    unconstrained_score: float  # the same without the one-receiver limit
    usable_minutes: float  # scheduled usable time, minutes in the window
    data_volume_mbit: float  # scheduled data volume, megabits in the window
    usable_passes: int  # scheduled usable passes
    dropouts: int  # dropouts inside the scheduled passes

    @property
    def lost_to_conflicts(self) -> float:
        return self.unconstrained_score - self.score


@dataclass
class Recommendation:
    recommended: str
    objective: str
    score_unit: str
    ranking: list[CandidateScore]
    explanation: str
    robust: bool
    winner_by_shift_db: dict[float, str] = field(default_factory=dict)
    schedules: dict = field(default_factory=dict)  # candidate -> ScheduleResult
    notes: list[str] = field(default_factory=list)  # e.g. candidates charged no feed mismatch
    model_notes: list[str] = field(default_factory=list)  # models used beyond their stated range

    def to_contract(self) -> dict:
        """The `planner compare --format json` document (its contract keys plus a few extra)."""
        return {
            "recommended": self.recommended,
            "objective": self.objective,
            "score_unit": self.score_unit,
            "ranking": [
                {
                    "candidate": s.candidate,
                    "score": round(s.score, 4),
                    "usable_minutes": round(s.usable_minutes, 2),
                    "data_volume_mbit": round(s.data_volume_mbit, 3),
                    "usable_passes": s.usable_passes,
                    "dropouts": s.dropouts,
                    "lost_to_conflicts": round(s.lost_to_conflicts, 4),
                }
                for s in self.ranking
            ],
            "robust": self.robust,
            "winner_by_shift_db": {f"{k:+g}": v for k, v in sorted(self.winner_by_shift_db.items())},
            "explanation": self.explanation,
            "notes": list(self.notes),
            "model_notes": list(self.model_notes),
            "dropped_for_conflicts": self.dropped_rows(),
        }

    def dropped_rows(self) -> list[dict]:
        """The recommended set-up's usable passes one receiver cannot take, with the kept pass each
        overlaps longest: the ``dropped_for_conflicts`` rows of the contract (and ``dropped.csv``)."""
        result = self.schedules.get(self.recommended)
        if result is None:
            return []
        rows = []
        for record in dropped_for_conflicts(result).to_dict("records"):
            overlap_s = record["overlap_s"]
            partner = record["conflicts_with_pass_number"]
            rows.append(
                {
                    "satellite": record["satellite"],
                    "norad_id": int(record["norad_id"]),
                    "pass_number": int(record["pass_number"]),
                    "aos_utc": _utc_text(record["aos_utc"]),
                    "usable_start_utc": _utc_text(record["usable_start_utc"]),
                    "usable_end_utc": _utc_text(record["usable_end_utc"]),
                    "usable_s": round(float(record["usable_s"]), 1),
                    "conflicts_with_satellite": record["conflicts_with_satellite"],
                    "conflicts_with_pass_number": None if partner is None else int(partner),
                    "conflicts_with_aos_utc": _utc_text(record["conflicts_with_aos_utc"]),
                    "overlap_s": None if overlap_s is None else round(float(overlap_s), 1),
                }
            )
        return rows


DROPPED_ROW_KEYS = (
    "satellite",
    "norad_id",
    "pass_number",
    "aos_utc",
    "usable_start_utc",
    "usable_end_utc",
    "usable_s",
    "conflicts_with_satellite",
    "conflicts_with_pass_number",
    "conflicts_with_aos_utc",
    "overlap_s",
)
"""The keys of a ``dropped_for_conflicts`` row, in order (the columns of ``dropped.csv``)."""


def _utc_text(moment: datetime | None) -> str | None:
    """ISO 8601 UTC to the nearest second ending in ``Z``, as every output writes times (the
    decision stage does not import the output stage, whose ``iso_utc`` writes the same text)."""
    if moment is None:
        return None
    rounded = (moment.astimezone(UTC) + timedelta(microseconds=500_000)).replace(microsecond=0)
    return rounded.strftime("%Y-%m-%dT%H:%M:%SZ")


def _score_unit(objective: str) -> str:
    return "weighted Mbit" if objective == "data-volume" else "weighted minutes"


def _objective_value(value: float, objective: str) -> float:
    """Schedule values are weight x bit or weight x seconds; report Mbit or minutes."""
    return value / 1e6 if objective == "data-volume" else value / 60.0


def score_candidates(
    outcomes: pd.DataFrame, objective: str, candidates: list[str] | None = None
) -> tuple[list[CandidateScore], dict]:
    """Rank candidates by their one-receiver schedule value (best first).

    ``candidates`` lists every candidate to rank, so one with no pass at all still appears
    (with a score of zero) instead of vanishing.
    """
    scores, schedules = [], {}
    names = list(candidates) if candidates is not None else list(pd.unique(outcomes["candidate"]))
    for candidate in names:
        rows = outcomes.loc[outcomes["candidate"] == candidate]
        result = schedule(rows)
        schedules[candidate] = result
        chosen = result.chosen
        scores.append(
            CandidateScore(
                candidate=candidate,
                score=_objective_value(result.value, objective),
                unconstrained_score=_objective_value(result.unconstrained_value, objective),
                usable_minutes=float(chosen["usable_s"].sum()) / 60.0 if len(chosen) else 0.0,
                data_volume_mbit=float(chosen["data_volume_bit"].sum()) / 1e6 if len(chosen) else 0.0,
                usable_passes=int(len(chosen)),
                dropouts=int(chosen["dropouts"].sum()) if len(chosen) else 0,
            )
        )
    scores.sort(key=lambda s: (-s.score, -s.usable_minutes, s.candidate))
    return scores, schedules


def feed_data_notes(candidates) -> list[str]:
    """One sentence naming the candidates (planner.study.Candidate) charged no feed mismatch for lack
    of feed data (or none)."""
    unmatched = [c.name for c in candidates if c.feed_vswr_source is None]
    if not unmatched:
        return []
    one = len(unmatched) == 1
    return [
        f"No feed mismatch was charged for {_join(unmatched)}: {'its pattern table carries' if one else 'their pattern tables carry'} "
        "no feed_vswr and the scenario gives none, so "
        f"{'its feed is' if one else 'their feeds are'} taken as matched (give feed_vswr in the [[candidate]] table to charge one)."
    ]


def robustness_shifts_db(uncertainty_db: float) -> list[float]:
    return sorted({-2.0, 2.0, -float(uncertainty_db), float(uncertainty_db)} - {0.0})


def recommend(forecast: Forecast, satellites, candidates) -> Recommendation:
    """Rank the forecast's candidates and recommend one, with the reasons and the robustness check.

    ``satellites`` are the satellites' configurations (their radio, for the re-scored shifts);
    ``candidates`` maps each candidate's name to its planner.study.Candidate (for the feed notes).
    """
    criteria = forecast.criteria
    objective = criteria.objective
    ranking, schedules = score_candidates(forecast.outcomes, objective, forecast.candidates)
    if not ranking:
        raise ValueError("no candidates to compare")
    best = ranking[0]
    winners = {0.0: best.candidate}
    for shift in robustness_shifts_db(criteria.budget_uncertainty_db):
        shifted = summarize_passes(forecast.samples, forecast.passes, criteria, satellites, margin_shift_db=shift)
        winners[shift] = score_candidates(shifted, objective, forecast.candidates)[0][0].candidate
    robust = all(name == best.candidate for name in winners.values())
    notes = feed_data_notes([candidates[name] for name in forecast.candidates])
    explanation = " ".join([explain(forecast, ranking, winners, objective, forecast.days), *notes])
    return Recommendation(
        recommended=best.candidate,
        objective=objective,
        score_unit=_score_unit(objective),
        ranking=ranking,
        explanation=explanation,
        robust=robust,
        winner_by_shift_db=winners,
        schedules=schedules,
        notes=notes,
        model_notes=list(forecast.model_notes),
    )


def _band_minutes(outcomes: pd.DataFrame) -> pd.DataFrame:
    """Usable minutes by candidate (rows) and elevation band (columns), usable passes only."""
    bands = band_table(outcomes)
    table = bands.pivot_table(index="candidate", columns="elevation_band", values="usable_minutes", aggfunc="sum", fill_value=0.0)
    labels = [f"{lo}-{hi}" for lo, hi in ELEVATION_BANDS_DEG]
    return table.reindex(columns=labels, fill_value=0.0)


def _satellite_minutes(outcomes: pd.DataFrame) -> pd.DataFrame:
    usable = outcomes[outcomes["usable"]]
    return usable.pivot_table(index="candidate", columns="satellite", values="usable_s", aggfunc="sum", fill_value=0.0) / 60.0


def _join(items: list[str]) -> str:
    if len(items) <= 1:
        return "".join(items)
    return ", ".join(items[:-1]) + " and " + items[-1]


def explain(forecast: Forecast, ranking: list[CandidateScore], winners: dict[float, str], objective: str, days: float) -> str:
    """Plain sentences: why the recommended set-up wins, and what it gives up."""
    unit = _score_unit(objective)
    best = ranking[0]
    sentences = [
        f"Recommended: {best.candidate}. With one receiver it collects {best.score:.2f} {unit} in {days:g} days "
        f"({best.usable_passes} usable passes, {best.usable_minutes:.1f} usable minutes, {best.data_volume_mbit:.1f} Mbit)."
    ]
    if len(ranking) == 1:
        return " ".join(sentences)
    runner = ranking[1]
    if runner.score > 0:
        lead = 100.0 * (best.score - runner.score) / runner.score
        sentences.append(f"The runner-up, {runner.candidate}, collects {runner.score:.2f} {unit}; the lead is {lead:.1f} %.")
    else:
        sentences.append(f"The runner-up, {runner.candidate}, collects nothing usable under these criteria.")

    outcomes = forecast.outcomes
    if outcomes.empty or "candidate" not in outcomes.columns:
        sentences.append("No satellite passes over the station in the window, so no set-up can be told apart.")
        return " ".join(sentences)
    bands = _band_minutes(outcomes)
    if best.candidate in bands.index and runner.candidate in bands.index:
        difference = bands.loc[best.candidate] - bands.loc[runner.candidate]
        wins = [f"{band} deg (+{d:.1f} min)" for band, d in difference.items() if d >= _NOTABLE_MINUTES]
        losses = [f"{band} deg ({d:.1f} min)" for band, d in difference.items() if d <= -_NOTABLE_MINUTES]
        if wins:
            sentences.append(f"Against {runner.candidate} it gains usable time on passes peaking at {_join(wins)}.")
        if losses:
            sentences.append(f"It gives up usable time on passes peaking at {_join(losses)}.")
        if not wins and not losses:
            sentences.append(f"By maximum-elevation band it differs from {runner.candidate} by less than {_NOTABLE_MINUTES} min.")

    drops = outcomes[outcomes["usable"]].groupby("candidate")[["dropouts", "dropout_s"]].sum()
    if best.candidate in drops.index and runner.candidate in drops.index:
        b, r = drops.loc[best.candidate], drops.loc[runner.candidate]
        if b["dropouts"] != r["dropouts"]:
            fewer = "fewer" if b["dropouts"] < r["dropouts"] else "more"
            sentences.append(
                f"Across all its usable passes it shows {int(b['dropouts'])} dropouts ({b['dropout_s']:.0f} s) against "
                f"{int(r['dropouts'])} ({r['dropout_s']:.0f} s) for {runner.candidate}: {fewer} pattern nulls along the tracks."
            )

    sats = _satellite_minutes(outcomes)
    if best.candidate in sats.index and runner.candidate in sats.index:
        difference = sats.loc[best.candidate] - sats.loc[runner.candidate]
        better = [s for s, d in difference.items() if d >= _NOTABLE_MINUTES]
        worse = [s for s, d in difference.items() if d <= -_NOTABLE_MINUTES]
        if better:
            sentences.append(f"It hears more of {_join(better)}.")
        if worse:
            sentences.append(f"{runner.candidate} hears more of {_join(worse)}.")

    lost = [s for s in ranking if s.lost_to_conflicts > 0]
    if lost:
        worst = max(lost, key=lambda s: s.lost_to_conflicts)
        sentences.append(
            f"One receiver costs {worst.candidate} the most: {worst.lost_to_conflicts:.2f} {unit} lost to overlapping passes."
        )

    others = {shift: name for shift, name in winners.items() if name != best.candidate}
    shifts = sorted(k for k in winners if k != 0.0)
    span = ", ".join(f"{k:+g} dB" for k in shifts)
    if not others:
        sentences.append(f"The recommendation holds with every budget shifted by {span}.")
    else:
        changes = "; ".join(f"at {k:+g} dB {name} ranks first" for k, name in sorted(others.items()))
        sentences.append(f"The recommendation is sensitive to the budget: {changes}. Check the uncertain terms before building.")
    return " ".join(sentences)

"""Candidate comparison: ranking, a reasoned recommendation, and its robustness.

The score of a candidate is what a station with one receiver can actually collect in
the window: the one-receiver schedule's value under the scenario's objective
(``data-volume``: weight x megabits; ``usable-time``: weight x minutes). The
explanation compares the recommended set-up with the runner-up by maximum-elevation
band, by dropouts (planner.decision.forecast.pass_dropouts, counted in the kept passes as
in the ranking table) and by satellite. Robustness: every budget is shifted by -/+2 dB and by
the scenario's ``budget_uncertainty_db``; the recommendation holds when the same
candidate ranks first under every shift. The leader's lead is also expressed in dB (how far
its budget alone must drop to lose first place); with both numbers the explanation names the
uncertain terms worth checking (:func:`uncertain_terms`).

Candidates whose pattern table carries no feed data (no ``feed_vswr`` in its header, none in
the scenario) are compared as if matched; the explanation and the ``notes`` say which.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import UTC, datetime, timedelta

import pandas as pd

from planner.decision.forecast import (
    DROPPED_COLUMNS,
    ELEVATION_BANDS_DEG,
    ONE_RECEIVER_LIMIT_TEXT,
    TUMBLING_POLARIZATION,
    VOICE_MODULATIONS,
    Forecast,
    band_table,
    dropped_for_conflicts,
    schedule,
    summarize_passes,
    usable_rule_text,
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
    dropouts: int  # dropouts (forecast.pass_dropouts) inside the scheduled passes
    dropout_s: float = 0.0  # their total length, seconds
    # The same totals over every usable pass, no one-receiver limit (as planner week counts them).
    all_usable_passes: int = 0
    all_usable_minutes: float = 0.0
    all_data_volume_mbit: float = 0.0
    all_dropouts: int = 0

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
    usable_rule: str = ""  # which margin decides "usable", per satellite
    # dB the leader's budget alone can lose and stay first, at most _LEAD_CAP_DB (None: no lead to measure)
    lead_db: float | None = None
    checks: list[dict] = field(default_factory=list)  # the uncertain terms worth checking (uncertain_terms)
    pattern_tables: list[dict] = field(default_factory=list)  # {candidate, satellite, pattern_table}

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
                    "dropout_s": round(s.dropout_s, 1),
                    "all_usable_passes": s.all_usable_passes,
                    "all_usable_minutes": round(s.all_usable_minutes, 2),
                    "all_data_volume_mbit": round(s.all_data_volume_mbit, 3),
                    "all_dropouts": s.all_dropouts,
                }
                for s in self.ranking
            ],
            "totals_basis": ONE_RECEIVER_LIMIT_TEXT,
            "usable_rule": self.usable_rule,
            "lead_db": None if self.lead_db is None else round(self.lead_db, 2),
            "uncertain_terms": [dict(c) for c in self.checks],
            "robust": self.robust,
            "winner_by_shift_db": {f"{k:+g}": v for k, v in sorted(self.winner_by_shift_db.items())},
            "explanation": self.explanation,
            "notes": list(self.notes),
            "model_notes": list(self.model_notes),
            "dropped_for_conflicts": self.dropped_rows(),
            "pattern_tables": list(self.pattern_tables),
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


DROPPED_ROW_KEYS = tuple(column for column in DROPPED_COLUMNS if column != "value")
"""The keys of a ``dropped_for_conflicts`` row, in order (the columns of ``dropped.csv``): the
schedule's dropped columns without ``value``, the pass's weighted score inside the schedule."""


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
        every = rows.loc[rows["usable"].astype(bool)]
        scores.append(
            CandidateScore(
                candidate=candidate,
                score=_objective_value(result.value, objective),
                unconstrained_score=_objective_value(result.unconstrained_value, objective),
                usable_minutes=float(chosen["usable_s"].sum()) / 60.0,
                data_volume_mbit=float(chosen["data_volume_bit"].sum()) / 1e6,
                usable_passes=int(len(chosen)),
                dropouts=int(chosen["dropouts"].sum()),
                dropout_s=float(chosen["dropout_s"].sum()),
                all_usable_passes=int(len(every)),
                all_usable_minutes=float(every["usable_s"].sum()) / 60.0,
                all_data_volume_mbit=float(every["data_volume_bit"].sum()) / 1e6,
                all_dropouts=int(every["dropouts"].sum()),
            )
        )
    scores.sort(key=lambda s: (-s.score, -s.usable_minutes, s.candidate))
    return scores, schedules


def feed_data_notes(candidates) -> list[str]:
    """One sentence naming the candidates (planner.study.Candidate) charged no feed mismatch for lack
    of feed data (or none)."""
    unmatched = [c.name for c in candidates if any(b.feed_vswr_source is None for b in c.band_list)]
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
    ``candidates`` maps each candidate's name to its planner.study.Candidate (for the feed notes
    and the uncertain terms).
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
    # No lead in dB without a runner-up, or when the leader collects nothing (there is no lead).
    lead_db = lead_in_db(forecast, satellites, ranking) if len(ranking) > 1 and best.score > 0 else None
    checks = uncertain_terms(forecast, satellites, candidates, ranking, winners, lead_db)
    notes = feed_data_notes([candidates[name] for name in forecast.candidates])
    usable_rule = usable_rule_text(criteria, satellites)
    sentences = [
        explain(forecast, ranking, winners, objective, forecast.days, satellites=satellites),
        checks_text(ranking, lead_db, criteria.budget_uncertainty_db, checks),
        usable_rule,
        *notes,
    ]
    return Recommendation(
        recommended=best.candidate,
        objective=objective,
        score_unit=_score_unit(objective),
        ranking=ranking,
        explanation=" ".join(s for s in sentences if s),
        robust=robust,
        winner_by_shift_db=winners,
        schedules=schedules,
        notes=notes,
        model_notes=list(forecast.model_notes),
        usable_rule=usable_rule,
        lead_db=lead_db,
        checks=checks,
        pattern_tables=_pattern_tables(forecast.weekly),
    )


def _pattern_tables(weekly: pd.DataFrame) -> list[dict]:
    """The table each candidate uses for each satellite (a candidate of several bands has one per band)."""
    if "pattern_table" not in weekly:
        return []
    return weekly.loc[:, ["candidate", "satellite", "pattern_table"]].to_dict("records")


# The lead in dB is found to this resolution, up to this many dB (a larger lead is "more than").
_LEAD_RESOLUTION_DB = 0.05
_LEAD_CAP_DB = 10.0


def lead_in_db(forecast: Forecast, satellites, ranking: list[CandidateScore]) -> float:
    """How many dB the leader's budget alone can lose before the runner-up scores more.

    The leader's margins are shifted down by x dB (the runner-up's stay) and its one-receiver score
    recomputed; the lead is the smallest x at which the runner-up's score is higher, found by
    bisection (a score only falls as the margin falls). Returns ``_LEAD_CAP_DB`` when the leader
    still wins at that shift. This puts a comparison's lead on the same scale as the uncertain
    terms of a budget (dB), which a percentage of the score does not.
    """
    best, runner = ranking[0], ranking[1]
    samples = forecast.samples.loc[forecast.samples["candidate"] == best.candidate]
    criteria, objective = forecast.criteria, forecast.criteria.objective

    def leader_loses(shift_db: float) -> bool:
        shifted = summarize_passes(samples, forecast.passes, criteria, satellites, margin_shift_db=-shift_db)
        score = score_candidates(shifted, objective, [best.candidate])[0][0].score
        return score < runner.score

    if samples.empty or not leader_loses(_LEAD_CAP_DB):
        return _LEAD_CAP_DB
    low, high = 0.0, _LEAD_CAP_DB
    while high - low > _LEAD_RESOLUTION_DB:
        middle = 0.5 * (low + high)
        low, high = (low, middle) if leader_loses(middle) else (middle, high)
    return high


# Suggested tolerances of the terms a budget is least sure of. Common practice, no published
# source: a computed pattern is rarely better than about 1 dB overhead and 2 dB near the horizon
# (ground and mast effects); a small satellite's EIRP is seldom known to better than 2 dB; cable
# loss data sheets and connectors leave about 0.5 dB on a run; a surveyed horizon, about 2 deg.
PATTERN_TOLERANCE_DB = 1.0
PATTERN_HORIZON_TOLERANCE_DB = 2.0
EIRP_TOLERANCE_DB = 2.0
FEEDLINE_TOLERANCE_DB = 0.5
HORIZON_MASK_TOLERANCE_DEG = 2.0
LOW_BAND = f"{ELEVATION_BANDS_DEG[0][0]}-{ELEVATION_BANDS_DEG[0][1]}"


def _term(term: str, tolerance: float, unit: str, set_in: str, why: str) -> dict:
    return {"term": term, "tolerance": round(float(tolerance), 2), "unit": unit, "set_in": set_in, "why": why}


def _low_band_matters(forecast: Forecast, best: str, runner: str) -> bool:
    """Whether the two set-ups differ notably on passes peaking below the first band edge."""
    bands = _band_minutes(forecast.outcomes) if len(forecast.outcomes) else pd.DataFrame()
    if best not in bands.index or runner not in bands.index:
        return False
    return abs(float(bands.loc[best, LOW_BAND] - bands.loc[runner, LOW_BAND])) >= _NOTABLE_MINUTES


def _cable_plan(candidate) -> tuple:
    return (
        candidate.feedline,
        candidate.connectors,
        candidate.connector_loss_db,
        candidate.lna_position,
        candidate.pre_lna_feedline,
        candidate.pre_lna_connectors,
        candidate.pre_lna_loss_db,
    )


def tumbling_fade_db(forecast: Forecast, satellites, candidate: str) -> float | None:
    """Median depth (dB) of the fade at criteria.fade_percentile below the expected margin, over
    the candidate's samples of tumbling linear satellites; None when there are none."""
    tumbling = {s.name for s in satellites if getattr(s, "polarization", None) == TUMBLING_POLARIZATION}
    samples = forecast.samples
    if not tumbling or samples.empty:
        return None
    mine = samples.loc[(samples["candidate"] == candidate) & samples["satellite"].isin(tumbling)]
    depth = (mine["margin_db"] - mine["margin_at_fade_db"]).to_numpy(dtype=float)
    return float(pd.Series(depth).median()) if len(depth) else None


def uncertain_terms(forecast, satellites, candidates, ranking, winners, lead_db) -> list[dict]:
    """The budget terms that can overturn this comparison, each with a tolerance and its scenario key.

    Terms that differ between the leader and the runner-up (pattern, cable plan, feed match) matter
    when the lead in dB is within ``criteria.budget_uncertainty_db``; terms common to every set-up
    (the satellites' EIRP, the tumbling fade, the horizon mask) matter when a common shift changes
    the winner. An empty list means neither happens.
    """
    if len(ranking) < 2:
        return []
    criteria = forecast.criteria
    best, runner = ranking[0].candidate, ranking[1].candidate
    low_band = _low_band_matters(forecast, best, runner)
    terms = []
    if lead_db is not None and lead_db <= float(criteria.budget_uncertainty_db):
        why = f"differs between {best} and {runner}; the lead is worth {lead_db:.2f} dB"
        if low_band:
            terms.append(
                _term(
                    f"pattern table accuracy near the horizon, below {ELEVATION_BANDS_DEG[0][1]} deg elevation",
                    PATTERN_HORIZON_TOLERANCE_DB,
                    "dB",
                    "[[candidate]] pattern",
                    why,
                )
            )
        else:
            terms.append(_term("pattern table accuracy", PATTERN_TOLERANCE_DB, "dB", "[[candidate]] pattern", why))
        a, b = candidates.get(best), candidates.get(runner)
        if a is not None and b is not None and _cable_plan(a) != _cable_plan(b):
            terms.append(_term("feedline loss", FEEDLINE_TOLERANCE_DB, "dB", "[[candidate]] feedline, connectors", why))
        if a is not None and b is not None and None in (a.feed_vswr_source, b.feed_vswr_source):
            terms.append(
                _term("feed match (VSWR)", FEEDLINE_TOLERANCE_DB, "dB", "[[candidate]] feed_vswr", why + "; no feed data for one")
            )
    flips = sorted(shift for shift, name in winners.items() if name != best)
    if flips:
        why = "common to every set-up; " + ", ".join(f"at {k:+g} dB {winners[k]} ranks first" for k in flips)
        terms.append(
            _term("satellite EIRP", EIRP_TOLERANCE_DB, "dB", "[[satellite]] tx_power_w, antenna_gain_dbi, line_loss_db", why)
        )
        fade = tumbling_fade_db(forecast, satellites, best)
        if fade is not None and fade > 0:
            terms.append(
                _term(
                    f"the tumbling fade (the {float(criteria.fade_percentile):g} % fade below the expected margin)",
                    fade,
                    "dB",
                    "[criteria] fade_percentile, [[satellite]] polarization",
                    why,
                )
            )
        if low_band:
            terms.append(_term("horizon mask", HORIZON_MASK_TOLERANCE_DEG, "deg", "[station] horizon_mask", why))
    return terms


def checks_text(ranking: list[CandidateScore], lead_db: float | None, uncertainty_db: float, checks: list[dict]) -> str:
    """The "Check the uncertain terms" sentence, or why none needs checking."""
    if lead_db is None:
        return ""
    best, runner = ranking[0].candidate, ranking[1].candidate
    more = "more than " if lead_db >= _LEAD_CAP_DB else ""
    lead = f"The lead of {best} over {runner} is worth {more}{lead_db:.2f} dB of its budget"
    if not checks:
        return (
            f"{lead}, beyond budget_uncertainty_db = {float(uncertainty_db):g} dB, and no common shift changes the winner: "
            "no uncertain term within its usual tolerance overturns it."
        )
    named = "; ".join(f"{c['term']} (+/-{c['tolerance']:g} {c['unit']}; set in {c['set_in']})" for c in checks)
    return f"{lead} (budget_uncertainty_db = {float(uncertainty_db):g} dB). Check the uncertain terms before building: {named}."


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


def voice_satellites(satellites) -> list[str]:
    """Names of the satellites that carry voice (no data volume), in scenario order."""
    return [s.name for s in satellites if getattr(s, "modulation", None) in VOICE_MODULATIONS]


def voice_text(voice: list[str], objective: str) -> str:
    """What a voice satellite is worth under the data-volume objective: nothing, and how to rank it."""
    if objective != "data-volume" or not voice:
        return ""
    one = len(voice) == 1
    return (
        f"{_join(voice)} {'scores' if one else 'score'} 0 weighted Mbit: voice has no data volume; "
        'use objective = "usable-time" to rank by contact time.'
    )


def _dropout_sentence(best: CandidateScore, runner: CandidateScore) -> str:
    """Dropouts in the kept passes, the numbers of the ranking table, and the no-limit count beside them."""
    if best.dropouts == runner.dropouts:
        return ""
    fewer = "fewer" if best.dropouts < runner.dropouts else "more"
    return (
        f"In the passes one receiver keeps it has {best.dropouts} dropouts ({best.dropout_s:.0f} s) against "
        f"{runner.dropouts} ({runner.dropout_s:.0f} s) for {runner.candidate}: {fewer} pattern nulls along the tracks "
        f"(over every usable pass, no one-receiver limit, {best.all_dropouts} against {runner.all_dropouts})."
    )


def explain(
    forecast: Forecast,
    ranking: list[CandidateScore],
    winners: dict[float, str],
    objective: str,
    days: float,
    *,
    satellites=(),
) -> str:
    """Plain sentences: why the recommended set-up wins, and what it gives up."""
    unit = _score_unit(objective)
    best = ranking[0]
    sentences = [
        f"Recommended: {best.candidate}. With one receiver it collects {best.score:.2f} {unit} in {days:g} days "
        f"({best.usable_passes} usable passes, {best.usable_minutes:.1f} usable minutes, {best.data_volume_mbit:.1f} Mbit, "
        f"{best.dropouts} dropouts; without the one-receiver limit, as planner week counts, {best.all_usable_passes} "
        f"usable passes and {best.all_usable_minutes:.1f} minutes, {best.all_usable_passes - best.usable_passes} passes "
        "more than one receiver can take)."
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

    sentences.append(_dropout_sentence(best, runner))

    voice = voice_satellites(satellites)
    sats = _satellite_minutes(outcomes)
    if best.candidate in sats.index and runner.candidate in sats.index:
        difference = sats.loc[best.candidate] - sats.loc[runner.candidate]
        if objective == "data-volume":  # a voice satellite adds nothing to this ranking
            difference = difference.drop(labels=[v for v in voice if v in difference.index])
        better = [s for s, d in difference.items() if d >= _NOTABLE_MINUTES]
        worse = [s for s, d in difference.items() if d <= -_NOTABLE_MINUTES]
        if better:
            sentences.append(f"It hears more of {_join(better)}.")
        if worse:
            sentences.append(f"{runner.candidate} hears more of {_join(worse)}.")
    sentences.append(voice_text([v for v in voice if v in set(outcomes["satellite"])], objective))

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
        sentences.append(f"The recommendation is sensitive to the budget: {changes}.")
    return " ".join(s for s in sentences if s)

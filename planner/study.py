"""A scenario made ready to compute: station, targets with their element sets, window.

This is the one place that turns validated configuration into the objects the
computation modules take, so the command line, the notebook and the tests build
the same thing the same way.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from planner.errors import UserError
from planner.orbits import ElementSet, check_element_age, read_elements, select_element_set
from planner.passes import Pass, Target, predict_passes
from planner.scenario import CandidateConfig, FeedlineRun, SatelliteConfig, Scenario
from planner.station import Station


def frequencies_hz(config: SatelliteConfig) -> dict[str, float]:
    """The radio frequencies of a satellite, keyed by link direction."""
    result = {"downlink": config.downlink_frequency_hz}
    if config.uplink_frequency_hz is not None:
        result["uplink"] = config.uplink_frequency_hz
    return result


@dataclass
class Candidate:
    """A candidate set-up made ready to compute: its pattern loaded, its cables resolved."""

    name: str
    pattern: object                      # planner.patterns.PatternTable
    feedline: list                       # [(planner.feedline.Cable, length_m), ...]
    connectors: int
    connector_loss_db: float
    lna_position: str | None
    feed_vswr: float | None


@dataclass
class Study:
    scenario: Scenario
    station: Station
    targets: list[Target]
    start_utc: datetime
    end_utc: datetime
    step_s: float

    @classmethod
    def from_scenario(cls, scenario: Scenario, *, allow_stale: bool = False) -> "Study":
        files: dict[Path, list[ElementSet]] = {}
        targets = []
        for config in scenario.satellite:
            path = Path(config.elements)
            if path not in files:
                files[path] = read_elements(path)
            element_set = select_element_set(
                files[path], norad_id=config.norad_id, name=None if config.norad_id else config.name, source=str(path)
            )
            targets.append(Target(element_set, config.name, frequencies_hz(config)))
        window = scenario.window
        check_element_age([t.element_set for t in targets], window.start_utc, window.end_utc, allow_stale=allow_stale)
        return cls(
            scenario=scenario,
            station=Station.from_config(scenario.station),
            targets=targets,
            start_utc=window.start_utc,
            end_utc=window.end_utc,
            step_s=window.step_s,
        )

    def feedline_runs(self, runs: list[FeedlineRun], key: str) -> list:
        """[(Cable, length_m)] for the scenario's feedline entries; unknown cables are refused."""
        from planner.feedline import cable_from_points, get_cable

        user_cables = {
            c.name: cable_from_points(c.name, c.loss_db_per_100m, c.impedance_ohm, c.velocity_factor)
            for c in self.scenario.cable
        }
        result = []
        for index, run in enumerate(runs, start=1):
            try:
                cable = get_cable(run.cable, user_cables)
            except UserError as error:
                raise UserError(f"{self.scenario.source_path or 'scenario'}: {key} #{index}: {error}") from None
            result.append((cable, run.length_m))
        return result

    def candidate(self, name: str) -> Candidate:
        """The named candidate, loaded once (pattern table parsed, cables resolved)."""
        cache = self.__dict__.setdefault("_candidates", {})
        if name not in cache:
            from planner.patterns import load_pattern

            config: CandidateConfig = self.scenario.candidate_named(name)
            position = next(i for i, c in enumerate(self.scenario.candidate, start=1) if c.name == name)
            pattern = load_pattern(config.pattern)
            vswr = config.feed_vswr if config.feed_vswr is not None else pattern.feed_vswr
            cache[name] = Candidate(
                name=config.name,
                pattern=pattern,
                feedline=self.feedline_runs(config.feedline, f"candidate #{position} ({name}).feedline"),
                connectors=config.connectors,
                connector_loss_db=config.connector_loss_db,
                lna_position=config.lna_position,
                feed_vswr=vswr,
            )
        return cache[name]

    @property
    def candidate_names(self) -> list[str]:
        return [c.name for c in self.scenario.candidate]

    def passes(self) -> list[Pass]:
        return predict_passes(self.targets, self.station, self.start_utc, self.end_utc, step_s=self.step_s)

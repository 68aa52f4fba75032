"""A scenario made ready to compute: station, targets with their element sets, window.

This is the one place that turns validated configuration into the objects the
computation modules take, so the command line, the notebook and the tests build
the same thing the same way.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from planner.orbits import ElementSet, check_element_age, read_elements, select_element_set
from planner.passes import Pass, Target, predict_passes
from planner.scenario import SatelliteConfig, Scenario
from planner.station import Station


def frequencies_hz(config: SatelliteConfig) -> dict[str, float]:
    """The radio frequencies of a satellite, keyed by link direction."""
    result = {"downlink": config.downlink_frequency_hz}
    if config.uplink_frequency_hz is not None:
        result["uplink"] = config.uplink_frequency_hz
    return result


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

    def satellite_config(self, name: str) -> SatelliteConfig:
        for config in self.scenario.satellite:
            if config.name == name:
                return config
        raise KeyError(name)

    def passes(self) -> list[Pass]:
        return predict_passes(self.targets, self.station, self.start_utc, self.end_utc, step_s=self.step_s)

"""A scenario made ready to compute: station, targets with their element sets, window.

This is the one place that turns validated configuration into the objects the
computation modules take, so the command line, the notebook and the tests build
the same thing the same way.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from datetime import datetime
from pathlib import Path

from planner.errors import UserError
from planner.elements import ElementSet, check_element_age, read_elements, select_element_set
from planner.passes import Pass, Target, predict_passes
from planner.scenario import CandidateConfig, FeedlineRun, SatelliteConfig, Scenario, StationConfig
from planner.passes.station import Station


def frequencies_hz(config: SatelliteConfig) -> dict[str, float]:
    """The radio frequencies of a satellite, keyed by link direction."""
    result = {"downlink": config.downlink_frequency_hz}
    if config.uplink_frequency_hz is not None:
        result["uplink"] = config.uplink_frequency_hz
    return result


@dataclass
class Candidate:
    """A candidate set-up made ready to compute: its pattern loaded, its cables resolved.

    The feed VSWR is the scenario's ``feed_vswr`` when given, else the pattern header's (read
    from the pattern each time, so a pattern swapped in by the reflector sweep brings its own).
    """

    name: str
    pattern: object                      # planner.antenna.PatternTable
    feedline: list                       # [(planner.link.feedline.Cable, length_m), ...]
    connectors: int
    connector_loss_db: float
    lna_position: str | None
    feed_vswr_override: float | None = None   # the scenario's feed_vswr
    pre_lna_feedline: list = field(default_factory=list)  # [(Cable, length_m)] between antenna and LNA
    pre_lna_connectors: int = 0
    pre_lna_loss_db: float = 0.0         # switch, bias-tee (dB)

    @property
    def feed_vswr(self) -> float | None:
        """The VSWR the budget charges, or None when neither the scenario nor the table gives one."""
        if self.feed_vswr_override is not None:
            return self.feed_vswr_override
        return getattr(self.pattern, "feed_vswr", None)

    @property
    def feed_vswr_source(self) -> str | None:
        """Where the VSWR comes from: "scenario", "pattern table" or None (no feed data)."""
        if self.feed_vswr_override is not None:
            return "scenario"
        return "pattern table" if getattr(self.pattern, "feed_vswr", None) is not None else None


@dataclass
class Study:
    scenario: Scenario | None
    station: Station
    targets: list[Target]
    start_utc: datetime
    end_utc: datetime
    step_s: float
    satellites: list[SatelliteConfig] = field(default_factory=list)  # [[satellite]] + [catalog] objects
    station_config: StationConfig | None = None
    allow_stale: bool = False

    @classmethod
    def from_scenario(cls, scenario: Scenario, *, allow_stale: bool = False, station: str | None = None) -> "Study":
        """The scenario ready to compute, at its home station or at the named network station."""
        files: dict[Path, list[ElementSet]] = {}
        targets, satellites = [], list(scenario.satellite)
        for config in scenario.satellite:
            path = Path(config.elements)
            if path not in files:
                files[path] = read_elements(path)
            element_set = select_element_set(
                files[path], norad_id=config.norad_id, name=None if config.norad_id else config.name, source=str(path)
            )
            targets.append(Target(element_set, config.name, frequencies_hz(config)))
        if scenario.catalog is not None:
            catalog_targets, catalog_configs = _catalog_targets(scenario, {t.element_set.norad_id for t in targets})
            targets += catalog_targets
            satellites += catalog_configs
        window = scenario.window
        check_element_age([t.element_set for t in targets], window.start_utc, window.end_utc, allow_stale=allow_stale)
        site = scenario.station if station is None else scenario.station_named(station)
        return cls(
            scenario=scenario,
            station=Station.from_config(site),
            targets=targets,
            start_utc=window.start_utc,
            end_utc=window.end_utc,
            step_s=window.step_s,
            satellites=satellites,
            station_config=site,
            allow_stale=allow_stale,
        )

    def at_station(self, name: str) -> "Study":
        """The same study seen from another station of the scenario (passes are recomputed)."""
        site = self.scenario.station_named(name)
        other = replace(self, station=Station.from_config(site), station_config=site)
        other.__dict__.pop("_forecast_passes", None)
        return other

    @property
    def station_names(self) -> list[str]:
        return [s.name for s in self.scenario.stations]

    def satellite_config(self, name: str) -> SatelliteConfig:
        """A target's radio configuration by name or catalog number (scenario or catalog).

        The first satellite (in scenario order) with that name or number; looked up in an
        index built once, since a catalog's forecast asks for every one of thousands.
        """
        index = self.__dict__.get("_satellite_index")
        if index is None:
            index = {}
            for config in reversed(self.satellites):      # earlier entries overwrite later ones
                if config.norad_id is not None:
                    index[str(config.norad_id)] = config
                index[config.name] = config
            self.__dict__["_satellite_index"] = index
        if str(name) in index:
            return index[str(name)]
        allowed = ", ".join(c.name for c in self.satellites[:8]) + (", ..." if len(self.satellites) > 8 else "")
        source = self.scenario.source_path if self.scenario is not None else "scenario"
        raise UserError(f"{source}: no satellite named {name!r}; allowed: {allowed}")

    def feedline_runs(self, runs: list[FeedlineRun], key: str) -> list:
        """[(Cable, length_m)] for the scenario's feedline entries; unknown cables are refused."""
        from planner.link.feedline import cable_from_points, get_cable

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
            from planner.antenna import load_pattern

            config: CandidateConfig = self.scenario.candidate_named(name)
            position = next(i for i, c in enumerate(self.scenario.candidate, start=1) if c.name == name)
            pattern = load_pattern(config.pattern)
            receiver = self.scenario.receiver
            cache[name] = Candidate(
                name=config.name,
                pattern=pattern,
                feedline=self.feedline_runs(config.feedline, f"candidate #{position} ({name}).feedline"),
                connectors=config.connectors,
                connector_loss_db=config.connector_loss_db,
                lna_position=config.lna_position,
                feed_vswr_override=config.feed_vswr,
                pre_lna_feedline=self.feedline_runs(config.pre_lna_feedline, f"candidate #{position} ({name}).pre_lna_feedline"),
                pre_lna_connectors=(
                    config.pre_lna_connectors if config.pre_lna_connectors is not None else receiver.pre_lna_connectors
                ),
                pre_lna_loss_db=config.pre_lna_loss_db if config.pre_lna_loss_db is not None else receiver.pre_lna_loss_db,
            )
        return cache[name]

    @property
    def candidate_names(self) -> list[str]:
        return [c.name for c in self.scenario.candidate]

    def passes(self) -> list[Pass]:
        return predict_passes(self.targets, self.station, self.start_utc, self.end_utc, step_s=self.step_s)


def _catalog_targets(scenario: Scenario, taken_ids: set[int]) -> tuple[list[Target], list[SatelliteConfig]]:
    """Every element set of the [catalog] file as a target with the catalog's assumed radio.

    Objects already named as [[satellite]] entries keep their own radio; the latest element set
    of an object wins; names are made unique with the catalog number.
    """
    catalog = scenario.catalog
    element_sets = read_elements(catalog.elements)
    latest: dict[int, ElementSet] = {}
    for element_set in element_sets:
        if element_set.norad_id in taken_ids:
            continue
        known = latest.get(element_set.norad_id)
        if known is None or element_set.epoch > known.epoch:
            latest[element_set.norad_id] = element_set
    if len(latest) > catalog.max_objects:
        raise UserError(
            f"{scenario.source_path or 'scenario'}: catalog.elements holds {len(latest)} objects; "
            f"allowed up to catalog.max_objects = {catalog.max_objects} (raise it to go on)"
        )
    radio = catalog.model_dump(exclude={"elements", "max_objects"})
    targets, configs = [], []
    for norad_id in sorted(latest):
        element_set = latest[norad_id]
        name = f"{element_set.name or 'object'} ({norad_id})"
        config = SatelliteConfig.model_validate(
            {**radio, "name": name[:80], "elements": str(catalog.elements), "norad_id": norad_id},
            context={"check_files": False},
        )
        configs.append(config)
        targets.append(Target(element_set, config.name, frequencies_hz(config)))
    return targets, configs

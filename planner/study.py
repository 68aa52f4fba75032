"""A scenario made ready to compute: station, targets, candidates and window, resolved once.

:meth:`Study.from_scenario` is the one place that turns validated configuration into the
objects the computation takes: it reads the element files, loads every candidate's pattern
table and resolves its cables up front, so a mistake in any of them stops the run before any
computation. The study is a frozen value: nothing writes into it afterwards. A variant (other
targets, another station, a candidate with another pattern) is a new study made with
:meth:`Study.with_targets`, :meth:`Study.at_station` or :meth:`Study.with_candidate`.

The link budget, the forecast, the recommendation and the sweep take the plain objects a study
holds (satellite configuration, candidate, receiver, station); names are resolved here, at the
edge, by :meth:`Study.satellite_config` and :meth:`Study.candidate`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from datetime import datetime
from pathlib import Path
from types import MappingProxyType

from planner.elements import ElementSet, check_element_age, read_elements, select_element_set
from planner.errors import UserError
from planner.passes import Pass, Target, predict_passes
from planner.passes.station import Station
from planner.scenario import (
    CandidateConfig,
    CriteriaConfig,
    FeedlineRun,
    ReceiverConfig,
    SatelliteConfig,
    Scenario,
    StationConfig,
)


def frequencies_hz(config: SatelliteConfig) -> dict[str, float]:
    """The radio frequencies of a satellite, keyed by link direction."""
    result = {"downlink": config.downlink_frequency_hz}
    if config.uplink_frequency_hz is not None:
        result["uplink"] = config.uplink_frequency_hz
    return result


@dataclass(frozen=True)
class Candidate:
    """A candidate set-up made ready to compute: its pattern loaded, its cables resolved.

    The feed VSWR is the scenario's ``feed_vswr`` when given, else the pattern header's (so a
    pattern swapped in by the reflector sweep brings its own).
    """

    name: str
    pattern: object  # planner.antenna.PatternTable
    feedline: tuple = ()  # ((planner.link.feedline.Cable, length_m), ...)
    connectors: int = 0
    connector_loss_db: float = 0.0
    lna_position: str | None = None
    feed_vswr_override: float | None = None  # the scenario's feed_vswr
    pre_lna_feedline: tuple = ()  # ((Cable, length_m), ...) between antenna and LNA
    pre_lna_connectors: int = 0
    pre_lna_loss_db: float = 0.0  # switch, bias-tee (dB)
    # A set-up with one antenna per band: one single-band Candidate (same name) per band, and the
    # fields above are the first band's. Empty for a one-antenna set-up.
    bands: tuple[Candidate, ...] = ()

    @property
    def band_list(self) -> tuple[Candidate, ...]:
        """The single-band set-ups this candidate is made of (itself when it has one antenna)."""
        return self.bands or (self,)

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


def _frozen(mapping: dict) -> Mapping:
    return MappingProxyType(dict(mapping))


def satellite_index(satellites: tuple[SatelliteConfig, ...]) -> Mapping[str, SatelliteConfig]:
    """Name and catalog number -> configuration; the first entry in scenario order wins."""
    index: dict[str, SatelliteConfig] = {}
    for config in reversed(satellites):  # earlier entries overwrite later ones
        if config.norad_id is not None:
            index[str(config.norad_id)] = config
        index[config.name] = config
    return _frozen(index)


@dataclass(frozen=True)
class Study:
    """Everything a computation needs, resolved and fixed (see the module docstring)."""

    station: Station
    targets: tuple[Target, ...]
    start_utc: datetime
    end_utc: datetime
    step_s: float
    scenario: Scenario | None = None
    station_config: StationConfig | None = None
    satellites: tuple[SatelliteConfig, ...] = ()  # [[satellite]] + [catalog] objects
    candidates: Mapping[str, Candidate] = field(default_factory=lambda: _frozen({}))
    transmitter_feedline: tuple = ()  # ((Cable, length_m), ...) of [transmitter]
    allow_stale: bool = False
    satellites_by_name: Mapping[str, SatelliteConfig] = field(default_factory=lambda: _frozen({}))

    @classmethod
    def from_scenario(cls, scenario: Scenario, *, allow_stale: bool = False, station: str | None = None) -> Study:
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
        cables = cable_catalog(scenario)
        transmitter = scenario.transmitter
        return cls(
            scenario=scenario,
            station=Station.from_config(site),
            targets=tuple(targets),
            start_utc=window.start_utc,
            end_utc=window.end_utc,
            step_s=window.step_s,
            satellites=tuple(satellites),
            station_config=site,
            candidates=_frozen(
                {c.name: _candidate(scenario, c, position, cables) for position, c in enumerate(scenario.candidate, start=1)}
            ),
            transmitter_feedline=()
            if transmitter is None
            else _runs(scenario, cables, transmitter.feedline, "transmitter.feedline"),
            allow_stale=allow_stale,
            satellites_by_name=satellite_index(tuple(satellites)),
        )

    @classmethod
    def for_targets(cls, station: Station, targets, start_utc: datetime, end_utc: datetime, step_s: float) -> Study:
        """A study without a scenario: passes of these targets over one station (the quick look)."""
        return cls(station=station, targets=tuple(targets), start_utc=start_utc, end_utc=end_utc, step_s=step_s)

    # ------------------------------------------------------------------ variants

    def with_targets(self, targets) -> Study:
        """The same study for these targets only."""
        return replace(self, targets=tuple(targets))

    def at_station(self, name: str) -> Study:
        """The same study seen from another station of the scenario."""
        site = self.config.station_named(name)
        return replace(self, station=Station.from_config(site), station_config=site)

    def with_candidate(self, candidate: Candidate) -> Study:
        """The same study with one candidate replaced (or added) by ``candidate``."""
        return replace(self, candidates=_frozen({**self.candidates, candidate.name: candidate}))

    # ------------------------------------------------------------------ names, resolved at the edge

    @property
    def config(self) -> Scenario:
        """The scenario this study was made from; a study of targets alone (the quick look) has none."""
        if self.scenario is None:
            raise UserError("this needs a scenario file: the quick look has no receiver, candidates or criteria")
        return self.scenario

    @property
    def source(self) -> str:
        """The scenario file's path for messages ("scenario" when built in code)."""
        return str(self.scenario.source_path) if self.scenario is not None and self.scenario.source_path else "scenario"

    @property
    def station_names(self) -> list[str]:
        return [s.name for s in self.config.stations]

    @property
    def candidate_names(self) -> list[str]:
        return list(self.candidates)

    @property
    def receiver(self) -> ReceiverConfig:
        return self.config.receiver

    @property
    def criteria(self) -> CriteriaConfig:
        return self.config.criteria

    @property
    def days(self) -> float:
        return float(self.config.window.days)

    def satellite_config(self, name: str) -> SatelliteConfig:
        """A target's radio configuration by name or catalog number (scenario or catalog)."""
        found = self.satellites_by_name.get(str(name))
        if found is not None:
            return found
        allowed = ", ".join(c.name for c in self.satellites[:8]) + (", ..." if len(self.satellites) > 8 else "")
        raise UserError(f"{self.source}: no satellite named {name!r}; allowed: {allowed}")

    def candidate(self, name: str) -> Candidate:
        """The named candidate set-up (loaded when the study was made)."""
        found = self.candidates.get(name)
        if found is not None:
            return found
        allowed = ", ".join(self.candidates) or "none: add [[candidate]] tables"
        raise UserError(f"{self.source}: no candidate named {name!r}; allowed: {allowed}")

    def downlink_setup(self, satellite: str, candidate: str, *, antenna_noise=None):
        """The fixed part of the downlink budget of a satellite and a candidate, by name."""
        from planner.link.budget import downlink_setup

        return downlink_setup(
            self.satellite_config(satellite),
            self.candidate(candidate),
            self.receiver,
            self.station,
            fade_percentile=self.criteria.fade_percentile,
            source=self.source,
            antenna_noise=antenna_noise,
        )

    def uplink_setup(self, satellite: str):
        """The fixed part of the uplink budget of a satellite, by name (needs a [transmitter])."""
        from planner.link.budget import uplink_setup

        return uplink_setup(
            self.satellite_config(satellite),
            self.config.transmitter,
            self.transmitter_feedline,
            self.station,
            fade_percentile=self.criteria.fade_percentile,
            source=self.source,
        )

    def passes(self, *, tracks: bool = True) -> list[Pass]:
        """Every pass of the study's targets; ``tracks=False`` for the pass figures alone (no tracks)."""
        return predict_passes(list(self.targets), self.station, self.start_utc, self.end_utc, step_s=self.step_s, tracks=tracks)


# ---------------------------------------------------------------------- resolving the scenario


def cable_catalog(scenario: Scenario) -> dict:
    """The scenario's own [[cable]] tables as fitted cables, by name (they win over the catalog)."""
    from planner.link.feedline import cable_from_points

    return {c.name: cable_from_points(c.name, c.loss_db_per_100m, c.impedance_ohm, c.velocity_factor) for c in scenario.cable}


def _runs(scenario: Scenario, user_cables: dict, runs: list[FeedlineRun], key: str) -> tuple:
    """((Cable, length_m), ...) for the scenario's feedline entries; unknown cables are refused."""
    from planner.link.feedline import get_cable

    result = []
    for index, run in enumerate(runs, start=1):
        try:
            cable = get_cable(run.cable, user_cables)
        except UserError as error:
            raise UserError(f"{scenario.source_path or 'scenario'}: {key} #{index}: {error}") from None
        result.append((cable, run.length_m))
    return tuple(result)


def _candidate(scenario: Scenario, config: CandidateConfig, position: int, cables: dict) -> Candidate:
    """A candidate with every band's pattern table read and its cables resolved."""
    from planner.antenna import load_pattern

    receiver = scenario.receiver
    where = f"candidate #{position} ({config.name})"
    bands = []
    for number, band in enumerate(config.bands, start=1):
        at = where if not config.band else f"{where}.band #{number}"
        bands.append(
            Candidate(
                name=config.name,
                pattern=load_pattern(band.pattern),
                feedline=_runs(scenario, cables, band.feedline, f"{at}.feedline"),
                connectors=band.connectors,
                connector_loss_db=config.connector_loss_db,
                lna_position=band.lna_position or config.lna_position,
                feed_vswr_override=band.feed_vswr,
                pre_lna_feedline=_runs(scenario, cables, config.pre_lna_feedline, f"{where}.pre_lna_feedline"),
                pre_lna_connectors=config.pre_lna_connectors
                if config.pre_lna_connectors is not None
                else receiver.pre_lna_connectors,
                pre_lna_loss_db=config.pre_lna_loss_db if config.pre_lna_loss_db is not None else receiver.pre_lna_loss_db,
            )
        )
    if len(bands) == 1:
        return bands[0]
    return replace(bands[0], bands=tuple(bands))


def _catalog_targets(scenario: Scenario, taken_ids: set[int]) -> tuple[list[Target], list[SatelliteConfig]]:
    """Every element set of the [catalog] file as a target with the catalog's assumed radio.

    Objects already named as [[satellite]] entries keep their own radio; the latest element set
    of an object wins; names are made unique with the catalog number.
    """
    catalog = scenario.catalog
    assert catalog is not None, "called for a scenario with a [catalog] table"
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

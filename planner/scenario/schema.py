"""The scenario file's schema: one pydantic model per TOML table, and the whole Scenario.

Units live in the key names (``latitude_deg``, ``downlink_mhz``); the models keep the
values in those units and offer SI properties where later code needs them
(``downlink_frequency_hz``). Every model refuses unknown keys (``extra="forbid"``) and
takes its field types and checks from :mod:`planner.scenario.fields`; the limits that keep
a run bounded (window length, track step, network size) come from :mod:`planner.limits`,
the years and the catalog-number bound from :mod:`planner.bounds`.

Adding a table to the file format is one model (with ``model_config = _STRICT``) and one
field on :class:`Scenario`; the error reports find keys, names of ``[[...]]`` entries and
allowed keys from the models themselves.
"""

from __future__ import annotations

import math
from datetime import UTC, date, datetime, time, timedelta
from pathlib import Path
from typing import Annotated, Any, Literal

from pydantic import (
    BaseModel,
    ConfigDict,
    Field,
    PrivateAttr,
    Strict,
    ValidationInfo,
    field_validator,
    model_validator,
)

from planner.bounds import LATEST_YEAR, MAX_OMM_CATALOG_NUMBER, SUPPORTED_YEARS, in_supported_years
from planner.errors import UserError, quoted
from planner.limits import NETWORK_STATIONS_LIMIT, TRACK_STEP_MIN_S, WINDOW_DAYS_LIMIT
from planner.scenario.fields import (
    Altitude,
    Choice,
    Frequency,
    Latitude,
    Longitude,
    Name,
    Real,
    _error,
    _num,
    _Range,
    _resolve_file,
    _show,
)
from planner.timezones import ALLOWED_TIME_ZONES, DEFAULT_TIME_ZONE, canonical_time_zone

SECONDS_PER_DAY = 86400.0
_STRICT = ConfigDict(extra="forbid")

# The window lies in the years planner.bounds allows for every time (1957: the first
# artificial satellite; 2100: beyond any element set's useful life).
_ALLOWED_START = (
    f"a TOML date-time with a time zone, such as 2027-01-04T00:00:00Z, or the same text in quotes, in the years {SUPPORTED_YEARS}"
)
_ALLOWED_ELEMENTS = "the path of a TLE, 3LE or OMM file in quotes; a relative path is taken from the scenario file's folder"
_ALLOWED_HORIZON = (
    "a minimum elevation in degrees from -10 to 90, or a list of [azimuth_deg, "
    "min_elevation_deg] pairs with azimuths from 0 up to but not including 360, each "
    "once, and elevations from -10 to 90"
)
_AZIMUTH = _Range(0, 360, hi_open=True)
_MASK_ELEVATION = _Range(-10, 90)


class StationConfig(BaseModel):
    """The ground station: WGS84 site, horizon mask, man-made noise environment and time zone."""

    model_config = _STRICT

    name: Name
    latitude_deg: Latitude  # geodetic, north positive
    longitude_deg: Longitude  # east positive
    altitude_m: Altitude = 0.0  # above the WGS84 ellipsoid
    horizon_mask: float | list[tuple[float, float]] = Field(default=0.0, description=_ALLOWED_HORIZON)
    noise_environment: Choice[Literal["city", "residential", "rural", "quiet-rural"]] = "rural"
    time_zone: str = Field(default=DEFAULT_TIME_ZONE, description=ALLOWED_TIME_ZONES)  # clock of hour tables, calendar

    @field_validator("time_zone", mode="plain")
    @classmethod
    def _time_zone(cls, value: Any) -> str:
        if not isinstance(value, str):
            raise _error(f"expected a time zone name in quotes, got {_show(value)}", ALLOWED_TIME_ZONES)
        try:
            return canonical_time_zone(value)
        except ValueError:
            raise _error(f"unknown time zone {quoted(value)}", ALLOWED_TIME_ZONES) from None

    @field_validator("horizon_mask", mode="plain")
    @classmethod
    def _horizon_mask(cls, value: Any) -> float | list[tuple[float, float]]:
        def number(item: Any) -> float | None:
            if isinstance(item, bool) or not isinstance(item, (int, float)):
                return None
            try:
                return float(item)
            except OverflowError:
                return math.inf

        flat = number(value)
        if flat is not None:
            if not _MASK_ELEVATION.contains(flat):
                raise _error(
                    f"minimum elevation {_num(value)} is out of range",
                    f"{_MASK_ELEVATION.allowed()}, or a list of [azimuth_deg, min_elevation_deg] pairs",
                )
            return flat
        if not isinstance(value, (list, tuple)):
            raise _error(f"expected a number or a list of pairs, got {_show(value)}", _ALLOWED_HORIZON)
        if not value:
            raise _error("the list of points is empty", _ALLOWED_HORIZON)
        points: list[tuple[float, float]] = []
        seen: dict[float, int] = {}
        for index, item in enumerate(value, start=1):
            where = f"point {index}"
            if not isinstance(item, (list, tuple)) or len(item) != 2:
                raise _error(f"{where} is {_show(item)}, not an [azimuth_deg, min_elevation_deg] pair", _ALLOWED_HORIZON)
            azimuth, elevation = number(item[0]), number(item[1])
            if azimuth is None or elevation is None:
                raise _error(f"{where} {_show(item)} holds something other than numbers", _ALLOWED_HORIZON)
            if not _AZIMUTH.contains(azimuth):
                raise _error(f"{where}: azimuth {_num(item[0])} is out of range", f"azimuth_deg {_AZIMUTH.allowed()}")
            if not _MASK_ELEVATION.contains(elevation):
                raise _error(
                    f"{where}: elevation {_num(item[1])} is out of range",
                    f"min_elevation_deg {_MASK_ELEVATION.allowed()}",
                )
            if azimuth in seen:
                raise _error(
                    f"{where}: azimuth {_num(item[0])} is already given by point {seen[azimuth]}",
                    "each azimuth once",
                )
            seen[azimuth] = index
            points.append((azimuth, elevation))
        points.sort()
        return points


class WindowConfig(BaseModel):
    """The prediction window: start (UTC), length and time step."""

    model_config = _STRICT

    start_utc: datetime = Field(description=_ALLOWED_START)
    days: Annotated[Real, _Range(0, WINDOW_DAYS_LIMIT, lo_open=True)] = 7.0  # why: planner.limits
    step_s: Annotated[Real, _Range(TRACK_STEP_MIN_S, 600)] = 10.0

    @field_validator("start_utc", mode="plain")
    @classmethod
    def _start_utc(cls, value: Any) -> datetime:
        if isinstance(value, str):
            try:
                parsed = datetime.fromisoformat(value.strip())
            except ValueError:
                raise _error(f"{_show(value)} is not a date and time", _ALLOWED_START) from None
        elif isinstance(value, datetime):
            parsed = value
        elif isinstance(value, date):
            raise _error(f"{value.isoformat()} is a date without a time of day", _ALLOWED_START)
        elif isinstance(value, time):
            raise _error(f"{value.isoformat()} is a time of day without a date", _ALLOWED_START)
        else:
            raise _error(f"expected a date and time, got {_show(value)}", _ALLOWED_START)
        if parsed.tzinfo is None or parsed.utcoffset() is None:
            raise _error(f"{parsed.isoformat()} has no time zone", _ALLOWED_START)
        try:
            parsed = parsed.astimezone(UTC)
        except (OverflowError, ValueError):
            raise _error(f"{parsed.isoformat()} is out of range", _ALLOWED_START) from None
        if not in_supported_years(parsed):
            raise _error(f"{parsed.isoformat()} is out of range", _ALLOWED_START)
        return parsed

    @model_validator(mode="after")
    def _at_least_one_step(self) -> WindowConfig:
        # A window shorter than its step holds no track; far shorter ones (1e-185 days,
        # found by the scenario fuzz) would even end where they start.
        if self.days * SECONDS_PER_DAY < self.step_s:
            raise _error(
                f"{_num(self.days)} days is shorter than one step of {_num(self.step_s)} s",
                f"one step or more, here {self.step_s / SECONDS_PER_DAY:.3g} days or more",
                at=("days",),
            )
        # days is at most 31, so the end is a representable time; it must still lie in the years.
        if not in_supported_years(self.end_utc):
            raise _error(
                f"the window from {self.start_utc.isoformat()} for {_num(self.days)} days ends in {self.end_utc.year}",
                f"a window that ends by the end of {LATEST_YEAR}",
                at=("days",),
            )
        return self

    @property
    def end_utc(self) -> datetime:
        """End of the window (UTC, timezone-aware)."""
        return self.start_utc + timedelta(days=self.days)


class RadioConfig(BaseModel):
    """A satellite's radio: what the link budget needs (shared by [[satellite]] and [catalog])."""

    model_config = _STRICT

    downlink_mhz: Frequency
    uplink_mhz: Frequency | None = None
    tx_power_w: Annotated[Real, _Range(0, 1000, lo_open=True)] = 1.0
    antenna_gain_dbi: Annotated[Real, _Range(-20, 40)] = 0.0
    line_loss_db: Annotated[Real, _Range(0, 20)] = 0.0
    polarization: Choice[Literal["rhcp", "lhcp", "linear", "linear-tumbling"]] = "linear-tumbling"
    axial_ratio_db: Annotated[Real, _Range(0, 60)] = 0.0
    modulation: Choice[Literal["bpsk", "qpsk", "dbpsk", "fsk-coherent", "fsk-noncoherent", "gmsk", "afsk-fm", "fm"]] = "gmsk"
    data_rate_bps: Annotated[Real, _Range(0, lo_open=True)] = 9600.0
    target_ber: Annotated[Real, _Range(0, 0.5, lo_open=True, hi_open=True)] = 1e-5
    implementation_loss_db: Annotated[Real, _Range(0, 20)] = 2.0
    coding_gain_db: Annotated[Real, _Range(0, 15)] = 0.0
    gmsk_bt: Annotated[Real, _Range(0.1, 1.0)] = 0.5
    required_cn0_dbhz: Annotated[Real, _Range(0, lo_open=True)] | None = None
    framing_efficiency: Annotated[Real, _Range(0, 1, lo_open=True)] = 1.0
    weight: Annotated[Real, _Range(0)] = 1.0
    # The satellite's receiver, for the uplink budget (used when uplink_mhz is given).
    uplink_rx_gain_dbi: Annotated[Real, _Range(-20, 40)] = 0.0
    uplink_rx_noise_temperature_k: Annotated[Real, _Range(10, 20000)] = 1000.0  # Earth fills its view
    uplink_rx_polarization: Choice[Literal["rhcp", "lhcp", "linear", "linear-tumbling"]] = "linear-tumbling"
    uplink_required_cn0_dbhz: Annotated[Real, _Range(0, lo_open=True)] | None = None

    @property
    def downlink_frequency_hz(self) -> float:
        return self.downlink_mhz * 1e6

    @property
    def uplink_frequency_hz(self) -> float | None:
        return None if self.uplink_mhz is None else self.uplink_mhz * 1e6


class SatelliteConfig(RadioConfig):
    """One target satellite: where its elements are, and its radio."""

    model_config = _STRICT

    name: Name
    elements: Path = Field(description=_ALLOWED_ELEMENTS)
    # Alpha-5 in a TLE reaches 339999; an OMM may carry up to 9 digits (see planner.bounds).
    norad_id: Annotated[int, Strict(), _Range(1, MAX_OMM_CATALOG_NUMBER)] | None = None

    @field_validator("elements", mode="plain")
    @classmethod
    def _elements(cls, value: Any, info: ValidationInfo) -> Path:
        return _resolve_file(value, info, _ALLOWED_ELEMENTS)


_ALLOWED_PATTERN = (
    "the path of a pattern table (CSV, see patterns/README.md) in quotes; a relative path is taken from the scenario file's folder"
)
LnaPosition = Choice[Literal["antenna", "receiver", "none"]]


class FeedlineRun(BaseModel):
    """One length of cable between the antenna and the receiver (or transmitter)."""

    model_config = _STRICT

    cable: Name  # a catalog type (see planner.link.feedline.CABLES) or a [[cable]] of the scenario
    length_m: Annotated[Real, _Range(0, 1000, lo_open=True)]


class CableConfig(BaseModel):
    """A user-defined cable: datasheet loss points, fitted as k1 sqrt(f) + k2 f."""

    model_config = _STRICT

    name: Name
    impedance_ohm: Annotated[Real, _Range(10, 600)] = 50.0
    velocity_factor: Annotated[Real, _Range(0.3, 1.0)] = 0.66
    loss_db_per_100m: list[tuple[Frequency, Annotated[Real, _Range(0, 1000, lo_open=True)]]] = Field(
        description="[[frequency_mhz, loss_db_per_100m], ...], one or more points from the datasheet"
    )

    @field_validator("loss_db_per_100m", mode="after")
    @classmethod
    def _points(cls, value: list[tuple[float, float]]) -> list[tuple[float, float]]:
        if not value:
            raise _error("no loss points are given", "one or more [frequency_mhz, loss_db_per_100m] pairs")
        frequencies = [f for f, _ in value]
        if len(set(frequencies)) != len(frequencies):
            raise _error("a frequency appears twice", "each frequency once")
        return sorted(value)


class ReceiverConfig(BaseModel):
    """The station's receive chain behind the antenna."""

    model_config = _STRICT

    lna_noise_figure_db: Annotated[Real, _Range(0, 20)] = 0.8
    lna_gain_db: Annotated[Real, _Range(0, 60)] = 20.0
    lna_position: LnaPosition = "antenna"  # at the antenna, at the receiver end of the feedline, or none
    receiver_noise_figure_db: Annotated[Real, _Range(0, 30)] = 6.0
    feedline_temperature_k: Annotated[Real, _Range(150, 350)] = 290.0
    ground_temperature_k: Annotated[Real, _Range(150, 350)] = 290.0
    # Between the antenna and the LNA for every candidate (a candidate may override): connectors
    # (at each candidate's connector_loss_db) and a switch or bias-tee, in dB. Charged before the LNA.
    pre_lna_connectors: Annotated[int, Strict(), _Range(0, 30)] = 0
    pre_lna_loss_db: Annotated[Real, _Range(0, 10)] = 0.0


DEFAULT_CONNECTORS = 2  # of a candidate's main run: one at each end


class BandConfig(BaseModel):
    """One band of a candidate: its antenna's pattern table and the run from that antenna.

    A candidate with several bands (a VHF and a UHF antenna on one station) uses, for each
    satellite, the band whose table was computed nearest the satellite's downlink frequency.
    """

    model_config = _STRICT

    pattern: Path = Field(description=_ALLOWED_PATTERN)
    feedline: list[FeedlineRun] = []
    connectors: Annotated[int, Strict(), _Range(0, 30)] = DEFAULT_CONNECTORS
    lna_position: LnaPosition | None = None  # overrides the candidate's and [receiver]'s
    feed_vswr: Annotated[Real, _Range(1, 20)] | None = None  # overrides the pattern header's

    @field_validator("pattern", mode="plain")
    @classmethod
    def _pattern(cls, value: Any, info: ValidationInfo) -> Path:
        return _resolve_file(value, info, _ALLOWED_PATTERN)


_SINGLE_KEYS = ("pattern", "feedline", "connectors", "feed_vswr")  # the one-antenna form
_ALLOWED_FORMS = (
    "either pattern (with feedline, connectors, feed_vswr) for one antenna, or one or more "
    "[[candidate.band]] tables, each with its own pattern, feedline, connectors, lna_position, feed_vswr"
)


class CandidateConfig(BaseModel):
    """One antenna set-up to compare: pattern table, feedline, connectors, LNA position.

    ``feedline`` and ``connectors`` are the main run (after the LNA when it sits at the antenna);
    ``pre_lna_*`` are the losses between the antenna and the LNA, charged before it. A set-up
    with one antenna per band lists them as ``[[candidate.band]]`` tables instead of ``pattern``
    (see :class:`BandConfig`); :attr:`bands` gives both forms as a list of bands.
    """

    model_config = _STRICT

    name: Name
    pattern: Path | None = Field(default=None, description=_ALLOWED_PATTERN)
    band: list[BandConfig] = []
    feedline: list[FeedlineRun] = []
    connectors: Annotated[int, Strict(), _Range(0, 30)] | None = None  # default: DEFAULT_CONNECTORS
    connector_loss_db: Annotated[Real, _Range(0, 2)] = 0.1  # each; common practice
    lna_position: LnaPosition | None = None  # overrides [receiver] for this candidate
    feed_vswr: Annotated[Real, _Range(1, 20)] | None = None  # overrides the pattern header's
    # Between the antenna and the LNA (charged before it): a jumper, connectors, a switch or bias-tee.
    pre_lna_feedline: list[FeedlineRun] = []
    pre_lna_connectors: Annotated[int, Strict(), _Range(0, 30)] | None = None  # default: [receiver]'s
    pre_lna_loss_db: Annotated[Real, _Range(0, 10)] | None = None  # default: [receiver]'s

    @field_validator("pattern", mode="plain")
    @classmethod
    def _pattern(cls, value: Any, info: ValidationInfo) -> Path | None:
        # None: the band form (a dumped scenario carries the key); _one_form checks the forms.
        return None if value is None else _resolve_file(value, info, _ALLOWED_PATTERN)

    @model_validator(mode="before")
    @classmethod
    def _one_form(cls, data: Any) -> Any:
        """Refuse a candidate that gives both forms (or neither), naming the key at fault.

        A key counts as given when it holds a value (a dumped scenario carries every key, with
        None or an empty list where nothing was given).
        """
        if not isinstance(data, dict):
            return data
        given = [key for key in _SINGLE_KEYS if data.get(key) not in (None, [])]
        if "band" in data and data["band"] is not None:
            if given and data["band"] != []:
                raise _error(
                    f"{given[0]} is given both for the candidate and in its [[candidate.band]] tables",
                    _ALLOWED_FORMS,
                    at=(given[0],),
                )
            if data["band"] == [] and "pattern" in given:
                return data
            if data["band"] == []:
                raise _error("band is an empty list", _ALLOWED_FORMS, at=("band",))
        elif "pattern" not in given:
            raise _error("no pattern and no [[candidate.band]] table is given", _ALLOWED_FORMS, at=("pattern",))
        return data

    @property
    def bands(self) -> list[BandConfig]:
        """The candidate's antennas: its [[candidate.band]] tables, or its one pattern as one band."""
        if self.band:
            return list(self.band)
        assert self.pattern is not None, "checked by _one_form"
        return [
            BandConfig.model_construct(
                pattern=self.pattern,
                feedline=self.feedline,
                connectors=DEFAULT_CONNECTORS if self.connectors is None else self.connectors,
                lna_position=None,
                feed_vswr=self.feed_vswr,
            )
        ]


class TransmitterConfig(BaseModel):
    """The station's transmitter, for uplinks and the RF exposure estimate."""

    model_config = _STRICT

    power_w: Annotated[Real, _Range(0, 2000, lo_open=True)]
    antenna_gain_dbi: Annotated[Real, _Range(-20, 30)] = 0.0
    polarization: Choice[Literal["rhcp", "lhcp", "linear"]] = "rhcp"
    feedline: list[FeedlineRun] = []
    connectors: Annotated[int, Strict(), _Range(0, 30)] = 2
    connector_loss_db: Annotated[Real, _Range(0, 2)] = 0.1


class CriteriaConfig(BaseModel):
    """What makes a pass usable, and what the ranking maximizes."""

    model_config = _STRICT

    min_margin_db: Annotated[Real, _Range(-20, 40)] = 3.0
    min_usable_s: Annotated[Real, _Range(0, 3600)] = 60.0
    objective: Choice[Literal["data-volume", "usable-time"]] = "data-volume"
    fade_percentile: Annotated[Real, _Range(50, 99.9)] = 90.0  # for tumbling linear waves
    budget_uncertainty_db: Annotated[Real, _Range(0, 20)] = 2.0  # robustness check shifts


class CatalogConfig(RadioConfig):
    """Every object of an element file as a target, all with the same assumed radio.

    For screening a catalog ("which of these can my station use?"): each element set becomes a
    satellite named after it, with these radio parameters.
    """

    model_config = _STRICT

    elements: Path = Field(description=_ALLOWED_ELEMENTS)
    max_objects: Annotated[int, Strict(), _Range(1, 100000)] = 20000

    @field_validator("elements", mode="plain")
    @classmethod
    def _elements(cls, value: Any, info: ValidationInfo) -> Path:
        return _resolve_file(value, info, _ALLOWED_ELEMENTS)


def _unique_names(value: list, what: str) -> list:
    first: dict[str, int] = {}
    for index, item in enumerate(value, start=1):
        if item.name in first:
            raise _error(
                f"{_show(item.name)} is already the name of {what} #{first[item.name]}",
                f"each {what} name once",
                at=(index - 1, "name"),
            )
        first[item.name] = index
    return value


class Scenario(BaseModel):
    """A whole scenario file. ``source_path`` is set by :func:`load_scenario`."""

    model_config = _STRICT

    station: StationConfig
    window: WindowConfig
    satellite: list[SatelliteConfig] = []
    catalog: CatalogConfig | None = None
    network_station: list[StationConfig] = []  # more sites of a small network, same keys as [station]
    receiver: ReceiverConfig = ReceiverConfig()
    candidate: list[CandidateConfig] = []
    cable: list[CableConfig] = []
    transmitter: TransmitterConfig | None = None
    criteria: CriteriaConfig = CriteriaConfig()

    _source_path: Path | None = PrivateAttr(default=None)

    @property
    def source_path(self) -> Path | None:
        """Absolute path of the file this scenario was loaded from (None if built in code)."""
        return self._source_path

    @source_path.setter
    def source_path(self, value: Path | None) -> None:
        self._source_path = None if value is None else Path(value)

    @field_validator("satellite", mode="after")
    @classmethod
    def _satellites(cls, value: list[SatelliteConfig]) -> list[SatelliteConfig]:
        return _unique_names(value, "satellite")

    @field_validator("network_station", mode="after")
    @classmethod
    def _network(cls, value: list[StationConfig]) -> list[StationConfig]:
        if len(value) > NETWORK_STATIONS_LIMIT:  # every command repeats the whole run per station
            raise _error(
                f"{len(value)} network stations are given",
                f"at most {NETWORK_STATIONS_LIMIT} (a small network: every command repeats the whole "
                "prediction and forecast for each station)",
            )
        return _unique_names(value, "network station")

    @model_validator(mode="after")
    def _targets_and_sites(self) -> Scenario:
        if not self.satellite and self.catalog is None:
            raise _error("no satellites are given", "one or more [[satellite]] tables, or a [catalog] table", at=("satellite",))
        names = [self.station.name] + [s.name for s in self.network_station]
        if len(set(names)) != len(names):
            raise _error("two stations share a name", "each [station] and [[network_station]] name once")
        return self

    @property
    def stations(self) -> list[StationConfig]:
        """The home [station] first, then every [[network_station]]."""
        return [self.station, *self.network_station]

    def input_files(self) -> list[Path]:
        """Every file this scenario reads: itself, the element files and the candidates' pattern tables."""
        files = [] if self.source_path is None else [self.source_path]
        files += [s.elements for s in self.satellite]
        files += [] if self.catalog is None else [self.catalog.elements]
        files += [band.pattern for c in self.candidate for band in c.bands]
        return files

    def station_named(self, name: str) -> StationConfig:
        for station in self.stations:
            if station.name == name:
                return station
        allowed = ", ".join(s.name for s in self.stations)
        raise UserError(f"{self.source_path or 'scenario'}: no station named {name!r}; allowed: {allowed}")

    @field_validator("candidate", mode="after")
    @classmethod
    def _candidates(cls, value: list[CandidateConfig]) -> list[CandidateConfig]:
        return _unique_names(value, "candidate")

    @field_validator("cable", mode="after")
    @classmethod
    def _cables(cls, value: list[CableConfig]) -> list[CableConfig]:
        return _unique_names(value, "cable")

    def candidate_named(self, name: str) -> CandidateConfig:
        for candidate in self.candidate:
            if candidate.name == name:
                return candidate
        allowed = ", ".join(c.name for c in self.candidate) or "none: add [[candidate]] tables"
        raise UserError(f"{self.source_path or 'scenario'}: no candidate named {name!r}; allowed: {allowed}")

    def satellite_named(self, name: str) -> SatelliteConfig:
        for satellite in self.satellite:
            if satellite.name == name or (satellite.norad_id is not None and str(satellite.norad_id) == name):
                return satellite
        allowed = ", ".join(s.name for s in self.satellite)
        raise UserError(f"{self.source_path or 'scenario'}: no satellite named {name!r}; allowed: {allowed}")

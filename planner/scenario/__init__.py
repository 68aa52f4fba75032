"""Scenario files: the TOML schema, its validation and one-line error reports.

This is the only module that reads a scenario file. :func:`load_scenario` turns a TOML
file into a validated :class:`Scenario`; every problem a user can make (a file that is
missing or not TOML, an unknown key, a value of the wrong type or out of range, an
elements file that does not exist) becomes a :class:`~planner.errors.UserError` whose
message is one line naming the file, the key as the user finds it in the TOML, what is
wrong and what is allowed.

Units live in the key names (``latitude_deg``, ``downlink_mhz``); the models keep the
values in those units and offer SI properties where later code needs them
(``downlink_frequency_hz``).

Adding a table to the file format is one model (with ``model_config = _STRICT``) and one
field on :class:`Scenario`; the error reports find keys, names of ``[[...]]`` entries and
allowed keys from the models themselves.
"""

from __future__ import annotations

import difflib
import math
import os
import re
import tomllib
import types
import typing
from collections.abc import Mapping
from datetime import date, datetime, time, timedelta, timezone
from pathlib import Path
from typing import Annotated, Any, Literal

from pydantic import (
    BaseModel,
    ConfigDict,
    Field,
    PrivateAttr,
    Strict,
    ValidationError,
    ValidationInfo,
    field_validator,
    model_validator,
)
from pydantic.fields import FieldInfo
from pydantic_core import PydanticCustomError, core_schema

from planner.bounds import (
    FREQUENCY_MAX_MHZ,
    FREQUENCY_MIN_MHZ,
    LATEST_YEAR,
    MAX_OMM_CATALOG_NUMBER,
    SUPPORTED_YEARS,
    control_character,
    in_supported_years,
)
from planner.errors import UserError
from planner.limits import (
    NETWORK_STATIONS_LIMIT,
    SCENARIO_FILE_LIMIT_BYTES,
    TRACK_STEP_MIN_S,
    WINDOW_DAYS_LIMIT,
    ReadWording,
    read_text_capped,
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

SECONDS_PER_DAY = 86400.0
_STRICT = ConfigDict(extra="forbid")

# The window lies in the years planner.bounds allows for every time (1957: the first
# artificial satellite; 2100: beyond any element set's useful life).
_ALLOWED_START = (
    "a TOML date-time with a time zone, such as 2027-01-04T00:00:00Z, or the same text "
    f"in quotes, in the years {SUPPORTED_YEARS}"
)
_ALLOWED_ELEMENTS = (
    "the path of a TLE, 3LE or OMM file in quotes; a relative path is taken from the "
    "scenario file's folder"
)
_ALLOWED_HORIZON = (
    "a minimum elevation in degrees from -10 to 90, or a list of [azimuth_deg, "
    "min_elevation_deg] pairs with azimuths from 0 up to but not including 360, each "
    "once, and elevations from -10 to 90"
)
_ALLOWED_NAME = "one line of text in quotes, 1 to 80 characters"


# --------------------------------------------------------------------------- helpers


def _error(problem: str, allowed: str, *, at: tuple[int | str, ...] = ()) -> PydanticCustomError:
    """A validation error carrying the two halves of the one-line report.

    ``at`` extends the error's location below the validated field (a list validator
    pointing at one entry's key).
    """
    context: dict[str, Any] = {"problem": problem, "allowed": allowed}
    if at:
        context["at"] = at
    return PydanticCustomError("scenario_value", "{problem}; allowed: {allowed}", context)


def _num(value: float) -> str:
    """A number the way a user would write it in TOML: 91, 0.5, 1e-05."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        text = str(value)
        return text if len(text) <= 20 else f"{text[:12]}... ({len(text)} digits)"
    if math.isnan(value):
        return "nan"
    if math.isinf(value):
        return "inf" if value > 0 else "-inf"
    if value.is_integer() and abs(value) < 1e15:
        return str(int(value))
    return repr(value)


def _finite(value: float) -> bool:
    """math.isfinite that also takes integers too large for a float (they are not finite here)."""
    try:
        return math.isfinite(value)
    except OverflowError:
        return False


def _show(value: Any) -> str:
    """A short, one-line rendering of a user's value for an error message."""
    if isinstance(value, (bool, int, float)):
        return _num(value)
    if isinstance(value, str):
        text = repr(value)
        return text if len(text) <= 42 else text[:38] + "...'"
    if isinstance(value, (datetime, date, time)):
        return value.isoformat()
    if isinstance(value, Mapping):
        return "a table"
    if isinstance(value, (list, tuple)):
        text = repr(list(value))
        return text if len(text) <= 42 else "a list"
    return f"a {type(value).__name__}"


def _one_line(text: str) -> str:
    """Escape anything that would break a message over lines or hide characters."""
    return "".join(c if c.isprintable() else c.encode("unicode_escape").decode("ascii") for c in text)


class _Range:
    """Closed or open bounds on a number, used as ``Annotated`` metadata.

    The bounds are kept on the field so error reports (and documentation) can say what is
    allowed; non-finite values (TOML ``inf``, ``nan``) are always refused.
    """

    def __init__(
        self,
        lo: float | None = None,
        hi: float | None = None,
        *,
        lo_open: bool = False,
        hi_open: bool = False,
    ) -> None:
        self.lo, self.hi, self.lo_open, self.hi_open = lo, hi, lo_open, hi_open

    def allowed(self) -> str:
        lo, hi = self.lo, self.hi
        if lo is not None and hi is not None:
            if not self.lo_open and not self.hi_open:
                return f"{_num(lo)} to {_num(hi)}"
            if self.lo_open and not self.hi_open:
                return f"more than {_num(lo)}, up to {_num(hi)}"
            if not self.lo_open and self.hi_open:
                return f"{_num(lo)} up to but not including {_num(hi)}"
            return f"more than {_num(lo)} and less than {_num(hi)}"
        if lo is not None:
            return f"more than {_num(lo)}" if self.lo_open else f"{_num(lo)} or more"
        if hi is not None:
            return f"less than {_num(hi)}" if self.hi_open else f"{_num(hi)} or less"
        return "any finite number"

    def contains(self, value: float) -> bool:
        if not _finite(value):
            return False
        if self.lo is not None and (value <= self.lo if self.lo_open else value < self.lo):
            return False
        if self.hi is not None and (value >= self.hi if self.hi_open else value > self.hi):
            return False
        return True

    def check(self, value: float) -> float:
        if isinstance(value, float) and not math.isfinite(value):
            raise _error(f"{_num(value)} is not a finite number", self.allowed())
        if not self.contains(value):
            raise _error(f"{_num(value)} is out of range", self.allowed())
        return value

    def __get_pydantic_core_schema__(self, source: Any, handler: Any) -> core_schema.CoreSchema:
        return core_schema.no_info_after_validator_function(self.check, handler(source))


# A float that refuses strings and booleans and accepts ints (pydantic strict mode).
Real = Annotated[float, Strict()]


def _check_name(value: str) -> str:
    if not value.strip():
        raise _error("the name is empty", _ALLOWED_NAME)
    if len(value) > 80:
        raise _error(f"the name is {len(value)} characters long", _ALLOWED_NAME)
    bad = control_character(value)  # the same rule as element-file names
    if bad is not None:
        raise _error(
            f"the name {_show(value)} holds the control character {bad[1]} at character {bad[0]}",
            _ALLOWED_NAME,
        )
    return value


class _NameCheck:
    def __get_pydantic_core_schema__(self, source: Any, handler: Any) -> core_schema.CoreSchema:
        return core_schema.no_info_after_validator_function(_check_name, handler(source))


Name = Annotated[str, Strict(), _NameCheck(), Field(description=_ALLOWED_NAME)]

Latitude = Annotated[Real, _Range(-90, 90)]
Longitude = Annotated[Real, _Range(-180, 180)]
Altitude = Annotated[Real, _Range(-500, 9000)]
Frequency = Annotated[Real, _Range(FREQUENCY_MIN_MHZ, FREQUENCY_MAX_MHZ)]  # the pattern tables' range too

def _resolve_file(value: Any, info: ValidationInfo, allowed: str) -> Path:
    """A file named in the scenario: relative to the scenario's folder, and it must exist.

    ``info.context`` may hold ``base_dir`` (default: the working folder) and
    ``check_files`` (default True).
    """
    if isinstance(value, Path):
        text = str(value)
    elif isinstance(value, str):
        text = value
    else:
        raise _error(f"expected a file path in quotes, got {_show(value)}", allowed)
    if not text.strip():
        raise _error("the path is empty", allowed)
    if not text.isprintable():
        raise _error(f"the path {_show(text)} holds control characters", allowed)
    context = info.context if isinstance(info.context, Mapping) else {}
    base = context.get("base_dir")
    path = Path(text)
    try:
        path = path.expanduser()
    except RuntimeError:  # '~user' with no such user: keep the text as written
        pass
    if not path.is_absolute():
        path = Path(base if base is not None else Path.cwd()) / path
    path = Path(os.path.normpath(path.absolute()))
    if context.get("check_files", True):
        try:
            exists, is_file = path.exists(), path.is_file()
        except (OSError, ValueError) as exc:
            raise _error(f"file {text} cannot be checked: {exc}", allowed) from None
        if not exists:
            raise _error(f"file {text} does not exist (looked for {path})", allowed)
        if not is_file:
            raise _error(f"{text} is not a file (looked at {path})", allowed)
    return path


_AZIMUTH = _Range(0, 360, hi_open=True)
_MASK_ELEVATION = _Range(-10, 90)


# --------------------------------------------------------------------------- models


class StationConfig(BaseModel):
    """The ground station: WGS84 site, horizon mask and man-made noise environment."""

    model_config = _STRICT

    name: Name
    latitude_deg: Latitude  # geodetic, north positive
    longitude_deg: Longitude  # east positive
    altitude_m: Altitude = 0.0  # above the WGS84 ellipsoid
    horizon_mask: float | list[tuple[float, float]] = Field(default=0.0, description=_ALLOWED_HORIZON)
    noise_environment: Literal["city", "residential", "rural", "quiet_rural"] = "rural"

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
                raise _error(
                    f"{where} is {_show(item)}, not an [azimuth_deg, min_elevation_deg] pair", _ALLOWED_HORIZON
                )
            azimuth, elevation = number(item[0]), number(item[1])
            if azimuth is None or elevation is None:
                raise _error(f"{where} {_show(item)} holds something other than numbers", _ALLOWED_HORIZON)
            if not _AZIMUTH.contains(azimuth):
                raise _error(
                    f"{where}: azimuth {_num(item[0])} is out of range", f"azimuth_deg {_AZIMUTH.allowed()}"
                )
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
            parsed = parsed.astimezone(timezone.utc)
        except (OverflowError, ValueError):
            raise _error(f"{parsed.isoformat()} is out of range", _ALLOWED_START) from None
        if not in_supported_years(parsed):
            raise _error(f"{parsed.isoformat()} is out of range", _ALLOWED_START)
        return parsed

    @model_validator(mode="after")
    def _at_least_one_step(self) -> "WindowConfig":
        # A window shorter than its step holds no track; far shorter ones (1e-185 days,
        # found by the scenario fuzz) would even end where they start.
        if self.days * SECONDS_PER_DAY < self.step_s:
            raise _error(f"{_num(self.days)} days is shorter than one step of {_num(self.step_s)} s",
                         f"one step or more, here {self.step_s / SECONDS_PER_DAY:.3g} days or more", at=("days",))
        # days is at most 31, so the end is a representable time; it must still lie in the years.
        if not in_supported_years(self.end_utc):
            raise _error(
                f"the window from {self.start_utc.isoformat()} for {_num(self.days)} days ends in "
                f"{self.end_utc.year}",
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
    polarization: Literal["rhcp", "lhcp", "linear", "linear-tumbling"] = "linear-tumbling"
    axial_ratio_db: Annotated[Real, _Range(0, 60)] = 0.0
    modulation: Literal[
        "bpsk", "qpsk", "dbpsk", "fsk-coherent", "fsk-noncoherent", "gmsk", "afsk-fm", "fm"
    ] = "gmsk"
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
    uplink_rx_polarization: Literal["rhcp", "lhcp", "linear", "linear-tumbling"] = "linear-tumbling"
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
    "the path of a pattern table (CSV, see patterns/README.md) in quotes; a relative path is "
    "taken from the scenario file's folder"
)
LnaPosition = Literal["antenna", "receiver", "none"]


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


class CandidateConfig(BaseModel):
    """One antenna set-up to compare: pattern table, feedline, connectors, LNA position.

    ``feedline`` and ``connectors`` are the main run (after the LNA when it sits at the antenna);
    ``pre_lna_*`` are the losses between the antenna and the LNA, charged before it.
    """

    model_config = _STRICT

    name: Name
    pattern: Path = Field(description=_ALLOWED_PATTERN)
    feedline: list[FeedlineRun] = []
    connectors: Annotated[int, Strict(), _Range(0, 30)] = 2
    connector_loss_db: Annotated[Real, _Range(0, 2)] = 0.1  # each; common practice
    lna_position: LnaPosition | None = None  # overrides [receiver] for this candidate
    feed_vswr: Annotated[Real, _Range(1, 20)] | None = None  # overrides the pattern header's
    # Between the antenna and the LNA (charged before it): a jumper, connectors, a switch or bias-tee.
    pre_lna_feedline: list[FeedlineRun] = []
    pre_lna_connectors: Annotated[int, Strict(), _Range(0, 30)] | None = None  # default: [receiver]'s
    pre_lna_loss_db: Annotated[Real, _Range(0, 10)] | None = None  # default: [receiver]'s

    @field_validator("pattern", mode="plain")
    @classmethod
    def _pattern(cls, value: Any, info: ValidationInfo) -> Path:
        return _resolve_file(value, info, _ALLOWED_PATTERN)


class TransmitterConfig(BaseModel):
    """The station's transmitter, for uplinks and the RF exposure estimate."""

    model_config = _STRICT

    power_w: Annotated[Real, _Range(0, 2000, lo_open=True)]
    antenna_gain_dbi: Annotated[Real, _Range(-20, 30)] = 0.0
    polarization: Literal["rhcp", "lhcp", "linear"] = "rhcp"
    feedline: list[FeedlineRun] = []
    connectors: Annotated[int, Strict(), _Range(0, 30)] = 2
    connector_loss_db: Annotated[Real, _Range(0, 2)] = 0.1


class CriteriaConfig(BaseModel):
    """What makes a pass usable, and what the ranking maximizes."""

    model_config = _STRICT

    min_margin_db: Annotated[Real, _Range(-20, 40)] = 3.0
    min_usable_s: Annotated[Real, _Range(0, 3600)] = 60.0
    objective: Literal["data_volume", "usable_time"] = "data_volume"
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
            raise _error(f"{len(value)} network stations are given",
                         f"at most {NETWORK_STATIONS_LIMIT} (a small network: every command repeats the whole "
                         "prediction and forecast for each station)")
        return _unique_names(value, "network station")

    @model_validator(mode="after")
    def _targets_and_sites(self) -> "Scenario":
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
        files += [c.pattern for c in self.candidate]
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


# --------------------------------------------------------------------------- reports


def _models_here() -> dict[str, type[BaseModel]]:
    """The models of this module by class name (a ValidationError's title names its model)."""
    return {
        value.__name__: value
        for value in globals().values()
        if isinstance(value, type) and issubclass(value, BaseModel) and value.__module__ == __name__
    }


def _unwrap(annotation: Any) -> tuple[Any, list[Any]]:
    """(base type, metadata) of an annotation, looking through Annotated and Optional."""
    metadata: list[Any] = []
    while True:
        origin = typing.get_origin(annotation)
        if origin is Annotated:
            args = typing.get_args(annotation)
            annotation, metadata = args[0], metadata + list(args[1:])
            continue
        if origin in (typing.Union, types.UnionType):
            args = [a for a in typing.get_args(annotation) if a is not type(None)]
            if len(args) == 1:
                annotation = args[0]
                continue
        return annotation, metadata


def _model_in(annotation: Any) -> tuple[type[BaseModel] | None, bool]:
    """The model a field holds, and whether it holds a list of them ([[table]])."""
    base, _ = _unwrap(annotation)
    if isinstance(base, type) and issubclass(base, BaseModel):
        return base, False
    if typing.get_origin(base) is list:
        args = typing.get_args(base)
        if args:
            inner, _ = _unwrap(args[0])
            if isinstance(inner, type) and issubclass(inner, BaseModel):
                return inner, True
    return None, False


def _walk(
    root: type[BaseModel] | None, loc: tuple[Any, ...]
) -> tuple[type[BaseModel] | None, FieldInfo | None]:
    """The model that holds the last key of ``loc``, and that key's field (if known)."""
    model, field = root, None
    for position, part in enumerate(loc):
        if isinstance(part, int):
            continue
        if model is None:
            return None, None
        field = model.model_fields.get(part)
        if position == len(loc) - 1:
            return model, field
        if field is None:
            return None, None
        model, _ = _model_in(field.annotation)
    return model, field


def _allowed_for(field: FieldInfo | None, key: str) -> str:
    """What a field accepts, in words, for missing-key and wrong-type reports."""
    if field is None:
        return "see the scenario file documentation"
    if field.description:
        return field.description
    model, is_list = _model_in(field.annotation)
    if model is not None:
        required = [name for name, f in model.model_fields.items() if f.is_required()]
        table = f"[[{key}]] tables" if is_list else f"a [{key}] table"
        head = f"one or more {table}" if is_list else table
        return f"{head} with at least {', '.join(required)}" if required else head
    base, metadata = _unwrap(field.annotation)
    for item in metadata + list(field.metadata):
        if isinstance(item, _Range):
            kind = "a whole number" if base is int else "a number"
            return f"{kind}, {item.allowed()}"
    if typing.get_origin(base) is Literal:
        return "one of " + ", ".join(f'"{choice}"' for choice in typing.get_args(base))
    if base is bool:
        return "true or false"
    if base is str:
        return "text in quotes"
    if base is float:
        return "a number"
    if base is int:
        return "a whole number"
    return "see the scenario file documentation"


def _key_text(loc: tuple[Any, ...], data: Any, key_names: Mapping[str, str] | None) -> str:
    """A location the way a user finds it: 'satellite #2 (TARNBECK).downlink_mhz'."""
    parts: list[str] = []
    node = data
    for position, part in enumerate(loc):
        if isinstance(part, int):
            label = f"#{part + 1}"
            item = node[part] if isinstance(node, list) and 0 <= part < len(node) else None
            name = item.get("name") if isinstance(item, Mapping) else None
            if isinstance(name, str) and name.strip():
                label += f" ({name if len(name) <= 40 else name[:37] + '...'})"
            if parts:
                parts[-1] += " " + label
            else:
                parts.append(label)
            node = item
        else:
            text = str(part)
            if position == 0 and key_names and text in key_names:
                text = key_names[text]
            parts.append(text)
            node = node.get(part) if isinstance(node, Mapping) else None
    return ".".join(parts) if parts else "(top level)"


def _describe_one(
    err: Mapping[str, Any],
    root: type[BaseModel] | None,
    data: Any,
    key_names: Mapping[str, str] | None,
) -> str:
    ctx = err.get("ctx") or {}
    loc = tuple(err.get("loc", ())) + tuple(ctx.get("at", ()))
    key = _key_text(loc, data, key_names)
    kind = err.get("type", "")
    value = err.get("input")
    model, field = _walk(root, loc)
    last = str(loc[-1]) if loc else ""
    allowed_here = _allowed_for(field, last)

    if "problem" in ctx and "allowed" in ctx:
        return f"{key}: {ctx['problem']}; allowed: {ctx['allowed']}"
    if kind == "extra_forbidden":
        if model is None:
            return f"{key}: unknown key"
        names = list(model.model_fields)
        hint = difflib.get_close_matches(last, names, n=1, cutoff=0.7)
        problem = f"unknown key (did you mean {hint[0]}?)" if hint else "unknown key"
        return f"{key}: {problem}; allowed keys: {', '.join(names)}"
    if kind == "missing":
        sub, _ = _model_in(field.annotation) if field is not None else (None, False)
        what = "missing required table" if sub is not None else "missing required key"
        return f"{key}: {what}; allowed: {allowed_here}"
    if kind in ("float_type", "float_parsing", "finite_number"):
        if isinstance(value, int) and not isinstance(value, bool):
            return f"{key}: {_show(value)} is too large a number; allowed: {allowed_here}"
        return f"{key}: expected a number, got {_show(value)}; allowed: {allowed_here}"
    if kind in ("int_type", "int_parsing", "int_from_float"):
        return f"{key}: expected a whole number, got {_show(value)}; allowed: {allowed_here}"
    if kind in ("string_type", "str_type"):
        return f"{key}: expected text in quotes, got {_show(value)}; allowed: {allowed_here}"
    if kind in ("bool_type", "bool_parsing"):
        return f"{key}: expected true or false, got {_show(value)}; allowed: {allowed_here}"
    if kind == "literal_error":
        return f"{key}: {_show(value)} is not one of the choices; allowed: {allowed_here}"
    if kind in ("model_type", "model_attributes_type", "dict_type"):
        return f"{key}: expected a table, got {_show(value)}; allowed: {allowed_here}"
    if kind == "list_type":
        sub, is_list = _model_in(field.annotation) if field is not None else (None, False)
        if is_list and isinstance(value, Mapping):
            return (
                f"{key}: expected [[{last}]] tables (double brackets), got a single table; "
                f"allowed: {allowed_here}"
            )
        return f"{key}: expected a list, got {_show(value)}; allowed: {allowed_here}"
    message = str(err.get("msg", "invalid value"))
    return f"{key}: {message} (got {_show(value)}); allowed: {allowed_here}"


def describe_validation_error(
    error: ValidationError,
    source: str,
    *,
    data: Any = None,
    key_names: Mapping[str, str] | None = None,
    model: type[BaseModel] | None = None,
) -> str:
    """One line for the first problem in ``error``: 'source: key: what is wrong; allowed: ...'.

    ``data`` is the raw input (the parsed TOML); with it, entries of ``[[...]]`` lists are
    named ('satellite #2 (TARNBECK)'). ``key_names`` maps top-level field names to the names
    the user typed (command-line options such as ``{"latitude_deg": "--lat"}``). ``model``
    is the model that was validated; by default it is found from the error's title.
    """
    # An unknown key usually explains the missing or wrong keys reported with it (a
    # misspelt name), so unknown keys are reported first; otherwise the file order.
    errors = sorted(error.errors(include_url=False), key=lambda e: e.get("type") != "extra_forbidden")
    root = model if model is not None else _models_here().get(error.title)
    if not errors:
        return _one_line(f"{source}: invalid input")
    line = f"{source}: {_describe_one(errors[0], root, data, key_names)}"
    more = len(errors) - 1
    if more:
        line += f" (and {more} more problem{'s' if more > 1 else ''})"
    return _one_line(line)


_M = typing.TypeVar("_M", bound=BaseModel)


def validated(
    model_cls: type[_M],
    values: Mapping[str, Any],
    source: str,
    *,
    key_names: Mapping[str, str] | None = None,
    context: Mapping[str, Any] | None = None,
) -> _M:
    """Build ``model_cls`` from ``values``; a problem becomes a one-line UserError.

    For models built from command-line options: ``validated(StationConfig, {...},
    "command line", key_names={"latitude_deg": "--lat"})`` reports
    'command line: --lat: 91 is out of range; allowed: -90 to 90'. ``context`` may hold
    ``base_dir`` (folder for relative elements paths; default the working folder) and
    ``check_files`` (False skips the check that elements files exist; default True).
    """
    try:
        return model_cls.model_validate(dict(values), context=dict(context or {}))
    except ValidationError as exc:
        raise UserError(
            describe_validation_error(exc, source, data=dict(values), key_names=key_names, model=model_cls)
        ) from None


# A decimal integer of more digits than Python converts (sys.int_info.default_max_str_digits),
# standing alone: not part of a float's fraction or exponent, nor of a word.
_LONG_INTEGER_RE = re.compile(r"(?<![\w.])[+-]?[0-9][0-9_]{4300,}(?![\w.])")
_KEY_AT_LINE_START_RE = re.compile(r"\s*([A-Za-z0-9_-]+)\s*=")


def _too_many_digits(source: str, text: str) -> str:
    """The one-line report for a TOML integer too long to read, at its line and key if found."""
    match = _LONG_INTEGER_RE.search(text)
    allowed = "allowed: a number within the key's range; none accepts thousands of digits"
    if match is None:
        return f"{source}: a whole number has more than 4300 digits; {allowed}"
    line = text.count("\n", 0, match.start()) + 1
    line_text = text.split("\n")[line - 1]
    key = _KEY_AT_LINE_START_RE.match(line_text)
    digits = sum(char.isdigit() for char in match.group())
    where = f"{source}:{line}: {key.group(1)}" if key else f"{source}:{line}"
    return f"{where}: a whole number of {digits} digits ({match.group()[:12]}...); {allowed}"


_READ_WORDING = ReadWording(
    not_found="{path}: cannot read: No such file or directory",
    folder="{path}: cannot read: Is a directory",
    not_text="{path}: not valid TOML: not UTF-8 text (bad byte at offset {offset})",
    other="{path}: cannot read: {reason}",
)
"""The messages ``load_scenario`` has always given for a file it cannot read."""


def load_scenario(path: str | Path) -> Scenario:
    """Read and validate a scenario TOML file; any problem is a one-line UserError."""
    file = Path(path)
    source = _one_line(str(path))
    text = read_text_capped(file, what="scenario file", limit_bytes=SCENARIO_FILE_LIMIT_BYTES, label=source,
                            wording=_READ_WORDING)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise UserError(_one_line(f"{source}: not valid TOML: {exc}")) from None
    except RecursionError:
        raise UserError(f"{source}: not valid TOML: arrays or tables nested too deeply") from None
    except ValueError:  # int() of more than 4300 digits (Python's integer string conversion limit)
        raise UserError(_too_many_digits(source, text)) from None
    base_dir = Path(os.path.normpath(file.absolute())).parent
    try:
        scenario = Scenario.model_validate(data, context={"base_dir": base_dir})
    except ValidationError as exc:
        raise UserError(describe_validation_error(exc, source, data=data, model=Scenario)) from None
    scenario.source_path = Path(os.path.normpath(file.absolute()))
    return scenario

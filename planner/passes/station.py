"""The ground station: a WGS84 site and its horizon mask.

The horizon mask maps azimuth to the lowest usable elevation (trees, buildings,
hills). It is piecewise linear in azimuth and wraps at 360 deg, so a mask given as
``[[0, 3], [120, 8], [240, 2]]`` ramps from 2 deg at 240 deg back to 3 deg at north.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from planner.errors import UserError

# WGS84 ellipsoid (NIMA TR8350.2).
WGS84_A_M = 6378137.0
WGS84_F = 1.0 / 298.257223563
WGS84_E2 = WGS84_F * (2.0 - WGS84_F)


@dataclass(frozen=True)
class HorizonMask:
    """Minimum usable elevation as a periodic piecewise-linear function of azimuth."""

    azimuth_deg: np.ndarray
    min_elevation_deg: np.ndarray

    @classmethod
    def flat(cls, min_elevation_deg: float) -> HorizonMask:
        return cls(np.array([0.0]), np.array([float(min_elevation_deg)]))

    @classmethod
    def from_points(cls, points: float | Sequence[Sequence[float]]) -> HorizonMask:
        """Build from a flat elevation or ``[[azimuth_deg, min_elevation_deg], ...]``."""
        if isinstance(points, (int, float)):
            return cls.flat(points)
        table = np.asarray(points, dtype=float)
        if table.ndim != 2 or table.shape[1] != 2 or len(table) == 0:
            raise UserError("horizon_mask: expected a number or a list of [azimuth_deg, min_elevation_deg] pairs")
        azimuth = np.mod(table[:, 0], 360.0)
        order = np.argsort(azimuth)
        azimuth = azimuth[order]
        if np.any(np.diff(azimuth) == 0):
            raise UserError("horizon_mask: azimuths must be distinct (0 and 360 are the same direction)")
        return cls(azimuth, table[order, 1])

    @property
    def lowest_deg(self) -> float:
        return float(self.min_elevation_deg.min())

    def min_elevation_at(self, azimuth_deg: np.ndarray | float) -> np.ndarray:
        """Mask elevation (deg) at the given azimuths (deg), interpolated with wrap-around."""
        if len(self.azimuth_deg) == 1:
            return np.full(np.shape(azimuth_deg), self.min_elevation_deg[0])
        return np.interp(np.mod(azimuth_deg, 360.0), self.azimuth_deg, self.min_elevation_deg, period=360.0)


@dataclass(frozen=True)
class Station:
    """A fixed ground station on the WGS84 ellipsoid."""

    name: str
    latitude_deg: float
    longitude_deg: float
    altitude_m: float = 0.0
    mask: HorizonMask = field(default_factory=lambda: HorizonMask.flat(0.0))
    noise_environment: str = "rural"  # ITU-R P.372 man-made noise category of the surroundings
    time_zone: str = "UTC"  # IANA name or "local-mean-solar" (planner.timezones): the clock of local hours

    @classmethod
    def from_config(cls, config) -> Station:
        """Build from a validated :class:`planner.scenario.StationConfig`."""
        return cls(
            name=config.name,
            latitude_deg=config.latitude_deg,
            longitude_deg=config.longitude_deg,
            altitude_m=config.altitude_m,
            mask=HorizonMask.from_points(config.horizon_mask),
            noise_environment=config.noise_environment,
            time_zone=config.time_zone,
        )

    @property
    def ecef_km(self) -> np.ndarray:
        """Earth-fixed position (km) of the site."""
        lat = np.radians(self.latitude_deg)
        lon = np.radians(self.longitude_deg)
        n = WGS84_A_M / np.sqrt(1.0 - WGS84_E2 * np.sin(lat) ** 2)
        h = self.altitude_m
        return (
            np.array(
                [
                    (n + h) * np.cos(lat) * np.cos(lon),
                    (n + h) * np.cos(lat) * np.sin(lon),
                    (n * (1.0 - WGS84_E2) + h) * np.sin(lat),
                ]
            )
            / 1000.0
        )

    @property
    def enu_rotation(self) -> np.ndarray:
        """Rows are the local east, north and up unit vectors (geodetic vertical) in ECEF."""
        lat = np.radians(self.latitude_deg)
        lon = np.radians(self.longitude_deg)
        sl, cl = np.sin(lat), np.cos(lat)
        so, co = np.sin(lon), np.cos(lon)
        return np.array(
            [
                [-so, co, 0.0],
                [-sl * co, -sl * so, cl],
                [cl * co, cl * so, sl],
            ]
        )

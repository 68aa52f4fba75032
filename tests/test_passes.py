"""Pass prediction checked against skyfield and against textbook geometry.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

from datetime import UTC, datetime, timedelta
from math import cos, radians, sin, sqrt

import numpy as np
import pytest
from skyfield.api import EarthSatellite, load, wgs84

from planner.elements import read_elements
from planner.passes import Target, predict_passes
from planner.passes.station import HorizonMask, Station
from tests.orbit_factory import make_tle, write_three_line

START = datetime(2027, 1, 4, tzinfo=UTC)

# Invented orbits spanning the kinds a ground station tracks.
ORBITS = {
    "SSO-550": dict(norad_id=99801, height_km=550, inclination_deg=97.59, raan_deg=40, mean_anomaly_deg=10),
    "ISS-LIKE-420": dict(norad_id=99802, height_km=420, inclination_deg=51.64, raan_deg=200, mean_anomaly_deg=120),
    "POLAR-800": dict(norad_id=99803, height_km=800, inclination_deg=97.8, raan_deg=300, mean_anomaly_deg=250),
    "MID-600-ECC": dict(norad_id=99804, height_km=900, inclination_deg=63.4, eccentricity=0.03, raan_deg=90, mean_anomaly_deg=30),
}

# Two invented sites: one high latitude, one southern hemisphere.
SITES = {
    "high-north": Station("north", 69.65, 18.96, 120.0),
    "south": Station("south", -34.93, 138.60, 50.0),
}


@pytest.fixture(scope="module")
def element_sets(tmp_path_factory):
    path = tmp_path_factory.mktemp("tle") / "orbits.tle"
    write_three_line(path, [(name, make_tle(**orbit)) for name, orbit in ORBITS.items()])
    return {e.name: e for e in read_elements(path)}


def skyfield_passes(element_set, station, start, end, altitude_deg):
    """Complete passes from skyfield's own rise/culminate/set search (the reference).

    The culmination elevation is taken as skyfield's maximum altitude on a 10 ms grid
    around its culmination time, so the reference is not limited by its time tolerance.
    """
    ts = load.timescale()
    satellite = EarthSatellite.from_satrec(element_set.satrec, ts)
    site = wgs84.latlon(station.latitude_deg, station.longitude_deg, elevation_m=station.altitude_m)
    times, events = satellite.find_events(site, ts.from_datetime(start), ts.from_datetime(end), altitude_degrees=altitude_deg)
    result, rise, peaks = [], None, []
    for t, event in zip(times, events):
        if event == 0:
            rise, peaks = t, []
        elif event == 1 and rise is not None:
            peaks.append(t)
        elif event == 2 and rise is not None:
            best = -90.0
            for peak in peaks:
                fine = ts.tt_jd(peak.tt + np.arange(-200, 201) * 0.01 / 86400.0)
                altitude = (satellite - site).at(fine).altaz()[0].degrees
                best = max(best, float(altitude.max()))
            result.append((rise.utc_datetime(), t.utc_datetime(), best))
            rise = None
    return result


@pytest.mark.parametrize("tracks", [True, False], ids=["tracks", "no-tracks"])
@pytest.mark.parametrize("site_name", list(SITES))
def test_passes_match_skyfield(element_sets, site_name, tracks):
    # Reference: skyfield EarthSatellite.find_events (rise/culminate/set) and altaz.
    # Required agreement: AOS/LOS within 1 s, maximum elevation
    # within 0.01 deg, same number of passes; with tracks and without (a pass list).
    station = SITES[site_name]
    end = START + timedelta(days=2)
    ours_all = predict_passes(list(element_sets.values()), station, START, end, step_s=30, tracks=tracks)
    for name, element_set in element_sets.items():
        reference = skyfield_passes(element_set, station, START, end, 0.0)
        ours = [p for p in ours_all if p.norad_id == element_set.norad_id and not (p.aos_clipped or p.los_clipped)]
        assert len(ours) == len(reference) > 0, name
        for mine, (rise, set_, max_elevation) in zip(ours, reference):
            assert abs((mine.aos_utc - rise).total_seconds()) < 1.0, name
            assert abs((mine.los_utc - set_).total_seconds()) < 1.0, name
            assert mine.max_elevation_deg == pytest.approx(max_elevation, abs=0.01), name


def test_range_rate_matches_skyfield(element_sets):
    # Reference: skyfield's frame_latlon_and_rates range rate for the same site and times.
    station = SITES["south"]
    element_set = element_sets["SSO-550"]
    passes = predict_passes(element_set, station, START, START + timedelta(days=1), step_s=20)
    ts = load.timescale()
    satellite = EarthSatellite.from_satrec(element_set.satrec, ts)
    site = wgs84.latlon(station.latitude_deg, station.longitude_deg, elevation_m=station.altitude_m)
    track = passes[0].track
    times = ts.from_datetimes([START + timedelta(seconds=float(s)) for s in track.time_s])
    _, _, distance, _, _, range_rate = (satellite - site).at(times).frame_latlon_and_rates(site)
    assert np.allclose(track.range_km, distance.km, atol=0.01)
    assert np.allclose(track.range_rate_km_s, range_rate.km_per_s, atol=1e-3)


def slant_range_km(radius_km, height_km, elevation_deg):
    """Spherical-Earth slant range, Wertz & Larson (SMAD)."""
    e = radians(elevation_deg)
    return sqrt((radius_km + height_km) ** 2 - (radius_km * cos(e)) ** 2) - radius_km * sin(e)


def test_slant_range_against_spherical_geometry(tmp_path):
    # A near-circular equatorial orbit seen from the equator passes through the zenith;
    # on the equator the geodetic and geocentric verticals agree, so the spherical
    # formula (R = the site's geocentric radius, R + h = the satellite's) applies exactly.
    # Source: Wertz & Larson, SMAD ; tolerance 0.5 %.
    path = tmp_path / "eq.tle"
    write_three_line(path, [("EQ-500", make_tle(99810, height_km=500, inclination_deg=0.0, eccentricity=0.0001))])
    element_set = read_elements(path)[0]
    station = Station("equator", 0.0, 10.0, 0.0)
    p = predict_passes(element_set, station, START, START + timedelta(hours=4), step_s=5)
    p = [x for x in p if not (x.aos_clipped or x.los_clipped)][0]
    assert p.max_elevation_deg > 89.0
    from planner.passes import Observer

    observer = Observer(station, START, 4 * 3600)
    site_radius_km = float(np.linalg.norm(station.ecef_km))
    for when, elevation in ((p.aos_utc, 0.0), (p.tca_utc, p.max_elevation_deg)):
        t_s = (when - START).total_seconds()
        _, r_teme, _ = element_set.satrec.sgp4_array(
            np.array([observer._jd_whole]), np.array([observer._jd_fraction + t_s / 86400.0])
        )
        height_km = float(np.linalg.norm(r_teme[0])) - site_radius_km
        look = observer.look(element_set.satrec, np.array([t_s]))
        expected = slant_range_km(site_radius_km, height_km, elevation)
        assert look.range_km[0] == pytest.approx(expected, rel=0.005)


def test_slant_range_formula_against_independent_geometry():
    # The function above (SMAD's closed form) against geometry derived another way, so a slip in
    # it cannot hide in test_slant_range_against_spherical_geometry.
    # R = 6378.137 km (WGS84 equatorial radius), h = 500 km.
    radius_km, height_km = 6378.137, 500.0
    # 0 deg: the line of sight is tangent to the sphere, a right angle at the station
    # (Pythagoras): d = sqrt((R + h)^2 - R^2) = sqrt(h (2R + h)) = sqrt(500 * 13256.274)
    # = sqrt(6628137) = 2574.52 km, worked by hand.
    assert slant_range_km(radius_km, height_km, 0) == pytest.approx(2574.52, abs=0.01)
    assert slant_range_km(radius_km, height_km, 0) == pytest.approx(sqrt(height_km * (2 * radius_km + height_km)), rel=1e-12)
    # 10 deg: Earth-geometry triangle of Wertz & Larson, SMAD (ch. 5, from memory): nadir angle eta from
    # sin eta = R cos E / (R + h), Earth central angle lambda = 90 deg - E - eta, then the law of
    # cosines d^2 = R^2 + (R + h)^2 - 2 R (R + h) cos lambda: 1695.09 km.
    e = radians(10.0)
    eta = np.arcsin(radius_km * cos(e) / (radius_km + height_km))
    central = np.pi / 2 - e - eta
    by_cosines = sqrt(radius_km**2 + (radius_km + height_km) ** 2 - 2 * radius_km * (radius_km + height_km) * cos(central))
    assert by_cosines == pytest.approx(1695.09, abs=0.01)
    assert slant_range_km(radius_km, height_km, 10) == pytest.approx(by_cosines, rel=1e-9)
    # 90 deg: straight up the range is the height.
    assert slant_range_km(radius_km, height_km, 90) == pytest.approx(height_km, abs=1e-9)


def test_doppler_sign_and_leo_peak(element_sets):
    # f_d = -f * range_rate / c (first-order Doppler): approaching (range falling)
    # is a positive shift. The LEO peak at 435 MHz stays under about 11 kHz
    # (common practice, no published source).
    station = SITES["high-north"]
    targets = [Target(e, frequencies_hz={"downlink": 435e6}) for e in element_sets.values() if e.name != "MID-600-ECC"]
    passes = predict_passes(targets, station, START, START + timedelta(days=1))
    assert passes
    for p in passes:
        doppler = p.track.doppler_hz["downlink"]
        approaching = p.track.range_rate_km_s < 0
        assert np.all(doppler[approaching] > 0) and np.all(doppler[~approaching] <= 0)
        assert np.max(np.abs(doppler)) < 11e3
    full = [p for p in passes if not (p.aos_clipped or p.los_clipped) and p.max_elevation_deg > 30]
    first = full[0].track
    before_tca = first.time_s < (full[0].tca_utc - START).total_seconds() - 30
    assert np.all(first.doppler_hz["downlink"][before_tca] > 0)


def test_flat_mask_removes_low_passes_and_shortens_the_rest(element_sets):
    # Fact of the geometry: raising the minimum elevation can only remove passes or
    # shorten them, and AOS/LOS then sit on the new minimum.
    station0 = SITES["south"]
    station30 = Station("south", station0.latitude_deg, station0.longitude_deg, station0.altitude_m, HorizonMask.flat(30.0))
    end = START + timedelta(days=2)
    sats = list(element_sets.values())
    low = [p for p in predict_passes(sats, station0, START, end) if not (p.aos_clipped or p.los_clipped)]
    high = predict_passes(sats, station30, START, end)
    assert 0 < len(high) < len(low)
    assert len(high) == sum(p.max_elevation_deg > 30.0 for p in low)
    for p in high:
        assert p.track.elevation_deg.min() >= 30.0 - 1e-6
        twin = min(low, key=lambda q: abs((q.tca_utc - p.tca_utc).total_seconds()))
        assert twin.aos_utc < p.aos_utc and p.los_utc < twin.los_utc


def test_sector_mask_cuts_exactly_on_the_mask(element_sets):
    # A wall of 40 deg from azimuth 90 to 270 (1-deg ramps): every AOS/LOS must sit on
    # the mask at its azimuth, and no sample may be below the mask.
    mask = HorizonMask.from_points([[0, 0], [89, 0], [90, 40], [270, 40], [271, 0]])
    station = Station("walled", -34.93, 138.60, 50.0, mask)
    end = START + timedelta(days=2)
    passes = predict_passes(list(element_sets.values()), station, START, end)
    assert passes
    from planner.passes import Observer

    observer = Observer(station, START, 2 * 86400)
    for p in passes:
        track = p.track
        assert np.all(track.elevation_deg >= mask.min_elevation_at(track.azimuth_deg) - 1e-3)
        for when, clipped in ((p.aos_utc, p.aos_clipped), (p.los_utc, p.los_clipped)):
            if clipped:
                continue
            element_set = next(e for e in element_sets.values() if e.norad_id == p.norad_id)
            look = observer.look(element_set.satrec, np.array([(when - START).total_seconds()]))
            assert look.elevation_deg[0] == pytest.approx(mask.min_elevation_at(look.azimuth_deg)[0], abs=0.01)


def test_window_edges_clip_and_flag(element_sets):
    # A window starting in the middle of a pass clips it at the start and flags it.
    station = SITES["south"]
    element_set = element_sets["SSO-550"]
    full = predict_passes(element_set, station, START, START + timedelta(days=1))[0]
    mid = full.tca_utc
    left = predict_passes(element_set, station, mid, mid + timedelta(hours=1))
    assert left[0].aos_clipped and left[0].aos_utc == mid
    assert abs((left[0].los_utc - full.los_utc).total_seconds()) < 1e-3
    right = predict_passes(element_set, station, mid - timedelta(hours=1), mid)
    assert right[-1].los_clipped and right[-1].los_utc == mid
    assert predict_passes(element_set, station, mid, mid) == []


def test_tracks_are_evenly_stepped_and_end_at_los(element_sets):
    station = SITES["high-north"]
    passes = predict_passes(element_sets["POLAR-800"], station, START, START + timedelta(days=1), step_s=10)
    for p in passes:
        steps = np.diff(p.track.time_s)
        assert np.allclose(steps[:-1], 10.0)
        assert 0 < steps[-1] <= 10.0 + 1e-9
        assert p.track.time_s[-1] == pytest.approx((p.los_utc - START).total_seconds(), abs=1e-6)

"""Where the satellite is for a one-off budget: at a pass's culmination, at a time, or at a chosen
elevation (and range) on its orbit.

``budget_geometry`` picks exactly one of the three; its messages name the ``planner budget``
options that set each value (--pass, --at, --elevation-deg, --range-km, --azimuth-deg).
"""

from __future__ import annotations

from datetime import datetime

import numpy as np

from planner.errors import UserError, warn


def budget_geometry(
    study,
    satellite_name: str,
    pass_number: int | None = None,
    at: datetime | None = None,
    elevation_deg: float | None = None,
    range_km: float | None = None,
    azimuth_deg: float | None = None,
    direction: str = "downlink",
):
    """(azimuth_deg, elevation_deg, range_km, label, the pass or None) for a budget of ``satellite_name``.

    Exactly one of ``pass_number`` (1 = the first pass of the window; the budget is at its TCA),
    ``at`` (a UTC time) and ``elevation_deg`` (with ``range_km``, default the range to the orbit's
    mean radius, and ``azimuth_deg``, default 0) is given.

    A time when the satellite is below the horizon mask is refused for the ``"uplink"``
    direction (the station would transmit into the mask: trees, hills, buildings), naming the
    next pass's AOS; for the downlink it only warns, since listening there is harmless and the
    budget still says what the pattern would receive.
    """
    from planner.link.budget import ORBIT_RADIUS_MARGIN_KM, orbit_radii_km, slant_range_km, slant_range_limits_km
    from planner.output.export import iso_utc
    from planner.passes import Observer, predict_passes

    target = next(t for t in study.targets if t.display_name == study.satellite_config(satellite_name).name)
    chosen = [x is not None for x in (pass_number, at, elevation_deg)]
    if sum(chosen) != 1:
        raise UserError("budget: give exactly one of --pass N, --at ISO_TIME or --elevation-deg E")
    if pass_number is not None:
        found = predict_passes(target, study.station, study.start_utc, study.end_utc, step_s=study.step_s)
        if not 1 <= pass_number <= len(found):
            raise UserError(
                f"--pass: {pass_number} is out of range; {target.display_name} has {len(found)} passes in the window (1 to {len(found)})"
            )
        chosen_pass = found[pass_number - 1]
        observer = Observer(study.station, chosen_pass.tca_utc, 0.0)
        look = observer.look(target.element_set.satrec, np.array([0.0]))
        return (
            look.azimuth_deg[0],
            look.elevation_deg[0],
            look.range_km[0],
            f"TCA of pass {pass_number}, {iso_utc(chosen_pass.tca_utc)}",
            chosen_pass,
        )
    if at is not None:
        from planner.elements import check_element_age

        moment = at
        check_element_age([target.element_set], moment, moment, allow_stale=study.allow_stale)
        look = Observer(study.station, moment, 0.0).look(target.element_set.satrec, np.array([0.0]))
        if not np.isfinite(look.elevation_deg[0]):
            raise UserError(f"--at: SGP4 cannot propagate {target.display_name} to {iso_utc(moment)}")
        mask_deg = study.station.mask.min_elevation_at(look.azimuth_deg)[0]
        if look.elevation_deg[0] < mask_deg:
            said = (
                f"{target.display_name} is below the horizon mask at {iso_utc(moment)} "
                f"(elevation {look.elevation_deg[0]:.1f} deg, mask {mask_deg:.1f} deg at azimuth {look.azimuth_deg[0]:.0f} deg)"
            )
            if direction == "uplink":
                raise UserError(f"--at: {said}, so the station cannot transmit to it; {_next_aos(study, target, moment)}")
            warn(said)
        return look.azimuth_deg[0], look.elevation_deg[0], look.range_km[0], iso_utc(moment), None
    assert elevation_deg is not None  # exactly one of the three is given (checked above)
    if not -90.0 <= elevation_deg <= 90.0:
        raise UserError(f"--elevation-deg: {elevation_deg:g} is out of range; allowed -90 to 90")
    if azimuth_deg is not None and not np.isfinite(azimuth_deg):
        raise UserError(f"--azimuth-deg: {azimuth_deg:g} is not a finite number; allowed e.g. 0 to 360")
    azimuth = float(azimuth_deg or 0.0) % 360.0
    satrec = target.element_set.satrec
    if range_km is None:
        if elevation_deg < 0:
            raise UserError("--elevation-deg: below 0 give --range-km as well")
        radius_km = orbit_radii_km(satrec)[1]
        range_km = float(slant_range_km(elevation_deg, radius_km, study.station, azimuth))
        label = (
            f"elevation {elevation_deg:g} deg, range {range_km:.0f} km to the orbit's mean radius {radius_km:.0f} km "
            "from the station's WGS84 position"
        )
    else:
        if not np.isfinite(range_km) or range_km <= 0:
            raise UserError(f"--range-km: {range_km:g} is out of range; allowed a finite number more than 0")
        shortest, longest = slant_range_limits_km(satrec, study.station, elevation_deg, azimuth)
        if not shortest <= range_km <= longest:
            perigee, _, apogee = orbit_radii_km(satrec)
            raise UserError(
                f"--range-km: {range_km:g} km is out of reach of {target.display_name}'s orbit at elevation {elevation_deg:g} deg; "
                f"allowed {shortest:.0f} to {longest:.0f} km (the straight lines to its perigee and apogee radii, "
                f"{perigee:.0f} and {apogee:.0f} km, widened by {ORBIT_RADIUS_MARGIN_KM:g} km)"
            )
        label = f"elevation {elevation_deg:g} deg, range {range_km:g} km"
    return azimuth, elevation_deg, range_km, label, None


def _next_aos(study, target, moment: datetime) -> str:
    """Where the next pass of ``target`` after ``moment`` begins, as words for an error message."""
    from planner.output.export import iso_utc
    from planner.passes import predict_passes

    end = study.end_utc
    if moment < end:
        found = predict_passes(target, study.station, max(moment, study.start_utc), end, step_s=study.step_s)
        later = [p for p in found if p.aos_utc >= moment]
        if later:
            return f"its next pass in the window has AOS at {iso_utc(later[0].aos_utc)}; give an --at from that pass"
    return f"it has no pass in the window after then (the window ends at {iso_utc(end)}); give an --at inside one of its passes"

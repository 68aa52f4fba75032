"""The `budget` command: the link budget as a ladder of terms at one moment or elevation."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Optional

import numpy as np
import typer
from rich.table import Table

from planner.cli import common
from planner.cli.app import app
from planner.errors import UserError


def _geometry_for_budget(study, satellite_name, pass_number, at, elevation_deg, range_km, azimuth_deg):
    """(azimuth_deg, elevation_deg, range_km, time label, the pass or None) for a budget."""
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
            raise UserError(f"--pass: {pass_number} is out of range; {target.display_name} has {len(found)} passes in the window (1 to {len(found)})")
        chosen_pass = found[pass_number - 1]
        observer = Observer(study.station, chosen_pass.tca_utc, 0.0)
        look = observer.look(target.element_set.satrec, np.array([0.0]))
        return look.azimuth_deg[0], look.elevation_deg[0], look.range_km[0], f"TCA of pass {pass_number}, {iso_utc(chosen_pass.tca_utc)}", chosen_pass
    if at is not None:
        from planner.elements import check_element_age

        moment = common.parse_utc("--at", at)
        check_element_age([target.element_set], moment, moment, allow_stale=study.allow_stale)
        look = Observer(study.station, moment, 0.0).look(target.element_set.satrec, np.array([0.0]))
        if not np.isfinite(look.elevation_deg[0]):
            raise UserError(f"--at: SGP4 cannot propagate {target.display_name} to {iso_utc(moment)}")
        if look.elevation_deg[0] < study.station.mask.min_elevation_at(look.azimuth_deg)[0]:
            from planner.errors import warn

            warn(f"{target.display_name} is below the horizon mask at {iso_utc(moment)} (elevation {look.elevation_deg[0]:.1f} deg)")
        return look.azimuth_deg[0], look.elevation_deg[0], look.range_km[0], iso_utc(moment), None
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
        label = (f"elevation {elevation_deg:g} deg, range {range_km:.0f} km to the orbit's mean radius {radius_km:.0f} km "
                 "from the station's WGS84 position")
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


def _print_exposure(study, out) -> None:
    """RF exposure estimate for the station transmitter at each uplink frequency."""
    from planner.link.safety import CAUTION, exposure_table, min_distance_m

    if study.scenario.transmitter is None:
        return
    for sat in study.satellites:
        if sat.uplink_mhz is None:
            continue
        setup = study.uplink_setup(sat.name)
        eirp_w = 10.0 ** (setup.eirp_dbw / 10.0)
        rows = exposure_table(eirp_w, setup.frequency_hz)
        print(f"RF exposure near the station antenna, {sat.uplink_mhz:g} MHz uplink to {sat.name}, EIRP {eirp_w:.1f} W:", file=out)
        for row in rows:
            flag = "within" if row.within_limit else "ABOVE"
            print(f"  {row.distance_m:5.1f} m: {row.power_density_mw_cm2:8.4f} mW/cm^2 ({flag} the general-public limit {row.limit_mw_cm2:.3f})", file=out)
        print(f"  keep the public at least {min_distance_m(eirp_w, setup.frequency_hz):.1f} m from the antenna (far-field estimate)", file=out)
    print(CAUTION, file=out)


@app.command()
def budget(
    scenario: Path = typer.Argument(..., help="Scenario TOML file."),
    satellite: str = typer.Option(..., "--satellite", help="Satellite name (or catalog number) from the scenario."),
    candidate: Optional[str] = typer.Option(None, "--candidate", help="Candidate set-up (required for the downlink)."),
    pass_number: Optional[int] = typer.Option(None, "--pass", help="Budget at the TCA of the N-th pass (1 = first) in the window."),
    at: Optional[str] = typer.Option(None, "--at", help="Budget at this time, ISO 8601 UTC."),
    elevation_deg: Optional[float] = typer.Option(None, "--elevation-deg", help="Budget at this elevation (deg)."),
    range_km: Optional[float] = typer.Option(None, "--range-km", help="Slant range with --elevation-deg (default: from the orbit height)."),
    azimuth_deg: Optional[float] = typer.Option(None, "--azimuth-deg", help="Azimuth with --elevation-deg (default 0)."),
    direction: str = typer.Option("downlink", "--direction", help="downlink (satellite to station) or uplink."),
    station: Optional[str] = typer.Option(None, "--station", help="Station of the scenario's network (default: the home station)."),
    format: str = typer.Option("table", "--format", help="table or json."),
    output: Optional[Path] = typer.Option(None, "--output", help="Write JSON to this file (atomically)."),
    allow_stale: bool = typer.Option(False, "--allow-stale", help="Go on with element sets more than 30 days from the window."),
    force: bool = common.FORCE,
) -> None:
    """Print the link budget as a ladder of terms, each one recomputable by hand."""
    from planner.link.budget import LADDER, evaluate, ladder_values, pass_budget
    from planner.output.export import to_json

    if format not in ("table", "json"):
        raise UserError(f"--format: {format!r} is not a format here; allowed: table, json")
    if direction not in ("downlink", "uplink"):
        raise UserError(f"--direction: {direction!r}; allowed: downlink, uplink")
    study = common.load_study(scenario, allow_stale, station)
    rules = common.write_rules(force, scenario=study.scenario, inputs=(scenario,))
    common.check_outputs(rules, {"--output": output})
    sat_name = study.satellite_config(satellite).name
    if direction == "downlink":
        if candidate is None:
            allowed = ", ".join(study.candidate_names) or "none in this scenario"
            raise UserError(f"--candidate: a downlink budget needs a candidate set-up; allowed: {allowed}")
        study.candidate(candidate)  # refuse an unknown candidate before any computation
    az, el, rng, label, chosen_pass = _geometry_for_budget(study, satellite, pass_number, at, elevation_deg, range_km, azimuth_deg)
    setup = study.downlink_setup(sat_name, candidate) if direction == "downlink" else study.uplink_setup(sat_name)
    row = evaluate(setup, [az], [el], [rng]).iloc[0]
    values = ladder_values(setup, row)
    summary = None
    if chosen_pass is not None:
        along = pass_budget(setup, chosen_pass)
        threshold = study.scenario.criteria.min_margin_db
        steps = np.diff(along["time_s"].to_numpy(), append=along["time_s"].to_numpy()[-1])
        summary = {
            "samples": int(len(along)),
            "min_margin_db": float(along["margin_db"].min()),
            "median_margin_db": float(along["margin_db"].median()),
            "max_margin_db": float(along["margin_db"].max()),
            "seconds_at_or_above_min_margin": float(steps[along["margin_db"].to_numpy() >= threshold].sum()),
            "min_margin_criterion_db": threshold,
        }
    if format == "json":
        document = {
            "satellite": sat_name,
            "direction": direction,
            "candidate": setup.candidate,
            "geometry": label,
            **values,
            "noise": setup.noise_terms,
            "notes": setup.notes,
            "terms": [{"key": k, "value": values[k], "unit": u, "meaning": m} for k, u, m in LADDER],
        }
        if summary:
            document["pass_summary"] = summary
        common.emit(to_json(document), output, rules)
        _print_exposure(study, sys.stderr)
        return
    if output is not None:
        raise UserError("--output: the ladder is for the terminal; use --format json with --output")
    table = Table(title=f"{direction} budget: {sat_name} -> {setup.candidate}; {label}", title_justify="left")
    for heading, justify in (("term", "left"), ("value", "right"), ("unit", "left"), ("meaning", "left")):
        table.add_column(heading, justify=justify)
    for key, unit, meaning in LADDER:
        value = values[key]
        if value is None:
            continue
        table.add_row(key, f"{value:.2f}", unit, meaning)
    console = common.stdout()
    console.print(table)
    noise = ", ".join(f"{k} {v:.1f}" for k, v in setup.noise_terms.items())
    console.print(f"noise temperatures (K): {noise}")
    for note in setup.notes:
        console.print(f"note: {note}", soft_wrap=True, markup=False)
    if summary:
        console.print(
            f"along the pass ({summary['samples']} samples): margin min {summary['min_margin_db']:.1f} dB, "
            f"median {summary['median_margin_db']:.1f} dB, max {summary['max_margin_db']:.1f} dB; "
            f"{summary['seconds_at_or_above_min_margin']:.0f} s at or above {summary['min_margin_criterion_db']:g} dB"
        )
    _print_exposure(study, sys.stdout)

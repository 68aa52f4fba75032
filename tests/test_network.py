"""Several stations in one scenario, and whole catalogs as targets."""

from __future__ import annotations

import csv
import io
import json

import numpy as np
import pytest

from planner.errors import UserError
from planner.scenario import load_scenario
from planner.study import Study
from tests.conftest import DEMO, ROOT
from tests.conftest import run_planner as run
from tests.orbit_factory import make_tle, write_three_line

# Two more invented club sites: one in the southern hemisphere, one far north.
NETWORK = """
[[network_station]]
name = "Southern partner site"
latitude_deg = -33.95
longitude_deg = 18.47
altitude_m = 60
horizon_mask = 4
noise_environment = "residential"

[[network_station]]
name = "Northern partner site"
latitude_deg = 68.4
longitude_deg = 17.4
altitude_m = 300
"""


def scenario_text(days=0.5):
    return DEMO.read_text().replace('"../', f'"{ROOT}/').replace("days = 7", f"days = {days}")


@pytest.fixture(scope="module")
def network_scenario(tmp_path_factory):
    path = tmp_path_factory.mktemp("net") / "network.toml"
    path.write_text(scenario_text() + NETWORK)
    return path


def test_each_station_sees_its_own_sky(network_scenario):
    # Per-station results: the same satellites over different sites give different passes,
    # and the study rebuilt for a station equals the one loaded for it directly.
    scenario = load_scenario(network_scenario)
    home = Study.from_scenario(scenario)
    south = home.at_station("Southern partner site")
    direct = Study.from_scenario(scenario, station="Southern partner site")
    a, b = south.passes(), direct.passes()
    assert [(p.norad_id, p.aos_utc) for p in a] == [(p.norad_id, p.aos_utc) for p in b]
    assert {(p.norad_id, p.aos_utc) for p in a} != {(p.norad_id, p.aos_utc) for p in home.passes()}
    assert south.station.latitude_deg == -33.95 and home.station.latitude_deg == scenario.station.latitude_deg


def test_week_csv_has_a_row_per_station_candidate_and_satellite(network_scenario):
    result = run("week", network_scenario, "--format", "csv", "--quiet", "--candidate", "turnstile-close")
    assert result.returncode == 0, result.stderr
    rows = list(csv.DictReader(io.StringIO(result.stdout)))
    assert list(rows[0])[-1] == "station"
    stations = {r["station"] for r in rows}
    assert stations == {"Cobbleford Fell Radio Society", "Southern partner site", "Northern partner site"}
    assert len(rows) == 3 * 5


def test_compare_json_per_station_and_station_filter(network_scenario):
    result = run(
        "compare", network_scenario, "--format", "json", "--quiet", "--candidate", "turnstile-close", "--candidate", "turnstile-far"
    )
    assert result.returncode == 0, result.stderr
    document = json.loads(result.stdout)
    assert [s["station"] for s in document["stations"]][0] == "Cobbleford Fell Radio Society"
    for entry in document["stations"]:
        assert entry["recommended"] in ("turnstile-close", "turnstile-far") and entry["explanation"]
    one = json.loads(
        run(
            "compare",
            network_scenario,
            "--format",
            "json",
            "--quiet",
            "--station",
            "Northern partner site",
            "--candidate",
            "turnstile-close",
        ).stdout
    )
    assert "stations" not in one and one["recommended"] == "turnstile-close"  # a single station keeps the contract
    bad = run("passes", network_scenario, "--station", "Nowhere")
    assert bad.returncode == 2 and "Nowhere" in bad.stderr and "Traceback" not in bad.stderr


def test_station_names_must_be_unique(tmp_path):
    path = tmp_path / "dup.toml"
    path.write_text(scenario_text() + NETWORK.replace("Northern partner site", "Southern partner site"))
    with pytest.raises(UserError, match="network station"):
        load_scenario(path)


@pytest.fixture(scope="module")
def catalog_scenario(tmp_path_factory):
    folder = tmp_path_factory.mktemp("catalog")
    rng = np.random.default_rng(11)
    entries = []
    for k in range(120):  # an invented catalog: mixed LEO heights and inclinations
        orbit = dict(
            norad_id=80000 + k,
            height_km=float(rng.uniform(400, 1100)),
            inclination_deg=float(rng.choice([0.0, 20.0, 51.6, 82.0, 97.6])),
            raan_deg=float(rng.uniform(0, 360)),
            mean_anomaly_deg=float(rng.uniform(0, 360)),
        )
        entries.append((f"CAT-{k:03d}", make_tle(**orbit)))
    write_three_line(folder / "catalog.tle", entries)
    text = scenario_text(days=1)
    text = (
        text[: text.index("[[satellite]]")]
        + f"""
[catalog]
elements = "{folder / "catalog.tle"}"
downlink_mhz = 436.0
tx_power_w = 1.0
modulation = "gmsk"
data_rate_bps = 9600
"""
        + text[
            text.index(
                "# ---------------------------------------------------------------------------------\n# The station's receive chain"
            ) :
        ]
    )
    path = folder / "catalog.toml"
    path.write_text(text)
    return path


def test_catalog_objects_become_targets(catalog_scenario):
    study = Study.from_scenario(load_scenario(catalog_scenario))
    assert len(study.targets) == 120 and len(study.satellites) == 120
    assert study.satellite_config("80007").name == "CAT-007 (80007)"


def test_rank_lists_the_catalog_by_usable_time(catalog_scenario):
    result = run("rank", catalog_scenario, "--candidate", "turnstile-far", "--format", "json", "--quiet")
    assert result.returncode == 0, result.stderr
    rows = json.loads(result.stdout)
    assert len(rows) == 120
    minutes = [r["usable_minutes"] for r in rows]
    assert minutes == sorted(minutes, reverse=True) and minutes[0] > 0
    # Equatorial objects never rise above a station at 52 deg north (geometry: an orbit of
    # inclination 0 at 400-1100 km stays below the horizon beyond about 30 deg of latitude).
    equatorial = [r for r in rows if r["satellite"].startswith("CAT-") and r["passes"] == 0]
    assert equatorial and all(r["usable_minutes"] == 0 for r in equatorial)
    table = run("rank", catalog_scenario, "--candidate", "turnstile-far", "--top", "5", "--quiet")
    assert table.returncode == 0 and "120 objects ranked" in table.stdout


def test_catalog_size_guard(catalog_scenario, tmp_path):
    path = tmp_path / "small.toml"
    path.write_text(catalog_scenario.read_text().replace("data_rate_bps = 9600\n", "data_rate_bps = 9600\nmax_objects = 50\n", 1))
    result = run("passes", path)
    assert result.returncode == 2 and "max_objects" in result.stderr

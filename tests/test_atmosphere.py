"""Gaseous slant-path loss against the itur reference implementation of ITU-R P.676.

Sources: docs/references.md (full citations; values not yet checked against the published text).
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from planner.errors import UserError
from planner.link import atmosphere

MHZ = 1e6
REPO = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize(
    "frequency_hz, elevation_deg",
    [(145.9 * MHZ, 3.3), (436.5 * MHZ, 0.7), (436.5 * MHZ, 5.5), (436.5 * MHZ, 37.0), (2245 * MHZ, 12.4)],
)
def test_matches_itur_exact_mode(frequency_hz, elevation_deg):
    # Reference: itur (ITU-R P.676 Annex 1 line-by-line, 'exact' mode; its 'approx' mode is 0
    # below ~1 GHz), standard atmosphere (P.835: 1013.25 hPa, 288.15 K, 7.5 g/m3 at sea level).
    # The planner's value comes from a cached grid and a spline: within 0.01 dB of the direct call.
    from itur.models import itu676

    reference = float(
        itu676.gaseous_attenuation_slant_path(frequency_hz / 1e9, elevation_deg, 7.5, 1013.25, 288.15, mode="exact").value
    )
    assert reference > 0
    assert atmosphere.gaseous_loss_db(frequency_hz, elevation_deg) == pytest.approx(reference, abs=0.01)


def test_zenith_loss_is_the_integral_of_specific_attenuation():
    # Straight up there is no bending: A = integral from the station height to 100 km of gamma(h) dh,
    # gamma from itur's P.676 line-by-line specific attenuation in the P.835 standard profiles.
    # An independent trapezoid integral checks the layer sum, at sea level and at 2 km.
    from itur.models import itu676, itu835

    f_hz = 436.5 * MHZ
    for station_km in (0.0, 2.0):
        h = station_km + np.geomspace(1e-4, 100.0 - station_km, 2000) - 1e-4
        gamma = itu676.gamma_exact(
            f_hz / 1e9,
            itu835.standard_pressure(h).value,
            itu835.standard_water_vapour_density(h, rho_0=7.5).value,
            itu835.standard_temperature(h).to("K").value,
        ).value
        integral_db = float(np.sum(0.5 * (gamma[1:] + gamma[:-1]) * np.diff(h)))
        assert atmosphere.gaseous_loss_db(f_hz, 90.0, altitude_m=station_km * 1000) == pytest.approx(integral_db, rel=0.01)


def test_uhf_well_under_one_db_above_5_deg():
    # ITU-R P.676: well under 1 dB on UHF slant paths above 5 deg elevation.
    elevation = np.linspace(5.0, 90.0, 50)
    for f_hz in (300 * MHZ, 436.5 * MHZ, 1000 * MHZ):
        loss = atmosphere.gaseous_loss_db(f_hz, elevation)
        assert np.all(loss > 0) and np.all(loss < 0.5)


def test_loss_grows_as_elevation_falls():
    elevation = np.linspace(0.5, 90.0, 400)
    loss = atmosphere.gaseous_loss_db(436.5 * MHZ, elevation)
    assert np.all(np.diff(loss) < 0)
    # Roughly 1/sin(el) above ~10 deg (flat-Earth slab): 30 deg is about twice the zenith value.
    assert atmosphere.gaseous_loss_db(436.5 * MHZ, 30.0) / atmosphere.gaseous_loss_db(436.5 * MHZ, 90.0) == pytest.approx(
        2.0, rel=0.02
    )


def test_higher_station_loses_less():
    low = atmosphere.gaseous_loss_db(436.5 * MHZ, [2.0, 10.0, 90.0])
    high = atmosphere.gaseous_loss_db(436.5 * MHZ, [2.0, 10.0, 90.0], altitude_m=1500.0)
    assert np.all(high < low) and np.all(high > 0.5 * low)


def test_array_in_array_out_and_clipping():
    elevation = np.array([[-5.0, 0.0, 0.5], [10.0, 45.0, 90.0]])
    loss = atmosphere.gaseous_loss_db(436.5 * MHZ, elevation)
    assert isinstance(loss, np.ndarray) and loss.shape == elevation.shape
    assert isinstance(atmosphere.gaseous_loss_db(436.5 * MHZ, 10.0), float)
    # Below MIN_ELEVATION_DEG the value is the one at 0.5 deg.
    assert loss[0, 0] == loss[0, 1] == loss[0, 2] == atmosphere.gaseous_loss_db(436.5 * MHZ, 0.5)
    with pytest.raises(UserError):
        atmosphere.gaseous_loss_db(-1.0, 10.0)
    with pytest.raises(UserError):
        atmosphere.gaseous_loss_db(436.5 * MHZ, 10.0, altitude_m=20_000.0)


def test_neglected_list_names_the_main_omissions():
    text = " ".join(atmosphere.NEGLECTED).lower()
    for topic in ("rain", "scintillation", "faraday", "multipath", "doppler", "interference"):
        assert topic in text
    assert all(isinstance(item, str) and "\n" not in item for item in atmosphere.NEGLECTED)


def test_itur_is_not_imported_with_the_module():
    # Importing itur costs ~1.5 s, so planner.link.atmosphere must import it only when it computes.
    env = dict(os.environ, PYTHONPATH=str(REPO))
    out = subprocess.run(
        [sys.executable, "-c", "import sys, planner.link.atmosphere; print('itur' in sys.modules)"],
        cwd=REPO,
        env=env,
        capture_output=True,
        text=True,
        check=True,
    )
    assert out.stdout.strip() == "False"


def test_mean_radiating_temperature_p372():
    # ITU-R P.372-16 eq. 11: T_mr = 37.34 + 0.81 T_s; at the P.835 sea-level 288.15 K that is 270.74 K.
    # Older editions: T_mr = 1.12 T_s - 50 K (272.7 K) and "about 275 K" for clear air: within 2 %.
    assert atmosphere.reference_surface_temperature_k(0.0) == pytest.approx(288.15)
    # P.835 reference at 1 km: about 8.5 C (the module notes), 6.5 K/km lapse rate.
    assert atmosphere.reference_surface_temperature_k(1000.0) == pytest.approx(281.65, abs=0.05)
    t_mr = atmosphere.mean_radiating_temperature_k(288.15)
    assert t_mr == pytest.approx(270.74, abs=0.01)
    assert t_mr == pytest.approx(1.12 * 288.15 - 50.0, rel=0.02)
    assert t_mr == pytest.approx(275.0, rel=0.02)


def test_clear_sky_brightness_p372_eq_10():
    # T = T_ext 10^(-A/10) + T_mr (1 - 10^(-A/10)) with A the slant-path loss at the same elevation.
    f_hz = 436.5 * MHZ
    elevation = np.array([0.5, 5.0, 30.0, 90.0])
    loss = atmosphere.gaseous_loss_db(f_hz, elevation)
    tau = 10 ** (-loss / 10)
    t_mr = atmosphere.mean_radiating_temperature_k(288.15)
    assert atmosphere.clear_sky_brightness_k(f_hz, elevation, background_k=0.0) == pytest.approx(t_mr * (1 - tau))
    assert atmosphere.clear_sky_brightness_k(f_hz, elevation, background_k=40.0) == pytest.approx(40.0 * tau + t_mr * (1 - tau))
    # A background at T_mr is seen unchanged (an isothermal absorber in equilibrium).
    assert atmosphere.clear_sky_brightness_k(f_hz, elevation, background_k=t_mr) == pytest.approx(np.full(4, t_mr))
    assert isinstance(atmosphere.clear_sky_brightness_k(f_hz, 10.0, background_k=40.0), float)
    with pytest.raises(UserError):
        atmosphere.clear_sky_brightness_k(f_hz, 10.0, background_k=-1.0)

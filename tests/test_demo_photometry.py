"""The invented multi-band photometry of the Brume Field (demo/brume_photometry.csv).

These tests are about the demo data's provenance and self-consistency, not physics: the catalog
is invented (demo/make_photometry.py), and its magnitudes are checked against the same public
model functions that made them.
"""

import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from redcorr.extinction import band_extinction
from redcorr.io.curves import load_curve
from redcorr.io.filters import load_band
from redcorr.io.intrinsic import load_intrinsic_colours
from redcorr.io.maps import open_map
from redcorr.sed import blackbody

DEMO = Path(__file__).resolve().parent.parent / "demo"
CSV = "brume_photometry.csv"
BANDS = {"Bmag": "bessell-B", "Vmag": "bessell-V", "Rmag": "bessell-R", "Imag": "bessell-I",
         "Jmag": "twomass-J", "Hmag": "twomass-H", "Kmag": "twomass-Ks"}
SCATTER = 0.015  # the intrinsic scatter demo/make_photometry.py adds, not in the e_ columns
CLOUD_PC = 400.0  # the Brume Cloud's distance, demo/make_map3d.py


@pytest.fixture(scope="module")
def stars():
    return pd.read_csv(DEMO / CSV, comment="#")


def test_demo_photometry_is_invented_and_reproducible(tmp_path, stars):
    # provenance of the demo data, not physics: the script rebuilds the committed file
    text = (DEMO / CSV).read_text()
    assert text.startswith("#") and "invented" in text.splitlines()[0] and "make_photometry.py" in text
    subprocess.run([sys.executable, str(DEMO / "make_photometry.py"), str(tmp_path)], check=True,
                   capture_output=True)
    fresh, committed = (tmp_path / CSV).read_text(), (DEMO / CSV).read_text()
    assert [line for line in fresh.splitlines() if line.startswith("#")] == [
        line for line in committed.splitlines() if line.startswith("#")]
    # the numbers agree to the last printed digit (another CPU or libm may flip a rounding: one unit allowed)
    again = pd.read_csv(tmp_path / CSV, comment="#", dtype=str)
    kept = pd.read_csv(DEMO / CSV, comment="#", dtype=str)
    assert list(again.columns) == list(kept.columns) and len(again) == len(kept)
    assert list(again["star"]) == list(kept["star"])
    for col in kept.columns[1:]:
        unit = 10.0 ** -max(len(v.partition(".")[2]) for v in kept[col])
        diff = np.abs(again[col].astype(float) - kept[col].astype(float))
        assert diff.max() <= 1.001 * unit, col
    catalog = pd.read_csv(DEMO / "brume_catalog.csv", comment="#").iloc[: len(stars)]
    assert 190 <= len(stars) <= 200
    assert list(stars["star"]) == list(catalog["star"])
    assert np.array_equal(stars[["ra", "dec"]], catalog[["ra", "dec"]])
    assert list(stars.columns) == [
        "star", "ra", "dec", "parallax", "e_parallax", *[c for b in BANDS for c in (b, "e_" + b)],
        "teff_true", "distance_true", "ebv_true",
    ]


def test_demo_photometry_true_reddening_is_the_3d_map_at_the_star(stars):
    # self-consistency of the invented data with the invented 3D map (demo/make_map3d.py)
    cube = open_map(DEMO / "brume_ebv_3d.fits")
    ra, dec, dist = stars["ra"].to_numpy(), stars["dec"].to_numpy(), stars["distance_true"].to_numpy()
    ebv, flags = cube.reddening_at(ra, dec, distance=dist)
    assert np.all(flags == 0)
    np.testing.assert_allclose(stars["ebv_true"], ebv, rtol=0, atol=0.5e-4 + 1e-9)  # the file's 4 decimals
    # a quarter in front of the cloud, among them stars on its densest part (whole column at the
    # map's last distance, 4000 pc) whose own E(B-V) is the thin disk's alone
    column, _ = cube.reddening_at(ra, dec, distance=4000.0)
    front = dist < CLOUD_PC
    assert 0.2 <= front.mean() <= 0.3
    on_cloud = front & (column > 0.8) & (stars["ebv_true"] < 0.1)
    assert on_cloud.sum() >= 3
    # the parallaxes scatter about 1000 / d by their errors (the invented noise, Gaussian)
    z = (stars["parallax"] - 1000.0 / dist) / stars["e_parallax"]
    assert abs(z.mean()) < 0.3 and 0.8 < z.std() < 1.25


def test_demo_photometry_matches_the_fit_model_within_its_noise(stars):
    # self-consistency check of the demo data, not an outside reference: the per-star fit's model
    # (redcorr.photometric_reddening), m_b = M_b(T) + 5 log10(d / 10 pc) + A_b(A_V, T; R_V), is rebuilt
    # at the file's true values with the public functions (here A_b by direct band integration,
    # redcorr.extinction.band_extinction, instead of the script's coefficient grid), for the cloud's
    # law f99, R_V = 4.3 (demo/scenario.toml). The residuals must scatter as the stated noise:
    # e_b (the column) and 0.015 mag of intrinsic scatter added in quadrature.
    locus = load_intrinsic_colours("dwarfs")
    curve = load_curve("f99", r_v=4.3)
    teff, dist = stars["teff_true"].to_numpy(float), stars["distance_true"].to_numpy()
    a_v = 4.3 * stars["ebv_true"].to_numpy()
    base = locus.absolute_magnitude(teff, "bessell-V") + 5.0 * np.log10(dist / 10.0)
    z = []
    for column, name in BANDS.items():
        band = load_band(name)
        a_b = np.array([band_extinction(curve, band, blackbody(t), a) for t, a in zip(teff, a_v, strict=True)])
        model = base + locus.magnitude(teff, name) + a_b
        z.append((stars[column] - model) / np.hypot(stars["e_" + column], SCATTER))
    z = np.concatenate(z)
    assert np.all(np.isfinite(z))
    # 1400 residuals: the rms of unit Gaussians is 1 ± 0.02 (its standard error 1/sqrt(2n));
    # generous bounds, as the 4-decimal rounding of magnitudes and errors adds little
    assert abs(z.mean()) < 0.1
    assert 0.85 < np.sqrt(np.mean(z**2)) < 1.15
    assert np.max(np.abs(z)) < 5.5


def test_demo_fit_section_shows_stars_in_front_of_the_cloud(demo_sections):
    """The fit section of ``redcorr demo``: stars in front of the cloud keep a small E(B-V), unlike the map.

    Self-consistency with the invented truth in the file (demo/make_photometry.py): each shown star's
    fit lies within 3 of its errors of the truth (the noise and the 0.015-mag scatter the errors leave
    out); a star in front of the cloud (< 400 pc) has under a fifth of the 2D map's whole column there.
    """
    [out] = [text for title, text in demo_sections.items() if "from its own photometry" in title]
    rows = [line.split() for line in out.splitlines() if line.startswith("BF-")]
    # columns: star, where ("in front" / "behind": two words or one), E(B-V) ± err, T_eff ± err, true, map
    front = [r for r in rows if r[1:3] == ["in", "front"]]
    behind = [r for r in rows if r[1] == "behind"]
    assert len(front) >= 1 and len(behind) >= 1, out
    for row in front + behind:
        fit, err, true, column = float(row[-8]), float(row[-6]), float(row[-2]), float(row[-1])
        assert abs(fit - true) < 3.0 * err, row
        if row in front:
            assert fit < 0.2 * column, row
    assert "shrinks to 0." in out  # the 3D map's prior narrows the errors (a median ratio below 1)

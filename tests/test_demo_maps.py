"""The invented Brume Field map in demo/: small, reproducible, readable in both formats."""

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from redcorr.io import open_map
from redcorr.io._toml import load_toml

DEMO = Path(__file__).resolve().parent.parent / "demo"
FILES = ["brume_ebv_healpix.fits", "brume_av_zea.fits"]


def test_demo_map_files_are_small():
    assert sum((DEMO / name).stat().st_size for name in FILES) < 2 * 1024**2


def test_make_map_is_deterministic(tmp_path):
    subprocess.run([sys.executable, str(DEMO / "make_map.py"), str(tmp_path)], check=True, capture_output=True)
    for name in FILES:
        assert (tmp_path / name).read_bytes() == (DEMO / name).read_bytes(), name


def test_both_formats_agree_over_the_field():
    scn = load_toml(DEMO / "scenario.toml")
    field, cloud = scn["field"], scn["cloud"]
    healpix = open_map(DEMO / "brume_ebv_healpix.fits")
    image = open_map(DEMO / "brume_av_map.toml")
    assert image.unit == "A_V" and image.r_v == cloud["r_v"]
    rng = np.random.default_rng(4)
    radius = field["radius_deg"] * np.sqrt(rng.uniform(0, 1, 500))
    angle = rng.uniform(0, 2 * np.pi, 500)
    dec = field["dec_deg"] + radius * np.sin(angle)
    ra = field["ra_deg"] + radius * np.cos(angle) / np.cos(np.radians(dec))
    e_hp, f_hp = healpix.reddening_at(ra, dec)
    e_im, f_im = image.reddening_at(ra, dec)
    both = (f_hp == 0) & (f_im == 0)
    assert both.mean() > 0.95  # only the masked disc is blank
    # the two pixelisations (0.86' HEALPix, 0.6' image) of one smooth pattern agree closely: half a
    # pixel (< 0.008 deg) of the background, whose slope is ~0.3 mag E(B-V) per degree (demo/make_map.py),
    # is ~0.002 mag; 0.005 (under 1 % of the field's E(B-V) ~0.58) bounds that with a margin; the median
    # leaves out the few positions on the steep filament and core
    assert np.median(np.abs(e_hp[both] - e_im[both])) < 0.005
    # the scenario's numbers: A_V ~2.5 typical, ~6 at the core (demo/scenario.toml). Both are round
    # descriptions: the background alone varies by about +-0.2 mag across the field (a 0.25 mag/deg
    # gradient and a 0.1 mag ripple), hence 0.3; the image's 0.01-deg pixels sample the 0.06-deg-wide
    # core within 0.02 mag of its peak, and 0.2 allows for the scenario rounding the peak to "6"
    a_v = e_hp[both] * cloud["r_v"]
    assert np.median(a_v) == pytest.approx(cloud["a_v_typical"], abs=0.3)
    assert np.nanmax(image.tiles[0].data) == pytest.approx(cloud["a_v_max"], abs=0.2)


def test_demo_section_prints_both_formats(demo_sections):
    [out] = [text for title, text in demo_sections.items() if "dust maps" in title]
    assert "ebv_healpix" in out and "ebv_image" in out
    assert "blank" in out and "outside" in out

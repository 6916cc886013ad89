"""The invented Brume Field maps in demo/: small, reproducible, readable in both formats; the 3D map agrees."""

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord
from astropy.io import fits

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


# --------------------------------------------------------------------------- the distance-resolved map
CUBE = "brume_ebv_3d.fits"


def _field_positions(field, n, seed):
    """n random positions (RA, Dec) uniform over the field's disc."""
    rng = np.random.default_rng(seed)
    radius = field["radius_deg"] * np.sqrt(rng.uniform(0, 1, n))
    angle = rng.uniform(0, 2 * np.pi, n)
    dec = field["dec_deg"] + radius * np.sin(angle)
    return field["ra_deg"] + radius * np.cos(angle) / np.cos(np.radians(dec)), dec


def test_demo_3d_map_is_small_invented_and_reproducible(tmp_path):
    assert (DEMO / CUBE).stat().st_size < 256 * 1024
    with fits.open(DEMO / CUBE) as hdul:
        assert "Invented" in str(hdul[1].header["COMMENT"])
    subprocess.run([sys.executable, str(DEMO / "make_map3d.py"), str(tmp_path)], check=True, capture_output=True)
    assert (tmp_path / CUBE).read_bytes() == (DEMO / CUBE).read_bytes()  # byte-identical: determinism is the point


def test_demo_3d_map_in_front_of_the_cloud_is_the_exponential_disk():
    # make_map3d.py's disk: density n0 exp(-|z|/h), n0 = 0.2 mag/kpc, h = 125 pc (invented); its
    # line-of-sight integral to d at latitude b is n0 h / |sin b| (1 - exp(-d |sin b| / h)) (elementary)
    cube = open_map(DEMO / CUBE)
    ra, dec = _field_positions(load_toml(DEMO / "scenario.toml")["field"], 300, seed=5)
    sin_b = np.abs(np.sin(SkyCoord(ra * u.deg, dec * u.deg).galactic.b.rad))
    ebv, flags = cube.reddening_at(ra, dec, distance=250.0)
    # 250 pc lies between map distances 227 and 264 pc: linear interpolation errs by at most
    # Δd²/8·max|E''| = 37²/8 · n0 |sin b| / h = 6e-5 mag; the cloud (400 pc, sigma 20 pc) adds
    # Q(6.8) ~ 5e-12 of its column at 264 pc; float32 storage 6e-8 relative. Hence 1e-4 mag
    assert np.all(flags == 0)
    np.testing.assert_allclose(ebv, 0.2e-3 * 125 / sin_b * -np.expm1(-250 * sin_b / 125), rtol=0, atol=1e-4)


def test_demo_3d_map_far_out_holds_the_2d_column():
    cube = open_map(DEMO / CUBE)
    flat = open_map(DEMO / "brume_ebv_healpix.fits")
    ra, dec = _field_positions(load_toml(DEMO / "scenario.toml")["field"], 500, seed=4)
    far, f_far = cube.reddening_at(ra, dec, distance=4000.0)
    whole, f_whole = flat.reddening_at(ra, dec)
    both = (f_far == 0) & (f_whole == 0)
    assert both.mean() > 0.95  # only the 2D map's masked disc is blank
    # the 3D map is the 2D pattern less the disk beyond 4000 pc (6e-5 mag), on 0.057-deg pixels
    # (NSIDE 1024) instead of 0.014 deg: the bilinear error h²/8·|f''| on the background's ripple
    # (|f''| ~ 0.1·81/4.3 ~ 2 mag/deg², demo/make_map.py) is ~8e-4; the median leaves out the
    # filament and the core, as for the two 2D formats above
    assert np.median(np.abs(far[both] - whole[both])) < 0.005


def test_demo_section_shows_stars_either_side_of_the_cloud(demo_sections):
    [out] = [text for title, text in demo_sections.items() if "out to a star's distance" in title]
    rows = {line[:21].strip(): line[21:].split() for line in out.splitlines() if line.startswith(
        ("in front of the cloud", "behind the cloud", "beyond the map"))}
    front, behind, beyond = rows["in front of the cloud"], rows["behind the cloud"], rows["beyond the map"]
    # columns: ra_deg dec_deg distance_pc ebv_3d ebv_2d_column flag. The invented map puts all but the
    # thin disk (at most 0.11 mag, demo/make_map3d.py) behind 400 pc
    assert float(front[3]) < 0.1 * float(front[4]) and float(behind[3]) > 0.8 * float(behind[4])
    assert front[5] == behind[5] == "ok" and beyond[5] == "beyond"
    assert "mas" in out and "±" in out and "Bailer-Jones 2015" in out
    assert all(len(line) <= 100 for line in out.splitlines() if line.startswith(("star", "---", "in ", "be")))

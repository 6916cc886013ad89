"""The ``redcorr ebv`` command, run in-process."""

import json

import numpy as np
import pytest
from _synthetic_maps import healpix_values, smooth, write_healpix
from astropy import units as u
from astropy.coordinates import SkyCoord
from published import GALACTIC_CENTRE_ICRS_DEG

from redcorr.cli import main

KEYS = ["ra_deg", "dec_deg", "l_deg", "b_deg", "ebv", "flag"]


@pytest.fixture
def map_file(tmp_path):
    nside = 64
    return write_healpix(tmp_path / "m.fits", healpix_values(nside, "nested"), nside, "NESTED")


def _run(capsys, argv):
    status = main(argv)
    out, err = capsys.readouterr()
    return status, out, err


def test_json_keys_and_values(capsys, map_file):
    status, out, _ = _run(capsys, ["ebv", "--map", str(map_file), "--ra", "101.25", "--ra", "10,20",
                                   "--dec=-27.4,5,-60", "--json"])
    assert status == 0
    rows = json.loads(out)
    assert len(rows) == 3 and all(list(r) == KEYS for r in rows)
    gal = SkyCoord([101.25, 10, 20] * u.deg, [-27.4, 5, -60] * u.deg).galactic
    # astropy.coordinates as reference; JSON carries full doubles, and 1e-9 deg allows a
    # different path through astropy's frame transformations (rounding ~1e-12 deg)
    np.testing.assert_allclose([r["l_deg"] for r in rows], gal.l.deg, atol=1e-9)
    np.testing.assert_allclose([r["b_deg"] for r in rows], gal.b.deg, atol=1e-9)
    np.testing.assert_allclose([r["ra_deg"] for r in rows], [101.25, 10, 20], atol=1e-9)
    # synthetic map of a known f(l, b): bilinear accuracy ~h² (NSIDE 64: h² = 2.6e-4)
    np.testing.assert_allclose([r["ebv"] for r in rows], smooth(gal.l.deg, gal.b.deg), atol=3e-4)
    assert [r["flag"] for r in rows] == [0, 0, 0]


def test_galactic_input_and_table_output(capsys, map_file):
    status, out, _ = _run(capsys, ["ebv", "--map", str(map_file), "--l", "0", "90", "--b", "0"])
    assert status == 0
    lines = out.splitlines()
    assert lines[0].startswith("# map m.fits (healpix, E(B-V), bilinear")
    assert lines[1].split() == KEYS
    gc = lines[3].split()
    # galactic centre (IAU 1958 system, Blaauw et al. 1960, MNRAS 121, 123) in ICRS, as implied
    # by the J2000 pole and node of ESA 1997 (tests/published.py). abs 2e-5 deg: both the
    # reference and the table print five decimals (±5e-6 each), plus the ~6e-6 deg FK5-ICRS tie
    ra, dec = GALACTIC_CENTRE_ICRS_DEG
    assert float(gc[0]) == pytest.approx(ra, abs=2e-5) and float(gc[1]) == pytest.approx(dec, abs=2e-5)


def test_outside_partial_map_prints_null_and_flag(capsys, tmp_path):
    path = write_healpix(tmp_path / "p.fits", [0.5, 0.5], 4, pixels=[0, 1])
    status, out, _ = _run(capsys, ["ebv", "--map", str(path), "--l", "180", "--b=-60", "--json"])
    assert status == 0
    row = json.loads(out)[0]
    assert row["ebv"] is None and row["flag"] == 1
    status, out, _ = _run(capsys, ["ebv", "--map", str(path), "--l", "180", "--b=-60"])
    assert "# flags: 1 = outside" in out


def test_a_v_map_needs_r_v(capsys, map_file):
    status, _, err = _run(capsys, ["ebv", "--map", str(map_file), "--unit", "A_V", "--ra", "1", "--dec", "2"])
    assert status == 2 and "give r_v" in err
    status, out, _ = _run(capsys, ["ebv", "--map", str(map_file), "--unit", "A_V", "--rv", "2",
                                   "--ra", "1", "--dec", "2", "--json"])
    _, plain, _ = _run(capsys, ["ebv", "--map", str(map_file), "--ra", "1", "--dec", "2", "--json"])
    # E(B-V) = A_V / R_V (definition of R_V; common practice, no source); one division: rounding
    assert json.loads(out)[0]["ebv"] == pytest.approx(json.loads(plain)[0]["ebv"] / 2, rel=1e-12)


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["--ra", "10", "--dec", "91"], "--dec=91.0 is outside the allowed range [-90, 90]"),
        (["--l", "10", "--b=-90.5"], "--b=-90.5 is outside the allowed range [-90, 90]"),
        (["--ra", "ten", "--dec", "5"], "--ra='ten' is not a number"),
        (["--ra", "10", "--dec", "nan"], "--dec='nan' must be a finite number"),
        (["--ra", "10"], "--dec is missing"),
        (["--ra", "1", "--dec", "2", "--l", "3", "--b", "4"], "either as --ra and --dec or as --l and --b"),
        (["--ra", "1", "2", "3", "--dec", "1", "2"], "--ra has 3 values and --dec 2"),
        (["--ra", "1", "--dec", "2", "--frame", "nowhere"], "--frame='nowhere' is not known"),
    ],
)
def test_bad_positions(capsys, map_file, argv, message):
    status, out, err = _run(capsys, ["ebv", "--map", str(map_file), *argv])
    assert status == 2 and out == ""
    assert message in err and len(err.strip().splitlines()) == 1


def test_bad_map_file(capsys, tmp_path):
    bad = tmp_path / "bad.fits"
    bad.write_text("hello\n")
    status, _, err = _run(capsys, ["ebv", "--map", str(bad), "--ra", "1", "--dec", "2"])
    assert status == 2 and "not a readable FITS file" in err

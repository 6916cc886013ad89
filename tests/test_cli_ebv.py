"""The ``redcorr ebv`` command, run in-process."""

import json

import numpy as np
import pytest
from _synthetic_maps import healpix_values, smooth, write_healpix
from astropy import units as u
from astropy.coordinates import SkyCoord
from published import GALACTIC_CENTRE_ICRS_DEG
from scipy import integrate

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


# --------------------------------------------------------------------------- distance-resolved (3D) maps
# The test map: a dust density n(l, b) = N0 · smooth(l, b) per pc, uniform along each sight line, so the
# cumulative reddening is E(l, b, r) = N0 · smooth(l, b) · r (the line-of-sight integral of a constant
# density; elementary). It is written in the format of README ("Distance-resolved maps"): one vector column
# of E at the map's distances and a DISTANCES table. Being linear in r with E(0) = 0, the map's linear
# interpolation in distance reproduces it exactly; on the sky it is bilinear (error ~h², h the pixel size).

N0 = 1.0e-4
"""mag of E(B-V) per pc, times smooth(l, b): the test map's dust density (invented)."""
CUBE_DISTANCES = 100.0 * np.arange(1, 31)
"""pc: the test map's 30 distances, out to 3000 pc."""
CUBE_NSIDE = 16
SKY_ATOL = 4.1e-3
"""Bilinear error on smooth(l, b) at NSIDE 16: ~h² = 4π / (12·16²) = 4.1e-3 (as for NSIDE 64 above)."""
FLOAT32 = 1e-6
"""rtol of values read from the float32 map column (rounding 6e-8 relative) and combined linearly."""
KEYS_3D = ["ra_deg", "dec_deg", "l_deg", "b_deg", "distance_pc", "ebv", "flag"]


def write_cube(path, nside=CUBE_NSIDE, distances=CUBE_DISTANCES):
    """A full-sky NESTED distance-resolved HEALPix map of E = N0 · smooth(l, b) · r."""
    sky = healpix_values(nside, "nested")
    return write_healpix(path, N0 * sky[:, None] * distances[None, :], nside, "NESTED", distances=distances)


@pytest.fixture
def cube_file(tmp_path):
    return str(write_cube(tmp_path / "cube.fits"))


def _json(capsys, argv):
    status, out, err = _run(capsys, [*argv, "--json"])
    assert status == 0, err
    return json.loads(out), err


def test_distances_one_per_position(capsys, cube_file):
    rows, err = _json(capsys, ["ebv", "--map", cube_file, "--l", "10", "200", "--b=30,-45",
                               "--distance", "250", "--distance", "1200"])
    assert err == "" and all(list(r) == KEYS_3D for r in rows)
    assert [r["distance_pc"] for r in rows] == [250.0, 1200.0]  # printed as given: exact
    expected = N0 * smooth(np.array([10.0, 200.0]), np.array([30.0, -45.0])) * np.array([250.0, 1200.0])
    np.testing.assert_allclose([r["ebv"] for r in rows], expected, atol=SKY_ATOL * N0 * 1200.0)
    assert [r["flag"] for r in rows] == [0, 0]


def test_one_sight_line_many_distances_is_linear_in_distance(capsys, cube_file):
    rows, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20",
                             "--distance", "50,150", "2999", "3000"])
    whole, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20"])
    ebv = np.array([r["ebv"] for r in rows])
    # E = N0·s·r exactly on the map's grid (above) and E(0) = 0: the ratio to the value at the last
    # distance (3000 pc, what a lookup without distance gives) is r/3000; float32 storage only
    np.testing.assert_allclose(ebv / whole[0]["ebv"], np.array([50.0, 150.0, 2999.0, 3000.0]) / 3000.0, rtol=FLOAT32)
    assert [r["flag"] for r in rows] == [0, 0, 0, 0] and whole[0]["flag"] == 16


def test_beyond_the_map_and_without_distance(capsys, cube_file):
    status, out, err = _run(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--distance", "9000"])
    assert status == 0 and err == ""
    assert "30 distances 100-3000 pc" in out.splitlines()[0]
    assert "# flags: 16 = beyond" in out and "past the map's reach, 3000 pc" in out and "lower limit" in out
    status, out, _ = _run(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20"])
    assert "distance_pc" not in out and "no distance given" in out
    rows, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--distance", "9000"])
    whole, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20"])
    assert list(whole[0]) == KEYS and rows[0]["flag"] == whole[0]["flag"] == 16
    # beyond the last distance: the last value (the format's rule, README), the same number both ways
    assert rows[0]["ebv"] == whole[0]["ebv"]
    assert whole[0]["ebv"] == pytest.approx(N0 * smooth(30.0, 20.0) * 3000.0, abs=SKY_ATOL * N0 * 3000.0)


def test_distance_error_gives_the_spread(capsys, cube_file):
    rows, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20",
                             "--distance", "1000", "2000", "--distance-err", "100"])
    exact, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--distance", "1000", "2000"])
    assert all(list(r) == ["ra_deg", "dec_deg", "l_deg", "b_deg", "distance_pc", "ebv", "ebv_err", "flag"]
               for r in rows)
    # E linear in r: its mean over a distance distribution is E(mean r) and its standard deviation
    # N0·s·sigma_r (linearity of mean and variance; common practice, no source). The Gaussian is cut at
    # 0 pc, 10 sigma away (no effect in double precision). The library's nodes span ±5 sigma
    # (redcorr.maps.distance): symmetric, so the mean keeps to float32 storage (rtol 1e-6); the tails
    # left out hold 2(5φ(5) + Q(5)) = 1.5e-5 of the variance (normal tail moments; common practice, no
    # source), so the spread comes out 7.8e-6 low: rtol 2e-5
    for row, ref in zip(rows, exact, strict=True):
        assert row["ebv"] == pytest.approx(ref["ebv"], rel=FLOAT32)
        assert row["ebv_err"] == pytest.approx(ref["ebv"] * 100.0 / row["distance_pc"], rel=2e-5)
        assert row["flag"] == 0


def _edsd_mode(parallax_mas, error_mas, length_pc):
    """The mode of the EDSD posterior: the real root of r³/L − 2r² + (ϖ/σ²) r − 1/σ² = 0, ϖ and σ in
    arcsec and r in pc (Bailer-Jones 2015, PASP 127, 994, eq. 19; from memory, checked against a
    numerical maximisation of the posterior while writing this test)."""
    plx, sig = parallax_mas * 1e-3, error_mas * 1e-3
    roots = np.roots([1.0 / length_pc, -2.0, plx / sig**2, -1.0 / sig**2])
    [mode] = roots[np.abs(roots.imag) < 1e-9 * np.abs(roots)].real
    return mode


def _edsd_moments(parallax_mas, error_mas, length_pc):
    """Mean and standard deviation of r under the EDSD posterior, P(r) ∝ r² exp(−r/L) exp(−(ϖ − 1/r)²/2σ²)
    (Bailer-Jones 2015, eqs. 17-18, from memory), by scipy.integrate.quad."""
    plx, sig = parallax_mas * 1e-3, error_mas * 1e-3

    def post(r, k):
        return r**k * r**2 * np.exp(-r / length_pc - (plx - 1.0 / r) ** 2 / (2.0 * sig**2))

    norm, m1, m2 = (integrate.quad(post, 1.0, 3.0e4, args=(k,), points=[1e3 / parallax_mas], epsabs=0,
                                   epsrel=1e-12, limit=200)[0] for k in (0, 1, 2))
    mean = m1 / norm
    return mean, np.sqrt(m2 / norm - mean**2)


@pytest.mark.parametrize("length", [500.0, 1350.0])
def test_parallax_and_error_use_the_edsd_posterior(capsys, cube_file, length):
    argv = ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--parallax", "2", "--parallax-err", "0.2",
            "--prior-length", f"{length:g}"]
    rows, _ = _json(capsys, argv)
    whole, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20"])
    row = rows[0]
    # mode: the closed-form cubic; rtol 1e-9 allows the two root finders' rounding
    assert row["distance_pc"] == pytest.approx(_edsd_mode(2.0, 0.2, length), rel=1e-9)
    # E = E_3000·r/3000 for r <= 3000 pc (above); the posterior's weight beyond 3000 pc, where
    # parallax 1/3 mas lies 8 sigma from 2 mas, is ~1e-15. Mean and spread of E are those of r scaled.
    # The library's nodes leave out the tails where the density falls below e^-12.5 = 3.7e-6 of its peak
    # (redcorr.maps.distance): measured 1e-6 (mean) and 4e-5 (spread) low at L = 500 pc; rtol 1e-4
    mean, std = _edsd_moments(2.0, 0.2, length)
    scale = whole[0]["ebv"] / 3000.0
    assert row["ebv"] == pytest.approx(scale * mean, rel=1e-4)
    assert row["ebv_err"] == pytest.approx(scale * std, rel=1e-4)
    status, out, _ = _run(capsys, argv)
    assert status == 0 and "mode of the distance posterior" in out and "Bailer-Jones 2015" in out
    assert f"length scale {length:g} pc" in out


def test_parallax_without_error_is_its_inverse(capsys, cube_file):
    rows, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--parallax", "2,4"])
    # r = 1/parallax (the definition of the parsec: 1000 pc at 1 mas); one division: exact in binary here
    assert [r["distance_pc"] for r in rows] == [500.0, 250.0] and "ebv_err" not in rows[0]
    status, out, _ = _run(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--parallax", "2"])
    assert "distance_pc = 1000/parallax" in out


def test_default_prior_length_is_named(capsys, cube_file):
    status, out, _ = _run(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--parallax", "2",
                                   "--parallax-err", "0.2"])
    [line] = [ln for ln in out.splitlines() if "length scale" in ln]
    length = float(line.split("length scale ")[1].split(" pc")[0])
    rows, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--parallax", "2",
                             "--parallax-err", "0.2", "--prior-length", f"{length!r}"])
    assert status == 0 and f"{rows[0]['distance_pc']:.1f}" in out  # the table shows the same mode, 1 decimal


def test_a_2d_map_ignores_a_distance_with_one_warning(capsys, map_file):
    plain = _run(capsys, ["ebv", "--map", str(map_file), "--l", "10", "20", "--b", "5"])
    given = _run(capsys, ["ebv", "--map", str(map_file), "--l", "10", "20", "--b", "5", "--distance", "300"])
    assert given[0] == 0 and given[1] == plain[1]  # the same output, word for word
    [line] = given[2].splitlines()
    assert line.startswith("redcorr: warning:")
    given = _run(capsys, ["ebv", "--map", str(map_file), "--l", "10", "--b", "5", "--parallax", "2",
                          "--parallax-err", "0.3", "--json"])
    assert list(json.loads(given[1])[0]) == KEYS and len(given[2].splitlines()) == 1


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["--distance", "1", "2", "3"], "--distance has 3 values for 2 positions"),
        (["--distance", "100", "200", "--distance-err", "1,2,3"], "--distance-err has 3 values and --distance 2"),
        (["--parallax", "2", "1", "--parallax-err", "1", "2", "3"], "--parallax-err has 3 values and --parallax 2"),
        (["--parallax=-0.5"], "--parallax=-0.5 cannot be turned into a distance without an error"),
    ],
)
def test_bad_distances(capsys, cube_file, argv, message):
    status, out, err = _run(capsys, ["ebv", "--map", cube_file, "--l", "1", "2", "--b", "3", *argv])
    assert status == 2 and out == ""
    assert message in err and len(err.strip().splitlines()) == 1


def test_negative_parallax_with_error_is_allowed(capsys, cube_file):
    rows, _ = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--parallax=-0.5",
                             "--parallax-err", "0.5", "--prior-length", "1000"])
    # the posterior exists for any parallax once there is a prior (Bailer-Jones 2015, sect. 5); its mode
    # is the cubic's one positive root, here ~3070 pc, past the map's 3000 pc: flagged beyond
    assert rows[0]["distance_pc"] == pytest.approx(_edsd_mode(-0.5, 0.5, 1000.0), rel=1e-9)
    assert rows[0]["distance_pc"] > 3000.0 and rows[0]["flag"] == 16
    assert np.isfinite(rows[0]["ebv"]) and rows[0]["ebv_err"] > 0


def test_parallaxes_that_say_little_are_warned_about(capsys, cube_file):
    # 2.0 ± 0.1 mas (5 %) is a measurement; 2.0 ± 0.5 (25 %) and -0.5 ± 0.5 leave the distance to the
    # prior (redcorr.maps.PRIOR_FRACTION = 0.2, after Bailer-Jones 2015, sect. 4): one warning line
    rows, err = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20",
                               "--parallax=2.0,2.0,-0.5", "--parallax-err", "0.1,0.5,0.5"])
    assert len(rows) == 3
    lines = err.strip().splitlines()
    assert len(lines) == 1 and "2 of 3 parallax(es) say little about the distance" in lines[0]
    assert "1350 pc (--prior-length)" in lines[0]
    _, err = _json(capsys, ["ebv", "--map", cube_file, "--l", "30", "--b", "20", "--parallax", "2.0",
                            "--parallax-err", "0.1"])
    assert err == ""

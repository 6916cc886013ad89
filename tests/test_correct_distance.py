"""Catalog correction with a distance-resolved map: E(B-V) to each star, its error, flags and counts.

The test map is written here in the format of README ("Reddening from local dust maps"): a
HEALPix binary table with one vector column of cumulative E(B-V) at 30 distances and a
``DISTANCES`` table. Its sky is a uniform dust density, so the cumulative reddening along
every sight line is E(r) = K·r (elementary: the line-of-sight integral of a constant density
grows linearly with the path length). Because E is linear in r and equal in every pixel, the
map's interpolation (bilinear on the sky, linear in distance, E(0) = 0) reproduces K·r exactly:
the only error is the float32 storage of the column (relative 6e-8), hence rtol 1e-6 below
wherever an exact distance is looked up.
"""

import json
import warnings

import direct_integration as direct
import numpy as np
import pandas as pd
import pytest
from _synthetic_maps import write_healpix
from scipy import integrate

from redcorr.cli import main
from redcorr.correction import CORRECTION_FLAGS, Correction
from redcorr.curves import get_curve
from redcorr.exceptions import DistanceIgnoredWarning, InputError, OutOfRangeWarning
from redcorr.io.batch import correct_file, correct_file_dask
from redcorr.io.correction import correct_dataframe, correction_options
from redcorr.io.filters import load_band

K = 2.0e-4
"""mag of E(B-V) per pc: the uniform dust density of the test map (invented)."""
DISTANCES = 100.0 * np.arange(1, 31)
"""pc: the 30 distances of the test map, out to 3000 pc."""
REACH = DISTANCES[-1]
NSIDE = 2
BEYOND, NO_DISTANCE = CORRECTION_FLAGS["beyond_map"], CORRECTION_FLAGS["no_distance"]
MISSING, NON_NUMERIC = CORRECTION_FLAGS["missing"], CORRECTION_FLAGS["non_numeric"]
FLOAT32 = 1e-6
"""rtol of a value read from the float32 map column (its rounding is 6e-8 relative)."""


def write_cube(path, per_pc=K, distances=DISTANCES, nside=NSIDE):
    """A full-sky distance-resolved HEALPix map of a uniform dust density: E(r) = per_pc·r everywhere."""
    return write_healpix(path, np.tile(per_pc * distances, (12 * nside**2, 1)), nside, distances=distances)


def write_flat(path, value=0.3, nside=NSIDE):
    """A 2D HEALPix map (whole sight lines) of one value everywhere."""
    return write_healpix(path, np.full(12 * nside**2, value), nside)


@pytest.fixture(scope="module")
def cube(tmp_path_factory):
    return str(write_cube(tmp_path_factory.mktemp("cube") / "uniform_3d.fits"))


def stars(n, seed=0, **columns):
    """An invented catalog of n stars at random positions, V = 15 ± 0.02, plus ``columns``."""
    rng = np.random.default_rng(seed)
    frame = pd.DataFrame({"id": np.arange(n), "ra": rng.uniform(0.0, 360.0, n),
                          "dec": np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, n))),
                          "kw_v": 15.0, "e_kw_v": 0.02})
    for name, values in columns.items():
        frame[name] = values
    return frame


def flags_of(out):
    return out["dered_flags"].to_numpy()


# --- the reddening to each star -----------------------------------------------------------------
def test_distance_column_gives_the_reddening_to_each_star(cube):
    d = np.array([0.0, 50.0, 150.0, 1234.5, 2999.0, 3000.0, 4500.0, np.nan, -10.0])
    with pytest.warns(OutOfRangeWarning, match="1 row.*beyond the reach"):
        out, summary = correct_dataframe(stars(d.size, dist=d), ["kw-v"], dust_map=cube, distance_column="dist")
    ebv = out["ebv_used"].to_numpy()
    # E = K·d inside the map's reach (0 at the Sun, linear up to the first distance), K·3000 beyond it
    np.testing.assert_allclose(ebv[:7], K * np.minimum(d[:7], REACH), rtol=FLOAT32, atol=0)
    assert np.isnan(ebv[7:]).all() and np.isnan(out["kw_v_dered"].to_numpy()[7:]).all()
    flags = flags_of(out)
    assert flags.tolist() == [0] * 6 + [BEYOND] + [NO_DISTANCE | MISSING] * 2
    assert summary["flagged"]["beyond_map"] == 1 and summary["flagged"]["no_distance"] == 2
    assert summary["setup"]["reddening"]["distance"] == {"kind": "distance", "column": "dist", "error_column": None}
    # the correction is the one of a constant E(B-V) column holding the same values (bitwise:
    # the same code path computes A_b from E(B-V) whichever source gave it)
    same, _ = correct_dataframe(stars(7, ebv=ebv[:7]), ["kw-v"])
    np.testing.assert_array_equal(out["A_kw_v"].to_numpy()[:7], same["A_kw_v"].to_numpy())


def test_parallax_without_an_error_is_one_over_the_parallax(cube):
    # d [pc] = 1000 / ϖ [mas] (definition of the parsec; common practice, no source)
    plx = np.array([2.0, 0.5, 1.0 / 3.0, 0.25, 0.0, -1.0, np.nan])
    with pytest.warns(OutOfRangeWarning, match="1 row.*beyond"):
        out, summary = correct_dataframe(stars(plx.size, plx=plx), ["kw-v"], dust_map=cube, parallax_column="plx")
    ebv = out["ebv_used"].to_numpy()
    np.testing.assert_allclose(ebv[:4], K * np.minimum(1000.0 / plx[:4], REACH), rtol=FLOAT32, atol=0)
    assert flags_of(out).tolist() == [0, 0, 0, BEYOND] + [NO_DISTANCE | MISSING] * 3
    assert summary["flagged"]["no_distance"] == 3
    with pytest.raises(InputError, match=r"column 'plx' has -1\.0 in row 2, where a parallax > 0.*strict"):
        correct_dataframe(stars(2, plx=[2.0, -1.0]), ["kw-v"], dust_map=cube, parallax_column="plx", strict=True)


def test_distance_error_gives_the_spread_of_the_reddening_and_the_magnitude_errors(cube):
    # For E = K·r and a Gaussian distance N(d, σ) wholly inside the map's reach, the mean and the
    # standard deviation of E are K·d and K·σ (elementary: E is linear in r); the truncation of the
    # Gaussian at r = 0 is negligible for d/σ >= 8 (its weight below 0 is 6e-16). The distance
    # nodes (DistanceSamples.gaussian) leave out the tails beyond ±5σ: that keeps the mean and
    # lowers σ by 7.4e-6 relative (the standard deviation of a normal truncated at ±5σ,
    # scipy.stats.truncnorm), hence rtol 1e-5 on the errors and FLOAT32 on the mean.
    d = np.array([400.0, 800.0, 1500.0, 2000.0])
    s = np.array([50.0, 40.0, 100.0, 150.0])  # d + 5σ < 3000 pc: nothing beyond the map
    frame = stars(4, dist=d, e_dist=s)
    out, _ = correct_dataframe(frame, ["kw-v"], dust_map=cube, distance_column="dist",
                               distance_error_column="e_dist", nonlinear=False, reddening_error=0.01)
    np.testing.assert_allclose(out["ebv_used"], K * d, rtol=FLOAT32, atol=0)
    # First-order propagation in quadrature (common practice, no source), the reddening's own σ
    # and its spread over the distance independent: σ_m0² = σ_m² + (R_b σ_E)², σ_E² = 0.01² + (K σ)².
    # R_b = R_V ⟨r⟩_b by independent quadrature of the F99 law (tests/direct_integration; the
    # package's coefficient agrees with it to ~1e-7, test_correct), in the linear mode A_b = R_b E.
    r_b = 3.1 * direct.ratio(get_curve("f99", r_v=3.1), load_band("kw-v"), 7000.0)
    sigma_e = np.hypot(0.01, K * s)
    np.testing.assert_allclose(out["kw_v_dered_err"], np.hypot(0.02, r_b * sigma_e), rtol=1e-5, atol=0)
    assert (flags_of(out) == 0).all()


def _posterior_moments(plx, err, length, reach=REACH):
    """Mean and σ of E = K·min(r, reach) over the distance posterior, by scipy quadrature.

    Posterior ∝ r² exp(−r/L) · exp(−(ϖ − 1000/r)²/(2σ²)): the exponentially decreasing space
    density prior times a Gaussian parallax likelihood (Bailer-Jones 2015, PASP 127, 994, Sect. 5).
    """
    def post(r):
        return r * r * np.exp(-r / length - (plx - 1000.0 / r) ** 2 / (2 * err * err))

    top = 60.0 * length  # the prior's weight beyond 60 L is e^-60 of it
    peak = 1000.0 / plx if plx > 0 else 2.0 * length
    pts = [p for p in (0.5 * peak, peak, 2.0 * peak, reach) if p < top]
    norm = integrate.quad(post, 0.0, top, points=pts, limit=400)[0]
    mean = integrate.quad(lambda r: post(r) * K * min(r, reach), 0.0, top, points=pts, limit=400)[0] / norm
    second = integrate.quad(lambda r: post(r) * (K * min(r, reach)) ** 2, 0.0, top, points=pts, limit=400)[0] / norm
    return mean, np.sqrt(max(second - mean * mean, 0.0))


@pytest.mark.parametrize("length", [1000.0, 400.0])
def test_parallax_with_an_error_uses_the_distance_posterior(cube, length):
    plx = np.array([2.0, 1.0, 1.5, 0.8])
    err = np.array([0.1, 0.1, 0.3, 0.2])
    # 0.8 ± 0.2 mas, a fractional error of 0.25, is the one whose distance comes mostly from the prior
    # (redcorr.maps.PRIOR_FRACTION = 0.2; 1.5 ± 0.3 sits on the limit and is not flagged)
    with pytest.warns(OutOfRangeWarning, match=r"^1 row\(s\) have a parallax that says little"):
        out, summary = correct_dataframe(stars(4, plx=plx, e_plx=err), ["kw-v"], dust_map=cube,
                                         parallax_column="plx", parallax_error_column="e_plx", prior_length=length,
                                         nonlinear=False)
    assert flags_of(out).tolist() == [0, 0, 0, CORRECTION_FLAGS["prior_distance"]]
    assert summary["flagged"]["prior_distance"] == 1
    mean, sd = np.array([_posterior_moments(p, e, length) for p, e in zip(plx, err, strict=True)]).T
    # Tolerance 2e-3 σ_E: the 64 nodes of DistanceSamples.from_parallax reproduce the quadrature's
    # mean and σ of E to 1.6e-3 σ_E at worst here (the 20 % parallax error, L = 1 kpc; measured,
    # while 2000 nodes agree with it to 4e-5 σ_E, so the quadrature itself is not in question).
    assert np.all(np.abs(out["ebv_used"] - mean) <= 2e-3 * sd)
    # the magnitude error as first-order propagation (common practice, no source), R_b by independent
    # quadrature (tests/direct_integration); |d hypot(a, R_b σ)/dσ| <= R_b carries the tolerance over
    r_b = 3.1 * direct.ratio(get_curve("f99", r_v=3.1), load_band("kw-v"), 7000.0)
    assert np.all(np.abs(out["kw_v_dered_err"] - np.hypot(0.02, r_b * sd)) <= r_b * 2e-3 * sd)
    assert summary["setup"]["reddening"]["distance"]["prior_length_pc"] == length


# --- maps and columns that do not go together ---------------------------------------------------
def test_a_map_without_distances_ignores_the_distance_column_with_a_warning(tmp_path):
    flat = str(write_flat(tmp_path / "flat.fits"))
    frame = stars(5, dist=[10.0, 100.0, 1e3, 1e4, np.nan])
    with pytest.warns(DistanceIgnoredWarning, match="no distances.*'dist' is not used"):
        out, _ = correct_dataframe(frame, ["kw-v"], dust_map=flat, distance_column="dist")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        plain, _ = correct_dataframe(frame, ["kw-v"], dust_map=flat)
    pd.testing.assert_frame_equal(out, plain, check_exact=True)  # bitwise: the same 2D lookup


def test_a_distance_resolved_map_without_a_distance_column_gives_its_last_value_and_warns(cube):
    with pytest.warns(OutOfRangeWarning) as caught:
        out, summary = correct_dataframe(stars(6), ["kw-v"], dust_map=cube)
    text = " | ".join(str(w.message) for w in caught)
    assert "no distance or parallax column" in text and "3000 pc" in text and "6 row(s)" in text
    np.testing.assert_allclose(out["ebv_used"], K * REACH, rtol=FLOAT32, atol=0)
    assert (flags_of(out) == BEYOND).all() and summary["flagged"]["beyond_map"] == 6


def test_bad_distance_cells_are_flagged_or_refused_in_strict_mode(cube):
    frame = stars(4, dist=pd.Series([500.0, "abc", "", 700.0], dtype=object),
                  e_dist=pd.Series([10.0, 10.0, 10.0, -5.0], dtype=object))
    out, summary = correct_dataframe(frame, ["kw-v"], dust_map=cube, distance_column="dist",
                                     distance_error_column="e_dist")
    assert flags_of(out).tolist() == [0, NON_NUMERIC | MISSING | NO_DISTANCE, MISSING | NO_DISTANCE,
                                      MISSING | NO_DISTANCE]
    assert summary["flagged"]["no_distance"] == 3
    with pytest.raises(InputError, match=r"column 'dist' has text 'abc' in row 2.*strict"):
        correct_dataframe(frame, ["kw-v"], dust_map=cube, distance_column="dist", strict=True)
    with pytest.raises(InputError, match=r"column 'e_dist' has -5\.0 in row 2.*error >= 0.*strict"):
        correct_dataframe(frame.drop(index=[1, 2]), ["kw-v"], dust_map=cube, distance_column="dist",
                          distance_error_column="e_dist", strict=True)


@pytest.mark.parametrize("options, message", [
    ({"distance_column": "nope"}, r"distance_column='nope' is not a column of the input"),
    ({"parallax_column": "plx", "parallax_error_column": "nope"}, r"parallax_error_column='nope' is not a column"),
    ({"distance_column": "dist", "parallax_column": "plx"}, "give a distance or a parallax column, not both"),
    ({"distance_error_column": "dist"}, r"distance_error_column='dist' needs distance_column"),
    ({"parallax_column": "plx", "prior_length": 500.0}, "prior_length=500.0 .* needs parallax_error_column"),
    ({"parallax_column": "plx", "parallax_error_column": "plx", "prior_length": -1.0}, "prior_length"),
])
def test_distance_options_that_do_not_fit_are_refused(cube, options, message):
    frame = stars(2, dist=[1.0, 2.0], plx=[1.0, 2.0])
    with pytest.raises(InputError, match=message):
        correct_dataframe(frame, ["kw-v"], dust_map=cube, **options)


def test_distance_options_need_a_map():
    with pytest.raises(InputError, match="distance_column='dist' is used only with a dust map"):
        correction_options(["kw-v"], ebv=0.1, distance_column="dist")


# --- command line, engines -------------------------------------------------------------------
def _catalog(tmp_path):
    """A CSV with good and bad distances; returns its path and the distances."""
    d = np.array([100.0, 640.0, 1800.0, 2500.0, 3500.0, 900.0, np.nan, 1200.0] * 5)
    e = np.array([10.0, 30.0, 50.0, 80.0, 100.0, 40.0, 10.0, 60.0] * 5)
    frame = stars(d.size, seed=5, dist=d, e_dist=e)
    frame.loc[5, "dist"] = -20.0
    path = tmp_path / "stars.csv"
    frame.to_csv(path, index=False)
    return path, frame


def test_command_line_writes_the_reddening_to_each_star_and_counts_the_rows(tmp_path, cube, capsys):
    path, frame = _catalog(tmp_path)
    out = tmp_path / "out.csv"
    code = main(["correct", str(path), str(out), "--band", "kw-v", "--map", cube, "--distance-col", "dist",
                 "--distance-err-col", "e_dist", "--json"])
    assert code == 0
    printed = capsys.readouterr()
    summary = json.loads(printed.out)
    assert "5 row(s) lie beyond the reach of the distance-resolved map" in printed.err
    got = pd.read_csv(out)
    d = frame["dist"].to_numpy()
    usable = np.isfinite(d) & (d >= 0)
    # beyond: the five stars at 3500 ± 100 pc, all their weight past 3000 pc; the 2500 ± 80 pc ones
    # have a weight of 2e-10 past it (6.25 σ), far below the map's 5 % (BEYOND_WEIGHT)
    assert summary["flagged"]["no_distance"] == int((~usable).sum()) == 6
    assert summary["flagged"]["beyond_map"] == int((d == 3500.0).sum()) == 5
    assert ((got["dered_flags"] & BEYOND) != 0).tolist() == (d == 3500.0).tolist()
    assert ((got["dered_flags"] & NO_DISTANCE) != 0).tolist() == (~usable).tolist()
    assert "kw_v_dered_err" in got and np.isfinite(got["kw_v_dered_err"][usable]).all()
    # rows well inside the reach: K·d to the 6 decimals the CSV keeps, for Gaussian spreads ≤ d/10
    inside = usable & (d + 5 * frame["e_dist"] < REACH) & (d >= 10 * frame["e_dist"])
    np.testing.assert_allclose(got["ebv_used"][inside], K * d[inside], rtol=FLOAT32, atol=5e-7)


@pytest.mark.parametrize("args, message", [
    (["--distance-col", "dist", "--parallax-col", "plx"], "--distance-col dist and --parallax-col plx"),
    (["--distance-col", "nope"], "distance_column='nope' is not a column"),
    (["--prior-length", "300", "--parallax-col", "dist"], "needs parallax_error_column"),
])
def test_command_line_refuses_distance_options_that_do_not_fit(tmp_path, cube, capsys, args, message):
    path, _ = _catalog(tmp_path)
    assert main(["correct", str(path), str(tmp_path / "o.csv"), "--band", "kw-v", "--map", cube, *args]) == 2
    err = capsys.readouterr().err
    assert message in err and len(err.strip().splitlines()) == 1
    assert not (tmp_path / "o.csv").exists()


def test_command_line_distance_options_need_a_map(tmp_path, capsys):
    path, _ = _catalog(tmp_path)
    assert main(["correct", str(path), str(tmp_path / "o.csv"), "--band", "kw-v", "--ebv", "0.1",
                 "--parallax-col", "dist"]) == 2
    assert "--parallax-col: used only with --map" in capsys.readouterr().err


def test_dask_engine_gives_the_stream_engine_rows_and_counts(tmp_path, cube):
    path, frame = _catalog(tmp_path)
    frame["e_dist"] = frame["e_dist"].astype(object)
    frame.loc[9, "e_dist"] = "unknown"  # text in a distance column: both engines read it again as text and flag it
    frame.to_csv(path, index=False)
    options = correction_options(["kw-v"], dust_map=cube, distance_column="dist", distance_error_column="e_dist")

    def make(columns):
        return Correction(columns, options)

    with pytest.warns(OutOfRangeWarning, match="5 row"):
        stream = correct_file(path, tmp_path / "stream.parquet", make, chunk_rows=7)
    with pytest.warns(OutOfRangeWarning, match="5 row"):
        dask = correct_file_dask(str(path), tmp_path / "dask.parquet", make)
    assert dask.flagged == stream.flagged and dask.rows == stream.rows == 40
    assert stream.flagged["non_numeric"] == 1 and stream.flagged["no_distance"] == 7
    got = pd.read_parquet(tmp_path / "dask.parquet").sort_values("id").reset_index(drop=True)
    want = pd.read_parquet(tmp_path / "stream.parquet").sort_values("id").reset_index(drop=True)
    # The computed columns (after the text cell the Dask engine copies the input's number columns as
    # text, the stream engine as numbers), bitwise: a map lookup gives each position the same bits
    # whatever it is looked up with.
    computed = ["id", *Correction(list(frame.columns), options).output_columns]
    pd.testing.assert_frame_equal(got[computed], want[computed], check_dtype=False, check_exact=True)

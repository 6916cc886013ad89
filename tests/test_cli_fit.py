"""Tests of ``redcorr fit``: each star's reddening fitted from its magnitudes, for a catalog file (in-process).

The catalogs are built from the packaged intrinsic colours of dwarfs (Pecaut & Mamajek 2013, Table 5, as
packaged: ``load_intrinsic_colours("dwarfs")``) at three of its rows, G2V (5770 K), K2V (5100 K) and
K4V (4600 K), reddened by a known E(B-V) through the project's own band integration
(``redcorr.extinction.band_extinction`` of a blackbody behind F99 dust at R_V = 3.1), with seeded Gaussian
noise of 0.01 mag and errors of 0.01 mag given. That is the fit's own model (redcorr.photometric_reddening),
so every recovery check here is a self-consistency check of the fit with the published table, not an
outside truth; the outside checks of the model are in tests/test_fit_core.py and tests/test_extinction.py.
Columns are named as VizieR serves them (Bmag, e_Bmag, ...) so that the column guessing is exercised.

Runs are shared through module fixtures (each builds a model grid, about 2 s).
"""

import contextlib
import io
import json

import numpy as np
import pandas as pd
import pytest
from _synthetic_maps import write_healpix
from astropy.table import Table

from redcorr.cli import main
from redcorr.extinction import band_extinction
from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.io.intrinsic import load_intrinsic_colours
from redcorr.sed import blackbody

VIZIER = {"B": "bessell-B", "V": "bessell-V", "R": "bessell-R", "I": "bessell-I",
          "J": "twomass-J", "H": "twomass-H", "K": "twomass-Ks"}
BAND_ARGS = [arg for name in VIZIER.values() for arg in ("--band", name)]
TEFFS = (4600.0, 5100.0, 5770.0)  # K4V, K2V, G2V rows of Pecaut & Mamajek 2013, Table 5
R_V = 3.1
NOISE = 0.01  # mag: the noise drawn and the error given
OUT_FIXED = ["ebv_fit", "ebv_fit_err", "av_fit", "av_fit_err", "teff_fit", "teff_fit_err",
             "chi2_fit", "nbands_fit", "fit_flags"]
OUT_FREE = [*OUT_FIXED[:6], "rv_fit", "rv_fit_err", *OUT_FIXED[6:]]
BITS = {"no_fit": 1, "few_bands": 2, "teff_edge": 4, "non_numeric": 256, "no_prior": 512}  # fit --help
TEXT_DECIMALS = 6  # the decimals a CSV output is printed with (redcorr.io.catalogs.formats)
EBV_STEP = 0.005  # the grid's default E(B-V) step, mag (redcorr.photometric_reddening)


def stars(n, seed, ebv=None):
    """``n`` locus stars (T_eff cycling over TEFFS) reddened by ``ebv`` (default uniform 0.05-1), VizieR columns."""
    rng = np.random.default_rng(seed)
    locus = load_intrinsic_colours("dwarfs")
    curve = load_curve("f99", r_v=R_V)
    teff = np.array(TEFFS)[np.arange(n) % len(TEFFS)]
    ebv = rng.uniform(0.05, 1.0, n) if ebv is None else np.full(n, float(ebv))
    frame = pd.DataFrame({"id": np.arange(n)})
    offset = rng.uniform(10.0, 14.0, n)  # distance modulus (the fit's free offset)
    for short, name in VIZIER.items():
        band = load_band(name)
        mag = np.empty(n)
        for t in TEFFS:
            rows = teff == t
            mag[rows] = locus.magnitude(t, name) + band_extinction(curve, band, blackbody(t), R_V * ebv[rows])
        frame[f"{short}mag"] = mag + offset + rng.normal(0.0, NOISE, n)
        frame[f"e_{short}mag"] = NOISE
    frame["ebv_true"], frame["teff_true"] = ebv, teff
    frame["teff_obs"] = teff + rng.normal(0.0, 100.0, n)  # a measured T_eff, for the prior
    frame["e_teff_obs"] = 100.0
    frame["ra"], frame["dec"] = rng.uniform(0.0, 360.0, n), np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, n)))
    return frame


def run(argv):
    """``redcorr ARGV`` in-process: (exit status, stdout, stderr)."""
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = main([str(a) for a in argv])
    return status, out.getvalue(), err.getvalue()


def error_line(status, err):
    """The one error line of a refused run (exit 2; argparse's usage lines aside)."""
    assert status == 2, err
    lines = [line for line in err.splitlines() if line and not line.startswith(("usage:", " "))]
    assert len(lines) == 1, err
    assert lines[0].startswith("redcorr fit: error:") and "Traceback" not in err, err
    return lines[0]


# ----------------------------------------------------------------------------------------------- shared runs
@pytest.fixture(scope="module")
def work(tmp_path_factory):
    return tmp_path_factory.mktemp("fit")


@pytest.fixture(scope="module")
def catalog(work):
    """36 stars; the first has a T_eff prior of 100000 K, beyond the table (used only with --teff-col)."""
    frame = stars(36, seed=0)
    frame.loc[0, "teff_obs"] = 1e5
    path = work / "cat.csv"
    frame.to_csv(path, index=False)
    return frame, path


@pytest.fixture(scope="module")
def fitted(work, catalog):
    """The plain fit (R_V = 3.1 fixed) to Parquet: (output, summary printed, stderr)."""
    out = work / "out.parquet"
    status, text, err = run(["fit", catalog[1], out, *BAND_ARGS, "--json"])
    assert status == 0, err
    return pd.read_parquet(out), json.loads(text), err


# ------------------------------------------------------------------------------------- 1. columns and values
def test_columns_recovery_and_summary(work, catalog, fitted):
    """Self-consistency of the fit with the published table (Pecaut & Mamajek 2013): E(B-V) recovered."""
    frame, _ = catalog
    out, summary, _ = fitted
    assert list(out.columns) == [*frame.columns, *OUT_FIXED]
    pull = (out["ebv_fit"] - frame["ebv_true"]) / out["ebv_fit_err"]
    assert np.all(np.abs(pull) < 3.0), pull.to_numpy()  # 3 sigma (common practice, no source)
    assert abs(pull.mean()) < 0.5, pull.mean()  # 36 unit pulls: their mean has std 1/6 (common practice)
    # A_V = R_V E(B-V) (the definition of R_V; common practice, no source), exact to rounding
    np.testing.assert_allclose(out["av_fit"], R_V * out["ebv_fit"], rtol=1e-12)
    np.testing.assert_allclose(out["av_fit_err"], R_V * out["ebv_fit_err"], rtol=1e-12)
    assert (out["nbands_fit"] == 7).all()
    on_disk = json.loads((work / "out.parquet.summary.json").read_text())
    assert on_disk["rows"] == summary["rows"] == 36
    flags = out["fit_flags"].to_numpy()
    for name, bit in on_disk["flag_bits"].items():
        assert on_disk["flagged"][name] == np.count_nonzero(flags & bit), name
    assert on_disk["flagged"]["any"] == np.count_nonzero(flags)


def test_rv_free_adds_rv_columns(work, catalog):
    """With --rv-free: rv_fit, rv_fit_err after T_eff; R_V inside its range; E(B-V) still within 3 sigma.

    Self-consistency of the fit with the published table (Pecaut & Mamajek 2013) over a narrow R_V range.
    """
    frame = stars(12, seed=5)
    src, out = work / "free.csv", work / "free.parquet"
    frame.to_csv(src, index=False)
    status, _, err = run(["fit", src, out, *BAND_ARGS, "--rv-free", "--rv-range", "3.0,3.2", "--quiet"])
    assert status == 0, err
    result = pd.read_parquet(out)
    assert list(result.columns) == [*frame.columns, *OUT_FREE]
    assert result["rv_fit"].between(3.0, 3.2).all()
    # within 3 sigma (common practice, no source)
    assert (np.abs(result["ebv_fit"] - frame["ebv_true"]) < 3 * result["ebv_fit_err"]).all()


# --------------------------------------------------------------------------------- 2. it feeds a correction
def test_output_feeds_correct(work, fitted):
    out, _, _ = fitted
    final = work / "final.parquet"
    status, _, err = run(["correct", work / "out.parquet", final, "--band", "bessell-B", "--band", "bessell-V",
                          "--mag", "bessell-B=Bmag", "--mag", "bessell-V=Vmag", "--ebv-col", "ebv_fit",
                          "--red-err-col", "ebv_fit_err", "--quiet"])
    assert status == 0, err
    result = pd.read_parquet(final)
    assert {"Bmag_dered", "Vmag_dered", "ebv_used"} <= set(result.columns)
    np.testing.assert_array_equal(result["ebv_used"], out["ebv_fit"])



def test_fit_then_correct_in_one_run_equals_the_two_commands(tmp_path, catalog, fitted, monkeypatch):
    """What the terminal UI's "from the photometry" runs: the same rows as `fit` then `correct`, nothing left over."""
    import tempfile

    monkeypatch.setattr(tempfile, "tempdir", str(tmp_path / "none"))  # a system temporary folder that can't be used
    from redcorr.correction import CatalogFit
    from redcorr.exceptions import FitWarning
    from redcorr.io.batch import fit_and_correct_file
    from redcorr.io.correction import correction_options, fit_options

    bands = list(VIZIER.values())
    fit = fit_options(bands)
    options = correction_options(["bessell-B", "bessell-V"], mag_columns={"bessell-B": "Bmag", "bessell-V": "Vmag"},
                                 ebv_column="ebv_fit", reddening_error_column="ebv_fit_err")
    out = tmp_path / "final.parquet"
    with pytest.warns(FitWarning):  # the flags of the fit, as `redcorr fit` prints them
        fit_summary, summary = fit_and_correct_file(catalog[1], out, lambda columns: CatalogFit(columns, fit), options)
    assert fit_summary.rows == summary.rows == len(catalog[0])
    result = pd.read_parquet(out)
    # the fit is spooled in the input's format, CSV here, whose numbers carry TEXT_DECIMALS decimals
    np.testing.assert_allclose(result["ebv_used"], fitted[0]["ebv_fit"], rtol=0, atol=0.5 * 10.0**-TEXT_DECIMALS)
    # the fitted table was spooled beside the output, not in the system's temporary folder (which may be too
    # small for a catalog), and removed: only the output and its summary remain
    assert sorted(p.name for p in tmp_path.iterdir()) == ["final.parquet", "final.parquet.summary.json"]

# --------------------------------------------------------------------------------------- 3. chunks, engines
def test_chunk_rows_do_not_matter(work, catalog, fitted):
    status, _, err = run(["fit", catalog[1], work / "chunked.parquet", *BAND_ARGS, "--chunk-rows", "7", "--quiet"])
    assert status == 0, err
    pd.testing.assert_frame_equal(pd.read_parquet(work / "chunked.parquet"), fitted[0], check_exact=True)


def test_dask_engine_matches_stream(work, catalog, fitted):
    out = work / "dask.csv"
    status, _, err = run(["fit", catalog[1], out, *BAND_ARGS, "--engine", "dask", "--quiet"])
    assert status == 0, err
    result, stream = pd.read_csv(out), fitted[0]
    assert list(result.columns) == list(stream.columns)
    for column in OUT_FIXED:  # the CSV holds 6 decimals: half a unit of the last one, and a hair
        np.testing.assert_allclose(result[column], stream[column], rtol=0, atol=0.5 * 10.0**-TEXT_DECIMALS + 1e-12,
                                   err_msg=column)


# ------------------------------------------------------------------------------ 4, 7. missing and bad cells
def ragged_stars():
    """12 stars; row 0 lacks B, row 1 has text for R, row 2 an error of 0 for I, row 3 only V."""
    frame = stars(12, seed=2).astype({"Bmag": object, "Rmag": object})
    frame.loc[0, "Bmag"] = ""
    frame.loc[1, "Rmag"] = "12.3:"
    frame.loc[2, "e_Imag"] = 0.0
    for short in VIZIER:
        if short != "V":
            frame.loc[3, f"{short}mag"] = np.nan
    return frame


@pytest.fixture(scope="module")
def ragged(work):
    src = work / "ragged.csv"
    ragged_stars().to_csv(src, index=False)
    status, _, err = run(["fit", src, work / "ragged.parquet", *BAND_ARGS, "--quiet"])
    assert status == 0, err
    return pd.read_parquet(work / "ragged.parquet"), src


def test_missing_text_and_zero_error_cells(ragged):
    out, _ = ragged
    assert list(out["nbands_fit"][:3]) == [6, 6, 6]  # B empty, R text, I with error 0: each left out
    assert (out["nbands_fit"][4:] == 7).all()
    flags = out["fit_flags"].to_numpy()
    assert flags[1] & BITS["non_numeric"]
    assert not np.any(np.delete(flags, 1) & BITS["non_numeric"])
    assert np.isfinite(out["ebv_fit"][[0, 1, 2]]).all()


def test_strict_refuses_text_cell_naming_column_and_line(work, ragged):
    status, _, err = run(["fit", ragged[1], work / "strict.parquet", *BAND_ARGS, "--strict"])
    line = error_line(status, err)
    assert "Rmag" in line and "line 3" in line, line  # row 1 is the file's line 3 (line 1: the header)
    assert not (work / "strict.parquet").exists()


def test_strict_refuses_zero_error(work):
    frame = stars(6, seed=3)
    frame.loc[2, "e_Imag"] = 0.0
    src = work / "zero_err.csv"
    frame.to_csv(src, index=False)
    status, _, err = run(["fit", src, work / "zero_err.parquet", *BAND_ARGS, "--strict"])
    assert "e_Imag" in error_line(status, err)


def test_one_band_gives_no_fit(ragged):
    """A row with V only: no colour, so no fit; flagged, NaN, and the run still succeeds (exit 0 above)."""
    out, _ = ragged
    row = out.iloc[3]
    assert row["nbands_fit"] == 1
    assert int(row["fit_flags"]) & BITS["no_fit"] and int(row["fit_flags"]) & BITS["few_bands"]
    assert np.isnan(row[["ebv_fit", "ebv_fit_err", "av_fit", "av_fit_err", "teff_fit", "teff_fit_err"]]
                    .to_numpy(float)).all()


# -------------------------------------------------------------------------------------------- 5. T_eff prior
def test_teff_prior_narrows_and_flags_prior_beyond_table(work, catalog, fitted):
    """A measured T_eff (error 100 K) narrows T_eff; a prior of 100000 K, beyond the table, is flagged.

    Self-consistency of the fit with the published table (Pecaut & Mamajek 2013), whose hottest row is
    44900 K: a Gaussian prior narrower than the likelihood narrows the posterior (Bayes' theorem; common
    practice, no source).
    """
    status, _, err = run(["fit", catalog[1], work / "teff.parquet", *BAND_ARGS,
                          "--teff-col", "teff_obs", "--teff-err-col", "e_teff_obs"])
    assert status == 0, err
    with_prior, without = pd.read_parquet(work / "teff.parquet"), fitted[0]
    assert (with_prior["teff_fit_err"][1:] < without["teff_fit_err"][1:]).all()
    flags = with_prior["fit_flags"].to_numpy()
    assert flags[0] & BITS["teff_edge"]
    assert "warning" in err and "teff_edge" in err, err


def test_strict_refuses_teff_prior_outside_the_bands_rows(work):
    """--strict: a T_eff prior of 1000 K is refused in one line naming the column, value, line and range.

    1000 K lies inside the packaged table (250-44,900 K) but below its rows with B magnitudes (from M9V,
    2380 K; Pecaut & Mamajek 2013, Table 5, as packaged), one of the bands used.
    """
    frame = stars(4, seed=8)
    frame.loc[2, "teff_obs"] = 1000.0
    src = work / "cool_prior.csv"
    frame.to_csv(src, index=False)
    status, _, err = run(["fit", src, work / "cool_prior.parquet", *BAND_ARGS, "--teff-col", "teff_obs",
                          "--teff-err-col", "e_teff_obs", "--strict"])
    line = error_line(status, err)
    assert "teff_obs" in line and "1000.0" in line and "line 4" in line and "2380-" in line, line
    assert not (work / "cool_prior.parquet").exists()


# ------------------------------------------------------------------------------------------- 6. map priors
MAP_EBV = 0.05


@pytest.fixture(scope="module")
def map_stars(work):
    """12 stars behind E(B-V) = 0.05, with positions; a distance of 500 pc but for row 0 (none)."""
    frame = stars(12, seed=4, ebv=MAP_EBV)
    frame["dist"] = 500.0
    frame.loc[0, "dist"] = np.nan
    path = work / "map_stars.csv"
    frame.to_csv(path, index=False)
    status, _, err = run(["fit", path, work / "nomap.parquet", *BAND_ARGS, "--quiet"])
    assert status == 0, err
    return path, pd.read_parquet(work / "nomap.parquet")


def test_2d_map_bounds_ebv(work, map_stars):
    """A whole-sky map of E(B-V) = 0.05 bounds each star's E(B-V) (redcorr/correction/fit.py, "Priors").

    Self-consistency of the fit with the published table (Pecaut & Mamajek 2013); the bound
    E_map + 2 sqrt((0.1 E_map)^2 + 0.01^2) is the module's, plus one E(B-V) step of the grid.
    """
    src, without = map_stars
    nside = 4
    sky = write_healpix(work / "flat.fits", np.full(12 * nside**2, MAP_EBV), nside)
    out = work / "map2d.parquet"
    status, _, err = run(["fit", src, out, *BAND_ARGS, "--prior-map", sky, "--quiet"])
    assert status == 0, err
    result = pd.read_parquet(out)
    assert (result["ebv_fit_err"] <= without["ebv_fit_err"] + 1e-12).all()
    bound = MAP_EBV + 2 * np.hypot(0.1 * MAP_EBV, 0.01)
    assert (result["ebv_fit"] <= bound + EBV_STEP).all(), result["ebv_fit"].max()
    summary = json.loads((work / "map2d.parquet.summary.json").read_text())
    assert summary["setup"]["prior"]["kind"] == "bound"


def test_distance_resolved_map_gives_gaussian_prior(work, map_stars):
    """E(B-V) rising as 0.05 d/200 pc to 0.05 at 200 pc, flat beyond: the stars at 500 pc get a Gaussian prior."""
    src, without = map_stars
    nside, distances = 2, np.array([50.0, 100.0, 200.0, 400.0, 800.0, 1600.0])
    cumulative = MAP_EBV * np.minimum(distances / 200.0, 1.0)
    cube = write_healpix(work / "cube.fits", np.tile(cumulative, (12 * nside**2, 1)), nside, distances=distances)
    out = work / "map3d.parquet"
    status, _, err = run(["fit", src, out, *BAND_ARGS, "--prior-map", cube, "--distance-col", "dist", "--quiet"])
    assert status == 0, err
    summary = json.loads((work / "map3d.parquet.summary.json").read_text())
    assert summary["setup"]["prior"]["kind"] == "gaussian"
    result = pd.read_parquet(out)
    flags = result["fit_flags"].to_numpy()
    assert flags[0] & BITS["no_prior"]  # no distance: fitted as without a map
    assert not np.any(flags[1:] & BITS["no_prior"])
    values = [c for c in OUT_FIXED if c != "fit_flags"]
    pd.testing.assert_frame_equal(result.loc[[0], values], without.loc[[0], values], check_exact=True)
    assert (result["ebv_fit_err"][1:] < without["ebv_fit_err"][1:]).all()
    # within 3 sigma (common practice, no source)
    assert (np.abs(result["ebv_fit"][1:] - MAP_EBV) < 3 * result["ebv_fit_err"][1:]).all()


# ---------------------------------------------------------------------------------- 8. bad input per file
def test_band_not_in_colour_table(work, catalog):
    status, _, err = run(["fit", catalog[1], work / "x.parquet", "--band", "bessell-B", "--band", "kw-v",
                          "--mag", "kw-v=Vmag", "--err", "kw-v=e_Vmag"])
    line = error_line(status, err)
    assert "'kw-v'" in line and "bessell-B" in line and "twomass-Ks" in line, line


def test_malformed_colour_table_named(work, catalog):
    path = work / "no_teff.ecsv"
    Table({"spectral_type": ["G2V", "K2V"], "bessell-B": [0.65, 0.9], "bessell-V": [0.0, 0.0]}).write(
        path, format="ascii.ecsv")
    status, _, err = run(["fit", catalog[1], work / "x.parquet", *BAND_ARGS, "--colours", path])
    line = error_line(status, err)
    assert str(path) in line or "no_teff.ecsv" in line, line
    assert "teff" in line.replace(str(path), ""), line


def test_band_without_error_column(work):
    frame = stars(4, seed=6).drop(columns=["e_Jmag"])
    src = work / "no_err.csv"
    frame.to_csv(src, index=False)
    status, _, err = run(["fit", src, work / "x.parquet", "--band", "bessell-V", "--band", "twomass-J"])
    line = error_line(status, err)
    assert "twomass-J" in line and "--err twomass-J=" in line, line


def test_fitting_a_fitted_output_again(work, fitted):
    again = work / "again.parquet"
    status, _, err = run(["fit", work / "out.parquet", again, *BAND_ARGS])
    line = error_line(status, err)
    assert "ebv_fit" in line and "fit_flags" in line and "--keep" in line, line
    assert not again.exists()



# -------------------------------------------------------------------------------------------- per-band floor
def test_floor_per_band_reaches_the_fit_and_weighs_a_band_down(work, catalog, fitted):
    """--floor MAG sets every band, --floor BAND=MAG one band; the default agrees with the core's.

    A large floor in Ks weighs that band down: χ² cannot grow (the model is fit with less weight), and
    the fit still recovers the truth (self-consistency with the packaged table, Pecaut & Mamajek 2013).
    """
    from redcorr.cli.fit import DEFAULT_FLOOR
    from redcorr.photometric_reddening import DEFAULT_FLOOR as CORE_FLOOR

    assert DEFAULT_FLOOR == CORE_FLOOR
    assert fitted[1]["setup"]["floor_mag"] == [CORE_FLOOR] * len(VIZIER)
    out = work / "floor.csv"
    status, text, err = run(["fit", catalog[1], out, *BAND_ARGS, "--floor", "0.03", "--floor", "twomass-Ks=0.5",
                             "--json"])
    assert status == 0, err
    assert json.loads(text)["setup"]["floor_mag"] == [0.03] * (len(VIZIER) - 1) + [0.5]
    result = pd.read_csv(out)
    assert np.all(result["chi2_fit"] <= fitted[0]["chi2_fit"] + 1e-9)
    # within 3 sigma (common practice, no source)
    assert np.all(np.abs(result["ebv_fit"] - result["ebv_true"]) < 3 * result["ebv_fit_err"])
    line = error_line(*run(["fit", catalog[1], work / "f2.csv", *BAND_ARGS, "--floor", "kw-v=0.1"])[:3:2])
    assert "--floor kw-v=0.1" in line and "bessell-B" in line
    line = error_line(*run(["fit", catalog[1], work / "f3.csv", *BAND_ARGS, "--floor=-0.1"])[:3:2])
    assert "--floor" in line and ">= 0" in line

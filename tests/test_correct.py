"""Tests of redcorr.correct: DataFrames in, DataFrames out."""

import functools

import numpy as np
import pandas as pd
import pytest
from catalog_helpers import KW, intrinsic, redden_fixed
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from redcorr.correct import FLAG_BITS, Correction, correct_dataframe, intrinsic_colour
from redcorr.curves import get_curve
from redcorr.exceptions import InputError, OutOfRangeWarning, UnknownNameError
from redcorr.extinction import band_ratio, coefficient_grid
from redcorr.io.filters import load_band
from redcorr.sed import blackbody


def _cols(band):
    return band.replace("-", "_")


# --- round trips: redden with the same model, correct, recover the intrinsic magnitudes -------
def test_round_trip_fixed_temperature_direct_integration():
    # Reddened by direct band integration (redcorr.extinction.band_extinction), corrected
    # through the A_V spline: recovers the intrinsic magnitudes to 1e-6 mag (issue 5).
    stars = intrinsic(500)
    out, summary = correct_dataframe(redden_fixed(stars, r_v=4.3), KW, r_v=4.3)
    for band in KW:
        np.testing.assert_allclose(out[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-6, rtol=0)
    assert summary["rows"] == 500 and summary["flagged"]["any"] == 0


def test_round_trip_av_input_and_ccm89():
    stars = intrinsic(200, seed=3)
    reddened = redden_fixed(stars, law="ccm89", r_v=3.1)
    reddened["A_V_mag"] = stars["ebv"] * 3.1
    reddened = reddened.drop(columns=["ebv", "e_ebv"])
    out, _ = correct_dataframe(reddened, KW, law="ccm89", av_column="A_V_mag")
    for band in KW:
        np.testing.assert_allclose(out[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-6, rtol=0)
    np.testing.assert_allclose(out["ebv_used"], stars["ebv"], rtol=1e-12)


def test_round_trip_temperature_column():
    stars = intrinsic(300, seed=4)
    rng = np.random.default_rng(5)
    stars["teff"] = rng.uniform(3500.0, 30000.0, len(stars))
    curve = get_curve("f99", r_v=3.1)
    grid = coefficient_grid(curve, [load_band(b) for b in KW])  # the same default grid
    a = grid.a_band(stars["ebv"].to_numpy() * 3.1, stars["teff"].to_numpy())
    reddened = stars.copy()
    for k, band in enumerate(KW):
        reddened[_cols(band)] += a[:, k]
    out, _ = correct_dataframe(reddened, KW, spectrum="column")
    for band in KW:
        np.testing.assert_allclose(out[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-6, rtol=0)
    np.testing.assert_array_equal(out["teff_used"], stars["teff"])


def test_round_trip_temperature_solved_from_colour():
    # Intrinsic colours of blackbodies (the solver's own colour table), reddened with the
    # coefficient grid at the true temperature: the iteration must find T and the magnitudes.
    n = 200
    rng = np.random.default_rng(6)
    t_true = rng.uniform(4000.0, 20000.0, n)
    stars = intrinsic(n, seed=6)
    stars["kw_b"] = stars["kw_v"] + intrinsic_colour("kw-b", "kw-v", t_true)
    curve = get_curve("f99", r_v=4.3)
    grid = coefficient_grid(curve, [load_band(b) for b in KW])
    a = grid.a_band(stars["ebv"].to_numpy() * 4.3, t_true)
    reddened = stars.copy()
    for k, band in enumerate(KW):
        reddened[_cols(band)] += a[:, k]
    out, summary = correct_dataframe(reddened, KW, r_v=4.3, spectrum="colour", solve_colour=("kw-b", "kw-v"))
    for band in KW:
        np.testing.assert_allclose(out[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-6, rtol=0)
    np.testing.assert_allclose(out["teff_used"], t_true, rtol=1e-4)
    assert summary["iterations_max"] >= 2 and summary["flagged"]["not_converged"] == 0
    assert (out["teff_iterations"] >= 1).all()


def test_per_row_rv_on_nodes_is_exact_and_between_nodes_close():
    stars = intrinsic(60, seed=7)
    rv = np.tile([3.1, 4.3, 5.0], 20)
    reddened = stars.copy()
    for r in (3.1, 4.3, 5.0):
        rows = rv == r
        reddened.loc[rows] = redden_fixed(stars.loc[rows], r_v=r)
    reddened["rv"] = rv
    out, _ = correct_dataframe(reddened, KW, rv_column="rv")
    for band in KW:
        np.testing.assert_allclose(out[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-6, rtol=0)
    # Between nodes, linear interpolation in R_V at fixed E(B-V): within 1e-3 mag of the exact
    # law at that R_V for E(B-V) <= 1.5 (module Notes; common practice, no source).
    mid = stars.copy()
    mid["rv"] = 3.65
    out_mid, _ = correct_dataframe(redden_fixed(stars, r_v=3.65).assign(rv=3.65), KW, rv_column="rv")
    for band in KW:
        np.testing.assert_allclose(out_mid[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-3, rtol=0)


# --- linear mode against published coefficient tables ----------------------------------------
def test_linear_mode_is_r_b_times_ebv():
    stars = intrinsic(100, seed=8)
    out, _ = correct_dataframe(stars, ["kw-v"], nonlinear=False, r_v=3.1)
    r_b = 3.1 * band_ratio(get_curve("f99", r_v=3.1), load_band("kw-v"), blackbody(7000.0))
    np.testing.assert_allclose(out["A_kw_v"], r_b * stars["ebv"], rtol=1e-12)


@pytest.mark.parametrize(("band", "published"), [("bessell-U", 1.569), ("bessell-B", 1.337), ("bessell-V", 1.000)])
def test_linear_a_over_av_against_ccm89_table3(band, published):
    # Cardelli, Clayton & Mathis 1989, ApJ 345, 245, Table 3: A(λ)/A(V) for R_V = 3.1 at the
    # effective wavelengths of Johnson U, B, V (values from memory). Ours integrates CCM89
    # through Bessell (1990) filters for a 7000 K blackbody; tolerance 2% for the source
    # spectrum and band width (CCM quote monochromatic values at effective wavelengths).
    frame = pd.DataFrame({"m": [15.0], "ebv": [1.0]})
    out, _ = correct_dataframe(frame, [band], mag_columns={band: "m"}, law="ccm89", nonlinear=False)
    assert out["A_" + band.replace("-", "_")].iloc[0] / 3.1 == pytest.approx(published, rel=0.02)


@pytest.mark.parametrize(
    ("band", "ref", "ref_band", "published", "published_ref"),
    [
        ("bessell-B", "bessell-V", "V", 3.626, 2.742),
        ("bessell-R", "bessell-V", "V", 2.169, 2.742),
        ("sdss2010-g", "sdss2010-r", "r", 3.303, 2.285),
        ("sdss2010-i", "sdss2010-r", "r", 1.698, 2.285),
        ("sdss2010-z", "sdss2010-r", "r", 1.263, 2.285),
    ],
)
def test_linear_r_b_ratios_against_sf11_table6(band, ref, ref_band, published, published_ref):
    # Schlafly & Finkbeiner 2011, ApJ 737, 103, Table 6: A_b/E(B-V)_SFD for F99, R_V = 3.1, a
    # 7000 K source (values from memory). Their E(B-V) scale (the 0.86 recalibration) cancels in
    # ratios of two bands, so we compare R_b/R_ref; tolerance 3% for their model-atmosphere
    # source spectrum against our blackbody and their filter curves against speclite's.
    frame = pd.DataFrame({"m1": [15.0], "m2": [15.0], "ebv": [1.0]})
    out, _ = correct_dataframe(frame, [band, ref], mag_columns={band: "m1", ref: "m2"}, nonlinear=False)
    ratio = out["A_" + band.replace("-", "_")].iloc[0] / out["A_" + ref.replace("-", "_")].iloc[0]
    assert ratio == pytest.approx(published / published_ref, rel=0.03), ref_band


def test_nonlinear_falls_below_linear_at_high_extinction():
    # Fitzpatrick 1999, PASP 111, 63, Sect. 3: the band extinction per unit A_V falls as the
    # band's effective wavelength moves red with growing A_V.
    frame = pd.DataFrame({"b": [15.0, 15.0], "ebv": [0.01, 3.0]})
    lin, _ = correct_dataframe(frame, ["kw-b"], mag_columns={"kw-b": "b"}, nonlinear=False)
    non, _ = correct_dataframe(frame, ["kw-b"], mag_columns={"kw-b": "b"})
    assert non["A_kw_b"].iloc[0] == pytest.approx(lin["A_kw_b"].iloc[0], rel=1e-3)
    assert non["A_kw_b"].iloc[1] < lin["A_kw_b"].iloc[1]


# --- uncertainties -----------------------------------------------------------------------------
@pytest.mark.parametrize("spectrum", [{}, {"temperature_column": "teff"}])
def test_reddening_error_uses_the_local_slope_of_a_band(spectrum):
    # First-order propagation (common practice, no source): σ_A = |dA_b/dE| σ_E, with the slope
    # taken where the row's reddening is. Checked against a central difference of the
    # corrected A_b itself over E(B-V) ± 1e-4, independently of how the slope is computed
    # (the A_V spline's derivative at fixed temperature, differences on the grid otherwise).
    stars = intrinsic(40, seed=13)
    stars["ebv"] = np.linspace(0.0, 4.0, 40)
    stars["teff"] = np.linspace(4000.0, 12000.0, 40)
    for band in KW:
        stars["e_" + _cols(band)] = 0.0
    out, _ = correct_dataframe(stars, KW, **spectrum)
    h = 1e-4
    shifted = {}
    for sign in (1, -1):
        moved = stars.assign(ebv=stars["ebv"] + sign * h)
        shifted[sign], _ = correct_dataframe(moved, KW, **spectrum)
    for band in KW:
        a = "A_" + _cols(band)
        slope = (shifted[1][a] - shifted[-1][a]) / (2 * h)
        np.testing.assert_allclose(out[_cols(band) + "_dered_err"], slope * stars["e_ebv"], rtol=2e-5, atol=1e-12)


def test_errors_linear_mode_follow_the_documented_formula():
    stars = intrinsic(50, seed=9)
    out, _ = correct_dataframe(stars, ["kw-b", "kw-v"], nonlinear=False, rv_error=0.3,
                               colours=[("kw-b", "kw-v")])
    curve = get_curve("f99", r_v=3.1)
    r = {b: 3.1 * band_ratio(curve, load_band(b), blackbody(7000.0)) for b in ("kw-b", "kw-v")}

    def r_at(rv, b):
        return rv * band_ratio(get_curve("f99", r_v=rv), load_band(b), blackbody(7000.0))

    # dA_b/dR_V at fixed E(B-V): central difference over ±0.05 (module Notes)
    d = {b: (r_at(3.15, b) - r_at(3.05, b)) / 0.1 for b in r}
    ebv, s_e = stars["ebv"], stars["e_ebv"]
    for b in r:
        c = _cols(b)
        expect = np.sqrt(stars["e_" + c] ** 2 + (r[b] * s_e) ** 2 + (d[b] * ebv * 0.3) ** 2)
        np.testing.assert_allclose(out[c + "_dered_err"], expect, rtol=1e-6)
    expect = np.sqrt(stars["e_kw_b"] ** 2 + stars["e_kw_v"] ** 2 + ((r["kw-b"] - r["kw-v"]) * s_e) ** 2
                     + ((d["kw-b"] - d["kw-v"]) * ebv * 0.3) ** 2)
    np.testing.assert_allclose(out["kw_b-kw_v_dered_err"], expect, rtol=1e-6)


# --- chunk-size invariance ---------------------------------------------------------------------
_STARS = intrinsic(120, seed=11)
_STARS.loc[5, "kw_v"] = np.nan
_STARS.loc[7, "ebv"] = -0.05


@functools.cache
def _chunk_correction():
    corr = Correction(KW, columns=list(_STARS.columns), spectrum="colour", solve_colour=("kw-b", "kw-v"),
                      colours=[("kw-v", "kw-r")])
    return corr, corr.correct(_STARS)


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.integers(min_value=1, max_value=60), min_size=1, max_size=12))
def test_any_chunking_gives_identical_output(sizes):
    # Row-wise correction: the output cannot depend on how the table is split (issue 5).
    corr, whole = _chunk_correction()
    bounds = np.cumsum([0] + sizes)
    bounds = [b for b in bounds if b < len(_STARS)] + [len(_STARS)]
    parts = [corr.correct(_STARS.iloc[a:b]) for a, b in zip(bounds[:-1], bounds[1:], strict=True)]
    pd.testing.assert_frame_equal(pd.concat(parts), whole, check_exact=True)


# --- flags ------------------------------------------------------------------------------------
def test_flags_missing_negative_and_text():
    frame = pd.DataFrame({
        "v": ["15.0", "abc", "", "16.0", "17.0"],
        "ebv": [0.1, 0.2, 0.3, np.nan, -0.1],
    })
    out, summary = correct_dataframe(frame, ["kw-v"], mag_columns={"kw-v": "v"})
    flags = out["dered_flags"].to_numpy()
    assert flags[0] == 0
    assert flags[1] == FLAG_BITS["non_numeric"] | FLAG_BITS["missing"]
    assert flags[2] == FLAG_BITS["missing"]  # an empty cell is missing, not text
    assert flags[3] == FLAG_BITS["missing"]
    assert flags[4] == FLAG_BITS["negative_reddening"]
    assert np.isnan(out["v_dered"].iloc[1]) and np.isnan(out["A_kw_v"].iloc[3])
    assert out["A_kw_v"].iloc[4] < 0  # odd extension: a negative E(B-V) brightens nothing away
    assert summary["flagged"]["non_numeric"] == 1 and summary["flagged"]["missing"] == 3
    with pytest.raises(InputError, match="'abc'.*strict"):
        correct_dataframe(frame, ["kw-v"], mag_columns={"kw-v": "v"}, strict=True)


def test_flag_outside_grid_warns_and_rv_outside_law_range():
    frame = pd.DataFrame({"v": [15.0, 15.0, 15.0], "ebv": [0.1, 8.0, 0.1], "rv": [3.1, 3.1, 7.5]})
    with pytest.warns(OutOfRangeWarning, match="1 row"):
        out, summary = correct_dataframe(frame, ["kw-v"], mag_columns={"kw-v": "v"}, rv_column="rv")
    flags = out["dered_flags"].to_numpy()
    assert flags[1] & FLAG_BITS["outside_grid"]
    assert flags[2] & FLAG_BITS["outside_curve"] and np.isnan(out["v_dered"].iloc[2])
    assert summary["flagged"]["outside_curve"] == 1


def test_map_source_flags_coverage():
    from redcorr._paths import project_dir
    from redcorr.io.maps import open_map

    dust = open_map(str(project_dir("demo") / "brume_ebv_healpix.fits"))
    frame = pd.DataFrame({"ra": [101.25, 101.3, 300.0], "dec": [-27.40, -27.2, 60.0], "kw_v": 15.0})
    out, summary = correct_dataframe(frame, ["kw-v"], dust_map=dust, map_scale=1.0)
    values, mflags = dust.lookup(frame["ra"].to_numpy(), frame["dec"].to_numpy())
    ok = mflags == 0
    np.testing.assert_allclose(out["ebv_used"].to_numpy()[ok], values[ok])
    assert ((out["dered_flags"].to_numpy() & FLAG_BITS["map_coverage"]) != 0).tolist() == (~ok).tolist()
    assert summary["rows"] == 3


# --- set-up errors -----------------------------------------------------------------------------
def test_missing_column_lists_the_columns():
    frame = pd.DataFrame({"x": [1.0], "ebv": [0.1]})
    with pytest.raises(InputError, match=r"kw-v.*\['x', 'ebv'\]"):
        correct_dataframe(frame, ["kw-v"])


def test_unknown_band():
    with pytest.raises(UnknownNameError, match="kw-q"):
        correct_dataframe(pd.DataFrame({"v": [1.0], "ebv": [0.1]}), ["kw-q"])


def test_no_reddening_source():
    with pytest.raises(InputError, match="no reddening given"):
        correct_dataframe(pd.DataFrame({"kw_v": [1.0]}), ["kw-v"])


def test_output_clash_and_fixed_rv_law():
    frame = pd.DataFrame({"kw_v": [1.0], "ebv": [0.1], "A_kw_v": [0.0]})
    with pytest.raises(InputError, match="already exist"):
        correct_dataframe(frame, ["kw-v"])
    with pytest.raises(InputError, match="fixed R_V"):
        correct_dataframe(pd.DataFrame({"kw_v": [1.0], "ebv": [0.1], "rv": [3.1]}), ["kw-v"],
                          law="g03-smcbar", rv_column="rv")


def test_header_only_frame_gives_empty_output_with_all_columns():
    frame = pd.DataFrame({"kw_v": pd.Series(dtype=float), "ebv": pd.Series(dtype=float)})
    out, summary = correct_dataframe(frame, ["kw-v"])
    assert len(out) == 0 and {"kw_v_dered", "A_kw_v", "dered_flags"} <= set(out.columns)
    assert summary["rows"] == 0


def test_guessing_columns_and_galactic_b_is_not_a_magnitude():
    frame = pd.DataFrame({"Vmag": [15.0], "e_Vmag": [0.02], "E(B-V)": [0.1], "B": [16.0]})
    corr = Correction(["kw-v", "kw-b"], columns=list(frame.columns))
    assert corr.mag_cols == ["Vmag", "B"] and corr.err_cols == ["e_Vmag", None]
    assert corr.red_col == "E(B-V)" and corr.red_quantity == "ebv"
    coords = pd.DataFrame({"l": [240.0], "b": [-13.0], "kw_v": [15.0], "ebv": [0.1]})
    with pytest.raises(InputError, match="no magnitude column found for band 'kw-b'"):
        Correction(["kw-b"], columns=list(coords.columns))


def test_band_beyond_the_law_is_refused_or_flagged():
    from redcorr.exceptions import ExtrapolationWarning

    frame = pd.DataFrame({"m": [15.0, 16.0], "ebv": [0.1, 0.2]})
    with pytest.raises(InputError, match="beyond the f99 range"):
        correct_dataframe(frame, ["tophat:3.6:0.4"], mag_columns={"tophat:3.6:0.4": "m"})
    with pytest.warns(ExtrapolationWarning):
        out, summary = correct_dataframe(frame, ["tophat:3.6:0.4"], mag_columns={"tophat:3.6:0.4": "m"},
                                         extrapolate=True)
    assert (out["dered_flags"] & FLAG_BITS["outside_curve"]).all() and summary["flagged"]["outside_curve"] == 2
    assert out["A_tophat_3_6_0_4"].notna().all()

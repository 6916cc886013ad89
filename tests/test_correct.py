"""Tests of redcorr.correction: DataFrames in, DataFrames out."""

import functools

import direct_integration as direct
import numpy as np
import pandas as pd
import pytest
from catalog_helpers import KW, intrinsic, redden_fixed
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from published import CCM89_TABLE3_RV31, SF11_TABLE6_RV31

from redcorr.correction import CORRECTION_FLAGS, Correction
from redcorr.curves import get_curve
from redcorr.exceptions import InputError, OutOfRangeWarning, UnknownNameError
from redcorr.io.correction import correct_dataframe, correction_options
from redcorr.io.filters import load_band


def _cols(band):
    return band.replace("-", "_")


# --- round trips: redden, correct, recover the intrinsic magnitudes ----------------------------
def test_round_trip_fixed_temperature_direct_integration():
    # Reddened by direct band integration (redcorr.extinction.band_extinction, itself checked
    # against independent quadrature in test_extinction), corrected through the cubic spline in
    # A_V (step 0.05 mag): recovers the intrinsic magnitudes to 1e-6 mag, the spline's
    # interpolation error for this smooth A_b(A_V) (module Notes: < 1e-8 mag) with margin.
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
        # spline interpolation error in A_V, as above
        np.testing.assert_allclose(out[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-6, rtol=0)
    # E(B-V) = A_V/R_V undoes the test's A_V = 3.1 E(B-V): equal up to the rounding of one
    # multiplication and one division (a few ulp, far below 1e-12)
    np.testing.assert_allclose(out["ebv_used"], stars["ebv"], rtol=1e-12)


def test_round_trip_temperature_column():
    # Each star reddened at its own temperature by independent quadrature (tests/direct_integration:
    # dense trapezoid sums and Planck's law from scipy.constants), corrected through the
    # coefficient grid interpolated bilinearly in (ln T, A_V). Tolerance 1e-3 mag: the grid's
    # interpolation error, bounded by 2e-3 mag up to A_V = 20 in test_extinction and measured
    # below 2e-4 mag here (A_V <= 4.7); the reference quadrature is good to 1e-7 mag.
    stars = intrinsic(300, seed=4)
    rng = np.random.default_rng(5)
    stars["teff"] = rng.uniform(3500.0, 30000.0, len(stars))
    curve = get_curve("f99", r_v=3.1)
    reddened = stars.copy()
    for band in KW:
        a_v = 3.1 * stars["ebv"].to_numpy()
        reddened[_cols(band)] += direct.a_band(curve, load_band(band), stars["teff"].to_numpy(), a_v)
    out, _ = correct_dataframe(reddened, KW, spectrum="column")
    for band in KW:
        np.testing.assert_allclose(out[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-3, rtol=0)
    # bitwise: the temperature column is used as given, never recomputed
    np.testing.assert_array_equal(out["teff_used"], stars["teff"])


def test_round_trip_temperature_solved_from_colour():
    # Intrinsic kw-b - kw-v colours of blackbodies and their reddening, both by independent
    # quadrature (tests/direct_integration; AB magnitudes, Oke & Gunn 1983): the iteration must
    # find T and the magnitudes. Tolerances: 1e-3 mag for the coefficient grid's bilinear
    # interpolation (see above; measured 2e-4 mag); T to 1e-3 relative, as a colour error of
    # 2e-4 mag (grid) plus 3e-5 mag (the solver's colour table, linear in log T) moves the
    # solved T by up to ~1e-3 for the hottest stars here (measured 1.3e-4).
    n = 200
    rng = np.random.default_rng(6)
    t_true = rng.uniform(4000.0, 20000.0, n)
    stars = intrinsic(n, seed=6)
    b_band, v_band = load_band("kw-b"), load_band("kw-v")
    stars["kw_b"] = stars["kw_v"] + direct.ab_magnitude(b_band, t_true) - direct.ab_magnitude(v_band, t_true)
    curve = get_curve("f99", r_v=4.3)
    reddened = stars.copy()
    for band in KW:
        reddened[_cols(band)] += direct.a_band(curve, load_band(band), t_true, 4.3 * stars["ebv"].to_numpy())
    out, summary = correct_dataframe(reddened, KW, r_v=4.3, spectrum="colour", solve_colour=("kw-b", "kw-v"))
    for band in KW:
        np.testing.assert_allclose(out[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-3, rtol=0)
    np.testing.assert_allclose(out["teff_used"], t_true, rtol=1e-3)
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
        # on an R_V node the node's own A_V spline is used: its 1e-6 mag interpolation error, as above
        np.testing.assert_allclose(out[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-6, rtol=0)
    # Between nodes, linear interpolation in R_V at fixed E(B-V): within 1e-3 mag of the exact
    # law at that R_V for E(B-V) <= 1.5 (module Notes; common practice, no source).
    mid = stars.copy()
    mid["rv"] = 3.65
    out_mid, _ = correct_dataframe(redden_fixed(stars, r_v=3.65).assign(rv=3.65), KW, rv_column="rv")
    for band in KW:
        np.testing.assert_allclose(out_mid[_cols(band) + "_dered"], stars[_cols(band)], atol=1e-3, rtol=0)


# --- linear mode against independent quadrature and published coefficient tables ------------
def test_linear_mode_is_r_b_times_ebv():
    # Linear mode: A_b = R_V ⟨r⟩_b E(B-V), ⟨r⟩_b the A_V → 0 limit of A_b/A_V, i.e. the mean of
    # r(λ) weighted by F_λ T λ (first-order Taylor term of the band-extinction integral; common
    # practice, no source). Reference: independent quadrature (tests/direct_integration) of a
    # 7000 K blackbody through kw-v; both integrations agree to ~1e-10 relative, hence 1e-8.
    stars = intrinsic(100, seed=8)
    out, _ = correct_dataframe(stars, ["kw-v"], nonlinear=False, r_v=3.1)
    r_b = 3.1 * direct.ratio(get_curve("f99", r_v=3.1), load_band("kw-v"), 7000.0)
    np.testing.assert_allclose(out["A_kw_v"], r_b * stars["ebv"], rtol=1e-8)


@pytest.mark.parametrize(("band", "letter"), [("bessell-U", "U"), ("bessell-B", "B"), ("bessell-V", "V")])
def test_linear_a_over_av_against_ccm89_table3(band, letter):
    # Cardelli, Clayton & Mathis 1989, Table 3 (tests/published.py): A(λ)/A(V) for R_V = 3.1 at
    # the effective wavelengths of Johnson U, B, V. Ours integrates CCM89 through Bessell (1990)
    # filters for a 7000 K blackbody; tolerance 2% for the source spectrum and band width (CCM
    # quote monochromatic values at effective wavelengths).
    frame = pd.DataFrame({"m": [15.0], "ebv": [1.0]})
    out, _ = correct_dataframe(frame, [band], mag_columns={band: "m"}, law="ccm89", nonlinear=False)
    assert out["A_" + band.replace("-", "_")].iloc[0] / 3.1 == pytest.approx(CCM89_TABLE3_RV31[letter][1], rel=0.02)


@pytest.mark.parametrize(
    ("band", "ref", "published", "published_ref"),
    [
        ("bessell-B", "bessell-V", "Landolt B", "Landolt V"),
        ("bessell-R", "bessell-V", "Landolt R", "Landolt V"),
        ("sdss2010-g", "sdss2010-r", "SDSS g", "SDSS r"),
        ("sdss2010-i", "sdss2010-r", "SDSS i", "SDSS r"),
        ("sdss2010-z", "sdss2010-r", "SDSS z", "SDSS r"),
    ],
)
def test_linear_r_b_ratios_against_sf11_table6(band, ref, published, published_ref):
    # Schlafly & Finkbeiner 2011, Table 6 (tests/published.py): A_b/E(B-V)_SFD for F99, R_V = 3.1,
    # a 7000 K source. Their E(B-V) scale cancels in ratios of two bands, so we compare R_b/R_ref;
    # tolerance 3% for their model-atmosphere source spectrum against our blackbody and their
    # filter curves against speclite's.
    frame = pd.DataFrame({"m1": [15.0], "m2": [15.0], "ebv": [1.0]})
    out, _ = correct_dataframe(frame, [band, ref], mag_columns={band: "m1", ref: "m2"}, nonlinear=False)
    ratio = out["A_" + band.replace("-", "_")].iloc[0] / out["A_" + ref.replace("-", "_")].iloc[0]
    expected = SF11_TABLE6_RV31[published] / SF11_TABLE6_RV31[published_ref]
    assert ratio == pytest.approx(expected, rel=0.03), published


def test_nonlinear_falls_below_linear_at_high_extinction():
    # Fitzpatrick 1999, PASP 111, 63, Sect. 3: the band extinction per unit A_V falls as the
    # band's effective wavelength moves red with growing A_V.
    frame = pd.DataFrame({"b": [15.0, 15.0], "ebv": [0.01, 3.0]})
    lin, _ = correct_dataframe(frame, ["kw-b"], mag_columns={"kw-b": "b"}, nonlinear=False)
    non, _ = correct_dataframe(frame, ["kw-b"], mag_columns={"kw-b": "b"})
    # At E(B-V) = 0.01 (A_V = 0.031) the second-order term of A_b(A_V) is ~1e-4 of A_b (measured),
    # so the two modes agree to 1e-3.
    assert non["A_kw_b"].iloc[0] == pytest.approx(lin["A_kw_b"].iloc[0], rel=1e-3)
    assert non["A_kw_b"].iloc[1] < lin["A_kw_b"].iloc[1]


# --- uncertainties -----------------------------------------------------------------------------
@pytest.mark.parametrize("spectrum", [{}, {"spectrum": "column", "temperature_column": "teff"}])
def test_reddening_error_uses_the_local_slope_of_a_band(spectrum):
    # First-order propagation (common practice, no source): σ_A = |dA_b/dE| σ_E, with the slope
    # taken where the row's reddening is. Checked against a central difference of the
    # corrected A_b itself over E(B-V) ± 1e-4, independently of how the slope is computed
    # (the A_V spline's derivative at fixed temperature, differences on the grid otherwise).
    # rtol 2e-5: the truncation error of either difference, O(h² A_b''') relative, and the
    # spline's derivative error, both ~1e-6 (measured); atol 1e-12 for the row with σ_E = 0.
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


def test_errors_linear_mode_follow_first_order_propagation():
    # First-order propagation in quadrature (common practice, no source): for m₀ = m − R_b(R_V) E,
    # σ² = σ_m² + (R_b σ_E)² + (E ∂R_b/∂R_V σ_RV)², and for a colour the E and R_V terms of the two
    # bands taken together. R_b = R_V ⟨r⟩_b and its R_V slope come from independent quadrature
    # (tests/direct_integration) of the F99 law; the slope by a central difference over ±0.01,
    # exact here since F99's A/E(B-V) is at most quadratic in R_V (Fitzpatrick 1999, Table 4).
    # rtol 1e-6: the package's own ±0.05 difference is exact for the same reason, and both
    # integrations agree to ~1e-10 (measured agreement 7e-8).
    stars = intrinsic(50, seed=9)
    out, _ = correct_dataframe(stars, ["kw-b", "kw-v"], nonlinear=False, rv_error=0.3,
                               colours=[("kw-b", "kw-v")])

    def r_b(rv, b):
        return rv * direct.ratio(get_curve("f99", r_v=rv), load_band(b), 7000.0)

    r = {b: r_b(3.1, b) for b in ("kw-b", "kw-v")}
    d = {b: (r_b(3.11, b) - r_b(3.09, b)) / 0.02 for b in r}
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
    corr = Correction(list(_STARS.columns), correction_options(KW, spectrum="colour", solve_colour=("kw-b", "kw-v"),
                                                               colours=[("kw-v", "kw-r")]))
    return corr, corr.correct(_STARS)


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.integers(min_value=1, max_value=60), min_size=1, max_size=12))
def test_any_chunking_gives_identical_output(sizes):
    # Row-wise correction: the output cannot depend on how the table is split. Bitwise identity
    # (check_exact) is what is tested: every row goes through the same arithmetic whatever chunk
    # it is in, so even the last bit must agree.
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
    assert flags[1] == CORRECTION_FLAGS["non_numeric"] | CORRECTION_FLAGS["missing"]
    assert flags[2] == CORRECTION_FLAGS["missing"]  # an empty cell is missing, not text
    assert flags[3] == CORRECTION_FLAGS["missing"]
    assert flags[4] == CORRECTION_FLAGS["negative_reddening"]
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
    assert flags[1] & CORRECTION_FLAGS["outside_grid"]
    assert flags[2] & CORRECTION_FLAGS["outside_curve"] and np.isnan(out["v_dered"].iloc[2])
    assert summary["flagged"]["outside_curve"] == 1


def test_map_source_flags_coverage():
    from redcorr._paths import project_dir
    from redcorr.io.maps import open_map

    dust = open_map(str(project_dir("demo") / "brume_ebv_healpix.fits"))
    frame = pd.DataFrame({"ra": [101.25, 101.3, 300.0], "dec": [-27.40, -27.2, 60.0], "kw_v": 15.0})
    out, summary = correct_dataframe(frame, ["kw-v"], dust_map=dust, map_scale=1.0)
    values, mflags = dust.lookup(frame["ra"].to_numpy(), frame["dec"].to_numpy())
    ok = mflags == 0
    # bitwise: with map_scale = 1 the corrector must use the map's own value unchanged
    np.testing.assert_array_equal(out["ebv_used"].to_numpy()[ok], values[ok])
    assert ((out["dered_flags"].to_numpy() & CORRECTION_FLAGS["map_coverage"]) != 0).tolist() == (~ok).tolist()
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
                          law="g03-smc-bar", rv_column="rv")


def test_header_only_frame_gives_empty_output_with_all_columns():
    frame = pd.DataFrame({"kw_v": pd.Series(dtype=float), "ebv": pd.Series(dtype=float)})
    out, summary = correct_dataframe(frame, ["kw-v"])
    assert len(out) == 0 and {"kw_v_dered", "A_kw_v", "dered_flags"} <= set(out.columns)
    assert summary["rows"] == 0


def test_guessing_columns_and_galactic_b_is_not_a_magnitude():
    frame = pd.DataFrame({"Vmag": [15.0], "e_Vmag": [0.02], "E(B-V)": [0.1], "B": [16.0]})
    corr = Correction(list(frame.columns), correction_options(["kw-v", "kw-b"]))
    assert corr.mag_cols == ["Vmag", "B"] and corr.err_cols == ["e_Vmag", None]
    assert corr.red_col == "E(B-V)" and corr.red_quantity == "ebv"
    coords = pd.DataFrame({"l": [240.0], "b": [-13.0], "kw_v": [15.0], "ebv": [0.1]})
    with pytest.raises(InputError, match="no magnitude column found for band 'kw-b'"):
        Correction(list(coords.columns), correction_options(["kw-b"]))


def test_band_beyond_the_law_is_refused_or_flagged():
    from redcorr.exceptions import ExtrapolationWarning

    frame = pd.DataFrame({"m": [15.0, 16.0], "ebv": [0.1, 0.2]})
    with pytest.raises(InputError, match="beyond the f99 range"):
        correct_dataframe(frame, ["tophat:3.6:0.4"], mag_columns={"tophat:3.6:0.4": "m"})
    with pytest.warns(ExtrapolationWarning):
        out, summary = correct_dataframe(frame, ["tophat:3.6:0.4"], mag_columns={"tophat:3.6:0.4": "m"},
                                         extrapolate=True)
    assert (out["dered_flags"] & CORRECTION_FLAGS["outside_curve"]).all() and summary["flagged"]["outside_curve"] == 2
    assert out["A_tophat_3_6_0_4"].notna().all()

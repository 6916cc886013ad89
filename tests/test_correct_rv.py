"""Per-row R_V (``rv_column``) against constant-R_V corrections of the same rows.

The module Notes of :mod:`redcorr.correction` document the per-row method: A_b is computed at R_V
nodes spaced ``rv_step`` (0.1) across the law's range and interpolated linearly in R_V between the
two nodes around each row at fixed E(B-V), because at fixed E(B-V) A_b = E(B-V)·(a_b R_V + b_b) is
linear in R_V for laws of the CCM89 form (Cardelli, Clayton & Mathis 1989, ApJ 345, 245, Eq. 1:
A(λ)/A(V) = a(x) + b(x)/R_V). These tests hold a per-row correction to that statement, row by row,
against constant-R_V corrections computed on their own.
"""

import numpy as np
import pandas as pd
import pytest
from catalog_helpers import KW, intrinsic

from redcorr.io.correction import correct_dataframe

NO_MAG_ERRORS = {band: None for band in KW}


def _constant(frame, r_v, **options):
    """The output of a constant-R_V correction of ``frame`` at ``r_v``."""
    return correct_dataframe(frame, KW, r_v=r_v, **options)[0]


def _per_row(frame, rv, **options):
    return correct_dataframe(frame.assign(rv=rv), KW, rv_column="rv", **options)[0]


def _output_columns(out):
    return [c for c in out.columns if c.endswith(("_dered", "_dered_err")) or c.startswith("A_")] + [
        "ebv_used", "av_used"]


@pytest.mark.parametrize("nonlinear", [True, False])
def test_on_a_node_equals_the_constant_correction_row_by_row(nonlinear):
    # On a node (R_V = 1.8 + 0.1 k for f99) the interpolation weight of the other node is 0, so
    # every output, the uncertainties included (dA_b/dE(B-V) is the node's own), is the
    # constant-R_V correction's (module Notes; 1e-9 mag allows for rounding in the weight).
    stars = intrinsic(40, seed=21)
    values = [2.4, 3.1, 4.3, 5.4]
    rv = np.resize(values, len(stars))
    out = _per_row(stars, rv, nonlinear=nonlinear)
    for value in values:
        rows = rv == value
        expected = _constant(stars[rows], value, nonlinear=nonlinear)
        for col in _output_columns(expected):
            np.testing.assert_allclose(out.loc[rows, col], expected[col], atol=1e-9, rtol=0, err_msg=col)
        np.testing.assert_allclose(out.loc[rows, "rv_used"], value, rtol=0, atol=0)


def test_between_nodes_is_the_linear_interpolation_of_the_two_nodes():
    # Between nodes: A_b = (1 − w)·A_b(lo) + w·A_b(hi), w = (R_V − lo)/(hi − lo), at fixed E(B-V)
    # (module Notes, after Cardelli et al. 1989 Eq. 1), and the uncertainty from σ(E(B-V)) alone
    # uses the same interpolation of dA_b/dE(B-V): σ = |(1 − w) R_lo + w R_hi| σ_E, R_node read
    # from the constant correction at the node as σ_node/σ_E (no magnitude errors: err_columns off).
    stars = intrinsic(30, seed=22)
    cases = [(3.14, 3.1, 3.2), (2.45, 2.4, 2.5), (5.37, 5.3, 5.4)]  # (R_V, node below, node above)
    rv = np.resize([c[0] for c in cases], len(stars))
    out = _per_row(stars, rv, err_columns=NO_MAG_ERRORS)
    for value, lo, hi in cases:
        rows = rv == value
        w = (value - lo) / (hi - lo)
        at_lo = _constant(stars[rows], lo, err_columns=NO_MAG_ERRORS)
        at_hi = _constant(stars[rows], hi, err_columns=NO_MAG_ERRORS)
        for band in KW:
            col, a_col = band.replace("-", "_"), "A_" + band.replace("-", "_")
            a_mix = (1 - w) * at_lo[a_col].to_numpy() + w * at_hi[a_col].to_numpy()
            np.testing.assert_allclose(out.loc[rows, a_col], a_mix, atol=1e-9, rtol=0)
            np.testing.assert_allclose(out.loc[rows, col + "_dered"], stars.loc[rows, col] - a_mix, atol=1e-9, rtol=0)
            err_mix = (1 - w) * at_lo[col + "_dered_err"].to_numpy() + w * at_hi[col + "_dered_err"].to_numpy()
            np.testing.assert_allclose(out.loc[rows, col + "_dered_err"], err_mix, atol=1e-9, rtol=0)


def test_rv_uncertainty_is_the_slope_between_the_nodes():
    # σ(m₀) from σ(R_V) alone (no magnitude or E(B-V) errors) is |∂A_b/∂R_V| σ_RV, with ∂A_b/∂R_V
    # at fixed E(B-V) the slope of the interpolation, (A_b(hi) − A_b(lo))/(hi − lo) (module Notes).
    stars = intrinsic(20, seed=23).drop(columns=["e_ebv"])
    frame = stars.assign(e_rv=np.linspace(0.05, 0.4, len(stars)))
    out = _per_row(frame, 4.26, err_columns=NO_MAG_ERRORS, rv_error_column="e_rv")
    at_lo, at_hi = _constant(stars, 4.2), _constant(stars, 4.3)
    for band in KW:
        col, a_col = band.replace("-", "_"), "A_" + band.replace("-", "_")
        slope = (at_hi[a_col] - at_lo[a_col]).to_numpy() / 0.1
        np.testing.assert_allclose(out[col + "_dered_err"], np.abs(slope) * frame["e_rv"], rtol=1e-9, atol=1e-12)


def test_linear_mode_ccm89_between_nodes_equals_the_constant_correction():
    # CCM89 in linear mode: A_b = E(B-V)·(R_V⟨a⟩_b + ⟨b⟩_b) with band weights F_λ T λ that do not
    # depend on R_V, exactly linear in R_V (Cardelli et al. 1989 Eq. 1). The interpolation between
    # nodes then reproduces the constant-R_V correction at any R_V, its dA_b/dE(B-V) included.
    stars = intrinsic(30, seed=24)
    values = [2.67, 3.05, 4.81, 5.46]  # ccm89 nodes are 2.1 + 0.1 k up to 6.1
    rv = np.resize(values, len(stars))
    out = _per_row(stars, rv, law="ccm89", nonlinear=False)
    for value in values:
        rows = rv == value
        expected = _constant(stars[rows], value, law="ccm89", nonlinear=False)
        for col in _output_columns(expected):
            np.testing.assert_allclose(out.loc[rows, col], expected[col], atol=1e-9, rtol=0, err_msg=col)


def test_rows_outside_the_range_are_flagged_and_the_others_unchanged():
    # A row with R_V outside the law's range (f99: 1.8-6.0) or missing gets no correction; the
    # other rows come out as if corrected alone (every row is corrected on its own, module docs).
    stars = intrinsic(6, seed=25)
    rv = np.array([3.1, 7.0, np.nan, 4.3, 1.0, 3.1])
    out = _per_row(stars, rv)
    good = np.isin(rv, [3.1, 4.3])
    alone = pd.concat([_per_row(stars.iloc[[i]], rv[[i]]) for i in np.flatnonzero(good)])
    for col in _output_columns(alone):
        np.testing.assert_allclose(out.loc[good, col], alone[col], atol=1e-12, rtol=0, err_msg=col)
    assert out.loc[~good, "kw_v_dered"].isna().all()
    assert (out.loc[~good, "dered_flags"] != 0).all()

"""CCM89 and O94 against their papers."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from published import CCM89_TABLE3_RV31

from redcorr.curves import CCM89, O94
from redcorr.exceptions import InputError, OutOfRangeWarning


@pytest.mark.parametrize(("wave", "expected"), list(CCM89_TABLE3_RV31.values()), ids=list(CCM89_TABLE3_RV31))
def test_ccm89_table3(wave, expected):
    # Cardelli, Clayton & Mathis (1989), Table 3 (tests/published.py). atol 0.015: the table sets
    # the fitted law beside the mean observed curve, which it matches to about that.
    assert_allclose(CCM89(3.1)(wave), expected, atol=0.015)


def test_ccm89_equations_at_v():
    # CCM89 eqs. 3a-3b at y = x - 1.82 = 0: a = 1, b = 0, so A/A_V = 1 for any
    # R_V at x = 1.82 µm⁻¹ (by construction of the law). 1/(1/1.82) is 1.82 to rounding, hence
    # 1e-12.
    for r_v in (2.75, 3.1, 5.5):
        assert_allclose(CCM89(r_v)(1 / 1.82), 1.0, rtol=1e-12)


def test_ccm89_ir_power_law():
    # CCM89 eq. 2: a = 0.574 x^1.61, b = -0.527 x^1.61 in the infrared; the same arithmetic by
    # hand, equal to rounding (1e-12).
    x = np.array([0.35, 0.6, 1.0])
    assert_allclose(CCM89(4.0)(1 / x), (0.574 - 0.527 / 4.0) * x**1.61, rtol=1e-12)


@pytest.mark.parametrize("cls", [CCM89, O94])
@pytest.mark.parametrize("r_v", [2.75, 3.1, 5.0])
def test_r_v_definition(cls, r_v):
    # R_V = A_V/E(B-V) and E(B-V) = A_B - A_V (definitions, common practice,
    # no source): A_B/A_V - 1 = 1/R_V at the laws' B and V wavelengths
    # (0.44, 0.55 µm). The laws are fits, so the identity holds to ~0.004.
    curve = cls(r_v)
    e_bv_over_a_v = curve(0.44) - curve(0.55)
    assert_allclose(e_bv_over_a_v, 1 / r_v, atol=0.004)


@pytest.mark.parametrize("cls", [CCM89, O94])
@pytest.mark.parametrize(
    ("x_join", "tol"),
    # CCM89 segments join with steps below 1e-3 in A/A_V (measured from the
    # published coefficients). O'Donnell's optical polynomial ends 0.01 below
    # the CCM89 ultraviolet at x = 3.3 (measured; O'Donnell 1994 eq. 2 against
    # CCM89 eq. 4).
    [(1.1, 1e-3), (3.3, 1.2e-2), (5.9, 1e-6), (8.0, 1e-3)],
)
def test_continuity(cls, x_join, tol):
    eps = 1e-9
    curve = cls(3.1)
    left, right = curve([1 / (x_join - eps), 1 / (x_join + eps)])
    assert abs(left - right) < tol


def test_o94_changes_only_the_optical():
    # O'Donnell (1994) replaces only the 1.1 <= x <= 3.3 µm⁻¹ polynomials; elsewhere the same
    # CCM89 formulas, equal to rounding (1e-12).
    x = np.array([0.4, 1.0, 3.5, 5.0, 7.0, 9.5])
    assert_allclose(O94(3.1)(1 / x), CCM89(3.1)(1 / x), rtol=1e-12)


def test_o94_close_to_ccm89_in_optical():
    # O'Donnell (1994) describes the update as a small refinement of CCM89 in
    # the optical (from memory); the two differ by at most 2.9% between 0.31
    # and 0.9 µm for R_V = 3.1 (measured, largest near 0.33 and 0.39 µm).
    w = np.linspace(0.31, 0.9, 50)
    assert_allclose(O94(3.1)(w), CCM89(3.1)(w), rtol=0.03)


def test_o94_optical_polynomial():
    # O'Donnell (1994) eq. 2 at y = 0.5 (x = 2.32 µm⁻¹), evaluated by hand
    # from the published coefficients. Degree-8 polynomials with terms of order 1-10 lose at
    # most a digit to cancellation: 1e-12 is rounding.
    y = 0.5
    a = (1 + 0.104 * y - 0.609 * y**2 + 0.701 * y**3 + 1.137 * y**4
         - 1.718 * y**5 - 0.827 * y**6 + 1.647 * y**7 - 0.505 * y**8)
    b = (1.952 * y + 2.908 * y**2 - 3.989 * y**3 - 7.985 * y**4
         + 11.102 * y**5 + 5.491 * y**6 - 10.805 * y**7 + 3.347 * y**8)
    assert_allclose(O94(3.1)(1 / 2.32), a + b / 3.1, rtol=1e-12)


@pytest.mark.parametrize("cls", [CCM89, O94])
def test_r_v_limits(cls):
    # CCM89's sight lines span R_V ≈ 2.6-5.6 (Cardelli, Clayton & Mathis 1989, Sect. II; from
    # memory); O94 keeps CCM89's R_V dependence. Inside the span: silent; outside it: a warning;
    # more than 0.5 beyond it: refused (the package's margin, no source).
    assert cls.r_v_observed == (2.6, 5.6)
    for r_v in (2.6, 3.1, 5.6):
        assert cls(r_v).r_v == r_v  # no warning: warnings are errors in this suite
    for r_v in (2.1, 2.2, 5.8, 6.1):
        with pytest.warns(OutOfRangeWarning, match=f"r_v={r_v:g} lies outside the R_V span"):
            cls(r_v)
    for r_v in (1.5, 2.0, 6.2):
        with pytest.raises(InputError, match=r"is outside the range .* supports, \[2\.1, 6\.1\]"):
            cls(r_v)

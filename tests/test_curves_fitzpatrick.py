"""FM90, F99 and the Gordon et al. (2003) curves against their papers."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from redcorr.curves import F99, FM90, G03Lmc2Supershell, G03LmcAverage, G03SmcBar, fm90_excess, get_curve
from redcorr.exceptions import InputError, OutOfRangeWarning


@pytest.mark.parametrize("r_v", [2.5, 3.1, 4.3, 5.5])
def test_f99_passes_through_its_anchors(r_v):
    # Fitzpatrick (1999) Table 4: optical/IR spline anchors in A(λ)/E(B-V),
    # values quoted from memory. A spline passes through its knots: equal up to the rounding
    # of the spline's linear solve, hence 1e-10.
    lam_aa = np.array([26500, 12200, 6000, 5470, 4670, 4110.0])
    expected = [
        0.265 * r_v / 3.1,
        0.829 * r_v / 3.1,
        -0.426 + 1.0044 * r_v,
        -0.050 + 1.0016 * r_v,
        0.701 + 1.0016 * r_v,
        1.208 + 1.0032 * r_v - 0.00033 * r_v**2,
    ]
    assert_allclose(F99(r_v).a_over_ebv(lam_aa / 1e4), expected, rtol=1e-10)


@pytest.mark.parametrize("r_v", [2.5, 3.1, 5.5])
def test_f99_ultraviolet_is_fm90(r_v):
    # Fitzpatrick (1999) Sect. 3: c2 = -0.824 + 4.717/R_V, c1 = 2.030 - 3.007 c2,
    # c3 = 3.23, c4 = 0.41, x0 = 4.596, γ = 0.99 (from memory); with
    # A/E(B-V) = k + R_V (FM90 eq. 2 plus the definition of R_V). The same formula: rounding
    # only (1e-12).
    x = np.array([3.8, 4.6, 6.0, 8.0, 10.0])
    c2 = -0.824 + 4.717 / r_v
    k = fm90_excess(x, 2.030 - 3.007 * c2, c2, 3.23, 0.41, 4.596, 0.99)
    assert_allclose(F99(r_v).a_over_ebv(1 / x), k + r_v, rtol=1e-12)


def test_f99_r_v_limits():
    # F99's R_V-dependent curves cover R_V ≈ 2.3-5.5 (Fitzpatrick 1999, Sect. 3; from memory).
    # Inside: silent; outside: a warning; more than 0.5 beyond it: refused (the package's
    # margin, no source).
    assert F99.r_v_observed == (2.3, 5.5)
    for r_v in (2.3, 3.1, 5.5):
        assert F99(r_v).r_v == r_v  # no warning: warnings are errors in this suite
    for r_v in (1.8, 2.2, 5.6, 6.0):
        with pytest.warns(OutOfRangeWarning, match=f"r_v={r_v:g} lies outside the R_V span"):
            F99(r_v)
    for r_v in (1.7, 6.1):
        with pytest.raises(InputError, match=r"is outside the range f99 supports, \[1\.8, 6\]"):
            F99(r_v)


def test_fm90_drude_peak():
    # FM90 eq. 3: D(x0) = 1/γ² exactly, so the bump adds c3/γ² at x0 (to rounding, 1e-12).
    c3, gamma, x0 = 3.23, 0.99, 4.596
    with_bump = fm90_excess(x0, 0.0, 0.0, c3, 0.0, x0, gamma)
    assert_allclose(with_bump, c3 / gamma**2, rtol=1e-12)


def test_fm90_far_uv_curvature():
    # FM90 eq. 4: F(x) = 0.5392 (x-5.9)^2 + 0.05644 (x-5.9)^3 above 5.9 µm⁻¹ (to rounding; 7.9 - 5.9
    # is 2 only to 1e-16), and exactly 0 below it, where eq. 4 has no term.
    assert_allclose(fm90_excess(7.9, 0, 0, 0, 1.0, 4.6, 1.0), 0.5392 * 4 + 0.05644 * 8, rtol=1e-12)
    assert fm90_excess(5.5, 0, 0, 0, 1.0, 4.6, 1.0) == 0.0


def test_fm90_curve_and_its_range():
    curve = FM90(3.1, c1=0.1, c2=0.7, c3=3.0, c4=0.4, x0=4.6, gamma=1.0)
    x = 5.0
    # A/A_V = k/R_V + 1 (FM90 eq. 2 and the definition of R_V); rounding only
    assert_allclose(curve(1 / x), fm90_excess(x, 0.1, 0.7, 3.0, 0.4, 4.6, 1.0) / 3.1 + 1, rtol=1e-12)
    with pytest.raises(InputError, match="fm90 range"):
        curve(0.55)
    with pytest.raises(InputError, match="gamma"):
        FM90(gamma=-1)


@pytest.mark.parametrize("r_v", [2.5, 3.1, 5.5])
def test_f99_continuous_at_2700(r_v):
    # The spline takes its two UV knots from FM90, so the curve is continuous
    # where the description switches (Fitzpatrick 1999, Sect. 3). Bound 1e-6: the 1e-9 step
    # either side times the slope (~1 per µm⁻¹) plus rounding.
    eps = 1e-9
    x0 = 1 / 0.27
    left, right = F99(r_v)([1 / (x0 - eps), 1 / (x0 + eps)])
    assert abs(left - right) < 1e-6


@pytest.mark.parametrize(
    ("cls", "r_v", "fm"),
    # Gordon et al. (2003) Table 3: FM90 parameters (c1, c2, c3, c4, x0, γ)
    # and R_V of the average curves; values from memory.
    [
        (G03SmcBar, 2.74, (-4.959, 2.264, 0.389, 0.461, 4.6, 1.0)),
        (G03LmcAverage, 3.41, (-0.890, 0.998, 2.719, 0.400, 4.579, 0.934)),
        (G03Lmc2Supershell, 2.76, (-1.475, 1.132, 1.463, 0.294, 4.558, 0.945)),
    ],
)
def test_gordon03_ultraviolet_and_r_v(cls, r_v, fm):
    curve = cls()
    assert curve.r_v == r_v  # bitwise: the published R_V is stored as the same decimal literal
    x = np.array([4.0, 4.6, 6.5, 8.5])
    # the FM90 formula with the published parameters: rounding only (1e-12)
    assert_allclose(curve(1 / x), fm90_excess(x, *fm) / r_v + 1, rtol=1e-12)
    # R_V = A_V/E(B-V) with E(B-V) = A_B - A_V (definition, common practice,
    # no source), at the anchors B = 0.44, V = 0.55 µm: the published optical
    # values and the published R_V agree to 0.03 (broad-band vs single-λ).
    assert_allclose(curve(0.44) - curve(0.55), 1 / r_v, atol=0.03)
    # A(V)/A(V) = 1 at the V anchor (normalisation; rounding only).
    assert_allclose(curve(0.55), 1.0, rtol=1e-12)


def test_gordon03_names_are_the_paper_labels():
    # Gordon et al. (2003) name their average curves "SMC Bar", "LMC Average" and
    # "LMC2 supershell" (from memory); the registry names spell those labels out.
    assert [get_curve(n).__class__ for n in ("g03-smc-bar", "g03-lmc-average", "g03-lmc2-supershell")] == [
        G03SmcBar, G03LmcAverage, G03Lmc2Supershell]


def test_gordon03_fixed_r_v():
    with pytest.raises(InputError, match="fixed R_V of 2.74"):
        G03SmcBar(3.1)
    assert G03SmcBar(2.74).r_v == 2.74  # bitwise: the value passed is the value stored


@pytest.mark.parametrize("cls", [F99, G03SmcBar, G03LmcAverage, G03Lmc2Supershell])
def test_positive_and_falling_into_the_infrared(cls):
    # Extinction decreases toward the infrared for all these curves
    # (common practice, no source).
    w = np.linspace(0.3, 3.3, 300)
    a = cls()(w)
    assert np.all(a > 0)
    assert np.all(np.diff(a) < 0)

"""Calzetti et al. (2000) attenuation curve."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from redcorr.curves import Calzetti00
from redcorr.exceptions import InputError


def test_k_at_1500_angstrom():
    # Calzetti et al. (2000) eq. 4 with R'_V = 4.05 gives k'(1500 Å) = 10.33
    # (value from memory, often quoted for UV attenuation). atol 0.01: the value is printed to
    # two decimals.
    assert_allclose(Calzetti00().a_over_ebv(0.15), 10.33, atol=0.01)


def test_eq4_by_hand():
    # Calzetti et al. (2000) eq. 4, both branches, evaluated by hand from the published
    # coefficients. The same arithmetic on terms of order 10: equal to rounding, hence 1e-12.
    lam = 0.3
    k_blue = 2.659 * (-2.156 + 1.509 / lam - 0.198 / lam**2 + 0.011 / lam**3) + 4.05
    lam_r = 1.5
    k_red = 2.659 * (-1.857 + 1.040 / lam_r) + 4.05
    assert_allclose(Calzetti00().a_over_ebv([lam, lam_r]), [k_blue, k_red], rtol=1e-12)


def test_join_at_063():
    # The two published branches of eq. 4 differ by 0.026 in k' at 0.63 µm
    # (measured from the coefficients); nothing larger.
    eps = 1e-9
    k = Calzetti00().a_over_ebv([0.63 - eps, 0.63 + eps])
    assert abs(k[0] - k[1]) < 0.03


def test_range():
    with pytest.raises(InputError, match=r"calzetti00 range \[0.12, 2.2\]"):
        Calzetti00()(0.1)
    assert np.isfinite(Calzetti00()(2.2))

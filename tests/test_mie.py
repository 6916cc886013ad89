"""Tests of redcorr.mie against outside references."""

import numpy as np
import pytest

from redcorr.exceptions import InputError
from redcorr.mie import mie


def test_rayleigh_limit():
    # Bohren & Huffman 1983, eqs. 5.8 (Q_abs) and 5.7 (Q_sca), from memory:
    # Q_abs = 4x Im[(m²-1)/(m²+2)], Q_sca = (8/3) x⁴ |(m²-1)/(m²+2)|²
    m = np.array([1.5 + 0.01j, 1.33 + 0j, 3.0 + 4.0j, 1.7 + 0.6j])
    x = 1e-4
    pol = (m**2 - 1) / (m**2 + 2)
    r = mie(m, x)
    np.testing.assert_allclose(r.qsca, 8 / 3 * x**4 * np.abs(pol) ** 2, rtol=1e-6)
    absorbing = m.imag > 0
    np.testing.assert_allclose(r.qabs[absorbing], 4 * x * pol.imag[absorbing], rtol=1e-6)


def test_energy_conservation_and_shape():
    # Q_ext = Q_sca + Q_abs by definition (common practice, no source)
    r = mie(np.array([[1.5 + 0.01j], [2.0 + 1.0j]]), np.array([0.5, 5.0, 50.0]))
    assert r.qext.shape == (2, 3)
    np.testing.assert_allclose(r.qext, r.qsca + r.qabs, rtol=1e-12)


@pytest.mark.parametrize("x", [-1.0, np.nan, 0.0, np.inf])
def test_bad_size(x):
    with pytest.raises(InputError, match="x="):
        mie(1.5, x)


def test_sign_convention():
    with pytest.raises(InputError, match="negative imaginary part"):
        mie(1.5 - 0.1j, 1.0)
    a = mie(1.5 - 0.1j, 1.0, convention="n-ik")
    b = mie(1.5 + 0.1j, 1.0)
    assert a.qext == b.qext

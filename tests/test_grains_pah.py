"""PAH cross sections (Li & Draine 2001, from memory) and the PAH/graphite blend."""

import numpy as np
import pytest

from redcorr.exceptions import InputError
from redcorr.grains.pah import (
    DRUDE_BANDS,
    cutoff,
    drude,
    h_to_c,
    n_carbon,
    pah_cross_section,
    pah_fraction,
)


def test_drude_profile_integrates_to_band_strength():
    # Li & Draine (2001, eq. 10): σ_int,j = ∫ S_j dλ⁻¹ (from memory); the Drude profile's
    # peak is (2/π) λ_j σ_int / γ_j (algebra of the same formula). rel 2e-3: the profile's wings
    # beyond 400 µm⁻¹ fall as x⁻², holding ~1.6e-3 of the area (measured shortfall); the peak
    # value is rounding only.
    lam_j, gamma, sigma = 0.2175, 0.217, 1.23e-13
    inv = np.linspace(0.01, 400.0, 400001)  # µm⁻¹
    s = drude(1 / inv, lam_j, gamma, sigma)
    assert np.trapezoid(s, inv * 1e4) == pytest.approx(sigma, rel=2e-3)
    assert drude(lam_j, lam_j, gamma, sigma) == pytest.approx(2 / np.pi * lam_j * 1e-4 * sigma / gamma, rel=1e-12)


def test_continuum_pieces_join():
    # Li & Draine (2001) eqs. (5)-(11) (from memory) were fitted to join at x = 3.3, 5.9, 7.7 and
    # 10 µm⁻¹; the remembered coefficients join there within 3%.
    a = 0.002  # 20 Å: the visible cut-off is far redward, so it is ≈ 1 at x = 3.3
    for x in (3.3, 5.9, 7.7, 10.0):
        lo, hi = pah_cross_section(1 / np.array([x - 1e-9, x + 1e-9]), a, 0.0)
        assert hi == pytest.approx(lo, rel=0.03), x


def test_known_values():
    # 2175 Å bump of a large neutral PAH: S_2 peak + continuum 1.8687 + 0.1905·4.598 (×1e-18 cm²/C)
    # (Li & Draine 2001 Table 1 and eq. 8, from memory). rel 1e-9: the same terms summed by hand;
    # the visible cut-off of a 20 Å PAH differs from 1 by far less at 0.2175 µm.
    lam = 0.2175
    sigma = pah_cross_section(lam, 0.002, 0.0)
    peak = 2 / np.pi * lam * 1e-4 * 1.23e-13 / 0.217
    bump = 1.8687 + 0.1905 / lam
    assert sigma == pytest.approx(peak + bump * 1e-18, rel=1e-9)
    # Above 17.25 µm⁻¹ PAHs absorb like graphite; the function says so with NaN.
    assert np.isnan(pah_cross_section(0.05, 0.002))


def test_ionized_fraction_mixes_linearly():
    wave = np.array([0.3, 0.5, 0.8, 6.2, 11.3])
    neutral = pah_cross_section(wave, 0.0006, 0.0)
    ion = pah_cross_section(wave, 0.0006, 1.0)
    # a linear mix of the neutral and ionized cross sections (Li & Draine 2001 §2): rounding only
    np.testing.assert_allclose(pah_cross_section(wave, 0.0006, 0.3), 0.7 * neutral + 0.3 * ion, rtol=1e-12)
    # Ions absorb further to the red than neutrals (Li & Draine 2001 §2.1, after Salama et al. 1996).
    assert ion[2] > neutral[2]
    with pytest.raises(InputError, match=r"ionized_fraction=1.5 is outside the allowed range \[0, 1\]"):
        pah_cross_section(wave, 0.001, 1.5)


def test_cutoff_limits():
    n_c = n_carbon(0.0005)
    # limits of the cut-off function (Li & Draine 2001 eq. 3): 1 far to the blue, 0 far to the
    # red; at 0.2 and 10 µm it is within 1e-3 of them
    assert cutoff(10.0, n_c, False) == pytest.approx(1.0, abs=1e-3)
    assert cutoff(0.2, n_c, False) == pytest.approx(0.0, abs=1e-3)
    # Larger PAHs absorb to longer wavelengths (Li & Draine 2001 eq. 3; Salama et al. 1996).
    assert cutoff(1.5, n_carbon(0.003), False) > cutoff(1.5, n_carbon(0.0005), False)


def test_carbon_count_and_hydrogenation():
    # Li & Draine (2001 §2) quote N_C ≈ 460 (a/10 Å)³ (from memory); we use the graphite density,
    # 2.24 g cm⁻³, which gives 471.
    assert n_carbon(0.001) == pytest.approx(460, rel=0.03)
    # H/C = 0.5 (N_C ≤ 25), 0.5/√(N_C/25) up to 100, 0.25 beyond (Li & Draine 2001 §2, from memory);
    # 0.5/√4 is 0.25 to rounding
    np.testing.assert_allclose(h_to_c([20, 100, 400]), [0.5, 0.25, 0.25], rtol=1e-12)


def test_pah_fraction():
    # ξ(a) = (1 − q_gra) min[1, (a_ξ/a)³], q_gra = 0.01, a_ξ = 50 Å (Li & Draine 2001, from memory);
    # rounding only
    np.testing.assert_allclose(pah_fraction([0.001, 0.005, 0.01]), [0.99, 0.99, 0.99 / 8], rtol=1e-12)
    with pytest.raises(InputError, match="q_gra=2"):
        pah_fraction(0.001, q_gra=2)


def test_band_table_shape():
    for lam, gamma, s_neu, s_ion, _ in DRUDE_BANDS:
        assert lam > 0 and 0 < gamma < 1 and s_neu >= 0 and s_ion > 0

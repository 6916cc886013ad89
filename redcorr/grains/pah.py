"""Absorption by polycyclic aromatic hydrocarbons (PAHs), after Li & Draine (2001).

The smallest carbonaceous grains of the Weingartner & Draine (2001) models are
not graphite spheres but PAH molecules and clusters. Li & Draine (2001, §2)
give their absorption cross section per C atom as continuum formulas in
x = 1/λ plus Drude profiles of the ultraviolet and infrared bands, for neutral
and ionized PAHs, and blend them with graphite: a carbonaceous grain of
radius a absorbs

    C_abs(a) = ξ(a) N_C(a) σ_PAH + [1 − ξ(a)] C_abs^gra(a),
    ξ(a) = (1 − q_gra) min[1, (a_ξ/a)³],  q_gra = 0.01,  a_ξ = 50 Å,

and scatters [1 − ξ(a)] C_sca^gra(a) (the PAH part absorbs only).

Every number in this module is from memory of Li & Draine (2001): the
continuum formulas of their eqs. (5)–(11), the cut-off of their eqs. (2)–(4)
(after Salama et al. 1996) and the Drude parameters of their Table 1. Bands
beyond 13 µm are left out (not remembered reliably), and so are the
near-infrared bands of ionized PAHs at 1.05 and 1.26 µm, which came later
(Draine & Li 2007): with them the model absorbs 2% more at 1 µm than
Draine's (2003) tables, without them it matches to 0.01%. The number of C
atoms is taken from the grain's volume at the graphite density,
N_C = (4π/3) a³ ρ / m_C ≈ 471 (a/10 Å)³, the same carbon mass the size
distribution carries; Li & Draine quote ≈ 460 (a/10 Å)³, which leaves 1%
less absorption between 0.2 and 0.5 µm than Draine's tables. The outside
check is the comparison with those tables in the tests.
"""

import numpy as np

from redcorr._validate import check_positive, check_range
from redcorr.grains.sizes import M_C_G, RHO_GRAPHITE

__all__ = [
    "DRUDE_BANDS",
    "n_carbon",
    "h_to_c",
    "cutoff",
    "drude",
    "pah_cross_section",
    "pah_fraction",
]

# (λ_j µm, γ_j, σ_int neutral, σ_int ionized [1e-20 cm per C], C-H band scaled by H/C)
# Li & Draine (2001) Table 1, from memory.
DRUDE_BANDS = (
    (0.0722, 0.195, 7.97e7, 7.97e7, False),
    (0.2175, 0.217, 1.23e7, 1.23e7, False),
    (3.300, 0.012, 394.0, 89.4, True),
    (5.270, 0.034, 2.5, 20.0, False),
    (5.700, 0.035, 4.0, 32.0, False),
    (6.220, 0.030, 29.4, 236.0, False),
    (6.690, 0.070, 7.35, 59.0, False),
    (7.417, 0.126, 20.8, 181.0, False),
    (7.598, 0.044, 18.1, 163.0, False),
    (7.850, 0.053, 21.9, 197.0, False),
    (8.330, 0.052, 6.94, 48.0, True),
    (8.610, 0.039, 27.8, 194.0, True),
    (10.68, 0.020, 0.3, 0.3, True),
    (11.23, 0.012, 18.9, 17.7, True),
    (11.33, 0.032, 52.0, 49.0, True),
    (11.99, 0.045, 24.2, 20.5, True),
    (12.62, 0.042, 35.0, 31.0, True),
)
"""Drude bands: wavelength (µm), FWHM/λ_j, integrated strengths (10⁻²⁰ cm per C atom)."""

X_GRAPHITE = 17.25
"""Above this wavenumber (µm⁻¹) PAHs absorb as graphite does (Li & Draine 2001, §2, from memory)."""


def n_carbon(a_um):
    """Number of C atoms in a carbonaceous grain of radius a: N_C = (4π/3) a³ ρ / m_C.

    With ρ = 2.24 g cm⁻³ (graphite, as in Weingartner & Draine 2001),
    N_C ≈ 471 (a / 10 Å)³.
    """
    a_cm = np.asarray(a_um, dtype=float) * 1e-4
    return 4.0 * np.pi / 3.0 * a_cm**3 * RHO_GRAPHITE / M_C_G


def h_to_c(n_c):
    """H/C ratio: 0.5 for N_C ≤ 25, 0.5/√(N_C/25) up to 100, 0.25 above (Li & Draine 2001, §2, from memory)."""
    n_c = np.asarray(n_c, dtype=float)
    return np.where(n_c <= 25, 0.5, np.where(n_c <= 100, 0.5 / np.sqrt(n_c / 25.0), 0.25))


def cutoff(x, n_c, ionized):
    """Long-wavelength cut-off of the PAH continuum (Li & Draine 2001, eqs. 2-3).

    Notes
    -----
    cutoff = (1/π) arctan[10³ (y − 1)³ / y] + 1/2 with y = λ_c/λ; the cut-off
    wavelength λ_c = 1/(3.804 M^-1/2 + 1.052) µm (neutral) or
    1/(2.282 M^-1/2 + 0.889) µm (ionized), and M = 0.3 N_C (N_C ≤ 40) or
    0.4 N_C (N_C > 40) the number of fused rings (Salama et al. 1996).
    """
    n_c = np.asarray(n_c, dtype=float)
    rings = np.where(n_c <= 40, 0.3 * n_c, 0.4 * n_c)
    if ionized:
        lam_c = 1.0 / (2.282 / np.sqrt(rings) + 0.889)
    else:
        lam_c = 1.0 / (3.804 / np.sqrt(rings) + 1.052)
    y = lam_c * np.asarray(x, dtype=float)
    return np.arctan(1e3 * (y - 1.0) ** 3 / y) / np.pi + 0.5


def drude(lam_um, lam_j, gamma_j, sigma_int_cm):
    """Drude profile S_j(λ) = (2/π) γ_j λ_j σ_j / [(λ/λ_j − λ_j/λ)² + γ_j²], cm² per C atom."""
    lam = np.asarray(lam_um, dtype=float)
    return (2.0 / np.pi) * gamma_j * lam_j * 1e-4 * sigma_int_cm / ((lam / lam_j - lam_j / lam) ** 2 + gamma_j**2)


def _sigma(x, n_c, ionized):
    """Per-C cross section (cm²) of one charge state; NaN where x > 17.25 µm⁻¹."""
    lam = 1.0 / x
    col = 3 if ionized else 2
    bands = [(b[0], b[1], b[col] * 1e-20, b[4]) for b in DRUDE_BANDS]

    def s(j):
        lam_j, gam, sig, _ = bands[j]
        return drude(lam, lam_j, gam, sig)

    ir = np.zeros(np.broadcast_shapes(np.shape(x), np.shape(n_c)))
    hc = h_to_c(n_c)
    for lam_j, gam, sig, ch in bands[2:]:
        if sig > 0:
            ir = ir + drude(lam, lam_j, gam, sig) * (hc if ch else 1.0)
    visible = 34.58 * 10.0 ** (-18.0 - 3.431 / x) * cutoff(x, n_c, ionized) + ir
    e18 = 1e-18
    out = np.select(
        [x <= 3.3, x <= 5.9, x <= 7.7, x <= 10.0, x <= 15.0, x <= X_GRAPHITE],
        [
            visible,
            s(1) + (1.8687 + 0.1905 * x) * e18,
            s(1) + (1.8687 + 0.1905 * x + 0.4175 * (x - 5.9) ** 2 + 0.04370 * (x - 5.9) ** 3) * e18,
            (66.302 - 24.367 * x + 2.950 * x**2 - 0.1057 * x**3) * e18,
            s(0) + (-3.0 + 1.35 * x) * e18,
            (126.0 - 6.4943 * x + 0.10358 * x**2) * e18,
        ],
        default=np.nan,
    )
    return out


def pah_cross_section(wave_um, a_um, ionized_fraction=0.5):
    """Absorption cross section per C atom of PAHs, cm² (Li & Draine 2001).

    Parameters
    ----------
    wave_um : array_like
        Wavelengths, µm.
    a_um : array_like
        PAH radii, µm (sets N_C and hence the cut-off and H/C); broadcast
        against ``wave_um``.
    ionized_fraction : float
        Fraction of PAHs that are ionized, in [0, 1] (default 0.5).

    Returns
    -------
    ndarray
        σ = (1 − f_ion) σ_neutral + f_ion σ_ion in cm² per C atom; NaN for
        λ < 1/17.25 µm, where the caller should use graphite (Li & Draine
        2001, §2, from memory).

    Notes
    -----
    For x = 1/λ in µm⁻¹ (Li & Draine 2001, eqs. 5-11, from memory), in units
    of 10⁻¹⁸ cm² per C:

    * 15 < x < 17.25: 126.0 − 6.4943x + 0.10358x²
    * 10 < x < 15: S_1 + (−3.0 + 1.35x)
    * 7.7 < x < 10: 66.302 − 24.367x + 2.950x² − 0.1057x³
    * 5.9 < x < 7.7: S_2 + 1.8687 + 0.1905x + 0.4175(x − 5.9)² + 0.04370(x − 5.9)³
    * 3.3 < x < 5.9: S_2 + 1.8687 + 0.1905x
    * x < 3.3: 34.58 · 10^(−3.431/x) · cutoff(x) + Σ_{j≥3} S_j

    with S_j the Drude bands of `DRUDE_BANDS` (C–H bands scaled by H/C).

    References
    ----------
    .. [1] Li, A., & Draine, B. T. 2001, ApJ, 554, 778, §2, eqs. (2)-(11),
       Table 1. doi:10.1086/323147
    .. [2] Salama, F., et al. 1996, ApJ, 458, 621. doi:10.1086/176844
    """
    f = check_range("ionized_fraction", ionized_fraction, 0.0, 1.0)
    x = 1.0 / np.asarray(wave_um, dtype=float)
    n_c = n_carbon(a_um)
    x, n_c = np.broadcast_arrays(x, n_c)
    neutral = _sigma(x, n_c, ionized=False) if f < 1 else 0.0
    ion = _sigma(x, n_c, ionized=True) if f > 0 else 0.0
    return (1.0 - f) * neutral + f * ion


def pah_fraction(a_um, q_gra=0.01, a_xi_um=0.005):
    """Fraction of a carbonaceous grain's absorption taken as PAH.

    ξ(a) = (1 − q_gra) min[1, (a_ξ/a)³] (Li & Draine 2001, §2.3, from memory),
    with q_gra = 0.01 and a_ξ = 50 Å by default.
    """
    check_range("q_gra", q_gra, 0.0, 1.0)
    check_positive("a_xi_um", a_xi_um)
    a = np.asarray(a_um, dtype=float)
    return (1.0 - q_gra) * np.minimum(1.0, (a_xi_um / a) ** 3)

"""Cardelli, Clayton & Mathis (1989) and O'Donnell (1994) R_V-dependent laws.

Both write A(λ)/A(V) = a(x) + b(x)/R_V with x = 1/λ in µm⁻¹ over four
segments: infrared (0.3–1.1), optical/near-infrared (1.1–3.3), ultraviolet
(3.3–8) and far ultraviolet (8–10). O'Donnell (1994) replaced only the
optical polynomials.
"""

import numpy as np
from numpy.polynomial import polynomial as P

from redcorr.curves._base import DustCurve

__all__ = ["CCM89", "O94"]

# Optical segment polynomials in y = x - 1.82, lowest order first.
# Cardelli, Clayton & Mathis (1989), eqs. 3a-3b.
_CCM_OPT_A = (1.0, 0.17699, -0.50447, -0.02427, 0.72085, 0.01979, -0.77530, 0.32999)
_CCM_OPT_B = (0.0, 1.41338, 2.28305, 1.07233, -5.38434, -0.62251, 5.30260, -2.09002)
# O'Donnell (1994), eq. 2.
_O94_OPT_A = (1.0, 0.104, -0.609, 0.701, 1.137, -1.718, -0.827, 1.647, -0.505)
_O94_OPT_B = (0.0, 1.952, 2.908, -3.989, -7.985, 11.102, 5.491, -10.805, 3.347)


def _ab(x, opt_a, opt_b):
    """a(x) and b(x) of the CCM89 form with the given optical polynomials."""
    a = np.empty_like(x)
    b = np.empty_like(x)

    ir = x < 1.1  # CCM89 eqs. 2a-2b (also used below 0.3 when extrapolating)
    a[ir] = 0.574 * x[ir] ** 1.61
    b[ir] = -0.527 * x[ir] ** 1.61

    opt = (x >= 1.1) & (x < 3.3)
    y = x[opt] - 1.82
    a[opt] = P.polyval(y, opt_a)
    b[opt] = P.polyval(y, opt_b)

    uv = (x >= 3.3) & (x < 8.0)  # CCM89 eqs. 4a-4b
    xu = x[uv]
    dy = np.clip(xu - 5.9, 0.0, None)
    fa = -0.04473 * dy**2 - 0.009779 * dy**3
    fb = 0.2130 * dy**2 + 0.1207 * dy**3
    a[uv] = 1.752 - 0.316 * xu - 0.104 / ((xu - 4.67) ** 2 + 0.341) + fa
    b[uv] = -3.090 + 1.825 * xu + 1.206 / ((xu - 4.62) ** 2 + 0.263) + fb

    fuv = x >= 8.0  # CCM89 eqs. 5a-5b
    z = x[fuv] - 8.0
    a[fuv] = P.polyval(z, (-1.073, -0.628, 0.137, -0.070))
    b[fuv] = P.polyval(z, (13.670, 4.257, -0.420, 0.374))
    return a, b


class CCM89(DustCurve):
    """Cardelli, Clayton & Mathis (1989) Milky Way extinction law.

    Parameters
    ----------
    r_v : float, optional
        R_V = A(V)/E(B-V), default 3.1. The sight lines the law was fitted
        to have R_V ≈ 2.6–5.6; values outside that span warn
        (`OutOfRangeWarning`), and values more than 0.5 beyond it (outside
        2.1–6.1) are refused.

    Notes
    -----
    A(λ)/A(V) = a(x) + b(x)/R_V, x = 1/λ [µm⁻¹], valid for 0.3 ≤ x ≤ 10
    (0.1–3.33 µm). The four segments (eqs. 2–5) join with small steps of up
    to ~1e-3 in A/A_V at x = 1.1 and 3.3, as published.

    References
    ----------
    .. [1] Cardelli, J. A., Clayton, G. C., & Mathis, J. S. 1989, ApJ, 345,
       245, eqs. 1-5. doi:10.1086/167900

    Examples
    --------
    >>> from redcorr.curves import CCM89
    >>> round(float(CCM89(3.1)(0.55)), 3)
    0.999
    """

    name = "ccm89"
    citation = "Cardelli, Clayton & Mathis 1989, ApJ 345, 245 (doi:10.1086/167900)"
    wavenumber_limits = (0.3, 10.0)
    # R_V of the sight lines CCM89 fitted: about 2.6 to 5.6 (Cardelli, Clayton &
    # Mathis 1989, ApJ 345, 245, Sect. II; from memory). Beyond that the law is an
    # extrapolation and warns; more than 0.5 beyond it, it is refused (our margin, no source).
    r_v_observed = (2.6, 5.6)
    r_v_limits = (2.1, 6.1)
    _opt = (_CCM_OPT_A, _CCM_OPT_B)

    def _evaluate(self, x):
        a, b = _ab(x, *self._opt)
        return a + b / self.r_v


class O94(CCM89):
    """O'Donnell (1994) update of the CCM89 law in the optical.

    Identical to :class:`CCM89` except for the optical segment
    (1.1 ≤ x < 3.3 µm⁻¹), whose a(y) and b(y) are O'Donnell's eighth-order
    polynomials in y = x − 1.82.

    References
    ----------
    .. [1] O'Donnell, J. E. 1994, ApJ, 422, 158, eq. 2. doi:10.1086/173713
    .. [2] Cardelli, J. A., Clayton, G. C., & Mathis, J. S. 1989, ApJ, 345, 245
    """

    name = "o94"
    citation = "O'Donnell 1994, ApJ 422, 158 (doi:10.1086/173713), with CCM89 outside the optical"
    _opt = (_O94_OPT_A, _O94_OPT_B)

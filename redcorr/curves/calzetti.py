"""Calzetti et al. (2000) starburst attenuation curve."""

import numpy as np
from numpy.polynomial import polynomial as P

from redcorr.curves._base import DustCurve

__all__ = ["Calzetti00"]


class Calzetti00(DustCurve):
    """Calzetti et al. (2000) attenuation curve of starburst galaxies.

    Parameters
    ----------
    r_v : float, optional
        R'_V = A_V/E_s(B−V), default 4.05 (±0.80 in the paper). Allowed
        2.0–6.0; values outside the quoted 1σ span 3.25–4.85 warn.

    Notes
    -----
    k'(λ) = 2.659 (−2.156 + 1.509/λ − 0.198/λ² + 0.011/λ³) + R'_V for
    0.12 ≤ λ < 0.63 µm and k'(λ) = 2.659 (−1.857 + 1.040/λ) + R'_V for
    0.63 ≤ λ ≤ 2.20 µm (λ in µm); A(λ)/A(V) = k'(λ)/R'_V.

    This is an *attenuation* curve for the integrated light of a galaxy
    (dust mixed with stars, scattering into the beam), not the extinction
    toward a single star. Do not use it to deredden Milky Way stars.

    References
    ----------
    .. [1] Calzetti, D., Armus, L., Bohlin, R. C., et al. 2000, ApJ, 533,
       682, eq. 4. doi:10.1086/308692
    """

    name = "calzetti00"
    citation = "Calzetti et al. 2000, ApJ 533, 682 (doi:10.1086/308692); attenuation, not extinction"
    wavenumber_limits = (1.0 / 2.2, 1.0 / 0.12)
    r_v_limits = (2.0, 6.0)
    r_v_observed = (3.25, 4.85)
    default_r_v = 4.05

    def _evaluate(self, x):
        k = np.where(
            x > 1.0 / 0.63,
            2.659 * P.polyval(x, (-2.156, 1.509, -0.198, 0.011)),
            2.659 * P.polyval(x, (-1.857, 1.040)),
        )
        return (k + self.r_v) / self.r_v

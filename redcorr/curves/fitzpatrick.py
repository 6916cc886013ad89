"""Laws built on the Fitzpatrick & Massa (1990) ultraviolet form.

FM90 describes the ultraviolet excess curve

    k(λ−V) = E(λ−V)/E(B−V) = c1 + c2 x + c3 D(x; x0, γ) + c4 F(x),
    D = x² / [(x² − x0²)² + x² γ²],
    F = 0.5392 (x − 5.9)² + 0.05644 (x − 5.9)³ for x ≥ 5.9, else 0,

so that A(λ)/E(B−V) = k + R_V. Fitzpatrick (1999) and Gordon et al. (2003)
join it to optical/infrared anchor points with a cubic spline through
A(λ)/E(B−V) at the anchors, two ultraviolet points at 2700 and 2600 Å taken
from the FM90 form, and A = 0 at x = 0. Longward of 2700 Å the spline
applies, shortward the FM90 form. We use a natural cubic spline
(zero second derivative at both ends).
"""

import abc

import numpy as np

from redcorr._validate import check_finite, check_positive
from redcorr.curves._base import DustCurve

__all__ = ["FM90", "F99", "G03SmcBar", "G03LmcAverage", "G03Lmc2Supershell", "fm90_excess"]

_X_UV_JOIN = 1.0 / 0.27  # µm⁻¹; shortward of 2700 Å the FM90 form is used
_X_UV_KNOTS = np.array([1.0 / 0.27, 1.0 / 0.26])


def fm90_excess(x, c1, c2, c3, c4, x0, gamma):
    """FM90 ultraviolet excess curve k(λ−V) = E(λ−V)/E(B−V).

    Parameters
    ----------
    x : array_like
        Wavenumber in µm⁻¹.
    c1, c2, c3, c4, x0, gamma : float
        Linear intercept and slope, bump strength, far-UV curvature, bump
        centre (µm⁻¹) and bump width (µm⁻¹).

    Returns
    -------
    k : ndarray
        E(λ−V)/E(B−V), same shape as ``x``.

    References
    ----------
    .. [1] Fitzpatrick, E. L., & Massa, D. 1990, ApJS, 72, 163, eqs. 2-4.
       doi:10.1086/191413
    """
    x = np.asarray(x, dtype=float)
    drude = x**2 / ((x**2 - x0**2) ** 2 + (x * gamma) ** 2)
    dy = np.clip(x - 5.9, 0.0, None)
    fuv = 0.5392 * dy**2 + 0.05644 * dy**3
    return c1 + c2 * x + c3 * drude + c4 * fuv


class _SplineFM(DustCurve):
    """FM90 in the ultraviolet joined to optical/IR anchors by a cubic spline.

    Subclasses provide ``_fm_params()`` and ``_anchors()``, the latter as
    (x [µm⁻¹], A/E(B−V)) arrays in increasing x, excluding x = 0.
    """

    wavenumber_limits = (0.3, 10.0)

    @abc.abstractmethod
    def _fm_params(self):
        """The six FM90 parameters (c1, c2, c3, c4, x0, γ)."""

    @abc.abstractmethod
    def _anchors(self):
        """Optical/IR anchors: x [µm⁻¹] and A/E(B−V), increasing x, without x = 0."""

    def _spline(self):
        if getattr(self, "_cached_spline", None) is None:
            from scipy.interpolate import CubicSpline  # heavy: loaded on first evaluation, not on import

            ax, ay = self._anchors()
            uv = fm90_excess(_X_UV_KNOTS, *self._fm_params()) + self.r_v
            knots_x = np.concatenate([[0.0], ax, _X_UV_KNOTS])
            knots_y = np.concatenate([[0.0], ay, uv])
            self._cached_spline = CubicSpline(knots_x, knots_y, bc_type="natural")
        return self._cached_spline

    def _evaluate(self, x):
        uv = x >= _X_UV_JOIN
        a_ebv = np.empty_like(x)
        a_ebv[uv] = fm90_excess(x[uv], *self._fm_params()) + self.r_v
        a_ebv[~uv] = self._spline()(x[~uv])
        return a_ebv / self.r_v


class F99(_SplineFM):
    """Fitzpatrick (1999) R_V-dependent Milky Way extinction law.

    Parameters
    ----------
    r_v : float, optional
        R_V, default 3.1. F99's R_V-dependent curves cover R_V ≈ 2.3–5.5;
        values outside that span warn (`OutOfRangeWarning`), and values more
        than 0.5 beyond it (outside 1.8–6.0) are refused.

    Notes
    -----
    Ultraviolet (λ < 2700 Å): the FM90 form with x0 = 4.596 µm⁻¹,
    γ = 0.99 µm⁻¹, c3 = 3.23, c4 = 0.41, c2 = −0.824 + 4.717/R_V and
    c1 = 2.030 − 3.007 c2. Optical/IR: a natural cubic spline through
    A(λ)/E(B−V) at the anchors (F99 Table 4)

    ======== =================================
    λ [Å]    A(λ)/E(B−V)
    ======== =================================
    26500    0.265 R_V/3.1
    12200    0.829 R_V/3.1
    6000     −0.426 + 1.0044 R_V
    5470     −0.050 + 1.0016 R_V
    4670     0.701 + 1.0016 R_V
    4110     1.208 + 1.0032 R_V − 0.00033 R_V²
    ======== =================================

    plus A = 0 at x = 0 and the FM90 values at 2700 and 2600 Å.
    Valid for 0.1–3.33 µm (0.3–10 µm⁻¹).

    References
    ----------
    .. [1] Fitzpatrick, E. L. 1999, PASP, 111, 63, Sect. 3 and Table 4.
       doi:10.1086/316293
    .. [2] Fitzpatrick, E. L., & Massa, D. 1990, ApJS, 72, 163
    """

    name = "f99"
    citation = "Fitzpatrick 1999, PASP 111, 63 (doi:10.1086/316293)"
    # R_V span of the curves F99 derives and shows: about 2.3 to 5.5 (Fitzpatrick 1999,
    # PASP 111, 63, Sect. 3; from memory). Beyond that the law is an extrapolation and
    # warns; more than 0.5 beyond it, it is refused (our margin, no source).
    r_v_observed = (2.3, 5.5)
    r_v_limits = (1.8, 6.0)

    def _fm_params(self):
        c2 = -0.824 + 4.717 / self.r_v
        return (2.030 - 3.007 * c2, c2, 3.23, 0.41, 4.596, 0.99)

    def _anchors(self):
        r = self.r_v
        x = 1e4 / np.array([26500.0, 12200.0, 6000.0, 5470.0, 4670.0, 4110.0])
        y = np.array(
            [
                0.265 * r / 3.1,
                0.829 * r / 3.1,
                -0.426 + 1.0044 * r,
                -0.050 + 1.0016 * r,
                0.701 + 1.0016 * r,
                1.208 + 1.0032 * r - 0.00033 * r**2,
            ]
        )
        return x, y


class FM90(DustCurve):
    """Fitzpatrick & Massa (1990) parametric ultraviolet curve.

    Parameters
    ----------
    r_v : float, optional
        R_V used to turn E(λ−V)/E(B−V) into A(λ)/A(V) = k/R_V + 1; default 3.1.
    c1, c2, c3, c4, x0, gamma : float, optional
        The six FM90 parameters; defaults are the F99 values for R_V = 3.1
        (c2 = −0.824 + 4.717/3.1, c1 = 2.030 − 3.007 c2, c3 = 3.23,
        c4 = 0.41, x0 = 4.596 µm⁻¹, γ = 0.99 µm⁻¹).

    Notes
    -----
    Valid only in the ultraviolet, 0.115–0.303 µm (3.3–8.7 µm⁻¹), the
    range of the IUE spectra it was fitted to.

    References
    ----------
    .. [1] Fitzpatrick, E. L., & Massa, D. 1990, ApJS, 72, 163, eqs. 2-4.
       doi:10.1086/191413
    """

    name = "fm90"
    citation = "Fitzpatrick & Massa 1990, ApJS 72, 163 (doi:10.1086/191413)"
    wavenumber_limits = (3.3, 8.7)
    r_v_limits = (2.0, 6.0)

    def __init__(self, r_v=None, *, c1=None, c2=None, c3=3.23, c4=0.41, x0=4.596, gamma=0.99):
        super().__init__(r_v)
        c2 = -0.824 + 4.717 / 3.1 if c2 is None else c2
        c1 = 2.030 - 3.007 * c2 if c1 is None else c1
        self.params = {
            "c1": check_finite("c1", c1),
            "c2": check_finite("c2", c2),
            "c3": check_finite("c3", c3),
            "c4": check_finite("c4", c4),
            "x0": check_positive("x0", x0),
            "gamma": check_positive("gamma", gamma),
        }

    def _evaluate(self, x):
        return fm90_excess(x, **self.params) / self.r_v + 1.0


# Gordon et al. (2003) average curves. FM90 parameters: G03 Table 3.
# Optical/near-IR anchors A(λ)/A(V) at K, H, J, I, R, V, B, U (2.198, 1.65,
# 1.25, 0.81, 0.65, 0.55, 0.44, 0.37 µm) quoted from memory of G03 Table 4;
# for the SMC Bar the K and J values are the smoothed ones of Gordon et al.
# (2016, ApJ 826, 104). Verify against the papers before precision use.
_G03_ANCHOR_X = 1.0 / np.array([2.198, 1.65, 1.25, 0.81, 0.65, 0.55, 0.44, 0.37])


class _G03(_SplineFM):
    r_v_limits = None
    wavenumber_limits = (0.3, 8.7)
    _fm = ()
    _anchor_a_av = ()

    def _fm_params(self):
        return self._fm

    def _anchors(self):
        return _G03_ANCHOR_X, np.asarray(self._anchor_a_av) * self.r_v


class G03SmcBar(_G03):
    """Gordon et al. (2003) SMC Bar average extinction curve, R_V = 2.74.

    FM90 ultraviolet (c1 = −4.959, c2 = 2.264, c3 = 0.389, c4 = 0.461,
    x0 = 4.6, γ = 1.0) joined by a natural cubic spline to optical/near-IR
    anchors, as in :class:`F99`. Valid 0.115–3.33 µm. The R_V is fixed.

    References
    ----------
    .. [1] Gordon, K. D., Clayton, G. C., Misselt, K. A., Landolt, A. U., &
       Wolff, M. J. 2003, ApJ, 594, 279, Tables 3-4. doi:10.1086/376774
    .. [2] Gordon, K. D., et al. 2016, ApJ, 826, 104 (smoothed K, J anchors)
    """

    name = "g03-smc-bar"
    citation = "Gordon et al. 2003, ApJ 594, 279 (doi:10.1086/376774), SMC Bar average"
    default_r_v = 2.74
    _fm = (-4.959, 2.264, 0.389, 0.461, 4.6, 1.0)
    _anchor_a_av = (0.110, 0.169, 0.250, 0.567, 0.801, 1.000, 1.374, 1.672)


class G03LmcAverage(_G03):
    """Gordon et al. (2003) LMC average extinction curve, R_V = 3.41.

    FM90 ultraviolet (c1 = −0.890, c2 = 0.998, c3 = 2.719, c4 = 0.400,
    x0 = 4.579, γ = 0.934) joined by a natural cubic spline to optical/near-IR
    anchors, as in :class:`F99`. Valid 0.115–3.33 µm. The R_V is fixed.

    References
    ----------
    .. [1] Gordon, K. D., et al. 2003, ApJ, 594, 279, Tables 3-4.
       doi:10.1086/376774
    """

    name = "g03-lmc-average"
    citation = "Gordon et al. 2003, ApJ 594, 279 (doi:10.1086/376774), LMC average"
    default_r_v = 3.41
    _fm = (-0.890, 0.998, 2.719, 0.400, 4.579, 0.934)
    _anchor_a_av = (0.100, 0.186, 0.257, 0.565, 0.800, 1.000, 1.319, 1.614)


class G03Lmc2Supershell(_G03):
    """Gordon et al. (2003) LMC2 supershell average curve, R_V = 2.76.

    FM90 ultraviolet (c1 = −1.475, c2 = 1.132, c3 = 1.463, c4 = 0.294,
    x0 = 4.558, γ = 0.945) joined by a natural cubic spline to optical/near-IR
    anchors, as in :class:`F99`. Valid 0.115–3.33 µm. The R_V is fixed.

    References
    ----------
    .. [1] Gordon, K. D., et al. 2003, ApJ, 594, 279, Tables 3-4.
       doi:10.1086/376774
    """

    name = "g03-lmc2-supershell"
    citation = "Gordon et al. 2003, ApJ 594, 279 (doi:10.1086/376774), LMC2 supershell average"
    default_r_v = 2.76
    _fm = (-1.475, 1.132, 1.463, 0.294, 4.558, 0.945)
    _anchor_a_av = (0.101, 0.146, 0.244, 0.564, 0.788, 1.000, 1.376, 1.656)

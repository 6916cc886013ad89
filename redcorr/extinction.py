"""Band-integrated extinction: a source seen through a filter and a dust curve.

For a source with spectrum F_λ seen through a band of response T(λ) and
detector weight w(λ) (λ for photon counting, 1 for energy counting; see
:mod:`redcorr.bandpass`), behind dust whose curve is r(λ) = A(λ)/A(V), the
band extinction is

    A_b(A_V) = −2.5 log₁₀ [ ∫ F_λ T w 10^(−0.4 A_V r) dλ / ∫ F_λ T w dλ ].

Because the band's effective wavelength moves redward as the dust column
grows, A_b/A_V depends on A_V and on the source (:mod:`redcorr.coefficients`
tabulates it over blackbody temperature and A_V).

E(B−V) convention
-----------------
redcorr uses the curve's own definition, E(B−V) ≡ A_V / R_V with R_V the
curve's R_V (``curve.r_v``). Hence A_b/E(B−V) = R_V · A_b/A_V, and
E(b₁−b₂)/E(B−V) = R_V (A_b₁ − A_b₂)/A_V. This is *not* a colour excess
measured through B and V filters, which itself depends on the source and
on A_V.

Quadrature
----------
Integrals are computed by product integration on a grid common to every
call for a band: its support is cut into intervals of at most 0.02 µm⁻¹ in
1/λ (at least 16), and the smooth part g = F_λ 10^(−0.4 A_V r) is replaced
by its interpolating polynomial at 4 Gauss–Legendre nodes per interval,
while the response (linear between its samples, sharp edges included) is
integrated exactly. The result converges to better than 10⁻⁴ mag for A_V
up to 20 (tested).
"""

import functools
import math

import numpy as np
from numpy.polynomial import legendre as L

from redcorr._validate import as_a_v, check_finite
from redcorr.bandpass import Band
from redcorr.exceptions import InputError
from redcorr.sed import SED

__all__ = [
    "band_quadrature",
    "band_extinction",
    "band_ratio",
    "effective_wavelength",
    "colour_excess_ratio",
    "curve_on_band",
]


_ORDER = 4
_MAX_DX = 0.02
_MIN_INTERVALS = 16
_LN10_04 = 0.4 * math.log(10.0)


# --------------------------------------------------------------------------- quadrature
@functools.lru_cache(maxsize=16)
def _leggauss(n):
    nodes, weights = L.leggauss(n)
    nodes.setflags(write=False)
    weights.setflags(write=False)
    return nodes, weights


def band_quadrature(band, *, order=_ORDER, max_dx=_MAX_DX, min_intervals=_MIN_INTERVALS):
    """Nodes and weights with ∫ T(λ) w(λ) g(λ) dλ ≈ Σ_j q_j g(λ_j) for smooth g.

    Parameters
    ----------
    band : Band
    order : int
        Gauss–Legendre nodes per interval (the polynomial degree + 1 used
        for g).
    max_dx : float
        Largest interval width in 1/λ, µm⁻¹.
    min_intervals : int
        Fewest intervals across the band.

    Returns
    -------
    nodes_um, weights : ndarray
        1-d, of equal length. Weights carry the response, the detector
        weight w and dλ (µm); they may be slightly negative near sharp
        edges.

    Notes
    -----
    Product integration: on each interval, g is replaced by its Lagrange
    interpolant ℓ_i at the Gauss–Legendre nodes, and q_i = ∫ T w ℓ_i dλ is
    integrated exactly piece by piece between the response's samples
    (T w ℓ_i is a polynomial of degree ``order`` + 1 there).

    References
    ----------
    .. [1] Davis, P. J., & Rabinowitz, P. 1984, Methods of Numerical
       Integration, 2nd ed. (Academic Press), Sect. 2.5 (product rules).
    """
    lo, hi = band.wave_range_um
    x_lo, x_hi = 1.0 / hi, 1.0 / lo
    k_int = max(int(min_intervals), int(math.ceil((x_hi - x_lo) / max_dx)))
    bounds = np.sort(1.0 / np.linspace(x_lo, x_hi, k_int + 1))
    bounds[0], bounds[-1] = lo, hi
    xi, _ = _leggauss(order)
    mid = 0.5 * (bounds[1:] + bounds[:-1])
    half = 0.5 * (bounds[1:] - bounds[:-1])
    nodes = mid[:, None] + half[:, None] * xi

    knots = band.wave_um[(band.wave_um > lo) & (band.wave_um < hi)]
    edges = np.unique(np.concatenate([bounds, knots]))
    a, b = edges[:-1], edges[1:]
    t_ref, t_w = _leggauss((order + 3) // 2)
    pts = 0.5 * (a + b)[:, None] + 0.5 * (b - a)[:, None] * t_ref
    k = np.clip(np.searchsorted(bounds, 0.5 * (a + b)) - 1, 0, k_int - 1)
    ref = (pts - mid[k][:, None]) / half[k][:, None]
    lag = np.ones(ref.shape + (order,))
    for i in range(order):
        for j in range(order):
            if i != j:
                lag[..., i] *= (ref - xi[j]) / (xi[i] - xi[j])
    f = band(pts) * band.weight(pts) * (0.5 * (b - a))[:, None] * t_w
    contrib = np.einsum("pt,pti->pi", f, lag)
    q = np.zeros((k_int, order))
    np.add.at(q, k, contrib)
    return nodes.ravel(), q.ravel()


def _curve_at(curve, band, nodes, extrapolate):
    """r(λ) at the band's nodes, with the band named in range errors."""
    try:
        return np.asarray(curve(nodes, extrapolate=extrapolate), dtype=float)
    except InputError as exc:
        lo, hi = band.wave_range_um
        raise InputError(f"band {band.name!r} ({lo:.4g}-{hi:.4g} µm): {exc}") from None


def _check_band(band):
    if not isinstance(band, Band):
        raise InputError(
            f"band must be a Band; got {type(band).__name__} (load names with redcorr.io.filters.load_band)"
        )
    band.warn_if_truncated()


def curve_on_band(curve, band, extrapolate=False):
    """A band's quadrature nodes and weights, and the curve r(λ) at the nodes.

    Parameters
    ----------
    curve : DustCurve
    band : Band
        Checked (a `Band`, warned about if truncated).
    extrapolate : bool
        As for :func:`band_extinction`; a range error names the band.

    Returns
    -------
    nodes_um, weights, r : ndarray
        1-d, of equal length: :func:`band_quadrature` and r at its nodes.
    """
    _check_band(band)
    nodes, q = band_quadrature(band)
    return nodes, q, _curve_at(curve, band, nodes, extrapolate)


class _Prepared:
    """A band's nodes, weights with the source spectrum, and r(λ), ready to integrate."""

    def __init__(self, curve, band, sed, extrapolate):
        self.nodes, q, self.r = curve_on_band(curve, band, extrapolate)
        if not isinstance(sed, SED):
            raise InputError(f"sed must be an SED; got {type(sed).__name__} (see redcorr.sed)")
        flam = np.asarray(sed.flam(self.nodes), dtype=float)
        self.weights = q * flam
        self.total = float(np.sum(self.weights))
        if not self.total > 0:
            raise InputError(f"the source {sed.name!r} gives no signal in band {band.name!r}")

    def transmission(self, a_v):
        """Weights × 10^(−0.4 A_V (r − s)) and the shift s, shapes (..., n) and (...)."""
        shift = np.where(a_v >= 0, self.r.min(), self.r.max())
        return self.weights * 10.0 ** (-0.4 * a_v[..., None] * (self.r - shift[..., None])), shift


def band_extinction(curve, band, sed, a_v, extrapolate=False):
    """Extinction A_b in a band, in mag, for a source behind dust of A_V.

    Parameters
    ----------
    curve : DustCurve
        r(λ) = A(λ)/A(V): a law, a table or a grain model.
    band : Band
    sed : SED
        Source spectrum (see :mod:`redcorr.sed`).
    a_v : float, array_like or `~astropy.units.Quantity` ['mag']
        A_V in mag, any shape; NaN gives NaN.
    extrapolate : bool
        Let the curve extrapolate beyond its range (with an
        `ExtrapolationWarning`) instead of raising `InputError`.

    Returns
    -------
    ndarray
        A_b in mag, shape of ``a_v``.

    Notes
    -----
    A_b = −2.5 log₁₀[∫ F_λ T w 10^(−0.4 A_V r) dλ / ∫ F_λ T w dλ] (module
    docstring). For numerical range the exponent is shifted by the band's
    smallest r: A_b = A_V r_min − 2.5 log₁₀ ⟨10^(−0.4 A_V (r − r_min))⟩.

    Examples
    --------
    >>> from redcorr.curves import get_curve
    >>> from redcorr.bandpass import tophat
    >>> from redcorr.sed import blackbody
    >>> a = band_extinction(get_curve("ccm89"), tophat(0.55, 0.001), blackbody(6000), 1.0)
    >>> round(float(a), 3)
    0.999
    """
    a = as_a_v(a_v)
    prep = _Prepared(curve, band, sed, extrapolate)
    trans, shift = prep.transmission(a)
    return (a * shift - 2.5 * np.log10(trans.sum(-1) / prep.total))[()]


def band_ratio(curve, band, sed, extrapolate=False):
    """A_b/A_V in the limit A_V → 0: the source- and band-weighted mean of r(λ).

    Notes
    -----
    Write f(A) = ∫ S 10^(−0.4 A r) dλ / ∫ S dλ with S = F_λ T w. Then
    A_b = −2.5 log₁₀ f = −(2.5/ln 10) ln f, f(0) = 1 and
    f′(0) = −0.4 ln 10 ∫ S r dλ / ∫ S dλ, so

        dA_b/dA_V |₀ = −(2.5/ln 10) f′(0)/f(0) = ∫ S r dλ / ∫ S dλ,

    the mean of r weighted by source × response × detector weight. As A_b(0)
    = 0 this slope is also lim A_b/A_V.

    The derivation is elementary (a first-order Taylor expansion of the
    module's defining integral); no further source.
    """
    prep = _Prepared(curve, band, sed, extrapolate)
    return float(np.sum(prep.weights * prep.r) / prep.total)


def effective_wavelength(curve, band, sed, a_v, extrapolate=False):
    """Reddened effective wavelength of the detected signal, µm.

    λ_eff = ∫ λ F_λ T w 10^(−0.4 A_V r) dλ / ∫ F_λ T w 10^(−0.4 A_V r) dλ,
    the mean wavelength of the detected photons (or energy); it moves
    redward as A_V grows. Arguments as for :func:`band_extinction`.
    """
    a = as_a_v(a_v)
    prep = _Prepared(curve, band, sed, extrapolate)
    trans, _ = prep.transmission(a)
    return (np.sum(trans * prep.nodes, -1) / trans.sum(-1))[()]


def colour_excess_ratio(curve, band1, band2, sed, a_v, extrapolate=False):
    """E(b₁−b₂)/E(B−V) = R_V (A_b₁ − A_b₂)/A_V, with E(B−V) ≡ A_V/R_V.

    At A_V = 0 the limit R_V (ratio₁ − ratio₂) from :func:`band_ratio` is
    returned. Arguments as for :func:`band_extinction`.
    """
    a = as_a_v(a_v)
    r_v = check_finite("curve.r_v", curve.r_v)
    limit = band_ratio(curve, band1, sed, extrapolate) - band_ratio(curve, band2, sed, extrapolate)
    diff = band_extinction(curve, band1, sed, a, extrapolate) - band_extinction(curve, band2, sed, a, extrapolate)
    with np.errstate(invalid="ignore", divide="ignore"):
        out = np.where(a == 0, limit, diff / np.where(a == 0, 1.0, a))
    return (r_v * out)[()]

r"""Each star's reddening from its own multi-band photometry: a grid posterior.

The model
---------
For star i and band b,

    m_ib = M_b(T) + μ_i + A_b(A_V, T; R_V) + ε_ib,    ε_ib ~ N(0, σ_ib²),
    σ_ib² = err_ib² + floor_b²,

where M_b(T) is the intrinsic locus (a table of magnitudes against T_eff,
interpolated linearly in ln T; any reference magnitude, the offset absorbs
it), μ_i is a free offset (distance modulus plus the table's reference),
and A_b is this project's band-integrated extinction of a blackbody at T
behind dust of A_V = R_V E(B−V) (:func:`redcorr.coefficients.coefficient_grid`,
built on :mod:`redcorr.extinction`; nonlinear in A_V). E(B−V) is the curve's
own, A_V / R_V (see :mod:`redcorr.extinction`).

The floor
---------
``floor_b`` (default :data:`DEFAULT_FLOOR`, 0.02 mag in every band) stands
for what the model does not hold: the spread of real stars' colours about a
mean locus, the difference between a blackbody and a star's spectrum in the
band integrals, a law that fits the sky only on average, and photometric
zero points. It keeps χ² and the posterior widths honest when the quoted
errors are small. 0.02 mag is the order of these effects for dwarfs in the
optical (common practice, no source); set it per band, or to 0 for
synthetic data made by this same model.

The offset is marginalised analytically
---------------------------------------
With weights w_b = 1/σ_b², residuals r_b = m_b − M_b − A_b and a flat
prior on μ,

    Σ w (r − μ)² = Σ w (r − μ̂)² + S₀ (μ − μ̂)²,  μ̂ = Σ w r / S₀,  S₀ = Σ w,

because Σ w (r − μ̂) = 0. Hence

    ∫ exp(−½ Σ w (r − μ)²) dμ = √(2π/S₀) · exp(−½ χ²(θ)),
    χ²(θ) = Σ w r² − (Σ w r)² / S₀,

and √(2π/S₀) depends on the star's errors only, not on θ = (T, E(B−V),
R_V): the marginal likelihood is exp(−½ χ²(θ)) up to a constant [1]_.

Unknowns, priors and the grid
-----------------------------
θ is put on a grid: ln T_eff uniform over the locus' range with step
≤ ``ln_teff_step`` (default 0.01, 1 % in T_eff), E(B−V) uniform on
[0, ``ebv_max``] with step ≤ ``ebv_step``, and R_V fixed or free over a
range. A grid step in T_eff and E(B−V) should stay below about half the
posterior's width: with the default floor, six bands and a known T_eff
the posterior std of E(B−V) gets down to ≈ 0.009 mag (default step
0.005). A star whose posterior is narrower than a step is flagged
``unresolved``. A_b is tabulated on this grid once per grid.

R_V free
--------
R_V is not put on nodes. At each (T_eff, E(B−V)) node the model is a
cubic in x = (R_V − centre) / half-width of the range, through the
law's band-integrated values at x = −1, −½, ½, 1 (Chebyshev–Lobatto
points, near-best for a polynomial of that degree [6]_). The dependence
is nearly linear (exactly linear at fixed E(B−V) for laws of the form
A_λ = E(B−V) (a_λ R_V + b_λ); Cardelli, Clayton & Mathis 1989, eq. 1
[3]_; F99's optical and infrared anchor points are linear in R_V,
Fitzpatrick 1999 [4]_); the rest is the band integrals' own curvature.
Measured for this project's laws (B…Ks and U…Ks bands, blackbodies
3000–30000 K, E(B−V) ≤ 3, R_V every 0.1), the cubic stays within
0.0017 mag of the law after the free offset (f99 over 2.3–6.0 with U;
≤ 0.0009 without U; ccm89 and o94 ≤ 0.0004): far below the floor.

χ² is then a polynomial of degree 6 in x at each node, summed in one pass
over the bands (:func:`redcorr._reddening_kernels._rv_poly`). Its R_V
integral is done by Laplace's method [5]_: χ² expanded to second order
about the vertex of its quadratic part (a Newton step toward its
smallest value), so that exp(−½ χ²) is a Gaussian in x cut to the range,
integrated with its first two moments in closed form (erf, a truncated
normal [7]_). Where the terms of degree 3 to 6 could change χ² by more
than 0.02 within 3 σ of the vertex (a bound from the coefficients), the
integral is Simpson's rule over the range on 64 intervals instead. The
marginals of E(B−V) and T_eff and the means and stds of R_V and A_V are
these sums; the R_V and A_V percentiles are read from histograms that
receive, for each E(B−V) node, a normal with the mean and variance of
R_V over that node's T_eff nodes (A_V = E(B−V) R_V, the same normal
scaled). Against a plain sum over the grid with the law at R_V every 0.1
(tests/test_fit_core.py) the means agree within 0.03 posterior std, the
stds within 1.5 % and the R_V 16/50/84 % points typically within 0.03
std. The fit costs ≈ 2.6× the R_V-fixed one (2.5–2.7;
benchmarks/bench_fit.py: dwarf stars in B…Ks, through the file, its
grid build included; 7–8× with R_V on nodes 0.8 apart, the model linear
between them): each node sums fourteen products per band instead of two
(four terms at a time, as vectors) and integrates over R_V, and the grid
is eight times larger (four terms, float64).

The prior is flat in ln T_eff (the locus' own parameter: every part of
the locus gets the same weight per unit ln T), flat in E(B−V) ≥ 0 up to
``ebv_max`` and flat in R_V over the range; nothing else. Optional per
star: a Gaussian in T_eff (``teff``, ``teff_err``: a measurement,
multiplied onto the flat prior), an upper bound on E(B−V) and a Gaussian
in E(B−V) (e.g. from a dust map).

The posterior is integrated with the trapezoid rule on the grid; the
2.5/16/50/84/97.5 % points are read from the marginal taken linear between
nodes. Each star's posterior is first summed over every 4th node along
each axis (with R_V free up to every 16th, as far as the axis' number of
steps allows), and again at half that spacing while a
marginal is not smooth (down to the grid's own steps; with R_V free, only
along the axis whose marginal is not smooth); a finer sweep adds only the
nodes the coarser ones did not visit, the sums so far reweighted for the
finer spacing (the same sums as a new sweep). Blocks of the grid that
cannot matter are skipped with a rigorous bound
(:func:`redcorr._reddening_kernels.fit_stars`).
A posterior ridge thinner than a step across it (small errors, strongly
correlated T_eff and E(B−V)) leaves the marginals slightly jagged: the
sums stay right on average (the coverage tests), single percentiles move
by up to about a step.

Where colours cannot tell temperature from reddening (few bands, or bands
whose reddening vector runs along the locus) the posterior is wide and
follows the flat priors over the grid: that is the answer, and it is
flagged ``underdetermined`` when there are fewer colours than unknowns.

Flags (a bit mask; :data:`FIT_FLAGS`)
-------------------------------------
===  =====  ================  ==========================================================
bit  value  name              meaning
===  =====  ================  ==========================================================
0    1      no_fit            no posterior: fewer than 2 usable bands, or the priors
                              and the locus' cover leave no grid node (outputs NaN)
1    2      few_bands         fewer than 2 usable bands (finite magnitude, error > 0)
2    4      teff_edge         the posterior's mode lies at an end of the T_eff range
                              where the locus has every band the star uses
                              (:meth:`ReddeningFitGrid.teff_cover`), or the T_eff
                              prior's mean lies outside it
3    8      bimodal           the E(B−V) marginal splits into two parts each holding
                              ≥ 10 % of the mass, with a dip between them below half
                              the lower peak
4    16     poor_fit          χ²_min is too large for its degrees of freedom
                              (n_bands − 1 − n_unknowns ≥ 1): P(χ² ≥ χ²_min) < 0.001
5    32     ebv_edge          the E(B−V) posterior reaches the grid's last node
                              (84 % point in the last step): raise ``ebv_max``
6    64     underdetermined   fewer colours (n_bands − 1) than unknowns (2, or 3 with
                              R_V free): the priors shape the posterior
7    128    unresolved        the posterior std of E(B−V) or ln T_eff is below its grid
                              step: the percentiles are coarse (R_V, integrated at each
                              node, has no such limit)
===  =====  ================  ==========================================================

References
----------
.. [1] Sivia, D. S., & Skilling, J. 2006, Data Analysis: A Bayesian Tutorial,
   2nd ed. (Oxford), Sect. 3.3 (marginalising a nuisance parameter of a
   Gaussian likelihood; from memory).
.. [2] Pecaut, M. J., & Mamajek, E. E. 2013, ApJS 208, 9 (an intrinsic colour
   table of dwarfs, the intended locus).
.. [3] Cardelli, J. A., Clayton, G. C., & Mathis, J. S. 1989, ApJ 345, 245
   (eq. 1: A_λ/A_V = a(x) + b(x)/R_V, so A_λ is linear in R_V at fixed E(B−V)).
.. [4] Fitzpatrick, E. L. 1999, PASP 111, 63 (Table 3: the optical/IR spline
   anchors, linear in R_V; from memory).
.. [5] Tierney, L., & Kadane, J. B. 1986, J. Am. Stat. Assoc. 81, 82 (Laplace's
   method for posterior integrals; from memory).
.. [6] Trefethen, L. N. 2013, Approximation Theory and Approximation Practice
   (SIAM), ch. 2 and 16 (Chebyshev points; interpolation there is near-best;
   from memory).
.. [7] Johnson, N. L., Kotz, S., & Balakrishnan, N. 1994, Continuous Univariate
   Distributions, Vol. 1, 2nd ed. (Wiley), Sect. 10.1 (moments of a truncated
   normal; from memory).
"""

import math
import warnings

import numpy as np
from scipy import stats

from redcorr._constants import FIT_FLAGS
from redcorr._validate import check_positive, shown
from redcorr.bandpass import Band
from redcorr.coefficients import coefficient_grid
from redcorr.curves import DustCurve
from redcorr.exceptions import FitWarning, InputError

__all__ = [
    "ReddeningFitGrid",
    "ReddeningFit",
    "fit_reddening",
    "warn_flagged",
    "FIT_FLAGS",
    "DEFAULT_FLOOR",
    "CHUNK_ROWS",
]

DEFAULT_FLOOR = 0.02
"""Default model-uncertainty floor of every band, mag (module docstring, "The floor")."""

CHUNK_ROWS = 65536
"""Stars handed to the kernel at once: the per-chunk arrays (inputs as float64, weights,
priors, the output rows) stay below ~ 30 MB for 10 bands."""

POOR_FIT_P = 0.001
"""p-value of χ²_min below which a star is flagged ``poor_fit``."""

PRUNE_CHI2 = 30.0
"""Blocks of the grid whose smallest possible χ² + penalty exceeds the best by more than this are
skipped: each of their nodes weighs < e^−15 ≈ 3e−7 of the best node, so that even 10⁵ skipped
nodes hold < 3 % of one node's weight (and a posterior spans many nodes)."""

BIMODAL_SHARE, BIMODAL_DIP = 0.10, 0.5
"""The bimodality test: each side ≥ 10 % of the mass, the dip below half the lower peak."""

_BLOCK = (8, 8)  # block sizes along ln T, E(B−V) of the pruning (× the kernel's SPLIT: coarse; speed only)
_STRIDE = 4  # the first sweep's node spacing along each axis, halved where it does not resolve the posterior
_STRIDE_FREE = 16  # the same with R_V free (wider posteriors in T_eff and E(B−V); up to what divides the axis)
_RV_X = np.cos(np.pi * np.arange(4)[::-1] / 3)
"""Where the law is evaluated with R_V free, in x = (R_V − centre) / half-width of the range: −1, −½, ½, 1
(Chebyshev–Lobatto points of the cubic through them; module docstring, "R_V free")."""
SMOOTH = 0.35
"""Largest change of a marginal between neighbouring nodes, relative to its peak, for the grid to
count as resolving the posterior (a step ≲ 0.58 σ for a Gaussian; :func:`redcorr._reddening_kernels.fit_stars`)."""


def _float_array(name, value, ndim):
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be numeric; got {type(value).__name__}") from None
    if arr.ndim != ndim:
        raise InputError(f"{name} must be {ndim}-d; got shape {arr.shape}")
    return arr


def _uniform_axis(lo, hi, step):
    """lo..hi in equal steps no larger than ``step``, a multiple of :data:`_STRIDE` of them (ends are nodes)."""
    n = max(int(math.ceil((hi - lo) / step - 1e-9)), 1)
    return np.linspace(lo, hi, -(-n // _STRIDE) * _STRIDE + 1)


def _first_stride(n, most=None):
    """The largest power of 2 up to ``most`` (:data:`_STRIDE`) that divides the n − 1 steps of an axis (1 for n = 1)."""
    s = (most or _STRIDE) if n > 1 else 1
    while s > 1 and (n - 1) % s:
        s //= 2
    return s


def _trapezoid_weights(axis):
    if axis.size == 1:
        return np.ones(1)
    q = np.full(axis.size, axis[1] - axis[0])
    q[0] = q[-1] = 0.5 * (axis[1] - axis[0])
    return q


def _curves(curve, r_v_range):
    """The R_V values of the grid's curves and a curve at each: one (fixed), or R_V_NODES over the range (free)."""
    if isinstance(curve, DustCurve):
        if r_v_range is not None:
            raise InputError("r_v_range is for a curve factory; a single curve fixes R_V at its own r_v")
        return np.array([curve.r_v]), [curve]
    if not callable(curve):
        raise InputError(f"curve must be a DustCurve or a factory r_v -> DustCurve; got {type(curve).__name__}")
    if r_v_range is None:
        raise InputError("a curve factory needs r_v_range=(low, high); give a curve to fix R_V")
    lo, hi = (check_positive("r_v_range", v) for v in r_v_range)
    if not hi > lo:
        raise InputError(f"r_v_range={shown(tuple(r_v_range))} must increase")
    nodes = 0.5 * (lo + hi) + 0.5 * (hi - lo) * _RV_X
    curves = [curve(float(r)) for r in nodes]
    if not all(isinstance(c, DustCurve) for c in curves):
        raise InputError("the curve factory must return a DustCurve for each R_V")
    return nodes, curves


class ReddeningFitGrid:
    """The model grid of the fit: predicted magnitudes over (T_eff, E(B−V), band; a cubic in R_V), built once.

    Parameters
    ----------
    bands : sequence of Band
        The bands of the magnitudes, in the order of their columns.
    locus_teff : array_like, shape (K,)
        T_eff of the locus' nodes, K, strictly increasing.
    locus_mags : array_like, shape (K, n_band)
        Intrinsic magnitudes at the nodes relative to any reference (the
        free offset absorbs it); NaN where the table lacks a band. Each
        band needs at least 2 finite nodes.
    curve : DustCurve or callable
        A curve fixes R_V at ``curve.r_v``; a factory ``r_v -> DustCurve``
        with ``r_v_range`` frees R_V (the model a cubic in R_V through the
        law at four R_V; module docstring, "R_V free").
    r_v_range : (float, float), optional
        With a factory: the R_V range (flat prior), e.g. (2.3, 6.0).
    floor : float or array_like, shape (n_band,)
        Model-uncertainty floor per band, mag, >= 0 (module docstring).
    ebv_max : float
        Largest E(B−V) of the grid (the flat prior's end), mag.
    ebv_step, ln_teff_step : float
        Largest grid steps in E(B−V) (mag) and in ln T_eff.
    extrapolate : bool
        Let the curve extrapolate beyond its wavelengths (with a warning).

    Attributes
    ----------
    band_teff : ndarray, shape (n_band, 2)
        Each band's first and last locus T_eff (K): a star's fit ranges over
        the part all its bands share (:meth:`teff_cover`).

    Notes
    -----
    The locus is interpolated linearly in ln T_eff; a T_eff node between
    two locus nodes of which one lacks a band has no model for that band,
    and a star with a magnitude in that band gives those nodes no weight.
    Memory: the grid holds n_T · n_E · n_band float32 (4.5 MB for 6 bands
    and the defaults over 2300–50000 K) with R_V fixed, four terms of
    float64 (eight times that) with R_V free.

    From a :class:`redcorr.intrinsic.ColourLocus` ``locus``:
    ``sub = locus.subset([b.name for b in bands])`` then
    ``ReddeningFitGrid(bands, sub.teff, sub.magnitudes, curve)``.
    """

    def __init__(
        self,
        bands,
        locus_teff,
        locus_mags,
        curve,
        *,
        r_v_range=None,
        floor=DEFAULT_FLOOR,
        ebv_max=3.0,
        ebv_step=0.005,
        ln_teff_step=0.01,
        extrapolate=False,
    ):
        if isinstance(bands, Band):
            bands = [bands]
        self.bands = list(bands)
        if not all(isinstance(b, Band) for b in self.bands):
            raise InputError("bands must be Band objects (the edge loads names with redcorr.io.filters.load_band)")
        n_band = len(self.bands)
        if n_band < 2:
            raise InputError(f"bands has {n_band} band(s); the fit needs at least 2")
        teff = _float_array("locus_teff", locus_teff, 1)
        if teff.size < 2 or not np.all(np.isfinite(teff)) or np.any(teff <= 0) or np.any(np.diff(teff) <= 0):
            raise InputError(
                f"locus_teff must hold >= 2 finite temperatures > 0 K, strictly increasing; got {teff.tolist()}"
            )
        mags = _float_array("locus_mags", locus_mags, 2)
        if mags.shape != (teff.size, n_band):
            raise InputError(
                f"locus_mags has shape {mags.shape}; it needs (len(locus_teff), len(bands)) = {(teff.size, n_band)}"
            )
        for b, band in enumerate(self.bands):
            if np.isfinite(mags[:, b]).sum() < 2:
                raise InputError(f"locus_mags column {b} (band {band.name!r}) has fewer than 2 finite values")
        fl = _float_array("floor", np.broadcast_to(floor, (n_band,)) if np.ndim(floor) == 0 else floor, 1)
        if fl.shape != (n_band,) or not np.all(np.isfinite(fl)) or np.any(fl < 0):
            raise InputError(
                f"floor={shown(np.asarray(floor))} must be one value or one per band, each finite and >= 0"
            )
        self.floor = fl
        self.band_teff = np.array([teff[np.isfinite(col)][[0, -1]] for col in mags.T])
        ebv_max = check_positive("ebv_max", ebv_max)
        ebv_step = check_positive("ebv_step", ebv_step)
        ln_teff_step = check_positive("ln_teff_step", ln_teff_step)
        r_v_nodes, curves = _curves(curve, r_v_range)
        self.r_v = r_v_nodes[[0, -1]] if r_v_nodes.size > 1 else r_v_nodes  # R_V, or the range
        self.ebv = _uniform_axis(0.0, ebv_max, ebv_step)
        ln_t = _uniform_axis(math.log(teff[0]), math.log(teff[-1]), ln_teff_step)
        self.teff = np.exp(ln_t)
        self.teff[[0, -1]] = teff[[0, -1]]

        # the locus on the grid, linear in ln T; NaN where a bracketing node lacks the band
        ln_locus = np.log(teff)
        k = np.clip(np.searchsorted(ln_locus, ln_t, side="right") - 1, 0, teff.size - 2)
        f = ((ln_t - ln_locus[k]) / (ln_locus[k + 1] - ln_locus[k]))[:, None]
        with np.errstate(invalid="ignore"):
            intrinsic = np.where(f == 0, mags[k], np.where(f == 1, mags[k + 1], (1 - f) * mags[k] + f * mags[k + 1]))
        self.valid = np.isfinite(intrinsic)
        intrinsic = np.where(self.valid, intrinsic, 0.0)

        from redcorr import _reddening_kernels as kernels  # noqa: PLC0415 - numba loads on first use

        self._kernels = kernels
        self._block = _BLOCK
        most = _STRIDE_FREE if self.r_v_free else _STRIDE
        self._strides = np.array([_first_stride(self.teff.size, most), _first_stride(self.ebv.size, most)], np.int64)
        order = kernels.sweep_order(self.ebv.size, self._strides[1])
        self._slot = np.argsort(order)
        self._stored = self._magnitudes(r_v_nodes, curves, intrinsic, order, extrapolate)
        self._blocks = kernels.block_bounds(self._stored, self._slot, self.valid, *_BLOCK)
        self.law = curves[0].name

    def _magnitudes(self, r_v_nodes, curves, intrinsic, order, extrapolate):
        """The grid (T, E(B−V) in ``order``, band, term): magnitudes (R_V fixed) or the cubic's terms.

        R_V fixed: float32, 1e-6 mag at 20 mag, far below any error, and
        half the memory of float64 at the same speed. R_V free: float64,
        whose sweeps then skip a conversion per term read (~10 % of that
        fit's time; measured, interleaved runs). Allocated and filled in one
        pass from the coefficient grids' own arrays
        (:func:`redcorr._reddening_kernels.store_grid`): temporaries of the
        grid's size, in numpy, cost their allocation and first touch and
        took much of the build.
        """
        ratios = tuple(
            coefficient_grid(crv, self.bands, self.teff, r_v * self.ebv, extrapolate=extrapolate).ratio
            for r_v, crv in zip(r_v_nodes, curves, strict=True)
        )
        # the cubic's coefficients in x through the four R_V (one term, the magnitudes, with R_V fixed)
        weights = np.linalg.inv(np.vander(_RV_X, 4, increasing=True)) if len(ratios) > 1 else np.ones((1, 1))
        dtype = np.float64 if len(ratios) > 1 else np.float32
        return self._kernels.store_grid(ratios, r_v_nodes[:, None] * self.ebv, intrinsic, weights, order, dtype)

    @property
    def model(self):
        """ndarray, shape (n_T, n_E, n_band, n_term): the grid in the axes' order (a copy).

        With R_V fixed (one term) the predicted magnitude of each band up to
        the free offset; with R_V free the four coefficients of the cubic in
        x (module docstring, "R_V free"). Stored with its E(B−V) nodes in the
        order the fit visits them.
        """
        return np.take(self._stored, self._slot, axis=1)

    @property
    def r_v_free(self):
        """bool: whether R_V is an unknown (``r_v`` is then the range)."""
        return self.r_v.size > 1

    def _checked(self, mags, errors):
        """``mags`` and ``errors`` as float arrays of shape (n, n_band), and which bands each star can use."""
        n_band = len(self.bands)
        m = _float_array("mags", mags, 2)
        err = _float_array("errors", errors, 2)
        if m.shape[1:] != (n_band,) or err.shape != m.shape:
            raise InputError(
                f"mags {m.shape} and errors {err.shape} must both have shape (n_stars, {n_band}) for the grid's bands"
            )
        with np.errstate(invalid="ignore"):
            usable = np.isfinite(m) & np.isfinite(err) & (err > 0)
        return m, err, usable

    def teff_cover(self, mags, errors):
        """The T_eff range over which the locus gives every band each star can use (its fit's T_eff range).

        Parameters
        ----------
        mags, errors : array_like, shape (n, n_band)
            As for :meth:`fit` (a band with a NaN magnitude or an error
            that is NaN or <= 0 is not used).

        Returns
        -------
        low, high : ndarray, shape (n,)
            K: from the hottest of the used bands' first locus nodes to the
            coolest of their last; NaN where that is empty (or no band is
            used). A gap inside a band's nodes is not seen here.
        """
        return self._cover(self._checked(mags, errors)[2])

    def _cover(self, usable):
        """:meth:`teff_cover` from the stars' usable bands (bool, shape (n, n_band))."""
        low = np.where(usable, self.band_teff[:, 0], -np.inf).max(axis=1)
        high = np.where(usable, self.band_teff[:, 1], np.inf).min(axis=1)
        ok = usable.any(axis=1) & (low <= high)
        return np.where(ok, low, np.nan), np.where(ok, high, np.nan)

    def fit(self, mags, errors, *, teff_prior=None, ebv_upper=None, ebv_prior=None, chunk_rows=CHUNK_ROWS,
            warn=True):
        """Posterior summaries of each star's E(B−V), A_V, T_eff (and R_V).

        Parameters
        ----------
        mags, errors : array_like, shape (n, n_band)
            Magnitudes and their errors in the grid's bands. A band with a
            NaN magnitude, or an error that is NaN or <= 0, is not used for
            that star.
        teff_prior : (array_like, array_like), optional
            (teff, teff_err) in K, each broadcast to (n,): a Gaussian prior
            on T_eff; NaN in either means none for that star; teff_err > 0.
        ebv_upper : float or array_like, optional
            Per-star upper bound on E(B−V), mag (NaN or inf: none), >= 0.
        ebv_prior : (array_like, array_like), optional
            (mean, sigma) of a Gaussian prior on E(B−V), mag (NaN: none);
            sigma > 0.
        chunk_rows : int
            Stars per kernel call (:data:`CHUNK_ROWS`).
        warn : bool
            Warn about flagged stars (below); a caller fitting a catalog in
            parts turns it off and warns once about the whole.

        Returns
        -------
        ReddeningFit

        Warns
        -----
        FitWarning
            Once, with the number of stars carrying each flag that could
            mislead (all flags but ``few_bands``, which implies ``no_fit``).
        """
        m, err, usable = self._checked(mags, errors)
        n = m.shape[0]
        chunk_rows = int(chunk_rows)
        if chunk_rows < 1:
            raise InputError(f"chunk_rows={chunk_rows} must be >= 1")
        t_mean, t_sigma = self._gaussian("teff_prior", teff_prior, n)
        e_mean, e_sigma = self._gaussian("ebv_prior", ebv_prior, n)
        e_up = np.full(n, np.inf) if ebv_upper is None else self._per_star("ebv_upper", ebv_upper, n)
        if np.any(e_up < 0):
            raise InputError(f"ebv_upper={e_up[e_up < 0][0]:g} must be >= 0 (NaN or inf: no bound)")
        e_up = np.where(np.isnan(e_up), np.inf, e_up)

        kernels = self._kernels
        out = np.empty((n, kernels.N_OUT))
        av = self.r_v[0] * (self.ebv[1] - self.ebv[0])
        n_av = int(math.ceil(self.r_v[-1] * self.ebv[-1] / av - 1e-9)) + 1
        qt = _trapezoid_weights(np.log(self.teff))
        qe = _trapezoid_weights(self.ebv)
        for lo in range(0, n, chunk_rows):
            sl = slice(lo, min(lo + chunk_rows, n))
            use = usable[sl]
            weight = np.where(use, 1.0 / (np.where(use, err[sl], 1.0) ** 2 + self.floor**2), 0.0)
            kernels.fit_stars(
                np.where(use, m[sl], 0.0), weight, self._stored, self._slot, self.valid, self.teff, self.ebv, self.r_v,
                qt, qe, av, n_av, self._blocks, *self._block,
                t_mean[sl], t_sigma[sl], e_mean[sl], e_sigma[sl], e_up[sl],
                PRUNE_CHI2, BIMODAL_SHARE, BIMODAL_DIP, self._strides, SMOOTH, out[sl],
            )  # fmt: skip
        result = ReddeningFit(self, out, t_mean, self._cover(usable))
        if warn:
            warn_flagged(result.counts() | {"any": int(np.count_nonzero(result.flags))}, n, stacklevel=2)
        return result

    @staticmethod
    def _per_star(name, value, n):
        arr = np.asarray(value, dtype=float)
        try:
            return np.array(np.broadcast_to(arr, (n,)))
        except ValueError:
            raise InputError(f"{name} has shape {arr.shape}; it must be one value or one per star ({n})") from None

    def _gaussian(self, name, prior, n):
        if prior is None:
            return np.full(n, np.nan), np.full(n, np.nan)
        try:
            mean, sigma = prior
        except (TypeError, ValueError):
            raise InputError(f"{name} must be a pair (mean, sigma); got {type(prior).__name__}") from None
        mean, sigma = self._per_star(name, mean, n), self._per_star(name, sigma, n)
        if np.any(sigma <= 0):
            raise InputError(f"{name} sigma={sigma[sigma <= 0][0]:g} must be > 0 (NaN: no prior for that star)")
        none = ~(np.isfinite(mean) & np.isfinite(sigma))
        return np.where(none, np.nan, mean), np.where(none, np.nan, sigma)


class ReddeningFit:
    """Per-star results of :meth:`ReddeningFitGrid.fit` (arrays of length n; NaN where not fitted).

    Attributes
    ----------
    ebv, av, teff, rv : dict of ndarray
        Keys ``mean``, ``std``, ``p2.5``, ``p16``, ``p50``, ``p84``,
        ``p97.5`` (posterior percentiles); ``rv`` is None
        when R_V is fixed. A_V = R_V E(B−V) (with R_V integrated between its
        nodes when free; module docstring).
    chi2 : ndarray
        The smallest χ² (offset marginalised, priors not included) over
        the grid nodes carrying posterior weight.
    n_bands : ndarray of int
        Bands used.
    flags : ndarray of int
        Bit mask (:data:`FIT_FLAGS`).
    """

    def __init__(self, grid, out, teff_prior_mean, teff_cover):
        from redcorr._reddening_kernels import AV, BIMODAL, CHI2, EBV, FITTED, LNT_STD, MAP_T, NBANDS, RV, STATS, TEFF

        def block(k):
            return {name: out[:, k + j].copy() for j, name in enumerate(STATS)}

        self.ebv, self.av, self.teff = block(EBV), block(AV), block(TEFF)
        self.rv = block(RV) if grid.r_v_free else None
        self.chi2 = out[:, CHI2].copy()
        self.n_bands = out[:, NBANDS].astype(np.int64)
        fitted = out[:, FITTED] == 1.0  # exact: the kernel writes 0.0 or 1.0
        flags = np.zeros(out.shape[0], dtype=np.int64)
        flags[~fitted] |= FIT_FLAGS["no_fit"]
        flags[self.n_bands < 2] |= FIT_FLAGS["few_bands"]
        low, high = teff_cover
        t_mode = np.where(fitted, grid.teff[np.where(fitted, out[:, MAP_T], 0).astype(int)], np.nan)  # (a node index)
        step = grid.teff[1] / grid.teff[0]  # (a node is at an end if the next one beyond it lies outside)
        edge = (t_mode / step < low) | (t_mode * step > high) | (teff_prior_mean < low) | (teff_prior_mean > high)
        flags[edge] |= FIT_FLAGS["teff_edge"]
        flags[out[:, BIMODAL] == 1.0] |= FIT_FLAGS["bimodal"]  # exact 0.0/1.0, as above
        n_unknown = 3 if grid.r_v_free else 2
        dof = self.n_bands - 1 - n_unknown
        with np.errstate(invalid="ignore"):
            p = np.where(dof >= 1, stats.chi2.sf(self.chi2, np.maximum(dof, 1)), np.nan)
            flags[p < POOR_FIT_P] |= FIT_FLAGS["poor_fit"]
            step = grid.ebv[1] - grid.ebv[0]
            flags[self.ebv["p84"] > grid.ebv[-1] - step] |= FIT_FLAGS["ebv_edge"]
            flags[fitted & (self.n_bands - 1 < n_unknown)] |= FIT_FLAGS["underdetermined"]
            ln_step = math.log(grid.teff[1] / grid.teff[0])
            coarse = (self.ebv["std"] < step) | (out[:, LNT_STD] < ln_step)
            flags[fitted & coarse] |= FIT_FLAGS["unresolved"]
        self.flags = flags

    def counts(self):
        """dict: stars carrying each flag, by name."""
        return {name: int(np.count_nonzero(self.flags & bit)) for name, bit in FIT_FLAGS.items()}


def warn_flagged(counts, total, *, stacklevel=2):
    """Warn once (`FitWarning`) with the counts of the flags that could mislead, if any.

    Parameters
    ----------
    counts : dict
        Flag name → number of stars carrying it (:meth:`ReddeningFit.counts`,
        or a run's totals, which may name more flags), and ``"any"`` → stars
        with any flag; ``few_bands`` is not listed (it implies ``no_fit``).
    total : int
        Stars fitted.
    stacklevel : int
        As for :func:`warnings.warn`, counted from the caller of this function.
    """
    listed = {k: v for k, v in counts.items() if v and k not in ("few_bands", "any")}
    if listed:
        text = ", ".join(f"{k} {v}" for k, v in listed.items())
        warnings.warn(
            f"{counts['any']} of {total} star(s) flagged ({text}); see redcorr.photometric_reddening.FIT_FLAGS",
            FitWarning,
            stacklevel=stacklevel + 1,
        )


def fit_reddening(mags, errors, bands, locus_teff, locus_mags, curve, *, priors=None, **grid_options):
    """Fit each star's E(B−V) (and R_V) from its photometry: :class:`ReddeningFitGrid` then its ``fit``.

    Parameters
    ----------
    mags, errors : array_like, shape (n, n_band)
    bands, locus_teff, locus_mags, curve
        As for :class:`ReddeningFitGrid`.
    priors : dict, optional
        Keywords of :meth:`ReddeningFitGrid.fit` (``teff_prior``,
        ``ebv_upper``, ``ebv_prior``, ``chunk_rows``).
    **grid_options
        Keywords of :class:`ReddeningFitGrid`.

    Returns
    -------
    ReddeningFit
    """
    grid = ReddeningFitGrid(bands, locus_teff, locus_mags, curve, **grid_options)
    return grid.fit(mags, errors, **(priors or {}))

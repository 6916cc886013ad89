"""Reddening correction of photometric catalogs: tables in, tables out.

A :class:`Correction` is set up once from the columns of the tables to
come and a :class:`CorrectionOptions` (the bands, the dust, the source of
reddening, the source spectrum, the output; see
:mod:`redcorr.correction.options`), then applied to any number of tables —
a whole DataFrame in memory, the chunks of a file streamed by
:mod:`redcorr.io.batch`, or the partitions of a Dask DataFrame
(:mod:`redcorr.io.dask_engine`). Every row is corrected on its own, so the
result does not depend on how a table is split. A :class:`CatalogFit`
(each star's reddening fitted from its own photometry, from a
:class:`FitOptions`) is set up and applied the same way. This package opens
no files and takes objects, not names: :func:`redcorr.io.correction.correction_options`
and :func:`redcorr.io.correction.fit_options` turn law, band, table and map
names into the options.

==============================  ==============================================
:mod:`~.rows`                   :class:`TableJob`, the base of both jobs
:mod:`~.options`                the options, frozen and checked
:mod:`~.columns`                finding and guessing columns; reading numbers
:mod:`~.providers`              A_b from a spline, a grid or a linear ratio
:mod:`~.temperature`            temperature from a colour (blackbody table)
:mod:`~.flags`                  the flag bits, and :class:`RunSummary`
:mod:`~.core`                   :class:`Correction`, row by row
:mod:`~.fit`                    :class:`CatalogFit`: each row's reddening from
                                its photometry (:mod:`redcorr.photometric_reddening`)
==============================  ==============================================

Output columns
--------------
For each band with magnitude column ``MAG`` (``SUFFIX`` defaults to
``"_dered"``):

``MAG_dered``
    Corrected magnitude, m₀ = m − A_b.
``MAG_dered_err``
    Its uncertainty (when any uncertainty is known, see Notes).
``A_LABEL``
    Extinction A_b in mag; ``LABEL`` is the band name with every run of
    characters other than letters and digits replaced by ``_``
    (``kw-v`` → ``A_kw_v``).

For each requested colour pair (MAG1, MAG2): ``MAG1-MAG2_dered`` and
``MAG1-MAG2_dered_err``. Per row: ``ebv_used`` and ``av_used`` (the
reddening applied), ``rv_used`` (with a per-row R_V), ``teff_used`` (source temperature, K, when
it varies per row), ``teff_iterations`` (when solved from a colour) and the
flag column ``dered_flags``, whose bits are :data:`CORRECTION_FLAGS`
(table in :mod:`redcorr.correction.flags`).

Notes
-----
Extinction through band b for A_V and a blackbody source of temperature T:

* nonlinear (default): A_b = A_b(A_V, T) integrated through the filter with
  the reddened spectrum (:func:`redcorr.extinction.band_extinction`), which
  falls slightly below A_V·R_b as the band's effective wavelength shifts
  red. For a fixed T it is tabulated against A_V (step 0.05 mag, cubic
  spline, error < 1e-8 mag); for T per row the
  :class:`redcorr.coefficients.CoefficientGrid` is interpolated. Negative
  A_V (noise in a reddening estimate) uses the odd extension
  A_b(−A_V) = −A_b(A_V).
* linear (``nonlinear=False``): A_b = R_b·E(B-V) = (A_b/A_V)·A_V with
  A_b/A_V the A_V → 0 limit (:func:`redcorr.extinction.band_ratio`).

A_V = R_V·E(B-V) when the reddening is given as E(B-V).

R_V per row: the law changes with R_V. Coefficients are computed at R_V
nodes spaced ``rv_step`` (0.1) across the law's allowed range, only for
the nodes a table needs, and A_b is interpolated linearly in R_V between
the two nodes around each row at fixed E(B-V) (or fixed A_V when A_V is
the input). At fixed E(B-V), A_b = E(B-V)·(a_b R_V + b_b) is exactly linear
in R_V for laws of the CCM89 form, so the interpolation error is small.

Uncertainties (added in quadrature; correlated parts kept together)::

    σ(m₀)²   = σ_m² + (R_b σ_E)² + (∂A_b/∂R_V · σ_RV)²
    σ(c₀)²   = σ_m1² + σ_m2² + ((R_1 − R_2) σ_E)² + (∂(A_1 − A_2)/∂R_V · σ_RV)²

with R_b = dA_b/dE(B-V) at the row's reddening (dA_b/dA_V and σ_AV when A_V
is the input; the derivative of the A_V spline, A_b/E(B-V) in linear mode,
a central difference of ±0.001 mag in A_V on a coefficient grid; with R_V
per row, that derivative at the two nodes around the row, interpolated
with the same weight as A_b) and ∂A_b/∂R_V a central difference (±0.05) at
fixed E(B-V) or A_V (with R_V per row: the slope between the two nodes,
(A_b(hi) − A_b(lo))/rv_step).

Distance-resolved maps: with a distance (or parallax) column the map is
looked up at each row's distance; with its uncertainty, at a distribution of
distances (:class:`redcorr.maps.distance.DistanceSamples`: a Gaussian
distance, or the posterior of a parallax under an exponentially decreasing
space density prior, Bailer-Jones 2015), giving the mean E over it and its
standard deviation σ_d, which joins the reddening's own σ in quadrature:
σ_E² = σ_given² + σ_d² (independent). A parallax without an error is taken
as exact, d = 1000/ϖ pc.

Source temperature: fixed (``temperature``), a column, or solved from an
observed colour: starting from ``temperature``, deredden the colour,
convert it to T with the blackbody colour of the two bands (AB magnitudes
plus ``colour_offset``), recompute A_b(T), and repeat until no A_b changes by
more than ``tolerance``.

References
----------
.. [1] Fitzpatrick, E. L. 1999, PASP 111, 63 (band extinction depends on
   the source spectrum and on the amount of extinction, Sect. 3).
.. [2] Cardelli, J. A., Clayton, G. C., & Mathis, J. S. 1989, ApJ 345, 245,
   Eq. 1 (A(λ)/A(V) = a(x) + b(x)/R_V).
.. [3] Bailer-Jones, C. A. L. 2015, PASP 127, 994, Sect. 5 (distance from a
   parallax with an exponentially decreasing space density prior).
"""

from redcorr.correction.columns import band_label
from redcorr.correction.core import Correction
from redcorr.correction.fit import CATALOG_FIT_FLAGS, CatalogFit, FitOptions, FitSummary
from redcorr.correction.flags import CORRECTION_FLAGS, FLAG_COLUMN, RunSummary
from redcorr.correction.options import (
    BandSelection,
    CorrectionOptions,
    DustOptions,
    OutputOptions,
    ReddeningSource,
    SpectrumOptions,
)
from redcorr.correction.temperature import intrinsic_colour

__all__ = [
    "CATALOG_FIT_FLAGS",
    "CORRECTION_FLAGS",
    "FLAG_COLUMN",
    "BandSelection",
    "CatalogFit",
    "Correction",
    "CorrectionOptions",
    "DustOptions",
    "FitOptions",
    "FitSummary",
    "OutputOptions",
    "ReddeningSource",
    "RunSummary",
    "SpectrumOptions",
    "band_label",
    "intrinsic_colour",
]

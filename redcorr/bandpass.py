"""Photometric bands: a response curve, its detector convention and where it came from.

A band is a response T(λ) sampled at increasing wavelengths and taken to be
linear between the samples and zero outside them. How the response turns a
source spectrum F_λ into a signal depends on the detector:

* **photon counting** (CCDs, CMOS, most modern detectors; the default): the
  signal counts photons, so the band-averaged flux weights by λ,

      ⟨F_λ⟩ = ∫ F_λ T λ dλ / ∫ T λ dλ          (w(λ) = λ);

* **energy counting** (bolometers, and the classical definition of some old
  passbands): the signal is energy, and

      ⟨F_λ⟩ = ∫ F_λ T dλ / ∫ T dλ              (w(λ) = 1).

This module is the one place that makes that choice: :meth:`Band.weight`
returns w(λ) for the band's convention and every integral in
:mod:`redcorr.extinction` multiplies by it.

Curves shipped by ``speclite`` are treated as photon-counting responses, as
that package itself does.
"""

import functools
import warnings

import numpy as np
from astropy import units as u

from redcorr._validate import check_positive, shown
from redcorr.exceptions import InputError, TruncatedBandWarning

__all__ = ["Band", "CONVENTIONS", "WAVE_LIMITS_UM", "tophat", "gaussian", "product"]

CONVENTIONS = ("photon", "energy")
"""Allowed detector conventions of a band."""

WAVE_LIMITS_UM = (1.0e-4, 1.0e5)
"""Wavelengths (µm) a band's samples may lie at: 1 Å to 10 cm, beyond every ultraviolet to
far-infrared filter, so that a typo (a width in Å taken as µm, say) is refused before its
integrals overflow (common practice, no source)."""

_MIN_SAMPLES = 3
_EDGE_FRACTION = 0.01  # response above this fraction of the peak at an end means "cut off"


def _to_um(wave, name):
    """Wavelengths in µm as float64; plain numbers are µm, a Quantity any spectral unit."""
    if isinstance(wave, u.Quantity):
        try:
            return np.asarray(wave.to_value(u.um, equivalencies=u.spectral()), dtype=float)
        except u.UnitConversionError:
            raise InputError(
                f"{name} has unit {wave.unit!s}; a length, frequency, energy or wavenumber unit is needed"
            ) from None
    try:
        return np.asarray(wave, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name}={shown(wave)} is not numeric") from None


class Band:
    """A photometric band: response against wavelength, name, convention, provenance.

    Parameters
    ----------
    wave : array_like or `~astropy.units.Quantity` ['length']
        Sample wavelengths, strictly increasing; plain numbers are µm. At
        least 3 samples. A Quantity in frequency or wavenumber is converted
        and must still come out increasing in wavelength.
    response : array_like
        Response at ``wave``: finite, non-negative, with a positive maximum.
        Any normalisation; linear between samples and zero outside them.
    name : str
        Short name shown in outputs.
    convention : {"photon", "energy"}
        Detector convention (see the module docstring); default ``"photon"``.
    provenance : str
        Where the curve came from (paper, file, synthetic shape).

    Notes
    -----
    Derived wavelengths (T the response, w = λ for photon counting, w = 1
    for energy counting):

    * pivot wavelength, the λ_p with ⟨F_ν⟩ = ⟨F_λ⟩ λ_p²/c:
      λ_p² = ∫ T w dλ / ∫ T w λ⁻² dλ (photon: ∫Tλdλ / ∫T/λ dλ;
      energy: ∫T dλ / ∫T/λ² dλ);
    * mean wavelength λ_0 = ∫ λ T dλ / ∫ T dλ (of the response as given);
    * width W = ∫ T dλ / max T (width of the rectangle of equal area and
      height).

    References
    ----------
    .. [1] Tokunaga, A. T., & Vacca, W. D. 2005, PASP, 117, 421, Appendix
       (pivot and mean wavelengths). doi:10.1086/429382
    .. [2] Koornneef, J., et al. 1986, Highlights of Astronomy, 7, 833
       (the pivot wavelength).

    Examples
    --------
    >>> from redcorr.bandpass import tophat
    >>> band = tophat(0.55, 0.1)
    >>> round(band.pivot_um, 4)
    0.5492
    """

    def __init__(self, wave, response, *, name, convention="photon", provenance=""):
        w = _to_um(wave, "wave")
        if isinstance(response, u.Quantity):
            response = response.to_value(u.dimensionless_unscaled)
        t = np.asarray(response, dtype=float)
        if w.ndim != 1 or t.shape != w.shape:
            raise InputError(
                f"band {name!r}: wave and response must be 1-d of equal length; "
                f"got shapes {w.shape} and {t.shape}"
            )
        if w.size < _MIN_SAMPLES:
            raise InputError(f"band {name!r}: needs at least {_MIN_SAMPLES} samples; got {w.size}")
        if not np.all(np.isfinite(w)):
            raise InputError(f"band {name!r}: wavelength {w[~np.isfinite(w)][0]} is not finite")
        lo, hi = WAVE_LIMITS_UM
        outside = (w < lo) | (w > hi)
        if np.any(outside):
            raise InputError(
                f"band {name!r}: wavelength {w[outside][0]:g} µm is outside [{lo:g}, {hi:g}] µm, "
                "the span a filter curve may cover here"
            )
        if not np.all(np.isfinite(t)):
            i = int(np.flatnonzero(~np.isfinite(t))[0])
            raise InputError(f"band {name!r}: response {t[i]} at {w[i]:.6g} µm is not finite")
        if np.any(t < 0):
            i = int(np.flatnonzero(t < 0)[0])
            raise InputError(
                f"band {name!r}: response={t[i]:g} at {w[i]:.6g} µm is negative; "
                "a response must be >= 0 everywhere"
            )
        if np.any(np.diff(w) <= 0):
            i = int(np.flatnonzero(np.diff(w) <= 0)[0])
            raise InputError(
                f"band {name!r}: wavelengths must increase strictly; sample {i + 1} "
                f"({w[i + 1]:.6g} µm) follows {w[i]:.6g} µm"
            )
        if not np.max(t) > 0:
            raise InputError(f"band {name!r}: the response is zero everywhere")
        if convention not in CONVENTIONS:
            raise InputError(f"convention={convention!r} is not allowed; choose 'photon' or 'energy'")
        self.wave_um = w
        self.response = t
        self.name = str(name)
        self.convention = convention
        self.provenance = str(provenance)
        self.wave_um.setflags(write=False)
        self.response.setflags(write=False)

    # --- the one place the detector convention enters --------------------------------
    def weight(self, wave_um):
        """Detector weight w(λ): λ (µm) for photon counting, 1 for energy counting."""
        wave_um = np.asarray(wave_um, dtype=float)
        return wave_um if self.convention == "photon" else np.ones_like(wave_um)

    def __call__(self, wave_um):
        """Response at ``wave_um`` (µm), linear between samples, 0 outside."""
        return np.interp(np.asarray(wave_um, dtype=float), self.wave_um, self.response, left=0.0, right=0.0)

    # --- derived wavelengths --------------------------------------------------------
    def _moment(self, power, weighted):
        """∫ T (w) λ^power dλ, exact for the piecewise-linear response (3-point Gauss–Legendre)."""
        a, b = self.wave_um[:-1], self.wave_um[1:]
        nodes, weights = np.polynomial.legendre.leggauss(3)
        lam = 0.5 * (a + b)[:, None] + 0.5 * (b - a)[:, None] * nodes
        f = self(lam) * lam**power
        if weighted:
            f = f * self.weight(lam)
        return float(np.sum(0.5 * (b - a)[:, None] * weights * f))

    @functools.cached_property
    def pivot_um(self):
        """float: pivot wavelength λ_p in µm (depends on the convention; see Notes)."""
        return float(np.sqrt(self._moment(0, True) / self._moment(-2, True)))

    @functools.cached_property
    def mean_um(self):
        """float: mean wavelength ∫λT dλ / ∫T dλ in µm."""
        return self._moment(1, False) / self._moment(0, False)

    @functools.cached_property
    def width_um(self):
        """float: width ∫T dλ / max T in µm."""
        return self._moment(0, False) / float(np.max(self.response))

    @property
    def wave_range_um(self):
        """tuple of float: shortest and longest wavelength where the response is positive (µm).

        Zero-response samples at the ends are left out, except the last zero
        next to the positive part (the response ramps to zero there).
        """
        pos = np.flatnonzero(self.response > 0)
        lo = max(pos[0] - 1, 0)
        hi = min(pos[-1] + 1, self.wave_um.size - 1)
        return float(self.wave_um[lo]), float(self.wave_um[hi])

    @property
    def edge_fraction(self):
        """tuple of float: response at the blue and red ends as a fraction of the peak.

        A value above 0.01 means the curve is probably cut off: redcorr takes
        the response to be zero beyond the last sample.
        """
        peak = float(np.max(self.response))
        return float(self.response[0]) / peak, float(self.response[-1]) / peak

    @property
    def truncated(self):
        """bool: whether the response is above 1 % of its peak at either end."""
        return max(self.edge_fraction) > _EDGE_FRACTION

    def warn_if_truncated(self):
        """Issue a `TruncatedBandWarning` if the response is cut off at an end (see `truncated`)."""
        if self.truncated:
            blue, red = self.edge_fraction
            warnings.warn(
                f"band {self.name!r} is cut off: its response is {100 * blue:.3g}% (blue end) and "
                f"{100 * red:.3g}% (red end) of its peak; redcorr takes it as zero beyond the last samples",
                TruncatedBandWarning,
                stacklevel=3,
            )

    def describe(self):
        """dict with name, convention, range, pivot, mean and width (µm), and provenance."""
        lo, hi = self.wave_range_um
        return {
            "band": self.name,
            "convention": self.convention,
            "wave_min_um": lo,
            "wave_max_um": hi,
            "pivot_um": self.pivot_um,
            "mean_um": self.mean_um,
            "width_um": self.width_um,
            "provenance": self.provenance,
        }

    def __repr__(self):
        lo, hi = self.wave_range_um
        return f"<Band {self.name!r} {lo:.4g}-{hi:.4g} µm, {self.convention}>"


def tophat(centre_um, width_um, name=None):
    """A rectangular band: response 1 inside [centre − width/2, centre + width/2], 0 outside.

    Parameters
    ----------
    centre_um, width_um : float or `~astropy.units.Quantity` ['length']
        Centre and full width (plain numbers in µm); width < 2 × centre.
    name : str, optional
        Defaults to ``"tophat:CENTRE:WIDTH"``.

    Notes
    -----
    The edges are sharp up to one part in 10⁹ of the width: the response
    ramps from 0 to 1 over 10⁻⁹ width outside each edge, which changes band
    integrals by less than 10⁻⁹ in relative terms.

    Its pivot wavelength (photon counting) is
    λ_p² = (λ₂² − λ₁²) / (2 ln(λ₂/λ₁)).
    """
    c = check_positive("centre_um", _to_um(centre_um, "centre_um"))
    w = check_positive("width_um", _to_um(width_um, "width_um"))
    if w >= 2 * c:
        raise InputError(f"width_um={w:g} must be smaller than twice centre_um={c:g}")
    lo, hi = c - w / 2, c + w / 2
    eps = 1e-9 * w
    wave = [lo - eps, lo, hi, hi + eps]
    name = name or f"tophat:{c:g}:{w:g}"
    return Band(wave, [0.0, 1.0, 1.0, 0.0], name=name, provenance=f"synthetic top-hat, centre {c:g} µm, width {w:g} µm")


def gaussian(centre_um, fwhm_um, name=None, *, samples=401, extent=4.0):
    """A Gaussian band of peak 1, sampled to ± ``extent`` FWHM around the centre.

    Parameters
    ----------
    centre_um, fwhm_um : float or `~astropy.units.Quantity` ['length']
        Centre and full width at half maximum (plain numbers in µm).
    name : str, optional
        Defaults to ``"gauss:CENTRE:FWHM"``.
    samples : int
        Number of samples (odd, so the peak is sampled).
    extent : float
        Half-span in units of the FWHM; at 4 FWHM the response is
        2⁻⁶⁴ ≈ 5e-20 of the peak, so the cut-off is immaterial.

    Notes
    -----
    T(λ) = exp(−4 ln 2 (λ − λ_c)² / FWHM²). Its width ∫T dλ (peak 1) is
    FWHM · √(π / (4 ln 2)) ≈ 1.0645 FWHM.
    """
    c = check_positive("centre_um", _to_um(centre_um, "centre_um"))
    f = check_positive("fwhm_um", _to_um(fwhm_um, "fwhm_um"))
    if extent * f >= c:
        raise InputError(
            f"fwhm_um={f:g} is too wide for centre_um={c:g}: "
            f"it must be < {c / extent:g} so that the band stays at λ > 0"
        )
    wave = np.linspace(c - extent * f, c + extent * f, samples)
    resp = np.exp(-4 * np.log(2) * ((wave - c) / f) ** 2)
    resp[[0, -1]] = 0.0
    name = name or f"gauss:{c:g}:{f:g}"
    return Band(wave, resp, name=name, provenance=f"synthetic Gaussian, centre {c:g} µm, FWHM {f:g} µm")


def product(*bands, name=None, convention=None):
    """The product of component curves on a common grid (filter × QE × optics × atmosphere).

    Parameters
    ----------
    *bands : Band
        Two or more components. Each is linear between its samples and zero
        outside them; the product lives where all components overlap.
    name : str, optional
        Defaults to the component names joined by ``*``.
    convention : {"photon", "energy"}, optional
        Convention of the result; by default the components' common one
        (an error if they differ).

    Notes
    -----
    The common grid is the union of every component's samples inside the
    overlap; the product is evaluated there and is linear in between.
    """
    if len(bands) < 2:
        raise InputError(f"product needs at least two bands; got {len(bands)}")
    for b in bands:
        if not isinstance(b, Band):
            raise InputError(f"product takes Band objects; got {type(b).__name__}")
    if convention is None:
        conventions = {b.convention for b in bands}
        if len(conventions) > 1:
            raise InputError(
                "the components have different conventions "
                + ", ".join(f"{b.name}={b.convention}" for b in bands)
                + "; give convention='photon' or 'energy' for the product"
            )
        convention = conventions.pop()
    lo = max(b.wave_um[0] for b in bands)
    hi = min(b.wave_um[-1] for b in bands)
    if not lo < hi:
        raise InputError(
            "the components do not overlap in wavelength: "
            + ", ".join(f"{b.name} {b.wave_um[0]:.4g}-{b.wave_um[-1]:.4g} µm" for b in bands)
        )
    grid = np.unique(np.concatenate([b.wave_um[(b.wave_um >= lo) & (b.wave_um <= hi)] for b in bands] + [[lo, hi]]))
    resp = np.ones_like(grid)
    for b in bands:
        resp *= b(grid)
    name = name or "*".join(b.name for b in bands)
    prov = " × ".join(f"[{b.name}: {b.provenance}]" for b in bands)
    if not np.max(resp) > 0:
        raise InputError(f"the product {name!r} is zero everywhere: the components' responses do not overlap")
    return Band(grid, resp, name=name, convention=convention, provenance=f"product of {prov}")

"""Source spectra F_λ for band integration: blackbody, power law, flat F_ν, tabulated.

Every source is an :class:`SED` with a ``name`` and ``flam(wave)``, the flux
density per unit wavelength F_λ at ``wave`` (plain numbers in µm, or a
Quantity in any spectral unit). Band extinction only uses the shape of F_λ,
so the normalisation is arbitrary unless a class says otherwise.
"""

import abc

import numpy as np
from astropy import constants as const
from astropy import units as u

from redcorr._validate import check_positive, check_range, inverse_micron
from redcorr.exceptions import InputError

__all__ = [
    "SED",
    "BlackBody",
    "PowerLaw",
    "TabulatedSED",
    "blackbody",
    "power_law",
    "flat_fnu",
    "planck_log_flam",
]

# hc/k in µm K, from astropy's CODATA constants.
_HC_OVER_K_UM_K = float((const.h * const.c / const.k_B).to_value(u.um * u.K))
# 2hc² expressed so that B_λ comes out in erg s⁻¹ cm⁻² Å⁻¹ sr⁻¹ with λ in µm.
_LOG_2HC2 = float(np.log((2 * const.h * const.c**2 / u.um**5).to_value(u.erg / u.s / u.cm**2 / u.AA)))


def _wave_um(wave):
    """Wavelength in µm as float64 (plain numbers are µm)."""
    return 1.0 / inverse_micron(wave, name="wave")


def planck_log_flam(wave_um, temperature_k):
    """ln B_λ(T) in erg s⁻¹ cm⁻² Å⁻¹ sr⁻¹, broadcasting ``wave_um`` against ``temperature_k``.

    Computed in logarithms so that no value overflows or underflows:
    ln B_λ = ln(2hc²) − 5 ln λ − [y + ln(1 − e⁻ʸ)], y = hc/(λkT).

    Parameters
    ----------
    wave_um : array_like
        Wavelength in µm, > 0.
    temperature_k : array_like
        Temperature in K, > 0.
    """
    lam = np.asarray(wave_um, dtype=float)
    t = np.asarray(temperature_k, dtype=float)
    y = _HC_OVER_K_UM_K / (lam * t)
    return _LOG_2HC2 - 5.0 * np.log(lam) - (y + np.log(-np.expm1(-y)))


class SED(abc.ABC):
    """A source spectrum: ``flam(wave)`` gives F_λ; ``name`` describes it.

    Subclasses implement ``_flam(wave_um)`` on a float64 array of
    wavelengths in µm and may set ``wave_range_um`` (default: all λ > 0).
    """

    name = ""
    wave_range_um = (0.0, np.inf)

    def flam(self, wave):
        """F_λ at ``wave`` (plain numbers in µm, or a Quantity in any spectral unit).

        Returns
        -------
        ndarray
            Same shape as ``wave``; units as stated by the class.
        """
        lam = _wave_um(wave)
        lo, hi = self.wave_range_um
        bad = np.isfinite(lam) & ((lam < lo) | (lam > hi))
        if np.any(bad):
            raise InputError(
                f"wave={lam[bad].flat[0]:.6g} µm is outside the source {self.name!r}, which covers "
                f"{lo:.6g}-{hi:.6g} µm"
            )
        return self._flam(lam)

    @abc.abstractmethod
    def _flam(self, wave_um):
        """F_λ at a float64 array of wavelengths in µm."""

    def __repr__(self):
        return f"<{type(self).__name__} {self.name!r}>"


class BlackBody(SED):
    """A blackbody of temperature T.

    ``flam`` returns the Planck function B_λ(T) in erg s⁻¹ cm⁻² Å⁻¹ sr⁻¹.

    Notes
    -----
    B_λ(T) = 2hc² λ⁻⁵ / (exp(hc/λkT) − 1), with CODATA constants from
    :mod:`astropy.constants`.

    References
    ----------
    .. [1] Planck, M. 1901, Annalen der Physik, 309, 553.
    .. [2] Rybicki, G. B., & Lightman, A. P. 1979, Radiative Processes in
       Astrophysics (Wiley), eq. 1.53.
    """

    def __init__(self, temperature_k):
        if isinstance(temperature_k, u.Quantity):
            temperature_k = temperature_k.to_value(u.K, equivalencies=u.temperature())
        self.temperature_k = check_positive("temperature", temperature_k)
        self.name = f"blackbody:{self.temperature_k:g}"

    def log_flam(self, wave_um):
        """ln B_λ at ``wave_um`` (µm): see :func:`planck_log_flam`."""
        return planck_log_flam(wave_um, self.temperature_k)

    def _flam(self, wave_um):
        return np.exp(self.log_flam(wave_um))


class PowerLaw(SED):
    """A power law in frequency, F_ν ∝ ν^α, i.e. F_λ ∝ λ^(−2−α).

    ``flam`` is normalised to 1 at λ = 1 µm. ``alpha`` is limited to
    [−50, 50], where λ^(−2−α) stays within float64 from 0.001 to 1000 µm.
    """

    def __init__(self, alpha):
        self.alpha = check_range("alpha", alpha, -50.0, 50.0)
        self.name = "flat" if self.alpha == 0 else f"powerlaw:{self.alpha:g}"

    def _flam(self, wave_um):
        return wave_um ** (-2.0 - self.alpha)


class TabulatedSED(SED):
    """A spectrum given as a table of F_λ, linear between samples; never extrapolated.

    Parameters
    ----------
    wave : array_like or `~astropy.units.Quantity`
        Strictly increasing wavelengths (plain numbers in µm); at least 2.
    flam : array_like
        F_λ at ``wave``, finite and >= 0 (any normalisation, or absolute in
        erg s⁻¹ cm⁻² Å⁻¹ where the source says so).
    name : str
    citation : str, optional
        Where the table comes from.

    Attributes
    ----------
    wave_um : ndarray
        The sample wavelengths, µm: band integrals include them
        (:func:`redcorr.photometry.trapezoid_weights`) so that lines between
        a band's own samples are not missed.
    """

    def __init__(self, wave, flam, *, name="table", citation=""):
        lam = _wave_um(wave)
        f = np.asarray(flam, dtype=float)
        if lam.ndim != 1 or f.shape != lam.shape or lam.size < 2:
            raise InputError(
                f"spectrum {name!r}: wave and flux must be 1-d of equal length >= 2; "
                f"got shapes {lam.shape} and {f.shape}"
            )
        if not (np.all(np.isfinite(lam)) and np.all(np.isfinite(f))):
            raise InputError(f"spectrum {name!r}: wavelengths and fluxes must be finite")
        if np.any(np.diff(lam) <= 0):
            raise InputError(f"spectrum {name!r}: wavelengths must increase strictly")
        if np.any(f < 0):
            raise InputError(f"spectrum {name!r}: flux={f[f < 0][0]:g} is negative; fluxes must be >= 0")
        self.name = name
        self.citation = str(citation)
        self.wave_um = lam
        self._f = f
        self.wave_range_um = (float(lam[0]), float(lam[-1]))

    def _flam(self, wave_um):
        return np.interp(wave_um, self.wave_um, self._f)


def blackbody(temperature_k):
    """A :class:`BlackBody` of ``temperature_k`` kelvin (float or Quantity)."""
    return BlackBody(temperature_k)


def power_law(alpha):
    """A :class:`PowerLaw` F_ν ∝ ν^alpha."""
    return PowerLaw(alpha)


def flat_fnu():
    """A source with flat F_ν (F_λ ∝ λ⁻²): the AB reference spectrum's shape."""
    return PowerLaw(0.0)

"""Radiation fields that heat interstellar grains.

A field is an object with ``four_pi_j(wave_um)``: 4π times the mean intensity,
4πJ_λ, in erg s⁻¹ cm⁻² µm⁻¹, at wavelengths in µm (any shape, vectorised), and
``wave_range_um``, the wavelengths outside which it is zero. A grain of
absorption cross section C_abs(λ) absorbs ∫ C_abs 4πJ_λ dλ (erg s⁻¹).

Two fields are provided:

* :class:`MMP83Field`: the solar-neighbourhood starlight of Mathis, Mezger &
  Panagia (1983), scaled by U (U = 1 is their field at a galactocentric
  distance of 10 kpc);
* :class:`DilutedBlackbody`: a star's blackbody diluted by a factor W,
  4πJ_λ = 4π W B_λ(T_star).

Conventions
-----------
* Wavelengths in µm; 4πJ_λ in erg s⁻¹ cm⁻² µm⁻¹ (so ∫ C_abs 4πJ_λ dλ with C in
  cm² and λ in µm is in erg s⁻¹).
* Photons shortward of the Lyman limit (0.0912 µm) are left out of the
  interstellar field: neutral hydrogen absorbs them (MMP83, §2).
"""

import abc
import math

import numpy as np
from astropy import constants as const
from astropy import units as u

from redcorr._validate import check_finite, check_positive, shown
from redcorr.exceptions import InputError
from redcorr.sed import planck_log_flam

__all__ = ["RadiationField", "MMP83Field", "DilutedBlackbody", "four_pi_planck", "LYMAN_LIMIT_UM"]

LYMAN_LIMIT_UM = 0.0912
"""µm: the Lyman limit, 13.6 eV; neutral gas absorbs the starlight shortward of it (common practice, no source)."""

_LN_PER_UM = math.log(1e4)  # planck_log_flam is per Å; ×1e4 gives per µm
_C_CM_S = float(const.c.to_value(u.cm / u.s))

# Mathis, Mezger & Panagia (1983), A&A 128, 212, the field at R_G = 10 kpc (their eqs. and Table for the
# solar neighbourhood), FROM MEMORY. The ultraviolet, as 4πJ_λ in erg s⁻¹ cm⁻² µm⁻¹ with λ in µm:
#   0.0912 ≤ λ < 0.110:  38.57 λ^3.4172
#   0.110  ≤ λ < 0.134:  2.045e-2
#   0.134  ≤ λ < 0.246:  7.115e-4 λ^-1.6678
# and, longward of 0.246 µm, three diluted blackbodies 4π Σ W_i B_λ(T_i) (the stars of the disk):
# (T_i, W_i) = (7500 K, 1e-14), (4000 K, 1e-13), (3000 K, 4e-13). The pieces join to 0.5 % at 0.110
# and 0.134 µm and to 7 % at 0.246 µm, as in the paper's fit.
MMP83_UV = ((0.0912, 0.110, 38.57, 3.4172), (0.110, 0.134, 2.045e-2, 0.0), (0.134, 0.246, 7.115e-4, -1.6678))
"""(λ_lo, λ_hi µm, coefficient, power) of the MMP83 ultraviolet: 4πJ_λ = c λ^p (from memory)."""
MMP83_STARS = ((7500.0, 1e-14), (4000.0, 1e-13), (3000.0, 4e-13))
"""(T K, dilution W) of the three MMP83 blackbodies longward of 0.246 µm (from memory)."""
MMP83_UV_END_UM = 0.246
"""µm: where the MMP83 ultraviolet power laws give way to the diluted blackbodies."""


def four_pi_planck(wave_um, temperature_k):
    """4πB_λ(T) in erg s⁻¹ cm⁻² µm⁻¹ sr⁰ (per µm), broadcasting ``wave_um`` against ``temperature_k``.

    From :func:`redcorr.sed.planck_log_flam` (per Å) times 10⁴ and 4π;
    values too small for a float are 0.
    """
    return 4 * math.pi * np.exp(planck_log_flam(wave_um, temperature_k) + _LN_PER_UM)


class RadiationField(abc.ABC):
    """A radiation field: ``four_pi_j(wave_um)`` and the ``wave_range_um`` where it is not zero."""

    name = ""
    wave_range_um = (0.0, math.inf)

    def four_pi_j(self, wave_um):
        """4πJ_λ in erg s⁻¹ cm⁻² µm⁻¹ at ``wave_um`` (µm, any shape); 0 outside ``wave_range_um``."""
        lam = np.asarray(wave_um, dtype=float)
        lo, hi = self.wave_range_um
        inside = (lam >= lo) & (lam <= hi)
        out = np.zeros(lam.shape)
        out[inside] = self._four_pi_j(lam[inside])
        return out[()]

    @abc.abstractmethod
    def _four_pi_j(self, lam):
        """4πJ_λ at a 1-d float array of wavelengths inside the range."""

    def energy_density(self, wave_um):
        """Energy density u = (1/c) ∫ 4πJ_λ dλ, erg cm⁻³: the trapezoid in ln λ over ``wave_um`` (sorted, µm)."""
        lam = np.asarray(wave_um, dtype=float)
        return float(np.trapezoid(self.four_pi_j(lam) * lam, np.log(lam)) / _C_CM_S)

    def __repr__(self):
        return f"<{type(self).__name__} {self.name}>"


class MMP83Field(RadiationField):
    """The solar-neighbourhood interstellar starlight of Mathis, Mezger & Panagia (1983), times U.

    Parameters
    ----------
    scale : float, optional
        U, the factor multiplying the whole field (default 1).

    Notes
    -----
    4πJ_λ = U × (three power laws from 0.0912 to 0.246 µm, then
    4π Σ_i W_i B_λ(T_i) for the three diluted blackbodies of
    :data:`MMP83_STARS`); zero shortward of the Lyman limit. The paper's
    dust emission and the cosmic background are not included (the latter
    heats grains negligibly at U ≳ 0.01). The numbers are quoted from
    memory (see the module source); the tests check them against the
    field's published energy density, also from memory.

    References
    ----------
    .. [1] Mathis, J. S., Mezger, P. G., & Panagia, N. 1983, A&A, 128, 212.

    Examples
    --------
    >>> field = MMP83Field()
    >>> float(field.four_pi_j(0.12))  # erg s⁻¹ cm⁻² µm⁻¹
    0.02045
    """

    wave_range_um = (LYMAN_LIMIT_UM, math.inf)

    def __init__(self, scale=1.0):
        self.scale = check_positive("scale", scale)
        self.name = f"MMP83 x {self.scale:g}"

    def _four_pi_j(self, lam):
        out = np.zeros(lam.shape)
        for lo, hi, coeff, power in MMP83_UV:
            piece = (lam >= lo) & (lam < hi)
            out[piece] = coeff * lam[piece] ** power
        stars = lam >= MMP83_UV_END_UM
        for t_star, dilution in MMP83_STARS:
            out[stars] += dilution * four_pi_planck(lam[stars], t_star)
        return self.scale * out


class DilutedBlackbody(RadiationField):
    """A star's light far from it: 4πJ_λ = 4π W B_λ(T_star).

    Parameters
    ----------
    temperature : float
        T_star, K (> 0).
    dilution : float
        W in (0, 1]: the solid angle of the star over 4π; W = R²/(4d²) far
        from a star of radius R.

    Notes
    -----
    A grain that absorbs as a blackbody (Q_abs = 1 at all λ) reaches
    T = W^(1/4) T_star in this field (common practice, no source). No
    Lyman cut-off is applied.

    Examples
    --------
    >>> field = DilutedBlackbody(5000.0, 1e-8)
    >>> field.temperature * field.dilution ** 0.25
    50.0
    """

    def __init__(self, temperature, dilution):
        self.temperature = check_positive("temperature", temperature)
        self.dilution = check_finite("dilution", dilution)
        if not 0 < self.dilution <= 1:
            raise InputError(f"dilution={shown(dilution)} must be in (0, 1]")
        self.name = f"blackbody {self.temperature:g} K, W = {self.dilution:g}"

    def _four_pi_j(self, lam):
        return self.dilution * four_pi_planck(lam, self.temperature)

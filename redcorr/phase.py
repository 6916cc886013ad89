"""Scattering phase functions: Henyey–Greenstein, and the Mie phase function of a population.

Both are normalized over the sphere, ∫ p dΩ = 1 (sr⁻¹), so they can be
compared directly. Plain angles are radians; an astropy Quantity may carry
any angle unit. Equation numbers of Bohren & Huffman (1983) are cited from memory.
"""

from dataclasses import dataclass

import numpy as np
from astropy import units as u
from scipy.integrate import trapezoid

from redcorr._validate import as_float_array, shown
from redcorr.exceptions import InputError
from redcorr.mie import _angles, sphere, sphere_amplitudes

__all__ = ["henyey_greenstein", "mean_cosine", "PopulationPhase", "population_phase_function"]


def henyey_greenstein(theta, g):
    """Henyey–Greenstein phase function.

    Parameters
    ----------
    theta : float, array_like or `~astropy.units.Quantity` ['angle']
        Scattering angle in [0, π]; plain numbers are radians.
    g : float or array_like
        Asymmetry parameter ⟨cos θ⟩, in (-1, 1); broadcast against ``theta``.

    Returns
    -------
    p : ndarray
        Phase function in sr⁻¹ with ∫ p dΩ = 1 and ⟨cos θ⟩ = g.

    Notes
    -----
    .. math::

        p(\\theta) = \\frac{1}{4\\pi}\\,
        \\frac{1 - g^2}{(1 + g^2 - 2g\\cos\\theta)^{3/2}}

    References
    ----------
    .. [1] Henyey, L. G. & Greenstein, J. L. 1941, ApJ 93, 70.

    Examples
    --------
    >>> from redcorr.phase import henyey_greenstein
    >>> float(henyey_greenstein(0.0, 0.0) * 4 * 3.141592653589793)
    1.0
    """
    mu = np.cos(_angles(theta))
    try:
        g = np.asarray(g, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"g={g!r} is not a number") from None
    bad = ~np.isfinite(g) | (np.abs(g) >= 1)
    if np.any(bad):
        raise InputError(f"g={float(g[bad].flat[0])!r} is outside the allowed range (-1, 1)")
    return (1 - g**2) / (4 * np.pi * (1 + g**2 - 2 * g * mu) ** 1.5)


def mean_cosine(theta, p):
    """⟨cos θ⟩ of a tabulated phase function, 2π ∫ p cos θ sin θ dθ.

    Parameters
    ----------
    theta : array_like or `~astropy.units.Quantity` ['angle']
        Increasing angles covering [0, π] finely (trapezoid rule along the
        last axis).
    p : array_like
        Phase function in sr⁻¹ at ``theta`` (last axis).

    Returns
    -------
    ndarray
        The mean cosine, assuming ``p`` is normalized (∫ p dΩ = 1).

    Notes
    -----
    .. math:: \\langle\\cos\\theta\\rangle = 2\\pi\\int_0^\\pi p(\\theta)\\cos\\theta\\sin\\theta\\,d\\theta

    References
    ----------
    .. [1] Bohren, C. F. & Huffman, D. R. 1983, eq. 3.13 (definition of g).
    """
    th = _angles(theta)
    if th.ndim != 1 or th.size < 3 or np.any(np.diff(th) <= 0):
        raise InputError("theta must be a 1-d increasing array of at least 3 angles")
    p = np.asarray(p, dtype=float)
    return 2 * np.pi * trapezoid(p * np.cos(th) * np.sin(th), th, axis=-1)


@dataclass(frozen=True)
class PopulationPhase:
    """Phase function of a population of spheres at one wavelength.

    Attributes
    ----------
    theta : ndarray
        Scattering angles (radians).
    p : ndarray
        Mie phase function of the population at ``theta`` (sr⁻¹, ∫ p dΩ = 1).
    g : float
        Asymmetry parameter of the population, Σ w C_sca g / Σ w C_sca.
    c_sca : float
        Scattering cross section per unit weight, Σ w C_sca / Σ w, in µm².
    """

    theta: np.ndarray
    p: np.ndarray
    g: float
    c_sca: float

    def henyey_greenstein(self):
        """The Henyey–Greenstein phase function with the same g, at ``theta``."""
        return henyey_greenstein(self.theta, self.g)


def _lengths_um(name, value):
    return as_float_array(name, value, u.um, "a length")


def population_phase_function(m, radius, weight, wavelength, theta, *, convention="n+ik"):
    """Mie phase function of a size distribution of homogeneous spheres.

    Parameters
    ----------
    m : complex or array_like
        Refractive index ``n + ik`` at ``wavelength`` (one value, or one per
        radius).
    radius : array_like or `~astropy.units.Quantity` ['length']
        Grain radii, 1-d; plain numbers are µm.
    weight : array_like
        Number of grains per radius (for example dn/da · Δa), >= 0, same
        length as ``radius``.
    wavelength : float or `~astropy.units.Quantity` ['length']
        Wavelength in the medium; plain numbers are µm.
    theta : array_like or `~astropy.units.Quantity` ['angle']
        Scattering angles in [0, π]; plain numbers are radians.
    convention : {"n+ik", "n-ik"}
        Sign convention of ``m`` (see :func:`redcorr.mie.sphere`).

    Returns
    -------
    PopulationPhase

    Notes
    -----
    Each size contributes in proportion to its scattering cross section:

    .. math::

        p(\\theta) = \\frac{\\sum_i w_i\\,(|S_{1,i}|^2 + |S_{2,i}|^2)/(2k^2)}
                          {\\sum_i w_i\\,C_{sca,i}}, \\qquad k = 2\\pi/\\lambda,

    which is normalized because ∫ (|S_1|^2 + |S_2|^2)/2 dΩ = k² C_sca
    (Bohren & Huffman 1983, eq. 3.14 with 4.61).

    References
    ----------
    .. [1] Bohren, C. F. & Huffman, D. R. 1983, Absorption and Scattering of
       Light by Small Particles (Wiley), §3.4, §4.4.
    """
    a = _lengths_um("radius", radius)
    try:
        w = np.asarray(weight, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"weight={weight!r} is not numeric") from None
    lam = _lengths_um("wavelength", wavelength)
    if a.ndim != 1 or a.size == 0:
        raise InputError(f"radius must be a non-empty 1-d array, not shape {a.shape}")
    if w.shape != a.shape:
        raise InputError(f"weight of shape {w.shape} must match radius of shape {a.shape}")
    bad = ~np.isfinite(a) | (a <= 0)
    if np.any(bad):
        raise InputError(f"radius={float(a[bad][0])!r} must be a finite length > 0")
    bad = ~np.isfinite(w) | (w < 0)
    if np.any(bad):
        raise InputError(f"weight={float(w[bad][0])!r} must be finite and >= 0")
    if not np.sum(w) > 0:
        raise InputError("weight must have at least one value > 0")
    if lam.ndim or not np.isfinite(lam) or lam <= 0:
        raise InputError(f"wavelength={shown(wavelength)} must be a single length > 0")
    if np.ndim(m) and np.shape(m) != a.shape:
        raise InputError(f"m of shape {np.shape(m)} must be one value or one per radius, shape {a.shape}")
    th = _angles(theta)
    k = 2 * np.pi / float(lam)
    x = k * a
    res = sphere(m, x, convention=convention)
    s1, s2 = sphere_amplitudes(m, x, th.ravel(), convention=convention)
    c_sca = np.pi * a**2 * res.q_sca
    total = np.sum(w * c_sca)
    p = np.tensordot(w, np.abs(s1) ** 2 + np.abs(s2) ** 2, axes=1) / (2 * k**2 * total)
    g = float(np.sum(w * c_sca * res.g) / total)
    return PopulationPhase(theta=th, p=p.reshape(th.shape), g=g, c_sca=float(total / np.sum(w)))

"""Grain size distributions: (1/n_H) dn/da per H nucleon.

Every distribution is a callable object returning (1/n_H) dn/da in µm⁻¹ (grains
per H nucleon per µm of radius) at radii ``a`` in µm, zero outside its range
``[a_min, a_max]``. ``grid(n)`` gives the log-spaced radii a grain model
integrates over; ``key()`` describes the distribution for the cross-section
cache.

Conventions
-----------
* Radii are in µm (plain numbers) or any length Quantity.
* Amplitudes are per H nucleon, so cross sections integrate to cm² per H.
"""

import abc
import math

import numpy as np
from astropy import units as u
from scipy.special import erf

from redcorr._validate import as_float_array, check_finite, check_positive, shown
from redcorr.exceptions import InputError

__all__ = [
    "SizeDistribution",
    "PowerLaw",
    "mrn77",
    "PowerLawCutoff",
    "LogNormal",
    "WD01Carbonaceous",
    "WD01Silicate",
    "TabulatedSizes",
    "as_radius",
]

M_C_G = 12.011 * 1.66053907e-24
"""Mass of a carbon atom, g (IUPAC atomic weight 12.011 times the atomic mass unit)."""

RHO_GRAPHITE = 2.24
"""Density of graphite in g cm⁻³ used by Weingartner & Draine (2001, §2)."""

A_MIN_WD01_UM = 3.5e-4
"""Smallest radius of the WD01 distributions, 3.5 Å (Weingartner & Draine 2001, §2)."""


def as_radius(a, name="a"):
    """Radii in µm as a float64 array; Quantity of length accepted."""
    return as_float_array(name, a, u.um, "a length unit")


class SizeDistribution(abc.ABC):
    """Base class: (1/n_H) dn/da in µm⁻¹ on ``[a_min, a_max]`` (µm).

    Subclasses implement ``_dnda(a)`` for a 1-d array of radii inside the
    range and ``key()``; ``a_min`` and ``a_max`` are set by the constructor.
    """

    a_min = 0.0
    a_max = np.inf
    label = ""

    def _set_range(self, a_min, a_max):
        lo = check_positive("a_min", a_min)
        hi = check_positive("a_max", a_max)
        if hi <= lo:
            raise InputError(f"a_max={shown(a_max)} µm must exceed a_min={shown(a_min)} µm")
        self.a_min, self.a_max = lo, hi

    def __call__(self, a):
        """(1/n_H) dn/da in µm⁻¹ at radii ``a`` (µm or length Quantity); 0 outside the range."""
        a = as_radius(a)
        out = np.zeros(a.shape)
        inside = (a >= self.a_min) & (a <= self.a_max)
        out[inside] = self._dnda(a[inside])
        out[np.isnan(a)] = np.nan
        return out[()]

    def grid(self, n=150):
        """``n`` log-spaced radii (µm) from ``a_min`` to ``a_max``."""
        if int(n) < 8:
            raise InputError(f"n={n!r} sizes are too few; at least 8 are needed")
        return np.geomspace(self.a_min, self.a_max, int(n))

    def moment(self, p, n=400):
        """∫ a^p (1/n_H) dn/da da over the range (µm^p per H), by trapezoid in ln a."""
        a = self.grid(n)
        return float(np.trapezoid(a ** (p + 1) * self(a), np.log(a)))

    def key(self):
        """A JSON-able description used to key the cross-section cache."""
        return {"type": type(self).__name__, **{k: v for k, v in vars(self).items() if not k.startswith("_")}}

    @abc.abstractmethod
    def _dnda(self, a):
        """(1/n_H) dn/da in µm⁻¹ at radii ``a`` (1-d, µm) inside the range."""


class PowerLaw(SizeDistribution):
    """dn/da = A a^(-q) between ``a_min`` and ``a_max``.

    Parameters
    ----------
    amplitude : float
        A in µm^(q-1) per H nucleon.
    q : float
        Power-law index (3.5 for MRN).
    a_min, a_max : float
        Range in µm.
    """

    def __init__(self, amplitude, q, a_min, a_max):
        self.amplitude = check_positive("amplitude", amplitude)
        self.q = check_finite("q", q)
        self._set_range(a_min, a_max)
        self.label = f"power law a^-{self.q:g}, {self.a_min:g}-{self.a_max:g} µm"

    def _dnda(self, a):
        return self.amplitude * a ** (-self.q)


def mrn77(component):
    """The Mathis, Rumpl & Nordsieck (1977) power law, normalized per H.

    Parameters
    ----------
    component : {"silicate", "graphite"}

    Notes
    -----
    (1/n_H) dn/da = A a^-3.5 on 0.005–0.25 µm, with A = 10^-25.11 cm^2.5 for
    silicate and 10^-25.13 cm^2.5 for graphite per H nucleon (the
    normalization of Draine & Lee 1984, §6, from memory), converted here to
    µm^2.5.

    References
    ----------
    .. [1] Mathis, J. S., Rumpl, W., & Nordsieck, K. H. 1977, ApJ, 217, 425.
       doi:10.1086/155591
    .. [2] Draine, B. T., & Lee, H. M. 1984, ApJ, 285, 89. doi:10.1086/162480
    """
    log_a = {"silicate": -25.11, "graphite": -25.13}
    if component not in log_a:
        raise InputError(f"component={component!r} is not known; choose 'silicate' or 'graphite'")
    amp_um = 10 ** log_a[component] * 1e4**2.5  # cm^2.5 -> µm^2.5
    dist = PowerLaw(amp_um, 3.5, 0.005, 0.25)
    dist.label = f"MRN77 {component}, a^-3.5, 0.005-0.25 µm"
    return dist


class PowerLawCutoff(SizeDistribution):
    """dn/da = A a^(-q) exp(-a/a_c) between ``a_min`` and ``a_max``.

    Parameters
    ----------
    amplitude : float
        A in µm^(q-1) per H nucleon.
    q : float
        Power-law index.
    a_c : float
        e-folding radius of the exponential cut-off, µm.
    a_min, a_max : float
        Range in µm (``a_max`` defaults to 10 a_c, where the cut-off is e^-10).
    """

    def __init__(self, amplitude, q, a_c, a_min, a_max=None):
        self.amplitude = check_positive("amplitude", amplitude)
        self.q = check_finite("q", q)
        self.a_c = check_positive("a_c", a_c)
        self._set_range(a_min, 10.0 * self.a_c if a_max is None else a_max)
        self.label = f"power law a^-{self.q:g} exp(-a/{self.a_c:g} µm)"

    def _dnda(self, a):
        return self.amplitude * a ** (-self.q) * np.exp(-a / self.a_c)


class LogNormal(SizeDistribution):
    """A log-normal in radius: dn/da = B/a · exp{−½ [ln(a/a_0)/σ]²}.

    Parameters
    ----------
    a0 : float
        Centre radius a_0, µm.
    sigma : float
        Width σ in ln a.
    amplitude : float, optional
        B, grains per H nucleon (per unit ln a at the centre). Give either
        this or ``volume``.
    volume : float, optional
        Total grain volume per H nucleon, µm³; fixes B.
    a_min, a_max : float, optional
        Range in µm; by default a_0·e^(±5σ).

    Notes
    -----
    With no range cut, the volume per H is
    V = (4π/3) B √(2π) σ a_0³ e^(9σ²/2) (a property of the log-normal; common
    practice, no source). With a cut the integral is done numerically.
    """

    def __init__(self, a0, sigma, *, amplitude=None, volume=None, a_min=None, a_max=None):
        self.a0 = check_positive("a0", a0)
        self.sigma = check_positive("sigma", sigma)
        lo = self.a0 * math.exp(-5 * self.sigma) if a_min is None else a_min
        hi = self.a0 * math.exp(5 * self.sigma) if a_max is None else a_max
        self._set_range(lo, hi)
        if (amplitude is None) == (volume is None):
            raise InputError("log-normal: give exactly one of amplitude= or volume=")
        self.amplitude = 1.0
        if amplitude is None:
            vol = check_positive("volume", volume)
            self.amplitude = vol / (4 * math.pi / 3 * self.moment(3, n=600))
        else:
            self.amplitude = check_positive("amplitude", amplitude)
        self.label = f"log-normal a0={self.a0:g} µm, sigma={self.sigma:g}"

    def _dnda(self, a):
        return self.amplitude / a * np.exp(-0.5 * (np.log(a / self.a0) / self.sigma) ** 2)


def _wd01_f(a, beta, a_t):
    """WD01 eq. (6): curvature term F(a; β, a_t)."""
    if beta >= 0:
        return 1.0 + beta * a / a_t
    return 1.0 / (1.0 - beta * a / a_t)


def _wd01_g(a, a_t, a_c):
    """WD01 eqs. (4)-(5): exponential cut-off above a_t."""
    return np.where(a <= a_t, 1.0, np.exp(-(np.clip(a - a_t, 0, None) / a_c) ** 3))


class WD01Silicate(SizeDistribution):
    """Weingartner & Draine (2001) silicate size distribution.

    Parameters
    ----------
    alpha, beta : float
        α_s and β_s (WD01 Table 1).
    a_t, a_c : float
        Transition and cut-off radii, µm (a_c,s = 0.1 µm in WD01).
    c : float
        C_s, dimensionless (per H nucleon).
    scale : float, optional
        Multiplies the whole distribution (e.g. the Draine 2003
        renormalization 0.93, 1.18, 1.42).

    Notes
    -----
    (1/n_H) dn/da = (C_s/a) (a/a_t)^α F(a; β, a_t) G(a; a_t, a_c), with
    F = 1 + βa/a_t (β ≥ 0) or 1/(1 − βa/a_t) (β < 0), G = 1 for a < a_t and
    exp{−[(a − a_t)/a_c]³} above; a ≥ 3.5 Å. The range ends at
    a_t + 3.5 a_c, where G < 10⁻¹⁸.

    References
    ----------
    .. [1] Weingartner, J. C., & Draine, B. T. 2001, ApJ, 548, 296, eqs. (4)-(6).
       doi:10.1086/318651
    """

    def __init__(self, alpha, beta, a_t, a_c, c, *, scale=1.0):
        self.alpha = check_finite("alpha", alpha)
        self.beta = check_finite("beta", beta)
        self.a_t = check_positive("a_t", a_t)
        self.a_c = check_positive("a_c", a_c)
        self.c = check_positive("c", c)
        self.scale = check_positive("scale", scale)
        self._set_range(A_MIN_WD01_UM, self.a_t + 3.5 * self.a_c)
        self.label = "WD01 silicate"

    def _dnda(self, a):
        return (
            self.scale * self.c / a * (a / self.a_t) ** self.alpha
            * _wd01_f(a, self.beta, self.a_t) * _wd01_g(a, self.a_t, self.a_c)
        )


class WD01Carbonaceous(WD01Silicate):
    """Weingartner & Draine (2001) carbonaceous size distribution.

    Parameters
    ----------
    alpha, beta, a_t, a_c, c : float
        α_g, β_g, a_t,g (µm), a_c,g (µm), C_g from WD01 Table 1.
    b_c : float
        b_C, carbon atoms per H nucleon in the two log-normal very small grain
        populations (e.g. 6.0e-5).
    scale : float, optional
        Multiplies the whole distribution.

    Notes
    -----
    The WD01 silicate form (see `WD01Silicate`) plus
    D(a) = Σ_{i=1,2} (B_i/a) exp{−½[ln(a/a_0,i)/σ]²} with σ = 0.4,
    a_0,1 = 3.5 Å, a_0,2 = 30 Å, b_C,1 = 0.75 b_C, b_C,2 = 0.25 b_C and

    B_i = 3/(2π)^{3/2} · exp(−4.5σ²)/(ρ a_0,i³ σ)
          · b_C,i m_C / {1 + erf[3σ/√2 + ln(a_0,i/3.5 Å)/(σ√2)]},

    ρ = 2.24 g cm⁻³, m_C the mass of a carbon atom.

    References
    ----------
    .. [1] Weingartner, J. C., & Draine, B. T. 2001, ApJ, 548, 296, eqs. (2)-(3).
       doi:10.1086/318651
    """

    SIGMA = 0.4
    A0_UM = (3.5e-4, 3.0e-3)
    FRACTIONS = (0.75, 0.25)

    def __init__(self, alpha, beta, a_t, a_c, c, b_c, *, scale=1.0):
        super().__init__(alpha, beta, a_t, a_c, c, scale=scale)
        self.b_c = check_finite("b_c", b_c)
        if self.b_c < 0:
            raise InputError(f"b_c={shown(b_c)} must be >= 0")
        self.label = f"WD01 carbonaceous, b_C={self.b_c:g}"

    def vsg_amplitudes(self):
        """B_1, B_2 of WD01 eq. (3), dimensionless (grains per H per unit ln a)."""
        s = self.SIGMA
        out = []
        for a0_um, frac in zip(self.A0_UM, self.FRACTIONS, strict=True):
            a0_cm = a0_um * 1e-4
            norm = 1.0 + erf(3 * s / math.sqrt(2) + math.log(a0_um / A_MIN_WD01_UM) / (s * math.sqrt(2)))
            out.append(
                3.0 / (2 * math.pi) ** 1.5 * math.exp(-4.5 * s**2) / (RHO_GRAPHITE * a0_cm**3 * s)
                * frac * self.b_c * M_C_G / norm
            )
        return tuple(out)

    def _dnda(self, a):
        vsg = sum(
            b / a * np.exp(-0.5 * (np.log(a / a0) / self.SIGMA) ** 2)
            for b, a0 in zip(self.vsg_amplitudes(), self.A0_UM, strict=True)
        )
        return super()._dnda(a) + self.scale * vsg


class TabulatedSizes(SizeDistribution):
    """A user table of (a, dn/da), interpolated linearly in log–log.

    Parameters
    ----------
    a : array_like or Quantity
        Radii (µm), at least 2, positive, increasing after sorting, distinct.
    dnda : array_like
        (1/n_H) dn/da in µm⁻¹, finite and ≥ 0.
    name : str, optional
        Shown in labels.
    a_min, a_max : float, optional
        Use only this part of the table (µm); it must lie inside the
        tabulated radii. By default the whole table.

    Notes
    -----
    Zeros are interpolated as zero; the table is never extrapolated, so a
    range reaching outside the tabulated radii is an error.
    """

    def __init__(self, a, dnda, name="table", *, a_min=None, a_max=None):
        a = as_radius(a)
        y = np.asarray(dnda, dtype=float)
        if a.ndim != 1 or y.shape != a.shape or a.size < 2:
            raise InputError(f"a and dnda must be 1-d of equal length >= 2; got shapes {a.shape} and {y.shape}")
        if not (np.all(np.isfinite(a)) and np.all(np.isfinite(y))):
            raise InputError("a and dnda must be finite in every row")
        if np.any(a <= 0):
            raise InputError(f"a={float(a[a <= 0][0])!r} µm must be > 0")
        if np.any(y < 0):
            raise InputError(f"dnda={float(y[y < 0][0])!r} must be >= 0")
        order = np.argsort(a)
        a, y = a[order], y[order]
        if np.any(np.diff(a) <= 0):
            raise InputError(f"a has a repeated value {a[1:][np.diff(a) <= 0][0]:g} µm")
        self._a, self._y = a, y
        lo = a[0] if a_min is None else check_positive("a_min", a_min)
        hi = a[-1] if a_max is None else check_positive("a_max", a_max)
        for label, value in (("a_min", lo), ("a_max", hi)):
            if not a[0] <= value <= a[-1]:
                raise InputError(
                    f"{label}={value:g} µm lies outside the radii of size table {name}, "
                    f"[{a[0]:g}, {a[-1]:g}] µm; a size table is never extrapolated"
                )
        self._set_range(lo, hi)
        self.label = f"table {name}"
        self.name = name

    def _dnda(self, a):
        logy = np.log(np.maximum(self._y, 1e-300))  # zeros stay (numerically) zero
        return np.exp(np.interp(np.log(a), np.log(self._a), logy))

    def key(self):
        return {
            "type": "TabulatedSizes",
            "a": self._a.tolist(),
            "dnda": self._y.tolist(),
            "range": [self.a_min, self.a_max],
        }

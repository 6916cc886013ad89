"""The one interface every extinction curve implements.

A curve maps wavelength to the ratio A(λ)/A(V) of the extinction at λ to the
extinction in the V band. Laws, tabulated curves and (later) grain models all
derive from :class:`DustCurve`, so band integration, catalog
correction, planning and the user interfaces accept any of them.

Conventions
-----------
* Inside, wavelengths are wavenumbers x = 1/λ in µm⁻¹ (float64 arrays).
* At the boundary, plain numbers are wavelengths in µm; an astropy Quantity
  may be in any length, frequency, energy or wavenumber unit.
* ``A(λ)/E(B-V) = R_V · A(λ)/A(V)`` with ``R_V = A(V)/E(B-V)`` the ratio the
  law is defined with.
"""

import abc
import warnings

import numpy as np
from astropy import units as u

from redcorr._validate import check_finite, inverse_micron, shown
from redcorr.exceptions import ExtrapolationWarning, InputError, OutOfRangeWarning

__all__ = ["DustCurve"]


class DustCurve(abc.ABC):
    """Base class: A(λ)/A(V) as a function of wavelength.

    Subclasses set the class attributes and implement ``_evaluate(x)``,
    a pure function of the wavenumber array ``x`` in µm⁻¹.

    Attributes
    ----------
    name : str
        Short registry name, e.g. ``"ccm89"``.
    citation : str
        The paper the formulas come from.
    wavenumber_limits : tuple of float
        Validity range in wavenumber, µm⁻¹.
    r_v_limits : tuple of float or None
        Allowed R_V; ``None`` for curves with a fixed R_V.
    r_v_observed : tuple of float or None
        Span of R_V in the data the law was fitted to; values outside it but
        inside ``r_v_limits`` are allowed with an `OutOfRangeWarning`.
    can_extrapolate : bool
        Whether ``extrapolate=True`` is honoured (formula-based curves) or
        refused (tabulated curves).
    """

    name = ""
    citation = ""
    wavenumber_limits = (0.0, np.inf)
    r_v_limits = None
    r_v_observed = None
    default_r_v = 3.1
    can_extrapolate = True

    def __init__(self, r_v=None):
        if self.r_v_limits is None:
            if r_v is not None and not np.isclose(check_finite("r_v", r_v), self.default_r_v):
                raise InputError(
                    f"r_v={shown(r_v)} is not allowed: {self.name} has a fixed R_V of "
                    f"{self.default_r_v:g}"
                )
            self._r_v = float(self.default_r_v)
            return
        r_v = self.default_r_v if r_v is None else r_v
        value = check_finite("r_v", r_v)
        lo, hi = self.r_v_limits
        if not lo <= value <= hi:
            raise InputError(
                f"r_v={shown(r_v)} is outside the range {self.name} supports, [{lo:g}, {hi:g}]"
            )
        if self.r_v_observed is not None and not (
            self.r_v_observed[0] <= value <= self.r_v_observed[1]
        ):
            warnings.warn(
                f"r_v={value:g} lies outside the R_V span {self.r_v_observed} of the "
                f"sight lines {self.name} was fitted to; the curve is an extrapolation",
                OutOfRangeWarning,
                stacklevel=3,
            )
        self._r_v = value

    @property
    def r_v(self):
        """float: R_V = A(V)/E(B-V) of this curve."""
        return self._r_v

    @property
    def wave_range(self):
        """`~astropy.units.Quantity`: (shortest, longest) valid wavelength in µm."""
        lo, hi = self.wavenumber_limits
        with np.errstate(divide="ignore"):
            return (1.0 / np.array([hi, lo])) * u.um

    def __call__(self, wave, *, extrapolate=False):
        """A(λ)/A(V) at ``wave``.

        Parameters
        ----------
        wave : float, array_like or `~astropy.units.Quantity` ['length', 'frequency', 'wavenumber']
            Wavelengths; plain numbers are in µm. Any shape.
        extrapolate : bool, optional
            Evaluate outside the validity range with an `ExtrapolationWarning`
            instead of raising `InputError`.

        Returns
        -------
        ratio : float or ndarray
            A(λ)/A(V), same shape as ``wave``; NaN where ``wave`` is NaN.
        """
        x = inverse_micron(wave)
        self._check_x(x, extrapolate)
        ok = np.isfinite(x)
        if ok.all():
            return self._evaluate(x.ravel()).reshape(x.shape)[()]
        out = np.full(x.shape, np.nan)
        out[ok] = self._evaluate(x[ok])
        return out[()]

    def a_over_ebv(self, wave, *, extrapolate=False):
        """A(λ)/E(B-V) = R_V · A(λ)/A(V); arguments as for ``__call__``."""
        return self.r_v * self(wave, extrapolate=extrapolate)

    def _check_x(self, x, extrapolate):
        lo, hi = self.wavenumber_limits
        outside = np.isfinite(x) & ((x < lo) | (x > hi))
        if not np.any(outside):
            return
        lam = 1.0 / x[outside]
        wmin, wmax = self.wave_range.to_value(u.um)
        where = (
            f"{outside.sum()} wavelength(s) from {lam.min():.6g} to {lam.max():.6g} µm lie"
            if lam.size > 1
            else f"wave={lam[0]:.6g} µm lies"
        )
        if not extrapolate or not self.can_extrapolate:
            hint = (
                "; pass extrapolate=True (--extrapolate) to evaluate anyway"
                if self.can_extrapolate
                else "; a tabulated curve cannot be extrapolated"
            )
            raise InputError(
                f"{where} outside the {self.name} range [{wmin:.6g}, {wmax:.6g}] µm{hint}"
            )
        warnings.warn(
            f"{where} outside the {self.name} range [{wmin:.6g}, {wmax:.6g}] µm; "
            "the values are an extrapolation of the law's formulas",
            ExtrapolationWarning,
            stacklevel=3,
        )

    @abc.abstractmethod
    def _evaluate(self, x):
        """A(λ)/A(V) at finite wavenumbers ``x`` (µm⁻¹), a 1-d float64 array."""

    def __repr__(self):
        return f"<{type(self).__name__} {self.name!r} R_V={self.r_v:g}>"

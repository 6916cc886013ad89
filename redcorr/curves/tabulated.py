"""Curves given as a table of A(λ)/A(V), such as user files or grain models."""

import numpy as np
from astropy import units as u

from redcorr._validate import check_positive, inverse_micron
from redcorr.curves._base import DustCurve
from redcorr.exceptions import InputError

__all__ = ["TabulatedCurve", "monochromatic_r_v"]

B_WAVE_UM = 0.44
V_WAVE_UM = 0.55


def monochromatic_r_v(a_b_over_a_v):
    """R_V from A(B)/A(V) at single wavelengths: R_V = 1 / (A_B/A_V − 1).

    Follows from R_V = A_V/E(B−V) and E(B−V) = A_B − A_V (definition, common
    practice, no source). redcorr uses B = 0.44 µm and V = 0.55 µm.
    """
    return 1.0 / (np.asarray(a_b_over_a_v, dtype=float) - 1.0)


class TabulatedCurve(DustCurve):
    """An extinction curve interpolated from a table.

    Parameters
    ----------
    wave : array_like or `~astropy.units.Quantity`
        Wavelengths of the table (plain numbers in µm); at least 4 distinct,
        finite, positive values, in any order.
    a_over_av : array_like
        A(λ)/A(V) at ``wave``, finite.
    r_v : float, optional
        R_V of the curve. If omitted and the table covers 0.44 and 0.55 µm,
        R_V is derived monochromatically, R_V = 1/(A(0.44)/A(0.55) − 1);
        otherwise it is NaN and A/E(B−V) cannot be given.
    name, citation : str, optional
        Shown in listings and outputs.

    Notes
    -----
    Interpolation is piecewise-cubic Hermite and monotonicity-preserving
    (PCHIP, Fritsch & Carlson 1980) in x = 1/λ: it passes through every
    tabulated point, never overshoots between them, and has a continuous
    first derivative. Wavelengths outside the table raise an error; a table
    is never extrapolated.

    References
    ----------
    .. [1] Fritsch, F. N., & Carlson, R. E. 1980, SIAM J. Numer. Anal., 17,
       238. doi:10.1137/0717021
    """

    can_extrapolate = False
    r_v_limits = None

    def __init__(self, wave, a_over_av, *, r_v=None, name="table", citation="user table"):
        from scipy.interpolate import PchipInterpolator  # heavy: loaded when a table is built, not on import

        x = inverse_micron(wave, name="wave")
        y = np.asarray(a_over_av, dtype=float)
        if x.ndim != 1 or y.shape != x.shape:
            raise InputError(
                f"wave and a_over_av must be 1-d of equal length; got shapes {x.shape} and {y.shape}"
            )
        if not np.all(np.isfinite(x)) or not np.all(np.isfinite(y)):
            raise InputError("wave and a_over_av must be finite in every row of the table")
        order = np.argsort(x)
        x, y = x[order], y[order]
        if x.size < 4:
            raise InputError(f"a tabulated curve needs at least 4 rows; got {x.size}")
        if np.any(np.diff(x) <= 0):
            dup = 1.0 / x[1:][np.diff(x) <= 0][0]
            raise InputError(f"wave has a repeated value {dup:.6g} µm; wavelengths must be distinct")
        self.name = name
        self.citation = citation
        self.wavenumber_limits = (float(x[0]), float(x[-1]))
        self._interp = PchipInterpolator(x, y, extrapolate=False)
        self._table = (x, y)
        if r_v is None:
            lo, hi = self.wavenumber_limits
            if lo <= 1 / V_WAVE_UM and 1 / B_WAVE_UM <= hi:
                r_v = float(monochromatic_r_v(self._interp(1 / B_WAVE_UM) / self._interp(1 / V_WAVE_UM)))
            else:
                r_v = np.nan
        else:
            r_v = check_positive("r_v", r_v)
        self.default_r_v = r_v
        self._r_v = r_v

    @property
    def table(self):
        """tuple of `~astropy.units.Quantity` and ndarray: the table in increasing wavelength."""
        x, y = self._table
        return (1.0 / x[::-1]) * u.um, y[::-1].copy()

    def _evaluate(self, x):
        return self._interp(x)

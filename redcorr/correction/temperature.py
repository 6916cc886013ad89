"""A source's blackbody temperature from an observed colour: the table the solver inverts.

The colour of a blackbody between two bands is its AB colour
(:func:`redcorr.photometry.synthetic_colour`), tabulated at
:data:`TABLE_POINTS` temperatures spaced evenly in log T over
:data:`TEMPERATURE_RANGE` and interpolated linearly in log T both ways.
"""

import numpy as np

from redcorr.exceptions import InputError
from redcorr.photometry import synthetic_colour
from redcorr.sed import blackbody

__all__ = ["TABLE_POINTS", "TEMPERATURE_RANGE", "ColourTable", "intrinsic_colour"]

TEMPERATURE_RANGE = (3000.0, 50000.0)
"""K: the temperatures the solver and the coefficient tables cover."""

TABLE_POINTS = 241
"""Temperatures in the colour table (evenly in log T; a colour error below 3e-5 mag)."""


class ColourTable:
    """Blackbody colour of two bands against temperature, and its inverse (piecewise linear in log T).

    Parameters
    ----------
    band1, band2 : redcorr.bandpass.Band
    temperatures : array_like
        K, increasing.

    Raises
    ------
    InputError
        If the colour does not change monotonically with temperature (two
        bands at the same wavelength).
    """

    def __init__(self, band1, band2, temperatures):
        self.log_t = np.log10(temperatures)
        self.colour = np.array([synthetic_colour(blackbody(t), band1, band2) for t in temperatures])
        order = np.argsort(self.colour)
        if np.any(np.diff(self.colour[order]) <= 0):
            raise InputError(
                f"the blackbody colour {band1.name}-{band2.name} does not change monotonically with "
                "temperature; choose two bands of different wavelengths"
            )
        self._c_sorted, self._t_sorted = self.colour[order], self.log_t[order]

    @classmethod
    def default(cls, band1, band2):
        """The table the colour solver uses: :data:`TABLE_POINTS` temperatures over :data:`TEMPERATURE_RANGE`."""
        return cls(band1, band2, np.geomspace(*TEMPERATURE_RANGE, TABLE_POINTS))

    def colour_at(self, temperature):
        """Colour (mag) at ``temperature`` (K)."""
        return np.interp(np.log10(temperature), self.log_t, self.colour)

    def temperature_at(self, colour):
        """Temperature (K) of each colour, and whether the colour lies within the table."""
        inside = (colour >= self._c_sorted[0]) & (colour <= self._c_sorted[-1])
        return 10.0 ** np.interp(colour, self._c_sorted, self._t_sorted), inside


def intrinsic_colour(band1, band2, temperature):
    """Blackbody AB colour m1 − m2 at ``temperature`` (K), as the colour solver uses it.

    Parameters
    ----------
    band1, band2 : redcorr.bandpass.Band
    temperature : float or array_like
        Kelvin, within 3000–50000 K.

    Returns
    -------
    ndarray
        Colour in mag, interpolated in log T from the solver's own table
        (so that it inverts the solver exactly).
    """
    return ColourTable.default(band1, band2).colour_at(np.asarray(temperature, float))

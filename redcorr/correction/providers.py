"""Where A_b comes from: three providers of band extinction behind one small interface.

Every provider answers two questions for n rows and the bands it was
built for (see :class:`ExtinctionProvider`):

* ``a_band(a_v, temperature)`` → ``(A_b, inside)``: A_b of shape
  (n, n_band) and whether each row lay inside the provider's grid (rows
  outside use the nearest grid edge);
* ``slope(a_v, temperature)`` → dA_b/dA_V, shape (n, n_band).

:class:`NodeProviders` holds providers of one kind built at several R_V
nodes and evaluates each row with the one it names (``a_band(which, a_v,
temperature)``, ``slope(which, a_v, temperature)``), in one pass over the
rows: spline coefficients or ratios of every node are stacked and gathered
row by row.

============================  ============================================
:class:`FixedTemperature`     nonlinear A_b(A_V) at one temperature: a
                              cubic spline through A_V steps of 0.05 mag
:class:`GridCoefficients`     nonlinear A_b(A_V, T) from a
                              :class:`redcorr.coefficients.CoefficientGrid`
:class:`LinearCoefficients`   A_b = (A_b/A_V)·A_V, the A_V → 0 ratio at one
                              temperature or tabulated in log T
============================  ============================================

:func:`make_provider` chooses among them. Negative A_V (noise in a
reddening estimate) uses the odd extension A_b(−A_V) = −A_b(A_V).
"""

from typing import Protocol

import numpy as np

from redcorr.coefficients import coefficient_grid
from redcorr.correction.temperature import TEMPERATURE_RANGE
from redcorr.extinction import band_extinction, band_ratio
from redcorr.sed import blackbody

__all__ = [
    "DIFF_STEP",
    "ExtinctionProvider",
    "FixedTemperature",
    "GridCoefficients",
    "LinearCoefficients",
    "NodeProviders",
    "make_provider",
]

DIFF_STEP = 1e-3
"""mag: half step of the central differences dA_b/d(reddening) where no analytic slope exists."""

_AV_STEP = 0.05
_AV_MAX = 20.0
_LINEAR_TEMPERATURES = 25
"""Temperatures (evenly in log T) at which the linear ratio is tabulated for a per-row temperature."""


class ExtinctionProvider(Protocol):
    """A_b for rows of A_V and temperature, for the bands the provider was built for."""

    def a_band(self, a_v, temperature):
        """``(A_b, inside)``: A_b (n, n_band) in mag, and a bool (n,) mask of rows inside the grid."""

    def slope(self, a_v, temperature):
        """dA_b/dA_V, shape (n, n_band)."""


class FixedTemperature:
    """Nonlinear A_b(A_V) at one source temperature: a cubic spline through A_V steps of 0.05 mag.

    Parameters
    ----------
    curve : redcorr.curves.DustCurve
    bands : list of redcorr.bandpass.Band
    temperature : float
        K, of the blackbody source.
    extrapolate : bool
        Passed to :func:`redcorr.extinction.band_extinction`.
    """

    def __init__(self, curve, bands, temperature, extrapolate):
        from scipy.interpolate import CubicSpline  # noqa: PLC0415

        self.a_v = np.arange(0.0, _AV_MAX + _AV_STEP / 2, _AV_STEP)
        sed = blackbody(temperature)
        table = np.stack(
            [np.asarray(band_extinction(curve, b, sed, self.a_v, extrapolate=extrapolate), float) for b in bands],
            axis=-1,
        )
        self.spline = CubicSpline(self.a_v, table, axis=0)
        self._slope = self.spline.derivative()

    def a_band(self, a_v, temperature):
        """A_b from the spline (odd in A_V); rows beyond A_V = 20 use its end."""
        mag = np.abs(a_v)
        inside = mag <= self.a_v[-1]
        out = self.spline(np.minimum(mag, self.a_v[-1]))
        if not np.all(a_v > 0):  # odd extension (a factor of 1 would change nothing)
            out *= np.sign(a_v)[:, None]
        return out, inside

    def slope(self, a_v, temperature):
        """dA_b/dA_V (n, n_band), from the spline's derivative (even, as A_b is odd)."""
        return self._slope(np.minimum(np.abs(a_v), self.a_v[-1]))


class LinearCoefficients:
    """A_b = (A_b/A_V)·A_V with A_b/A_V at A_V → 0, at one temperature or tabulated in log T.

    Parameters
    ----------
    curve : redcorr.curves.DustCurve
    bands : list of redcorr.bandpass.Band
    temperatures : float or array_like
        K; one value, or increasing values interpolated linearly in log T.
    extrapolate : bool
        Passed to :func:`redcorr.extinction.band_ratio`.
    """

    def __init__(self, curve, bands, temperatures, extrapolate):
        temperatures = np.atleast_1d(np.asarray(temperatures, float))
        self.log_t = np.log10(temperatures)
        self.ratio = np.array(
            [[band_ratio(curve, b, blackbody(t), extrapolate=extrapolate) for t in temperatures] for b in bands]
        )

    def a_band(self, a_v, temperature):
        """A_b = ratio·A_V; rows outside the tabulated temperatures use the nearest."""
        if self.log_t.size == 1:
            ratio = np.broadcast_to(self.ratio[:, 0], (a_v.size, self.ratio.shape[0]))
            return a_v[:, None] * ratio, np.ones(a_v.shape, bool)
        lt = np.log10(temperature)
        ratio = np.stack([np.interp(lt, self.log_t, row) for row in self.ratio], axis=-1)
        inside = (lt >= self.log_t[0]) & (lt <= self.log_t[-1])
        return a_v[:, None] * ratio, inside

    def slope(self, a_v, temperature):
        """dA_b/dA_V (n, n_band): the ratio itself."""
        return self.a_band(np.ones_like(a_v), temperature)[0]


class GridCoefficients:
    """Nonlinear A_b(A_V, T) from a :class:`redcorr.coefficients.CoefficientGrid`.

    Parameters
    ----------
    curve : redcorr.curves.DustCurve
    bands : list of redcorr.bandpass.Band
    extrapolate : bool
        Passed to :func:`redcorr.coefficients.coefficient_grid`.
    """

    def __init__(self, curve, bands, extrapolate):
        self.grid = coefficient_grid(curve, bands, extrapolate=extrapolate)
        self.t_lo, self.t_hi = float(np.min(self.grid.temperatures)), float(np.max(self.grid.temperatures))
        self.av_hi = float(np.max(self.grid.a_v))

    def a_band(self, a_v, temperature):
        """A_b interpolated in the grid (odd in A_V); rows outside it use the nearest edge."""
        mag = np.abs(a_v)
        t = np.clip(temperature, self.t_lo, self.t_hi)
        inside = (mag <= self.av_hi) & (temperature >= self.t_lo) & (temperature <= self.t_hi)
        out = np.asarray(self.grid.a_band(np.minimum(mag, self.av_hi), t), float).reshape(a_v.size, -1)
        return out * np.sign(a_v)[:, None], inside

    def slope(self, a_v, temperature):
        """dA_b/dA_V (n, n_band) by central differences of ±1e-3 mag."""
        return (self.a_band(a_v + DIFF_STEP, temperature)[0] - self.a_band(a_v - DIFF_STEP, temperature)[0]) / (
            2 * DIFF_STEP
        )


class NodeProviders:
    """Providers of one kind at several R_V nodes; each row is evaluated with the one it names.

    The same numbers as calling each provider on its own rows (to rounding,
    ~1e-15 mag), without splitting the rows: a :class:`FixedTemperature`
    stack gathers each row's cubic-spline coefficients (value and
    derivative from the same ones), a :class:`LinearCoefficients` stack
    each row's ratios. Other providers are called on the rows of each node.

    Parameters
    ----------
    providers : sequence of ExtinctionProvider
        Built by :func:`make_provider` for the same bands and temperature
        setting (one per node).
    """

    def __init__(self, providers):
        self.providers = tuple(providers)
        first = self.providers[0]
        self._kind = None
        if all(isinstance(p, FixedTemperature) for p in self.providers):
            self._kind = "spline"
            self.a_v = first.a_v
            self._n_int = first.spline.c.shape[1]
            coef = np.concatenate([p.spline.c for p in self.providers], axis=1)  # (4, n_node·n_int, n_band)
            self._value = [np.ascontiguousarray(c) for c in coef]
            self._deriv = [np.ascontiguousarray(c * k) for c, k in zip(coef[:-1], (3.0, 2.0, 1.0), strict=True)]
        elif all(isinstance(p, LinearCoefficients) and np.array_equal(p.log_t, first.log_t) for p in self.providers):
            self._kind = "ratio"
            self.log_t = first.log_t
            # (n_node·n_T, n_band): one contiguous row of band ratios per node and temperature
            self._ratio = np.concatenate([np.ascontiguousarray(p.ratio.T) for p in self.providers], axis=0)

    def _by_node(self, method, which, a_v, temperature):
        """``method`` of each provider on its own rows, for providers with no stacked form."""
        order = np.argsort(which, kind="stable")
        bounds = np.searchsorted(which[order], np.arange(len(self.providers) + 1))
        out = None
        for k, (start, stop) in enumerate(zip(bounds[:-1], bounds[1:], strict=True)):
            if stop > start:
                rows = order[start:stop]
                part = getattr(self.providers[k], method)(a_v[rows], temperature[rows])
                parts = part if isinstance(part, tuple) else (part,)
                if out is None:
                    out = tuple(np.empty((a_v.size, *p.shape[1:]), p.dtype) for p in parts)
                for whole, p in zip(out, parts, strict=True):
                    whole[rows] = p
        return out if len(out) > 1 else out[0]

    def _spline(self, coefs, which, a_v):
        """Evaluate the stacked piecewise cubics ``coefs`` (highest power first) of each row's node."""
        x = np.minimum(np.abs(a_v), self.a_v[-1])
        step = self.a_v[1] - self.a_v[0]
        interval = np.minimum((x / step).astype(np.intp), self._n_int - 1)  # the A_V grid is uniform
        dx = (x - self.a_v[interval])[:, None]
        flat = which * self._n_int + interval
        out = coefs[0].take(flat, axis=0)
        for c in coefs[1:]:
            out *= dx
            out += c.take(flat, axis=0)
        return out

    def _ratio_at(self, which, temperature):
        """A_b/A_V (n, n_band) of each row's node, linear in log T like :meth:`LinearCoefficients.a_band`."""
        n_t = self.log_t.size
        if n_t == 1:
            return self._ratio.take(which, axis=0), np.ones(which.shape, bool)
        lt = np.log10(temperature)
        j = np.clip(np.searchsorted(self.log_t, lt, side="right") - 1, 0, n_t - 2)
        frac = (np.clip(lt, self.log_t[0], self.log_t[-1]) - self.log_t[j]) / (self.log_t[j + 1] - self.log_t[j])
        flat = which * n_t + j
        ratio = self._ratio.take(flat, axis=0) * (1 - frac)[:, None]
        ratio += self._ratio.take(flat + 1, axis=0) * frac[:, None]
        return ratio, (lt >= self.log_t[0]) & (lt <= self.log_t[-1])

    def a_band(self, which, a_v, temperature):
        """``(A_b, inside)`` of each row with the provider ``which`` (int array, n) names."""
        if self._kind == "spline":
            out = self._spline(self._value, which, a_v)
            if not np.all(a_v > 0):  # odd extension, as FixedTemperature.a_band
                out *= np.sign(a_v)[:, None]
            return out, np.abs(a_v) <= self.a_v[-1]
        if self._kind == "ratio":
            ratio, inside = self._ratio_at(which, temperature)
            return a_v[:, None] * ratio, inside
        return self._by_node("a_band", which, a_v, temperature)

    def slope(self, which, a_v, temperature):
        """dA_b/dA_V (n, n_band) of each row with the provider ``which`` names."""
        if self._kind == "spline":
            return self._spline(self._deriv, which, a_v)
        if self._kind == "ratio":
            return self._ratio_at(which, temperature)[0]
        return self._by_node("slope", which, a_v, temperature)


def make_provider(curve, bands, *, nonlinear, temperature, extrapolate):
    """The provider of A_b for a curve and bands.

    Parameters
    ----------
    curve : redcorr.curves.DustCurve
    bands : list of redcorr.bandpass.Band
    nonlinear : bool
        Band-integrated A_b(A_V, T), or the linear A_V → 0 ratio.
    temperature : float or None
        K, one source temperature for every row; None when it varies per row.
    extrapolate : bool

    Returns
    -------
    ExtinctionProvider
    """
    if not nonlinear:
        temperatures = [temperature] if temperature is not None else np.geomspace(
            *TEMPERATURE_RANGE, _LINEAR_TEMPERATURES
        )
        return LinearCoefficients(curve, bands, temperatures, extrapolate)
    if temperature is not None:
        return FixedTemperature(curve, bands, temperature, extrapolate)
    return GridCoefficients(curve, bands, extrapolate)

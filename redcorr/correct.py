"""Reddening correction of photometric catalogs: DataFrames in, DataFrames out.

A :class:`Correction` is set up once (bands and their columns, the source of
reddening, R_V, the extinction law or grain model, the source spectrum) and
then applied to any number of DataFrames — a whole table in memory, the
chunks of a file streamed by :mod:`redcorr.io.catalogs`, or the partitions
of a Dask DataFrame. Every row is corrected on its own, so the result does
not depend on how a table is split. This module opens no files: laws,
filters and maps arrive through :mod:`redcorr.io` or as objects.

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
flag column ``dered_flags``, whose bits are :data:`FLAG_BITS`.

Flags (``dered_flags``, a bit mask)
-----------------------------------
===  =====  ====================  =============================================
bit  value  name                  meaning
===  =====  ====================  =============================================
0    1      non_numeric           an input cell was text, not a number (now NaN)
1    2      missing               a magnitude or the reddening is NaN/empty
2    4      negative_reddening    E(B-V) < 0; corrected as given (odd extension)
3    8      outside_grid          A_V or temperature outside the coefficient
                                  grid; the nearest grid edge was used
4    16     outside_curve         R_V outside the law's range or missing (outputs
                                  NaN), or a band beyond the law's wavelengths
5    32     map_coverage          the dust map has no value here (outputs NaN)
6    64     not_converged         the colour–temperature iteration did not
                                  converge within ``max_iterations``
===  =====  ====================  =============================================

Notes
-----
Extinction through band b for A_V and a blackbody source of temperature T:

* nonlinear (default): A_b = A_b(A_V, T) integrated through the filter with
  the reddened spectrum (:func:`redcorr.extinction.band_extinction`), which
  falls slightly below A_V·R_b as the band's effective wavelength shifts
  red. For a fixed T it is tabulated against A_V (step 0.05 mag, cubic
  spline, error < 1e-8 mag); for T per row the
  :class:`redcorr.extinction.CoefficientGrid` is interpolated. Negative
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
a central difference of ±0.001 mag on a coefficient grid or with R_V per
row) and ∂A_b/∂R_V a central difference (±0.05) at fixed E(B-V) or A_V.

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
"""

import re
import time
import warnings

import numpy as np
import pandas as pd

from redcorr._constants import CORRECTION_FLAG_BITS, DEFAULT_TEMPERATURE
from redcorr._validate import check_choice, check_finite, check_positive
from redcorr.exceptions import InputError, OutOfRangeWarning
from redcorr.extinction import band_extinction, band_ratio, coefficient_grid
from redcorr.sed import blackbody

__all__ = [
    "FLAG_BITS",
    "Correction",
    "RunSummary",
    "band_label",
    "correct_dataframe",
    "correct_dask",
    "intrinsic_colour",
    "summarise_dask",
    "warn_summary",
]

FLAG_BITS = CORRECTION_FLAG_BITS
"""dict: name → value of each bit of the ``dered_flags`` column."""

FLAG_COLUMN = "dered_flags"

_RV_HALF_STEP = 0.05
_DIFF_STEP = 1e-3
"""mag: half step of the central differences dA_b/d(reddening) where no analytic slope exists."""
_AV_STEP = 0.05
_AV_MAX = 20.0
_T_TABLE = (3000.0, 50000.0, 241)

_EBV_NAMES = ("ebv", "e_b_v", "e(b-v)", "ebmv", "e_bv", "reddening", "ebv_map")
_AV_NAMES = ("a_v", "av", "a_v_mag", "extinction_v")
_RA_NAMES = ("ra", "ra_deg", "raj2000", "ra_icrs", "alpha")
_DEC_NAMES = ("dec", "dec_deg", "dej2000", "decj2000", "de_icrs", "delta")
_GLON_NAMES = ("glon", "l", "gal_l", "lii")
_GLAT_NAMES = ("glat", "b", "gal_b", "bii")
_RV_NAMES = ("r_v", "rv")
_TEFF_NAMES = ("teff", "t_eff", "temperature")


def band_label(name):
    """Column-safe label of a band name: runs of other characters become ``_`` (``kw-v`` → ``kw_v``)."""
    return re.sub(r"[^0-9A-Za-z]+", "_", str(name)).strip("_")


def _find(columns, candidates):
    """The first column matching a candidate name, case-insensitively, or None."""
    lower = {}
    for c in columns:
        lower.setdefault(str(c).lower(), c)
    for cand in candidates:
        if cand.lower() in lower:
            return lower[cand.lower()]
    return None


def _require(columns, name, what):
    if name is None:
        return None
    if name not in columns:
        raise InputError(
            f"{what}={name!r} is not a column of the input; the columns are {list(columns)}"
        )
    return name


def _short_name(label):
    """The band letter in names such as ``kw-v``, ``bessell-V``, ``sdss2010-g``."""
    parts = re.split(r"[-_:]", str(label))
    return parts[-1] if len(parts) > 1 else None


def _mag_candidates(label):
    out = []
    for stem in (label, band_label(label)):
        out += [stem, f"{stem}_mag", f"mag_{stem}"]
    short = _short_name(label)
    if short:
        out += [f"{short}mag", f"{short}_mag", f"mag_{short}", short]
    return list(dict.fromkeys(out))


def _err_candidates(mag, label):
    stems = [mag, band_label(label)]
    short = _short_name(label)
    if short:
        stems.append(short)
    pats = ("e_{}", "{}_err", "{}_error", "err_{}", "{}err", "sigma_{}", "{}_sigma", "e{}", "{}_e")
    return [p.format(s) for s in stems for p in pats]


def _synthetic_ab(band, sed):
    """AB magnitude (up to a constant shared by all bands) of ``sed`` through ``band``.

    Photon counting: ⟨f_ν⟩ = ∫ f_λ λ T dλ / ∫ (c/λ) T dλ; energy: without the
    λ weight in both integrals. The constants of the AB zero point cancel in
    colours, which is all this is used for.
    """
    wave = np.asarray(band.wave_um, dtype=float)
    resp = np.asarray(band.response, dtype=float)
    flam = np.asarray(sed.flam(wave), dtype=float)
    weight = np.asarray(band.weight(wave), dtype=float)
    num = np.trapezoid(flam * resp * weight, wave)
    den = np.trapezoid(resp * weight / wave**2, wave)
    return -2.5 * np.log10(num / den)


def _float_column(frame, col):
    """A numeric column of a DataFrame or Arrow table as float64 (missing → NaN), or None if not numeric."""
    if isinstance(frame, pd.DataFrame):
        series = frame[col]
        if pd.api.types.is_numeric_dtype(series.dtype) and not pd.api.types.is_bool_dtype(series.dtype):
            return series.to_numpy(dtype=float, na_value=np.nan)
        return None
    import pyarrow as pa  # noqa: PLC0415 - Arrow tables come from the io edge, which imports it

    column = frame.column(col)
    if pa.types.is_floating(column.type) or pa.types.is_integer(column.type):
        return np.asarray(column.to_numpy(), dtype=float)
    return None


def _series(frame, col):
    """A column of a DataFrame or Arrow table as a pandas Series (index from 0 for Arrow)."""
    if isinstance(frame, pd.DataFrame):
        return frame[col]
    return frame.column(col).to_pandas()


class _ColourTable:
    """Blackbody colour of two bands against temperature, and its inverse (piecewise linear in log T)."""

    def __init__(self, band1, band2, temperatures):
        self.log_t = np.log10(temperatures)
        self.colour = np.array(
            [_synthetic_ab(band1, blackbody(t)) - _synthetic_ab(band2, blackbody(t)) for t in temperatures]
        )
        order = np.argsort(self.colour)
        if np.any(np.diff(self.colour[order]) <= 0):
            raise InputError(
                f"the blackbody colour {band1.name}-{band2.name} does not change monotonically with "
                "temperature; choose two bands of different wavelengths"
            )
        self._c_sorted, self._t_sorted = self.colour[order], self.log_t[order]

    def colour_at(self, temperature):
        return np.interp(np.log10(temperature), self.log_t, self.colour)

    def temperature_at(self, colour):
        inside = (colour >= self._c_sorted[0]) & (colour <= self._c_sorted[-1])
        return 10.0 ** np.interp(colour, self._c_sorted, self._t_sorted), inside


def intrinsic_colour(band1, band2, temperature):
    """Blackbody AB colour m1 − m2 at ``temperature`` (K), as the colour solver uses it.

    Parameters
    ----------
    band1, band2 : str or redcorr.bandpass.Band
    temperature : float or array_like
        Kelvin, within 3000–50000 K.

    Returns
    -------
    ndarray
        Colour in mag, interpolated in log T from the solver's own table
        (so that it inverts the solver exactly).
    """
    b1, b2 = _load_band(band1), _load_band(band2)
    return _ColourTable(b1, b2, np.geomspace(*_T_TABLE[:2], _T_TABLE[2])).colour_at(np.asarray(temperature, float))


def _load_band(spec):
    if isinstance(spec, str):
        from redcorr.io.filters import load_band  # noqa: PLC0415 - the io edge resolves names and files

        return load_band(spec)
    if not hasattr(spec, "wave_um"):
        raise InputError(f"band={spec!r} is neither a band name nor a Band")
    return spec


class _FixedTemperature:
    """Nonlinear A_b(A_V) at one source temperature: a cubic spline through A_V steps of 0.05 mag."""

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
        mag = np.abs(a_v)
        inside = mag <= self.a_v[-1]
        out = self.spline(np.minimum(mag, self.a_v[-1]))
        if not np.all(a_v > 0):  # odd extension (a factor of 1 would change nothing)
            out *= np.sign(a_v)[:, None]
        return out, inside

    def slope(self, a_v, temperature):
        """dA_b/dA_V (n, n_band), from the spline's derivative (even, as A_b is odd)."""
        return self._slope(np.minimum(np.abs(a_v), self.a_v[-1]))


class _LinearCoefficients:
    """A_b = (A_b/A_V)·A_V with A_b/A_V at A_V → 0, fixed T or tabulated in log T."""

    def __init__(self, curve, bands, temperatures, extrapolate):
        temperatures = np.atleast_1d(np.asarray(temperatures, float))
        self.log_t = np.log10(temperatures)
        self.ratio = np.array(
            [[band_ratio(curve, b, blackbody(t), extrapolate=extrapolate) for t in temperatures] for b in bands]
        )

    def a_band(self, a_v, temperature):
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


class _GridCoefficients:
    """Nonlinear A_b(A_V, T) from a :class:`redcorr.extinction.CoefficientGrid`."""

    def __init__(self, curve, bands, extrapolate):
        self.grid = coefficient_grid(curve, bands, extrapolate=extrapolate)
        self.t_lo, self.t_hi = float(np.min(self.grid.temperatures)), float(np.max(self.grid.temperatures))
        self.av_hi = float(np.max(self.grid.a_v))

    def a_band(self, a_v, temperature):
        mag = np.abs(a_v)
        t = np.clip(temperature, self.t_lo, self.t_hi)
        inside = (mag <= self.av_hi) & (temperature >= self.t_lo) & (temperature <= self.t_hi)
        out = np.asarray(self.grid.a_band(np.minimum(mag, self.av_hi), t), float).reshape(a_v.size, -1)
        return out * np.sign(a_v)[:, None], inside

    def slope(self, a_v, temperature):
        """dA_b/dA_V (n, n_band) by central differences of ±1e-3 mag."""
        return (self.a_band(a_v + _DIFF_STEP, temperature)[0] - self.a_band(a_v - _DIFF_STEP, temperature)[0]) / (
            2 * _DIFF_STEP
        )


class RunSummary:
    """Counts and ranges gathered over every table a :class:`Correction` has processed.

    Attributes
    ----------
    rows : int
    flagged : dict
        Rows with each flag bit set, by name (see :data:`FLAG_BITS`), plus
        ``"any"``.
    ebv_min, ebv_max : float
        Range of the E(B-V) applied (NaN before any finite value).
    """

    def __init__(self, setup=None):
        self.setup = dict(setup or {})
        self.rows = 0
        self.flagged = {name: 0 for name in FLAG_BITS} | {"any": 0}
        self.ebv_min = np.nan
        self.ebv_max = np.nan
        self.iterations_max = 0
        self.iterations_sum = 0
        self.started = time.perf_counter()
        self.elapsed = None

    def add(self, out):
        """Fold the counts of one corrected table (a DataFrame or a dict of arrays) into the summary."""
        flags = np.asarray(out[FLAG_COLUMN])
        self.rows += len(flags)
        for name, bit in FLAG_BITS.items():
            self.flagged[name] += int(np.count_nonzero(flags & bit))
        self.flagged["any"] += int(np.count_nonzero(flags))
        ebv = np.asarray(out["ebv_used"], dtype=float)
        ebv = ebv[np.isfinite(ebv)]
        if ebv.size:
            self.ebv_min = float(np.fmin(self.ebv_min, ebv.min()))
            self.ebv_max = float(np.fmax(self.ebv_max, ebv.max()))
        if "teff_iterations" in out:
            it = np.asarray(out["teff_iterations"])
            if it.size:
                self.iterations_max = max(self.iterations_max, int(it.max()))
                self.iterations_sum += int(it.sum())

    def finish(self):
        """Stop the clock."""
        self.elapsed = time.perf_counter() - self.started
        return self

    def to_dict(self):
        """JSON-ready dict: rows, flagged counts, E(B-V) range, timing, setup."""
        elapsed = self.elapsed if self.elapsed is not None else time.perf_counter() - self.started
        out = {
            "rows": self.rows,
            "flagged": dict(self.flagged),
            "flag_bits": dict(FLAG_BITS),
            "ebv_min": self.ebv_min,
            "ebv_max": self.ebv_max,
            "seconds": round(elapsed, 3),
            "rows_per_second": round(self.rows / elapsed, 1) if elapsed > 0 else None,
            "setup": self.setup,
        }
        if self.setup.get("spectrum") == "colour":
            out["iterations_max"] = self.iterations_max
            out["iterations_mean"] = self.iterations_sum / self.rows if self.rows else 0.0
        return out

    def lines(self):
        """Human-readable lines."""
        d = self.to_dict()
        text = [
            f"rows: {d['rows']}  flagged: {d['flagged']['any']}  "
            f"E(B-V): {d['ebv_min']:.4g} .. {d['ebv_max']:.4g}  "
            f"time: {d['seconds']:.2f} s ({d['rows_per_second'] or 0:,.0f} rows/s)"
        ]
        reasons = ", ".join(f"{k} {v}" for k, v in d["flagged"].items() if v and k != "any")
        if reasons:
            text.append(f"flags: {reasons}")
        if "iterations_max" in d:
            text.append(f"temperature iterations: mean {d['iterations_mean']:.2f}, max {d['iterations_max']}")
        return text


class Correction:
    """A reddening correction set up once, applied to any number of DataFrames.

    Parameters
    ----------
    bands : list of str or redcorr.bandpass.Band
        Band definitions (a filter name such as ``kw-v``, ``file:PATH``,
        ``tophat:C:W``, ... or a Band object).
    columns : list of str
        The columns of the tables to come; used to check and guess names.
    mag_columns, err_columns : dict, optional
        Band name → magnitude / error column. Guessed when omitted
        (``kw-v`` finds ``kw-v``, ``kw_v``, ``vmag``, ``v_mag``, ``v``; errors
        ``e_MAG``, ``MAG_err``, ``err_MAG`` ...). An error column of ``None``
        in ``err_columns`` switches the guess off.
    ebv_column, av_column : str, optional
        Column of E(B-V) or of A_V (guessed from common names when no other
        source is given).
    reddening_error_column : str, optional
        Column of σ of that quantity.
    ebv, av : float, optional
        A constant E(B-V) or A_V for every row.
    reddening_error : float
        Constant σ of the reddening (same quantity as the source).
    dust_map : ReddeningMap, optional
        From :func:`redcorr.io.maps.open_map`; looked up at ``lon_column``,
        ``lat_column`` in ``frame`` (RA/Dec "icrs" or l/b "galactic",
        guessed from the columns).
    map_scale : float
        Factor applied to the map values (e.g. a recalibration).
    law : str or DustCurve
        Name for :func:`redcorr.io.load_curve` (law, grain model, file:PATH)
        or a curve object (then R_V is the curve's own).
    r_v : float, optional
        Constant R_V (law default if omitted).
    rv_column : str, optional
        Column of R_V per row (see Notes of the module).
    rv_error, rv_error_column : float or str
        σ(R_V), constant or per row.
    spectrum : {"fixed", "column", "colour"}
        Source temperature: ``temperature``; ``temperature_column``; or
        solved from the colour ``solve_colour``.
    temperature : float
        K; the fixed temperature, and the first guess of the solver.
    temperature_column : str, optional
    solve_colour : tuple of str, optional
        Two band names whose observed colour sets the temperature.
    colour_offset : float
        Added to the blackbody AB colour before comparing (e.g. a Vega-AB
        offset of the catalog's system).
    nonlinear : bool
        Band-integrated A_b(A_V, T) (True) or A_b = R_b E(B-V) (False).
    colours : list of tuple of str
        Band-name pairs whose corrected colours are wanted.
    strict : bool
        Raise on text in a number column instead of flagging it.
    extrapolate : bool
        Allow bands beyond the law's wavelength range (rows flagged).
    suffix : str
        Suffix of the corrected-magnitude columns.
    max_iterations : int
    tolerance : float
        Convergence of the colour solver, mag.
    rv_step : float
        Spacing of the R_V nodes for a per-row R_V.
    """

    def __init__(self, bands, *, columns, mag_columns=None, err_columns=None, ebv_column=None,
                 av_column=None, reddening_error_column=None, ebv=None, av=None, reddening_error=0.0,
                 dust_map=None, map_scale=1.0, lon_column=None, lat_column=None, frame=None,
                 law="f99", r_v=None, rv_column=None, rv_error=0.0, rv_error_column=None,
                 spectrum="fixed", temperature=DEFAULT_TEMPERATURE, temperature_column=None,
                 solve_colour=None, colour_offset=0.0, nonlinear=True, colours=(), strict=False,
                 extrapolate=False, suffix="_dered", max_iterations=20, tolerance=1e-7, rv_step=0.1):
        columns = [str(c) for c in columns]
        self.columns = columns
        if not bands:
            raise InputError("bands=[] is empty; give at least one band")
        self.bands = [_load_band(b) for b in bands]
        self.labels = [str(b) if isinstance(b, str) else b.name for b in bands]
        if len(set(self.labels)) != len(self.labels):
            raise InputError(f"bands={self.labels} lists a band twice")
        self.strict = bool(strict)
        self.nonlinear = bool(nonlinear)
        self.extrapolate = bool(extrapolate)
        self.suffix = str(suffix)
        self._resolve_bands(mag_columns or {}, err_columns or {})
        self._resolve_reddening(ebv_column, av_column, reddening_error_column, ebv, av, reddening_error,
                                dust_map, map_scale, lon_column, lat_column, frame)
        self._resolve_law(law, r_v, rv_column, rv_error, rv_error_column, rv_step)
        self._resolve_spectrum(spectrum, temperature, temperature_column, solve_colour, colour_offset,
                               max_iterations, tolerance)
        self.colours = [self._pair(p, "colours") for p in colours]
        self._coeff_cache = {}
        self._check_outputs()
        self.summary = RunSummary(self.setup())

    # -- set-up -------------------------------------------------------------------------------
    def _band_index(self, name, what):
        try:
            return self.labels.index(name)
        except ValueError:
            raise InputError(f"{what}: band {name!r} is not one of the bands {self.labels}") from None

    def _pair(self, pair, what):
        if len(pair) != 2:
            raise InputError(f"{what}={pair!r} must be two band names")
        i, j = self._band_index(pair[0], what), self._band_index(pair[1], what)
        if i == j:
            raise InputError(f"{what}={pair!r} needs two different bands")
        return i, j

    def _resolve_bands(self, mag_columns, err_columns):
        for key in list(mag_columns) + list(err_columns):
            self._band_index(key, "column mapping")
        self.mag_cols, self.err_cols = [], []
        for label in self.labels:
            if label in mag_columns:
                mag = _require(self.columns, mag_columns[label], f"magnitude column of {label}")
            else:
                mag = _find(self.columns, _mag_candidates(label))
                if mag is not None and mag.lower() in ("l", "b") and _find(self.columns, ("l",)) \
                        and _find(self.columns, ("b",)):
                    mag = None  # columns l and b are Galactic coordinates, not magnitudes
                if mag is None:
                    raise InputError(
                        f"no magnitude column found for band {label!r}; name it (e.g. --mag "
                        f"{label}=COLUMN); the columns are {self.columns}"
                    )
            if label in err_columns:
                err = _require(self.columns, err_columns[label], f"error column of {label}")
            else:
                err = _find(self.columns, _err_candidates(mag, label))
            self.mag_cols.append(mag)
            self.err_cols.append(err)
        dup = {m for m in self.mag_cols if self.mag_cols.count(m) > 1}
        if dup:
            raise InputError(
                f"several bands map to the magnitude column(s) {sorted(dup)}; name each band's column"
            )

    def _resolve_reddening(self, ebv_column, av_column, err_column, ebv, av, error, dust_map, scale,
                           lon, lat, frame):
        chosen = [n for n, v in (("ebv", ebv), ("av", av), ("ebv_column", ebv_column),
                                 ("av_column", av_column), ("dust_map", dust_map)) if v is not None]
        if len(chosen) > 1:
            raise InputError(f"give one source of reddening, not {chosen}")
        self.map = None
        self.red_col = None
        self.red_const = None
        if ebv is not None or av is not None:
            self.red_kind = "constant"
            self.red_quantity = "ebv" if ebv is not None else "av"
            self.red_const = check_finite(self.red_quantity, ebv if ebv is not None else av)
        elif dust_map is not None:
            self.red_kind = "map"
            self.map = dust_map
            self.red_quantity = "ebv" if str(dust_map.unit).upper().replace(" ", "") == "E(B-V)" else "av"
            self.map_scale = check_positive("map_scale", scale)
            self._resolve_position(lon, lat, frame)
        else:
            self.red_kind = "column"
            if ebv_column is not None or av_column is not None:
                self.red_quantity = "ebv" if ebv_column is not None else "av"
                self.red_col = _require(self.columns, ebv_column or av_column,
                                        "ebv_column" if ebv_column else "av_column")
            else:
                found_ebv, found_av = _find(self.columns, _EBV_NAMES), _find(self.columns, _AV_NAMES)
                if found_ebv is None and found_av is None:
                    raise InputError(
                        "no reddening given: name a column of E(B-V) or A_V, a constant, or a dust map; "
                        f"the columns are {self.columns}"
                    )
                self.red_quantity = "ebv" if found_ebv is not None else "av"
                self.red_col = found_ebv if found_ebv is not None else found_av
        self.red_err_col = _require(self.columns, err_column, "reddening_error_column")
        if self.red_err_col is None and self.red_col is not None:
            self.red_err_col = _find(self.columns, _err_candidates(self.red_col, self.red_col))
        self.red_err_const = check_finite("reddening_error", error or 0.0)
        if self.red_err_const < 0:
            raise InputError(f"reddening_error={error!r} must be >= 0")

    def _resolve_position(self, lon, lat, frame):
        if lon is not None or lat is not None:
            if lon is None or lat is None:
                raise InputError("give both position columns (lon_column and lat_column) or neither")
            self.lon_col = _require(self.columns, lon, "lon_column")
            self.lat_col = _require(self.columns, lat, "lat_column")
            self.frame = frame or "icrs"
            return
        ra, dec = _find(self.columns, _RA_NAMES), _find(self.columns, _DEC_NAMES)
        glon, glat = _find(self.columns, _GLON_NAMES), _find(self.columns, _GLAT_NAMES)
        if ra is not None and dec is not None and frame in (None, "icrs", "fk5"):
            self.lon_col, self.lat_col, self.frame = ra, dec, frame or "icrs"
        elif glon is not None and glat is not None and frame in (None, "galactic"):
            self.lon_col, self.lat_col, self.frame = glon, glat, "galactic"
        else:
            raise InputError(
                "a dust map needs positions: no RA/Dec or l/b columns found; name them "
                f"(lon_column, lat_column); the columns are {self.columns}"
            )

    def _resolve_law(self, law, r_v, rv_column, rv_error, rv_error_column, rv_step):
        self.rv_col = _require(self.columns, rv_column, "rv_column")
        if self.rv_col is not None and r_v is not None:
            raise InputError("give R_V either as a constant (r_v) or as a column (rv_column), not both")
        self.rv_err_col = _require(self.columns, rv_error_column, "rv_error_column")
        self.rv_err_const = check_finite("rv_error", rv_error or 0.0)
        if self.rv_err_const < 0:
            raise InputError(f"rv_error={rv_error!r} must be >= 0")
        self.rv_step = check_positive("rv_step", rv_step)
        if isinstance(law, str):
            from redcorr.io import load_curve  # noqa: PLC0415 - the io edge resolves names and files

            self._law_spec = law
            self._make_curve = lambda rv: load_curve(law, r_v=rv)
            self.curve = self._make_curve(r_v)
        else:
            if r_v is not None and not np.isclose(float(r_v), law.r_v):
                raise InputError(f"r_v={r_v!r} conflicts with the curve object's R_V {law.r_v:g}")
            self._law_spec = law.name
            self._make_curve = None
            self.curve = law
        self.r_v = float(self.curve.r_v)
        varying = self.rv_col is not None or self.rv_err_col is not None or self.rv_err_const > 0
        self.rv_limits = getattr(self.curve, "r_v_limits", None)
        if varying and (self._make_curve is None or self.rv_limits is None):
            raise InputError(
                f"law={self._law_spec!r} has a fixed R_V of {self.r_v:g}; a per-row R_V or an R_V "
                "uncertainty needs a law with an R_V parameter (e.g. f99, ccm89)"
            )
        self._outside_curve_all = False
        for band in self.bands:
            lo, hi = band.wave_range_um
            wmin, wmax = self.curve.wave_range.to_value("um")
            if lo < wmin or hi > wmax:
                if not self.extrapolate:
                    raise InputError(
                        f"band {band.name!r} spans {lo:.4g}-{hi:.4g} µm, beyond the {self.curve.name} range "
                        f"[{wmin:.4g}, {wmax:.4g}] µm; allow extrapolation to use it anyway"
                    )
                self._outside_curve_all = True

    def _resolve_spectrum(self, spectrum, temperature, temperature_column, solve_colour, offset,
                          max_iterations, tolerance):
        self.spectrum = check_choice("spectrum", spectrum, ("fixed", "column", "colour"))
        self.temperature = check_positive("temperature", temperature)
        self.t_col = None
        self.solve = None
        if self.spectrum == "column":
            col = temperature_column or _find(self.columns, _TEFF_NAMES)
            if col is None:
                raise InputError(
                    f"spectrum='column' needs a temperature column; the columns are {self.columns}"
                )
            self.t_col = _require(self.columns, col, "temperature_column")
        elif self.spectrum == "colour":
            if not solve_colour:
                raise InputError("spectrum='colour' needs solve_colour, two band names such as ('kw-b', 'kw-v')")
            self.solve = self._pair(solve_colour, "solve_colour")
            self.colour_offset = check_finite("colour_offset", offset)
            self._colour_table = _ColourTable(self.bands[self.solve[0]], self.bands[self.solve[1]],
                                              np.geomspace(*_T_TABLE[:2], _T_TABLE[2]))
        self.max_iterations = int(max_iterations)
        self.tolerance = check_positive("tolerance", tolerance)

    def _out_names(self):
        names = []
        for mag, label, err in zip(self.mag_cols, self.labels, self.err_cols, strict=True):
            names.append(mag + self.suffix)
            if self._has_errors(err):
                names.append(mag + self.suffix + "_err")
            names.append("A_" + band_label(label))
        for i, j in self.colours:
            base = f"{self.mag_cols[i]}-{self.mag_cols[j]}{self.suffix}"
            names.append(base)
            if self._has_errors(self.err_cols[i]) or self._has_errors(self.err_cols[j]):
                names.append(base + "_err")
        names += ["ebv_used", "av_used"]
        if self.rv_col is not None:
            names.append("rv_used")
        if self.spectrum != "fixed":
            names.append("teff_used")
        if self.spectrum == "colour":
            names.append("teff_iterations")
        names.append(FLAG_COLUMN)
        return names

    def _has_errors(self, err_col):
        return (err_col is not None or self.red_err_col is not None or self.red_err_const > 0
                or self.rv_err_col is not None or self.rv_err_const > 0)

    def _check_outputs(self):
        self.output_columns = self._out_names()
        clash = [c for c in self.output_columns if c in self.columns]
        if clash:
            raise InputError(
                f"output columns {clash} already exist in the input; choose another suffix "
                "or rename those columns"
            )

    def setup(self):
        """A JSON-ready description of this correction (for summaries and file metadata)."""
        return {
            "law": self._law_spec,
            "curve": self.curve.name,
            "citation": getattr(self.curve, "citation", ""),
            "r_v": self.rv_col or self.r_v,
            "bands": {
                lab: {"magnitude": m, "error": e}
                for lab, m, e in zip(self.labels, self.mag_cols, self.err_cols, strict=True)
            },
            "reddening": {
                "source": self.red_kind,
                "quantity": self.red_quantity,
                "column": self.red_col,
                "constant": self.red_const,
                "error_column": self.red_err_col,
            },
            "mode": "nonlinear" if self.nonlinear else "linear",
            "spectrum": self.spectrum,
            "temperature_K": self.temperature if self.spectrum == "fixed" else self.t_col,
            "flag_column": FLAG_COLUMN,
            "suffix": self.suffix,
        }

    # -- coefficients -------------------------------------------------------------------------
    def _coefficients(self, rv):
        """Coefficients for R_V = rv (cached; ``None`` means the set-up curve)."""
        key = None if rv is None else round(float(rv), 6)
        if key not in self._coeff_cache:
            curve = self.curve if key is None else self._make_curve(key)
            temps = np.geomspace(*_T_TABLE[:2], 25)
            if not self.nonlinear:
                self._coeff_cache[key] = _LinearCoefficients(
                    curve, self.bands, [self.temperature] if self.spectrum == "fixed" else temps, self.extrapolate
                )
            elif self.spectrum == "fixed":
                self._coeff_cache[key] = _FixedTemperature(curve, self.bands, self.temperature, self.extrapolate)
            else:
                self._coeff_cache[key] = _GridCoefficients(curve, self.bands, self.extrapolate)
        return self._coeff_cache[key]

    def _a_fixed_input(self, rv_node, red, quantity, temperature):
        """A_b at R_V = rv_node with the reddening held fixed in its own quantity."""
        a_v = red * rv_node if quantity == "ebv" else red
        return self._coefficients(rv_node).a_band(a_v, temperature)

    def _reddening_slope(self, red, rv, temperature):
        """dA_b/d(reddening) (n, n_band) in the reddening's own quantity (E(B-V) or A_V)."""
        if self.rv_col is None:
            a_v = red * self.r_v if self.red_quantity == "ebv" else red
            per_av = self._coefficients(None).slope(a_v, temperature)
            return per_av * self.r_v if self.red_quantity == "ebv" else per_av
        up = self._extinction(red + _DIFF_STEP, rv, temperature)[0]  # R_V per row: through the nodes
        down = self._extinction(red - _DIFF_STEP, rv, temperature)[0]
        return (up - down) / (2 * _DIFF_STEP)

    def _extinction(self, red, rv, temperature):
        """A_b (n, n_band), dA_b/dR_V (n, n_band) or None, inside-grid mask, R_V-ok mask."""
        n = red.size
        need_slope = self.rv_err_col is not None or self.rv_err_const > 0
        if self.rv_col is None:
            a_v = red * self.r_v if self.red_quantity == "ebv" else red
            a_band, inside = self._coefficients(None).a_band(a_v, temperature)
            slope = None
            if need_slope:
                lo_rv = max(self.r_v - _RV_HALF_STEP, self.rv_limits[0])
                hi_rv = min(self.r_v + _RV_HALF_STEP, self.rv_limits[1])
                a_lo, _ = self._a_fixed_input(lo_rv, red, self.red_quantity, temperature)
                a_hi, _ = self._a_fixed_input(hi_rv, red, self.red_quantity, temperature)
                slope = (a_hi - a_lo) / (hi_rv - lo_rv)
            return a_band, slope, inside, np.ones(n, bool)
        lo, hi = self.rv_limits
        rv_ok = np.isfinite(rv) & (rv >= lo) & (rv <= hi)
        a_band = np.full((n, len(self.bands)), np.nan)
        slope = np.full((n, len(self.bands)), np.nan)
        inside = np.ones(n, bool)
        nodes = lo + self.rv_step * np.floor((np.where(rv_ok, rv, lo) - lo) / self.rv_step)
        nodes = np.minimum(nodes, hi - self.rv_step)
        for node in np.unique(nodes[rv_ok]):
            rows = rv_ok & (nodes == node)
            lo_node, hi_node = float(node), float(min(node + self.rv_step, hi))
            t = temperature[rows]
            a_lo, in_lo = self._a_fixed_input(lo_node, red[rows], self.red_quantity, t)
            a_hi, in_hi = self._a_fixed_input(hi_node, red[rows], self.red_quantity, t)
            w = ((rv[rows] - lo_node) / (hi_node - lo_node))[:, None]
            a_band[rows] = (1 - w) * a_lo + w * a_hi
            slope[rows] = (a_hi - a_lo) / (hi_node - lo_node)
            inside[rows] = in_lo & in_hi
        return a_band, (slope if need_slope else None), inside, rv_ok

    # -- applying -----------------------------------------------------------------------------
    def _numeric(self, frame, col, flags):
        """Column as float64; text cells become NaN and set the non_numeric flag (or raise)."""
        values = _float_column(frame, col)
        if values is not None:
            return values
        series = _series(frame, col)
        values = pd.to_numeric(series, errors="coerce")
        blank = series.isna().to_numpy() | series.astype(str).str.strip().eq("").to_numpy()
        bad = values.isna().to_numpy() & ~blank
        if np.any(bad):
            if self.strict:
                first = int(np.flatnonzero(bad)[0])
                raise InputError(
                    f"column {col!r} has text {series.iloc[first]!r} in row {series.index[first]}, "
                    "where a number is needed (strict mode)"
                )
            flags[bad] |= FLAG_BITS["non_numeric"]
        return values.to_numpy(dtype=float, na_value=np.nan)

    def _reddening(self, frame, flags):
        n = len(frame)
        if self.red_kind == "constant":
            red = np.full(n, self.red_const)
        elif self.red_kind == "column":
            red = self._numeric(frame, self.red_col, flags)
        else:
            lon = self._numeric(frame, self.lon_col, flags)
            lat = self._numeric(frame, self.lat_col, flags)
            red = np.full(n, np.nan)
            good = np.isfinite(lon) & np.isfinite(lat)
            map_flags = np.zeros(n, np.uint8)
            if np.any(good):
                values, mflags = self.map.lookup(lon[good], lat[good], frame=self.frame)
                red[good] = np.asarray(values, float) * self.map_scale
                map_flags[good] = np.asarray(mflags, np.uint8)
            flags[good & ((map_flags != 0) | ~np.isfinite(red))] |= FLAG_BITS["map_coverage"]
        if self.red_err_col is not None:
            err = self._numeric(frame, self.red_err_col, flags)
        else:
            err = np.full(n, self.red_err_const)
        return red, err

    def correct(self, frame):
        """Correct one DataFrame; return the input columns followed by the output columns.

        The counts of the rows processed are added to :attr:`summary`.

        Parameters
        ----------
        frame : pandas.DataFrame
            With the columns given at set-up.

        Returns
        -------
        pandas.DataFrame
            Same index as ``frame``.
        """
        out = self._correct(frame)
        self.summary.add(out)
        return out

    def correct_arrays(self, table):
        """Correct one table; return only the output columns, as a dict of numpy arrays.

        The same numbers as :meth:`correct` without building a DataFrame: the
        streaming path (:mod:`redcorr.io.batch`) passes the Arrow tables it
        reads and joins the result to the input columns itself. The counts
        are added to :attr:`summary`.

        Parameters
        ----------
        table : pandas.DataFrame or pyarrow.Table
            With the columns given at set-up.

        Returns
        -------
        dict
            Output column name → 1-d array, in :attr:`output_columns` order.
        """
        out = self._arrays(table)
        self.summary.add(out)
        return out

    def _correct(self, frame):
        added = pd.DataFrame(self._arrays(frame), index=frame.index)
        return pd.concat([frame, added], axis=1)

    def _arrays(self, frame):
        names = list(frame.columns) if isinstance(frame, pd.DataFrame) else list(frame.column_names)
        missing_cols = [c for c in self._used_columns() if c not in names]
        if missing_cols:
            raise InputError(f"columns {missing_cols} are missing; the columns are {names}")
        n = len(frame)
        nb = len(self.bands)
        flags = np.zeros(n, np.int64)
        mags = np.stack([self._numeric(frame, c, flags) for c in self.mag_cols], axis=-1).reshape(n, nb)
        errs = np.stack(
            [self._numeric(frame, c, flags) if c is not None else np.zeros(n) for c in self.err_cols], axis=-1
        ).reshape(n, nb)
        red, red_err = self._reddening(frame, flags)
        if self.rv_col is not None:
            rv = self._numeric(frame, self.rv_col, flags)
            flags[~np.isfinite(rv)] |= FLAG_BITS["missing"]
        else:
            rv = np.full(n, self.r_v)
        rv_err = self._numeric(frame, self.rv_err_col, flags) if self.rv_err_col else np.full(n, self.rv_err_const)
        flags[~np.isfinite(red)] |= FLAG_BITS["missing"]
        flags[np.any(~np.isfinite(mags), axis=1)] |= FLAG_BITS["missing"]
        ebv = red if self.red_quantity == "ebv" else red / rv
        flags[ebv < 0] |= FLAG_BITS["negative_reddening"]
        red_safe = np.where(np.isfinite(red), red, 0.0)

        if self.spectrum == "column":
            temperature = self._numeric(frame, self.t_col, flags)
            flags[~np.isfinite(temperature)] |= FLAG_BITS["missing"]
            t_safe = np.where(np.isfinite(temperature), temperature, self.temperature)
            a_band, slope, inside, rv_ok = self._extinction(red_safe, rv, t_safe)
            iterations = None
        elif self.spectrum == "colour":
            a_band, slope, inside, rv_ok, temperature, iterations, converged = self._solve(mags, red_safe, rv)
            flags[~converged] |= FLAG_BITS["not_converged"]
        else:
            temperature = np.full(n, self.temperature)
            a_band, slope, inside, rv_ok = self._extinction(red_safe, rv, temperature)
            iterations = None
        flags[~inside] |= FLAG_BITS["outside_grid"]
        flags[~rv_ok] |= FLAG_BITS["outside_curve"]
        if self._outside_curve_all:
            flags |= FLAG_BITS["outside_curve"]
        a_band[~np.isfinite(red) | ~rv_ok] = np.nan

        # R_b = dA_b/dE (or dA_b/dA_V) and the R_V effect, for the uncertainties (None: no such term)
        red_term = rv_term = None
        if np.any(red_err != 0):
            t_used = np.where(np.isfinite(temperature), temperature, self.temperature)
            red_term = self._reddening_slope(red_safe, rv, t_used) * red_err[:, None]
        if slope is not None:
            rv_term = slope * rv_err[:, None]
        variance = errs**2
        for term in (red_term, rv_term):
            if term is not None:
                variance += term**2

        result = {}
        dered = mags - a_band
        mag_err = np.sqrt(variance)
        for b, (mag, label, err_col) in enumerate(zip(self.mag_cols, self.labels, self.err_cols, strict=True)):
            result[mag + self.suffix] = dered[:, b]
            if self._has_errors(err_col):
                result[mag + self.suffix + "_err"] = mag_err[:, b]
            result["A_" + band_label(label)] = a_band[:, b]
        for i, j in self.colours:
            base = f"{self.mag_cols[i]}-{self.mag_cols[j]}{self.suffix}"
            result[base] = dered[:, i] - dered[:, j]
            if self._has_errors(self.err_cols[i]) or self._has_errors(self.err_cols[j]):
                colour_var = errs[:, i] ** 2 + errs[:, j] ** 2
                for term in (red_term, rv_term):
                    if term is not None:
                        colour_var += (term[:, i] - term[:, j]) ** 2
                result[base + "_err"] = np.sqrt(colour_var)
        valid = np.isfinite(red) & rv_ok
        result["ebv_used"] = np.where(valid, ebv, np.nan)
        result["av_used"] = np.where(valid, red * rv if self.red_quantity == "ebv" else red, np.nan)
        if self.rv_col is not None:
            result["rv_used"] = np.where(rv_ok, rv, np.nan)
        if self.spectrum != "fixed":
            result["teff_used"] = temperature
        if self.spectrum == "colour":
            result["teff_iterations"] = iterations
        result[FLAG_COLUMN] = flags
        return result

    def _used_columns(self):
        cols = list(self.mag_cols) + [c for c in self.err_cols if c]
        for c in (self.red_col, self.red_err_col, self.rv_col, self.rv_err_col, self.t_col):
            if c:
                cols.append(c)
        if self.red_kind == "map":
            cols += [self.lon_col, self.lat_col]
        return cols

    def numeric_columns(self):
        """Input columns that must hold numbers (readers may parse them as float64 up front)."""
        return list(dict.fromkeys(self._used_columns()))

    def _solve(self, mags, red, rv):
        """Iterate temperature ↔ extinction until A_b settles (see the module Notes)."""
        n = red.size
        i, j = self.solve
        temperature = np.full(n, self.temperature)
        a_band, slope, inside, rv_ok = self._extinction(red, rv, temperature)
        iterations = np.zeros(n, np.int64)
        active = np.isfinite(mags[:, i]) & np.isfinite(mags[:, j]) & rv_ok
        colour_ok = np.ones(n, bool)
        converged = ~active
        for _ in range(self.max_iterations):
            if not np.any(active):
                break
            idx = np.flatnonzero(active)
            colour = (mags[idx, i] - a_band[idx, i]) - (mags[idx, j] - a_band[idx, j]) - self.colour_offset
            t_new, c_in = self._colour_table.temperature_at(colour)
            a_new, s_new, in_new, _ = self._extinction(red[idx], rv[idx], t_new)
            change = np.max(np.abs(a_new - a_band[idx]), axis=1)
            temperature[idx] = t_new
            a_band[idx] = a_new
            if slope is not None:
                slope[idx] = s_new
            inside[idx] = in_new
            colour_ok[idx] = c_in
            iterations[idx] += 1
            done = change <= self.tolerance
            converged[idx[done]] = True
            active[idx[done]] = False
        inside &= colour_ok
        return a_band, slope, inside, rv_ok, temperature, iterations, converged


def correct_dataframe(frame, bands, **options):
    """Correct a pandas DataFrame in memory.

    Parameters
    ----------
    frame : pandas.DataFrame
    bands : list of str or Band
    **options
        As for :class:`Correction` (``columns`` is taken from ``frame``).

    Returns
    -------
    out : pandas.DataFrame
        Input columns plus the output columns (see the module docstring).
    summary : dict
        As :meth:`RunSummary.to_dict`.

    Warns
    -----
    OutOfRangeWarning
        If some rows fell outside the coefficient grid (clamped, flagged).
    """
    corr = Correction(bands, columns=list(frame.columns), **options)
    out = corr.correct(frame)
    summary = corr.summary.finish()
    warn_summary(summary)
    return out, summary.to_dict()


def warn_summary(summary):
    """Warn (`OutOfRangeWarning`) about rows corrected with clamped or extrapolated coefficients."""
    outside = summary.flagged["outside_grid"]
    if outside:
        warnings.warn(
            f"{outside} row(s) lie outside the coefficient grid (A_V or temperature); the grid edge "
            f"was used for them (flag bit {FLAG_BITS['outside_grid']})",
            OutOfRangeWarning,
            stacklevel=3,
        )


def correct_dask(ddf, correction):
    """Correct a Dask DataFrame partition by partition; returns a lazy Dask DataFrame.

    Parameters
    ----------
    ddf : dask.dataframe.DataFrame
    correction : Correction
        Set up with ``columns=list(ddf.columns)``; it is sent to the workers.
        Its :attr:`~Correction.summary` is not updated (the partitions run
        elsewhere); summarise the result with :func:`summarise_dask`.

    Returns
    -------
    dask.dataframe.DataFrame
        The same rows and columns as :meth:`Correction.correct` gives.
    """
    meta = correction._correct(ddf._meta)
    return ddf.map_partitions(correction._correct, meta=meta)


def summarise_dask(result, correction, also=(), **compute_options):
    """A :class:`RunSummary` of a corrected Dask DataFrame.

    Parameters
    ----------
    result : dask.dataframe.DataFrame
        From :func:`correct_dask`.
    correction : Correction
    also : list of dask collections
        Computed in the same pass (e.g. the delayed write of ``result``), so
        the partitions are corrected only once.
    **compute_options
        Passed to :func:`dask.compute` (e.g. ``scheduler=client``).
    """
    import dask  # noqa: PLC0415 - optional dependency

    flags = result[FLAG_COLUMN]
    ebv = result["ebv_used"]
    counts = {name: (flags & bit).astype(bool).sum() for name, bit in FLAG_BITS.items()}
    counts["any"] = (flags != 0).sum()
    extra = {"rows": flags.count(), "ebv_min": ebv.min(), "ebv_max": ebv.max()}
    if "teff_iterations" in result.columns:
        extra["it_max"] = result["teff_iterations"].max()
        extra["it_sum"] = result["teff_iterations"].sum()
    with warnings.catch_warnings():  # a delayed CSV write mixes graph types; harmless here
        warnings.filterwarnings("ignore", message="Computing mixed collections", category=UserWarning)
        counts, extra, *_ = dask.compute(counts, extra, *also, **compute_options)
    summary = RunSummary(correction.setup())
    summary.rows = int(extra["rows"])
    summary.flagged = {k: int(v) for k, v in counts.items()}
    summary.ebv_min, summary.ebv_max = float(extra["ebv_min"]), float(extra["ebv_max"])
    if "it_max" in extra:
        summary.iterations_max, summary.iterations_sum = int(extra["it_max"]), int(extra["it_sum"])
    return summary

r"""Each star's reddening fitted from its own photometry, table by table: :class:`CatalogFit`.

The fit of one star is :mod:`redcorr.photometric_reddening` (the model, the
grid posterior, the floor, the flags); this module reads the stars from the
rows of a table, as a :class:`~redcorr.correction.Correction` does (the
same column guessing, the same treatment of text cells and bad positions),
adds the optional priors of each row, and writes the results as columns,
so that the stream and Dask engines run it exactly like a correction.

Output columns (exactly these, in this order)
---------------------------------------------
``ebv_fit``, ``ebv_fit_err``
    Posterior mean and standard deviation of E(B−V), mag.
``av_fit``, ``av_fit_err``
    The same of A_V = R_V E(B−V).
``teff_fit``, ``teff_fit_err``
    The same of T_eff along the intrinsic-colour locus, K.
``rv_fit``, ``rv_fit_err``
    The same of R_V (only when R_V is free).
``chi2_fit``
    The smallest χ² over the grid (the offset marginalised).
``nbands_fit``
    Bands used (finite magnitude and error > 0).
``fit_flags``
    Bit mask: the bits of :data:`redcorr.photometric_reddening.FIT_FLAGS`
    (0–7) and those of the table (8, 9) in :data:`CATALOG_FIT_FLAGS`.

The output feeds a correction unchanged:
``redcorr correct OUT.csv FINAL.csv --ebv-col ebv_fit --red-err-col ebv_fit_err``.

Priors from a dust map
----------------------
A map gives each row a prior on E(B−V) (a map of A_V is divided by the
curve's R_V). Its uncertainty is
σ_map² = σ_d² + (f E_map)² + σ_min², with σ_d the spread over the row's
distance distribution (distance-resolved maps with a distance error or a
parallax), f = ``prior_error`` (default :data:`PRIOR_ERROR`, 10 %, for the
calibration of a map: common practice, no source) and σ_min =
:data:`PRIOR_SIGMA_MIN` (0.01 mag, so that a map value of 0 still allows a
little reddening).

* A map of whole sight lines (2D), or a distance-resolved map without a
  distance column: a star lies somewhere along the line, so the map is an
  **upper bound**, E(B−V) ≤ E_map + 2 σ_map. (For a distance-resolved map
  the value at its last distance, which misses any dust beyond it.)
* A distance-resolved map at the row's distance: a **Gaussian** prior,
  N(E_map(d), σ_map²).

A row whose map value is missing, or that lies beyond the map's last
distance (where the map's value is only a lower limit), or has no usable
distance, is fitted without a prior and flagged ``no_prior``.

T_eff prior: with ``teff_column`` and ``teff_error_column``, a Gaussian on
T_eff per row (a row with NaN in either has none).
"""

from dataclasses import dataclass

import numpy as np

from redcorr._constants import CATALOG_FIT_FLAGS
from redcorr._validate import check_finite, check_positive, shown
from redcorr.correction.columns import (
    ColumnPlan,
    band_columns,
    magnitude_error,
    reddening_columns,
    require_column,
)
from redcorr.correction.flags import CORRECTION_FLAGS, RunSummary
from redcorr.correction.options import BandSelection, ReddeningSource
from redcorr.correction.rows import TableJob
from redcorr.exceptions import InputError
from redcorr.photometric_reddening import DEFAULT_FLOOR, ReddeningFitGrid, warn_flagged

__all__ = ["CATALOG_FIT_FLAGS", "PRIOR_ERROR", "PRIOR_SIGMA_MIN", "CatalogFit", "FitOptions", "FitSummary"]

FIT_FLAG_COLUMN = "fit_flags"
"""str: the output column of the flag bits (:data:`CATALOG_FIT_FLAGS`)."""

PRIOR_ERROR = 0.1
"""Default relative uncertainty of a prior map's E(B−V) (module docstring, "Priors from a dust map")."""

PRIOR_SIGMA_MIN = 0.01
"""mag: the smallest σ of a map prior (module docstring)."""

_PRIOR_BOUND_SIGMAS = 2.0
"""A map of whole sight lines bounds E(B−V) at its value plus this many σ_map."""

_STAT_COLUMNS = (("ebv", "ebv_fit"), ("av", "av_fit"), ("teff", "teff_fit"), ("rv", "rv_fit"))


@dataclass(frozen=True)
class FitOptions:
    """What a :class:`CatalogFit` needs: bands, locus, dust, priors (checked; no names to resolve).

    Build it from names with :func:`redcorr.io.correction.fit_options`.

    Parameters
    ----------
    bands : BandSelection
        The bands and their columns (``colours`` must be empty).
    locus : redcorr.intrinsic.ColourLocus
        The intrinsic-colour table; it must cover every band.
    curve : redcorr.curves.DustCurve
        The dust law at a fixed R_V, or (with ``r_v_range``) at any R_V
        through ``curve_at``.
    curve_at : callable, optional
        ``curve_at(r_v) -> DustCurve``: the law at another R_V (for a free R_V).
    r_v_range : (float, float), optional
        Free R_V with a flat prior over this range; None fixes it at ``curve.r_v``.
    floor : float or sequence of float
        Model-uncertainty floor per band, mag (:data:`~redcorr.photometric_reddening.DEFAULT_FLOOR`).
    teff_column, teff_error_column : str, optional
        A Gaussian prior on T_eff per row (K); both or neither.
    prior : ReddeningSource, optional
        A dust map (``dust_map``, with its position and distance columns)
        giving a prior on E(B−V) (module docstring).
    prior_error : float
        Relative uncertainty of the map's values, >= 0.
    ebv_max : float
        Largest E(B−V) of the grid, mag.
    extrapolate : bool
        Let the curve extrapolate beyond its wavelengths (with a warning).
    strict : bool
        Text in a number column, or an error <= 0, raises instead of being
        flagged or leaving the band out.
    """

    bands: BandSelection
    locus: object
    curve: object
    curve_at: object = None
    r_v_range: tuple = None
    floor: object = DEFAULT_FLOOR
    teff_column: str = None
    teff_error_column: str = None
    prior: ReddeningSource = None
    prior_error: float = PRIOR_ERROR
    ebv_max: float = 3.0
    extrapolate: bool = False
    strict: bool = False

    def __post_init__(self):
        if not isinstance(self.bands, BandSelection):
            raise InputError(f"bands={self.bands!r} is not a BandSelection")
        if self.bands.colours:
            raise InputError(f"colours={list(self.bands.colours)} are for a correction; the fit writes none")
        if not hasattr(self.locus, "subset"):
            raise InputError(f"locus={self.locus!r} is not an intrinsic-colour table (a ColourLocus)")
        if self.r_v_range is not None:
            if self.curve_at is None:
                raise InputError(f"r_v_range={shown(tuple(self.r_v_range))} needs a law that takes R_V "
                                 f"({self.curve.name!r} has a fixed R_V)")
            lo, hi = (float(v) for v in self.r_v_range)
            limits = getattr(self.curve, "r_v_limits", None)
            if not hi > lo or (limits is not None and (lo < limits[0] or hi > limits[1])):
                allowed = f"within the law's {limits[0]:g}-{limits[1]:g}" if limits is not None else "increasing"
                raise InputError(f"r_v_range={shown((lo, hi))} must be two increasing values {allowed}")
            object.__setattr__(self, "r_v_range", (lo, hi))
        if (self.teff_column is None) != (self.teff_error_column is None):
            raise InputError(f"teff_column={self.teff_column!r} and teff_error_column={self.teff_error_column!r}: "
                             "a T_eff prior needs both (a value and its error, K)")
        if self.prior is not None and (not isinstance(self.prior, ReddeningSource) or self.prior.kind != "map"):
            raise InputError(f"prior={self.prior!r} must be a ReddeningSource with a dust_map")
        if check_finite("prior_error", self.prior_error) < 0:
            raise InputError(f"prior_error={self.prior_error!r} must be a fraction >= 0")
        check_positive("ebv_max", self.ebv_max)

    @property
    def r_v_free(self):
        """bool: whether R_V is an unknown of the fit."""
        return self.r_v_range is not None


class FitSummary(RunSummary):
    """The counts of a fitting run: a :class:`~redcorr.correction.RunSummary` of ``fit_flags`` and ``ebv_fit``."""

    FLAG_BITS = CATALOG_FIT_FLAGS
    FLAG_COLUMN = FIT_FLAG_COLUMN
    EBV_COLUMN = "ebv_fit"

    def warn(self):
        """Warn once (`FitWarning`) with the counts of the flags that could mislead."""
        warn_flagged(self.flagged, self.rows, stacklevel=3)


class CatalogFit(TableJob):
    """Fit each row's E(B−V) (and T_eff, R_V) from its magnitudes; set up once, applied to any number of tables.

    Parameters
    ----------
    columns : list of str
        The columns of the tables to come; magnitude and error columns are
        checked or guessed as for a correction
        (:mod:`redcorr.correction.columns`); every band needs an error column.
    options : FitOptions

    Attributes
    ----------
    labels, mag_cols, err_cols : list
        Band labels and their magnitude and error columns.
    locus : redcorr.intrinsic.ColourLocus
        The intrinsic colours of the bands, in order.
    grid : redcorr.photometric_reddening.ReddeningFitGrid
        The model grid, built once.
    output_columns : list of str
        The columns added (module docstring).
    summary : FitSummary
    describe_row : callable or None
        As :attr:`redcorr.correction.Correction.describe_row`.

    Raises
    ------
    InputError
        A band without a magnitude or error column, a band the colour table
        does not cover (naming the bands it covers), a column that does not
        exist.
    """

    def __init__(self, columns, options):
        if not isinstance(options, FitOptions):
            raise InputError(f"options={options!r} is not a FitOptions")
        self.columns = [str(c) for c in columns]
        self.options = options
        self.source, self.strict = options.prior, options.strict
        mags, errs, kinds = band_columns(self.columns, options.bands)
        self.labels = list(options.bands.labels)
        missing = [label for label, err in zip(self.labels, errs, strict=True) if err is None]
        if missing:
            raise InputError(f"no error column found for band(s) {missing}; the fit weighs each magnitude by its "
                             f"error: name them (e.g. --err {missing[0]}=COLUMN); the columns are {self.columns}")
        prior = reddening_columns(self.columns, options.prior) if options.prior is not None else {}
        self.plan = ColumnPlan(
            mag_cols=mags, err_cols=errs, err_kinds=kinds,
            red_kind=prior.pop("red_kind", "none"), red_quantity=prior.pop("red_quantity", "ebv"), **prior,
            t_col=require_column(self.columns, options.teff_column, "teff_column"),
            t_err_col=require_column(self.columns, options.teff_error_column, "teff_error_column"),
        )  # fmt: skip
        self.mag_cols, self.err_cols = list(mags), list(errs)
        self.locus = options.locus.subset(self.labels)
        self.curve = options.curve
        if options.r_v_free:
            curve, grid_rv = options.curve_at, {"r_v_range": options.r_v_range}
        else:
            curve, grid_rv = options.curve, {}
        self.grid = ReddeningFitGrid(
            options.bands.bands, self.locus.teff, self.locus.magnitudes, curve, floor=options.floor,
            ebv_max=options.ebv_max, extrapolate=options.extrapolate, **grid_rv,
        )
        self.output_columns = self._out_names()
        self.summary = FitSummary(self.setup())
        self.describe_row = None

    def _out_names(self):
        names = []
        for stat, column in _STAT_COLUMNS:
            if stat != "rv" or self.options.r_v_free:
                names += [column, column + "_err"]
        return names + ["chi2_fit", "nbands_fit", FIT_FLAG_COLUMN]

    def _prior_kind(self):
        """``"gaussian"`` (a distance-resolved map at each row's distance), ``"bound"`` or None."""
        if self.options.prior is None:
            return None
        return "gaussian" if self.plan.dist_kind is not None else "bound"

    def setup(self):
        """A JSON-ready description of this fit (for summaries and file metadata)."""
        options, plan = self.options, self.plan
        prior = None
        if options.prior is not None:
            prior = {"map": options.prior.dust_map.name, "kind": self._prior_kind(),
                     "relative_error": options.prior_error, "sigma_min": PRIOR_SIGMA_MIN,
                     "positions": [plan.lon_col, plan.lat_col, plan.frame],
                     "distance": {"kind": plan.dist_kind, "column": plan.dist_col, "error_column": plan.dist_err_col}
                     if plan.dist_kind is not None else None}
            if plan.dist_kind == "parallax" and plan.dist_err_col is not None:
                prior["distance"]["prior_length_pc"] = self._prior_length()
        return {
            "job": "fit",
            "curve": self.curve.name,
            "citation": getattr(self.curve, "citation", ""),
            "r_v": list(options.r_v_range) if options.r_v_free else float(self.curve.r_v),
            "bands": {
                lab: {"magnitude": m, "error": e}
                for lab, m, e in zip(self.labels, self.mag_cols, self.err_cols, strict=True)
            },
            "colours": {"table": self.locus.name, "citation": self.locus.citation,  # teff_K: where it has every band
                        "teff_K": [float(self.grid.band_teff[:, 0].max()), float(self.grid.band_teff[:, 1].min())]},
            "floor_mag": [float(f) for f in self.grid.floor],
            "ebv_max": float(self.grid.ebv[-1]),
            "teff_prior": [plan.t_col, plan.t_err_col] if plan.t_col else None,
            "prior": prior,
            "flag_column": FIT_FLAG_COLUMN,
        }

    def numeric_columns(self):
        """Input columns that must hold numbers (readers may parse them as float64 up front)."""
        return list(dict.fromkeys(self.plan.used()))

    def written_columns(self, keep):
        """The columns of a result: ``keep`` then :attr:`output_columns`; a kept output name is refused."""
        keep = [str(c) for c in keep]
        clash = [c for c in self.output_columns if c in keep]
        if clash:
            raise InputError(f"output columns {clash} already exist in the input (is it fitted already?); leave "
                             "them out of the copied columns (keep_columns; --keep on the command line)")
        return keep + self.output_columns

    def _arrays(self, table):
        self._check_columns(table)
        plan, n, nb = self.plan, len(table), len(self.mag_cols)
        read = np.zeros(n, np.int64)  # CORRECTION_FLAGS bits of the reading (text cells, the map)
        mags = np.stack([self._numeric(table, c, read) for c in self.mag_cols], axis=-1).reshape(n, nb)
        errs = np.stack([magnitude_error(self._numeric(table, c, read), kind)
                         for c, kind in zip(self.err_cols, plan.err_kinds, strict=True)], axis=-1).reshape(n, nb)
        mags[np.isinf(mags)] = np.nan  # an infinite magnitude is a missing one
        if self.strict:
            for b, col in enumerate(self.err_cols):
                self._refuse(np.isfinite(mags[:, b]) & ~(errs[:, b] > 0), col, errs[:, b],
                             "an error > 0 mag is needed")
        priors = {}
        if plan.t_col is not None:
            teff, teff_err = self._numeric(table, plan.t_col, read), self._numeric(table, plan.t_err_col, read)
            self._refuse(teff_err <= 0, plan.t_err_col, teff_err, "an error > 0 K is needed")
            priors["teff_prior"] = (teff, np.where(teff_err > 0, teff_err, np.nan))  # no prior from such a row
            if self.strict:  # (else flagged teff_edge by the fit)
                low, high = self.grid.teff_cover(mags, errs)
                outside = (teff_err > 0) & ((teff < low) | (teff > high))
                if np.any(outside):
                    k = int(np.flatnonzero(outside)[0])
                    self._refuse(outside, plan.t_col, teff, f"the colour table has the row's bands for "
                                 f"{low[k]:.0f}-{high[k]:.0f} K only")
        flags = np.zeros(n, np.int64)
        if plan.red_kind == "map":
            no_prior = self._map_prior(table, read, priors)
            flags[no_prior] |= CATALOG_FIT_FLAGS["no_prior"]
        flags[(read & CORRECTION_FLAGS["non_numeric"]) != 0] |= CATALOG_FIT_FLAGS["non_numeric"]
        fit = self.grid.fit(mags, errs, warn=False, **priors)
        result = {}
        for stat, column in _STAT_COLUMNS:
            values = getattr(fit, stat)
            if values is not None:
                result[column], result[column + "_err"] = values["mean"], values["std"]
        result["chi2_fit"] = fit.chi2
        result["nbands_fit"] = fit.n_bands
        result[FIT_FLAG_COLUMN] = fit.flags | flags
        return result

    def _map_prior(self, table, read, priors):
        """Put the map's prior of each row into ``priors``; return the rows left without one."""
        ebv, err = self.reddening(table, read)
        if self.plan.red_quantity == "av":
            ebv, err = ebv / self.curve.r_v, err / self.curve.r_v
        lost = CORRECTION_FLAGS["map_coverage"] | CORRECTION_FLAGS["no_distance"]
        if self._prior_kind() == "gaussian":
            lost |= CORRECTION_FLAGS["beyond_map"]  # beyond the map's reach its value is only a lower limit
        none = ~np.isfinite(ebv) | ((read & lost) != 0)
        sigma = np.sqrt(err**2 + (self.options.prior_error * ebv) ** 2 + PRIOR_SIGMA_MIN**2)
        ebv, sigma = np.where(none, np.nan, ebv), np.where(none, np.nan, sigma)
        if self._prior_kind() == "gaussian":
            priors["ebv_prior"] = (ebv, sigma)
        else:
            priors["ebv_upper"] = np.maximum(ebv + _PRIOR_BOUND_SIGMAS * sigma, 0.0)
        return none


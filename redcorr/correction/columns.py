"""Which input column holds what: names checked or guessed, and cells read as numbers.

A column named in the options must exist; one left out is guessed from
common names, case-insensitively (the first match in the order below wins):

* magnitude of band ``kw-v``: ``kw-v``, ``kw-v_mag``, ``mag_kw-v``, then the
  same with the label made column-safe (``kw_v`` ...), then the band letter
  (``vmag``, ``v_mag``, ``mag_v``, ``v``); ``l`` and ``b`` are not taken
  as magnitudes when both exist (they are Galactic coordinates);
  A band's letter also stands for the names the archives give it: ``K``
  for ``Ks`` (VizieR's 2MASS ``Kmag``);
* then the column names of the archives catalogs come from
  (:data:`ARCHIVE_COLUMNS`): the Gaia archive (``phot_g_mean_mag``, ...),
  the 2MASS point-source table (``j_m``, ``j_msigcom``), Pan-STARRS
  (``gMeanPSFMag``, ``gMeanPSFMagErr``), SDSS (``psfMag_g``,
  ``psfMagErr_g``) and WISE (``w1mpro``, ``w1sigmpro``), each for the
  library's bands of that survey;
* its error: ``e_MAG``, ``MAG_err``, ``MAG_error``, ``err_MAG``, ``MAGerr``,
  ``sigma_MAG``, ``MAG_sigma``, ``eMAG``, ``MAG_e``, for the magnitude
  column, the column-safe label and the band letter, then the archive's
  error column. The Gaia archive gives no magnitude error but the flux's
  signal-to-noise ratio (``phot_g_mean_flux_over_error``); the error is then
  2.5/ln 10 divided by it (:func:`magnitude_error`), and
  :attr:`ColumnPlan.err_kinds` says so;
* E(B-V): :data:`EBV_NAMES`, else A_V: :data:`AV_NAMES`; R_V: ``r_v``,
  ``rv``; temperature: ``teff``, ``t_eff``, ``temperature``;
* positions for a dust map: RA/Dec (:data:`RA_NAMES`, :data:`DEC_NAMES`),
  else l/b (:data:`GLON_NAMES`, :data:`GLAT_NAMES`).

A distance or parallax column for a distance-resolved map is never
guessed: it is used only when named.
"""

import re
from dataclasses import dataclass

import numpy as np
import pandas as pd

from redcorr.exceptions import InputError

__all__ = [
    "AV_NAMES",
    "DEC_NAMES",
    "EBV_NAMES",
    "GLAT_NAMES",
    "GLON_NAMES",
    "RA_NAMES",
    "ARCHIVE_COLUMNS",
    "ColumnPlan",
    "band_label",
    "column_names",
    "find_column",
    "float_column",
    "guessed_band_columns",
    "guessed_columns",
    "magnitude_error",
    "band_columns",
    "plan_columns",
    "require_column",
    "reddening_columns",
    "text_column",
]

EBV_NAMES = ("ebv", "e_b_v", "e(b-v)", "ebmv", "e_bv", "reddening", "ebv_map")
AV_NAMES = ("a_v", "av", "a_v_mag", "extinction_v")
RA_NAMES = ("ra", "ra_deg", "raj2000", "ra_icrs", "alpha")
DEC_NAMES = ("dec", "dec_deg", "dej2000", "decj2000", "de_icrs", "delta")
GLON_NAMES = ("glon", "l", "gal_l", "lii")
GLAT_NAMES = ("glat", "b", "gal_b", "bii")
_TEFF_NAMES = ("teff", "t_eff", "temperature")
_ERR_PATTERNS = ("e_{}", "{}_err", "{}_error", "err_{}", "{}err", "sigma_{}", "{}_sigma", "e{}", "{}_e")
_LETTER_ALIASES = {"ks": ("k",)}
"""Other names of a band letter in catalogs (lower case): VizieR's 2MASS tables call Ks ``Kmag``."""

ARCHIVE_COLUMNS = {
    "gaiadr2": ("phot_{}_mean_mag", "phot_{}_mean_flux_over_error", "flux_over_error"),
    "gaiadr3": ("phot_{}_mean_mag", "phot_{}_mean_flux_over_error", "flux_over_error"),
    "twomass": ("{}_m", "{}_msigcom", "mag"),
    "panstarrs": ("{}MeanPSFMag", "{}MeanPSFMagErr", "mag"),
    "sdss2010": ("psfMag_{}", "psfMagErr_{}", "mag"),
    "sdss2010noatm": ("psfMag_{}", "psfMagErr_{}", "mag"),
    "wise2010": ("{}mpro", "{}sigmpro", "mag"),
}
"""Band-name prefix → (magnitude column, error column, what the error column holds) of the archive
those bands come from, ``{}`` standing for the band's letter in lower case (``ks`` as ``k``):
the Gaia archive's source table, the 2MASS point-source catalogue, the Pan-STARRS mean-object
table, the SDSS photometric catalog and the WISE source catalogs (their published column names,
common practice, no source). ``"mag"``: an error in mag; ``"flux_over_error"``: the flux's
signal-to-noise ratio (:func:`magnitude_error`)."""

_MAG_ERROR_PER_FLUX_SNR = 2.5 / np.log(10.0)
"""dm = 2.5/ln 10 · dF/F: a magnitude's error from the flux's relative error, to first order."""


def band_label(name):
    """Column-safe label of a band name: runs of other characters become ``_``.

    Examples
    --------
    >>> band_label("kw-v")
    'kw_v'
    >>> band_label("tophat:3.6:0.4")
    'tophat_3_6_0_4'
    """
    return re.sub(r"[^0-9A-Za-z]+", "_", str(name)).strip("_")


def find_column(columns, candidates):
    """The first column matching a candidate name, case-insensitively, or None."""
    lower = {}
    for c in columns:
        lower.setdefault(str(c).lower(), c)
    for cand in candidates:
        if cand.lower() in lower:
            return lower[cand.lower()]
    return None


def require_column(columns, name, what):
    """``name`` if it is one of ``columns`` (None stays None); else an InputError naming ``what``."""
    if name is None:
        return None
    if name not in columns:
        raise InputError(f"{what}={name!r} is not a column of the input; the columns are {list(columns)}")
    return name


def _short_name(label):
    """The band letter in names such as ``kw-v``, ``bessell-V``, ``sdss2010-g``."""
    parts = re.split(r"[-_:]", str(label))
    return parts[-1] if len(parts) > 1 else None


def _letters(label):
    """The band letter of ``label`` and its other names (:data:`_LETTER_ALIASES`), or ()."""
    short = _short_name(label)
    return (short, *_LETTER_ALIASES.get(short.lower(), ())) if short else ()


def _archive(label):
    """(magnitude column, error column, error kind) of the archive ``label``'s band comes from, or None."""
    prefix, sep, _ = str(label).rpartition("-")
    if not sep or prefix.lower() not in ARCHIVE_COLUMNS:
        return None
    mag, err, kind = ARCHIVE_COLUMNS[prefix.lower()]
    letter = _letters(label)[-1].lower()
    return mag.format(letter), err.format(letter), kind


def _mag_candidates(label):
    out = []
    for stem in (label, band_label(label)):
        out += [stem, f"{stem}_mag", f"mag_{stem}"]
    for short in _letters(label):
        out += [f"{short}mag", f"{short}_mag", f"mag_{short}", short]
    archive = _archive(label)
    if archive:
        out.append(archive[0])
    return list(dict.fromkeys(out))


def _err_candidates(mag, label):
    stems = [mag, band_label(label), *_letters(label)]
    return [p.format(s) for s in stems for p in _ERR_PATTERNS]


def magnitude_error(values, kind="mag"):
    """A magnitude's error from an error column of the given kind.

    Parameters
    ----------
    values : array_like
        The error column's values.
    kind : {"mag", "flux_over_error"}
        ``"mag"``: already an error in mag, returned as it is;
        ``"flux_over_error"``: the flux's signal-to-noise ratio F/σ_F, which
        gives σ_m = 2.5/ln 10 / (F/σ_F) to first order in σ_F/F.

    Returns
    -------
    ndarray
        The error in mag; NaN where a signal-to-noise ratio is ≤ 0 or NaN
        (no measured flux, so no magnitude error).

    References
    ----------
    .. [1] σ_m = (2.5/ln 10) σ_F/F, the first-order propagation of m = −2.5 log₁₀ F
           (common practice, no source).

    Examples
    --------
    >>> print(np.round(magnitude_error([1000.0, 100.0, 0.0], "flux_over_error"), 6))
    [0.001086 0.010857      nan]
    """
    values = np.asarray(values, dtype=float)
    if kind == "mag":
        return values
    if kind == "flux_over_error":
        positive = values > 0
        return np.where(positive, _MAG_ERROR_PER_FLUX_SNR / np.where(positive, values, 1.0), np.nan)
    raise InputError(f"kind={kind!r} is not allowed; use 'mag' or 'flux_over_error'")


@dataclass(frozen=True)
class ColumnPlan:
    """The input columns a correction reads, found once from the table's column names.

    Attributes
    ----------
    mag_cols, err_cols : tuple
        Magnitude and error column of each band (an error column may be None).
    err_kinds : tuple
        What each error column holds, for :func:`magnitude_error`: ``"mag"``,
        or ``"flux_over_error"`` (the Gaia archive's flux signal-to-noise).
    red_kind : {"constant", "column", "map"}
    red_quantity : {"ebv", "av"}
        What the reddening source gives.
    red_col, red_err_col : str or None
        Column of the reddening and of its σ.
    lon_col, lat_col, frame : str or None
        Positions looked up in the dust map, and their frame.
    dist_kind : {"distance", "parallax"} or None
        What ``dist_col`` holds (pc or mas), for a distance-resolved map;
        None without one, or for a map without distances.
    dist_col, dist_err_col : str or None
        Column of the distance (or parallax) and of its σ.
    rv_col, rv_err_col, t_col, t_err_col : str or None
        Columns of R_V, σ(R_V), temperature and σ(temperature) (the last for
        the fit's prior on T_eff).
    """

    mag_cols: tuple
    err_cols: tuple
    err_kinds: tuple
    red_kind: str
    red_quantity: str
    red_col: str = None
    red_err_col: str = None
    lon_col: str = None
    lat_col: str = None
    frame: str = None
    dist_kind: str = None
    dist_col: str = None
    dist_err_col: str = None
    rv_col: str = None
    rv_err_col: str = None
    t_col: str = None
    t_err_col: str = None

    def used(self):
        """Every input column read, in a fixed order (duplicates kept)."""
        cols = list(self.mag_cols) + [c for c in self.err_cols if c]
        for c in (self.red_col, self.red_err_col, self.rv_col, self.rv_err_col, self.t_col, self.t_err_col):
            if c:
                cols.append(c)
        if self.red_kind == "map":
            cols += [self.lon_col, self.lat_col]
            cols += [c for c in (self.dist_col, self.dist_err_col) if c]
        return cols


def plan_columns(columns, options):
    """Check the named columns and guess the others.

    Parameters
    ----------
    columns : list of str
        The columns of the tables to come.
    options : redcorr.correction.CorrectionOptions

    Returns
    -------
    ColumnPlan

    Raises
    ------
    InputError
        If a named column does not exist or a needed one cannot be guessed;
        the message lists the columns.
    """
    mags, errs, kinds = band_columns(columns, options.bands)
    reddening = reddening_columns(columns, options.reddening)
    dust = options.dust
    t_col = None
    if options.spectrum.spectrum == "column":
        col = options.spectrum.temperature_column or find_column(columns, _TEFF_NAMES)
        if col is None:
            raise InputError(f"spectrum='column' needs a temperature column; the columns are {columns}")
        t_col = require_column(columns, col, "temperature_column")
    return ColumnPlan(
        mag_cols=mags,
        err_cols=errs,
        err_kinds=kinds,
        **reddening,
        rv_col=require_column(columns, dust.rv_column, "rv_column"),
        rv_err_col=require_column(columns, dust.rv_error_column, "rv_error_column"),
        t_col=t_col,
    )


def band_columns(columns, selection):
    """Each band's magnitude column, error column and error kind (tuples), named or guessed.

    Parameters
    ----------
    columns : list of str
    selection : redcorr.correction.BandSelection

    Returns
    -------
    mag_cols, err_cols, err_kinds : tuple
        As the fields of :class:`ColumnPlan`; an error column not found is None.
    """
    mag_cols, err_cols, err_kinds = [], [], []
    for label in selection.labels:
        if label in selection.mag_columns:
            mag = require_column(columns, selection.mag_columns[label], f"magnitude column of {label}")
        else:
            mag = find_column(columns, _mag_candidates(label))
            if mag is not None and mag.lower() in ("l", "b") and find_column(columns, ("l",)) \
                    and find_column(columns, ("b",)):
                mag = None  # columns l and b are Galactic coordinates, not magnitudes
            if mag is None:
                raise InputError(
                    f"no magnitude column found for band {label!r}; name it (e.g. --mag "
                    f"{label}=COLUMN); the columns are {columns}"
                )
        kind = "mag"
        if label in selection.err_columns:
            err = require_column(columns, selection.err_columns[label], f"error column of {label}")
        else:
            err = find_column(columns, _err_candidates(mag, label))
            archive = _archive(label)
            if err is None and archive is not None and mag.lower() == archive[0].lower():
                err = find_column(columns, [archive[1]])  # the archive's own error column, beside its magnitude
                kind = archive[2] if err is not None else kind
        mag_cols.append(mag)
        err_cols.append(err)
        err_kinds.append(kind)
    dup = {m for m in mag_cols if mag_cols.count(m) > 1}
    if dup:
        raise InputError(f"several bands map to the magnitude column(s) {sorted(dup)}; name each band's column")
    return tuple(mag_cols), tuple(err_cols), tuple(err_kinds)


def guessed_columns(plan, options):
    """What ``plan`` guessed rather than was told, for a note to the user.

    Parameters
    ----------
    plan : ColumnPlan
        From :func:`plan_columns` with the same ``options``.
    options : redcorr.correction.CorrectionOptions

    Returns
    -------
    list of (str, str)
        (what, column) pairs in the order of the plan: each band's label →
        its magnitude column, ``"error of LABEL"`` → its error column (with
        ``"2.5/ln10 / COLUMN"`` for a flux signal-to-noise column), then
        ``"E(B-V)"`` or ``"A_V"``, its error, the map's positions and the
        temperature when guessed. A band whose error was guessed and not
        found gives ``("error of LABEL", None)``.

    Examples
    --------
    >>> from redcorr.bandpass import tophat
    >>> from redcorr.correction import BandSelection, CorrectionOptions, DustOptions
    >>> from redcorr.curves import get_curve
    >>> options = CorrectionOptions(BandSelection([tophat(0.44, 0.1)], labels=["kw-b"]),
    ...                             DustOptions(get_curve("f99")))
    >>> guessed_columns(plan_columns(["Bmag", "e_Bmag", "ebv"], options), options)
    [('kw-b', 'Bmag'), ('error of kw-b', 'e_Bmag'), ('E(B-V)', 'ebv')]
    """
    source = options.reddening
    out = guessed_band_columns(plan, options.bands)
    quantity = "E(B-V)" if plan.red_quantity == "ebv" else "A_V"
    if plan.red_kind == "column" and source.ebv_column is None and source.av_column is None:
        out.append((quantity, plan.red_col))
    if plan.red_err_col is not None and source.reddening_error_column is None:
        out.append((f"error of {quantity}", plan.red_err_col))
    if plan.red_kind == "map" and source.lon_column is None:
        names = ("RA", "Dec") if plan.frame in ("icrs", "fk5") else ("l", "b")
        out += [(names[0], plan.lon_col), (names[1], plan.lat_col)]
    if plan.t_col is not None and options.spectrum.temperature_column is None:
        out.append(("temperature", plan.t_col))
    return out


def guessed_band_columns(plan, selection):
    """The part of :func:`guessed_columns` about the bands: (what, column) pairs for the bands of ``selection``."""
    out = []
    for label, mag, err, kind in zip(selection.labels, plan.mag_cols, plan.err_cols, plan.err_kinds, strict=True):
        if label not in selection.mag_columns:
            out.append((label, mag))
        if label not in selection.err_columns:
            out.append((f"error of {label}", f"2.5/ln10 / {err}" if kind == "flux_over_error" else err))
    return out


def reddening_columns(columns, source):
    """The :class:`ColumnPlan` fields of the reddening, as a dict."""
    out = {"red_kind": source.kind}
    if source.kind == "constant":
        out["red_quantity"] = "ebv" if source.ebv is not None else "av"
    elif source.kind == "map":
        out["red_quantity"] = "ebv" if str(source.dust_map.unit).upper().replace(" ", "") == "E(B-V)" else "av"
        out.update(_position_columns(columns, source))
        out.update(_distance_columns(columns, source))
    elif source.ebv_column is not None or source.av_column is not None:
        out["red_quantity"] = "ebv" if source.ebv_column is not None else "av"
        out["red_col"] = require_column(columns, source.ebv_column or source.av_column,
                                  "ebv_column" if source.ebv_column else "av_column")
    else:
        found_ebv, found_av = find_column(columns, EBV_NAMES), find_column(columns, AV_NAMES)
        if found_ebv is None and found_av is None:
            raise InputError(
                "no reddening given: name a column of E(B-V) or A_V, a constant, or a dust map; "
                f"the columns are {columns}"
            )
        out["red_quantity"] = "ebv" if found_ebv is not None else "av"
        out["red_col"] = found_ebv if found_ebv is not None else found_av
    err_col = require_column(columns, source.reddening_error_column, "reddening_error_column")
    if err_col is None and out.get("red_col") is not None:
        err_col = find_column(columns, _err_candidates(out["red_col"], out["red_col"]))
    out["red_err_col"] = err_col
    return out


def _position_columns(columns, source):
    if source.lon_column is not None:
        return {
            "lon_col": require_column(columns, source.lon_column, "lon_column"),
            "lat_col": require_column(columns, source.lat_column, "lat_column"),
            "frame": source.frame or "icrs",
        }
    frame = source.frame
    ra, dec = find_column(columns, RA_NAMES), find_column(columns, DEC_NAMES)
    glon, glat = find_column(columns, GLON_NAMES), find_column(columns, GLAT_NAMES)
    if ra is not None and dec is not None and frame in (None, "icrs", "fk5"):
        return {"lon_col": ra, "lat_col": dec, "frame": frame or "icrs"}
    if glon is not None and glat is not None and frame in (None, "galactic"):
        return {"lon_col": glon, "lat_col": glat, "frame": "galactic"}
    raise InputError(
        "a dust map needs positions: no RA/Dec or l/b columns found; name them "
        f"(lon_column, lat_column); the columns are {columns}"
    )


def _distance_columns(columns, source):
    """The distance fields of :class:`ColumnPlan`; none for a map without distances (named columns still checked)."""
    if source.parallax_column is not None:
        kind, col, err = "parallax", source.parallax_column, source.parallax_error_column
    elif source.distance_column is not None:
        kind, col, err = "distance", source.distance_column, source.distance_error_column
    else:
        return {}
    col = require_column(columns, col, f"{kind}_column")
    err = require_column(columns, err, f"{kind}_error_column")
    if getattr(source.dust_map, "distances_pc", None) is None:
        return {}  # a map of whole sight lines: the distances are not used (Correction warns)
    return {"dist_kind": kind, "dist_col": col, "dist_err_col": err}


def column_names(table):
    """The column names of a DataFrame or an Arrow table."""
    return list(table.columns) if isinstance(table, pd.DataFrame) else list(table.column_names)


def float_column(table, col):
    """A numeric column of a DataFrame or Arrow table as float64 (missing → NaN), or None if not numeric."""
    if isinstance(table, pd.DataFrame):
        series = table[col]
        if pd.api.types.is_numeric_dtype(series.dtype) and not pd.api.types.is_bool_dtype(series.dtype):
            return series.to_numpy(dtype=float, na_value=np.nan)
        return None
    import pyarrow as pa  # noqa: PLC0415 - Arrow tables come from the io edge, which imports it

    column = table.column(col)
    if pa.types.is_floating(column.type) or pa.types.is_integer(column.type):
        return np.asarray(column.to_numpy(), dtype=float)
    return None


def text_column(table, col):
    """A column of a DataFrame or Arrow table as a pandas Series (index from 0 for Arrow)."""
    if isinstance(table, pd.DataFrame):
        return table[col]
    return table.column(col).to_pandas()

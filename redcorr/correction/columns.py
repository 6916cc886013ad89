"""Which input column holds what: names checked or guessed, and cells read as numbers.

A column named in the options must exist; one left out is guessed from
common names, case-insensitively (the first match in the order below wins):

* magnitude of band ``kw-v``: ``kw-v``, ``kw-v_mag``, ``mag_kw-v``, then the
  same with the label made column-safe (``kw_v`` ...), then the band letter
  (``vmag``, ``v_mag``, ``mag_v``, ``v``); ``l`` and ``b`` are not taken
  as magnitudes when both exist (they are Galactic coordinates);
* its error: ``e_MAG``, ``MAG_err``, ``MAG_error``, ``err_MAG``, ``MAGerr``,
  ``sigma_MAG``, ``MAG_sigma``, ``eMAG``, ``MAG_e``, for the magnitude
  column, the column-safe label and the band letter;
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
    "ColumnPlan",
    "band_label",
    "column_names",
    "find_column",
    "float_column",
    "plan_columns",
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


def _require(columns, name, what):
    if name is None:
        return None
    if name not in columns:
        raise InputError(f"{what}={name!r} is not a column of the input; the columns are {list(columns)}")
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
    return [p.format(s) for s in stems for p in _ERR_PATTERNS]


@dataclass(frozen=True)
class ColumnPlan:
    """The input columns a correction reads, found once from the table's column names.

    Attributes
    ----------
    mag_cols, err_cols : tuple
        Magnitude and error column of each band (an error column may be None).
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
    rv_col, rv_err_col, t_col : str or None
        Columns of R_V, σ(R_V) and temperature.
    """

    mag_cols: tuple
    err_cols: tuple
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

    def used(self):
        """Every input column read, in a fixed order (duplicates kept)."""
        cols = list(self.mag_cols) + [c for c in self.err_cols if c]
        for c in (self.red_col, self.red_err_col, self.rv_col, self.rv_err_col, self.t_col):
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
    mags, errs = _band_columns(columns, options.bands)
    reddening = _reddening_columns(columns, options.reddening)
    dust = options.dust
    t_col = None
    if options.spectrum.spectrum == "column":
        col = options.spectrum.temperature_column or find_column(columns, _TEFF_NAMES)
        if col is None:
            raise InputError(f"spectrum='column' needs a temperature column; the columns are {columns}")
        t_col = _require(columns, col, "temperature_column")
    return ColumnPlan(
        mag_cols=mags,
        err_cols=errs,
        **reddening,
        rv_col=_require(columns, dust.rv_column, "rv_column"),
        rv_err_col=_require(columns, dust.rv_error_column, "rv_error_column"),
        t_col=t_col,
    )


def _band_columns(columns, selection):
    mag_cols, err_cols = [], []
    for label in selection.labels:
        if label in selection.mag_columns:
            mag = _require(columns, selection.mag_columns[label], f"magnitude column of {label}")
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
        if label in selection.err_columns:
            err = _require(columns, selection.err_columns[label], f"error column of {label}")
        else:
            err = find_column(columns, _err_candidates(mag, label))
        mag_cols.append(mag)
        err_cols.append(err)
    dup = {m for m in mag_cols if mag_cols.count(m) > 1}
    if dup:
        raise InputError(f"several bands map to the magnitude column(s) {sorted(dup)}; name each band's column")
    return tuple(mag_cols), tuple(err_cols)


def _reddening_columns(columns, source):
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
        out["red_col"] = _require(columns, source.ebv_column or source.av_column,
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
    err_col = _require(columns, source.reddening_error_column, "reddening_error_column")
    if err_col is None and out.get("red_col") is not None:
        err_col = find_column(columns, _err_candidates(out["red_col"], out["red_col"]))
    out["red_err_col"] = err_col
    return out


def _position_columns(columns, source):
    if source.lon_column is not None:
        return {
            "lon_col": _require(columns, source.lon_column, "lon_column"),
            "lat_col": _require(columns, source.lat_column, "lat_column"),
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
    col = _require(columns, col, f"{kind}_column")
    err = _require(columns, err, f"{kind}_error_column")
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

"""Catalog formats: names from file suffixes, column types between Arrow and pandas, text rounding.

Every reader and writer of :mod:`redcorr.io.catalogs` takes its format name,
its column-type rules and the rounding of computed columns in text output
from here, so that all formats agree on them.
"""

from pathlib import Path

import numpy as np
import pandas as pd

from redcorr.exceptions import InputError

__all__ = ["FORMATS", "TEXT_DECIMALS", "PandasLikeColumns", "detect_format", "load_pyarrow", "round_for_text"]

FORMATS = ("csv", "ecsv", "fits", "parquet")
"""Catalog formats redcorr reads and writes."""

_SUFFIXES = {
    ".csv": "csv",
    ".txt": "csv",
    ".tsv": "csv",
    ".dat": "csv",
    ".ecsv": "ecsv",
    ".fits": "fits",
    ".fit": "fits",
    ".fts": "fits",
    ".parquet": "parquet",
    ".pq": "parquet",
}

TEXT_DECIMALS = 6
"""Decimals of the computed columns in CSV and ECSV output (1 µmag for magnitudes).

Written in full, a computed double takes 17 significant digits, twice the text and
twice the formatting time of a value rounded to 6 decimals, and the extra digits are
far below any photometric error. Input columns are copied as read; Parquet and FITS
outputs keep every bit."""


def round_for_text(values):
    """Round computed values as the CSV and ECSV writers do (:data:`TEXT_DECIMALS` decimals).

    Parameters
    ----------
    values : array_like of float

    Returns
    -------
    ndarray
        ``numpy.round(values, TEXT_DECIMALS)``; NaN and infinities are kept.
    """
    return np.round(np.asarray(values, dtype=float), TEXT_DECIMALS)


def load_pyarrow():
    """The ``pyarrow`` module with the parts the catalogs use (csv, dataset, parquet) imported.

    Imported when a catalog is opened, not with redcorr.

    Raises
    ------
    InputError
        If pyarrow is not installed.
    """
    try:
        import pyarrow  # noqa: PLC0415 - imported when a catalog is opened
        import pyarrow.csv  # noqa: F401, PLC0415
        import pyarrow.dataset  # noqa: F401, PLC0415
        import pyarrow.parquet  # noqa: F401, PLC0415
    except ImportError:  # pragma: no cover - pyarrow is a declared dependency
        raise InputError("reading catalogs needs pyarrow; install it with: pip install pyarrow") from None
    return pyarrow


def detect_format(path, fmt=None):
    """The catalog format of ``path``: ``fmt`` if given, else from the name.

    A folder is a Parquet dataset; ``.gz`` is looked through
    (``stars.csv.gz`` is CSV).

    Raises
    ------
    InputError
        If ``fmt`` is not one of :data:`FORMATS` or the suffix is unknown.
    """
    if fmt is not None:
        key = str(fmt).lower()
        if key not in FORMATS:
            raise InputError(f"format={fmt!r} is not known; choose from {', '.join(FORMATS)}")
        return key
    path = Path(path)
    if path.is_dir():
        return "parquet"
    suffixes = [s.lower() for s in path.suffixes]
    if suffixes and suffixes[-1] == ".gz":
        suffixes = suffixes[:-1]
    if suffixes and suffixes[-1] in _SUFFIXES:
        return _SUFFIXES[suffixes[-1]]
    raise InputError(
        f"cannot tell the format of {str(path)!r} from its name; give the format "
        f"({', '.join(FORMATS)}) or use a suffix such as .csv, .csv.gz, .ecsv, .fits, .parquet"
    )



def _int_as_nullable(pa_type):
    """types_mapper for Arrow → pandas: integers become nullable, so missing values stay integers."""
    pa = load_pyarrow()
    if pa.types.is_integer(pa_type):
        return pd.Int64Dtype() if pa.types.is_signed_integer(pa_type) else pd.UInt64Dtype()
    return None



def _is_text(series):
    return series.dtype == object or pd.api.types.is_string_dtype(series.dtype)


def _arrow_schema(frame):
    pa = load_pyarrow()
    schema = pa.Schema.from_pandas(frame, preserve_index=False)
    fields = []
    for field in schema:
        text = pa.types.is_string(field.type) or pa.types.is_large_string(field.type)
        if pa.types.is_null(field.type) or (text and _is_text(frame[field.name])):
            field = field.with_type(pa.string())  # (object columns of booleans stay booleans)
        fields.append(field)
    return pa.schema(fields)


class PandasLikeColumns:
    """Arrow columns of read chunks as a round trip through pandas would write them, without it.

    The DataFrame path of the writer (``to_pandas``, then ``from_pandas``
    with the first chunk's schema) turns NaN into missing values, widens
    integers to 64 bits and large strings to strings. This does the same on
    Arrow columns directly (no copy when nothing changes) and sends other
    types (booleans, dates, dictionaries, ...) through pandas, so that a
    file written from Arrow chunks is the one written from DataFrames.

    Parameters
    ----------
    names : list of str
        The input columns to carry to the output, in order.
    """

    def __init__(self, names):
        self.names = list(names)
        self._other_schema = None

    def _column(self, column):
        pa = load_pyarrow()
        kind = column.type
        if pa.types.is_floating(kind):
            if any(np.isnan(chunk.to_numpy(zero_copy_only=False)).any() for chunk in column.chunks):
                return pa.array(column.to_numpy(), type=kind, from_pandas=True)
            return column
        if pa.types.is_signed_integer(kind):
            return column.cast(pa.int64())
        if pa.types.is_unsigned_integer(kind):
            return column.cast(pa.uint64())
        if pa.types.is_string(kind) or pa.types.is_large_string(kind) or pa.types.is_null(kind):
            return column.cast(pa.string())
        return None

    def table(self, table, arrays):
        """The kept columns of ``table`` followed by ``arrays`` (name → numpy array), as one Arrow table."""
        pa = load_pyarrow()
        columns, other = {}, []
        for name in self.names:
            columns[name] = self._column(table.column(name))
            if columns[name] is None:
                other.append(name)
        if other:
            frame = table.select(other).to_pandas(types_mapper=_int_as_nullable)
            if self._other_schema is None:
                self._other_schema = _arrow_schema(frame)
            converted = pa.Table.from_pandas(frame, schema=self._other_schema, preserve_index=False)
            for name in other:
                columns[name] = converted.column(name)
        for name, values in arrays.items():
            values = np.asarray(values)
            nan = values.dtype.kind == "f" and bool(np.isnan(values).any())
            columns[name] = pa.array(values, from_pandas=nan)  # NaN → missing, as from a DataFrame
        return pa.table(columns)


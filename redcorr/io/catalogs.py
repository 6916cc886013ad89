"""Catalog files in and out, in chunks of bounded size.

This is the only module that knows CSV, ECSV, FITS or Parquet. Readers yield
pandas DataFrames of at most ``chunk_rows`` rows; writers take such chunks
and write them to a temporary file beside the target, which is renamed onto
the target only when everything succeeded (:func:`redcorr.io.atomic_path`).
An interruption or an error therefore never leaves a partial output.

Formats
-------
``csv``
    Delimited text, optionally gzip-compressed (``.gz``). Read with the
    streaming reader of pyarrow. Lines starting with the comment character
    (``#`` by default) are skipped, before the header and between rows.
``ecsv``
    Astropy's Enhanced CSV. The YAML header is read by astropy (names,
    types, units, meta); the body, a plain delimited table, is streamed by
    pyarrow like a CSV file. Written the same way: header by astropy, body
    by pyarrow.
``fits``
    A FITS binary table (the first one, or ``hdu=``), memory-mapped by
    astropy and read in row slices. As a FITS header needs the final row
    count and string widths, output chunks are spooled to Parquet beside
    the target first and then streamed into one table (disk space of about
    twice the output, memory of one chunk).
``parquet``
    A Parquet file (read row group by row group) or a folder of Parquet
    files, optionally hive-partitioned (``key=value`` folders), read as one
    dataset. All files of a dataset must share one schema.

Memory
------
Reading and writing every format holds a few chunks at a time (the one being
corrected, up to two read ahead, the ones being written) plus pyarrow's CSV
read-ahead blocks, so memory does not grow with file size (measured, 15 columns
in, 33 out: peak RSS of about 340 MB from CSV to Parquet and 500 MB from CSV to
CSV, where the input fields are held as text, the same for 1 M and 5 M rows).
"""

import abc
import collections
import concurrent.futures
import contextlib
import gzip
import io
import json
import os
import re
import shutil
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

from redcorr._constants import DEFAULT_CHUNK_ROWS
from redcorr.exceptions import InputError
from redcorr.io._atomic import atomic_path, check_output_path

__all__ = [
    "FORMATS",
    "atomic_folder",
    "CatalogReader",
    "CatalogWriter",
    "ColumnTypeError",
    "detect_format",
    "open_catalog",
    "PandasLikeColumns",
    "read_catalog",
    "summary_path",
    "write_catalog",
    "write_summary",
]

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

_CSV_BLOCK_BYTES = 1 << 20
"""Bytes per block of the CSV reader. Its read-ahead holds tens of blocks (about 250 MB with
8 MB blocks, 35 MB with 1 MB), and parsing measured no slower with 1 MB blocks. Column types
are inferred from the first block; a later cell that does not fit is handled by
:class:`ColumnTypeError`."""

_CSV_SLICE_ROWS = 16_384
"""Rows formatted as text per task of the CSV writer (two tasks run at once)."""

_CSV_PENDING = 4
"""Formatted CSV slices waiting to be written, at most (about 10 MB each for 33 columns)."""

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


def _pyarrow():
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


def _is_gzip(path):
    with open(path, "rb") as fh:
        return fh.read(2) == b"\x1f\x8b"


class ColumnTypeError(Exception):
    """A CSV column changed type after the first block (e.g. text in a number column).

    Raised by the CSV reader so that the caller can start again with that
    column read as text (``text_columns``); not a user error by itself.
    """

    def __init__(self, column):
        super().__init__(column)
        self.column = column


def _check_unique(names, path):
    seen, dup = set(), []
    for n in names:
        if n in seen and n not in dup:
            dup.append(n)
        seen.add(n)
    if dup:
        raise InputError(
            f"input {str(path)!r} has duplicate column names {dup}; every column needs its own name"
        )


def _int_as_nullable(pa_type):
    """types_mapper for Arrow → pandas: integers become nullable, so missing values stay integers."""
    pa = _pyarrow()
    if pa.types.is_integer(pa_type):
        return pd.Int64Dtype() if pa.types.is_signed_integer(pa_type) else pd.UInt64Dtype()
    return None


def _rebatch(batches, chunk_rows):
    """Regroup Arrow record batches into tables of exactly ``chunk_rows`` rows (the last may be shorter)."""
    pa = _pyarrow()
    pending, size = [], 0
    for batch in batches:
        if batch.num_rows == 0:
            continue
        pending.append(batch)
        size += batch.num_rows
        while size >= chunk_rows:
            table = pa.Table.from_batches(pending)
            yield table.slice(0, chunk_rows)
            rest = table.slice(chunk_rows)
            pending = rest.to_batches() if rest.num_rows else []
            size = rest.num_rows
    if size:
        yield pa.Table.from_batches(pending)


class CatalogReader(abc.ABC):
    """A catalog file opened for reading in chunks.

    Use :func:`open_catalog` to make one. Iterating yields pandas DataFrames
    of ``chunk_rows`` rows (the last one shorter; one empty DataFrame with
    the right columns if the file has a header but no rows).

    Attributes
    ----------
    path : pathlib.Path
    format : str
    columns : list of str
        Column names, known before the first chunk is read.
    n_rows : int or None
        Number of rows if the format tells it up front (FITS, Parquet).
    """

    def __init__(self, path, fmt, chunk_rows):
        self.path = Path(path)
        self.format = fmt
        self.chunk_rows = int(chunk_rows)
        self.columns = []
        self.n_rows = None

    def fraction_done(self):
        """Fraction of the input consumed so far, in [0, 1], or None if unknown."""
        return None

    arrow = False
    """True when the format is read as Arrow tables (:meth:`tables`); DataFrames are then made from them."""

    verbatim = False
    """True when :meth:`tables` yields the file's text (see ``verbatim`` of :func:`open_catalog`)."""

    @abc.abstractmethod
    def _frames(self):
        """Yield the non-empty chunks as DataFrames."""

    def __iter__(self):
        empty = True
        for frame in self._frames():
            empty = False
            yield frame
        if empty:
            yield pd.DataFrame({name: pd.Series(dtype=float) for name in self.columns})

    def tables(self):
        """Iterate the chunks as Arrow tables, as they were read (only when :attr:`arrow`).

        The same rows as iterating DataFrames; :class:`PandasLikeColumns`
        turns their columns into the Arrow columns a DataFrame would give.
        """
        if not self.arrow:
            raise TypeError(f"{self.format} is read as DataFrames only; iterate the reader instead")
        pa = _pyarrow()
        empty = True
        for table in self._tables():
            empty = False
            yield table
        if empty:
            yield pa.table({name: pa.array([], pa.float64()) for name in self.columns})

    def close(self):  # noqa: B027 - a reader that holds no file has nothing to release
        """Release the file."""

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


class _CsvReader(CatalogReader):
    arrow = True

    def __init__(self, path, fmt, chunk_rows, *, delimiter, comment, numeric_columns, text_columns,
                 skip_lines=0, column_names=None, verbatim=False, **_):
        super().__init__(path, fmt, chunk_rows)
        pa = _pyarrow()
        self._delimiter = delimiter
        self._comment = comment
        self._column_names = column_names
        self._size = self.path.stat().st_size
        compressed = _is_gzip(self.path)
        if skip_lines == 0 and comment:
            skip_lines = self._leading_comment_lines(compressed)
        self._skip_lines = skip_lines
        numeric_columns, text_columns = set(numeric_columns), set(text_columns)
        self._numeric = [c for c in numeric_columns if c not in text_columns]
        names = (column_names or self._header_names()) if verbatim else None
        self.verbatim = bool(names)
        if self.verbatim:  # every field as the text it is in the file ("" stays "")
            types = dict.fromkeys(names, pa.string())
            convert = pa.csv.ConvertOptions(column_types=types, strings_can_be_null=False,
                                            quoted_strings_can_be_null=False)
        else:
            types = {c: pa.string() for c in text_columns}
            types.update(dict.fromkeys(self._numeric, pa.float64()))
            convert = pa.csv.ConvertOptions(column_types=types, strings_can_be_null=True)
        self._missing_words = pa.array(pa.csv.ConvertOptions().null_values, pa.string())
        self._raw = pa.OSFile(str(self.path), "rb")
        stream = pa.CompressedInputStream(self._raw, "gzip") if compressed else self._raw
        read = pa.csv.ReadOptions(
            block_size=_CSV_BLOCK_BYTES, skip_rows=skip_lines, column_names=column_names
        )
        parse = pa.csv.ParseOptions(delimiter=delimiter, invalid_row_handler=self._invalid_row)
        try:
            self._reader = pa.csv.open_csv(stream, read_options=read, parse_options=parse,
                                           convert_options=convert)
        except (pa.ArrowInvalid, OSError, EOFError) as exc:
            self._raw.close()
            raise self._read_error(exc) from None
        self.columns = self._column_names = list(self._reader.schema.names)
        _check_unique(self.columns, self.path)

    def _leading_comment_lines(self, compressed):
        opener = gzip.open if compressed else open
        count = 0
        try:
            with opener(self.path, "rt", encoding="utf-8", errors="replace") as fh:
                for line in fh:
                    if line.startswith(self._comment) or not line.strip():
                        count += 1
                    else:
                        break
        except (OSError, EOFError) as exc:
            raise InputError(f"input {str(self.path)!r} could not be read: {exc}") from None
        return count

    def _invalid_row(self, row):
        if self._comment and row.text.lstrip().startswith(self._comment):
            return "skip"
        return "error"

    def typed(self, table):
        """A chunk read verbatim with its ``numeric_columns`` as float64, for computing.

        The words the typed reader takes for missing values (pyarrow's
        defaults: empty, ``NA``, ``null``, ...) become missing; a column with
        other text stays text, for the correction to flag those cells as the
        typed reader's text fallback (:class:`ColumnTypeError`) would.
        """
        pa = _pyarrow()
        pc = pa.compute
        for name in self._numeric:
            i = table.schema.get_field_index(name)
            if i < 0 or not pa.types.is_string(table.schema.field(i).type):
                continue
            column = table.column(i)
            try:
                column = pc.cast(column, pa.float64())
            except pa.ArrowInvalid:  # missing-value words or text: the slower, careful way
                column = pc.if_else(pc.is_in(column, value_set=self._missing_words),
                                    pa.scalar(None, pa.string()), column)
                try:
                    column = pc.cast(column, pa.float64())
                except pa.ArrowInvalid:
                    pass
            table = table.set_column(i, name, column)
        return table

    def _header_names(self):
        """Column names from the header line alone (for verbatim reading, or when the first block failed to convert)."""
        pa = _pyarrow()
        opener = gzip.open if _is_gzip(self.path) else open
        with opener(self.path, "rb") as fh:
            for _ in range(self._skip_lines):
                fh.readline()
            line = fh.readline()
        try:
            return pa.csv.read_csv(io.BytesIO(line), parse_options=pa.csv.ParseOptions(delimiter=self._delimiter)
                                   ).schema.names
        except pa.ArrowInvalid:
            return []

    def _read_error(self, exc):
        text = str(exc)
        match = re.search(r"In CSV column #(\d+): .*conversion error", text)
        if match:
            names = self._column_names or self._header_names()
            index = int(match.group(1))
            return ColumnTypeError(names[index] if index < len(names) else f"#{index}")
        if "Empty CSV file" in text:
            return InputError(f"input {str(self.path)!r} is empty: no header line with column names")
        match = re.search(r"Expected (\d+) columns, got (\d+): (.*)", text)
        if match:
            return InputError(
                f"input {str(self.path)!r}: a row has {match.group(2)} fields where the header has "
                f"{match.group(1)} (delimiter {self._delimiter!r}): {match.group(3)[:80]!r}"
            )
        return InputError(f"input {str(self.path)!r} could not be read as {self.format.upper()}: {text}")

    def fraction_done(self):
        try:
            return min(self._raw.tell() / self._size, 1.0) if self._size else 1.0
        except (OSError, ValueError):
            return None

    def _batches(self):
        pa = _pyarrow()
        while True:
            try:
                batch = self._reader.read_next_batch()
            except StopIteration:
                return
            except (pa.ArrowInvalid, OSError, EOFError) as exc:
                raise self._read_error(exc) from None
            yield batch

    def _tables(self):
        return _rebatch(self._batches(), self.chunk_rows)

    def _frames(self):
        for table in self._tables():
            yield table.to_pandas(types_mapper=_int_as_nullable)

    def close(self):
        self._raw.close()


def _ecsv_header(path, compressed):
    """Read an ECSV header with astropy: (empty Table, delimiter, number of header lines)."""
    from astropy.io.misc import yaml  # noqa: PLC0415
    from astropy.table import Table  # noqa: PLC0415

    opener = gzip.open if compressed else open
    lines = []
    with opener(path, "rt", encoding="utf-8") as fh:
        for line in fh:
            lines.append(line)
            if not line.startswith("#") and line.strip():
                break  # the column-name line ends the header
    if not lines or not lines[0].startswith("# %ECSV"):
        raise InputError(f"input {str(path)!r} is not ECSV: it does not start with '# %ECSV'")
    try:
        empty = Table.read("".join(lines), format="ascii.ecsv")
        body = "\n".join(ln[2:] if ln.startswith("# ") else ln[1:] for ln in lines[2:-1])
        header = yaml.load(body) or {}
    except Exception as exc:  # astropy raises many types for malformed headers
        raise InputError(f"input {str(path)!r}: the ECSV header could not be read: {exc}") from None
    return empty, header.get("delimiter", " "), len(lines)


class _EcsvReader(_CsvReader):
    def __init__(self, path, fmt, chunk_rows, *, numeric_columns, text_columns, **_):
        compressed = _is_gzip(path)
        empty, delimiter, n_lines = _ecsv_header(path, compressed)
        self.meta = dict(empty.meta)
        text = set(text_columns) | {c for c in empty.colnames if empty[c].dtype.kind in "US"}
        super().__init__(path, fmt, chunk_rows, delimiter=delimiter, comment=None,
                         numeric_columns=numeric_columns, text_columns=text,
                         skip_lines=n_lines, column_names=list(empty.colnames))


class _FitsReader(CatalogReader):
    def __init__(self, path, fmt, chunk_rows, *, hdu=None, **_):
        from astropy.io import fits  # noqa: PLC0415

        super().__init__(path, fmt, chunk_rows)
        try:
            self._hdul = fits.open(self.path, memmap=True)
        except (OSError, ValueError) as exc:
            raise InputError(f"input {str(path)!r} could not be opened as FITS: {exc}") from None
        tables = [h for h in self._hdul if isinstance(h, fits.BinTableHDU)]
        if hdu is not None:
            try:
                self._hdu = self._hdul[hdu]
            except (KeyError, IndexError):
                self._hdul.close()
                raise InputError(f"hdu={hdu!r} is not in {str(path)!r}") from None
        elif tables:
            self._hdu = tables[0]
        else:
            self._hdul.close()
            raise InputError(f"input {str(path)!r} has no FITS binary table")
        self.columns = list(self._hdu.columns.names)
        _check_unique([c.lower() for c in self.columns], self.path)
        multi = [c.name for c in self._hdu.columns if c.dim or (c.format.repeat > 1 and "A" not in c.format)]
        if multi:
            raise InputError(
                f"input {str(path)!r} has vector columns {multi}; only scalar columns are supported"
            )
        self.n_rows = int(self._hdu.header.get("NAXIS2", 0))
        self._done = 0

    def fraction_done(self):
        return self._done / self.n_rows if self.n_rows else 1.0

    def _frames(self):
        data = self._hdu.data
        for start in range(0, self.n_rows, self.chunk_rows):
            rows = data[start : start + self.chunk_rows]
            out = {}
            for name in self.columns:
                col = np.asarray(rows[name])
                if col.dtype.kind == "S":
                    out[name] = np.char.decode(np.char.rstrip(col), "utf-8", errors="replace")
                    out[name] = out[name].astype(object)
                elif col.dtype.kind in "iu":
                    out[name] = pd.array(col.astype(col.dtype.newbyteorder("=")), dtype="Int64")
                else:
                    out[name] = col.astype(col.dtype.newbyteorder("="))
            self._done = min(start + self.chunk_rows, self.n_rows)
            yield pd.DataFrame(out)

    def close(self):
        self._hdul.close()


class _ParquetReader(CatalogReader):
    arrow = True

    def __init__(self, path, fmt, chunk_rows, **_):
        pa = _pyarrow()
        super().__init__(path, fmt, chunk_rows)
        try:
            if self.path.is_dir():
                self._dataset = pa.dataset.dataset(str(self.path), format="parquet", partitioning="hive")
                self._check_schemas()
            else:
                self._dataset = pa.dataset.dataset(str(self.path), format="parquet")
            self.n_rows = self._dataset.count_rows()
        except (pa.ArrowInvalid, OSError) as exc:
            raise InputError(f"input {str(path)!r} could not be read as Parquet: {exc}") from None
        self.columns = list(self._dataset.schema.names)
        _check_unique(self.columns, self.path)
        self._done = 0

    def _check_schemas(self):
        fragments = list(self._dataset.get_fragments())
        if not fragments:
            raise InputError(f"input {str(self.path)!r} is a folder without Parquet files")
        first = fragments[0].physical_schema
        for frag in fragments[1:]:
            schema = frag.physical_schema
            if not schema.equals(first):
                missing = sorted(set(first.names) - set(schema.names))
                extra = sorted(set(schema.names) - set(first.names))
                detail = f"missing {missing}, extra {extra}" if missing or extra else "different column types"
                raise InputError(
                    f"input {str(self.path)!r}: file {frag.path!r} has a different schema from "
                    f"{fragments[0].path!r} ({detail}); every file of a dataset must share one schema"
                )

    def fraction_done(self):
        return self._done / self.n_rows if self.n_rows else 1.0

    def _tables(self):
        # Read-ahead of one batch (Arrow's default is 16 batches and 4 files, a memory cost
        # proportional to the chunk size that buys nothing when the consumer is slower).
        if self.path.is_dir():
            batches = self._dataset.to_batches(batch_size=self.chunk_rows, batch_readahead=1, fragment_readahead=1)
        else:  # one file: decoded a batch at a time, not a whole row group before the first batch
            batches = _pyarrow().parquet.ParquetFile(str(self.path)).iter_batches(batch_size=self.chunk_rows)
        for table in _rebatch(batches, self.chunk_rows):
            self._done += table.num_rows
            yield table

    def _frames(self):
        for table in self._tables():
            yield table.to_pandas(types_mapper=_int_as_nullable)


def open_catalog(path, *, fmt=None, chunk_rows=DEFAULT_CHUNK_ROWS, delimiter=",", comment="#",
                 numeric_columns=(), text_columns=(), hdu=None, verbatim=False):
    """Open a catalog for reading in chunks.

    Parameters
    ----------
    path : path-like
        A file, or a folder of Parquet files.
    fmt : str, optional
        One of :data:`FORMATS`; guessed from the name if omitted.
    chunk_rows : int
        Rows per chunk.
    delimiter : str
        CSV field delimiter (ECSV takes its own from the header).
    comment : str or None
        CSV lines starting with this are skipped.
    numeric_columns : iterable of str
        CSV/ECSV columns to read as float64 whatever the first block looks like.
    text_columns : iterable of str
        CSV/ECSV columns to read as text (see :class:`ColumnTypeError`).
    hdu : int or str, optional
        FITS extension holding the table (default: the first binary table).
    verbatim : bool
        CSV only: :meth:`CatalogReader.tables` yields every column as the
        text in the file, to be copied to a CSV output unchanged, and
        ``reader.typed(table)`` gives a chunk with ``numeric_columns`` as
        float64 to compute with. ``reader.verbatim`` tells whether this
        holds (not when the header line cannot be read on its own).

    Returns
    -------
    CatalogReader
    """
    path = Path(path)
    if not path.exists():
        raise InputError(f"input {str(path)!r} does not exist")
    fmt = detect_format(path, fmt)
    if chunk_rows is None or int(chunk_rows) < 1:
        raise InputError(f"chunk_rows={chunk_rows!r} must be a whole number >= 1")
    if fmt != "parquet" and path.is_dir():
        raise InputError(f"input {str(path)!r} is a folder; only Parquet datasets can be folders")
    if fmt == "csv" and path.stat().st_size == 0:
        raise InputError(f"input {str(path)!r} is empty: no header line with column names")
    if fmt == "csv" and len(delimiter) != 1:
        raise InputError(f"delimiter={delimiter!r} must be one character")
    if verbatim and fmt != "csv":
        raise ValueError(f"verbatim reading is for CSV input, not {fmt}")
    kinds = {"csv": _CsvReader, "ecsv": _EcsvReader, "fits": _FitsReader, "parquet": _ParquetReader}
    return kinds[fmt](
        path, fmt, chunk_rows, delimiter=delimiter, comment=comment or None,
        numeric_columns=numeric_columns, text_columns=text_columns, hdu=hdu, verbatim=verbatim,
    )


def read_catalog(path, **options):
    """Read a whole catalog into one DataFrame (options as for :func:`open_catalog`)."""
    with open_catalog(path, **options) as reader:
        return pd.concat(list(reader), ignore_index=True)


def _is_text(series):
    return series.dtype == object or pd.api.types.is_string_dtype(series.dtype)


def _arrow_schema(frame):
    pa = _pyarrow()
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
        pa = _pyarrow()
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
        pa = _pyarrow()
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


class _FitsSpool:
    """FITS table output in bounded memory.

    A FITS table header states the row count and string widths before the
    rows, so chunks are first spooled to Parquet files in a folder beside the
    target. At the end each spooled chunk is turned into table rows by
    astropy (fixed formats for all chunks) and the rows are streamed after
    the header with :class:`astropy.io.fits.StreamingHDU`.
    """

    def __init__(self, target, schema):
        pa = _pyarrow()
        self.dir = Path(tempfile.mkdtemp(prefix=f".{target.name}.", suffix=".spool", dir=target.parent))
        self.schema = schema
        self.files = []
        self.rows = 0
        self.widths = {f.name: 1 for f in schema if pa.types.is_string(f.type) or pa.types.is_large_string(f.type)}
        self.int_nulls = set()

    def add(self, table):
        pa = _pyarrow()
        if not table.num_rows:
            return
        for name in self.widths:
            lengths = pa.compute.binary_length(pa.compute.cast(table[name], pa.binary()))
            self.widths[name] = max(self.widths[name], int(pa.compute.max(lengths).as_py() or 0))
        for field in self.schema:
            if pa.types.is_integer(field.type) and table[field.name].null_count:
                self.int_nulls.add(field.name)
        path = self.dir / f"{len(self.files):06d}.parquet"
        pa.parquet.write_table(table, path, use_dictionary=False, compression="none")
        self.files.append(path)
        self.rows += table.num_rows

    def _formats(self):
        pa = _pyarrow()
        formats = {}
        for f in self.schema:
            if f.name in self.widths:
                formats[f.name] = f"{self.widths[f.name]}A"
            elif pa.types.is_boolean(f.type):
                formats[f.name] = "L"
            elif pa.types.is_integer(f.type):
                formats[f.name] = "D" if f.name in self.int_nulls else "K"
            elif pa.types.is_float32(f.type):
                formats[f.name] = "E"
            else:
                formats[f.name] = "D"
        return formats

    def _hdu(self, table, formats):
        from astropy.io import fits  # noqa: PLC0415

        pa = _pyarrow()
        columns = []
        for name, fmt in formats.items():
            col = table[name]
            if fmt.endswith("A"):
                text = pa.compute.fill_null(pa.compute.cast(col, pa.string()), "").to_numpy(zero_copy_only=False)
                array = np.char.encode(np.asarray(text, dtype=str), "utf-8")
            elif fmt == "L":
                array = pa.compute.fill_null(col, False).to_numpy(zero_copy_only=False)
            elif fmt == "K":
                array = col.to_numpy()
            else:
                array = pa.compute.fill_null(pa.compute.cast(col, pa.float64()), np.nan).to_numpy()
            columns.append(fits.Column(name=name, format=fmt, array=array))
        return fits.BinTableHDU.from_columns(columns, nrows=table.num_rows)

    def write(self, path, meta):
        """Write the spooled chunks as one FITS binary table to ``path`` (an empty file)."""
        from astropy.io import fits  # noqa: PLC0415

        pa = _pyarrow()
        formats = self._formats()
        comments = [f"redcorr {k}: {json.dumps(v, default=str)}" for k, v in meta.items()]
        if not self.files:
            hdu = self._hdu(self.schema.empty_table(), formats)
            for text in comments:
                hdu.header.add_comment(text)
            fits.HDUList([fits.PrimaryHDU(), hdu]).writeto(path, overwrite=True)
            return
        stream = None
        for file in self.files:
            hdu = self._hdu(pa.parquet.read_table(file), formats)
            buf = io.BytesIO()
            fits.HDUList([fits.PrimaryHDU(), hdu]).writeto(buf)
            with fits.open(io.BytesIO(buf.getvalue())) as chunk:
                header = chunk[1].header.copy()
                start = chunk[1].fileinfo()["datLoc"]
            rows = buf.getvalue()[start : start + header["NAXIS1"] * header["NAXIS2"]]
            if stream is None:
                header["NAXIS2"] = self.rows
                for text in comments:
                    header.add_comment(text)
                stream = fits.StreamingHDU(str(path), header)
            stream.write(np.frombuffer(rows, dtype=np.uint8))
        stream.close()

    def cleanup(self):
        shutil.rmtree(self.dir, ignore_errors=True)


def _csv_bytes(table, options):
    """``table`` as CSV text (a pyarrow buffer)."""
    pa = _pyarrow()
    buf = pa.BufferOutputStream()
    pa.csv.write_csv(table, buf, write_options=options)
    return buf.getvalue()


class CatalogWriter:
    """Write DataFrame or Arrow-table chunks to a catalog file, atomically.

    Used as a context manager: the target appears only when the block ends
    without an exception; otherwise the temporary file is removed and the
    target (if any) is untouched.

    Writing runs beside the caller: CSV and ECSV rows are turned into text
    by two worker threads, slice by slice, and the text is written in order;
    Parquet chunks are encoded by one worker thread while the caller prepares
    the next chunk (pyarrow releases the GIL for both). At most a few chunks
    are in flight, so memory stays bounded.

    Parameters
    ----------
    path : path-like
        Output file.
    fmt : str, optional
        One of :data:`FORMATS`; from the suffix if omitted (a ``.gz`` CSV is
        gzip-compressed).
    overwrite : bool
        Replace an existing output; refused otherwise.
    inputs : iterable of path-like
        Input files; the output may never be one of them.
    delimiter : str
        CSV delimiter.
    meta : dict, optional
        Stored in the ECSV header, the FITS header (as COMMENT cards) or the
        Parquet schema metadata, as JSON.
    computed : iterable of str, optional
        The columns the program computed. Their floating-point values are
        written with :data:`TEXT_DECIMALS` decimals in CSV and ECSV (see
        :func:`round_for_text`) and stored uncompressed in Parquet (computed
        doubles do not compress: snappy cost a third of the write and saved
        nothing). Other columns, and FITS output, are written exactly as
        given.
    verbatim : bool
        CSV output of text columns read verbatim (:func:`open_catalog`):
        text goes out unquoted, as it came in; a row in which some text
        holds the delimiter, a quote or a line end has its text fields
        quoted.
    """

    def __init__(self, path, *, fmt=None, overwrite=False, inputs=(), delimiter=",", meta=None, computed=(),
                 verbatim=False):
        self.path = Path(path)
        self.format = detect_format(self.path, fmt) if fmt or self.path.suffix else "parquet"
        self._overwrite = overwrite
        self._inputs = list(inputs)
        self._delimiter = delimiter
        self._meta = dict(meta or {})
        self._computed = set(computed)
        self._verbatim = bool(verbatim) and self.format == "csv"
        self._schema = None
        self._sink = None
        self._writer = None
        self._spool = None
        self._atomic = None
        self._pool = None
        self._pending = collections.deque()
        self.rows = 0

    def __enter__(self):
        for src in self._inputs:
            if Path(src).resolve() == self.path.resolve():
                raise InputError(
                    f"output={str(self.path)!r} is the input file; redcorr never writes over its input"
                )
        check_output_path(self.path, overwrite=self._overwrite, inputs=self._inputs)
        if self.path.is_dir():
            raise InputError(f"output={str(self.path)!r} is a folder; give a file name")
        self._atomic = atomic_path(self.path)
        self._tmp = self._atomic.__enter__()
        return self

    def _open(self, chunk):
        pa = _pyarrow()
        if isinstance(chunk, pd.DataFrame):
            frame, self._schema = chunk, _arrow_schema(chunk)
        else:
            frame, self._schema = None, chunk.schema.remove_metadata()
        if self.format == "fits":
            self._spool = _FitsSpool(self.path, self._schema)
        elif self.format == "parquet":
            schema = self._schema.with_metadata({"redcorr": json.dumps(self._meta, default=str)})
            self._schema = schema
            # Dictionary encoding only pays for text; on measured floats it costs ~10x in time.
            text = [f.name for f in schema if pa.types.is_string(f.type) or pa.types.is_large_string(f.type)]
            codecs = {f.name: "none" if f.name in self._computed and pa.types.is_floating(f.type) else "snappy"
                      for f in schema}
            self._writer = pa.parquet.ParquetWriter(str(self._tmp), schema, use_dictionary=text or False,
                                                    compression=codecs)
            self._pool = concurrent.futures.ThreadPoolExecutor(1, thread_name_prefix="redcorr-parquet")
        elif self.format in ("csv", "ecsv"):
            self._sink = pa.OSFile(str(self._tmp), "wb")
            if self.path.suffix.lower() == ".gz":
                self._sink = pa.CompressedOutputStream(self._sink, "gzip")
            if self.format == "ecsv":
                if frame is None:  # the header's types follow pandas, as for a DataFrame chunk
                    frame = chunk.to_pandas(types_mapper=_int_as_nullable)
                self._sink.write(self._ecsv_header(frame).encode("utf-8"))
            else:
                options = pa.csv.WriteOptions(include_header=True, delimiter=self._delimiter)
                pa.csv.write_csv(self._schema.empty_table(), self._sink, write_options=options)
            self._csv_options = pa.csv.WriteOptions(
                include_header=False, delimiter=self._delimiter if self.format == "csv" else ","
            )
            self._plain_options = pa.csv.WriteOptions(
                include_header=False, delimiter=self._delimiter, quoting_style="none"
            )
            self._pool = concurrent.futures.ThreadPoolExecutor(2, thread_name_prefix="redcorr-csv")

    def _ecsv_header(self, frame):
        from astropy.table import Table  # noqa: PLC0415

        empty = Table.from_pandas(frame.iloc[:0])
        for name in empty.colnames:
            if _is_text(frame[name]):
                empty[name] = empty[name].astype(str)
        empty.meta.update(self._meta)
        buf = io.StringIO()
        empty.write(buf, format="ascii.ecsv", delimiter=",")
        return buf.getvalue()  # header lines and the column-name line

    def _csv_text(self, table):
        pa = _pyarrow()
        for i, field in enumerate(table.schema):
            if field.name in self._computed and pa.types.is_floating(field.type):
                column = table.column(i)
                values = round_for_text(column.to_numpy()).astype(field.type.to_pandas_dtype(), copy=False)
                mask = column.is_null().to_numpy() if column.null_count else None
                table = table.set_column(i, field, pa.array(values, type=field.type, mask=mask))
        if not self._verbatim:
            return _csv_bytes(table, self._csv_options)
        try:  # text copied from the input goes out unquoted, as it came in
            return _csv_bytes(table, self._plain_options)
        except pa.ArrowInvalid:  # some field holds the delimiter, a quote or a line end
            return self._quote_rows_that_need_it(table)

    def _quote_rows_that_need_it(self, table):
        """CSV text of ``table`` with the text fields of rows that need quotes quoted.

        Rows whose text fields are free of the delimiter, quotes and line
        ends are written unquoted; the others with every text field quoted
        (RFC 4180). The choice is made row by row, so the text does not
        depend on how the rows were chunked.
        """
        pa = _pyarrow()
        pc = pa.compute
        needs = np.zeros(table.num_rows, dtype=bool)
        for column in table.columns:
            if pa.types.is_string(column.type):
                for special in {self._delimiter, '"', "\n", "\r"}:
                    found = pc.fill_null(pc.match_substring(column, special), False)
                    needs |= found.to_numpy(zero_copy_only=False)
        edges = np.concatenate([[0], np.flatnonzero(np.diff(needs)) + 1, [table.num_rows]])
        parts = [
            _csv_bytes(table.slice(a, b - a), self._csv_options if needs[a] else self._plain_options)
            for a, b in zip(edges[:-1], edges[1:], strict=True)
        ]
        return b"".join(part.to_pybytes() for part in parts)

    def _drain(self, limit):
        """Finish the oldest tasks until at most ``limit`` are in flight (text goes to the file in order)."""
        while len(self._pending) > limit:
            result = self._pending.popleft().result()
            if self._sink is not None:
                self._sink.write(result)

    def write(self, chunk):
        """Append one chunk: a DataFrame, or an Arrow table, with the same columns as the first."""
        pa = _pyarrow()
        if self._schema is None:
            self._open(chunk)
        if isinstance(chunk, pd.DataFrame):
            table = pa.Table.from_pandas(chunk, schema=self._schema, preserve_index=False)
        else:
            table = chunk.cast(self._schema)
        if self.format == "fits":
            self._spool.add(table)
        elif self.format == "parquet" and len(table):
            self._pending.append(self._pool.submit(self._writer.write_table, table))
            self._drain(1)
        elif len(table):
            for start in range(0, table.num_rows, _CSV_SLICE_ROWS):
                self._pending.append(self._pool.submit(self._csv_text, table.slice(start, _CSV_SLICE_ROWS)))
                self._drain(_CSV_PENDING)
        self.rows += len(table)

    def _finish(self, failed):
        """Write what is in flight (or drop it after a failure), then close the file."""
        try:
            if failed:
                for task in self._pending:
                    task.cancel()
                self._pending.clear()
            self._drain(0)
        finally:
            if self._pool is not None:
                self._pool.shutdown(wait=True, cancel_futures=True)
            if self._writer is not None:
                self._writer.close()
            if self._sink is not None:
                self._sink.close()

    def __exit__(self, exc_type, exc, tb):
        try:
            self._finish(exc_type is not None)
            if exc_type is None and self._spool is not None:
                self._spool.write(self._tmp, self._meta)
        except BaseException as err:
            self._atomic.__exit__(type(err), err, err.__traceback__)
            raise
        finally:
            if self._spool is not None:
                self._spool.cleanup()
        if exc_type is None and self._schema is None:
            exc_type = exc = InputError("nothing was written")
        return self._atomic.__exit__(exc_type, exc, tb)


def write_catalog(frame, path, **options):
    """Write one DataFrame to a catalog file (options as for :class:`CatalogWriter`)."""
    with CatalogWriter(path, **options) as writer:
        writer.write(frame)
    return Path(path)


def summary_path(output):
    """Where the JSON summary of a run writing ``output`` goes: ``OUTPUT.summary.json``."""
    output = Path(output)
    return output.with_name(output.name + ".summary.json")


def write_summary(summary, output):
    """Write a run summary (a JSON-ready dict) beside ``output``, atomically; return its path."""
    target = summary_path(output)
    with atomic_path(target) as tmp:
        Path(tmp).write_text(json.dumps(_json_clean(summary), indent=2, allow_nan=False) + "\n")
    return target


def _json_clean(value):
    if isinstance(value, float) and not np.isfinite(value):
        return None
    if isinstance(value, dict):
        return {str(k): _json_clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_clean(v) for v in value]
    if isinstance(value, np.generic):
        return _json_clean(value.item())
    return value


@contextlib.contextmanager
def atomic_folder(path, *, overwrite=False):
    """Yield a temporary folder beside ``path``; move it onto ``path`` on success.

    Used for Parquet datasets written by several workers. An existing
    ``path`` is refused unless ``overwrite``; then it is replaced only after
    the new folder is complete.
    """
    target = Path(path)
    if target.exists() and not overwrite:
        raise InputError(f"output={str(path)!r} exists; choose another name or allow overwriting")
    if not target.parent.exists():
        raise InputError(f"output={str(path)!r}: folder {str(target.parent)!r} does not exist")
    tmp = Path(tempfile.mkdtemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent))
    try:
        yield tmp
        if target.exists():
            old = Path(tempfile.mkdtemp(prefix=f".{target.name}.", suffix=".old", dir=target.parent))
            os.replace(target, old / target.name)
            os.replace(tmp, target)
            shutil.rmtree(old, ignore_errors=True)
        else:
            os.replace(tmp, target)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise

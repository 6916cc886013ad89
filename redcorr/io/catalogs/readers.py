"""Opening a catalog: :func:`open_catalog` picks the reader of the format; FITS and Parquet readers."""

import warnings
from pathlib import Path

import numpy as np
import pandas as pd

from redcorr._constants import DEFAULT_CHUNK_ROWS
from redcorr.exceptions import InputError
from redcorr.io.catalogs._base import CatalogReader, _check_unique, rebatch
from redcorr.io.catalogs.csv_readers import _CsvReader, _EcsvReader
from redcorr.io.catalogs.formats import _int_as_nullable, detect_format, load_pyarrow

__all__ = ["check_csv_marks", "open_catalog", "read_catalog"]

_READ_BUFFER = 1 << 20
"""Bytes read at a time from each Parquet column chunk (pages are decoded from this buffer)."""


class _FitsReader(CatalogReader):
    def __init__(self, path, fmt, chunk_rows, *, hdu=None, **_):
        from astropy.io import fits  # noqa: PLC0415

        super().__init__(path, fmt, chunk_rows)
        # astropy warns of cut-off or damaged files while they are opened and inspected: record
        # every warning ("always", so one already shown elsewhere in this process is recorded too);
        # a refused file then gives one line, and a whole file hands its warnings to the caller
        with warnings.catch_warnings(record=True) as damaged:
            warnings.simplefilter("always")
            try:
                self._hdul = fits.open(self.path, memmap=True)
                tables = [h for h in self._hdul if isinstance(h, fits.BinTableHDU)]
            except (OSError, ValueError) as exc:
                raise InputError(f"input {str(path)!r} could not be opened as FITS: {exc}") from None
            if damaged and not tables:
                self._hdul.close()
                raise InputError(f"input {str(path)!r} is a damaged or truncated FITS file: "
                                 f"{str(damaged[0].message).splitlines()[0]}")
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
            header = self._hdu.header
            needed = self._hdu.fileinfo()["datLoc"] + header.get("NAXIS1", 0) * self.n_rows + header.get("PCOUNT", 0)
            if needed > self.path.stat().st_size:
                self._hdul.close()
                raise InputError(f"input {str(path)!r} is a truncated FITS file: its table needs {needed} bytes, "
                                 f"the file has {self.path.stat().st_size}")
        for caught in damaged:  # a whole file: its warnings are the caller's
            warnings.warn(caught.message, stacklevel=3)

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
        pa = load_pyarrow()
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

    def _file_batches(self, path):
        """Record batches of one Parquet file, decoded a batch at a time.

        Each column chunk is read through a buffer of :data:`_READ_BUFFER` bytes and nothing is
        fetched ahead (pyarrow's ``pre_buffer`` would hold every row group of the file in memory,
        and whole column chunks are read at once without a buffer): memory stays bounded by the
        chunk size, whatever the size of the file or of its row groups.
        """
        with load_pyarrow().parquet.ParquetFile(path, pre_buffer=False, buffer_size=_READ_BUFFER) as file:
            yield from file.iter_batches(batch_size=self.chunk_rows)

    def _folder_batches(self):
        """Record batches of a folder, file after file (the dataset's order), with the partition columns.

        Each file is read as a single file is (the dataset's own scanner decodes whole row groups
        and reads files ahead, so its memory grew with the folder); hive partition columns are
        added with the value of the file's partition.
        """
        pa = load_pyarrow()
        schema = self._dataset.schema
        for fragment in self._dataset.get_fragments():
            keys = pa.dataset.get_partition_keys(fragment.partition_expression)
            for batch in self._file_batches(fragment.path):
                names = set(batch.schema.names)
                columns = [batch.column(f.name) if f.name in names else
                           pa.repeat(pa.scalar(keys.get(f.name), f.type), batch.num_rows) for f in schema]
                yield pa.RecordBatch.from_arrays(columns, schema=schema)

    def _tables(self):
        batches = self._folder_batches() if self.path.is_dir() else self._file_batches(str(self.path))
        for table in rebatch(batches, self.chunk_rows):
            self._done += table.num_rows
            yield table

    def _frames(self):
        for table in self._tables():
            yield table.to_pandas(types_mapper=_int_as_nullable)


def check_csv_marks(delimiter, comment):
    """Refuse a CSV delimiter or comment mark that is not one character (``comment`` may be empty: none)."""
    if len(delimiter) != 1:
        raise InputError(f"delimiter={delimiter!r} must be one character")
    if comment and len(comment) != 1:
        raise InputError(f"comment={comment!r} must be one character, or empty for no comment lines")


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
    if fmt == "csv":
        check_csv_marks(delimiter, comment)
    if hdu is not None and fmt != "fits":
        raise InputError(f"hdu={hdu!r} is for FITS input; {str(path)!r} is read as {fmt}")
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


"""The interface every catalog reader implements, and the helpers they share."""

import abc
from pathlib import Path

import pandas as pd

from redcorr.exceptions import InputError
from redcorr.io.catalogs.formats import load_pyarrow

__all__ = ["CatalogReader", "rebatch"]


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



def rebatch(batches, chunk_rows):
    """Regroup Arrow record batches into tables of exactly ``chunk_rows`` rows (the last may be shorter).

    Parameters
    ----------
    batches : iterable of pyarrow.RecordBatch
        With one schema; empty batches are skipped.
    chunk_rows : int

    Yields
    ------
    pyarrow.Table
        The rows of ``batches`` in order (no copy: the tables refer to the
        batches' buffers); none when there are no rows.
    """
    pa = load_pyarrow()
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

    def describe_row(self, row):
        """How a message names row ``row`` (from 0, in reading order): ``"row N"``, counted from 1.

        Text formats add the line of the file where the row begins.
        """
        return f"row {row + 1}"

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
        pa = load_pyarrow()
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


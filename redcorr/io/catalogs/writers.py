"""Writing catalogs in chunks, atomically: CSV and ECSV text, Parquet, and FITS through a spool."""

import collections
import concurrent.futures
import io
import json
import shutil
from pathlib import Path

import numpy as np
import pandas as pd

from redcorr.exceptions import InputError
from redcorr.io._atomic import _temp_name, atomic_path, check_output_path
from redcorr.io.catalogs.formats import (
    _arrow_schema,
    _int_as_nullable,
    _is_text,
    detect_format,
    load_pyarrow,
    round_for_text,
)

__all__ = ["CatalogWriter", "CsvText", "EncodingQueue", "open_parquet", "release_free_memory", "write_catalog"]

_CSV_SLICE_ROWS = 16_384
"""Rows formatted as text per task of a CSV writer."""

_CSV_PENDING = 4
"""Formatted CSV slices waiting to be written, at most (about 10 MB each for 33 columns)."""

_CSV_THREADS = 2
"""Threads turning rows into CSV text (measured, Dask engine, 1 M rows on 2 workers: 1.08x the stream
engine's time with two, 1.21x with one thread formatting whole chunks)."""


class _FitsSpool:
    """FITS table output in bounded memory.

    A FITS table header states the row count and string widths before the
    rows, so chunks are first spooled to Parquet files in a folder beside the
    target. At the end each spooled chunk is turned into table rows by
    astropy (fixed formats for all chunks) and the rows are streamed after
    the header with :class:`astropy.io.fits.StreamingHDU`.
    """

    def __init__(self, target, schema):
        pa = load_pyarrow()
        self.dir = _temp_name(target, "spool")  # names its owner, removed by a later run if this one is killed
        self.dir.mkdir()
        self.schema = schema
        self.files = []
        self.rows = 0
        self.widths = {f.name: 1 for f in schema if pa.types.is_string(f.type) or pa.types.is_large_string(f.type)}
        self.int_nulls = set()

    def add(self, table):
        pa = load_pyarrow()
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
        pa = load_pyarrow()
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

        pa = load_pyarrow()
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

        pa = load_pyarrow()
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


def release_free_memory():
    """Give the memory that pyarrow's allocator holds free back to the system; call it after each chunk.

    pyarrow's default allocator on Linux (mimalloc) keeps freed pages for a
    while before it returns them, and how many it keeps depends on the
    timing of the threads that read, correct and write. Measured (CSV to
    Parquet, 65 536-row chunks, 15 columns in, 33 out, 256 kB CSV blocks):
    42-55 MB kept beside about 40 MB in use, at times 77 MB; peak RSS
    331-389 MB over four runs of 5 M rows. With this call after each chunk:
    23-34 MB kept; peak RSS 330-344 MB over four runs of 5 M rows (319-334 MB
    for 1 M rows). It takes about 2 µs.
    """
    load_pyarrow().default_memory_pool().release_unused()


class EncodingQueue:
    """Chunks encoded beside the caller, at most a few in flight, their results written in order.

    Parquet chunks go to one worker thread (:meth:`add_parquet`); CSV rows are
    turned into text in slices of :data:`_CSV_SLICE_ROWS` rows by
    :data:`_CSV_THREADS` threads and written to ``sink`` in order
    (:meth:`add_text`). pyarrow releases the GIL for both, so the caller
    meanwhile reads and corrects the next chunk; memory stays bounded.

    Parameters
    ----------
    parquet : bool
        Whether the chunks go to a Parquet writer (one thread) or become text.
    name : str
        Prefix of the threads' names.

    Attributes
    ----------
    sink : file-like or None
        Where :meth:`add_text` writes the text (set by the owner once the file is open).
    """

    def __init__(self, parquet, name):
        threads = 1 if parquet else _CSV_THREADS
        self._pool = concurrent.futures.ThreadPoolExecutor(threads, thread_name_prefix=name)
        self._pending = collections.deque()
        self.sink = None

    def add_parquet(self, writer, table):
        """Write ``table`` with the ParquetWriter ``writer`` in the worker (after the chunk before it)."""
        self._pending.append(self._pool.submit(writer.write_table, table))
        self._drain(1)

    def add_text(self, text, table):
        """Format ``table`` with ``text`` (slice -> bytes) in slices and write them to :attr:`sink` in order."""
        for start in range(0, table.num_rows, _CSV_SLICE_ROWS):
            self._pending.append(self._pool.submit(text, table.slice(start, _CSV_SLICE_ROWS)))
            self._drain(_CSV_PENDING)

    def _drain(self, limit):
        """Finish the oldest tasks until at most ``limit`` are in flight (text goes to the sink in order)."""
        while len(self._pending) > limit:
            result = self._pending.popleft().result()
            if self.sink is not None:
                self.sink.write(result)

    def close(self, failed):
        """Write what is in flight (or drop it after a failure), then stop the threads."""
        try:
            if failed:
                for task in self._pending:
                    task.cancel()
                self._pending.clear()
            self._drain(0)
        finally:
            self._pool.shutdown(wait=True, cancel_futures=True)


def open_parquet(path, schema, computed):
    """A pyarrow ParquetWriter for ``schema``: dictionary encoding for text only, computed floats uncompressed.

    Dictionary encoding only pays for text; on measured floats it costs ~10x
    in time. Computed doubles do not compress (snappy cost a third of the
    write and saved nothing); other columns are snappy-compressed.
    """
    pa = load_pyarrow()
    text = [f.name for f in schema if pa.types.is_string(f.type) or pa.types.is_large_string(f.type)]
    codecs = {f.name: "none" if f.name in computed and pa.types.is_floating(f.type) else "snappy" for f in schema}
    return pa.parquet.ParquetWriter(str(path), schema, use_dictionary=text or False, compression=codecs)


def _csv_header(names, delimiter):
    """The CSV header line of ``names``: a name is quoted only where RFC 4180 needs it, as the rows are.

    Examples
    --------
    >>> print(_csv_header(["id", "kw_v", "x,y"], ","), end="")
    id,kw_v,"x,y"
    """

    def cell(name):
        if any(c in name for c in (delimiter, '"', "\n", "\r")):
            return '"' + name.replace('"', '""') + '"'
        return name

    return delimiter.join(cell(str(n)) for n in names) + "\n"


def _csv_bytes(table, options):
    """``table`` as CSV text (a pyarrow buffer)."""
    pa = load_pyarrow()
    buf = pa.BufferOutputStream()
    pa.csv.write_csv(table, buf, write_options=options)
    return buf.getvalue()


class CsvText:
    """Rows of Arrow tables as the CSV (or ECSV body) text :class:`CatalogWriter` writes.

    The one home of that text: the writer formats its slices with it, and
    the Dask engine (:mod:`redcorr.io.dask_engine`) its partitions, so that
    both engines write the same rows.

    Parameters
    ----------
    delimiter : str
    computed : iterable of str
        Columns whose floating-point values are rounded (:func:`round_for_text`).
    verbatim : bool
        Text columns read verbatim go out unquoted, except in rows where
        some text holds the delimiter, a quote or a line end (see
        ``verbatim`` of :class:`CatalogWriter`).
    """

    def __init__(self, delimiter=",", computed=(), verbatim=False):
        pa = load_pyarrow()
        self.delimiter = delimiter
        self.computed = set(computed)
        self.verbatim = bool(verbatim)
        self._options = pa.csv.WriteOptions(include_header=False, delimiter=delimiter)
        self._plain_options = pa.csv.WriteOptions(include_header=False, delimiter=delimiter, quoting_style="none")

    def header(self, names):
        """The header line of ``names`` (UTF-8 bytes), quoted as the rows are."""
        return _csv_header(names, self.delimiter).encode("utf-8")

    def __call__(self, table):
        """The rows of ``table`` as text (bytes or a pyarrow buffer), without a header."""
        pa = load_pyarrow()
        for i, field in enumerate(table.schema):
            if field.name in self.computed and pa.types.is_floating(field.type):
                column = table.column(i)
                values = round_for_text(column.to_numpy()).astype(field.type.to_pandas_dtype(), copy=False)
                mask = column.is_null().to_numpy() if column.null_count else None
                table = table.set_column(i, field, pa.array(values, type=field.type, mask=mask))
        if not self.verbatim:
            return _csv_bytes(table, self._options)
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
        pa = load_pyarrow()
        pc = pa.compute
        needs = np.zeros(table.num_rows, dtype=bool)
        for column in table.columns:
            if pa.types.is_string(column.type):
                for special in {self.delimiter, '"', "\n", "\r"}:
                    found = pc.fill_null(pc.match_substring(column, special), False)
                    needs |= found.to_numpy(zero_copy_only=False)
        edges = np.concatenate([[0], np.flatnonzero(np.diff(needs)) + 1, [table.num_rows]])
        parts = [
            _csv_bytes(table.slice(a, b - a), self._options if needs[a] else self._plain_options)
            for a, b in zip(edges[:-1], edges[1:], strict=True)
        ]
        return b"".join(part.to_pybytes() for part in parts)


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

    After each chunk, the memory pyarrow holds free goes back to the system
    (:func:`release_free_memory`).

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
    group : object from :func:`redcorr.io.output_group`, optional
        Place the output with the others of the group (a catalog and its
        summary appear together or not at all).
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
                 verbatim=False, group=None):
        self.path = Path(path)
        self.format = detect_format(self.path, fmt) if fmt or self.path.suffix else "parquet"
        self._overwrite = overwrite
        self._group = group
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
        self._tasks = None
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
        # FITS is written by astropy, which needs a real file name
        self._atomic = atomic_path(self.path, overwrite=self._overwrite, group=self._group,
                                   named=self.format == "fits")
        self._tmp = self._atomic.__enter__()
        return self

    def _open(self, chunk):
        pa = load_pyarrow()
        if isinstance(chunk, pd.DataFrame):
            frame, self._schema = chunk, _arrow_schema(chunk)
        else:
            frame, self._schema = None, chunk.schema.remove_metadata()
        if self.format == "fits":
            self._spool = _FitsSpool(self.path, self._schema)
        elif self.format == "parquet":
            self._schema = self._schema.with_metadata({"redcorr": json.dumps(self._meta, default=str)})
            self._writer = open_parquet(self._tmp, self._schema, self._computed)
            self._tasks = EncodingQueue(True, "redcorr-parquet")
        elif self.format in ("csv", "ecsv"):
            self._sink = pa.OSFile(str(self._tmp), "wb")
            if self.path.suffix.lower() == ".gz":
                self._sink = pa.CompressedOutputStream(self._sink, "gzip")
            if self.format == "ecsv":
                if frame is None:  # the header's types follow pandas, as for a DataFrame chunk
                    frame = chunk.to_pandas(types_mapper=_int_as_nullable)
                self._sink.write(self._ecsv_header(frame).encode("utf-8"))
            else:
                self._sink.write(_csv_header(self._schema.names, self._delimiter).encode("utf-8"))
            self._text = CsvText(self._delimiter if self.format == "csv" else ",", self._computed, self._verbatim)
            self._tasks = EncodingQueue(False, "redcorr-csv")
            self._tasks.sink = self._sink

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

    def write(self, chunk):
        """Append one chunk: a DataFrame, or an Arrow table, with the same columns as the first."""
        pa = load_pyarrow()
        if self._schema is None:
            self._open(chunk)
        if isinstance(chunk, pd.DataFrame):
            table = pa.Table.from_pandas(chunk, schema=self._schema, preserve_index=False)
        else:
            table = chunk.cast(self._schema)
        if self.format == "fits":
            self._spool.add(table)
        elif self.format == "parquet" and len(table):
            self._tasks.add_parquet(self._writer, table)
        elif len(table):
            self._tasks.add_text(self._text, table)
        self.rows += len(table)
        release_free_memory()

    def _finish(self, failed):
        """Write what is in flight (or drop it after a failure), then close the file."""
        try:
            if self._tasks is not None:
                self._tasks.close(failed)
        finally:
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

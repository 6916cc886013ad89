"""The Dask engine: catalog files corrected partition by partition on Dask workers.

Files (:func:`plan_csv`, :func:`plan_parquet`, :func:`run_partitions`)
    The input is cut into partitions of about ``partition_rows`` rows:
    byte ranges of CSV files, split at line ends, and groups of row groups
    of Parquet files. Each partition is one Dask task: a worker reads it
    with pyarrow in chunks of ``chunk_rows`` rows, runs the table job on
    each chunk (:meth:`~redcorr.correction.rows.TableJob.correct_arrays`,
    as the stream engine does) and writes a part file with pyarrow
    (Parquet, or CSV text from :class:`~redcorr.io.catalogs.writers.CsvText`,
    the stream writer's own formatting). A worker thus holds a few chunks
    at a time, whatever the partition size. The task returns the counts of
    its rows, which are added up into one :class:`~redcorr.correction.RunSummary`.
    :func:`redcorr.io.batch.correct_file_dask` places the parts atomically.
Dask DataFrames (:func:`correct_dask`, :func:`summarise_dask`)
    For a user's own DataFrame: the job maps over its partitions through pandas.

Dask is optional and imported only when a run starts.
"""

import copy
import gzip
import json
import math
import warnings
from pathlib import Path

from redcorr.exceptions import InputError
from redcorr.io.catalogs import ColumnTypeError, PandasLikeColumns, numeric_as_float, open_catalog, rebatch
from redcorr.io.catalogs.formats import load_pyarrow
from redcorr.io.catalogs.writers import CsvText, EncodingQueue, open_parquet, release_free_memory

__all__ = ["DEFAULT_PARTITION_ROWS", "add_summaries", "correct_dask", "plan_csv", "plan_parquet", "run_partitions",
           "summarise_dask"]

DEFAULT_PARTITION_ROWS = 131_072
"""Rows per partition (one Dask task, one part file), two chunks of the default size: small
enough that the partitions balance the workers and that a CSV output is assembled while the
last ones run (measured 1 M rows, 2 workers: 1.4x the stream engine's time with 250 000 rows,
0.85-1.1x with 125 000; 4 M rows of Parquet in row groups of 65 536: 1.11x with 65 536, 0.86x
with 131 072, 0.93x with 262 144), large enough that a task's overhead stays small (a part
file's writer opened and closed, about 1.3 ms; a row-group scan set up, about 3 ms)."""

_CSV_BLOCK_BYTES = 1 << 20
"""Bytes per block of a partition's CSV reader (doubled for a row longer than a block)."""


_SAMPLE_BYTES = 1 << 20
"""Bytes of a CSV file read to estimate its bytes per row (and so a partition's byte range)."""

_READ_BUFFER = 1 << 20
"""Bytes read at a time from each Parquet column chunk; nothing is fetched ahead."""

_STRADDLING = "straddles two block boundaries"


class _Source:
    """What the workers need to read the partitions: format, columns, CSV marks and types."""

    def __init__(self, fmt, schema, pieces, *, delimiter=",", comment=None, verbatim=False, numeric=()):
        self.format = fmt
        self.schema = schema
        self.pieces = pieces
        self.delimiter = delimiter
        self.comment = comment
        self.verbatim = verbatim
        self.numeric = list(numeric)

    @property
    def columns(self):
        return list(self.schema.names)


def plan_parquet(path, partition_rows):
    """Partitions of a Parquet file or folder (hive-partitioned or not): groups of whole row groups.

    Parameters
    ----------
    path : path-like
    partition_rows : int
        Row groups are grouped, in order, until a group holds at least this
        many rows; a row group is never split, so a file written as one
        row group is one partition.

    Returns
    -------
    _Source
    """
    pa = load_pyarrow()
    path = Path(path)
    with open_catalog(path, fmt="parquet"):  # the stream engine's checks: one schema, unique names
        pass
    dataset = pa.dataset.dataset(str(path), format="parquet", partitioning="hive" if path.is_dir() else None)
    pieces = []
    for fragment in dataset.get_fragments():
        group, rows = [], 0
        for row_group in fragment.row_groups:
            group.append(row_group.id)
            rows += row_group.num_rows
            if rows >= partition_rows:
                pieces.append(fragment.subset(row_group_ids=group))
                group, rows = [], 0
        if group:
            pieces.append(fragment.subset(row_group_ids=group))
    return _Source("parquet", dataset.schema, pieces)


def plan_csv(files, partition_rows, *, delimiter=",", comment="#", numeric=(), text=(), verbatim=False):
    """Partitions of CSV files: byte ranges of about ``partition_rows`` rows, cut at line ends.

    Every file is checked as the stream engine opens it, and all must have
    the same columns. Column types are those the stream engine's reader
    gives the first file (``numeric`` as float64, ``text`` as text, the
    others inferred from its first block), or text throughout when
    ``verbatim`` (CSV output: fields are copied as they are). A gzip file
    is one partition (it cannot be read from the middle).

    A quoted field holding a line end can be cut at that line end: such
    files need ``partition_rows`` larger than the file (one partition), or
    the stream engine.

    Returns
    -------
    _Source
    """
    pa = load_pyarrow()
    schema, pieces = None, []
    for path in map(str, files):
        with open_catalog(path, fmt="csv", delimiter=delimiter, comment=comment, chunk_rows=1,
                          numeric_columns=numeric, text_columns=text) as reader:
            if schema is None:
                names = reader.columns
                first = None if verbatim else next(iter(reader.tables()), None)
                schema = first.schema if first is not None else pa.schema([(n, pa.string()) for n in names])
            elif reader.columns != names:
                raise InputError(f"input {path!r} has columns {reader.columns}, {str(files[0])!r} has {names}; "
                                 "every file must have the same columns")
        pieces += _csv_ranges(path, partition_rows, comment)
    return _Source("csv", schema, pieces, delimiter=delimiter, comment=comment or None, verbatim=verbatim,
                   numeric=[c for c in numeric if c not in set(text)])


def _csv_ranges(path, partition_rows, comment):
    """``(path, start, stop, compressed)`` of the file's data lines (after comments and header), cut at line ends."""
    with open(path, "rb") as fh:
        compressed = fh.read(2) == b"\x1f\x8b"
    with (gzip.open if compressed else open)(path, "rb") as fh:
        skip = 0
        while True:  # leading comment and blank lines, then the header line
            line = fh.readline()
            text = line.removeprefix(b"\xef\xbb\xbf") if skip == 0 else line
            skip += 1
            if not line or not (text.strip() == b"" or (comment and text.startswith(comment.encode()))):
                break
        if compressed:
            return [(path, skip, None, True)]
        start = fh.tell()
        sample = fh.read(_SAMPLE_BYTES)
        size = fh.seek(0, 2)
        rows = (size - start) * max(sample.count(b"\n"), 1) / max(len(sample), 1)  # estimated
        step = max(int((size - start) / math.ceil(rows / partition_rows)), 1) if rows else size  # even parts
        bounds = [start]
        while bounds[-1] + step < size:
            fh.seek(bounds[-1] + step - 1)
            while True:  # the next line start at or after the nominal cut
                block = fh.read(1 << 16)
                end = block.find(b"\n")
                if end >= 0 or not block:
                    break
            if end < 0:
                break
            cut = fh.tell() - len(block) + end + 1
            if cut >= size:
                break
            bounds.append(cut)
        bounds.append(size)
    return [(path, a, b, False) for a, b in zip(bounds[:-1], bounds[1:], strict=True)]


class _Plan:
    """What every task shares: the source, the job, the output (sent to each worker once)."""

    def __init__(self, source, job, keep, folder, out_format, *, chunk_rows, delimiter, compress):
        self.source = source
        self.job = job
        self.keep = list(keep)
        self.folder = str(folder)
        self.out_format = out_format
        self.chunk_rows = int(chunk_rows)
        self.delimiter = delimiter
        self.compress = compress
        self.meta = {"redcorr_correction": job.setup()}

    def part(self, number):
        """Path of partition ``number``'s part file (names sort in input order)."""
        suffix = ".parquet" if self.out_format == "parquet" else ".csv.gz" if self.compress else ".csv"
        return Path(self.folder) / f"part-{number:06d}{suffix}"


def run_partitions(source, job, keep, folder, out_format, *, chunk_rows, delimiter=",", compress=False,
                   **compute_options):
    """Correct every partition of ``source`` on Dask; each writes its part file into ``folder``.

    Parameters
    ----------
    source : from :func:`plan_csv` or :func:`plan_parquet`
    job : redcorr.correction.rows.TableJob
        Set up with ``source.columns``; copied to every task.
    keep : list of str
        Input columns copied to the output before the job's columns.
    folder : path-like
        An existing folder the workers can write to (a shared file system
        for workers on other machines).
    out_format : {"parquet", "csv"}
        Part files ``part-NNNNNN.parquet``, or ``part-NNNNNN.csv`` text
        without a header (gzip members if ``compress``), in input order.
    chunk_rows : int
        Rows a worker reads, corrects and writes at a time.
    **compute_options
        Passed to :func:`dask.compute` (the local threads if omitted); with
        ``scheduler=client`` (a ``distributed`` Client) the tasks are
        submitted to it.

    Yields
    ------
    (RunSummary, pathlib.Path)
        Each partition's summary (see :func:`add_summaries`) and part file,
        in input order, as soon as that partition and those before it are
        done (with ``distributed``; at the end with the local threads), so
        that the caller can use the first parts while the others run.
    """
    plan = _Plan(source, job, keep, folder, out_format, chunk_rows=chunk_rows, delimiter=delimiter,
                 compress=compress)
    numbers = range(len(source.pieces))
    client = compute_options.get("scheduler")
    if hasattr(client, "scatter"):  # a distributed Client
        # every worker gets the plan first, so that the scheduler places the tasks by load alone
        # (were the plan a task's result, they would all go where it was computed)
        shared = client.scatter(plan, broadcast=True, hash=False)
        futures = client.map(_run_partition, numbers, source.pieces, plan=shared, pure=False)
        try:
            for number, future in zip(numbers, futures, strict=True):
                yield future.result(), plan.part(number)
        finally:
            client.cancel([*futures, shared])  # after a failure: the other tasks stop writing
        return
    import dask  # noqa: PLC0415 - optional dependency

    shared = dask.delayed(plan, name=f"redcorr-plan-{id(plan):x}", traverse=False)  # in the graph once
    run = dask.delayed(_run_partition, pure=False)
    compute_options.setdefault("scheduler", "threads")
    summaries = dask.compute(*[run(number, piece, shared) for number, piece in enumerate(source.pieces)],
                             **compute_options)
    yield from zip(summaries, map(plan.part, numbers), strict=True)


def add_summaries(summary, parts):
    """Fold the partitions' summaries into ``summary`` (its set-up and clock kept); returns it."""
    for part in parts:
        summary.rows += part.rows
        for name, count in part.flagged.items():
            summary.flagged[name] += count
        summary.ebv_min = float(min(summary.ebv_min, part.ebv_min, key=_nan_last))
        summary.ebv_max = float(max(summary.ebv_max, part.ebv_max, key=_nan_first))
        summary.iterations_max = max(summary.iterations_max, part.iterations_max)
        summary.iterations_sum += part.iterations_sum
    return summary


def _nan_last(value):
    return (value != value, value)  # NaN (no value yet) sorts after every number


def _nan_first(value):
    return (value == value, value)


def _run_partition(number, piece, plan):
    """Read, correct and write one partition; return its summary (a worker's task)."""
    block = _CSV_BLOCK_BYTES
    while True:
        job = copy.copy(plan.job)  # shared with the other tasks of this worker: a copy for this one
        job.summary = type(job.summary)()
        job.describe_row = lambda row: f"row {row + 1} of Dask partition {number + 1} (counted from its start)"
        carry = PandasLikeColumns(plan.keep)
        try:
            with _PartWriter(plan, number) as writer:
                for table in _tables(piece, plan, number, block):
                    typed = numeric_as_float(table, plan.source.numeric) if plan.source.verbatim else table
                    writer.write(carry.table(table, job.correct_arrays(typed)))
            return job.summary
        except _LongRow:
            block *= 2  # a row longer than a block: the partition again, with larger blocks


class _LongRow(Exception):
    """A CSV row longer than the reader's block."""


def _tables(piece, plan, number, block):
    """The partition as Arrow tables of ``plan.chunk_rows`` rows (the first partition: at least one, maybe empty)."""
    source = plan.source
    batches = _csv_batches(piece, source, block) if source.format == "csv" else _parquet_batches(piece, source, plan)
    empty = number == 0
    for table in rebatch(batches, plan.chunk_rows):
        empty = False
        yield table
    if empty:  # an input without rows still gives an output with its columns
        yield source.schema.empty_table()


def _parquet_batches(fragment, source, plan):
    pa = load_pyarrow()
    scan = pa.dataset.ParquetFragmentScanOptions(use_buffered_stream=True, buffer_size=_READ_BUFFER,
                                                 pre_buffer=False)
    return fragment.to_batches(schema=source.schema, batch_size=plan.chunk_rows, batch_readahead=1,
                               fragment_scan_options=scan)


def _csv_batches(piece, source, block):
    pa = load_pyarrow()
    path, start, stop, compressed = piece
    names = source.columns
    if source.verbatim:
        convert = pa.csv.ConvertOptions(column_types=dict.fromkeys(names, pa.string()), strings_can_be_null=False,
                                        quoted_strings_can_be_null=False)
    else:
        convert = pa.csv.ConvertOptions(column_types=dict(zip(names, source.schema.types, strict=True)),
                                        strings_can_be_null=True)
    comment = source.comment

    def invalid(row):  # comment lines between rows are skipped, as by the stream engine
        return "skip" if comment and row.text.lstrip().startswith(comment) else "error"

    parse = pa.csv.ParseOptions(delimiter=source.delimiter, invalid_row_handler=invalid)
    read = pa.csv.ReadOptions(block_size=block, column_names=names, skip_rows=start if compressed else 0)
    with pa.OSFile(path, "rb") as raw:
        stream = pa.CompressedInputStream(raw, "gzip") if compressed else raw.get_stream(start, stop - start)
        try:
            reader = pa.csv.open_csv(stream, read_options=read, parse_options=parse, convert_options=convert)
            yield from reader
        except (pa.ArrowInvalid, OSError, EOFError) as exc:
            if "Empty CSV file" in str(exc):  # a file without data lines: no rows
                return
            raise _read_error(exc, piece, names) from None


def _read_error(exc, piece, names):
    """The error of a partition's CSV reader as the stream engine reports it."""
    import re  # noqa: PLC0415

    text = str(exc)
    if _STRADDLING in text:
        return _LongRow()
    match = re.search(r"In CSV column #(\d+): .*conversion error", text)
    if match and int(match.group(1)) < len(names):
        return ColumnTypeError(names[int(match.group(1))])  # read again with that column as text
    path, start, stop, compressed = piece
    where = "" if compressed else f" (bytes {start}..{stop})"
    return InputError(f"input {path!r}{where} could not be read as CSV: {text.splitlines()[0]}")


class _PartWriter:
    """One part file: Parquet as :class:`~redcorr.io.catalogs.CatalogWriter` writes it, or CSV rows.

    As in that writer, the encoding runs beside the caller, which meanwhile
    reads and corrects the next chunk
    (:class:`~redcorr.io.catalogs.writers.EncodingQueue`); after each chunk
    the memory pyarrow holds free goes back to the system
    (:func:`~redcorr.io.catalogs.writers.release_free_memory`). No temporary
    name: the part lives in the engine's temporary folder, placed (or
    dropped) as a whole; a task run again writes it anew.
    """

    def __init__(self, plan, number):
        self.plan, self.path = plan, plan.part(number)
        self._writer = self._sink = self._schema = None
        self._tasks = EncodingQueue(plan.out_format == "parquet", "redcorr-part")

    def __enter__(self):
        return self

    def write(self, table):
        if self._schema is None:
            self._open(table.schema.remove_metadata())
        table = table.cast(self._schema)
        if self._writer is not None:
            self._tasks.add_parquet(self._writer, table)
        else:
            self._tasks.add_text(self._text, table)
        release_free_memory()

    def _open(self, schema):
        pa = load_pyarrow()
        plan = self.plan
        if plan.out_format == "parquet":
            self._schema = schema.with_metadata({"redcorr": json.dumps(plan.meta, default=str)})
            self._writer = open_parquet(self.path, self._schema, set(plan.job.output_columns))
        else:
            self._schema = schema
            self._sink = pa.OSFile(str(self.path), "wb")
            if plan.compress:
                self._sink = pa.CompressedOutputStream(self._sink, "gzip")
            self._tasks.sink = self._sink
            self._text = CsvText(plan.delimiter, plan.job.output_columns, plan.source.verbatim)

    def __exit__(self, exc_type, *exc):
        try:
            self._tasks.close(exc_type is not None)
        finally:
            if self._writer is not None:
                self._writer.close()
            if self._sink is not None:
                self._sink.close()


def correct_dask(ddf, correction, keep=None):
    """Correct a Dask DataFrame partition by partition; returns a lazy Dask DataFrame.

    Parameters
    ----------
    ddf : dask.dataframe.DataFrame
    correction : redcorr.correction.Correction
        Set up with ``list(ddf.columns)``; it is sent to the workers. Its
        :attr:`~redcorr.correction.Correction.summary` is not updated (the
        partitions run elsewhere); summarise the result with
        :func:`summarise_dask`.
    keep : list of str, optional
        Input columns to copy to the result (default all).

    Returns
    -------
    dask.dataframe.DataFrame
        The same rows and columns as :meth:`~redcorr.correction.Correction.correct` gives.

    Notes
    -----
    A worker knows its partition, not the rows before it: a message about
    a row (strict mode) names the partition and the row counted from the
    partition's start.
    """
    meta = correction.apply(ddf._meta, keep)
    return ddf.map_partitions(_correct_partition, correction, keep, meta=meta)


def _correct_partition(frame, correction, keep, partition_info=None):
    """``correction.apply`` on one partition, its messages naming the partition (``partition_info``: from Dask)."""
    if partition_info is not None:
        number = partition_info["number"] + 1
        correction = copy.copy(correction)  # shared by the threads of other partitions: a copy for this one
        correction.describe_row = lambda row: f"row {row + 1} of Dask partition {number} (counted from its start)"
    return correction.apply(frame, keep)


def summarise_dask(result, correction, also=(), **compute_options):
    """A :class:`~redcorr.correction.RunSummary` of a corrected Dask DataFrame.

    Parameters
    ----------
    result : dask.dataframe.DataFrame
        From :func:`correct_dask`.
    correction : redcorr.correction.Correction
    also : list of dask collections
        Computed in the same pass (e.g. the delayed write of ``result``), so
        the partitions are corrected only once.
    **compute_options
        Passed to :func:`dask.compute` (e.g. ``scheduler=client``).
    """
    import dask  # noqa: PLC0415 - optional dependency

    kind = type(correction.summary)  # RunSummary, or a subclass naming other flags and columns
    flags = result[kind.FLAG_COLUMN]
    ebv = result[kind.EBV_COLUMN]
    counts = {name: (flags & bit).astype(bool).sum() for name, bit in kind.FLAG_BITS.items()}
    counts["any"] = (flags != 0).sum()
    extra = {"rows": flags.count(), "ebv_min": ebv.min(), "ebv_max": ebv.max()}
    if "teff_iterations" in result.columns:
        extra["it_max"] = result["teff_iterations"].max()
        extra["it_sum"] = result["teff_iterations"].sum()
    with warnings.catch_warnings():  # a delayed CSV write mixes graph types; harmless here
        warnings.filterwarnings("ignore", message="Computing mixed collections", category=UserWarning)
        counts, extra, *_ = dask.compute(counts, extra, *also, **compute_options)
    summary = kind(correction.setup())
    summary.started = correction.summary.started  # timed from the set-up, as the stream engine's run
    summary.rows = int(extra["rows"])
    summary.flagged = {k: int(v) for k, v in counts.items()}
    summary.ebv_min, summary.ebv_max = float(extra["ebv_min"]), float(extra["ebv_max"])
    if "it_max" in extra:
        summary.iterations_max, summary.iterations_sum = int(extra["it_max"]), int(extra["it_sum"])
    return summary

"""Correct catalog files: stream chunks through a :class:`redcorr.correction.Correction`.

Two engines share one correction:

* :func:`correct_file` streams one file (or Parquet folder) chunk by chunk
  in this process — memory bounded by the chunk size.
* :func:`correct_file_dask` hands Parquet datasets or CSV globs to Dask
  (threads on this machine, or a ``distributed`` scheduler address) and
  writes a Parquet folder or one CSV file.

Both refuse an existing output unless ``overwrite``, never write over an
input, write to a temporary file or folder that is renamed only when
everything succeeded, and write the run summary beside the output as
``OUTPUT.summary.json``.
"""

import contextlib
import glob
import gzip
import os
import queue
import shutil
import threading
from pathlib import Path

from redcorr.correction import Correction
from redcorr.exceptions import InputError
from redcorr.io._atomic import _temp_name, atomic_folder, atomic_path, check_output_path, output_group
from redcorr.io.catalogs import (
    DEFAULT_CHUNK_ROWS,
    CatalogWriter,
    ColumnTypeError,
    PandasLikeColumns,
    check_csv_marks,
    detect_format,
    open_catalog,
    summary_path,
    write_summary,
)
from redcorr.io.catalogs.writers import CsvText
from redcorr.io.dask_engine import DEFAULT_PARTITION_ROWS, add_summaries, run_partitions

__all__ = ["correct_file", "correct_file_dask", "fit_and_correct_file"]

_COPY_BYTES = 8 << 20
"""Bytes copied at a time when a CSV output is assembled from its parts."""


def _check_targets(output, overwrite, inputs):
    check_output_path(output, overwrite=overwrite, inputs=inputs)
    for src in inputs:
        if Path(src).resolve() == Path(output).resolve():
            raise InputError(f"output={str(output)!r} is the input; redcorr never writes over its input")
    side = summary_path(output)
    if side.exists() and not overwrite:
        raise InputError(f"summary file {str(side)!r} exists; choose another output name or allow overwriting "
                         "(overwrite=True; --overwrite on the command line)")


def correct_file(input_path, output_path, make_correction, *, in_format=None, out_format=None,
                 chunk_rows=DEFAULT_CHUNK_ROWS, delimiter=",", comment="#", hdu=None,
                 overwrite=False, progress=None, summary_file=True, keep_columns=None):
    """Correct a catalog file in chunks and write the result atomically.

    Parameters
    ----------
    input_path, output_path : path-like
        Input file (or Parquet folder) and output file. The output format
        follows ``out_format``, else the output's suffix, else the input's.
    make_correction : callable
        ``make_correction(columns) -> Correction``, called once the input's
        column names are known (so that missing columns are reported before
        any output exists).
    in_format, out_format : str, optional
        One of :data:`redcorr.io.catalogs.FORMATS`.
    chunk_rows : int
        Rows per chunk; the result does not depend on it.
    delimiter, comment, hdu
        Passed to :func:`redcorr.io.catalogs.open_catalog` (the delimiter is
        also used for CSV output).
    overwrite : bool
        Replace an existing output.
    progress : callable, optional
        ``progress(rows_done, fraction_or_None)`` after each chunk.
    summary_file : bool
        Write ``OUTPUT.summary.json``.
    keep_columns : list of str, optional
        Input columns to copy to the output before the new ones (default
        all; ``[]`` writes the new columns only). None may share a name
        with an output column (an input corrected before: leave its old
        output columns out, see :meth:`~redcorr.correction.Correction.written_columns`).

    Returns
    -------
    redcorr.correction.RunSummary
    """
    input_path, output_path = Path(input_path), Path(output_path)
    _check_targets(output_path, overwrite, [input_path])
    options = dict(fmt=in_format, chunk_rows=chunk_rows, delimiter=delimiter, comment=comment, hdu=hdu)
    with open_catalog(input_path, **options) as probe:
        columns, fmt_in = probe.columns, probe.format
    keep = _keep(columns, keep_columns)
    correction = make_correction(columns)
    correction.written_columns(keep)  # a kept column named like an output is refused before any output exists
    if out_format is None and not output_path.suffix:
        out_format = fmt_in
    text_columns = set()
    with output_group() as group:  # the output and its summary appear together or not at all
        while True:
            correction.summary = type(correction.summary)(correction.setup())
            try:
                _stream(input_path, output_path, correction, options, text_columns, out_format, delimiter,
                        overwrite, progress, keep, group)
                break
            except ColumnTypeError as exc:  # text in a CSV column read as numbers: read it as text
                if exc.column in text_columns:
                    raise InputError(f"input column {exc.column!r} could not be read") from None
                text_columns.add(exc.column)
        summary = correction.summary.finish()
        if summary_file:
            write_summary(summary.to_dict(), output_path, overwrite=overwrite, group=group)
    summary.warn()
    return summary


def fit_and_correct_file(input_path, output_path, make_fit, options, *, overwrite=False, progress=None):
    """Fit a catalog file, then correct it with the fitted E(B-V): the output appears whole or not at all.

    The fit (`redcorr.io.batch.correct_file` with ``make_fit(columns) ->
    CatalogFit``) is written in the input's format to a temporary folder
    beside the output (not the system's temporary folder, which may be too
    small for a catalog), removed afterwards; the correction of that table (``options``: a
    :class:`~redcorr.correction.CorrectionOptions` reading the fit's
    ``ebv_fit`` and ``ebv_fit_err``) is written atomically to ``output_path``
    with its summary, as :func:`correct_file` writes. ``progress(rows,
    fraction, step)`` is called with step ``"fit"`` or ``"correct"``; an
    exception it raises stops the run and leaves no output.

    Returns
    -------
    (RunSummary, RunSummary)
        The fit's summary and the correction's.
    """
    input_path = Path(input_path)
    _check_targets(Path(output_path), overwrite, [input_path])  # before the fit, not after it
    fmt = detect_format(input_path)

    def step(name):
        return None if progress is None else (lambda rows, fraction: progress(rows, fraction, name))

    scratch = _temp_name(Path(output_path), "spool")  # beside the output, where there is room for a catalog;
    scratch.mkdir()  # named after this process: removed by a later run if this one is killed
    try:
        fitted = scratch / "fitted"
        fit_summary = correct_file(input_path, fitted, make_fit, out_format=fmt, summary_file=False,
                                   progress=step("fit"))
        summary = correct_file(fitted, output_path, lambda columns: Correction(columns, options), in_format=fmt,
                               overwrite=overwrite, progress=step("correct"))
    finally:
        shutil.rmtree(scratch, ignore_errors=True)
    return fit_summary, summary


def _keep(columns, keep_columns):
    """The input columns to copy, checked against the input."""
    if keep_columns is None:
        return list(columns)
    missing = [c for c in keep_columns if c not in columns]
    if missing:
        raise InputError(f"keep_columns: {missing} are not columns of the input; the columns are {list(columns)}")
    return list(dict.fromkeys(keep_columns))


def _stream(input_path, output_path, correction, options, text_columns, out_format, delimiter,
            overwrite, progress, keep, group):
    numeric = [c for c in correction.numeric_columns() if c not in text_columns]
    # CSV to CSV: the input's fields are copied as text, never parsed and formatted again
    verbatim = (detect_format(input_path, options["fmt"]) == "csv"
                and detect_format(output_path, out_format) == "csv")
    with open_catalog(input_path, numeric_columns=numeric, text_columns=text_columns, verbatim=verbatim,
                      **options) as reader:
        correction.describe_row = reader.describe_row  # messages about a row give its line in the file
        meta = {"redcorr_correction": correction.setup()}
        with CatalogWriter(output_path, fmt=out_format, overwrite=overwrite, inputs=[input_path],
                           delimiter=delimiter, meta=meta, computed=correction.output_columns,
                           verbatim=reader.verbatim, group=group) as writer:
            if reader.arrow:  # Arrow in, Arrow out: no DataFrame is built
                carry = PandasLikeColumns(keep)
                typed = reader.typed if reader.verbatim else (lambda table: table)
                for table in _prefetch(reader.tables()):
                    writer.write(carry.table(table, correction.correct_arrays(typed(table))))
                    if progress is not None:
                        progress(correction.summary.rows, reader.fraction_done())
                return
            for chunk in _prefetch(reader):
                writer.write(correction.correct(chunk, keep))
                if progress is not None:
                    progress(correction.summary.rows, reader.fraction_done())


def _prefetch(iterable, depth=2):
    """Iterate ``iterable`` in a background thread, at most ``depth`` items ahead.

    Reading (pyarrow parses outside the GIL) then overlaps with correcting
    and writing the previous chunk; memory grows by ``depth`` chunks only.
    An exception in the reader is raised here; leaving the loop early (an
    error or Ctrl-C in the caller) stops the thread.
    """
    items = queue.Queue(maxsize=depth)
    stop = threading.Event()
    done = object()

    def put(item):
        while not stop.is_set():
            try:
                items.put(item, timeout=0.1)
                return True
            except queue.Full:
                continue
        return False

    def work():
        try:
            for item in iterable:
                if not put((item, None)):
                    return
        except BaseException as exc:  # handed to the consumer, re-raised there
            put((None, exc))
            return
        put((done, None))

    thread = threading.Thread(target=work, name="redcorr-reader", daemon=True)
    thread.start()
    try:
        while True:
            item, exc = items.get()
            if exc is not None:
                raise exc
            if item is done:
                return
            yield item
    finally:
        stop.set()
        thread.join()


def _dask_input(input_path, in_format, delimiter, comment, partition_rows, numeric=(), text=(), verbatim=False):
    """The partitions of a Parquet file or folder, or of CSV files (a name or a glob), and the input files."""
    from redcorr.io.dask_engine import plan_csv, plan_parquet  # noqa: PLC0415

    location = str(input_path)
    path = Path(location)
    if path.exists() and (path.is_dir() or detect_format(path, in_format) == "parquet"):
        return plan_parquet(path, partition_rows), [location]
    files = sorted(glob.glob(location))
    if not files:
        raise InputError(f"input {location!r} matches no file")
    if detect_format(files[0], in_format) != "csv":
        raise InputError(f"input {location!r}: the dask engine reads Parquet files or folders, or CSV files/globs")
    check_csv_marks(delimiter, comment)
    source = plan_csv(files, partition_rows, delimiter=delimiter, comment=comment, numeric=numeric, text=text,
                      verbatim=verbatim)
    return source, files


def correct_file_dask(input_path, output_path, make_correction, *, in_format=None, out_format=None,
                      delimiter=",", comment="#", overwrite=False, scheduler=None, summary_file=True,
                      keep_columns=None, partition_rows=None, chunk_rows=DEFAULT_CHUNK_ROWS):
    """Correct a Parquet file or folder, or CSV files, with Dask; write a Parquet folder or one CSV file.

    The input is cut into partitions of about ``partition_rows`` rows (CSV:
    byte ranges cut at line ends; Parquet: whole row groups), one Dask task
    each; a task reads, corrects and writes its partition with pyarrow,
    ``chunk_rows`` rows at a time, as the stream engine does
    (:mod:`redcorr.io.dask_engine`). The rows, flags and counts are the
    stream engine's; a CSV output is the same text.

    Parameters
    ----------
    input_path : str
        A Parquet file or folder, or a CSV file name or glob (``"part-*.csv"``).
        Workers on other machines must be able to read it under the same
        name (a shared file system).
    output_path : path-like
        A folder of part files (Parquet dataset, the default) or a ``.csv``
        (``.csv.gz``) file, assembled from the partitions' text in input
        order. Written beside its temporary folder, which the workers must
        be able to write to.
    make_correction : callable
        As for :func:`correct_file`.
    scheduler : str, optional
        Address of a ``distributed`` scheduler (``tcp://host:8786``); the
        local threaded scheduler if omitted.
    keep_columns : list of str, optional
        As for :func:`correct_file`.
    partition_rows : int, optional
        Rows per partition (default :data:`~redcorr.io.dask_engine.DEFAULT_PARTITION_ROWS`):
        the unit of work and of part files. A worker's memory does not grow
        with it (it holds a few chunks at a time).
    chunk_rows : int
        Rows a worker corrects at a time; its memory follows this, as the
        stream engine's does.
    Other parameters as for :func:`correct_file`.

    Returns
    -------
    redcorr.correction.RunSummary

    Notes
    -----
    Text in a CSV column that must hold numbers is handled as by the stream
    engine: the run starts again with that column read as text, so that
    such cells become NaN and are flagged and counted (or, with a strict
    correction, are an error).
    """
    output_path = Path(output_path)
    out_fmt = out_format or ("csv" if output_path.suffix.lower() in (".csv", ".gz") else "parquet")
    if out_fmt not in ("csv", "parquet"):
        raise InputError(f"out_format={out_fmt!r}: the dask engine writes 'parquet' (a folder) or 'csv'")
    partition_rows = DEFAULT_PARTITION_ROWS if partition_rows is None else partition_rows
    for name, value in (("partition_rows", partition_rows), ("chunk_rows", chunk_rows)):
        if not isinstance(value, int) or value < 1:
            raise InputError(f"{name}={value!r} must be a whole number >= 1")
    existing = [p for p in glob.glob(str(input_path))] if not Path(input_path).exists() else [input_path]
    _check_targets(output_path, overwrite, existing)
    client = None
    if scheduler:
        from distributed import Client  # noqa: PLC0415

        try:
            client = Client(scheduler, timeout="10s", set_as_default=False)
        except OSError as exc:
            raise InputError(f"scheduler={scheduler!r} could not be reached: {exc}") from None
    with output_group() as group:  # the output and its summary appear together or not at all
        try:
            source, _ = _dask_input(input_path, in_format, delimiter, comment, partition_rows)
            keep = _keep(source.columns, keep_columns)
            correction = make_correction(source.columns)
            correction.written_columns(keep)
            numeric, text = correction.numeric_columns(), set()
            verbatim = source.format == "csv" and out_fmt == "csv"  # fields copied as text, as by the stream engine
            options = {"scheduler": client} if client is not None else {}
            while True:
                try:
                    source, _ = _dask_input(input_path, in_format, delimiter, comment, partition_rows, numeric,
                                            text, verbatim)
                    summary = _run_dask(source, correction, keep, output_path, out_fmt, overwrite, group,
                                        chunk_rows=chunk_rows, delimiter=delimiter, **options)
                    break
                except ColumnTypeError as exc:  # text in a CSV column read as numbers: read it as text
                    if exc.column in text:
                        raise InputError(f"input column {exc.column!r} could not be read") from None
                    text.add(exc.column)
        finally:
            if client is not None:
                client.close()
        summary.finish()
        if summary_file:
            write_summary(summary.to_dict(), output_path, overwrite=overwrite, group=group)
    summary.warn()
    return summary


def _run_dask(source, correction, keep, output_path, out_fmt, overwrite, group, **options):
    """Run the partitions into a temporary folder; place it (Parquet), or the CSV file of its parts, with ``group``."""
    summary = type(correction.summary)(correction.setup())
    summary.started = correction.summary.started  # timed from the set-up, as the stream engine's run
    if out_fmt == "parquet":
        with atomic_folder(output_path, overwrite=overwrite, group=group) as tmp:
            with contextlib.closing(run_partitions(source, correction, keep, tmp, "parquet", **options)) as parts:
                return add_summaries(summary, (part for part, _ in parts))
    compress = output_path.suffix.lower() == ".gz"  # gzip members, one per part: together one gzip file
    scratch = _temp_name(output_path, "spool")  # named after this process: removed by a later run if it is killed
    scratch.mkdir()
    try:
        header = CsvText(options["delimiter"]).header([*keep, *correction.output_columns])
        parts = run_partitions(source, correction, keep, scratch, "csv", compress=compress, **options)
        with contextlib.closing(parts), atomic_path(output_path, overwrite=overwrite, group=group) as tmp, \
                open(tmp, "wb") as out:
            out.write(gzip.compress(header, mtime=0) if compress else header)
            for part, path in parts:  # in input order, while the later partitions run
                add_summaries(summary, [part])
                _append(path, out)
                path.unlink()
    finally:
        shutil.rmtree(scratch, ignore_errors=True)
    return summary


def _append(path, out):
    """Append the file ``path`` to the open binary file ``out``: in the kernel where it can, else through a buffer."""
    out.flush()
    with open(path, "rb", buffering=0) as fh:
        size, done = os.fstat(fh.fileno()).st_size, 0
        with contextlib.suppress(AttributeError, OSError):  # no copy_file_range here, or not between these files
            while done < size:
                copied = os.copy_file_range(fh.fileno(), out.fileno(), size - done)
                if not copied:
                    break
                done += copied
        fh.seek(done)
        out.seek(0, os.SEEK_END)  # past what the kernel appended
        shutil.copyfileobj(fh, out, _COPY_BYTES)  # what is left, if anything

"""Readers of delimited text: CSV (optionally gzip-compressed) and ECSV, streamed by pyarrow."""

import codecs
import csv
import gzip
import io
import re
import sys
import zlib

from redcorr.exceptions import InputError
from redcorr.io.catalogs._base import CatalogReader, _check_unique, rebatch
from redcorr.io.catalogs.formats import _int_as_nullable, load_pyarrow

__all__ = ["ColumnTypeError", "numeric_as_float"]

_CSV_BLOCK_BYTES = 1 << 18
"""Bytes per block of the CSV reader. pyarrow's streaming reader reads 32 blocks ahead of the
rows taken from it, however slowly they are taken (measured: 34 MB held with 1 MB blocks, 8 MB
with 256 kB), and parses them no slower (1 M rows, 15 columns: 1.34 s with 256 kB blocks,
1.35 s with 1 MB). How full that read-ahead is depends on timing alone, so smaller blocks make
the peak memory of a run steadier as well as lower. Column types are inferred from the first
block; a later cell that does not fit is handled by :class:`ColumnTypeError`."""


_TEXT_CHECK_BYTES = 1 << 16
"""Bytes at the start of a CSV file (after decompression) checked to be UTF-8 text."""

_STRADDLING = "straddles two block boundaries"
"""pyarrow's message for a row longer than a block; the reader then doubles its block size."""

_CSV_FIELD_LIMIT = 2**31 - 1
"""Longest field the standard ``csv`` module reads when a row's line is looked for (its default is 128 kB)."""

_DECOMPRESS_ERRORS = (OSError, EOFError, zlib.error)
"""What reading a damaged gzip stream raises (``gzip.BadGzipFile`` is an OSError)."""


def _is_gzip(path):
    with open(path, "rb") as fh:
        return fh.read(2) == b"\x1f\x8b"


def _check_text(path, compressed):
    """Raise InputError unless the start of ``path`` is UTF-8 text without NUL bytes.

    pyarrow would otherwise report binary data as rows of the wrong length
    (echoing the raw bytes), or fail inside its row callback. A leading
    UTF-8 byte-order mark is text (common practice, no source).
    """
    opener = gzip.open if compressed else open
    try:
        with opener(path, "rb") as fh:
            data = fh.read(_TEXT_CHECK_BYTES)
    except _DECOMPRESS_ERRORS as exc:
        raise InputError(f"input {str(path)!r} is not a valid gzip file: {exc}") from None
    nul = data.find(b"\x00")
    if nul >= 0:
        raise InputError(f"input {str(path)!r} is not a text file (a NUL byte at offset {nul}); "
                         "a text catalog (CSV, ECSV) must be UTF-8")
    try:
        codecs.getincrementaldecoder("utf-8")().decode(data, final=False)
    except UnicodeDecodeError as exc:
        raise InputError(f"input {str(path)!r} is not UTF-8 text (byte 0x{data[exc.start]:02x} at offset "
                         f"{exc.start}); a text catalog (CSV, ECSV) must be UTF-8") from None


class ColumnTypeError(Exception):
    """A CSV column changed type after the first block (e.g. text in a number column).

    Raised by the CSV reader so that the caller can start again with that
    column read as text (``text_columns``); not a user error by itself.
    """

    def __init__(self, column):
        super().__init__(column)
        self.column = column



def numeric_as_float(table, columns):
    """``table``, read verbatim (every column as text), with ``columns`` as float64 for computing.

    The words the typed CSV reader takes for missing values (pyarrow's
    defaults: empty, ``NA``, ``null``, ...) become missing; a column with
    other text stays text, for the correction to flag those cells as the
    typed reader's text fallback (:class:`ColumnTypeError`) would. The
    stream engine's verbatim reader (``typed`` of a reader opened with
    ``verbatim``) and the Dask engine's partitions both cast with this.

    Parameters
    ----------
    table : pyarrow.Table
    columns : iterable of str
        Columns to cast; those that are not in ``table`` or not text are left as they are.

    Returns
    -------
    pyarrow.Table
    """
    pa = load_pyarrow()
    pc = pa.compute
    for name in columns:
        i = table.schema.get_field_index(name)
        if i < 0 or not pa.types.is_string(table.schema.field(i).type):
            continue
        column = table.column(i)
        try:
            column = pc.cast(column, pa.float64())
        except pa.ArrowInvalid:  # missing-value words or text: the slower, careful way
            missing = pa.array(pa.csv.ConvertOptions().null_values, pa.string())
            column = pc.if_else(pc.is_in(column, value_set=missing), pa.scalar(None, pa.string()), column)
            try:
                column = pc.cast(column, pa.float64())
            except pa.ArrowInvalid:
                pass
        table = table.set_column(i, name, column)
    return table


class _CsvReader(CatalogReader):
    arrow = True

    def __init__(self, path, fmt, chunk_rows, *, delimiter, comment, numeric_columns, text_columns,
                 skip_lines=0, column_names=None, verbatim=False, **_):
        super().__init__(path, fmt, chunk_rows)
        pa = load_pyarrow()
        self._delimiter = delimiter
        self._comment = comment
        self._column_names = self._given_names = column_names
        self._size = self.path.stat().st_size
        compressed = _is_gzip(self.path)
        _check_text(self.path, compressed)
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
        self._compressed, self._block = compressed, _CSV_BLOCK_BYTES
        self._convert = convert
        self._undecodable = False
        self._hook = None
        self._quiet_row_callback()
        try:
            self._raw, self._reader = self._open()
        except BaseException:
            self._loud_row_callback()
            raise
        self.columns = self._column_names = list(self._reader.schema.names)
        try:
            _check_unique(self.columns, self.path)
            self._check_delimiter()
        except InputError:
            self.close()
            raise

    def _quiet_row_callback(self):
        """Catch what pyarrow cannot report from :meth:`_invalid_row` (until :meth:`close`).

        pyarrow decodes a row as UTF-8 before it calls the row callback; when
        that fails (bytes that are not UTF-8, beyond the part of the file
        :func:`_check_text` saw) it prints "Exception ignored ..." through
        ``sys.unraisablehook`` and stops with an error naming the row. This
        hook records that instead, so that the error says what is wrong;
        whatever else reaches the hook goes to the previous one.
        """
        previous = sys.unraisablehook

        def hook(unraisable):
            if (getattr(unraisable.object, "__self__", None) is self
                    and isinstance(unraisable.exc_value, UnicodeDecodeError)):
                self._undecodable = True
                return
            previous(unraisable)

        hook.previous = previous
        self._hook = hook
        sys.unraisablehook = hook

    def _loud_row_callback(self):
        """Undo :meth:`_quiet_row_callback` (if another hook was set since, ours stays in its chain)."""
        if self._hook is not None and sys.unraisablehook is self._hook:
            sys.unraisablehook = self._hook.previous
        self._hook = None

    def _check_delimiter(self):
        """Raise InputError when a single column's name holds another common delimiter."""
        if len(self.columns) != 1:
            return
        found = [d for d in ",;\t|" if d != self._delimiter and d in self.columns[0]]
        if found:
            raise InputError(
                f"input {str(self.path)!r} has one column {self.columns[0]!r} with delimiter {self._delimiter!r}; "
                f"is the delimiter {found[0]!r}? (the delimiter option, --delimiter on the command line)"
            )

    def _open(self):
        """Open pyarrow's reader, doubling the block size until the first block holds a whole row.

        Returns ``(raw file, reader)``. Memory is thus bounded by the longest
        row, not the file.
        """
        pa = load_pyarrow()
        parse = pa.csv.ParseOptions(delimiter=self._delimiter, invalid_row_handler=self._invalid_row)
        while True:
            raw = pa.OSFile(str(self.path), "rb")
            stream = pa.CompressedInputStream(raw, "gzip") if self._compressed else raw
            read = pa.csv.ReadOptions(block_size=self._block, skip_rows=self._skip_lines,
                                      column_names=self._given_names)
            try:
                return raw, pa.csv.open_csv(stream, read_options=read, parse_options=parse,
                                            convert_options=self._convert)
            except (pa.ArrowInvalid, OSError, EOFError) as exc:
                raw.close()
                if _STRADDLING not in str(exc):
                    raise self._read_error(exc) from None
                self._block *= 2

    def _reopen(self):
        """Read again from the start with a larger block and the same column types.

        After a row longer than the block, the caller drops the rows it has
        already yielded (counting them is exact, whereas pyarrow's
        ``skip_rows_after_names`` also counts skipped comment lines).
        """
        pa = load_pyarrow()
        schema = self._reader.schema
        self._raw.close()
        self._convert = pa.csv.ConvertOptions(
            column_types=dict(zip(schema.names, schema.types, strict=True)),
            strings_can_be_null=self._convert.strings_can_be_null,
            quoted_strings_can_be_null=self._convert.quoted_strings_can_be_null)
        self._block *= 2
        self._raw, self._reader = self._open()

    def _leading_comment_lines(self, compressed):
        opener = gzip.open if compressed else open
        count = 0
        try:
            # utf-8-sig: a byte-order mark before the first "#" does not hide the comment
            with opener(self.path, "rt", encoding="utf-8-sig", errors="replace") as fh:
                for line in fh:
                    if line.startswith(self._comment) or not line.strip():
                        count += 1
                    else:
                        break
        except _DECOMPRESS_ERRORS as exc:
            raise InputError(f"input {str(self.path)!r} could not be read: {exc}") from None
        return count

    def describe_row(self, row):
        """``"row N (line L of the file)"``: the line is found by reading the file again (see :meth:`_line_of`)."""
        line = self._line_of(row)
        return f"row {row + 1}" if line is None else f"row {row + 1} (line {line} of the file)"

    def _line_of(self, row):
        """The line (from 1) on which data row ``row`` (from 0) begins, or None if it cannot be told.

        The file is read again from its start as pyarrow reads it: the
        skipped lines (leading comments, an ECSV header) are lines; then
        records, which a quoted field may spread over several lines. Empty
        lines are no records, and a record whose field count is not the
        header's is a comment skipped between rows (any other would have
        stopped the reader before ``row``). Called for messages only: it
        reads the file up to that row, once.
        """
        opener = gzip.open if self._compressed else open
        limit = csv.field_size_limit(_CSV_FIELD_LIMIT)  # a field may be as long as pyarrow's block grows
        try:
            with opener(self.path, "rt", encoding="utf-8-sig", errors="replace", newline="") as fh:
                for _ in range(self._skip_lines):
                    fh.readline()
                records = csv.reader(fh, delimiter=self._delimiter, quotechar='"', doublequote=True)
                if not self._given_names:
                    next(records, None)  # the header
                count = -1
                while True:
                    start = self._skip_lines + records.line_num + 1
                    fields = next(records, None)
                    if fields is None:
                        return None
                    if fields and len(fields) == len(self.columns):
                        count += 1
                        if count == row:
                            return start
        except (csv.Error, *_DECOMPRESS_ERRORS):
            return None
        finally:
            csv.field_size_limit(limit)

    def _invalid_row(self, row):
        if self._comment and row.text.lstrip().startswith(self._comment):
            return "skip"
        return "error"

    def typed(self, table):
        """A chunk read verbatim with its ``numeric_columns`` as float64, for computing (:func:`numeric_as_float`)."""
        return numeric_as_float(table, self._numeric)

    def _header_names(self):
        """Column names from the header line alone (for verbatim reading, or when the first block failed to convert)."""
        pa = load_pyarrow()
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
        if self._undecodable:
            return InputError(f"input {str(self.path)!r}: a row has bytes that are not UTF-8 text; "
                              "a text catalog (CSV, ECSV) must be UTF-8")
        match = re.search(r"In CSV column #(\d+): .*invalid UTF8", text)
        if match:
            names = self._column_names or self._header_names()
            index = int(match.group(1))
            return InputError(f"input {str(self.path)!r}: column {names[index] if index < len(names) else index!r} "
                              "has bytes that are not UTF-8 text; a text catalog (CSV, ECSV) must be UTF-8")
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
        pa = load_pyarrow()
        done, skip = 0, 0  # rows yielded; rows of a reopened reader already yielded
        while True:
            try:
                batch = self._reader.read_next_batch()
            except StopIteration:
                return
            except (pa.ArrowInvalid, OSError, EOFError) as exc:
                if _STRADDLING not in str(exc):
                    raise self._read_error(exc) from None
                self._reopen()
                skip = done
                continue
            if skip:
                dropped = min(skip, batch.num_rows)
                batch, skip = batch.slice(dropped), skip - dropped
            done += batch.num_rows
            yield batch

    def _tables(self):
        return rebatch(self._batches(), self.chunk_rows)

    def _frames(self):
        for table in self._tables():
            yield table.to_pandas(types_mapper=_int_as_nullable)

    def close(self):
        self._raw.close()
        self._loud_row_callback()


def _ecsv_header(path, compressed):
    """Read an ECSV header with astropy: (empty Table, delimiter, number of header lines)."""
    from astropy.io.misc import yaml  # noqa: PLC0415
    from astropy.table import Table  # noqa: PLC0415

    _check_text(path, compressed)
    opener = gzip.open if compressed else open
    lines = []
    try:
        with opener(path, "rt", encoding="utf-8-sig") as fh:
            for line in fh:
                lines.append(line)
                if not line.startswith("#") and line.strip():
                    break  # the column-name line ends the header
    except UnicodeDecodeError as exc:
        raise InputError(f"input {str(path)!r}: its header is not UTF-8 text ({exc.reason})") from None
    except _DECOMPRESS_ERRORS as exc:
        raise InputError(f"input {str(path)!r} could not be read: {exc}") from None
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


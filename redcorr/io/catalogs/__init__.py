"""Catalog files in and out, in chunks of bounded size.

This package is the only code that knows CSV, ECSV, FITS or Parquet.
Readers yield pandas DataFrames of at most ``chunk_rows`` rows; writers take such chunks
and write them to a temporary file beside the target, which is renamed onto
the target only when everything succeeded (:func:`redcorr.io.atomic_path`).
An interruption or an error therefore never leaves a partial output.

Formats
-------
``csv``
    Delimited text, optionally gzip-compressed (``.gz``). Read with the
    streaming reader of pyarrow. Lines starting with the comment character
    (``#`` by default) are skipped, before the header and between rows.
    The text must be UTF-8 (a leading byte-order mark is skipped; CRLF line
    ends are read). A row longer than the reader's block makes it read
    again from the start with a larger block, so memory follows the
    longest row, not the file.
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
read-ahead blocks, and the memory pyarrow frees goes back to the system after
each chunk, so memory does not grow with file size (measured, 15 columns in, 33
out, peak RSS for 1 M and 5 M rows: 329 and 344 MB from CSV to Parquet, 482 and
488 MB from CSV to CSV, where the input fields are held as text, 379 and 375 MB
from Parquet to Parquet).

Modules
-------
``formats``
    Format names from suffixes, column types between Arrow and pandas,
    rounding of computed columns in text.
``_base``
    :class:`CatalogReader`, the interface of every reader, and
    :func:`rebatch`, which cuts Arrow record batches into chunks.
``csv_readers``, ``readers``
    The CSV and ECSV readers (and :func:`numeric_as_float`, the casting
    of text read verbatim); :func:`open_catalog` with the FITS and
    Parquet readers.
``writers``
    :class:`CatalogWriter` (FITS output spooled through Parquet).
``summaries``
    The JSON run summary written beside an output.
"""

from redcorr._constants import DEFAULT_CHUNK_ROWS
from redcorr.io.catalogs._base import CatalogReader, rebatch
from redcorr.io.catalogs.csv_readers import ColumnTypeError, numeric_as_float
from redcorr.io.catalogs.formats import FORMATS, TEXT_DECIMALS, PandasLikeColumns, detect_format, round_for_text
from redcorr.io.catalogs.readers import check_csv_marks, open_catalog, read_catalog
from redcorr.io.catalogs.summaries import summary_path, write_summary
from redcorr.io.catalogs.writers import CatalogWriter, write_catalog

__all__ = [
    "DEFAULT_CHUNK_ROWS",
    "FORMATS",
    "TEXT_DECIMALS",
    "CatalogReader",
    "CatalogWriter",
    "ColumnTypeError",
    "check_csv_marks",
    "detect_format",
    "numeric_as_float",
    "open_catalog",
    "PandasLikeColumns",
    "read_catalog",
    "rebatch",
    "round_for_text",
    "summary_path",
    "write_catalog",
    "write_summary",
]

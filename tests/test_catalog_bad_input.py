"""Bad or unusual catalog files given to ``redcorr correct``: each is read, or refused in one line.

A refused input exits with status 2 (the user's input), prints one line on
stderr naming the file and what is wrong (no traceback, no raw bytes),
leaves no output behind and leaves the input byte-identical. The file
layouts (UTF-8 byte-order mark, CRLF line ends, gzip, FITS, Parquet) are
common practice, no source.
"""

import gzip
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv
import pytest
from astropy.table import Table

from redcorr.cli import main
from redcorr.correction import CORRECTION_FLAGS
from redcorr.exceptions import InputError
from redcorr.io.catalogs import csv_readers, numeric_as_float, read_catalog
from redcorr.io.correction import correction_options

DEMO_MAP = Path(__file__).resolve().parent.parent / "demo" / "brume_ebv_healpix.fits"
GOOD_CSV = b"id,kw_v,ebv\n1,15.0,0.1\n2,16.0,0.2\n"


def _run(args, capsys):
    """Run the CLI in-process: (exit status, stderr)."""
    rc = main(["correct", *[str(a) for a in args], "--quiet"])
    return rc, capsys.readouterr().err


def _refused(tmp_path, capsys, name, data, words, extra=(), named=True):
    """Write ``data`` as ``name``, correct it, and check the refusal (naming the file if ``named``)."""
    src = tmp_path / name
    src.write_bytes(data)
    out = tmp_path / "out.csv"
    rc, err = _run([src, out, "--band", "kw-v", *extra], capsys)
    assert rc == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in err
    assert (name in lines[0] or not named) and all(w in lines[0] for w in words), lines[0]
    assert not out.exists() and not (tmp_path / "out.csv.summary.json").exists()
    assert src.read_bytes() == data
    return lines[0]


def _fits_bytes(tmp_path):
    path = tmp_path / "good.fits"
    Table({"id": np.arange(100), "kw_v": np.full(100, 15.0), "ebv": np.full(100, 0.1)}).write(path)
    return path.read_bytes()


def _parquet_bytes(tmp_path):
    path = tmp_path / "good.parquet"
    pd.DataFrame({"id": np.arange(100), "kw_v": np.full(100, 15.0), "ebv": 0.1}).to_parquet(path)
    return path.read_bytes()


def _corrupt_gzip():
    """A gzip stream with a valid header and damaged deflate data (zlib: "Error -3")."""
    data = bytearray(gzip.compress(GOOD_CSV * 2000))
    data[20:60] = bytes(b ^ 0xFF for b in data[20:60])
    return bytes(data)


_RANDOM = np.random.default_rng(1).integers(0, 256, 20_000, dtype=np.uint8).tobytes()
_LATE_SHORT = b"id,kw_v,ebv\n" + b"".join(b"%d,15,0.1\n" % i for i in range(20_000)) + b"\xff\xfe,1\n"
"""Bytes that are not UTF-8 beyond the 64 kB checked up front, in a row of the wrong length: pyarrow
fails to decode the row for its row callback."""
_BAD_INPUTS = {
    "empty csv": ("empty.csv", b"", ["empty"]),
    "comment lines only": ("comments.csv", b"# nothing\n# here\n", ["empty"]),
    "random bytes": ("random.csv", _RANDOM, ["not a text file"]),
    "latin-1 text": ("latin.csv", "id,name\n1,Ångström\n".encode("latin-1"), ["not UTF-8", "0xc5"]),
    "non-UTF-8 bytes after the first 64 kB": (
        "late.csv", b"id,kw_v,ebv\n" + b"".join(b"%d,15,0.1\n" % i for i in range(20_000)) + b"\xff\xfe,1,2\n",
        ["column 'id'", "not UTF-8"]),
    "non-UTF-8 bytes after the first 64 kB, in a short row": (
        "lateshort.csv", _LATE_SHORT, ["a row has bytes that are not UTF-8"]),
    "wrong delimiter": ("semi.csv", b"id;kw_v;ebv\n1;15;0.1\n", ["delimiter", "';'"]),
    "short row": ("short.csv", b"id,kw_v,ebv\n1,15,0.1\n2,15\n", ["2 fields", "has 3"]),
    "corrupt gzip": ("bad.csv.gz", _corrupt_gzip(), ["gzip", "Error -3"]),
    "truncated gzip": ("cut.csv.gz", gzip.compress(GOOD_CSV)[:-12], ["gzip"]),
    "random ecsv": ("random.ecsv", _RANDOM, ["not a text file"]),
    "empty ecsv": ("empty.ecsv", b"", ["not ECSV"]),
    "empty fits": ("empty.fits", b"", ["FITS"]),
    "non-parquet": ("text.parquet", b"id,kw_v\n1,15\n", ["Parquet"]),
}


@pytest.mark.parametrize("case", list(_BAD_INPUTS), ids=list(_BAD_INPUTS))
def test_bad_input_is_refused_in_one_line(tmp_path, capsys, case):
    name, data, words = _BAD_INPUTS[case]
    _refused(tmp_path, capsys, name, data, words)


@pytest.mark.parametrize("cut, words", [
    (lambda d: d[: 2880 + 1540], ["damaged or truncated FITS"]),  # the table's header cut
    (lambda d: d[: 5760 + 1000], ["truncated FITS", "8160 bytes"]),  # 100 rows of 24 bytes after 5760
    (lambda d: d[:2880], ["no FITS binary table"]),  # the primary header alone
])
def test_truncated_fits_is_refused(tmp_path, capsys, cut, words):
    _refused(tmp_path, capsys, "cut.fits", cut(_fits_bytes(tmp_path)), words)


def test_truncated_parquet_is_refused(tmp_path, capsys):
    data = _parquet_bytes(tmp_path)
    _refused(tmp_path, capsys, "cut.parquet", data[: len(data) // 2], ["Parquet"])


@pytest.mark.parametrize("name, data", [("random.csv", _RANDOM), ("lateshort.csv", _LATE_SHORT)],
                         ids=["random bytes", "late non-UTF-8 in a short row"])
def test_undecodable_bytes_exit_quietly_in_a_subprocess(tmp_path, name, data):
    """pyarrow's row callback would print "Exception ignored" (and a traceback); no such text, one line."""
    src = tmp_path / name
    src.write_bytes(data)
    run = subprocess.run([sys.executable, "-m", "redcorr", "correct", str(src), str(tmp_path / "o.csv"),
                          "--band", "kw-v"], capture_output=True, text=True, errors="replace", check=False)
    assert run.returncode == 2
    assert len(run.stderr.strip().splitlines()) == 1 and name in run.stderr and "UTF-8" in run.stderr
    assert "Exception ignored" not in run.stderr and "Traceback" not in run.stderr
    assert "\ufffd" not in run.stderr  # no raw bytes echoed


@pytest.mark.parametrize("newline", [b"\n", b"\r\n"])
@pytest.mark.parametrize("comments", [b"", b"# made by hand, with, commas\n# second\n"])
def test_byte_order_mark_and_crlf_are_read(tmp_path, capsys, newline, comments):
    src = tmp_path / "bom.csv"
    src.write_bytes(b"\xef\xbb\xbf" + (comments + GOOD_CSV).replace(b"\n", newline))
    for out in (tmp_path / "out.csv", tmp_path / "out.parquet"):
        rc, err = _run([src, out, "--band", "kw-v"], capsys)
        assert rc == 0, err
        result = pd.read_csv(out) if out.suffix == ".csv" else pd.read_parquet(out)
        assert list(result.columns[:3]) == ["id", "kw_v", "ebv"]
        assert result["kw_v"].tolist() == [15.0, 16.0]


def test_corrupt_gzip_is_refused_when_streaming(tmp_path, capsys):
    """Damage far from the start is met by pyarrow's stream, not the first checks."""
    body = b"id,kw_v,ebv\n" + b"".join(b"%d,15.0,0.1\n" % i for i in range(200_000))
    data = bytearray(gzip.compress(body))
    middle = len(data) * 3 // 4
    data[middle : middle + 64] = bytes(64)
    _refused(tmp_path, capsys, "late.csv.gz", bytes(data), ["could not be read as CSV"])


def test_empty_column_name_is_an_input_error(tmp_path, capsys):
    src = tmp_path / "in.csv"
    src.write_bytes(GOOD_CSV)
    rc, err = _run([src, tmp_path / "o.csv", "--band", "kw-v", "--ebv-col", ""], capsys)
    assert rc == 2 and "ebv_column=''" in err and len(err.strip().splitlines()) == 1
    with pytest.raises(InputError, match="lat_column=' '"):
        correction_options(["kw-v"], dust_map=DEMO_MAP, lon_column="ra", lat_column=" ")


def test_no_reddening_source_is_an_input_error(tmp_path, capsys):
    _refused(tmp_path, capsys, "nored.csv", b"id,kw_v\n1,15\n", ["no reddening"], named=False)


def test_a_field_longer_than_a_block_is_read(tmp_path, capsys):
    """A 5 MB text field (the reader's block is 256 kB): the block grows."""
    src = tmp_path / "long.csv"
    src.write_text("id,kw_v,ebv,note\n1,15.0,0.1," + "x" * 5_000_000 + "\n2,16.0,0.2,short\n")
    rc, err = _run([src, tmp_path / "o.parquet", "--band", "kw-v"], capsys)
    assert rc == 0, err
    result = pd.read_parquet(tmp_path / "o.parquet")
    assert result["note"].str.len().tolist() == [5_000_000, 5]


def test_a_long_row_after_many_blocks_keeps_every_row_once(tmp_path, monkeypatch):
    """The reader starts again with a larger block and drops the rows already given (comments between rows)."""
    monkeypatch.setattr(csv_readers, "_CSV_BLOCK_BYTES", 1024)
    lines = ["id,kw_v,note"]
    for i in range(2000):
        lines.append(f"{i},15.0,n{i}" if i != 1500 else f"{i},15.0," + "y" * 10_000)
        if i == 700:
            lines.append("# a comment between rows")
    src = tmp_path / "late.csv"
    src.write_text("\n".join(lines) + "\n")
    frame = read_catalog(src, chunk_rows=333)
    assert frame["id"].tolist() == list(range(2000))
    assert len(frame["note"].iloc[1500]) == 10_000


def test_text_read_verbatim_is_cast_as_the_typed_reader_reads_it():
    """Missing-value words become missing, numbers float64, a column with other text stays text.

    Reference: pyarrow's own CSV reader on the same text with the columns typed as float64
    (its default missing-value words); for the column holding a word, its conversion error.
    """
    text = b"kw_v,ebv,note\n15.0,0.1,bright\nNA,0.2,x\n,N/A,y\nnull,1e-3,z\n"
    as_text = pacsv.ConvertOptions(column_types=dict.fromkeys(["kw_v", "ebv", "note"], pa.string()),
                                   strings_can_be_null=False)
    verbatim = pacsv.read_csv(pa.py_buffer(text), convert_options=as_text)
    cast = numeric_as_float(verbatim, ["kw_v", "ebv", "note", "absent"])
    typed = pacsv.read_csv(pa.py_buffer(text), convert_options=pacsv.ConvertOptions(
        column_types={"kw_v": pa.float64(), "ebv": pa.float64()}))
    assert cast.select(["kw_v", "ebv"]).equals(typed.select(["kw_v", "ebv"]))
    with pytest.raises(pa.ArrowInvalid):
        pacsv.read_csv(pa.py_buffer(text), convert_options=pacsv.ConvertOptions(column_types={"note": pa.float64()}))
    assert cast.column("note").equals(verbatim.column("note"))  # left as text, for the correction to flag


def test_latitude_off_the_sphere_is_a_flagged_row(tmp_path, capsys):
    src = tmp_path / "pos.csv"
    src.write_bytes(b"id,kw_v,ra,dec\n1,15,10,20\n2,15,10,95\n3,15,nan,nan\n")
    out = tmp_path / "o.csv"
    rc, err = _run([src, out, "--band", "kw-v", "--map", DEMO_MAP], capsys)
    assert rc == 0, err
    result = pd.read_csv(out)
    missing = CORRECTION_FLAGS["missing"]
    assert result["dered_flags"].iloc[1] == result["dered_flags"].iloc[2] == missing  # as a NaN position
    assert np.isnan(result["kw_v_dered"].iloc[1])
    line = _refused(tmp_path, capsys, "pos.csv", src.read_bytes(), ["'dec'", "95.0", "line 3"],
                    extra=["--map", DEMO_MAP, "--strict"], named=False)
    assert "row 2" in line


def test_strict_messages_give_the_file_line(tmp_path, capsys):
    """Two comment lines and the header come before the rows: row 2 is on line 5."""
    line = _refused(tmp_path, capsys, "text.csv", b"# one\n# two\nid,kw_v,ebv\n1,15,0.1\n2,abc,0.1\n",
                    ["'abc'", "row 2", "line 5"], extra=["--strict"], named=False)
    assert "strict" in line


def test_strict_line_counts_rows_of_earlier_chunks(tmp_path, capsys):
    rows = b"".join(b"%d,15,0.1\n" % i for i in range(10))
    line = _refused(tmp_path, capsys, "late.csv", b"id,kw_v,ebv\n" + rows + b"10,abc,0.1\n",
                    ["row 11", "line 12"], extra=["--strict", "--chunk-rows", "3"], named=False)
    assert "'abc'" in line


_ECSV_TEXT = b"""# %ECSV 1.0
# ---
# datatype:
# - {name: id, datatype: int64}
# - {name: kw_v, datatype: string}
# - {name: ebv, datatype: float64}
# schema: astropy-2.0
id kw_v ebv
1 15 0.1
2 abc 0.1
"""
_LAYOUTS = {  # (file name, bytes, the row and the line of the text 'abc'), lines counted by hand
    "comment lines between rows": (
        "c.csv", b"# one\nid,kw_v,ebv\n1,15,0.1\n# two, three\n# four\n2,16,0.1\n3,abc,0.1\n", 3, 7),
    "blank lines between rows": ("b.csv", b"id,kw_v,ebv\n\n1,15,0.1\n\n\n2,abc,0.1\n", 2, 6),
    "quoted line breaks": ("q.csv", b'id,kw_v,note,ebv\n1,15,"two\nlines",0.1\n2,16,"a\n\nb",0.1\n3,abc,x,0.1\n', 3, 7),
    "CRLF, a BOM and a quoted line break": (
        "r.csv", b'\xef\xbb\xbf# one\r\nid,kw_v,note,ebv\r\n1,15,"a\r\nb",0.1\r\n2,abc,x,0.1\r\n', 2, 5),
    "gzip with comments and blank lines": (
        "g.csv.gz", gzip.compress(b"# one\nid,kw_v,ebv\n1,15,0.1\n\n# two\n2,abc,0.1\n"), 2, 6),
    "a field longer than the csv module's default limit": (
        "long.csv", b"id,kw_v,note,ebv\n1,15," + b"x" * 200_000 + b",0.1\n# c\n2,abc,y,0.1\n", 2, 4),
    "ECSV": ("t.ecsv", _ECSV_TEXT, 2, 10),
}


@pytest.mark.parametrize("out_name", ["o.csv", "o.parquet"], ids=["text copied", "typed"])
@pytest.mark.parametrize("layout", list(_LAYOUTS), ids=list(_LAYOUTS))
def test_strict_messages_give_the_exact_file_line(tmp_path, capsys, layout, out_name):
    """Comment lines, blank lines and quoted line breaks between rows: the line is still the row's own."""
    name, data, row, line = _LAYOUTS[layout]
    src = tmp_path / name
    src.write_bytes(data)
    out = tmp_path / out_name
    rc, err = _run([src, out, "--band", "kw-v", "--ebv-col", "ebv", "--strict"], capsys)
    assert rc == 2 and "'abc'" in err, err
    assert f"row {row} (line {line} of the file)" in err, err
    assert not out.exists() and src.read_bytes() == data


def test_strict_messages_of_the_dask_engine_name_the_partition(tmp_path, capsys):
    """Dask corrects each partition on its own (here one per file): the row is counted in its partition."""
    (tmp_path / "part-1.csv").write_bytes(GOOD_CSV)
    (tmp_path / "part-2.csv").write_bytes(b"id,kw_v,ebv\n3,15.0,0.1\n4,abc,0.2\n")
    out = tmp_path / "o.csv"
    rc, err = _run([tmp_path / "part-*.csv", out, "--band", "kw-v", "--engine", "dask", "--strict"], capsys)
    assert rc == 2 and len(err.strip().splitlines()) == 1, err
    assert "'abc'" in err and "row 2 of Dask partition 2 (counted from its start)" in err, err
    assert not out.exists()


def test_infinite_or_missing_magnitude_gives_missing_outputs(tmp_path, capsys):
    src = tmp_path / "inf.csv"
    src.write_bytes(b"id,kw_v,e_kw_v,kw_b,e_kw_b,ebv\n1,inf,0.01,15,0.01,0.1\n2,,0.02,15,0.01,0.1\n"
                    b"3,15,0.02,16,0.01,0.1\n")
    out = tmp_path / "o.parquet"
    rc, err = _run([src, out, "--band", "kw-v", "--band", "kw-b", "--colour", "kw-b,kw-v"], capsys)
    assert rc == 0, err
    result = pd.read_parquet(out)
    for column in ("kw_v_dered", "kw_v_dered_err", "kw_b-kw_v_dered", "kw_b-kw_v_dered_err"):
        assert result[column].iloc[:2].isna().all() and np.isfinite(result[column].iloc[2]), column
    assert (result["dered_flags"].iloc[:2] & CORRECTION_FLAGS["missing"]).all()
    assert result["kw_b_dered_err"].notna().all()  # the other band is untouched


def test_correcting_a_corrected_catalog_names_the_clashing_columns(tmp_path, capsys):
    src = tmp_path / "in.csv"
    src.write_bytes(GOOD_CSV)
    first = tmp_path / "first.csv"
    assert _run([src, first, "--band", "kw-v"], capsys)[0] == 0
    data = first.read_bytes()
    line = _refused(tmp_path, capsys, "first.csv", data, ["'A_kw_v'", "'dered_flags'", "already corrected",
                                                          "--keep"], extra=["--suffix", "_again"], named=False)
    assert "kw_v_again" not in line  # the suffixed column does not clash
    line = _refused(tmp_path, capsys, "first.csv", data, ["'kw_v_dered'", "--suffix", "--keep"], named=False)


@pytest.mark.parametrize("engine", ["stream", "dask"])
@pytest.mark.parametrize("out_name", ["again.csv", "again.parquet"])
def test_a_corrected_catalog_is_corrected_again_without_its_old_outputs(tmp_path, capsys, engine, out_name):
    """--keep leaves the old output columns out; --suffix renames the corrected magnitude that is kept."""
    src = tmp_path / "in.csv"
    src.write_bytes(GOOD_CSV)
    first = tmp_path / "first.csv"
    assert _run([src, first, "--band", "kw-v"], capsys)[0] == 0
    data = first.read_bytes()
    if engine == "dask" and out_name.endswith(".parquet"):
        out_name = "again_ds"  # the dask engine writes a Parquet folder
    out = tmp_path / out_name
    rc, err = _run([first, out, "--band", "kw-v", "--engine", engine, "--keep", "id,kw_v,ebv,kw_v_dered",
                    "--suffix", "_again"], capsys)
    assert rc == 0, err
    again = pd.read_csv(out) if out_name.endswith(".csv") else pd.read_parquet(out)
    assert list(again.columns) == ["id", "kw_v", "ebv", "kw_v_dered", "kw_v_again", "A_kw_v", "ebv_used",
                                   "av_used", "dered_flags"]
    before = pd.read_csv(first)
    # the same inputs give the same numbers; the CSV text holds 6 decimals (TEXT_DECIMALS), hence 1e-6 mag
    np.testing.assert_allclose(again["kw_v_again"], before["kw_v_dered"], rtol=0, atol=1e-6)
    np.testing.assert_allclose(again["A_kw_v"], before["A_kw_v"], rtol=0, atol=1e-6)
    assert first.read_bytes() == data


def test_header_only_csv_gives_an_output_without_rows(tmp_path, capsys):
    """A header and no rows is a valid, empty catalog (not an error)."""
    src = tmp_path / "header.csv"
    src.write_bytes(b"id,kw_v,ebv\r\n")
    rc, err = _run([src, tmp_path / "o.csv", "--band", "kw-v"], capsys)
    assert rc == 0, err
    result = pd.read_csv(tmp_path / "o.csv")
    assert len(result) == 0 and {"kw_v_dered", "dered_flags"} <= set(result.columns)
    assert src.read_bytes() == b"id,kw_v,ebv\r\n"

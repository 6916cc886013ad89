"""Tests of redcorr.io.catalogs and redcorr.io.batch: chunked files in and out, bad input."""

import gzip
import json
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest
from catalog_helpers import KW, intrinsic
from hypothesis import given, settings
from hypothesis import strategies as st

from redcorr.correction import Correction
from redcorr.exceptions import InputError
from redcorr.io.batch import correct_file
from redcorr.io.catalogs import TEXT_DECIMALS, CatalogWriter, open_catalog, read_catalog, write_catalog
from redcorr.io.correction import correction_options


def _make(columns, **options):
    return Correction(columns, correction_options(KW, **options))


@pytest.mark.parametrize("suffix", ["csv", "csv.gz", "ecsv", "fits", "parquet"])
def test_write_read_round_trip_in_chunks(tmp_path, suffix):
    frame = intrinsic(25)
    frame["name"] = [f"star {i}" for i in range(25)]
    path = write_catalog(frame, tmp_path / f"t.{suffix}")
    with open_catalog(path, chunk_rows=7) as reader:
        assert reader.columns == list(frame.columns)
        chunks = list(reader)
    assert [len(c) for c in chunks] == [7, 7, 7, 4]
    back = pd.concat(chunks, ignore_index=True)
    # bitwise: every format stores doubles losslessly (binary, or text with round-trip digits)
    for col in frame.columns:
        assert back[col].tolist() == frame[col].tolist(), col


def test_csv_delimiter_and_comment_lines(tmp_path):
    path = tmp_path / "c.txt"
    path.write_text("# made up\n# more\nid;kw_v;ebv\n1;15.0;0.1\n# a note between rows\n2;16.5;0.2\n")
    frame = read_catalog(path, delimiter=";")
    assert frame["kw_v"].tolist() == [15.0, 16.5]  # exact: short decimals parsed to the nearest double


def _csv(tmp_path, n=40, name="in.csv"):
    path = tmp_path / name
    write_catalog(intrinsic(n), path)
    return path


def test_correct_file_streams_and_writes_summary(tmp_path):
    src = _csv(tmp_path)
    out = tmp_path / "out.parquet"
    summary = correct_file(src, out, _make, chunk_rows=9)
    table = pq.read_table(out)
    assert table.num_rows == 40 and "kw_v_dered" in table.column_names
    side = json.loads((tmp_path / "out.parquet.summary.json").read_text())
    assert side["rows"] == 40 == summary.rows and "rows_per_second" in side
    assert json.loads(table.schema.metadata[b"redcorr"])["redcorr_correction"]["law"] == "f99"


def test_csv_parquet_fits_inputs_give_identical_results(tmp_path):
    frame = intrinsic(30, seed=2)
    results = []
    for suffix in ("csv", "parquet", "fits", "ecsv"):
        src = write_catalog(frame, tmp_path / f"in.{suffix}")
        out = tmp_path / f"out_{suffix}.parquet"
        correct_file(src, out, lambda c: _make(c, colours=[("kw-b", "kw-v")]), chunk_rows=11)
        results.append(pd.read_parquet(out))
    # bitwise: every format hands the corrector the same doubles, and the correction is row-wise
    for other in results[1:]:
        pd.testing.assert_frame_equal(other, results[0], check_dtype=False, check_exact=True)


def test_text_output_rounds_computed_columns_only(tmp_path):
    # CSV and ECSV carry the computed columns to TEXT_DECIMALS decimals; the input columns are
    # copied to the last bit, and Parquet keeps the computed ones in full. Bitwise comparisons:
    # rounding to TEXT_DECIMALS and reading back must give exactly pandas' own rounding.
    frame = intrinsic(30, seed=4)
    frame["kw_v"] += 1e-9 * np.arange(30) + np.pi * 1e-12  # input values needing 17 digits
    src = write_catalog(frame, tmp_path / "in.parquet")
    correct_file(src, tmp_path / "out.parquet", _make)
    full = pd.read_parquet(tmp_path / "out.parquet")
    for suffix in ("csv", "ecsv"):
        out = tmp_path / f"out.{suffix}"
        correct_file(src, out, _make)
        text = read_catalog(out)
        pd.testing.assert_frame_equal(text[frame.columns], frame, check_dtype=False, check_exact=True)
        computed = [c for c in full.columns if c not in frame.columns and full[c].dtype.kind == "f"]
        assert computed
        expected = full[computed].round(TEXT_DECIMALS)
        pd.testing.assert_frame_equal(text[computed], expected, check_dtype=False, check_exact=True)
        assert not np.array_equal(text[computed].to_numpy(), full[computed].to_numpy(), equal_nan=True)


def test_parquet_output_leaves_only_computed_doubles_uncompressed(tmp_path):
    # Computed doubles have random low bits and do not compress; everything else keeps
    # pyarrow's default codec (snappy).
    src = write_catalog(intrinsic(50, seed=6), tmp_path / "in.parquet")
    correct_file(src, tmp_path / "out.parquet", _make)
    meta = pq.ParquetFile(tmp_path / "out.parquet").metadata
    codecs = {meta.schema.column(i).name: meta.row_group(0).column(i).compression for i in range(meta.num_columns)}
    assert codecs["kw_v"] == codecs["id"] == codecs["dered_flags"] == "SNAPPY"
    assert codecs["kw_v_dered"] == codecs["A_kw_v"] == codecs["kw_v_dered_err"] == "UNCOMPRESSED"


def _odd_csv(tmp_path):
    """A CSV with numbers written in unusual ways, missing words, text and a quoted comma."""
    frame = intrinsic(12, seed=5)
    src = write_catalog(frame, tmp_path / "typed.csv")
    lines = src.read_text().splitlines()
    head = [h.strip('"') for h in lines[0].split(",")]
    rows = [line.split(",") for line in lines[1:]]
    rows[0][head.index("kw_v")] = "15.50"  # trailing zero
    rows[1][head.index("kw_b")] = "1.25e1"
    rows[2][head.index("id")] = "007"
    rows[3][head.index("kw_v")] = "NA"  # a missing-value word: missing, not text
    rows[4][head.index("kw_r")] = "bright?"  # text in a number column
    rows[5][head.index("e_kw_b")] = ""  # empty
    names = ["note"] + head
    notes = ["plain"] * 12
    notes[6] = '"cluster, core"'  # needs its quotes
    notes[7] = '"say ""hi"""'
    text = ",".join(names) + "\n" + "\n".join(",".join([n] + r) for n, r in zip(notes, rows, strict=True)) + "\n"
    (tmp_path / "odd.csv").write_text(text)
    return tmp_path / "odd.csv", text


def _names_in(text):
    return text.splitlines()[0].split(",")


def test_csv_to_csv_copies_the_input_text_unchanged(tmp_path):
    # CSV to CSV copies input fields as text: numbers keep their spelling, text needing quotes
    # keeps them, and the values read back are those of the typed path (Parquet output here).
    src, text = _odd_csv(tmp_path)
    out = tmp_path / "out.csv"
    summary = correct_file(src, out, _make, chunk_rows=5)
    correct_file(src, tmp_path / "typed.parquet", _make, chunk_rows=5)
    written = out.read_text().splitlines()
    n_in = len(text.splitlines()[0].split(","))
    for line_in, line_out in zip(text.splitlines()[1:], written[1:], strict=True):
        if '"' not in line_in:  # rows without quoted text: the input line starts the output line
            assert line_out.startswith(line_in + ","), (line_in, line_out)
            assert len(line_out.split(",")) > n_in
    assert any(line.startswith('"cluster, core","') for line in written)  # the quoted row's fields all quoted
    back, typed = read_catalog(out), read_catalog(tmp_path / "typed.parquet")
    computed = [c for c in typed.columns if c not in _names_in(text) and typed[c].dtype.kind == "f"]
    typed[computed] = typed[computed].round(TEXT_DECIMALS)
    # bitwise: the same rounding of the same doubles, and input text parsed to the same doubles
    pd.testing.assert_frame_equal(back, typed, check_dtype=False, check_exact=True)
    assert back["note"].iloc[6] == "cluster, core" and back["note"].iloc[7] == 'say "hi"'
    flags = back["dered_flags"].to_numpy()
    assert flags[3] & 2 and not flags[3] & 1  # "NA" is missing
    assert flags[4] & 1  # text is flagged
    assert summary.flagged["non_numeric"] == 1
    # the text is chosen row by row: any chunking writes the same file
    again = tmp_path / "again.csv"
    correct_file(src, again, _make, chunk_rows=1)
    assert again.read_bytes() == out.read_bytes()


def test_refuses_existing_output_and_never_writes_over_input(tmp_path):
    src = _csv(tmp_path)
    before = src.read_bytes()
    out = tmp_path / "out.csv"
    out.write_text("keep me")
    with pytest.raises(InputError, match="exists"):
        correct_file(src, out, _make)
    assert out.read_text() == "keep me"
    with pytest.raises(InputError, match="input"):
        correct_file(src, src, _make, overwrite=True)
    assert src.read_bytes() == before
    correct_file(src, out, _make, overwrite=True)
    assert "kw_v_dered" in out.read_text().splitlines()[0]


class _Boom(Exception):
    pass


@pytest.mark.parametrize("suffix", ["csv", "fits", "parquet"])
@pytest.mark.parametrize("error", [_Boom, KeyboardInterrupt])
def test_error_or_interrupt_leaves_no_partial_output(tmp_path, error, suffix):
    src = _csv(tmp_path, n=50)
    out = tmp_path / f"out.{suffix}"
    calls = []

    def progress(rows, fraction):
        calls.append(rows)
        if len(calls) == 2:
            raise error()

    with pytest.raises(error):
        correct_file(src, out, _make, chunk_rows=10, progress=progress)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["in.csv"]


def test_missing_column_message_and_no_output(tmp_path):
    src = tmp_path / "in.csv"
    src.write_text("id,vmag_x,ebv\n1,15,0.1\n")
    with pytest.raises(InputError, match=r"\['id', 'vmag_x', 'ebv'\]"):
        correct_file(src, tmp_path / "out.csv", lambda c: Correction(c, correction_options(["kw-v"])))
    assert not (tmp_path / "out.csv").exists()


def test_text_in_number_column_is_flagged_and_counted(tmp_path):
    # The magnitude columns are read as numbers, so the text forces a re-read as text.
    frame = intrinsic(20)
    src = tmp_path / "in.csv"
    write_catalog(frame, src)
    lines = src.read_text().splitlines()
    head = [h.strip('"') for h in lines[0].split(",")]
    cells = lines[15].split(",")
    cells[head.index("kw_v")] = "n/a?"
    lines[15] = ",".join(cells)
    src.write_text("\n".join(lines) + "\n")
    out = tmp_path / "out.csv"
    summary = correct_file(src, out, _make, chunk_rows=4)
    assert summary.flagged["non_numeric"] == 1
    result = pd.read_csv(out)
    assert np.isnan(result["kw_v_dered"].iloc[14]) and result["dered_flags"].iloc[14] & 1
    with pytest.raises(InputError, match="strict"):
        correct_file(src, tmp_path / "strict.csv", lambda c: _make(c, strict=True))
    assert not (tmp_path / "strict.csv").exists()


def test_empty_file(tmp_path):
    src = tmp_path / "empty.csv"
    src.write_text("")
    with pytest.raises(InputError, match="empty"):
        correct_file(src, tmp_path / "out.csv", _make)


def test_header_only_gives_empty_output_with_the_right_columns(tmp_path):
    src = tmp_path / "head.csv"
    src.write_text(",".join(intrinsic(1).columns) + "\n")
    out = tmp_path / "out.csv"
    summary = correct_file(src, out, _make)
    header = out.read_text().splitlines()
    assert len(header) == 1 and "kw_b_dered" in header[0] and "dered_flags" in header[0]
    assert summary.rows == 0


def test_duplicate_column_names(tmp_path):
    src = tmp_path / "dup.csv"
    src.write_text("kw_v,kw_v,ebv\n1,2,0.1\n")
    with pytest.raises(InputError, match="duplicate column names \\['kw_v'\\]"):
        correct_file(src, tmp_path / "out.csv", _make)


def test_inconsistent_row_lengths(tmp_path):
    src = tmp_path / "ragged.csv"
    src.write_text("kw_v,ebv\n15,0.1\n16,0.2,9\n")
    with pytest.raises(InputError, match="3 fields where the header has 2"):
        correct_file(src, tmp_path / "out.csv", lambda c: Correction(c, correction_options(["kw-v"])))
    assert not (tmp_path / "out.csv").exists()


def test_truncated_gzip(tmp_path):
    full = _csv(tmp_path, n=2000, name="full.csv")
    data = gzip.compress(full.read_bytes())
    src = tmp_path / "cut.csv.gz"
    src.write_bytes(data[: len(data) // 2])
    with pytest.raises(InputError, match="cut.csv.gz"):
        correct_file(src, tmp_path / "out.csv", _make, chunk_rows=100)
    assert not (tmp_path / "out.csv").exists()


def test_parquet_dataset_and_one_partition_with_another_schema(tmp_path):
    frame = intrinsic(30)
    root = tmp_path / "ds"
    for key, part in frame.groupby(frame["id"] % 3):
        folder = root / f"part={key}"
        folder.mkdir(parents=True)
        pq.write_table(pa.Table.from_pandas(part.drop(columns="id"), preserve_index=False),
                       folder / "a.parquet")
    out = tmp_path / "out.parquet"
    summary = correct_file(root, out, _make, chunk_rows=8)
    assert summary.rows == 30
    bad = root / "part=9"
    bad.mkdir()
    pq.write_table(pa.table({"kw_v": [1.0], "other": [2.0]}), bad / "b.parquet")
    with pytest.raises(InputError, match="different schema"):
        correct_file(root, tmp_path / "out2.parquet", _make)
    assert not (tmp_path / "out2.parquet").exists()


def test_unknown_format_and_missing_input(tmp_path):
    with pytest.raises(InputError, match="format"):
        open_catalog(_csv(tmp_path), fmt="xlsx")
    with pytest.raises(InputError, match="does not exist"):
        open_catalog(tmp_path / "nope.csv")


_CHUNK_SRC = intrinsic(37, seed=12)


@settings(max_examples=8, deadline=None)
@given(st.integers(min_value=1, max_value=40))
def test_file_output_does_not_depend_on_chunk_rows(chunk_rows):
    # Chunk-size invariance through the whole file path (reader re-batching + writer): bitwise
    # identity of the files is what is tested, as every row is computed and written alike.
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        src = write_catalog(_CHUNK_SRC, tmp / "in.csv")
        correct_file(src, tmp / "one.csv", _make, chunk_rows=1000)
        correct_file(src, tmp / "many.csv", _make, chunk_rows=chunk_rows)
        assert (tmp / "many.csv").read_bytes() == (tmp / "one.csv").read_bytes()


def test_fits_output_streams_chunks_of_varying_strings_and_missing_integers(tmp_path):
    from astropy.table import Table

    frame = pd.DataFrame({
        "name": ["a", "bb", None, "a much longer name", "é"] * 3,
        "count": pd.array([1, None, 3, 4, 5] * 3, dtype="Int64"),
        "n": np.arange(15),
        "x": np.linspace(0.0, 1.0, 15),
        "ok": [True, False, True] * 5,
    })
    out = tmp_path / "out.fits"
    with CatalogWriter(out) as writer:
        for start in range(0, 15, 4):
            writer.write(frame.iloc[start:start + 4])
    table = Table.read(out)
    assert len(table) == 15 and list(table["n"]) == list(range(15))
    names = read_catalog(out)["name"].tolist()
    assert names[:5] == ["a", "bb", "", "a much longer name", "é"] and names[5:10] == names[:5]
    back = read_catalog(out)
    assert np.isnan(back["count"].iloc[1]) and back["count"].iloc[2] == 3  # integers with gaps become floats
    assert list(table["ok"][:3]) == [True, False, True]
    np.testing.assert_array_equal(table["x"], frame["x"])  # bitwise: FITS stores binary doubles
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.fits"]  # spool removed


def test_reads_ecsv_written_by_astropy_with_spaces(tmp_path):
    from astropy.table import Table

    table = Table({"name": ["star one", "two"], "kw_v": [15.5, 16.25], "ebv": [0.1, 0.2]})
    table["kw_v"].unit = "mag"
    table.write(tmp_path / "t.ecsv")  # astropy's default: space-delimited, quoted strings
    frame = read_catalog(tmp_path / "t.ecsv", chunk_rows=1)
    # exact: 15.5 and 16.25 are binary fractions written and parsed without loss
    assert frame["name"].tolist() == ["star one", "two"] and frame["kw_v"].tolist() == [15.5, 16.25]


def _mixed_types(n=23):
    """An invented catalog with columns of many Arrow types, NaN and missing values."""
    frame = intrinsic(n, seed=31)
    table = pa.Table.from_pandas(frame, preserve_index=False)
    mag = frame["kw_v"].to_numpy().copy()
    mag[3] = np.nan
    extra = {
        "id32": pa.array(np.arange(n, dtype=np.int32)).cast(pa.int32()),
        "count": pa.array([None if i % 5 == 0 else i for i in range(n)], pa.uint16()),
        "name": pa.array([None if i % 4 == 0 else f"star {i}" for i in range(n)], pa.large_string()),
        "good": pa.array([None if i % 6 == 0 else bool(i % 2) for i in range(n)], pa.bool_()),
        "seen": pa.array(np.arange(n).astype("datetime64[s]")),
        "field": pa.array(["north" if i % 2 else "south" for i in range(n)]).dictionary_encode(),
        "weight": pa.array([None if i % 7 == 0 else (np.nan if i % 7 == 1 else i / 3) for i in range(n)],
                           pa.float32(), from_pandas=False),
    }
    table = table.set_column(table.column_names.index("kw_v"), "kw_v",
                             pa.array(np.where(np.arange(n) == 5, np.nan, mag)).cast(pa.float64()))
    for name, column in extra.items():
        table = table.append_column(name, column)
    return table


@pytest.mark.parametrize("out_suffix", ["csv", "ecsv", "parquet", "fits"])
@pytest.mark.parametrize("in_suffix", ["parquet", "csv"])
def test_arrow_path_writes_the_file_the_dataframe_path_writes(tmp_path, in_suffix, out_suffix):
    # correct_file streams Arrow tables; writing DataFrames from Correction.correct must give the
    # same file, type by type (NaN and nulls, narrow integers, large strings, booleans, dates);
    # CSV to CSV copies the input's text, so there the values must be the same.
    src = tmp_path / f"in.{in_suffix}"
    table = _mixed_types()
    if out_suffix == "fits":  # FITS tables here hold numbers, booleans and text only
        table = table.drop_columns(["seen", "field"])
    if in_suffix == "parquet":
        pq.write_table(table, src)
    else:
        write_catalog(table.drop_columns([c for c in ["field"] if c in table.column_names]).to_pandas(), src)
    arrow_out = tmp_path / f"arrow.{out_suffix}"
    correct_file(src, arrow_out, _make, chunk_rows=7, summary_file=False)
    frames_out = tmp_path / f"frames.{out_suffix}"
    with open_catalog(src, chunk_rows=7) as reader:
        corr = _make(reader.columns)
        meta = {"redcorr_correction": corr.setup()}
        with CatalogWriter(frames_out, meta=meta, computed=corr.output_columns) as writer:
            for frame in reader:
                writer.write(corr.correct(frame)[reader.columns + corr.output_columns])
    # Bitwise identity is what is tested: both paths run the same row-wise arithmetic and the
    # same writer, so the files (or, where the text of the input is copied, the values read
    # back) must agree to the last bit.
    if (in_suffix, out_suffix) == ("csv", "csv"):  # fields copied as text: same values, not same bytes
        pd.testing.assert_frame_equal(read_catalog(arrow_out), read_catalog(frames_out), check_exact=True)
    elif out_suffix in ("csv", "ecsv"):
        assert arrow_out.read_bytes() == frames_out.read_bytes()
    elif out_suffix == "parquet":
        assert pq.read_table(arrow_out).equals(pq.read_table(frames_out), check_metadata=True)
    else:
        pd.testing.assert_frame_equal(read_catalog(arrow_out), read_catalog(frames_out), check_exact=True)


def test_csv_header_is_quoted_only_where_needed_as_the_rows_are(tmp_path):
    frame = intrinsic(4)
    frame["note, free text"] = ["a", "b, c", "d", "e"]  # a column name and a field holding the delimiter
    src = write_catalog(frame, tmp_path / "in.parquet")
    out = tmp_path / "out.csv"
    correct_file(src, out, _make)
    lines = out.read_text().splitlines()
    # RFC 4180 (Shafranovich 2005, §2 rules 5-6): quotes only around a field holding the delimiter,
    # a quote or a line break; names are fields of the header line like any other
    assert lines[0].startswith('id,kw_b,e_kw_b,kw_v,') and '"note, free text"' in lines[0]
    assert lines[0].count('"') == 2
    assert pd.read_csv(out).columns.tolist()[: len(frame.columns)] == frame.columns.tolist()
    assert '"b, c"' in lines[2]


def test_dask_run_time_covers_the_computation(tmp_path, monkeypatch):
    import time

    import redcorr.io.dask_engine as engine

    write_catalog(intrinsic(20), tmp_path / "part-0.csv")
    slow = engine._run_partition

    def correct_slowly(*args, **kwargs):
        time.sleep(0.3)
        return slow(*args, **kwargs)

    monkeypatch.setattr(engine, "_run_partition", correct_slowly)
    from redcorr.io.batch import correct_file_dask

    summary = correct_file_dask(str(tmp_path / "part-*.csv"), tmp_path / "out.csv", _make)
    # each partition sleeps 0.3 s, so the run took at least that (the report once said 0.00 s)
    assert summary.to_dict()["seconds"] >= 0.3

"""Tests of ``redcorr correct`` (in-process, and one subprocess for the exit status)."""

import json
import sys
import warnings

import pandas as pd
import pytest
from catalog_helpers import intrinsic

from redcorr.cli import main
from redcorr.exceptions import OutOfRangeWarning
from redcorr.io.catalogs import write_catalog

BANDS = ["--band", "kw-b", "--band", "kw-v"]


def _src(tmp_path, n=30, name="in.csv"):
    frame = intrinsic(n)
    frame = frame.rename(columns={"kw_b": "Bmag", "kw_v": "Vmag", "e_kw_b": "Bmag_err", "e_kw_v": "Vmag_err"})
    return write_catalog(frame, tmp_path / name)


def test_correct_json_summary_and_colour(tmp_path, capsys):
    src = _src(tmp_path)
    out = tmp_path / "out.parquet"
    rc = main(["correct", str(src), str(out), *BANDS, "--mag", "kw-b=Bmag", "--mag", "kw-v=Vmag",
               "--colour", "kw-b,kw-v", "--red-err-col", "e_ebv", "--rv", "4.3", "--json"])
    assert rc == 0
    summary = json.loads(capsys.readouterr().out)
    assert summary["rows"] == 30 and summary["setup"]["r_v"] == 4.3  # the R_V given, echoed exactly
    result = pd.read_parquet(out)
    assert {"Bmag_dered", "Vmag_dered_err", "Bmag-Vmag_dered", "A_kw_b", "dered_flags"} <= set(result.columns)
    assert (tmp_path / "out.parquet.summary.json").exists()


def test_text_summary_and_guessed_columns(tmp_path, capsys):
    src = _src(tmp_path)
    assert main(["correct", str(src), str(tmp_path / "o.csv"), *BANDS, "--linear", "--quiet"]) == 0
    assert capsys.readouterr().out == ""
    # random invented magnitudes: many colours lie beyond any blackbody's, hence the warning
    with warnings.catch_warnings():
        warnings.simplefilter("default", OutOfRangeWarning)  # the CLI prints it on stderr
        assert main(["correct", str(src), str(tmp_path / "o2.fits"), *BANDS, "--solve-colour", "kw-b,kw-v"]) == 0
    text = capsys.readouterr()
    assert "rows: 30" in text.out and "temperature iterations" in text.out
    assert "warning:" in text.err and "outside the coefficient grid" in text.err


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (["--mag", "kw-v=nope"], "'nope' is not a column"),
        (["--band", "kw-q"], "kw-q"),
        (["--ebv", "0.1", "--av", "0.3"], "one source of reddening"),
        (["--scheduler", "tcp://x:1"], "--engine dask"),
    ],
)
def test_user_errors_exit_2_with_one_line(tmp_path, capsys, extra, message):
    src = _src(tmp_path)
    rc = main(["correct", str(src), str(tmp_path / "o.csv"), *BANDS, *extra])
    err = capsys.readouterr().err
    assert rc == 2 and message in err and len(err.strip().splitlines()) == 1
    assert not (tmp_path / "o.csv").exists()


def test_missing_column_lists_available_and_writes_nothing(tmp_path, capsys):
    src = tmp_path / "in.csv"
    src.write_text("id,x,ebv\n1,15,0.1\n")
    assert main(["correct", str(src), str(tmp_path / "o.csv"), "--band", "kw-v"]) == 2
    assert "['id', 'x', 'ebv']" in capsys.readouterr().err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["in.csv"]


def test_unexpected_failure_exits_1(tmp_path, capsys, monkeypatch):
    import redcorr.correction

    def broken(self, frame):
        raise RuntimeError("boom")

    monkeypatch.setattr(redcorr.correction.Correction, "_arrays", broken)
    src = _src(tmp_path)
    assert main(["correct", str(src), str(tmp_path / "o.csv"), *BANDS]) == 1
    assert "unexpected failure" in capsys.readouterr().err
    assert not (tmp_path / "o.csv").exists()


def test_demo_section_corrects_the_brume_catalog(capsys):
    from redcorr._paths import project_dir
    from redcorr.cli._demo import s40_catalog
    from redcorr.io._toml import load_toml

    demo = project_dir("demo")
    s40_catalog.section(load_toml(demo / "scenario.toml", what="demo scenario"), demo)
    text = capsys.readouterr().out
    assert "BF-0001" in text and "b-v_0" in text and "HEALPix map" in text


def test_progress_bar_on_a_terminal_only(tmp_path, monkeypatch, capsys):
    import io

    from redcorr.cli.correct import _Progress

    class Terminal(io.StringIO):
        def isatty(self):
            return True

    assert not _Progress(True).enabled  # pytest's captured stderr is not a terminal
    fake = Terminal()
    monkeypatch.setattr(sys, "stderr", fake)
    with _Progress(True) as bar:
        assert bar.enabled
        bar(500, 0.5)
        assert bar._bar.tasks[0].completed == 500.0 and bar._bar.tasks[0].fields["rows"] == 500  # counts: exact
    with _Progress(False) as quiet:
        assert not quiet.enabled


def test_keep_only_some_input_columns(tmp_path, capsys):
    src = _src(tmp_path)
    out = tmp_path / "o.parquet"
    assert main(["correct", str(src), str(out), *BANDS, "--keep", "id", "--quiet"]) == 0
    columns = list(pd.read_parquet(out).columns)
    assert columns[0] == "id" and "Bmag" not in columns and "Bmag_dered" in columns
    assert main(["correct", str(src), str(tmp_path / "o2.csv"), *BANDS, "--keep", "nope"]) == 2
    assert "nope" in capsys.readouterr().err

"""Tests of ``redcorr correct`` (in-process, and one subprocess for the exit status)."""

import json
import sys
import warnings

import numpy as np
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

    from redcorr.cli._tables import _Progress

    class Terminal(io.StringIO):
        def isatty(self):
            return True

    assert not _Progress(True, "correcting").enabled  # pytest's captured stderr is not a terminal
    fake = Terminal()
    monkeypatch.setattr(sys, "stderr", fake)
    with _Progress(True, "correcting") as bar:
        assert bar.enabled
        bar(500, 0.5)
        assert bar._bar.tasks[0].completed == 500.0 and bar._bar.tasks[0].fields["rows"] == 500  # counts: exact
    with _Progress(False, "correcting") as quiet:
        assert not quiet.enabled


def test_keep_only_some_input_columns(tmp_path, capsys):
    src = _src(tmp_path)
    out = tmp_path / "o.parquet"
    assert main(["correct", str(src), str(out), *BANDS, "--keep", "id", "--quiet"]) == 0
    columns = list(pd.read_parquet(out).columns)
    assert columns[0] == "id" and "Bmag" not in columns and "Bmag_dered" in columns
    assert main(["correct", str(src), str(tmp_path / "o2.csv"), *BANDS, "--keep", "nope"]) == 2
    assert "nope" in capsys.readouterr().err


def test_an_existing_output_is_refused_naming_overwrite(tmp_path, capsys):
    src = _src(tmp_path)
    argv = ["correct", str(src), str(tmp_path / "out.csv"), *BANDS, "--quiet"]
    assert main(argv) == 0
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert "exists" in err and "--overwrite" in err
    assert main([*argv, "--overwrite"]) == 0


def test_guessed_columns_are_said_on_stderr_unless_quiet(tmp_path, capsys):
    src = _src(tmp_path)
    assert main(["correct", str(src), str(tmp_path / "a.csv"), *BANDS, "--mag", "kw-v=Vmag"]) == 0
    err = capsys.readouterr().err
    # kw-b's columns and the E(B-V) are guessed; kw-v's magnitude was named, so it is not listed
    assert "columns guessed: kw-b → Bmag, error of kw-b → Bmag_err, error of kw-v → Vmag_err, " \
           "E(B-V) → ebv, error of E(B-V) → e_ebv" in err
    assert ", kw-v → Vmag" not in err
    assert main(["correct", str(src), str(tmp_path / "b.csv"), *BANDS, "--quiet"]) == 0
    assert capsys.readouterr().err == ""
    assert main(["correct", str(src), str(tmp_path / "b.csv"), *BANDS, "--quiet"]) == 2  # errors still shown
    assert "--overwrite" in capsys.readouterr().err


# Column names of the archives catalogs are downloaded from (their published conventions, common
# practice, no source), with invented values: band -> (magnitude column, error column).
ARCHIVES = {
    "VizieR 2MASS": {"twomass-J": ("Jmag", "e_Jmag"), "twomass-H": ("Hmag", "e_Hmag"),
                     "twomass-Ks": ("Kmag", "e_Kmag")},
    "2MASS point sources": {"twomass-J": ("j_m", "j_msigcom"), "twomass-H": ("h_m", "h_msigcom"),
                            "twomass-Ks": ("k_m", "k_msigcom")},
    "VizieR Gaia": {"gaiadr3-G": ("Gmag", "e_Gmag"), "gaiadr3-BP": ("BPmag", "e_BPmag"),
                    "gaiadr3-RP": ("RPmag", "e_RPmag")},
    "Pan-STARRS": {"panstarrs-g": ("gMeanPSFMag", "gMeanPSFMagErr"), "panstarrs-r": ("rMeanPSFMag", "rMeanPSFMagErr")},
    "SDSS": {"sdss2010-g": ("psfMag_g", "psfMagErr_g"), "sdss2010-r": ("psfMag_r", "psfMagErr_r")},
    "WISE": {"wise2010-W1": ("w1mpro", "w1sigmpro"), "wise2010-W2": ("w2mpro", "w2sigmpro")},
}


def _archive_table(tmp_path, columns):
    """Five invented stars with the given magnitude and error columns, plus an unrelated column."""
    frame = pd.DataFrame({"source_id": [11, 12, 13, 14, 15]})
    for i, (mag, err) in enumerate(columns):
        frame[mag] = [14.0 + i, 15.5, 16.25, 17.0, 18.5]
        frame[err] = [0.02, 0.03, 0.05, 0.08, 0.12]
    return write_catalog(frame, tmp_path / "archive.parquet"), frame


@pytest.mark.parametrize("archive", list(ARCHIVES))
def test_archive_column_names_are_recognised(tmp_path, capsys, archive):
    bands = ARCHIVES[archive]
    src, frame = _archive_table(tmp_path, bands.values())
    out = tmp_path / "out.parquet"
    extra = ["--extrapolate"] if archive == "WISE" else []  # W1, W2 lie beyond f99's 3.3 µm
    argv = ["correct", str(src), str(out), "--ebv", "0.2", *extra]
    for band in bands:
        argv += ["--band", band]
    with warnings.catch_warnings():
        warnings.simplefilter("default", OutOfRangeWarning)  # the CLI prints warnings on stderr
        assert main(argv) == 0
    err = capsys.readouterr().err
    result = pd.read_parquet(out)
    for band, (mag, e_mag) in bands.items():
        assert f"{band} → {mag}, error of {band} → {e_mag}" in err
        label = band.replace("-", "_")
        # the corrected magnitude is the named column minus A_band; with a constant E(B-V) and no other
        # uncertainty its error is the error column (both identities of the definition; 1e-12 for rounding)
        assert abs(result[mag + "_dered"] + result["A_" + label] - frame[mag]).max() < 1e-12
        assert abs(result[mag + "_dered_err"] - frame[e_mag]).max() < 1e-12


def test_gaia_archive_magnitudes_and_errors_from_flux_over_error(tmp_path, capsys):
    frame = pd.DataFrame({
        "source_id": [1, 2, 3],
        "phot_g_mean_mag": [12.0, 15.0, 18.0], "phot_g_mean_flux_over_error": [2000.0, 500.0, 50.0],
        "phot_bp_mean_mag": [12.5, 15.6, 18.9], "phot_bp_mean_flux_over_error": [900.0, 200.0, 20.0],
        "phot_rp_mean_mag": [11.4, 14.3, 17.2], "phot_rp_mean_flux_over_error": [1100.0, 300.0, 30.0],
    })
    src = write_catalog(frame, tmp_path / "gaia.parquet")
    out = tmp_path / "out.parquet"
    argv = ["correct", str(src), str(out), "--ebv", "0.1"]
    for band in ("gaiadr3-G", "gaiadr3-BP", "gaiadr3-RP"):
        argv += ["--band", band]
    assert main(argv) == 0
    err = capsys.readouterr().err
    assert "gaiadr3-G → phot_g_mean_mag, error of gaiadr3-G → 2.5/ln10 / phot_g_mean_flux_over_error" in err
    result = pd.read_parquet(out)
    for b in ("g", "bp", "rp"):
        mag = f"phot_{b}_mean_mag"
        # σ_m = 2.5/ln 10 · σ_F/F (first-order error propagation, common practice, no source); 1e-12 for rounding
        expected = 2.5 / np.log(10.0) / frame[f"phot_{b}_mean_flux_over_error"]
        assert abs(result[mag + "_dered_err"] - expected).max() < 1e-12

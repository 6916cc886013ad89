"""Tests of ``redcorr coeffs`` and ``redcorr bands`` (in-process)."""

import json

import numpy as np
import pytest
from numpy.testing import assert_allclose

from redcorr.cli import main
from redcorr.curves import get_curve
from redcorr.extinction import band_extinction
from redcorr.io.filters import load_band
from redcorr.io.grids import read_coefficient_grid
from redcorr.sed import blackbody

KEYS = ["band", "lambda_eff_um", "A_band", "A_over_AV", "A_over_EBV"]


def _json(capsys, argv):
    assert main(argv) == 0
    return json.loads(capsys.readouterr().out)


def test_coeffs_json_keys_and_values(capsys):
    rows = _json(capsys, ["coeffs", "--law", "f99", "--rv", "4.3", "--band", "kw-v", "--band", "bessell-B",
                          "--sed", "blackbody:7000", "--av", "2.5", "--json"])
    assert [list(r) for r in rows] == [KEYS, KEYS]
    assert [r["band"] for r in rows] == ["kw-v", "bessell-B"]
    # The command prints band_extinction's value (checked against independent quadrature in
    # test_extinction); JSON carries full doubles, so only the rounding of the ratios below
    # separates them (1e-12).
    expect = band_extinction(get_curve("f99", r_v=4.3), load_band("kw-v"), blackbody(7000), 2.5)
    assert_allclose(rows[0]["A_band"], expect, rtol=1e-12)
    assert_allclose(rows[0]["A_over_AV"], expect / 2.5, rtol=1e-12)
    # E(B−V) ≡ A_V/R_V (redcorr.extinction docstring).
    assert_allclose(rows[0]["A_over_EBV"], 4.3 * expect / 2.5, rtol=1e-12)


def test_coeffs_ebv_equals_av_times_rv(capsys):
    base = ["coeffs", "--law", "ccm89", "--rv", "3.1", "--band", "tophat:0.44:0.09", "--sed", "flat", "--json"]
    by_ebv = _json(capsys, base + ["--ebv", "0.5"])
    by_av = _json(capsys, base + ["--av", str(0.5 * 3.1)])
    # A_V = R_V E(B-V) (definition of R_V); the two A_V differ at most in the last bit
    assert_allclose(by_ebv[0]["A_band"], by_av[0]["A_band"], rtol=1e-12)


def test_coeffs_zero_av_gives_the_limit(capsys):
    rows = _json(capsys, ["coeffs", "--law", "f99", "--band", "kw-b", "--sed", "powerlaw:-1", "--av", "0", "--json"])
    # exactly 0 at A_V = 0 (see test_extinction), and the A_V → 0 limit above 1 in a blue band
    assert rows[0]["A_band"] == 0.0 and rows[0]["A_over_AV"] > 1.0


def test_coeffs_table_output_has_colour_excess_ratios(capsys):
    argv = ["coeffs", "--law", "f99", "--band", "kw-b", "--band", "kw-v", "--sed", "blackbody:6000", "--av", "1"]
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert "E(B-V) = A_V/R_V" in out and "kw-b - kw-v" in out


def test_coeffs_law_from_file(tmp_path, capsys):
    lam = np.geomspace(0.3, 1.2, 40)
    path = tmp_path / "curve.csv"
    path.write_text("wavelength_um,A_over_AV\n" + "\n".join(f"{x},{(x / 0.55) ** -1.5}" for x in lam))
    rows = _json(capsys, ["coeffs", "--law", f"file:{path}", "--band", "kw-v", "--sed", "flat", "--av", "1", "--json"])
    # r = (λ/0.55)^-1.5 is 1 at V; averaged over kw-v (pivot 0.545 µm, ~0.09 µm wide) it is
    # within ~1 % of 1, hence atol 0.02
    assert_allclose(rows[0]["A_over_AV"], 1.0, atol=0.02)


def test_coeffs_grid_and_plot(tmp_path, capsys):
    grid, plot = tmp_path / "g.ecsv", tmp_path / "p.png"
    assert main(["coeffs", "--law", "f99", "--band", "kw-b", "--band", "kw-v", "--band", "kw-i", "--sed",
                 "blackbody:7000", "--av", "1", "--json", "--grid", str(grid), "--plot", str(plot)]) == 0
    captured = capsys.readouterr()
    json.loads(captured.out)  # stdout stays pure JSON
    assert "residuals" in captured.err
    g = read_coefficient_grid(grid)
    assert g.bands == ["kw-b", "kw-v", "kw-i"] and g.ratio.shape == (3, 30, 41)
    assert plot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize(
    "argv, match",
    [
        (["--law", "f99", "--band", "kw-vv", "--sed", "flat", "--av", "1"], "did you mean 'kw-v'"),
        (["--law", "f99", "--band", "twomass-Ks*wise2010-W1", "--sed", "flat", "--av", "1"], "overlap"),
        (["--law", "f99", "--band", "wise2010-W2", "--sed", "flat", "--av", "1"], "outside the f99 range"),
        (["--law", "f99", "--band", "kw-v", "--sed", "vega:1", "--av", "1"], "sed="),
        (["--law", "f99", "--band", "kw-v", "--sed", "flat", "--av", "-1"], "negative"),
        (["--law", "f99", "--rv", "9", "--band", "kw-v", "--sed", "flat", "--av", "1"], "r_v"),
        (["--law", "f99", "--band", "file:/no/such.ecsv", "--sed", "flat", "--av", "1"], "does not exist"),
        (["--law", "f99", "--band", "kw-v", "--sed", "flat", "--av", "1", "--grid", "/no/dir/g.ecsv"],
         "does not exist"),
    ],
)
def test_coeffs_bad_input_exit_2_one_line(capsys, argv, match):
    assert main(["coeffs", *argv]) == 2
    err = capsys.readouterr().err
    assert match in err and err.count("\n") == 1


def test_coeffs_extrapolate_warns_on_stderr(capsys):
    status = main(["coeffs", "--law", "f99", "--band", "wise2010-W1", "--sed", "flat", "--av", "1",
                   "--extrapolate", "--json"])
    assert status == 0
    captured = capsys.readouterr()
    assert "warning" in captured.err and "outside the f99 range" in captured.err
    assert json.loads(captured.out)[0]["band"] == "wise2010-W1"


def test_coeffs_needs_law_or_grain(capsys):
    assert main(["coeffs", "--band", "kw-v", "--sed", "flat", "--av", "1"]) == 2
    assert main(["coeffs", "--law", "f99", "--grain", "x", "--band", "kw-v", "--sed", "flat", "--av", "1"]) == 2


def test_coeffs_grain_model(capsys):
    # --grain MODEL resolves through redcorr.io.load_curve; dust extinguishes less in the red
    # (common practice, no source).
    rows = _json(capsys, ["coeffs", "--grain", "mrn77", "--band", "kw-v", "--band", "kw-i", "--sed", "blackbody:6000",
                          "--av", "1", "--json"])
    assert rows[0]["A_over_AV"] > rows[1]["A_over_AV"] > 0


def test_coeffs_grain_refuses_rv(capsys):
    assert main(["coeffs", "--grain", "anything", "--rv", "3.1", "--band", "kw-v", "--sed", "flat", "--av", "1"]) == 2
    assert "--rv cannot be used with --grain" in capsys.readouterr().err


def test_bands_list(capsys):
    rows = _json(capsys, ["bands", "--list", "--json"])
    names = {r["band"]: r["from"] for r in rows}
    assert names["kw-v"] == "filters/" and names["bessell-V"] == "speclite"
    assert main(["bands", "--list"]) == 0
    assert "twomass-Ks" in capsys.readouterr().out


def test_bands_describe_json(capsys):
    rows = _json(capsys, ["bands", "tophat:0.55:0.1", "kw-v", "--json"])
    assert rows[0]["band"] == "tophat:0.55:0.1"
    # Top-hat 0.5–0.6 µm: λp² = (b² − a²)/(2 ln(b/a)) (see test_bandpass); the top-hat's edge ramps
    # of 1e-9 of its width shift the pivot by ~1e-8 and the ends by 2e-10, hence 1e-7 and 1e-8.
    assert_allclose(rows[0]["pivot_um"], np.sqrt(0.11 / (2 * np.log(1.2))), rtol=1e-7)
    assert_allclose([rows[0]["wave_min_um"], rows[0]["wave_max_um"]], [0.5, 0.6], rtol=1e-8)
    assert {"pivot_um", "mean_um", "width_um", "wave_min_um", "wave_max_um"} <= set(rows[1])


def test_bands_errors(capsys):
    assert main(["bands"]) == 2
    assert main(["bands", "bessel-V"]) == 2
    assert "did you mean 'bessell-V'" in capsys.readouterr().err


def test_subprocess_entry_point(tmp_path):
    import subprocess
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parent.parent
    proc = subprocess.run([sys.executable, "-m", "redcorr", "bands", "kw-b", "--json"], cwd=root,
                          capture_output=True, text=True, check=True)
    assert json.loads(proc.stdout)[0]["band"] == "kw-b"


def test_bands_warns_about_a_cut_off_curve(tmp_path, capsys):
    path = tmp_path / "cut.csv"
    path.write_text("wavelength_nm,response\n400,0.5\n500,1\n600,0\n")
    assert main(["bands", f"file:{path}", "--json"]) == 0
    captured = capsys.readouterr()
    assert "is cut off" in captured.err and json.loads(captured.out)[0]["band"].startswith("file:")

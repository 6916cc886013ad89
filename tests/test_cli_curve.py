"""``redcorr curve`` and the command-line conventions."""

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from redcorr.cli import main
from redcorr.curves import CCM89


def test_json_rows(capsys):
    assert main(["curve", "ccm89", "--rv", "3.1", "--wave", "0.55", "2.2", "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    assert [list(r) for r in rows] == [["wavelength_um", "A_over_AV", "A_over_EBV"]] * 2
    # bitwise: JSON round-trips doubles, and the command prints the law's own values (the law is
    # checked against CCM89's Table 3 in test_curves_ccm) and the wavelengths it was given
    np.testing.assert_array_equal([r["A_over_AV"] for r in rows], CCM89(3.1)([0.55, 2.2]))
    np.testing.assert_array_equal([r["wavelength_um"] for r in rows], [0.55, 2.2])
    # A/E(B-V) = R_V A/A_V (definition of R_V): one multiplication, rounding only
    assert_allclose([r["A_over_EBV"] for r in rows], 3.1 * CCM89(3.1)([0.55, 2.2]), rtol=1e-15)


@pytest.mark.parametrize(
    ("args", "wave_um"),
    [
        (["--wave", "5500", "--unit", "AA"], 0.55),
        (["--wave", "550", "--unit", "nm"], 0.55),
        (["--wave", "2", "--unit", "1/um"], 0.5),  # wavenumber 2 µm⁻¹ is λ = 0.5 µm by definition
        (["--wave", "2", "--unit", "um-1"], 0.5),
    ],
)
def test_units(capsys, args, wave_um):
    assert main(["curve", "o94", *args, "--json"]) == 0
    row = json.loads(capsys.readouterr().out)[0]
    assert_allclose(row["wavelength_um"], wave_um, rtol=1e-12)  # unit conversion: rounding only


def test_unknown_unit_lists_the_tokens(capsys):
    assert main(["curve", "o94", "--wave", "2", "--unit", "micron"]) == 2
    err = capsys.readouterr().err
    assert all(f"'{token}'" in err for token in ("um", "nm", "AA", "1/um", "um-1"))


def test_table_output(capsys):
    assert main(["curve", "f99", "--wave", "0.44", "0.55"]) == 0
    out = capsys.readouterr().out.splitlines()
    assert out[0].startswith("# f99, R_V = 3.1")
    assert out[1].split() == ["wavelength_um", "A_over_AV", "A_over_EBV"]
    assert len(out) == 5


def test_list(capsys):
    assert main(["curve", "--list"]) == 0
    out = capsys.readouterr().out
    for name in ("ccm89", "o94", "f99", "fm90", "calzetti00", "g03-smc-bar", "g03-lmc-average", "g03-lmc2-supershell"):
        assert name in out
    assert "file:PATH" in out
    assert out.split()[:6] == ["name", "R_V", "R_V_limits", "R_V_observed", "wave_um", "citation"]


def test_list_json_mirrors_the_class_attributes(capsys):
    assert main(["curve", "--list", "--json"]) == 0
    laws = {row["name"]: row for row in json.loads(capsys.readouterr().out)["laws"]}
    assert laws["ccm89"]["r_v_limits"] == [2.1, 6.1] and laws["ccm89"]["r_v_observed"] == [2.6, 5.6]
    assert laws["f99"]["r_v_limits"] == [1.8, 6.0] and laws["f99"]["r_v_observed"] == [2.3, 5.5]
    assert laws["g03-smc-bar"]["r_v_limits"] is None  # a fixed R_V


@pytest.mark.parametrize(
    ("args", "match"),
    [
        (["curve", "cmm89", "--wave", "1"], "did you mean 'ccm89'"),
        (["curve", "ccm89", "--wave", "0.05"], "outside the ccm89 range"),
        (["curve", "ccm89", "--rv", "9", "--wave", "1"], "r_v=9.0 is outside"),
        (["curve", "ccm89"], "--wave is missing"),
        (["curve", "--wave", "1"], "LAW is missing"),
        (["curve", "ccm89", "--wave", "abc"], "'abc' is not a number"),
        (["curve", "file:/nonexistent/x.csv", "--wave", "1"], "does not exist"),
    ],
)
def test_user_errors_exit_2_with_one_line(capsys, args, match):
    assert main(args) == 2
    err = capsys.readouterr().err
    assert match in err
    assert "Traceback" not in err


def test_extrapolate_warns_on_stderr(capsys):
    assert main(["curve", "ccm89", "--wave", "0.05", "--extrapolate", "--json"]) == 0
    captured = capsys.readouterr()
    assert "warning" in captured.err and "extrapolation" in captured.err
    assert json.loads(captured.out)[0]["wavelength_um"] == 0.05  # the wavelength given, echoed exactly


def test_plot(tmp_path):
    out = tmp_path / "c.png"
    assert main(["curve", "f99", "--wave", "0.55", "--plot", str(out)]) == 0
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert [p.name for p in tmp_path.iterdir()] == ["c.png"]  # no temporary left behind


def test_python_dash_m():
    root = Path(__file__).resolve().parents[1]
    proc = subprocess.run(
        [sys.executable, "-m", "redcorr", "curve", "ccm89", "--wave", "0.55", "--json"],
        capture_output=True,
        text=True,
        cwd=root,
        check=False,
    )
    assert proc.returncode == 0, proc.stderr
    # bitwise: the same law in another process, printed as a round-tripping JSON double
    assert json.loads(proc.stdout)[0]["A_over_AV"] == float(CCM89(3.1)(0.55))

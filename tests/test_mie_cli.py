"""Tests of the ``redcorr mie`` command (in-process through redcorr.cli.main)."""

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from published import MIEPYTHON_EFFICIENCIES_MX_EXAMPLE

from redcorr.cli import main
from redcorr.mie import sphere

ROOT = Path(__file__).resolve().parents[1]


def test_json_keys_and_values(capsys):
    assert main(["mie", "--m", "1.5+0.01j", "--x", "0.1", "1", "10", "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    assert [list(r) for r in rows] == [["x", "q_ext", "q_sca", "q_abs", "q_back", "g"]] * 3
    assert [r["x"] for r in rows] == [0.1, 1.0, 10.0]
    ref = sphere(1.5 + 0.01j, [0.1, 1.0, 10.0])
    for name in ("q_ext", "q_sca", "q_abs", "q_back", "g"):
        # bitwise: JSON carries Python's shortest round-tripping repr of each double, so the
        # command must print the library's numbers to the last bit
        np.testing.assert_array_equal([r[name] for r in rows], getattr(ref, name))


def test_documented_peer_value_through_the_cli(capsys):
    # miepython 3.3 docstring of efficiencies_mx (tests/published.py): m = 1.5 - 0.01i (n - ik),
    # x = 2. atol 6e-7: the values are printed to six decimals, i.e. to ±5e-7
    ex = MIEPYTHON_EFFICIENCIES_MX_EXAMPLE
    assert ex["m"] == 1.5 - 0.01j and ex["x"] == 2.0  # the arguments typed below
    assert main(["mie", "--m", "1.5-0.01i", "--convention", "n-ik", "--x", "2", "--json"]) == 0
    (row,) = json.loads(capsys.readouterr().out)
    names = ("q_ext", "q_sca", "q_back", "g")
    np.testing.assert_allclose([row[k] for k in names], [ex[k] for k in names], atol=6e-7)


def test_table_is_aligned(capsys):
    assert main(["mie", "--m", "2+1j", "--x", "0.5", "50"]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0].startswith("# Mie") and "m = 2+1i" in lines[0]
    assert lines[1].split() == ["x", "q_ext", "q_sca", "q_abs", "q_back", "g"]
    assert len({len(line) for line in lines[2:]}) == 1  # header rule and rows share one width


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["--m", "1.5", "--x", "-1"], "x=-1.0 is outside the allowed range"),
        (["--m", "1.5-0.1j", "--x", "1"], "--convention n-ik"),
        (["--m", "one", "--x", "1"], "--m='one' is not a complex number"),
        (["--m", "0+1j", "--x", "1"], "must have a real part > 0"),
    ],
)
def test_bad_input_exit_2(capsys, argv, message):
    assert main(["mie", *argv]) == 2
    err = capsys.readouterr().err
    assert message in err
    assert len(err.strip().splitlines()) == 1


def test_nan_is_refused_by_the_parser(capsys):
    assert main(["mie", "--m", "1.5", "--x", "nan"]) == 2
    assert "not a finite number" in capsys.readouterr().err


def test_subprocess_entry_point():
    out = subprocess.run(
        [sys.executable, "-m", "redcorr", "mie", "--m", "1.33", "--x", "3", "--json"],
        cwd=ROOT,
        capture_output=True,
        text=True,
        check=True,
    )
    (row,) = json.loads(out.stdout)
    assert row["q_abs"] == 0.0  # a real index does not absorb (common practice, no source)
    # bitwise: JSON round-trips doubles exactly, and the other process runs the same code
    # (the numba and numpy engines may differ in the last bits, so both processes use the default)
    assert row["q_ext"] == float(sphere(1.33, 3.0).q_ext)

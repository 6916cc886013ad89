"""The command line reads its arguments before importing anything heavy.

Why: a command line that imports its whole library (scipy, pandas, astropy
tables and coordinates, matplotlib, numba, textual, ...) before looking at its
arguments takes seconds to print ``--help``; loading those only in the code
that needs them is common practice, no source.

Each check runs in a fresh interpreter, because this test session has long
imported all of them.
"""

import json
import subprocess
import sys
from pathlib import Path

import pytest

from redcorr.cli import COMMANDS

ROOT = Path(__file__).resolve().parents[1]

HEAVY = (
    "scipy",
    "pandas",
    "astropy.table",
    "astropy.coordinates",
    "matplotlib",
    "numba",
    "textual",
    "dask",
    "pyarrow",
)

_PROBE = """
import contextlib, io, json, sys
from redcorr.cli import main
with contextlib.redirect_stdout(io.StringIO()) as out:
    status = main({argv!r})
print(json.dumps({{"status": status, "output": out.getvalue(), "modules": sorted(sys.modules)}}))
"""


def _run(argv):
    """Exit status, standard output and loaded module names of ``redcorr ARGV`` in a fresh interpreter."""
    proc = subprocess.run(
        [sys.executable, "-c", _PROBE.format(argv=argv)], cwd=ROOT, capture_output=True, text=True, check=True
    )
    result = json.loads(proc.stdout)
    return result["status"], result["output"], set(result["modules"])


def _heavy(modules):
    return sorted(name for name in HEAVY if name in modules)


def test_build_parser_is_light():
    code = "import sys; from redcorr.cli import build_parser; build_parser(); print('\\n'.join(sys.modules))"
    proc = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True)
    assert _heavy(set(proc.stdout.split())) == []


@pytest.mark.parametrize("argv", [["--help"]] + [[name, "--help"] for name in COMMANDS], ids=" ".join)
def test_help_imports_nothing_heavy(argv):
    status, output, modules = _run(argv)
    assert status == 0 and "usage: redcorr" in output
    assert _heavy(modules) == []
    assert "numpy" not in modules


def test_top_level_help_lists_every_command_with_its_help():
    status, output, _ = _run(["--help"])
    assert status == 0
    lines = output.splitlines()
    for name in COMMANDS:  # the help on the name's line, or on the next when the name is long (argparse wraps)
        assert any(
            line.split()[:1] == [name] and (len(line.split()) > 1 or len(lines[k + 1].split()) > 1)
            for k, line in enumerate(lines[:-1])
        ), name


def test_law_evaluation_imports_nothing_heavy():
    status, output, modules = _run(["curve", "ccm89", "--wave", "0.55", "--json"])
    assert status == 0
    assert json.loads(output)[0]["wavelength_um"] == 0.55
    assert _heavy(modules) == []

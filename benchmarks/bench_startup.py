"""Time the command line's start-up: help screens and one quick law evaluation.

Each command runs as a fresh ``python -m redcorr ...`` process, the way a user
or a shell script meets it, so the time includes the interpreter and every
import the command needs. Baselines, measured in the same run with the same
interpreter: ``python -c "import numpy"`` and ``python -c "import astropy.units"``.

Targets:

* ``redcorr --help`` and ``redcorr COMMAND --help`` for every subcommand:
  <= 2x the numpy baseline (the parser is built without numpy, astropy,
  scipy or pandas);
* ``redcorr curve ccm89 --wave 0.55 --json``: <= 1.5x the astropy.units
  baseline (the law needs numpy and astropy.units, nothing more).

Every command runs once to warm the disk cache, then REPEAT rounds of all the
commands in turn (the order rotating each round, so that machine noise hits
all of them alike); the median of the rounds is reported.

Run from the repository root:  python benchmarks/bench_startup.py [REPEAT]
"""

import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from redcorr.cli import COMMANDS  # noqa: E402 - light: builds no parser, imports no subcommand

REDCORR = [sys.executable, "-m", "redcorr"]
NUMPY = [sys.executable, "-c", "import numpy"]
UNITS = [sys.executable, "-c", "import astropy.units"]
CURVE = [*REDCORR, "curve", "ccm89", "--wave", "0.55", "--json"]


def elapsed(argv):
    """Wall time of one run of ``argv``, in seconds; the command must succeed."""
    start = time.perf_counter()
    subprocess.run(argv, cwd=ROOT, stdout=subprocess.DEVNULL, check=True)
    return time.perf_counter() - start


def main(repeat=7):
    runs = {
        "python -c 'import numpy'": NUMPY,
        "python -c 'import astropy.units'": UNITS,
        "redcorr --help": [*REDCORR, "--help"],
        **{f"redcorr {name} --help": [*REDCORR, name, "--help"] for name in COMMANDS},
        "redcorr curve ccm89 --wave 0.55 --json": CURVE,
    }
    names = list(runs)
    for argv in runs.values():
        elapsed(argv)
    times = {name: [] for name in names}
    for i in range(repeat):
        for name in names[i % len(names):] + names[: i % len(names)]:
            times[name].append(elapsed(runs[name]))
    median = {name: statistics.median(t) for name, t in times.items()}
    numpy_s, units_s = median[names[0]], median[names[1]]
    print(f"median of {repeat} runs each; baselines: import numpy {numpy_s * 1e3:.0f} ms, "
          f"import astropy.units {units_s * 1e3:.0f} ms")
    print(f"{'command':<42} {'ms':>6} {'ratio':>6}  target")
    for name in names[2:]:
        base, limit, label = (units_s, 1.5, "astropy.units") if runs[name] is CURVE else (numpy_s, 2.0, "numpy")
        ratio = median[name] / base
        verdict = "met" if ratio <= limit else "MISSED"
        print(f"{name:<42} {median[name] * 1e3:6.0f} {ratio:6.2f}  <= {limit:g}x {label}: {verdict}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 7)

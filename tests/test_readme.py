"""Every example of README.md runs as written, in order, and exits 0.

What runs: each ```python block (executed, all in one namespace per block) and each line of a
```bash block that starts with ``redcorr `` (a line ending in ``\\`` continues on the next; the
command is run in-process through ``redcorr.cli.main``), in the order they appear in README.md.
They run in one temporary folder, so an example that writes a file a later one writes too
breaks the later one, as it would for a reader. That folder holds links to the project's
``demo/`` and ``filters/`` and the small input files the examples name (``stars.csv``,
``stars.fits``, ``mycurve.csv``, ``qe.ecsv``, ``star.ecsv``, ``my_camera.toml``), made below
from invented Brume Field values (also ``nh.fits``, ``hi.fits``, ``tau353.fits``, made from the demo's
map), and ``mydust.toml``, the README's own TOML grain model.

What does not run, visibly so:

* a ```bash line that does not start with ``redcorr `` (installing, running the test suite);
* a ``redcorr`` line whose comment ends with ``(your files)``: it needs files only the reader
  has (a hemisphere pair of maps, a partitioned catalog and a Dask scheduler), or with
  ``(interactive)``: the terminal UI.

``test_examples_were_found`` fails when the extraction finds fewer examples than README has
(a changed fence or marker would otherwise let examples drop out unnoticed).
"""

import contextlib
import gzip
import io
import os
import re
import shlex
import shutil
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from astropy import units as u
from astropy.io import fits
from astropy.table import Table

from redcorr.cli import main
from redcorr.curves import get_curve
from redcorr.exceptions import RedcorrWarning
from redcorr.io.filters import load_band
from redcorr.photometry import synthetic_ab
from redcorr.sed import blackbody

ROOT = Path(__file__).resolve().parents[1]
README = ROOT / "README.md"
NOT_RUN = ("(your files)", "(interactive)")
"""A command whose comment ends with one of these is not run (see the module docstring)."""


def _commands(block):
    """(command, line offset) of a bash block's commands: continuation lines joined, comments kept."""
    commands, current, start = [], "", 0
    for i, line in enumerate(block.splitlines()):
        if not current:
            start = i
        current += line.rstrip()
        if current.endswith("\\"):
            current = current[:-1] + " "
            continue
        if current.strip():
            commands.append((current.strip(), start))
        current = ""
    return commands


def _examples():
    """(kind, text, line number) of every example of README.md, in order; kind "python", "shell" or "not run"."""
    text = README.read_text(encoding="utf-8")
    out = []
    for match in re.finditer(r"^```(\w*)\n(.*?)^```", text, flags=re.S | re.M):
        lang, body = match.group(1), match.group(2)
        line = text.count("\n", 0, match.start()) + 2
        if lang == "python":
            out.append(("python", body, line))
        elif lang == "bash":
            for command, offset in _commands(body):
                if not command.startswith("redcorr "):
                    continue
                comment = command.partition(" #")[2].strip()
                kind = "not run" if comment.endswith(NOT_RUN) else "shell"
                out.append((kind, command, line + offset))
    return out


EXAMPLES = _examples()


def _stars():
    """A small catalog with the columns the README's ``stars.*`` examples name (invented Brume Field values)."""
    rng = np.random.default_rng(20)
    cat = pd.read_csv(ROOT / "demo" / "brume_catalog.csv", comment="#").iloc[:40].copy()
    cat["rv"] = np.round(rng.uniform(3.5, 5.0, len(cat)), 2)   # per-row R_V inside f99's observed 2.3-5.5
    cat["plx"] = np.round(rng.uniform(0.5, 5.0, len(cat)), 3)  # mas: 200 pc to 2 kpc, either side of the cloud
    cat["e_plx"] = 0.1
    return cat


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    """The reader's folder: demo/ and filters/ of the project, and the files the examples name."""
    where = tmp_path_factory.mktemp("readme")
    for name in ("demo", "filters"):
        os.symlink(ROOT / name, where / name)
    stars = _stars()
    stars.to_csv(where / "stars.csv", index=False)
    with gzip.open(where / "stars.csv.gz", "wt") as f:
        stars.to_csv(f, index=False)
    Table({"Vmag": stars["kw_v"], "e_Vmag": stars["e_kw_v"], "A_V": stars["ebv"] * 4.3}).write(where / "stars.fits")
    wave = np.linspace(0.3, 2.5, 23)
    Table({"wavelength_um": wave, "A_over_AV": get_curve("ccm89")(wave)}).write(where / "mycurve.csv")
    nm = np.arange(300.0, 1101.0, 10.0)
    qe = np.clip(np.sin(np.pi * (nm - 300.0) / 800.0), 0, None)  # an invented detector QE, 0 at both ends
    Table({"wavelength": nm * u.nm, "response": qe}).write(where / "qe.ecsv")
    lam = np.linspace(0.25, 1.3, 300)
    flam = blackbody(5800).flam(lam)
    scale = 10 ** (-0.4 * (17.0 - synthetic_ab(blackbody(5800), load_band("kw-v"))))  # AB 17 in kw-v: a plausible star
    Table({"wavelength": lam * u.um, "flux": flam * scale * u.erg / u.s / u.cm**2 / u.AA}).write(where / "star.ecsv")
    shutil.copy(ROOT / "demo" / "instrument.toml", where / "my_camera.toml")
    # column and optical-depth maps for `redcorr emission-map`: the demo's A_V image (R_V 4.3) as N_H at
    # 5.8e21 cm-2 per mag of E(B-V) (Bohlin, Savage & Drake 1978), as N(HI) in units of 1e20 cm-2 (an
    # invented atomic share of 0.6), and as tau at 353 um (an invented 1.2e-4 per mag of E(B-V))
    with fits.open(ROOT / "demo" / "brume_av_zea.fits") as hdul:
        image, header = hdul[0].data.astype(np.float64), hdul[0].header.copy()
    ebv = image / 4.3
    maps = {"nh.fits": ebv * 5.8e21, "hi.fits": ebv * 0.6 * 5.8e21 / 1e20, "tau353.fits": ebv * 1.2e-4}
    for name, values in maps.items():
        fits.PrimaryHDU(values, header).writeto(where / name)
    text = README.read_text(encoding="utf-8")
    (model,) = [b for b in re.findall(r"^```toml\n(.*?)^```", text, flags=re.S | re.M) if 'name = "mydust"' in b]
    (where / "mydust.toml").write_text(model, encoding="utf-8")  # the README's own grain model
    return where


def _run_shell(command):
    argv = shlex.split(command, comments=True)[1:]
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = main(argv)
    assert status == 0, f"{command}\nexit {status}\n{err.getvalue()}"


def _run_python(code):
    with warnings.catch_warnings(), contextlib.redirect_stdout(io.StringIO()):
        warnings.simplefilter("always", RedcorrWarning)  # shown to the reader, not an error here
        exec(compile(code, str(README), "exec"), {"__name__": "readme_example"})


@pytest.mark.parametrize(("kind", "text", "line"), EXAMPLES, ids=[f"line{e[2]}-{e[0]}" for e in EXAMPLES])
def test_example_runs(kind, text, line, folder, monkeypatch):
    if kind == "not run":
        pytest.skip(f"README line {line} is marked as needing the reader's own files or a terminal: {text}")
    monkeypatch.chdir(folder)
    if kind == "python":
        _run_python(text)
    else:
        _run_shell(text)


def test_examples_were_found():
    kinds = [e[0] for e in EXAMPLES]
    assert kinds.count("python") >= 6
    assert kinds.count("shell") >= 30
    assert kinds.count("not run") <= 4

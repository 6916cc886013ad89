"""Write Draine's far-infrared absorption opacity of the R_V = 3.1 Milky Way dust as a test reference.

Reads ``input/d03/d03_3.1_6.0_A.orig`` from the PyPI sdist hyperion-dust==0.1.0
(Draine's published table for the Weingartner & Draine 2001 R_V = 3.1,
b_C = 6e-5 mixture renormalized by 0.93) straight from the tarball, keeps the
rows with 1 <= wavelength <= 1000 um and writes
``tests/data/d03_rv3.1_kabs.ecsv`` with units, citation, the sdist's name and
its sha256. It never builds, installs or imports the package and reads none
of its code.

The .orig file has no header. Its six columns are, as Draine describes his
tables (quoted in the sdist's input/d03/README.md): wavelength (um), albedo,
<cos theta>, C_ext per H (cm2), K_abs (cm2 per gram of dust), <cos^2 theta>.
The script checks that reading: C_ext (1 - albedo) / K_abs, the dust mass per
H, must be the same on every row.

The tarball reader is the ``Sdist`` class of scripts/make_data.py, imported
(that module does nothing on import).

Usage::

    python scripts/make_emission_reference.py --sdist /path/to/hyperion-dust-0.1.0.tar.gz
    python scripts/make_emission_reference.py          # pip download into a temp dir
"""

import sys
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import Table

sys.path.insert(0, str(Path(__file__).resolve().parent))
from make_data import SDIST, TEST_DATA, sdist_from_command_line, write  # noqa: E402

MEMBER = "input/d03/d03_3.1_6.0_A.orig"
WAVE_RANGE_UM = (1.0, 1000.0)
OUT = TEST_DATA / "d03_rv3.1_kabs.ecsv"
CITATION = (
    "Draine, B. T. 2003, ApJ, 598, 1017 and 1026 (Scattering by interstellar dust grains I and II); "
    "Weingartner, J. C., & Draine, B. T. 2001, ApJ, 548, 296 (size distribution: Milky Way R_V = 3.1, "
    "b_C = 6e-5, case A, renormalized by 0.93 as in Draine 2003, ARA&A, 41, 241)"
)
DOI = "10.1086/379118; 10.1086/379123; 10.1086/318651"  # from memory


def reference_table(sd):
    """The far-infrared rows of the R_V = 3.1 table, in increasing wavelength, as an astropy Table."""
    rows = sd.rows(MEMBER, 0, ncol=6)  # some rows carry a trailing text label
    keep = (rows[:, 0] >= WAVE_RANGE_UM[0]) & (rows[:, 0] <= WAVE_RANGE_UM[1])
    rows = rows[keep]
    wave, idx = np.unique(rows[:, 0], return_index=True)
    rows = rows[idx]
    mass_per_h = rows[:, 3] * (1 - rows[:, 1]) / rows[:, 4]
    spread = mass_per_h.max() / mass_per_h.min() - 1
    if spread > 0.01:  # columns rounded to 4 digits
        raise SystemExit(f"{MEMBER}: C_ext (1 - albedo) / K_abs varies by {spread:.1%}; columns not as expected")
    t = Table(
        [wave * u.um, rows[:, 1], rows[:, 3] * u.cm**2, rows[:, 4] * u.cm**2 / u.g],
        names=["wavelength", "albedo", "C_ext_per_H", "K_abs"],
    )
    t["albedo"].description = "C_sca / C_ext"
    t["C_ext_per_H"].description = "extinction cross section per H nucleon"
    t["K_abs"].description = "absorption opacity per gram of dust"
    t.meta.update(
        title="Draine (2003) Milky Way R_V = 3.1 dust: far-infrared absorption opacity",
        citation=CITATION,
        doi=DOI,
        source=(
            f"PyPI sdist {SDIST} (hyperion-dust-0.1.0.tar.gz), member {MEMBER}: columns 1, 2, 4 and 5 of 6 "
            f"(wavelength um, albedo, <cos>, C_ext/H cm2, K_abs cm2/g, <cos^2>), rows with "
            f"{WAVE_RANGE_UM[0]:g} <= wavelength <= {WAVE_RANGE_UM[1]:g} um; written by "
            "scripts/make_emission_reference.py"
        ),
        sdist=SDIST,
        sdist_sha256=sd.sha256,
        dust_mass_per_h_g=float(np.median(mass_per_h)),
        note=(
            "rows sorted into increasing wavelength (the source runs in decreasing wavelength) and repeated "
            "wavelengths dropped; dust_mass_per_h_g = C_ext (1 - albedo) / K_abs, the same on every row"
        ),
    )
    return t


def main(argv=None):
    with sdist_from_command_line(argv, __doc__.splitlines()[0]) as sd:
        write(reference_table(sd), OUT)
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""Rebuild redcorr's grain data tables from the PyPI sdist hyperion-dust==0.1.0.

The sdist carries, as plain data files, Draine's dielectric tables, the
Weingartner & Draine (2001) Table 1 and tabulated size distributions, and
Draine's published extinction tables for the WD01 Milky Way mixtures. This
script reads those data files straight from the tarball and writes

* ``redcorr/data/optical_*.ecsv``: optical constants (wavelength, n, k),
* ``redcorr/data/wd01_table1.ecsv``: WD01 Table 1 size-distribution parameters,
* ``tests/data/d03_mw*.ecsv``: Draine's per-H extinction, albedo and <cos>,
* ``tests/data/wd01_sizes.ecsv``: WD01 (1/n_H) dn/da sampled on 100 radii,

each with units and a citation (paper and DOI) in its header.

It never builds, installs or imports the package and reads none of its
code (``pip download`` itself may run the sdist's setup script to read its
metadata; pass ``--sdist`` to avoid even that).

Usage::

    python scripts/make_data.py                 # pip download into a temp dir
    python scripts/make_data.py --sdist FILE.tar.gz
"""

import argparse
import contextlib
import hashlib
import subprocess
import sys
import tarfile
import tempfile
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import Table

ROOT = Path(__file__).resolve().parent.parent
DATA = ROOT / "redcorr" / "data"
TEST_DATA = ROOT / "tests" / "data"
SDIST = "hyperion-dust==0.1.0"
SDIST_NOTE = (
    "extracted by scripts/make_data.py from the data files of the PyPI sdist "
    "hyperion-dust 0.1.0 (input/ri-data, input/d03)"
)

# DOIs from memory; checked against the journal reference given in each source file.
D03_OPT = {
    "citation": "Draine, B. T. 2003, ApJ, 598, 1026 (Scattering by interstellar dust grains. II. X-rays)",
    "doi": "10.1086/379123",
}
LD93 = {"citation": "Laor, A., & Draine, B. T. 1993, ApJ, 402, 441", "doi": "10.1086/172149"}
WD01 = {"citation": "Weingartner, J. C., & Draine, B. T. 2001, ApJ, 548, 296", "doi": "10.1086/318651"}
D03_EXT = {
    "citation": (
        "Draine, B. T. 2003, ARA&A, 41, 241; Draine, B. T. 2003, ApJ, 598, 1017 "
        "(published extinction, albedo and <cos> for the renormalized WD01 Milky Way mixtures)"
    ),
    "doi": "10.1146/annurev.astro.41.011802.094840; 10.1086/379118",
}

# (output name, member inside the sdist, rows of header to skip, column layout, meta)
OPTICAL = [
    ("silicate_d03", "input/ri-data/callindex.out_silD03", 0, "callindex", D03_OPT,
     "Draine (2003) astronomical silicate"),
    ("graphite_par_d03_a0.01", "input/ri-data/callindex.out_CpaD03_0.01", 5, "callindex", D03_OPT,
     "Draine (2003) graphite, E parallel to c, for a = 0.01 um"),
    ("graphite_perp_d03_a0.01", "input/ri-data/callindex.out_CpeD03_0.01", 5, "callindex", D03_OPT,
     "Draine (2003) graphite, E perpendicular to c, for a = 0.01 um"),
    ("graphite_par_d03_a0.10", "input/ri-data/callindex.out_CpaD03_0.10", 5, "callindex", D03_OPT,
     "Draine (2003) graphite, E parallel to c, for a = 0.1 um"),
    ("graphite_perp_d03_a0.10", "input/ri-data/callindex.out_CpeD03_0.10", 5, "callindex", D03_OPT,
     "Draine (2003) graphite, E perpendicular to c, for a = 0.1 um"),
    ("silicate_ld93", "input/ri-data/silicate_ld93", 0, "nk", LD93,
     "Laor & Draine (1993) astronomical silicate"),
    ("graphite_par_ld93", "input/ri-data/graphite_par_ld93", 0, "nk", LD93,
     "Laor & Draine (1993) graphite, E parallel to c"),
    ("graphite_perp_ld93", "input/ri-data/graphite_per_ld93", 0, "nk", LD93,
     "Laor & Draine (1993) graphite, E perpendicular to c"),
]

MIXTURES = [("3.1", "3.1_6.0_A", 0.93), ("4.0", "4.0_4.0_A", 1.18), ("5.5", "5.5_3.0_A", 1.42)]


def fetch_sdist(workdir):
    """Download the sdist with pip (no build, no dependencies); return the tarball path."""
    cmd = [sys.executable, "-m", "pip", "download", "--no-deps", "--no-binary", ":all:",
           "-d", str(workdir), SDIST]
    subprocess.run(cmd, check=True)
    found = sorted(Path(workdir).glob("hyperion-dust-0.1.0.tar.gz")) or sorted(Path(workdir).glob("hyperion*"))
    if not found:
        raise SystemExit(f"pip download left no sdist in {workdir}")
    return found[0]


class Sdist:
    """Read member files of the sdist tarball by their path below the top folder."""

    def __init__(self, path):
        self.path = Path(path)
        self.tar = tarfile.open(self.path, "r:gz")
        self.top = self.tar.getnames()[0].split("/")[0]
        self.sha256 = hashlib.sha256(self.path.read_bytes()).hexdigest()

    def text(self, member):
        data = self.tar.extractfile(f"{self.top}/{member}")
        return data.read().decode("latin-1")

    def rows(self, member, skip=0, ncol=None):
        """Numeric rows (first ``ncol`` columns; trailing text is dropped)."""
        out = []
        for line in self.text(member).splitlines()[skip:]:
            parts = line.split()
            if not parts:
                continue
            out.append([float(p) for p in parts[:ncol]])
        return np.array(out, dtype=float)


def write(table, path):
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_suffix(".ecsv.part")
    table.write(tmp, format="ascii.ecsv", overwrite=True)
    tmp.replace(path)
    print(f"wrote {path.relative_to(ROOT)} ({len(table)} rows)")


def optical(sd):
    for name, member, skip, layout, ref, title in OPTICAL:
        rows = sd.rows(member, skip)
        if layout == "callindex":  # wave, eps1-1, eps2, Re(n)-1, Im(n)
            wave, n, k = rows[:, 0], 1.0 + rows[:, 3], rows[:, 4]
        else:  # wave, n, k
            wave, n, k = rows[:, 0], rows[:, 1], rows[:, 2]
        order = np.argsort(wave)  # the source runs in descending wavelength
        t = Table([wave[order] * u.um, n[order], k[order]], names=["wavelength", "n", "k"])
        t["n"].description = "real part of the refractive index"
        t["k"].description = "imaginary part of the refractive index (k >= 0 absorbs)"
        t.meta.update(
            title=title,
            citation=ref["citation"],
            doi=ref["doi"],
            source=f"{SDIST_NOTE}: {member}",
            sdist_sha256=sd.sha256,
            note="rows sorted into increasing wavelength; the source table runs in decreasing wavelength",
        )
        write(t, DATA / f"optical_{name}.ecsv")


def table1(sd):
    cols = ["r_v", "b_c", "case", "alpha_g", "beta_g", "a_t_g", "a_c_g", "C_g",
            "alpha_s", "beta_s", "a_t_s", "C_s"]
    rows = [line.split()[:12] for line in sd.text("input/d03/wd01/table1.txt").splitlines() if line.strip()]
    t = Table(rows=rows, names=cols, dtype=[float, float, str] + [float] * 9)
    t["b_c"] = np.round(t["b_c"] * 1e-5, 10)
    t["b_c"].description = "C atoms per H nucleon in the two log-normal very-small-grain populations"
    for c in ("a_t_g", "a_c_g", "a_t_s"):
        t[c].unit = u.um
    t.meta.update(
        title="Weingartner & Draine (2001) Table 1: size-distribution parameters (Milky Way)",
        citation=WD01["citation"],
        doi=WD01["doi"],
        source=f"{SDIST_NOTE}: input/d03/wd01/table1.txt (first 12 columns)",
        sdist_sha256=sd.sha256,
        note="a_c,s = 0.1 um for every silicate row (WD01 section 3); C_g and C_s are dimensionless",
    )
    write(t, DATA / "wd01_table1.ecsv")


def d03_tables(sd):
    for r_v, tag, renorm in MIXTURES:
        rows = sd.rows(f"input/d03/d03_{tag}.orig", 0, ncol=6)  # some rows carry trailing text
        rows = rows[rows[:, 0] >= 0.05]
        t = Table(
            [rows[:, 0] * u.um, rows[:, 1], rows[:, 2], rows[:, 3] * u.cm**2, rows[:, 4] * u.cm**2 / u.g],
            names=["wavelength", "albedo", "cos", "C_ext_per_H", "K_abs"],
        )
        t["cos"].description = "<cos theta> of the scattered light"
        t["C_ext_per_H"].description = "extinction cross section per H nucleon"
        t["K_abs"].description = "absorption opacity per gram of dust"
        t.meta.update(
            title=f"Draine (2003) Milky Way R_V = {r_v} mixture (WD01 {tag}, renormalized by {renorm})",
            citation=D03_EXT["citation"],
            doi=D03_EXT["doi"],
            source=f"{SDIST_NOTE}: input/d03/d03_{tag}.orig, rows with wavelength >= 0.05 um",
            sdist_sha256=sd.sha256,
            renormalization=renorm,
            note="rows kept in the source's order (decreasing wavelength, extra rows at named lines)",
        )
        write(t, TEST_DATA / f"d03_mw{r_v}.ecsv")


def sizes(sd):
    cols = {}
    for _r_v, tag, _ in MIXTURES:
        for comp in ("graphite", "silicate"):
            rows = sd.rows(f"input/d03/wd01/sizes/wd01_{comp}_{tag}")
            if "a" not in cols:
                cols["a"] = rows[::10, 0]
            elif not np.allclose(cols["a"], rows[::10, 0]):
                raise SystemExit(f"radii of wd01_{comp}_{tag} differ from the others")
            cols[f"{comp}_{tag}"] = rows[::10, 1]
    t = Table([cols.pop("a") * u.um], names=["a"])
    for name, val in cols.items():
        t[name] = val * u.um**-1
        t[name].description = "(1/n_H) dn/da per H nucleon, without the Draine (2003) renormalization"
    t.meta.update(
        title="Weingartner & Draine (2001) size distributions tabulated in the sdist, every 10th radius",
        citation=WD01["citation"],
        doi=WD01["doi"],
        source=f"{SDIST_NOTE}: input/d03/wd01/sizes/wd01_<graphite|silicate>_<R_V>_<b_C>_A",
        sdist_sha256=sd.sha256,
    )
    write(t, TEST_DATA / "wd01_sizes.ecsv")


@contextlib.contextmanager
def sdist_from_command_line(argv, description):
    """The :class:`Sdist` that ``--sdist`` names in ``argv``, else one downloaded with pip for the block."""
    parser = argparse.ArgumentParser(description=description)
    parser.add_argument("--sdist", help="path to hyperion-dust-0.1.0.tar.gz (downloaded with pip if omitted)")
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        yield Sdist(Path(args.sdist) if args.sdist else fetch_sdist(tmp))


def main(argv=None):
    with sdist_from_command_line(argv, __doc__.splitlines()[0]) as sd:
        optical(sd)
        table1(sd)
        d03_tables(sd)
        sizes(sd)
    return 0


if __name__ == "__main__":
    sys.exit(main())

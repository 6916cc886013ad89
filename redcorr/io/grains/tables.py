"""Tables for grain models: packaged optical constants and WD01 Table 1, and a user's own tables.

* Packaged optical constants and the WD01 Table 1 are ECSV files in
  ``redcorr/data/`` (written by ``scripts/make_data.py``), read once per
  process.
* A user's optical constants: ECSV or CSV with columns ``wavelength_um`` (or
  ``wavelength`` with a unit), ``n`` and ``k``; a user's size distribution:
  columns ``a_um`` (or ``a`` with a unit) and ``dnda`` ((1/n_H) dn/da, µm⁻¹).
"""

import functools
from importlib import resources
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import Table

from redcorr.exceptions import InputError
from redcorr.grains import OpticalConstants, TabulatedSizes
from redcorr.io._files import input_file

__all__ = ["packaged_optical_constants", "wd01_table", "read_optical_constants", "read_size_table"]


def _read_table(path, what):
    path = input_file(path, what)
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
    what = "size-distribution file"
    table = _read_table(path, what)
    a = _column(table, path, what, "a_um", "a", u.um)
    dnda = _numeric(table, "dnda", path, what)
    try:
        return TabulatedSizes(a, dnda, name=Path(path).name, a_min=a_min, a_max=a_max)
    except InputError as exc:
        raise InputError(f"{what} {str(path)!r}: {exc}") from None

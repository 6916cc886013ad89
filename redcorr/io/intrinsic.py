"""Intrinsic-colour tables: the packaged dwarf table by name, and users' own ECSV tables.

The packaged table ``dwarfs`` (``redcorr/data/intrinsic_colours_dwarfs.ecsv``,
written by ``scripts/make_intrinsic_colours.py``) holds the intrinsic colours
of main-sequence stars of Pecaut & Mamajek (2013, ApJS 208, 9, Table 5) in
E. Mamajek's maintained version, as magnitudes relative to V in the
project's band names.

A user's table (e.g. for giants) is an ECSV file in the same format:

* ``teff``: T_eff in K (a unit of K, or no unit), strictly increasing or
  strictly decreasing down the table; or, instead, ``spectral_type``
  alone, whose T_eff are then taken from the packaged dwarf table (every
  type must be one of its dwarf types). Both may be given;
* one column per band, named by a band name of the project
  (``redcorr bands --list``), in mag: absolute magnitudes, or magnitudes
  relative to any one band; empty cells (masked) or ``nan`` where a value
  is missing;
* optionally ``abs_mag``, the absolute magnitude in the reference band;
* optionally the meta key ``reference_band`` (one of the band columns; the
  first band column by default): the magnitudes are stored relative to it,
  and every row with values must have one for it; ``citation`` names the
  source.
"""

import functools
from importlib import resources
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import MaskedColumn, Table

from redcorr._validate import check_choice
from redcorr.exceptions import InputError, UnknownNameError
from redcorr.intrinsic import ColourLocus
from redcorr.io._atomic import atomic_path, check_output_path
from redcorr.io._files import input_file
from redcorr.io.filters import list_bands

__all__ = ["PACKAGED_COLOURS", "load_intrinsic_colours", "read_intrinsic_colours", "write_intrinsic_colours"]

PACKAGED_COLOURS = {"dwarfs": "intrinsic_colours_dwarfs.ecsv"}
"""Packaged intrinsic-colour tables: name → file in ``redcorr/data/``."""

TEFF, TYPE, ABSOLUTE = "teff", "spectral_type", "abs_mag"
_WHAT = "intrinsic-colour table"


def _numbers(table, name, where):
    """A column as float64, NaN for masked, empty or 'nan' cells; an InputError for any other text."""
    col = table[name]
    mask = np.asarray(getattr(col, "mask", np.zeros(len(col), bool)), dtype=bool)
    if col.dtype.kind in "biuf":
        values = np.asarray(col, dtype=float).copy()
        values[mask] = np.nan
        return values
    out = np.full(len(col), np.nan)
    for k, cell in enumerate(np.asarray(col)):
        text = str(cell).strip()
        if mask[k] or not text or text.lower() == "nan":
            continue
        try:
            out[k] = float(text)
        except ValueError:
            raise InputError(f"{where}: column {name!r} row {k + 1} is {text!r}, not a number") from None
    return out


def _check_order(teff, where):
    """Refuse repeated T_eff and an order that is neither increasing nor decreasing."""
    step = np.diff(teff)
    if np.any(step == 0):
        k = int(np.flatnonzero(step == 0)[0])
        raise InputError(f"{where}: teff={teff[k]:g} K is in rows {k + 1} and {k + 2}; each T_eff once")
    if not (np.all(step > 0) or np.all(step < 0)):
        k = int(np.flatnonzero(np.sign(step) != np.sign(step[0]))[0])
        raise InputError(
            f"{where}: teff must increase or decrease steadily down the table; row {k + 2} ({teff[k + 1]:g} K) "
            f"turns back after row {k + 1} ({teff[k]:g} K)"
        )


def _teff(table, where):
    if TEFF in table.colnames:
        unit = table[TEFF].unit
        if unit is not None and u.Unit(unit) != u.K:
            raise InputError(f"{where}: column 'teff' has unit {unit}; give T_eff in K")
        teff = _numbers(table, TEFF, where)
        bad = ~np.isfinite(teff) | (teff <= 0)
        if np.any(bad):
            k = int(np.flatnonzero(bad)[0])
            raise InputError(f"{where}: column 'teff' row {k + 1} is {teff[k]!r}; T_eff must be a number > 0 (K)")
        return teff
    if TYPE in table.colnames:
        dwarfs = load_intrinsic_colours("dwarfs")
        try:
            return dwarfs.teff_of([str(s) for s in table[TYPE]])
        except InputError as exc:
            raise InputError(f"{where} has no 'teff' column, so its types must be dwarf types: {exc}") from None
    raise InputError(f"{where} needs a 'teff' column (K) or a 'spectral_type' column; columns are {table.colnames}")


def _band_columns(table, where):
    """{column name: project band name} of the band columns."""
    known = list_bands()
    out = {}
    for name in table.colnames:
        if name in (TEFF, TYPE, ABSOLUTE):
            continue
        try:
            out[name] = check_choice(f"{where}: band column", name, known, listed_by="redcorr bands --list")
        except UnknownNameError as exc:
            raise UnknownNameError(f"{exc}; the other columns allowed are {TEFF!r}, {TYPE!r}, {ABSOLUTE!r}") from None
    if len(out) < 2:
        raise InputError(
            f"{where} has {len(out)} band column{'' if len(out) == 1 else 's'} ({', '.join(out) or 'none'}); "
            "a colour needs at least 2"
        )
    return out


def _from_table(table, where, name):
    teff = _teff(table, where)
    bands = _band_columns(table, where)
    _check_order(teff, where)
    mags = np.column_stack([_numbers(table, col, where) for col in bands])
    meta = table.meta or {}
    names = list(bands.values())
    reference = names[0]
    if "reference_band" in meta:
        reference = check_choice(f"{where}: meta reference_band", meta["reference_band"], names)
    labels = [str(s) for s in table[TYPE]] if TYPE in table.colnames else None
    absolute = _numbers(table, ABSOLUTE, where) if ABSOLUTE in table.colnames else None
    citation = "; ".join(str(meta[k]) for k in ("citation", "table_version") if k in meta)
    try:
        return ColourLocus(teff, mags, names, reference=reference, labels=labels, absolute=absolute, name=name,
                           citation=citation or f"user table {name}")
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None


def read_intrinsic_colours(path):
    """Read an intrinsic-colour table from an ECSV file (format in the module docstring).

    Parameters
    ----------
    path : path-like

    Returns
    -------
    ColourLocus
        Named after the file.

    Raises
    ------
    InputError
        With one line naming the file and what is wrong: no ``teff`` or
        ``spectral_type`` column, a column that is not a known band (with
        close matches), repeated or unordered T_eff, a cell that is not a
        number, fewer than two bands.
    """
    path = input_file(path, _WHAT)
    where = f"{_WHAT} {str(path)!r}"
    try:
        table = Table.read(path, format="ascii.ecsv")
    except Exception as exc:  # astropy raises many types for malformed text
        raise InputError(f"{where} could not be read as ECSV: {' '.join(str(exc).split())}") from None
    return _from_table(table, where, Path(path).name)


@functools.lru_cache(maxsize=None)
def _packaged(name):
    ref = resources.files("redcorr") / "data" / PACKAGED_COLOURS[name]
    with resources.as_file(ref) as path:
        table = Table.read(path, format="ascii.ecsv")
    return _from_table(table, f"packaged {_WHAT} {name!r}", name)


def load_intrinsic_colours(table="dwarfs"):
    """An intrinsic-colour table by name (``"dwarfs"``) or from a user's ECSV file.

    Parameters
    ----------
    table : str or path-like
        A name of :data:`PACKAGED_COLOURS` (case-insensitive; a packaged
        table is read once per process) or the path of an ECSV file.

    Returns
    -------
    ColourLocus

    Examples
    --------
    >>> locus = load_intrinsic_colours("dwarfs")
    >>> locus.teff_of("G2V"), round(float(locus.colour(5770, "bessell-B", "bessell-V")), 3)
    (5770.0, 0.65)
    """
    text = str(table).strip()
    if text.lower() not in PACKAGED_COLOURS and (Path(text).suffix or Path(text).exists()):
        return read_intrinsic_colours(text)
    return _packaged(check_choice("colours", text, list(PACKAGED_COLOURS), listed_by=None))


def write_intrinsic_colours(locus, path, *, overwrite=True):
    """Write a :class:`ColourLocus` as ECSV in the format :func:`read_intrinsic_colours` reads, atomically.

    Rows are written in increasing T_eff; missing values are masked (empty).
    """
    out = check_output_path(path, overwrite=overwrite)
    t = Table()
    if locus.labels is not None:
        t[TYPE] = list(locus.labels)
    t[TEFF] = locus.teff * u.K
    if locus.absolute is not None:
        t[ABSOLUTE] = MaskedColumn(locus.absolute, mask=np.isnan(locus.absolute), unit=u.mag)
    mags = locus.magnitudes
    for k, band in enumerate(locus.bands):
        t[band] = MaskedColumn(mags[:, k], mask=np.isnan(mags[:, k]), unit=u.mag)
    t.meta.update(citation=locus.citation, reference_band=locus.reference)
    with atomic_path(out, suffix=".ecsv", named=True, overwrite=overwrite) as tmp:  # astropy writes to a file name
        t.write(tmp, format="ascii.ecsv", overwrite=True)
    return out

"""Bands from names and files: speclite's curves, the project's ``filters/`` folder, user files.

A band specification (``spec``) is one of

* a name from ``speclite`` (e.g. ``bessell-V``, ``sdss2010-r``,
  ``twomass-Ks``, ``gaiadr3-G``) or from the project's ``filters/`` folder
  (e.g. ``kw-v``); :func:`list_bands` lists them all. Names are matched
  case-insensitively; the ``filters/`` folder wins over speclite;
* ``file:PATH`` — a user file: ECSV with a ``wavelength`` column carrying a
  unit; CSV with a header ``wavelength_<unit>,response`` (e.g.
  ``wavelength_nm``); or two whitespace-separated columns (``#`` comments).
  Where the file does not state the unit, give it in brackets after the
  path, ``file:PATH[nm]`` (um, nm, AA, Angstrom, ... any astropy length);
* ``tophat:CENTRE_UM:WIDTH_UM`` — response 1 inside, 0 outside;
* ``gauss:CENTRE_UM:FWHM_UM`` — a Gaussian of that FWHM;
* several of the above joined by ``*`` — their product on a common grid,
  e.g. ``kw-v*file:qe.ecsv`` (filter × detector QE × optics × atmosphere);
  so a file name containing ``*`` cannot be used in a specification
  (call :func:`read_band_file` instead).

An ECSV file may say ``convention: energy`` in its meta (default
``photon``) and name its origin in ``source``, ``description`` or ``url``.
"""

import functools
import re
import warnings
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import Table

from redcorr._paths import project_dir
from redcorr._validate import check_choice, check_finite
from redcorr.bandpass import CONVENTIONS, Band, gaussian, product, tophat
from redcorr.exceptions import InputError
from redcorr.io._files import input_file

__all__ = ["load_band", "list_bands", "project_bands", "read_band_file", "write_band_file"]

_UNIT_SUFFIX = re.compile(r"^(?P<path>.+)\[(?P<unit>[^\[\]]+)\]$")
_MIN_ROWS = 3


def _speclite_dir():
    import speclite.filters  # noqa: PLC0415 - only when speclite names are needed

    return Path(speclite.filters.get_path_of_data_file("filters/bessell-V.ecsv")).parent


@functools.lru_cache(maxsize=1)
def _speclite_names():
    return tuple(sorted(p.stem for p in _speclite_dir().glob("*.ecsv")))


def project_bands():
    """{name: path} of the ECSV files in the project's ``filters/`` folder (empty if absent)."""
    try:
        folder = project_dir("filters")
    except InputError:
        return {}
    return {p.stem: p for p in sorted(folder.glob("*.ecsv"))}


def list_bands():
    """Every band name :func:`load_band` knows: the ``filters/`` folder, then speclite's.

    Returns
    -------
    list of str
    """
    own = list(project_bands())
    return own + [n for n in _speclite_names() if n not in own]


def _parse_unit(text, where):
    try:
        unit = u.Unit(text.strip())
    except ValueError:
        raise InputError(f"{where}: unit {text!r} is not an astropy unit (e.g. um, nm, AA)") from None
    if unit.physical_type not in ("length", "frequency", "wavenumber", "energy"):
        raise InputError(f"{where}: unit {text!r} is not a unit of wavelength (e.g. um, nm, AA)")
    return unit


def _from_table(table, path, unit):
    """(wave Quantity, response, meta) from an astropy Table read from ``path``."""
    where = f"filter file {str(path)!r}"
    names = table.colnames
    resp_col = "response" if "response" in names else None
    wave_col, wave_unit = None, unit
    for name in names:
        m = re.fullmatch(r"wavelength(?:_(?P<u>\w+))?", name)
        if m:
            wave_col = name
            if m.group("u") and wave_unit is None:
                wave_unit = _parse_unit(m.group("u"), where)
            break
    if wave_col is None or resp_col is None:
        if len(names) == 2 and not any(n.startswith("wavelength") or n == "response" for n in names):
            wave_col, resp_col = names
        else:
            raise InputError(
                f"{where} needs columns 'wavelength' (or 'wavelength_<unit>') and 'response'; columns are {names}"
            )
    col = table[wave_col]
    try:
        values = np.asarray(col, dtype=float)
        resp = np.asarray(table[resp_col], dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{where}: the columns {wave_col!r} and {resp_col!r} must be numeric") from None
    if col.unit is not None and wave_unit is None:
        wave_unit = col.unit
    if wave_unit is None:
        raise InputError(
            f"{where} does not state its wavelength unit; name the column e.g. 'wavelength_nm', "
            f"give the column a unit (ECSV), or write file:{path}[nm]"
        )
    if len(values) < _MIN_ROWS:
        raise InputError(f"{where} has {len(values)} rows; a band needs at least {_MIN_ROWS}")
    return values * u.Unit(wave_unit), resp, dict(table.meta or {})


def read_band_file(path, wave_unit=None, name=None):
    """Read a band from an ECSV, CSV or two-column text file.

    Parameters
    ----------
    path : path-like
    wave_unit : str or `~astropy.units.Unit`, optional
        Wavelength unit when the file does not state one (it overrides
        nothing the file states).
    name : str, optional
        Band name; defaults to ``file:<file name>``.

    Returns
    -------
    Band
        A curve in frequency or wavenumber is reordered into increasing
        wavelength.
    """
    path = input_file(path, "filter file")
    where = f"filter file {str(path)!r}"
    unit = _parse_unit(str(wave_unit), where) if wave_unit is not None else None
    suffix = path.suffix.lower()
    if suffix == ".ecsv":
        fmt = "ascii.ecsv"
    elif suffix == ".csv":
        fmt = "ascii.csv"
    else:
        fmt = None
    try:
        if fmt:
            table = Table.read(path, format=fmt)
        else:
            with warnings.catch_warnings():  # an empty file is refused below, not warned about
                warnings.simplefilter("ignore", UserWarning)
                data = np.loadtxt(path, comments="#", dtype=float, ndmin=2)
            if data.size == 0:
                raise InputError(f"{where} holds no numbers; a text file needs two columns, wavelength and response")
            if data.shape[1] != 2:
                raise InputError(f"{where}: a text file needs exactly two columns; found {data.shape[1]}")
            table = Table(data, names=("wavelength", "response"))
    except InputError:
        raise
    except Exception as exc:  # astropy and numpy raise many types for malformed text
        kind = {"ascii.ecsv": "ECSV", "ascii.csv": "CSV"}.get(fmt, "two-column text")
        raise InputError(f"{where} could not be read as {kind}: {exc}") from None
    wave, resp, meta = _from_table(table, path, unit)
    try:
        lam = wave.to_value(u.um, equivalencies=u.spectral())
    except u.UnitConversionError:
        raise InputError(f"{where}: unit {wave.unit} is not a unit of wavelength") from None
    if lam.size > 1 and np.all(np.diff(lam) < 0):
        lam, resp = lam[::-1], resp[::-1]
    convention = str(meta.get("convention", "photon")).lower()
    if convention not in CONVENTIONS:
        raise InputError(f"{where}: meta convention={convention!r} is not 'photon' or 'energy'")
    source = meta.get("source") or meta.get("description") or meta.get("url") or ""
    provenance = f"{path.name}" + (f": {' '.join(str(source).split())}" if source else "")
    try:
        return Band(lam, resp, name=name or f"file:{path.name}", convention=convention, provenance=provenance)
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None


def write_band_file(band, path):
    """Write a band as ECSV (wavelength in µm with its unit, response, provenance), atomically."""
    from redcorr.io._atomic import atomic_path  # noqa: PLC0415

    table = Table({"wavelength": band.wave_um * u.um, "response": band.response})
    table.meta.update({"name": band.name, "convention": band.convention, "source": band.provenance})
    with atomic_path(path, suffix=".ecsv", named=True) as tmp:  # astropy writes to a file name
        table.write(tmp, format="ascii.ecsv", overwrite=True)


def _load_speclite(name):
    import speclite.filters  # noqa: PLC0415

    filt = speclite.filters.load_filter(name)
    meta = filt.meta or {}
    source = meta.get("url") or ""
    desc = " ".join(str(meta.get("description", "")).split())
    prov = f"speclite {name}" + (f" ({source})" if source else "") + (f": {desc[:200]}" if desc else "")
    return Band(filt.wavelength / 1e4, filt.response, name=name, provenance=prov)


def _synthetic(kind, rest, spec):
    parts = rest.split(":")
    if len(parts) != 2:
        what = "WIDTH_UM" if kind == "tophat" else "FWHM_UM"
        raise InputError(f"band={spec!r}: write {kind}:CENTRE_UM:{what}, e.g. {kind}:0.55:0.09")
    centre = check_finite(f"band={spec!r} centre", parts[0])
    width = check_finite(f"band={spec!r} width", parts[1])
    try:
        return (tophat if kind == "tophat" else gaussian)(centre, width, name=spec)
    except InputError as exc:  # name the spec as written; the message gives the allowed range
        if spec in str(exc):
            raise
        raise InputError(f"band={spec!r}: {exc}") from None


def _load_one(spec):
    if spec.startswith("file:"):
        path = spec[5:]
        m = _UNIT_SUFFIX.match(path)
        unit = None
        if m and not Path(path).exists():
            path, unit = m.group("path"), m.group("unit")
        return read_band_file(path, wave_unit=unit, name=spec)
    for kind in ("tophat", "gauss"):
        if spec.startswith(kind + ":"):
            return _synthetic(kind, spec[len(kind) + 1:], spec)
    own = project_bands()
    known = list(own) + [n for n in _speclite_names() if n not in own]
    name = check_choice("band", spec, known, listed_by="redcorr bands --list")
    if name in own:
        return read_band_file(own[name], name=name)
    return _load_speclite(name)


def load_band(spec):
    """A :class:`~redcorr.bandpass.Band` from a specification (see the module docstring).

    Raises
    ------
    UnknownNameError
        For an unknown name, with close matches.
    InputError
        For a malformed file or specification.
    """
    if isinstance(spec, Band):
        return spec
    spec = str(spec).strip()
    if not spec:
        raise InputError("band='' is empty; give a band name (redcorr bands --list), file:PATH, tophat: or gauss:")
    parts = [p.strip() for p in spec.split("*")]
    if not all(parts):
        raise InputError(f"band={spec!r}: a product A*B needs a band on each side of every '*'")
    if len(parts) == 1:
        return _load_one(spec)
    return product(*(_load_one(p) for p in parts), name=spec)

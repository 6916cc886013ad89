"""Source spectra from specifications and files.

A source specification is one of ``blackbody:T`` (T in K), ``powerlaw:ALPHA``
(F_ν ∝ ν^ALPHA), ``flat`` (flat F_ν), or ``file:PATH`` for a table:

* ECSV or FITS (``.ecsv``, ``.fits``, ``.fit``): a ``wavelength`` column
  with a unit and a ``flux`` column with a unit of F_λ (e.g.
  erg s⁻¹ cm⁻² Å⁻¹) or of F_ν (e.g. Jy), converted to F_λ;
* CSV: columns ``wavelength_um`` and ``flam`` (F_λ, any scale) or ``fnu``
  (F_ν, any scale).
"""


import numpy as np
from astropy import units as u
from astropy.table import Table

from redcorr._validate import check_finite
from redcorr.exceptions import InputError
from redcorr.io._files import input_file
from redcorr.sed import SED, TabulatedSED, blackbody, flat_fnu, power_law

__all__ = ["load_sed", "read_sed_file"]

_FLAM = u.erg / u.s / u.cm**2 / u.AA


def read_sed_file(path):
    """Read a tabulated spectrum (see the module docstring) as a `TabulatedSED` in F_λ."""
    path = input_file(path, "spectrum file")
    where = f"spectrum file {str(path)!r}"
    suffix = path.suffix.lower()
    fmt = {".ecsv": "ascii.ecsv", ".csv": "ascii.csv", ".fits": "fits", ".fit": "fits"}.get(suffix)
    if fmt is None:
        raise InputError(f"{where}: the extension {suffix!r} is not one of .ecsv, .csv, .fits")
    try:
        table = Table.read(path, format=fmt)
    except Exception as exc:  # astropy raises many types for malformed files
        raise InputError(f"{where} could not be read: {exc}") from None
    names = table.colnames
    try:
        if fmt == "ascii.csv":
            if "wavelength_um" not in names or not ({"flam", "fnu"} & set(names)):
                raise InputError(f"{where} needs columns 'wavelength_um' and 'flam' or 'fnu'; columns are {names}")
            lam = np.asarray(table["wavelength_um"], dtype=float)
            if "flam" in names:
                flam = np.asarray(table["flam"], dtype=float)
            else:
                flam = np.asarray(table["fnu"], dtype=float) / lam**2
        else:
            if "wavelength" not in names or "flux" not in names:
                raise InputError(f"{where} needs columns 'wavelength' and 'flux' with units; columns are {names}")
            wcol, fcol = table["wavelength"], table["flux"]
            if wcol.unit is None or fcol.unit is None:
                raise InputError(f"{where}: the 'wavelength' and 'flux' columns must carry units")
            wave = u.Quantity(wcol)
            lam = wave.to_value(u.um, equivalencies=u.spectral())
            try:
                flam = u.Quantity(fcol).to_value(_FLAM, equivalencies=u.spectral_density(wave))
            except u.UnitConversionError:
                raise InputError(f"{where}: flux unit {fcol.unit} is neither F_lambda nor F_nu") from None
    except (TypeError, ValueError) as exc:
        if isinstance(exc, InputError):
            raise
        raise InputError(f"{where}: the columns must be numeric ({exc})") from None
    except u.UnitConversionError:
        raise InputError(f"{where}: the wavelength unit is not a unit of length") from None
    if lam.size > 1 and np.all(np.diff(lam) < 0):
        lam, flam = lam[::-1], flam[::-1]
    try:
        return TabulatedSED(lam, flam, name=f"file:{path.name}")
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None


def load_sed(spec):
    """An :class:`~redcorr.sed.SED` from a specification (see the module docstring)."""
    if isinstance(spec, SED):
        return spec
    text = str(spec).strip()
    kind, _, arg = text.partition(":")
    kind = kind.lower()
    try:  # name the spec as written; the message gives the allowed range
        if kind == "blackbody":
            return blackbody(check_finite("temperature", arg))
        if kind == "powerlaw":
            return power_law(check_finite("alpha", arg))
    except InputError as exc:
        raise InputError(f"sed={text!r}: {exc}") from None
    if kind == "flat" and not arg:
        return flat_fnu()
    if kind == "file":
        return read_sed_file(arg)
    raise InputError(
        f"sed={text!r} is not known; use blackbody:T (K), powerlaw:ALPHA (F_nu ~ nu^ALPHA), flat or file:PATH"
    )

"""Source spectra from specifications and files.

A source specification is one of ``blackbody:T`` (T in K), ``powerlaw:ALPHA``
(F_ν ∝ ν^ALPHA), ``flat`` (flat F_ν), ``vega`` or ``sun`` (packaged
reference spectra, below), or ``file:PATH`` for a table:

* ECSV or FITS (``.ecsv``, ``.fits``, ``.fit``): a ``wavelength`` column
  with a unit and a ``flux`` column with a unit of F_λ (e.g.
  erg s⁻¹ cm⁻² Å⁻¹) or of F_ν (e.g. Jy), converted to F_λ;
* CSV: columns ``wavelength_um`` and ``flam`` (F_λ, any scale) or ``fnu``
  (F_ν, any scale).

``vega`` and ``sun`` are the CALSPEC spectra of Vega (at Earth, 0.274–29 µm)
and of the Sun (at 1 AU, 0.275–2.70 µm), absolutely calibrated F_λ in
erg s⁻¹ cm⁻² Å⁻¹, packaged as ``redcorr/data/spectrum_vega.ecsv`` and
``spectrum_sun.ecsv`` by ``scripts/make_reference_spectra.py`` from the
PyPI package lezargus 0.3.2 (MIT); their headers give the citations
(Bohlin 2014, AJ 147, 127; Bohlin, Gordon & Tremblay 2014, PASP 126, 711)
and checksums. Outside their ranges they raise, never extrapolate.
:func:`ab_vega_offsets` gives the AB − Vega offsets of bands from the
packaged Vega.
"""

import functools
from importlib import resources

import numpy as np
from astropy import units as u
from astropy.table import Table

from redcorr._validate import check_finite
from redcorr.exceptions import InputError
from redcorr.io._files import input_file
from redcorr.io.filters import load_band
from redcorr.photometry import ab_minus_vega
from redcorr.sed import SED, TabulatedSED, blackbody, flat_fnu, power_law

__all__ = ["load_sed", "read_sed_file", "reference_sed", "ab_vega_offsets"]

_FLAM = u.erg / u.s / u.cm**2 / u.AA
REFERENCE_SPECTRA = ("vega", "sun")
_ALLOWED = "blackbody:T (K), powerlaw:ALPHA (F_nu ~ nu^ALPHA), flat, vega, sun or file:PATH"


def _united_columns(table, where):
    """λ (µm) and F_λ (erg s⁻¹ cm⁻² Å⁻¹) from the ``wavelength`` and ``flux`` columns with units."""
    names = table.colnames
    if "wavelength" not in names or "flux" not in names:
        raise InputError(f"{where} needs columns 'wavelength' and 'flux' with units; columns are {names}")
    wcol, fcol = table["wavelength"], table["flux"]
    if wcol.unit is None or fcol.unit is None:
        raise InputError(f"{where}: the 'wavelength' and 'flux' columns must carry units")
    try:
        wave = u.Quantity(wcol)
        lam = wave.to_value(u.um, equivalencies=u.spectral())
    except u.UnitConversionError:
        raise InputError(f"{where}: the wavelength unit is not a unit of length") from None
    try:
        flam = u.Quantity(fcol).to_value(_FLAM, equivalencies=u.spectral_density(wave))
    except u.UnitConversionError:
        raise InputError(f"{where}: flux unit {fcol.unit} is neither F_lambda nor F_nu") from None
    return lam, flam


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
            lam, flam = _united_columns(table, where)
    except (TypeError, ValueError) as exc:
        if isinstance(exc, InputError):
            raise
        raise InputError(f"{where}: the columns must be numeric ({exc})") from None
    if lam.size > 1 and np.all(np.diff(lam) < 0):
        lam, flam = lam[::-1], flam[::-1]
    try:
        return TabulatedSED(lam, flam, name=f"file:{path.name}")
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None


@functools.cache
def reference_sed(name):
    """The packaged absolute spectrum ``name`` (``"vega"`` or ``"sun"``) as a `TabulatedSED`.

    Parameters
    ----------
    name : str
        One of ``REFERENCE_SPECTRA``.

    Returns
    -------
    TabulatedSED
        F_λ in erg s⁻¹ cm⁻² Å⁻¹ (Vega at Earth, the Sun at 1 AU), with
        ``name`` and ``citation`` from the file (see the module docstring).

    Raises
    ------
    InputError
        If ``name`` is not a packaged spectrum.

    References
    ----------
    Bohlin, R. C. 2014, AJ 147, 127 (Vega); Bohlin, R. C., Gordon, K. D. &
    Tremblay, P.-E. 2014, PASP 126, 711 (CALSPEC).
    """
    if name not in REFERENCE_SPECTRA:
        raise InputError(f"reference spectrum {name!r} is not known; use one of {', '.join(REFERENCE_SPECTRA)}")
    ref = resources.files("redcorr") / "data" / f"spectrum_{name}.ecsv"
    with resources.as_file(ref) as path:
        table = Table.read(path, format="ascii.ecsv")
    lam, flam = _united_columns(table, f"packaged spectrum {name!r}")
    return TabulatedSED(lam, flam, name=name, citation=str(table.meta["citation"]))


def ab_vega_offsets(bands, vega_mag=0.0):
    """AB − Vega offsets m_AB − m_Vega of bands, from the packaged spectrum of Vega.

    Parameters
    ----------
    bands : iterable of str or Band
        Band specifications (as :func:`redcorr.io.filters.load_band` takes) or bands.
    vega_mag : float
        Vega's own magnitude in the bands' Vega system (default 0: Vega's
        colours are 0; see :func:`redcorr.photometry.ab_minus_vega`).

    Returns
    -------
    dict
        Band name -> offset in mag; add it to a Vega magnitude to get AB.

    Raises
    ------
    InputError
        If a band is not known or reaches outside 0.274–29 µm.
    """
    vega = reference_sed("vega")
    out = {}
    for spec in bands:
        band = load_band(spec) if isinstance(spec, str) else spec
        out[band.name] = float(ab_minus_vega(vega, band, vega_mag))
    return out


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
    if kind in REFERENCE_SPECTRA:
        if ":" in text:
            raise InputError(f"sed={text!r}: {kind} takes no parameter; use {_ALLOWED}")
        return reference_sed(kind)
    if kind == "file":
        return read_sed_file(arg)
    raise InputError(f"sed={text!r} is not known; use {_ALLOWED}")

"""Target lists for exposure planning: reading the file, resolving bands, systems and spectra.

A target list is a catalog in any format :func:`redcorr.io.catalogs.read_catalog`
reads (CSV, ECSV, FITS, Parquet), one row per target. Its columns, found
by name case-insensitively:

``name`` (or ``target``, ``id``)
    The target's name.
position: ``ra``, ``dec`` (or the other RA/Dec names of :mod:`redcorr.correction.columns`), else ``l``, ``b``
    Degrees (ICRS, or Galactic for l/b); looked up in the dust map.
``mag`` (or ``magnitude``)
    The dust-free magnitude. An empty cell leaves the target unplanned
    (flagged ``no_magnitude``).
``mag_band`` (or ``band``)
    The band of ``mag``: a band of the instrument or any band spec (as
    ``--mag-band``); else the default given.
``mag_system`` (or ``system``)
    ``AB`` or ``Vega`` (case-insensitive); else the default (AB). A Vega
    magnitude is turned into AB with the band's AB − Vega offset computed
    from the packaged spectrum of Vega (:func:`redcorr.io.spectra.ab_vega_offsets`,
    Vega at 0 in every band).
``sed`` (or ``spectrum``, ``sptype``, ``spectral_type``)
    The source spectrum: any spec ``--sed`` takes (``blackbody:T``,
    ``powerlaw:ALPHA``, ``flat``, ``vega``, ``sun``, ``file:PATH``), or a
    spectral type of the dwarfs' intrinsic-colour table
    (:func:`redcorr.io.intrinsic.load_intrinsic_colours`, e.g. ``G2V``),
    which stands for **a blackbody of that type's T_eff** (``G2V`` → 5770
    K): the colours and the band extinction are then a blackbody's, not
    the real star's. Else the default given.
``parallax`` (mas, with ``parallax_error``) or ``distance`` (pc, with ``distance_error``)
    Optional; used with a distance-resolved dust map only.

The reddening comes from one constant (E(B-V) or A_V), a named column, a
column guessed from the usual names (``ebv``, ``a_v``, ...), or a dust map,
read exactly as ``redcorr correct`` reads a catalog's
(:func:`redcorr.target_plan.target_reddening`).
"""

import dataclasses
import math

import numpy as np
import pandas as pd

from redcorr.correction.columns import DEC_NAMES, GLAT_NAMES, GLON_NAMES, RA_NAMES, find_column, float_column
from redcorr.correction.options import ReddeningSource
from redcorr.exceptions import InputError, UnknownNameError
from redcorr.io._atomic import output_group
from redcorr.io.catalogs import CatalogWriter, read_catalog, write_summary
from redcorr.io.filters import load_band
from redcorr.io.intrinsic import load_intrinsic_colours
from redcorr.io.spectra import REFERENCE_SPECTRA, ab_vega_offsets, load_sed
from redcorr.sed import blackbody
from redcorr.target_plan import TARGET_FLAGS, target_reddening

__all__ = ["TargetList", "MAG_SYSTEMS", "read_targets", "write_target_plan"]

MAG_SYSTEMS = ("AB", "Vega")
"""Magnitude systems a target list may use."""

NAME_NAMES = ("name", "target", "id")
MAG_NAMES = ("mag", "magnitude")
MAG_BAND_NAMES = ("mag_band", "band")
SYSTEM_NAMES = ("mag_system", "system")
SED_NAMES = ("sed", "spectrum", "sptype", "spectral_type")
PARALLAX_NAMES = ("parallax", "plx")
DISTANCE_NAMES = ("distance", "distance_pc")


@dataclasses.dataclass(frozen=True)
class TargetList:
    """A target list read and resolved, ready for :func:`redcorr.target_plan.plan_targets`.

    Attributes
    ----------
    names : list of str
    lon, lat : ndarray
        Positions, degrees, in ``frame``; ``lon_col``, ``lat_col`` the columns they came from.
    frame : str
    mag : ndarray
        Dust-free AB magnitude in ``mag_band`` (NaN where missing).
    mag_band : list of Band
        One per target; targets with the same band share the object.
    sed : list of SED
        One per target; targets with the same spectrum share the object.
    sed_specs : list of str
        Each target's spectrum as written (a spectral type or a spec).
    spectra : dict
        Each distinct spectrum as written in the file → the spectrum it stands for (``G2V`` →
        ``blackbody:5770``).
    a_v : ndarray
        A_V of each target (NaN where there is none).
    flags : ndarray of int64
        Bits of :data:`redcorr.target_plan.TARGET_FLAGS` set while reading.
    """

    names: list
    lon: np.ndarray
    lat: np.ndarray
    frame: str
    lon_col: str
    lat_col: str
    mag: np.ndarray
    mag_band: list
    sed: list
    sed_specs: list
    spectra: dict
    a_v: np.ndarray
    flags: np.ndarray


def _positions(columns, path):
    ra, dec = find_column(columns, RA_NAMES), find_column(columns, DEC_NAMES)
    if ra is not None and dec is not None:
        return ra, dec, "icrs"
    glon, glat = find_column(columns, GLON_NAMES), find_column(columns, GLAT_NAMES)
    if glon is not None and glat is not None:
        return glon, glat, "galactic"
    raise InputError(f"targets={str(path)!r} has no position columns: give ra and dec (degrees, ICRS) or l and b "
                     f"(Galactic); the columns are {columns}")


def _numbers(table, col, flags):
    """A column as float64; text cells become NaN and set ``non_numeric``."""
    values = float_column(table, col)
    if values is not None:
        return values
    text = table[col].astype("string").str.strip()
    values = pd.to_numeric(text, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    flags[np.isnan(values) & text.fillna("").ne("").to_numpy()] |= TARGET_FLAGS["non_numeric"]
    return values


def _cells(table, col, default):
    """A text column's cells, stripped, with ``default`` for missing or empty cells (all ``default`` without one)."""
    if col is None:
        return [default] * len(table)
    out = []
    for value in table[col].tolist():
        text = "" if value is None or (isinstance(value, float) and math.isnan(value)) else str(value).strip()
        out.append(text or default)
    return out


def _name(names, i):
    return f"target {names[i]!r} (row {i + 1})"


def _resolver(instrument, colours):
    """Functions turning band specs and spectrum specs into objects, each made once."""
    bands, spectra, seds, locus = {}, {}, {}, []

    def band(spec):
        if spec not in bands:
            bands[spec] = instrument.channels[spec].band if spec in instrument.channels else load_band(spec)
        return bands[spec]

    def sed(spec):
        if spec in seds:
            return seds[spec]
        if ":" in spec or spec.lower() in ("flat", *REFERENCE_SPECTRA):
            seds[spec] = load_sed(spec)
        else:
            if not locus:
                locus.append(load_intrinsic_colours(colours))
            try:
                seds[spec] = blackbody(locus[0].teff_of(spec))
            except UnknownNameError as exc:
                raise UnknownNameError(f"{exc}; a spectrum is a spectral type of that table (a blackbody of its "
                                       "T_eff) or blackbody:T, powerlaw:ALPHA, flat, vega, sun or file:PATH") from None
        spectra[spec] = seds[spec].name
        return seds[spec]

    return band, sed, spectra


def read_targets(path, instrument, *, curve, mag_band=None, mag_system="AB", sed="flat", reddening=None,
                 colours="dwarfs", fmt=None):
    """Read a target list and resolve every row's band, system, spectrum and reddening.

    Parameters
    ----------
    path : path-like
        The target list (columns: module docstring).
    instrument : Instrument
        Its bands are the names a ``mag_band`` cell may use.
    curve : DustCurve
        Its R_V turns an E(B-V) into A_V.
    mag_band, mag_system, sed : str, optional
        Defaults for targets without a value of their own (``mag_band`` has
        none: a target without a band is an error).
    reddening : dict, optional
        Keywords of :class:`redcorr.correction.ReddeningSource` (``ebv``,
        ``av``, ``ebv_column``, ``av_column`` or ``dust_map``); positions and
        distances are filled in from the list's columns. None: a column of
        E(B-V) or A_V guessed from the usual names.
    colours : str
        The intrinsic-colour table of the spectral types (default ``"dwarfs"``).
    fmt : str, optional
        Catalog format (default: from the suffix).

    Returns
    -------
    TargetList

    Raises
    ------
    InputError
        A missing name, position or magnitude column, an unknown magnitude
        system, band or spectrum (a spectral type the table does not know),
        each naming the target. A target outside a partial map is flagged,
        not refused.
    """
    table = read_catalog(path, fmt=fmt)
    columns = list(table.columns)
    if not len(table):
        raise InputError(f"targets={str(path)!r} has no rows")
    lon_col, lat_col, frame = _positions(columns, path)
    name_col, mag_col = find_column(columns, NAME_NAMES), find_column(columns, MAG_NAMES)
    for what, col, names in (("name", name_col, NAME_NAMES), ("magnitude", mag_col, MAG_NAMES)):
        if col is None:
            raise InputError(f"targets={str(path)!r} has no {what} column ({' or '.join(names)}); "
                             f"the columns are {columns}")
    names = [text or f"row {i + 1}" for i, text in enumerate(_cells(table, name_col, ""))]
    flags = np.zeros(len(table), dtype=np.int64)
    mag = _numbers(table, mag_col, flags)
    flags[np.isnan(mag)] |= TARGET_FLAGS["no_magnitude"]

    band_of, sed_of, spectra = _resolver(instrument, colours)
    systems = {s.lower(): s for s in MAG_SYSTEMS}
    bands, seds, offsets = [], [], {}
    specs = _cells(table, find_column(columns, SED_NAMES), sed)
    rows = zip(_cells(table, find_column(columns, MAG_BAND_NAMES), mag_band),
               _cells(table, find_column(columns, SYSTEM_NAMES), mag_system), specs, strict=True)
    for i, (band_spec, system, spec) in enumerate(rows):
        if band_spec is None:
            raise InputError(f"{_name(names, i)} has no mag_band: add a mag_band column or give a default band "
                             "(--mag-band)")
        chosen = systems.get(str(system).lower())
        if chosen is None:
            raise InputError(f"{_name(names, i)}: mag_system={system!r} is not allowed; use "
                             f"{' or '.join(MAG_SYSTEMS)}")
        try:
            bands.append(band_of(band_spec))
            seds.append(sed_of(spec))
        except InputError as exc:
            raise type(exc)(f"{_name(names, i)}: {exc}") from None
        if chosen == "Vega":
            band = bands[-1]
            if id(band) not in offsets:
                offsets[id(band)] = ab_vega_offsets([band])[band.name]
            mag[i] += offsets[id(band)]

    source = dict(reddening or {})
    source.update(lon_column=lon_col, lat_column=lat_col, frame=frame)
    if source.get("dust_map") is not None:
        plx, dist = find_column(columns, PARALLAX_NAMES), find_column(columns, DISTANCE_NAMES)
        if plx is not None:
            source.update(parallax_column=plx, parallax_error_column=find_column(columns, [f"{plx}_error"]))
        elif dist is not None:
            source.update(distance_column=dist, distance_error_column=find_column(columns, [f"{dist}_error"]))
    a_v, red_flags = target_reddening(table, ReddeningSource(**source), curve.r_v)
    lon, lat = (_numbers(table, c, np.zeros(len(table), dtype=np.int64)) for c in (lon_col, lat_col))
    return TargetList(names=names, lon=lon, lat=lat, frame=frame, lon_col=lon_col, lat_col=lat_col, mag=mag,
                      mag_band=bands, sed=seds, sed_specs=specs, spectra=dict(spectra), a_v=a_v,
                      flags=flags | red_flags)


def write_target_plan(plan, targets, output, *, fmt=None, overwrite=False, inputs=(), meta=None):
    """Write a target plan, one row per target and band, and its summary beside it, atomically.

    Parameters
    ----------
    plan : redcorr.target_plan.TargetPlan
    targets : TargetList
        Gives the position columns written after the name.
    output : path-like
        Any catalog format (:class:`redcorr.io.catalogs.CatalogWriter`); the
        summary goes to ``OUTPUT.summary.json``. Both appear together or not at all.
    fmt : str, optional
    overwrite : bool
    inputs : iterable of path-like
        Files the output may not replace.
    meta : dict, optional
        Stored in the file's header (and in the summary as ``setup``).

    Returns
    -------
    dict
        The summary written.
    """
    rows = plan.rows()
    nb = len(plan.bands)
    frame = pd.DataFrame({
        "name": rows.pop("name"),
        targets.lon_col: np.repeat(targets.lon, nb),
        targets.lat_col: np.repeat(targets.lat, nb),
        **rows,
    })
    summary = {"setup": dict(meta or {}), **plan.summary()}
    computed = [c for c in frame.columns if c not in ("name", "band", "noise", "flags", "best_band")]
    with output_group() as group:
        with CatalogWriter(output, fmt=fmt, overwrite=overwrite, inputs=inputs, meta=meta, computed=computed,
                           group=group) as writer:
            writer.write(frame)
        write_summary(summary, output, overwrite=overwrite, group=group)
    return summary

"""Maps of dust emission or gas read as plain values, and reddening maps written in the same layout.

:mod:`redcorr.io.maps` reads maps of E(B-V) or A_V for lookups; this module
reads any map in those layouts (a HEALPix FITS table or a FITS image with a
celestial WCS) as plain values, and writes values back in the same layout:

HEALPix table
    The table's header is kept (``NSIDE``, ``ORDERING``, ``COORDSYS``,
    ``INDXSCHM``, ``FIRSTPIX``/``LASTPIX``, ...) with the primary header,
    and so is the pixel-index column of a partial map; the one value
    column becomes ``EBV`` or ``AV`` (float32, ``TUNIT = 'mag'``; blank
    pixels hold the HEALPix UNSEEN value), in the same number of values
    per row. Other columns are not carried over.
FITS image
    The image's header is kept (its WCS, and a degenerate third axis) at
    the same HDU; the data become float32 magnitudes, NaN where blank,
    ``BUNIT = 'mag'``.

Provenance is written in the header of the map's HDU, in keywords of our
own (:data:`PROVENANCE_KEYWORDS`) and a ``HISTORY`` line. The readers take
a FITS map to hold E(B-V); an A_V map is written with a map description
beside it (the same name, ``.toml``: ``unit = "A_V"`` and ``r_v`` when it is
known), placed together with the FITS file or not at all, and is opened
through that description.
"""

import unicodedata
from pathlib import Path
from typing import NamedTuple

import numpy as np

from redcorr._constants import MAP_UNITS
from redcorr._validate import check_choice
from redcorr.exceptions import InputError
from redcorr.io._atomic import atomic_path, check_output_path, output_group
from redcorr.io.maps import (
    _PIXEL_COLUMNS,
    _classify,
    _column_index,
    _fits,
    _open_fits,
    read_healpix_table,
    read_image_map,
)
from redcorr.maps import HEALPIX_UNSEEN

__all__ = [
    "MapValues",
    "FITS_SUFFIXES",
    "PROVENANCE_KEYWORDS",
    "read_map_values",
    "write_reddening_map",
    "check_map_output",
    "description_path",
]

FITS_SUFFIXES = (".fits", ".fit", ".fts")
"""File name endings of a written map."""

PROVENANCE_KEYWORDS = {
    "RCSOURCE": "file the map was converted from",
    "RCINQTY": "what the source holds (N_H, N(HI) cm-2 or tau)",
    "RCINWAVE": "[um] wavelength of the source's optical depth",
    "RCINSCAL": "factor applied to the source's values first",
    "RCRATIO": "source quantity per magnitude of RCQUANT",
    "RCRATUN": "unit of RCRATIO",
    "RCRATNM": "name of the conversion",
    "RCCITE": "where the conversion comes from",
    "RCQUANT": "what the map holds, mag",
    "RCRV": "R_V = A_V/E(B-V) used or implied",
    "RCNEGATV": "negative source values: mask or keep",
    "RCVERS": "redcorr version that wrote the map",
}
"""FITS keyword → meaning, of the provenance written with a converted map (RCINWAVE only for an optical
depth, RCRV only when an R_V is known)."""

_STRUCTURE = {
    "SIMPLE", "XTENSION", "BITPIX", "NAXIS", "EXTEND", "PCOUNT", "GCOUNT", "TFIELDS", "THEAP", "GROUPS",
    "BSCALE", "BZERO", "BLANK", "BUNIT", "DATAMIN", "DATAMAX", "CHECKSUM", "DATASUM",
}
_COLUMN_KEYS = ("TTYPE", "TFORM", "TUNIT", "TNULL", "TSCAL", "TZERO", "TDIM", "TDISP", "TDMIN", "TDMAX",
                "TLMIN", "TLMAX")


class MapValues(NamedTuple):
    """A map's values read from a file, with what is needed to write others in its layout.

    Attributes
    ----------
    path : pathlib.Path
    kind : {"healpix", "image"}
    values : ndarray
        float64 copy of the values; NaN where blank (NaN, the HEALPix
        UNSEEN value, an integer column's TNULL or image's BLANK). A HEALPix
        column keeps its shape (rows, or rows × values per row); an image
        its shape.
    index : int
        HDU of the map in the file.
    header : astropy.io.fits.Header
        The map HDU's header (a copy).
    primary : astropy.io.fits.Header
        The primary header (a copy).
    column : str or None
        HEALPix: the value column's name.
    pixels : tuple or None
        HEALPix partial map: (name, format, indices) of the pixel column.
    """

    path: Path
    kind: str
    values: np.ndarray
    index: int
    header: object
    primary: object
    column: str | None = None
    pixels: tuple | None = None


def _blank_to_nan(raw, blank):
    """float64 copy of ``raw`` with NaN where it equals ``blank`` (an integer null, or UNSEEN for floats)."""
    values = np.array(raw, dtype=float)
    if blank is not None:
        values[np.asarray(raw) == blank] = np.nan
        if np.issubdtype(np.asarray(raw).dtype, np.floating):
            values[values == float(np.float32(blank))] = np.nan
    return values


def read_map_values(path, *, column=None, hdu=None):
    """Read the values of a 2-d map (HEALPix table or WCS image) in any quantity.

    The file must be a map :func:`redcorr.io.open_map` can read (it is
    opened so first, which checks its header); a distance-resolved map or
    an image cube of several planes is refused.

    Parameters
    ----------
    path : path-like
    column : str or int, optional
        HEALPix: the value column (name or 0-based number); default the first
        that is not a pixel index.
    hdu : int or str, optional
        The HDU to read; default the first map in the file.

    Returns
    -------
    MapValues
    """
    path = Path(path)
    with _open_fits(path) as hdul:
        kind, index = _classify(hdul, path, hdu)
    if kind == "healpix":
        reader = read_healpix_table(path, column=column, hdu=hdu)
    else:
        if column is not None:
            raise InputError(f"column={column!r} is for a HEALPix table; map file {str(path)!r} is an image")
        reader = read_image_map([path], hdus=[hdu])
    if reader.distances_pc is not None:
        raise InputError(
            f"map file {str(path)!r} is distance-resolved ({reader.distances_pc.size} distances); "
            "a 2-d map of one value per pixel is needed"
        )
    with _open_fits(path) as hdul:
        table = hdul[index]
        header, primary = table.header.copy(), hdul[0].header.copy()
        if kind == "image":
            raw = table.data
            blank = header.get("BLANK") if np.issubdtype(raw.dtype, np.integer) else None
            return MapValues(path, kind, _blank_to_nan(raw, blank), index, header, primary)
        names = [n.upper() for n in table.columns.names]
        pixel_col = next((names.index(n) for n in _PIXEL_COLUMNS if n in names), None)
        col = (
            next(i for i in range(len(names)) if i != pixel_col)
            if column is None
            else _column_index(table, column, path)
        )
        raw = table.data.field(col)
        integer = np.issubdtype(raw.dtype, np.integer)
        values = _blank_to_nan(raw, header.get(f"TNULL{col + 1}") if integer else HEALPIX_UNSEEN)
        pixels = None
        if pixel_col is not None and col != pixel_col:
            info = table.columns[pixel_col]
            pixels = (info.name, info.format, np.array(table.data.field(pixel_col)))
        return MapValues(path, kind, values, index, header, primary, column=table.columns[col].name, pixels=pixels)


def description_path(path):
    """Where the map description of an A_V map written to ``path`` goes: the same name, ``.toml``."""
    return Path(path).with_suffix(".toml")


def _ascii(text):
    """``text`` in ASCII, as FITS headers need (accents dropped: Güver → Guver; µm → um)."""
    text = str(text).replace("µ", "u").replace("μ", "u")
    return unicodedata.normalize("NFKD", text).encode("ascii", "ignore").decode("ascii")


def _cleaned(header, *, table=False):
    """A copy of ``header`` without structural keys (nor a table's column keys), to carry into a new HDU."""
    out = header.copy()
    for key in list(out.keys()):
        stem = key.rstrip("0123456789")
        if key in _STRUCTURE or stem in ("NAXIS",) or (table and stem in _COLUMN_KEYS and stem != key):
            out.remove(key, ignore_missing=True, remove_all=True)
    return out


def _provenance(source, result, ratio, scale, negative):
    """(keyword, value, comment) cards of :data:`PROVENANCE_KEYWORDS` for a converted map."""
    from redcorr import __version__  # noqa: PLC0415

    quantity = ratio.quantity + (" cm-2" if ratio.quantity != "tau" else "")
    cards = [
        ("RCSOURCE", source.path.name),
        ("RCINQTY", quantity),
        ("RCINWAVE", ratio.wave_um),
        ("RCINSCAL", float(scale)),
        ("RCRATIO", float(result.divisor)),
        ("RCRATUN", f"{ratio.unit} of {result.unit}"),
        ("RCRATNM", ratio.name),
        ("RCCITE", ratio.citation),
        ("RCQUANT", result.unit),
        ("RCRV", result.r_v),
        ("RCNEGATV", negative),
        ("RCVERS", __version__),
    ]
    out = []
    for key, value in cards:
        if value is None:
            continue
        value = _ascii(value) if isinstance(value, str) else value
        comment = PROVENANCE_KEYWORDS[key]
        if isinstance(value, str) and 15 + len(value) + len(comment) > 80:  # a card is 80 characters
            comment = ""
        out.append((key, value, comment))
    return out


def _history(source, result, ratio, scale):
    what = ratio.label + (f" x {scale:g}" if scale != 1 else "")
    return _ascii(
        f"redcorr emission-map: {result.unit} = {what} of {source.path.name} / {result.divisor:.6g} "
        f"{ratio.unit} ({ratio.name}: {ratio.citation})"
    )


def _hdus(source, result, cards, history):
    """The HDUList of the converted map, in the source's layout."""
    fits = _fits()
    if source.kind == "image":
        data = result.values.astype(np.float32)
        header = _cleaned(source.header)
        if source.index == 0:
            hdus = [fits.PrimaryHDU(data, header=header)]
        else:
            hdus = [fits.PrimaryHDU(header=_cleaned(source.primary)), fits.ImageHDU(data, header=header)]
        target = hdus[-1].header
    else:
        values = np.where(np.isnan(result.values), HEALPIX_UNSEEN, result.values).astype(np.float32)
        per_row = int(np.prod(values.shape[1:]))
        columns = []
        if source.pixels is not None:
            name, fmt, pixels = source.pixels
            columns.append(fits.Column(name=name, format=fmt, array=pixels))
        columns.append(
            fits.Column(
                name="EBV" if result.unit == "E(B-V)" else "AV",
                format="E" if per_row == 1 and values.ndim == 1 else f"{per_row}E",
                unit="mag",
                array=values,
            )
        )
        table = fits.BinTableHDU.from_columns(columns)
        for card in _cleaned(source.header, table=True).cards:
            if card.keyword == "COMMENT":
                table.header.add_comment(card.value)
            elif card.keyword == "HISTORY":
                table.header.add_history(card.value)
            elif card.keyword and card.keyword not in table.header:
                table.header.append(card)
        hdus = [fits.PrimaryHDU(header=_cleaned(source.primary)), table]
        target = table.header
    target["BUNIT"] = ("mag", f"{result.unit}, magnitudes")
    for key, value, comment in cards:
        target[key] = (value, comment)
    target.add_history(history)
    return fits.HDUList(hdus)


def _description_text(name, unit, r_v, fits_name):
    """A map description (TOML) naming one FITS file; strings written as TOML basic strings."""
    import json  # noqa: PLC0415 - a JSON string is a valid TOML basic string

    from redcorr import __version__  # noqa: PLC0415

    lines = [
        f"# redcorr map description, written by redcorr {__version__} (emission-map) with {fits_name}",
        f"name = {json.dumps(name)}",
        f"unit = {json.dumps(unit)}",
    ]
    if r_v is not None:
        lines.append(f"r_v = {float(r_v)!r}")
    lines.append(f"files = [{json.dumps(fits_name)}]")
    return "\n".join(lines) + "\n"


def check_map_output(path, *, unit="E(B-V)", overwrite=False, source=None):
    """Check where a converted map will go, before any work is done.

    Parameters
    ----------
    path : path-like
        The FITS file: a name ending in one of :data:`FITS_SUFFIXES`, in a
        folder that exists, not the source, not existing unless ``overwrite``.
    unit : {"E(B-V)", "A_V"}
        An A_V map's description (:func:`description_path`) is checked too.
    overwrite : bool
    source : path-like, optional
        The map converted, which is never written over.

    Returns
    -------
    list of pathlib.Path
        The map's path, then its description's for an A_V map.
    """
    unit = check_choice("unit", unit, MAP_UNITS, listed_by=None)
    if not str(path).strip():
        raise InputError(f"output={str(path)!r} is empty; give a file name ending in .fits")
    path = Path(path)
    if path.suffix.lower() not in FITS_SUFFIXES:
        raise InputError(f"output={str(path)!r} is not a FITS file name; end it in {', '.join(FITS_SUFFIXES)}")
    if path.is_dir():
        raise InputError(f"output={str(path)!r} is a folder; give a file name")
    inputs = [] if source is None else [source]
    paths = [check_output_path(path, overwrite=overwrite, inputs=inputs)]
    if unit == "A_V":
        toml = description_path(path)
        paths.append(check_output_path(toml, overwrite=overwrite, inputs=inputs, name="output description"))
    return paths


def write_reddening_map(source, result, ratio, path, *, scale=1.0, negative="mask", name=None, overwrite=False):
    """Write converted values in the layout of the map they came from, with their provenance.

    Parameters
    ----------
    source : MapValues
        The map read (:func:`read_map_values`).
    result : redcorr.maps.emission.ConvertedValues
        Its values converted (:func:`redcorr.maps.emission.reddening_from_emission`).
    ratio : redcorr.maps.emission.EmissionRatio
        The ratio used, for the provenance.
    path : path-like
        The FITS file to write (``.fits``, ``.fit`` or ``.fts``). An A_V
        map also gets its description, :func:`description_path`.
    scale, negative
        As given to the conversion, for the provenance.
    name : str, optional
        The map's name in its description (default: the file's stem, the
        quantity, the source and the ratio).
    overwrite : bool
        Replace existing outputs.

    Returns
    -------
    list of pathlib.Path
        The files written: the map, then its description if any.
    """
    path, *toml = check_map_output(path, unit=result.unit, overwrite=overwrite, source=source.path)
    cards = _provenance(source, result, ratio, scale, negative)
    hdul = _hdus(source, result, cards, _history(source, result, ratio, scale))
    with output_group() as group:
        with atomic_path(path, overwrite=overwrite, group=group) as tmp:
            hdul.writeto(tmp, overwrite=True)
        if toml:
            label = name or f"{path.stem}: {result.unit} from {source.path.name} ({ratio.name})"
            text = _description_text(label, result.unit, result.r_v, path.name)
            with atomic_path(toml[0], overwrite=overwrite, group=group) as tmp:
                Path(tmp).write_text(text, encoding="utf-8")
    return [path, *toml]

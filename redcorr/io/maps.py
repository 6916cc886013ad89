"""Read dust maps from disk: HEALPix FITS tables, FITS images with a WCS (or cubes over distance), map descriptions.

Files are opened memory-mapped: a large map costs address space, not RAM,
and only the pixels looked up are read.

Formats
-------
HEALPix table
    A FITS binary table whose header (or the primary header) has ``NSIDE``
    (and usually ``PIXTYPE = 'HEALPIX'``), ``ORDERING`` (``RING`` or
    ``NESTED``) and ``COORDSYS`` (``G`` galactic, ``C`` equatorial/ICRS,
    ``E`` ecliptic, or an astropy frame name). Full sky: 12·NSIDE² values,
    one per row or in vector cells of many values per row. Partial sky: a
    ``PIXEL`` column of pixel indices (``INDXSCHM = 'EXPLICIT'``), or
    ``FIRSTPIX``/``LASTPIX`` for a contiguous run. Pixels holding NaN or
    the HEALPix UNSEEN value are blank.
FITS image
    A 2-d image HDU with a celestial WCS, any projection astropy.wcs
    supports. Several images compose one sky (tried in the order given).
    Images whose projection is zenithal and centred on a pole answer only
    for that pole's hemisphere when they are one of several (the usual
    hemisphere pair); a description file can say otherwise.
Distance-resolved (3D) maps
    Hold, per pixel, the **cumulative** E(B-V) (or A_V) from the Sun out to
    each of n distances d_1 < ... < d_n (pc).

    * HEALPix: the table above (same header keys, full or partial sky) whose
      value column is a vector column of n values per row (TFORM ``nE`` or
      ``nD``), one row per pixel (per ``PIXEL`` entry for a partial map),
      plus a second binary table HDU with ``EXTNAME = 'DISTANCES'`` holding
      one column ``DISTANCE`` (n rows, ``TUNIT = 'pc'``). A file with a
      ``DISTANCES`` HDU is distance-resolved; without it, vector cells of a
      full-sky map still mean consecutive pixels.
    * Image: a 3-axis FITS cube ``data[k, y, x]`` (NAXIS3 = n) whose first
      two WCS axes are celestial and whose third is distance, linear:
      d_k = CRVAL3 + CDELT3·(k + 1 − CRPIX3) with ``CUNIT3 = 'pc'`` (CD3_3
      or PC3_3 as the FITS WCS rules say; no cross terms with the celestial
      axes). When the spacing is not linear, the same ``DISTANCES`` table in
      the file gives the planes' distances (and wins over the third axis). A
      cube with NAXIS3 > 1 and neither is refused; NAXIS3 = 1 without a
      length unit is a plain 2-d image.
    * Distances must be numeric, finite, > 0 and strictly increasing; the
      unit must be a length (pc, or kpc etc., converted to pc on reading; a
      DISTANCE column without TUNIT is refused). Between distances, and
      from 0 at distance 0 to d_1, lookups interpolate linearly (see
      :mod:`redcorr.maps`). All images of one map share the same distances.
Map description (TOML, ``.toml``)
    Names a map once. Keys (all optional except ``files``)::

        name = "my map"              # a label
        unit = "E(B-V)"              # or "A_V"
        scale = 1.0                  # factor applied to every value
        interpolation = "bilinear"   # or "nearest"
        r_v = 3.1                    # converts an A_V map to E(B-V)
        column = "EBV"               # HEALPix table column (name or 0-based number)
        files = ["north.fits", "south.fits"]   # paths relative to the TOML file
        # or, per file:
        # [[files]]
        # path = "north.fits"
        # hemisphere = "north"       # "north", "south" or "all" (images)
        # hdu = 1                    # which HDU (default: the first that is a map)

    The same keys describe 2D and distance-resolved maps (the files say
    which); the images of one description must all be 2D or all cubes over
    the same distances.
"""

from pathlib import Path

import numpy as np

from redcorr._validate import check_choice
from redcorr.exceptions import InputError
from redcorr.io._files import input_file
from redcorr.io._toml import load_toml
from redcorr.maps import HEALPIX_UNSEEN, HealpixReddeningMap, ImageReddeningMap, ImageTile, check_distances

__all__ = ["open_map", "read_healpix_table", "read_image_map", "read_map_description", "DESCRIPTION_KEYS"]

DESCRIPTION_KEYS = ("name", "unit", "scale", "interpolation", "r_v", "column", "files")
"""Top-level keys a map description may have."""

_FILE_KEYS = ("path", "hemisphere", "hdu")
_HEMISPHERES = {"north": (0.0, 90.0), "south": (-90.0, 0.0), "all": None}
_COORDSYS = {
    "g": "galactic",
    "galactic": "galactic",
    "c": "icrs",
    "q": "icrs",
    "celestial": "icrs",
    "equatorial": "icrs",
    "e": "barycentricmeanecliptic",
    "ecliptic": "barycentricmeanecliptic",
}
_PIXEL_COLUMNS = ("PIXEL", "PIXEL_INDEX", "IPIX", "HPX_INDEX")
_ZENITHAL = ("AZP", "SZP", "TAN", "STG", "SIN", "ARC", "ZPN", "ZEA", "AIR")
_DISTANCES_HDU = "DISTANCES"
_DISTANCE_COLUMN = "DISTANCE"


def _fits():
    from astropy.io import fits  # noqa: PLC0415 - only when a file is read

    return fits


def _open_fits(path):
    path = input_file(path, "map file")
    try:
        hdul = _fits().open(path, memmap=True, mode="readonly")
        len(hdul)  # reads every header, so a broken file fails here
    except (OSError, ValueError, TypeError) as exc:
        raise InputError(f"map file {str(path)!r} is not a readable FITS file: {exc}") from None
    return hdul


def _header_value(key, *headers):
    for header in headers:
        if header is not None and key in header:
            return header[key]
    return None


def _is_healpix(hdu, primary):
    fits = _fits()
    if not isinstance(hdu, (fits.BinTableHDU, fits.TableHDU)) or hdu.name.upper() == _DISTANCES_HDU:
        return False
    pixtype = str(_header_value("PIXTYPE", hdu.header, primary) or "").strip().upper()
    return pixtype == "HEALPIX" or _header_value("NSIDE", hdu.header, primary) is not None


def _classify(hdul, path, hdu=None):
    """(kind, index) of the HDU to read: ("healpix"|"image", i)."""
    fits = _fits()
    primary = hdul[0].header
    if hdu is not None:
        try:
            candidates = [(hdul.index_of(hdu), hdul[hdu])]
        except (IndexError, KeyError):
            raise InputError(f"hdu={hdu!r}: map file {str(path)!r} has {len(hdul)} HDUs (0-{len(hdul) - 1})") from None
    else:
        candidates = list(enumerate(hdul))
    images_without_sky = []
    for i, h in candidates:
        if _is_healpix(h, primary):
            return "healpix", i
        if isinstance(h, (fits.PrimaryHDU, fits.ImageHDU)) and h.header.get("NAXIS", 0) >= 2:
            if _wcs(h.header).has_celestial:
                return "image", i
            images_without_sky.append(i)
    if images_without_sky:
        raise InputError(
            f"map file {str(path)!r}: image HDU {images_without_sky[0]} has no celestial WCS axes "
            "(CTYPE like RA---ZEA/DEC--ZEA or GLON-CAR/GLAT-CAR is needed)"
        )
    raise InputError(
        f"map file {str(path)!r} is not a map: no HEALPix table (PIXTYPE='HEALPIX' or NSIDE) and "
        "no image with a celestial WCS"
    )


def _kind(path, hdu=None):
    """"healpix" or "image": what the map file holds."""
    with _open_fits(path) as hdul:
        return _classify(hdul, path, hdu)[0]


def _wcs(header):
    import warnings  # noqa: PLC0415

    from astropy.wcs import WCS, FITSFixedWarning  # noqa: PLC0415

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FITSFixedWarning)
        try:
            return WCS(header)
        except Exception as exc:  # astropy.wcs raises several types for bad headers
            raise InputError(f"the image's WCS could not be read: {exc}") from None


def _column_index(table, column, path):
    names = list(table.columns.names)
    if isinstance(column, (int, np.integer)) or (isinstance(column, str) and column.strip().isdigit()):
        i = int(column)
        if not 0 <= i < len(names):
            raise InputError(f"column={column!r}: {str(path)!r} has columns 0-{len(names) - 1} ({names})")
        return i
    upper = [n.upper() for n in names]
    key = str(column).strip().upper()
    if key not in upper:
        raise InputError(f"column={column!r} is not in {str(path)!r}; columns are {names}")
    return upper.index(key)


def _length_to_pc(unit_text, what, path):
    """Factor from the length unit ``unit_text`` (FITS spelling) to pc, or InputError naming ``what``."""
    from astropy import units as u  # noqa: PLC0415

    try:
        unit = u.Unit(str(unit_text).strip(), format="fits")
        return float(unit.to(u.pc))
    except (ValueError, TypeError, u.UnitsError):
        raise InputError(
            f"map file {str(path)!r}: {what}={str(unit_text).strip()!r} is not a length; distances in 'pc' "
            "(or another length unit such as 'kpc') are needed"
        ) from None


def _distances_table(hdul, path):
    """Distances (pc) from the file's DISTANCES table, or None when it has none."""
    fits = _fits()
    if _DISTANCES_HDU not in hdul:
        return None
    hdu = hdul[_DISTANCES_HDU]
    where = f"map file {str(path)!r}: the {_DISTANCES_HDU} HDU"
    if not isinstance(hdu, (fits.BinTableHDU, fits.TableHDU)):
        raise InputError(f"{where} is not a table; a binary table with one column {_DISTANCE_COLUMN!r} is needed")
    names = [n.upper() for n in hdu.columns.names]
    if _DISTANCE_COLUMN not in names:
        raise InputError(f"{where} has columns {hdu.columns.names}; a column {_DISTANCE_COLUMN!r} is needed")
    i = names.index(_DISTANCE_COLUMN)
    values = np.asarray(hdu.data.field(i)) if hdu.data is not None else np.zeros(0)
    if not np.issubdtype(values.dtype, np.number) or values.dtype.kind == "c":
        raise InputError(
            f"{where}: column {_DISTANCE_COLUMN!r} is not numeric ({values.dtype}); distances in pc are needed"
        )
    if values.ndim != 1:
        raise InputError(f"{where}: column {_DISTANCE_COLUMN!r} holds {values.shape[1:]} values per row; one is needed")
    unit = hdu.columns[i].unit
    if not unit:
        raise InputError(f"{where}: column {_DISTANCE_COLUMN!r} has no unit (TUNIT{i + 1}); 'pc' is needed")
    factor = _length_to_pc(unit, f"TUNIT{i + 1}", path)
    try:
        return check_distances(values.astype(float) * factor, name=_DISTANCE_COLUMN)
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None


def _distance_axis(header, wcs, n_planes, path):
    """Distances (pc) of a cube's planes from its third WCS axis, or None for a 2-d image.

    Pixel k (from 0) of axis 3 is at the world coordinate astropy.wcs gives
    (CRVAL3 + CDELT3·(k + 1 − CRPIX3) for the usual linear keys; CD3_3 or
    PC3_3 as the FITS WCS rules say, Greisen & Calabretta 2002, A&A 395, 1061).

    A single plane without a length unit on axis 3 is a 2-d image (e.g. a
    degenerate frequency axis); a cube of several planes needs a distance axis.
    """
    unit_text = str(header.get("CUNIT3", "")).strip()
    if not unit_text:
        if n_planes == 1:
            return None
        raise InputError(
            f"map file {str(path)!r}: the image is a cube of {n_planes} planes without a distance axis "
            f"(CUNIT3 is missing and there is no {_DISTANCES_HDU} table); CUNIT3 = 'pc' with CRVAL3/CDELT3/CRPIX3, "
            f"or a {_DISTANCES_HDU} table, is needed"
        )
    try:  # the unit of the numbers astropy.wcs computes (as the header spells it, or as wcslib fixed it)
        factor = _length_to_pc(str(wcs.wcs.cunit[2]) or unit_text, "CUNIT3", path)
    except InputError:
        if n_planes == 1:
            return None
        raise
    cel = wcs.wcs
    matrix = cel.get_pc()
    if np.any(matrix[2, :2] != 0) or np.any(matrix[:2, 2] != 0):
        raise InputError(
            f"map file {str(path)!r}: the distance axis (axis 3) mixes with the celestial axes (PC/CD cross "
            "terms); a separate linear third axis is needed"
        )
    planes = wcs.sub([3]).wcs_pix2world(np.arange(n_planes, dtype=float), 0)[0]
    try:
        return check_distances(planes * factor, name="the distance axis (CRVAL3 + CDELT3·(k + 1 − CRPIX3))")
    except InputError as exc:
        raise InputError(f"map file {str(path)!r}: {exc}") from None


def read_healpix_table(path, column=None, hdu=None, **kwargs):
    """Read a HEALPix map from a FITS binary table (memory-mapped).

    Parameters
    ----------
    path : path-like
    column : str or int, optional
        Column holding the values (name, case-insensitive, or 0-based
        number). Default: the first column that is not a pixel index.
    hdu : int or str, optional
        HDU to read; default the first HEALPix table.
    **kwargs
        ``unit``, ``scale``, ``interpolation``, ``r_v``, ``name`` for
        `~redcorr.maps.HealpixReddeningMap`.

    Returns
    -------
    HealpixReddeningMap
    """
    with _open_fits(path) as hdul:
        return _healpix_from_hdul(hdul, path, column, hdu, kwargs)


def _healpix_from_hdul(hdul, path, column, hdu, kwargs):
    kind, index = _classify(hdul, path, hdu)
    if kind != "healpix":
        raise InputError(f"map file {str(path)!r} has no HEALPix table (PIXTYPE='HEALPIX' or NSIDE)")
    table_hdu = hdul[index]
    header, primary = table_hdu.header, hdul[0].header
    nside = _header_value("NSIDE", header, primary)
    if nside is None:
        raise InputError(f"map file {str(path)!r}: HEALPix table without NSIDE in its header")
    ordering = str(_header_value("ORDERING", header, primary) or "").strip().upper()
    if ordering not in ("RING", "NESTED", "NEST"):
        raise InputError(f"map file {str(path)!r}: ORDERING={ordering!r}; RING or NESTED is needed")
    coordsys = str(_header_value("COORDSYS", header, primary) or "").strip()
    if not coordsys:
        raise InputError(
            f"map file {str(path)!r}: COORDSYS is missing; G (galactic), C (ICRS) or E (ecliptic) is needed"
        )
    frame = _COORDSYS.get(coordsys.lower(), coordsys)
    data = table_hdu.data
    names = [n.upper() for n in table_hdu.columns.names]
    scheme = str(_header_value("INDXSCHM", header, primary) or "IMPLICIT").strip().upper()
    pixel_col = next((names.index(n) for n in _PIXEL_COLUMNS if n in names), None)
    if scheme == "EXPLICIT" and pixel_col is None:
        raise InputError(
            f"map file {str(path)!r}: INDXSCHM='EXPLICIT' but no pixel index column ({', '.join(_PIXEL_COLUMNS)})"
        )
    if column is None:
        col = next((i for i in range(len(names)) if i != pixel_col), None)
        if col is None:
            raise InputError(f"map file {str(path)!r} has no value column besides the pixel indices")
    else:
        col = _column_index(table_hdu, column, path)
    if data is None or len(data) == 0:
        raise InputError(f"map file {str(path)!r}: the HEALPix table has no rows")
    values = np.asarray(data.field(col))
    if not np.issubdtype(values.dtype, np.number):
        raise InputError(f"map file {str(path)!r}: column {names[col]!r} is not numeric")
    distances = _distances_table(hdul, path)
    if distances is None:
        values = values.reshape(-1)
    else:
        per_row = int(np.prod(values.shape[1:]))
        if per_row != distances.size:
            raise InputError(
                f"map file {str(path)!r}: the {_DISTANCES_HDU} table has {distances.size} distances but column "
                f"{names[col]!r} holds {per_row} values per row; one value per distance is needed"
            )
        values = values.reshape(len(values), per_row)
    pixels = None
    if pixel_col is not None and col != pixel_col:
        pixels = np.asarray(data.field(pixel_col)).reshape(-1)
    elif len(values) != 12 * int(nside) ** 2 and "FIRSTPIX" in header and "LASTPIX" in header:
        first, last = int(header["FIRSTPIX"]), int(header["LASTPIX"])
        if last - first + 1 == len(values):
            pixels = np.arange(first, last + 1, dtype=np.int64)
    kwargs.setdefault("name", Path(path).name)
    kwargs.setdefault("sources", (str(path),))
    blank = header.get(f"TNULL{col + 1}") if np.issubdtype(values.dtype, np.integer) else HEALPIX_UNSEEN
    try:
        return HealpixReddeningMap(
            values,
            nside,
            order=ordering,
            frame=frame,
            pixels=pixels,
            blank_value=blank,
            distances_pc=distances,
            **kwargs,
        )
    except InputError as exc:
        raise InputError(f"map file {str(path)!r}: {exc}") from None


def _pole_hemisphere(wcs):
    """(lo, hi) latitude range for a zenithal image centred on a pole, else None."""
    cel = wcs.celestial
    projection = cel.wcs.ctype[0][5:8]
    lat_ref = cel.wcs.crval[cel.wcs.lat]
    if projection in _ZENITHAL and abs(abs(lat_ref) - 90.0) < 1e-9:
        return _HEMISPHERES["north"] if lat_ref > 0 else _HEMISPHERES["south"]
    return None


def read_image_map(paths, hemispheres=None, hdus=None, **kwargs):
    """Read one or several FITS images with celestial WCS into one map (memory-mapped).

    Parameters
    ----------
    paths : path-like or sequence of path-like
        Images tried in this order for each position.
    hemispheres : sequence of {"north", "south", "all", None}, optional
        Per image: the latitude half (in the image's frame) it answers for.
        ``None`` (default) means "all", except for a pole-centred zenithal
        image among several, which answers for its pole's hemisphere.
    hdus : sequence of int or None, optional
        Per image: HDU to read (default: the first image with a celestial WCS).
    **kwargs
        ``unit``, ``scale``, ``interpolation``, ``r_v``, ``name`` for
        `~redcorr.maps.ImageReddeningMap`.

    Returns
    -------
    ImageReddeningMap
    """
    paths = [paths] if isinstance(paths, (str, Path)) else list(paths)
    hemispheres = list(hemispheres) if hemispheres is not None else [None] * len(paths)
    hdus = list(hdus) if hdus is not None else [None] * len(paths)
    tiles = []
    for path, hemisphere, hdu in zip(paths, hemispheres, hdus, strict=True):
        with _open_fits(path) as hdul:
            kind, index = _classify(hdul, path, hdu)
            if kind != "image":
                raise InputError(f"map file {str(path)!r} is a HEALPix table; it cannot be one of several images")
            image = hdul[index]
            wcs = _wcs(image.header)
            data = image.data
            while data.ndim > 3 and data.shape[0] == 1:
                data = data[0]
            distances = _distances_table(hdul, path)
            if distances is None and data.ndim == 3:
                distances = _distance_axis(image.header, wcs, data.shape[0], path)
        if distances is not None:
            data = data.reshape((-1, *data.shape[-2:]))
            if sorted((wcs.wcs.lng, wcs.wcs.lat)) != [0, 1]:
                raise InputError(
                    f"map file {str(path)!r}: the celestial axes are WCS axes {wcs.wcs.lng + 1} and "
                    f"{wcs.wcs.lat + 1}; a cube over distance needs them first (axes 1 and 2), distance third"
                )
        if hemisphere is None:
            lat_range = _pole_hemisphere(wcs) if len(paths) > 1 else None
        else:
            lat_range = _HEMISPHERES[check_choice("hemisphere", hemisphere, tuple(_HEMISPHERES))]
        blank = image.header.get("BLANK") if np.issubdtype(data.dtype, np.integer) else None
        try:
            tiles.append(
                ImageTile(
                    data, wcs, lat_range=lat_range, blank_value=blank, name=Path(path).name, distances_pc=distances
                )
            )
        except InputError as exc:
            raise InputError(f"map file {str(path)!r}: {exc}") from None
    kwargs.setdefault("name", " + ".join(Path(p).name for p in paths))
    kwargs.setdefault("sources", tuple(str(p) for p in paths))
    return ImageReddeningMap(tiles, **kwargs)


def read_map_description(path, **overrides):
    """Read a TOML map description (see the module documentation) and open its map.

    Parameters
    ----------
    path : path-like
    **overrides
        ``unit``, ``scale``, ``interpolation``, ``r_v``, ``column`` given
        here win over the file's (``None`` values are ignored).
    """
    path = Path(path)
    desc = load_toml(path, what="map description")
    unknown = sorted(set(desc) - set(DESCRIPTION_KEYS))
    if unknown:
        raise InputError(
            f"map description {str(path)!r}: unknown key {unknown[0]!r}; allowed keys are {', '.join(DESCRIPTION_KEYS)}"
        )
    files = desc.get("files")
    if not files or not isinstance(files, list):
        raise InputError(f"map description {str(path)!r}: 'files' must list one or more map files")
    entries = []
    for item in files:
        entry = {"path": item} if isinstance(item, str) else item
        if not isinstance(entry, dict) or "path" not in entry:
            raise InputError(f"map description {str(path)!r}: each of 'files' needs a path, got {item!r}")
        bad = sorted(set(entry) - set(_FILE_KEYS))
        if bad:
            raise InputError(
                f"map description {str(path)!r}: unknown file key {bad[0]!r}; allowed are {', '.join(_FILE_KEYS)}"
            )
        entries.append(dict(entry, path=path.parent / str(entry["path"])))
    options = {k: desc[k] for k in ("unit", "scale", "interpolation", "r_v") if k in desc}
    options["name"] = desc.get("name", path.stem)
    column = desc.get("column")
    for key, value in overrides.items():
        if value is not None:
            if key == "column":
                column = value
            else:
                options[key] = value
    options["sources"] = (str(path),) + tuple(str(e["path"]) for e in entries)
    kind = _kind(entries[0]["path"], entries[0].get("hdu"))
    if kind == "healpix":
        if len(entries) > 1:
            raise InputError(f"map description {str(path)!r}: a HEALPix map is one file; {len(entries)} are listed")
        return read_healpix_table(entries[0]["path"], column=column, hdu=entries[0].get("hdu"), **options)
    return read_image_map(
        [e["path"] for e in entries],
        hemispheres=[e.get("hemisphere") for e in entries],
        hdus=[e.get("hdu") for e in entries],
        **options,
    )


def open_map(spec, *, unit=None, scale=None, interpolation=None, r_v=None, column=None):
    """Open a dust map: a HEALPix FITS table, FITS image(s) with WCS, or a TOML description.

    Parameters
    ----------
    spec : path-like or sequence of path-like
        One FITS file, several FITS images composing one sky, or a ``.toml``
        map description.
    unit, scale, interpolation, r_v, column : optional
        Override the description's settings (or the defaults: E(B-V),
        1.0, bilinear, no R_V, first value column).

    Returns
    -------
    ReddeningMap
        `~redcorr.maps.HealpixReddeningMap` or `~redcorr.maps.ImageReddeningMap`.
    """
    specs = [spec] if isinstance(spec, (str, Path)) else list(spec)
    if not specs:
        raise InputError("map is empty; give a FITS file or a .toml map description")
    options = {
        k: v for k, v in dict(unit=unit, scale=scale, interpolation=interpolation, r_v=r_v).items() if v is not None
    }
    if len(specs) == 1 and Path(specs[0]).suffix.lower() == ".toml":
        return read_map_description(specs[0], column=column, **options)
    if any(Path(s).suffix.lower() == ".toml" for s in specs):
        raise InputError(f"map={[str(s) for s in specs]}: a .toml description must be given alone")
    if len(specs) == 1 and _kind(specs[0]) == "healpix":
        return read_healpix_table(specs[0], column=column, **options)
    return read_image_map(specs, **options)

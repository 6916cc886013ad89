"""Reddening looked up in dust maps held as arrays: HEALPix pixels or WCS images.

This module does no file I/O: :mod:`redcorr.io.maps` reads FITS files and
map descriptions into the classes below, which take plain (possibly
memory-mapped) arrays and header-derived parameters.

Conventions
-----------
* Positions are longitude/latitude in degrees (or angle Quantities) in any
  astropy celestial frame (``"icrs"``, ``"fk5"``, ``"galactic"``, a frame
  instance, ...). They are carried into the map's own frame with
  :mod:`astropy.coordinates`; HEALPix pixel indices and bilinear weights come
  from :mod:`astropy_healpix`; image pixel coordinates from :mod:`astropy.wcs`.
* A map holds E(B-V) or A_V (``ReddeningMap.unit``), in magnitudes; every value
  read is multiplied by ``ReddeningMap.scale``.
* ``lookup`` returns ``(values, flags)``. ``values`` is NaN exactly where
  ``flags`` has one of the bits `FLAG_OUTSIDE`, `FLAG_BLANK` or
  `FLAG_NO_POSITION` set:

  ====  ==================  ====================================================
  bit   name                meaning
  ====  ==================  ====================================================
  1     FLAG_OUTSIDE        no pixel of the map covers the position (partial
                            HEALPix map, outside every image)
  2     FLAG_BLANK          the position's pixel exists but is blank (NaN, the
                            HEALPix UNSEEN value or the image's BLANK value)
  4     FLAG_PARTIAL        bilinear only: some of the four interpolation
                            neighbours are missing or blank; the value uses the
                            others, with their weights renormalised
  8     FLAG_NO_POSITION    the input position is NaN or infinite
  ====  ==================  ====================================================

* "The position's pixel" is, for nearest-pixel lookup, the pixel containing
  the position; for bilinear lookup, the interpolation neighbour with the
  largest weight (for images exactly the containing pixel, for HEALPix the
  pixel whose centre is nearest in the interpolation's sense).
* Accuracy (measured by the tests on smooth synthetic maps): nearest-pixel
  errors scale with the pixel size h, bilinear errors with h²; on HEALPix
  within ~10° of the poles the four-neighbour scheme is first order only.
  Images are interpolated in pixel coordinates; an unrotated cylindrical
  image spanning 360° of longitude (plate carrée all-sky) wraps across its
  seam, other images flag their last half pixel `FLAG_PARTIAL`.
"""

import abc
import concurrent.futures
import os

import numpy as np
from astropy import units as u
from astropy.coordinates import BaseCoordinateFrame, UnitSphericalRepresentation, frame_transform_graph

from redcorr._constants import INTERPOLATIONS, MAP_FLAG_NAMES, MAP_UNITS
from redcorr._validate import as_float_array, check_choice, check_finite, check_positive
from redcorr.exceptions import InputError

__all__ = [
    "ReddeningMap",
    "HealpixReddeningMap",
    "ImageReddeningMap",
    "ImageTile",
    "FLAG_OUTSIDE",
    "FLAG_BLANK",
    "FLAG_PARTIAL",
    "FLAG_NO_POSITION",
    "FLAG_NAMES",
    "HEALPIX_UNSEEN",
    "INTERPOLATIONS",
    "MAP_UNITS",
    "describe_flags",
    "parse_frame",
    "transform_lonlat",
]

FLAG_OUTSIDE = np.uint8(1)
FLAG_BLANK = np.uint8(2)
FLAG_PARTIAL = np.uint8(4)
FLAG_NO_POSITION = np.uint8(8)
FLAG_NAMES = MAP_FLAG_NAMES
"""Flag bit → short name, for printing."""

_NO_VALUE = FLAG_OUTSIDE | FLAG_BLANK | FLAG_NO_POSITION

HEALPIX_UNSEEN = -1.6375e30
"""Value HEALPix software writes for pixels without data (Górski et al. 2005, the HEALPix
software conventions; from memory)."""

_CHUNK = 1 << 20
"""Positions processed per step, to keep temporary arrays of bounded size."""

_MAX_THREADS = 4
"""Chunks of a HEALPix lookup sampled at once, at most (and no more than the usable CPUs)."""


def _usable_cpus():
    """CPUs this process may run on (its affinity where the system tells it)."""
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # not Linux
        return os.cpu_count() or 1


def describe_flags(flag):
    """Names of the bits set in one flag value, e.g. ``"outside"``; ``"ok"`` for 0."""
    flag = int(flag)
    names = [name for bit, name in FLAG_NAMES.items() if flag & bit]
    return "+".join(names) if names else "ok"


def parse_frame(frame, name="frame"):
    """An astropy frame instance from a name (``"icrs"``, ``"galactic"``, ...) or a frame.

    Parameters
    ----------
    frame : str, `~astropy.coordinates.BaseCoordinateFrame` instance or subclass
        Any name known to :data:`astropy.coordinates.frame_transform_graph`.
    name : str
        Argument name for error messages.
    """
    if isinstance(frame, BaseCoordinateFrame):
        return frame
    if isinstance(frame, type) and issubclass(frame, BaseCoordinateFrame):
        return frame()
    cls = frame_transform_graph.lookup_name(str(frame).strip().lower())
    if cls is None:
        check_choice(name, frame, sorted(frame_transform_graph.get_names()))
    return cls()


def transform_lonlat(lon_deg, lat_deg, from_frame, to_frame):
    """Carry longitude/latitude (degrees) from one astropy frame to another.

    The directions are transformed by :mod:`astropy.coordinates`; nothing is
    done when the two frames are equivalent.

    Returns
    -------
    lon_deg, lat_deg : ndarray
        In ``to_frame``, longitude in [0, 360).
    """
    if from_frame.is_equivalent_frame(to_frame):
        return lon_deg, lat_deg
    rep = UnitSphericalRepresentation(
        u.Quantity(lon_deg, u.deg, copy=False), u.Quantity(lat_deg, u.deg, copy=False)
    )
    out = from_frame.realize_frame(rep).transform_to(to_frame)
    sph = out.represent_as(UnitSphericalRepresentation)
    return sph.lon.to_value(u.deg), sph.lat.to_value(u.deg)


def _angle_array(value, name):
    """Degrees as a float64 array from numbers or an angle Quantity."""
    return as_float_array(name, value, u.deg, "an angle (plain numbers are degrees)")


def _blank_mask(values, blank_value):
    """True where ``values`` is NaN/inf or equals ``blank_value`` (as float64 or rounded to float32)."""
    bad = ~np.isfinite(values)
    if blank_value is not None:
        bad |= values == blank_value
        as_float32 = float(np.float32(blank_value))
        if as_float32 != blank_value:  # a float32 file stores the rounded value
            bad |= values == as_float32
    return bad


def _combine(values, good, weights):
    """Weighted mean over axis 0 of the good neighbours.

    ``values``, ``good`` and ``weights`` have shape (k, n): k interpolation
    neighbours for n positions. ``good`` is False for a neighbour that is
    missing or blank; a position without any good neighbour gives NaN.
    """
    w = np.where(good, weights, 0.0)
    total = w.sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return (np.where(good, values, 0.0) * w).sum(axis=0) / total


class ReddeningMap(abc.ABC):
    """A reddening map: values on the sky in magnitudes of E(B-V) or A_V.

    Subclasses implement ``_sample(lon_deg, lat_deg, frame, method)`` for
    finite positions given in ``frame``; this class validates input, works
    in chunks of bounded size and applies the scale factor. A subclass whose
    ``_sample`` may run in several threads at once sets ``_threaded = True``;
    large lookups then sample a few chunks in parallel.

    Parameters
    ----------
    unit : {"E(B-V)", "A_V"}
        What the map's values are.
    scale : float
        Factor applied to every value read (e.g. a recalibration).
    interpolation : {"bilinear", "nearest"}
        Default method of :meth:`lookup`.
    r_v : float, optional
        R_V = A_V / E(B-V) to convert an A_V map to E(B-V) in :meth:`reddening_at`.
    name : str
        A label for printing; ``sources`` lists the files it came from.
    """

    kind = "map"
    _threaded = False

    def __init__(self, *, unit="E(B-V)", scale=1.0, interpolation="bilinear", r_v=None, name="", sources=()):
        self.unit = check_choice("unit", unit, MAP_UNITS)
        self.scale = check_positive("scale", scale)
        self.interpolation = check_choice("interpolation", interpolation, INTERPOLATIONS)
        self.r_v = None if r_v is None else check_positive("r_v", r_v)
        self.name = str(name)
        self.sources = tuple(str(s) for s in sources)

    def lookup(self, lon_deg, lat_deg, frame="icrs", interpolation=None):
        """Map values at positions, with flags.

        Parameters
        ----------
        lon_deg, lat_deg : float, array_like or `~astropy.units.Quantity` ['angle']
            Longitude and latitude (degrees when plain numbers) in ``frame``;
            they broadcast against each other. |lat| must not exceed 90°;
            NaN positions give NaN with `FLAG_NO_POSITION`.
        frame : str or astropy frame
            Frame of the positions, e.g. ``"icrs"`` (RA, Dec) or
            ``"galactic"`` (l, b).
        interpolation : {"bilinear", "nearest"}, optional
            Defaults to the map's own setting.

        Returns
        -------
        values : ndarray or float
            E(B-V) or A_V (see ``unit``) in magnitudes, times ``scale``; NaN
            where the map has no data.
        flags : ndarray of uint8 or numpy.uint8
            Bit set, see the module documentation; 0 means a full-quality value.

        Notes
        -----
        Bilinear interpolation on HEALPix uses the four neighbours and
        weights of :func:`astropy_healpix.bilinear_interpolation_weights`;
        on images, ``v = Σ w_ij v_ij`` with ``w = (1 − |Δx|)(1 − |Δy|)`` over
        the four pixels around the position's pixel coordinates (x, y).
        Neighbours without data are dropped and the remaining weights
        renormalised (flag `FLAG_PARTIAL`).

        References
        ----------
        .. [1] Górski, K. M. et al. 2005, ApJ 622, 759 (HEALPix).
        .. [2] Calabretta, M. R. & Greisen, E. W. 2002, A&A 395, 1077 (celestial WCS).
        """
        lon = _angle_array(lon_deg, "lon_deg")
        lat = _angle_array(lat_deg, "lat_deg")
        try:
            lon, lat = np.broadcast_arrays(lon, lat)
        except ValueError:
            raise InputError(f"lon_deg shape {lon.shape} and lat_deg shape {lat.shape} do not broadcast") from None
        method = check_choice("interpolation", interpolation or self.interpolation, INTERPOLATIONS)
        in_frame = parse_frame(frame)
        shape = lon.shape
        lon, lat = lon.ravel(), lat.ravel()
        finite = np.isfinite(lon) & np.isfinite(lat)
        beyond = finite & (np.abs(lat) > 90.0)
        if np.any(beyond):
            first = float(lat[beyond][0])
            raise InputError(f"lat_deg={first!r} is outside the allowed range [-90, 90] (latitude in {frame!s})")
        values = np.full(lon.size, np.nan)
        flags = np.zeros(lon.size, dtype=np.uint8)
        flags[~finite] = FLAG_NO_POSITION
        all_finite = bool(finite.all())

        def sample_chunk(start):  # writes a disjoint part of values and flags
            part = slice(start, start + _CHUNK)
            if all_finite:
                values[part], flags[part] = self._sample(lon[part], lat[part], in_frame, method)
            else:
                where = np.nonzero(finite[part])[0] + start
                if where.size:
                    values[where], flags[where] = self._sample(lon[where], lat[where], in_frame, method)

        starts = range(0, lon.size, _CHUNK)
        threads = min(len(starts), _MAX_THREADS, _usable_cpus()) if self._threaded else 1
        if threads > 1:  # the pixel maths runs outside the GIL
            with concurrent.futures.ThreadPoolExecutor(threads, thread_name_prefix="redcorr-map") as pool:
                for _ in pool.map(sample_chunk, starts):
                    pass
        else:
            for start in starts:
                sample_chunk(start)
        if self.scale != 1.0:
            values *= self.scale
        return values.reshape(shape)[()], flags.reshape(shape)[()]

    def lookup_coord(self, coord, interpolation=None):
        """:meth:`lookup` at a `~astropy.coordinates.SkyCoord` (or frame with data), any frame."""
        sph = coord.represent_as(UnitSphericalRepresentation)
        frame = coord.frame if hasattr(coord, "frame") else coord
        return self.lookup(sph.lon, sph.lat, frame=frame.replicate_without_data(), interpolation=interpolation)

    def reddening_at(self, lon_deg, lat_deg, *, frame="icrs", interpolation=None, r_v=None):
        """E(B-V) at positions: the map's values, divided by R_V for an A_V map.

        Parameters
        ----------
        lon_deg, lat_deg : float, array_like or `~astropy.units.Quantity` ['angle']
            Positions as in :meth:`lookup`.
        frame : str or astropy frame, keyword-only
            Frame of the positions, e.g. ``"icrs"`` (RA, Dec) or
            ``"galactic"`` (l, b).
        interpolation : {"bilinear", "nearest"}, optional, keyword-only
            Defaults to the map's own setting.
        r_v : float, optional, keyword-only
            R_V = A_V/E(B-V) for an A_V map; defaults to the map's ``r_v``.
            Not used for an E(B-V) map.

        Returns
        -------
        ebv, flags : as :meth:`lookup`
            E(B-V) in magnitudes (NaN where the map has no data) and flags.

        Notes
        -----
        E(B-V) = A_V / R_V (definition of R_V; common practice, no source).
        """
        values, flags = self.lookup(lon_deg, lat_deg, frame=frame, interpolation=interpolation)
        if self.unit == "E(B-V)":
            return values, flags
        r_v = self.r_v if r_v is None else check_positive("r_v", r_v)
        if r_v is None:
            raise InputError(
                f"map {self.name!r} holds A_V; give r_v (R_V = A_V/E(B-V)) to convert it to E(B-V)"
            )
        return values / r_v, flags

    def describe(self):
        """A dict describing the map (kind, unit, scale, interpolation, sources, ...)."""
        return {
            "name": self.name,
            "kind": self.kind,
            "unit": self.unit,
            "scale": self.scale,
            "interpolation": self.interpolation,
            "r_v": self.r_v,
            "sources": list(self.sources),
        }

    @abc.abstractmethod
    def _sample(self, lon_deg, lat_deg, frame, method):
        """Values and flags at positions already validated by :meth:`lookup`."""


class HealpixReddeningMap(ReddeningMap):
    """A HEALPix map, full sky or partial with explicit pixel indices.

    Parameters
    ----------
    values : array_like, 1-d
        Map values; may be a memory-mapped array (read only where looked up).
    nside : int
        HEALPix NSIDE, a power of two.
    order : {"ring", "nested"}
        Pixel ordering.
    frame : str or astropy frame
        Frame of the pixelisation (``"galactic"``, ``"icrs"``, ...).
    pixels : array_like of int, optional
        Pixel index of each value for a partial map; without it, ``values``
        must hold all 12·NSIDE² pixels.
    blank_value : float, optional
        A value marking pixels without data (NaN always does); HEALPix
        software writes `HEALPIX_UNSEEN`.
    **kwargs
        ``unit``, ``scale``, ``interpolation``, ``r_v``, ``name``, ``sources``
        as in `ReddeningMap`.

    Examples
    --------
    >>> import numpy as np
    >>> from redcorr.maps import HealpixReddeningMap
    >>> sky = HealpixReddeningMap(np.full(12, 0.1), nside=1, order="ring", frame="galactic")
    >>> value, flag = sky.lookup(101.25, -27.4)  # RA, Dec in ICRS
    >>> round(float(value), 6), int(flag)
    (0.1, 0)
    """

    kind = "healpix"
    _threaded = True  # astropy-healpix and numpy release the GIL; astropy.wcs is not shared safely

    def __init__(
        self, values, nside, order="ring", frame="galactic", pixels=None, blank_value=HEALPIX_UNSEEN, **kwargs
    ):
        super().__init__(**kwargs)
        import astropy_healpix  # noqa: PLC0415 - keep import time of redcorr low

        self._hp = astropy_healpix
        try:
            self.nside = int(nside)
            if self.nside != nside or self.nside <= 0:
                raise ValueError
            self.npix = int(astropy_healpix.nside_to_npix(self.nside))
        except (TypeError, ValueError):
            raise InputError(f"nside={nside!r} is not allowed; NSIDE must be a power of two (1, 2, 4, ...)") from None
        order = {"nest": "nested"}.get(str(order).strip().lower(), order)
        self.order = check_choice("order", order, ("ring", "nested"))
        self.frame = parse_frame(frame)
        self.blank_value = blank_value
        values = np.asarray(values)
        if values.ndim != 1:
            values = values.reshape(-1)
        if pixels is None:
            if values.size != self.npix:
                raise InputError(
                    f"HEALPix map has {values.size} values but NSIDE={self.nside} needs "
                    f"12·NSIDE² = {self.npix}; give pixel indices for a partial map"
                )
            self.pixels = None
        else:
            pixels = np.asarray(pixels).reshape(-1)
            if pixels.size != values.size:
                raise InputError(f"pixels has {pixels.size} entries but values has {values.size}; they must match")
            if not np.issubdtype(pixels.dtype, np.integer):
                raise InputError(f"pixels has type {pixels.dtype}; pixel indices must be integers")
            pixels = pixels.astype(np.int64)
            if pixels.size and (pixels.min() < 0 or pixels.max() >= self.npix):
                bad = pixels[(pixels < 0) | (pixels >= self.npix)][0]
                raise InputError(f"pixel index {bad} is outside [0, {self.npix - 1}] for NSIDE={self.nside}")
            if np.any(pixels[1:] <= pixels[:-1]):
                sort = np.argsort(pixels, kind="stable")
                pixels, values = pixels[sort], values[sort]
                dup = pixels[1:] == pixels[:-1]
                if np.any(dup):
                    raise InputError(
                        f"pixel index {pixels[1:][dup][0]} appears more than once in a partial HEALPix map"
                    )
            self.pixels = pixels
        self.values = values

    @property
    def covered_fraction(self):
        """Fraction of the sky the map's pixels cover."""
        return 1.0 if self.pixels is None else self.pixels.size / self.npix

    def describe(self):
        info = super().describe()
        info.update(
            nside=self.nside,
            order=self.order,
            frame=self.frame.name,
            pixels=self.npix if self.pixels is None else int(self.pixels.size),
            partial=self.pixels is not None,
        )
        return info

    def pixel_values(self, index):
        """Values of HEALPix pixels (in the map's ordering) and whether the map has them.

        Returns
        -------
        values : ndarray of float64
            NaN where not covered (blank pixels are returned as stored).
        covered : ndarray of bool
        """
        index = np.asarray(index, dtype=np.int64)
        if self.pixels is None:
            return np.asarray(self.values[index], dtype=float), np.ones(index.shape, dtype=bool)
        pos = np.searchsorted(self.pixels, index)
        np.minimum(pos, self.pixels.size - 1, out=pos)
        covered = self.pixels[pos] == index if self.pixels.size else np.zeros(index.shape, dtype=bool)
        values = np.asarray(self.values[pos], dtype=float) if self.pixels.size else np.zeros(index.shape)
        values[~covered] = np.nan
        return values, covered

    def _sample(self, lon_deg, lat_deg, frame, method):
        lon_deg, lat_deg = transform_lonlat(lon_deg, lat_deg, frame, self.frame)
        lon = u.Quantity(lon_deg, u.deg, copy=False)
        lat = u.Quantity(lat_deg, u.deg, copy=False)
        flags = np.zeros(lon.shape, dtype=np.uint8)
        if method == "nearest":
            index = self._hp.lonlat_to_healpix(lon, lat, self.nside, order=self.order)
            values, covered = self.pixel_values(index)
            blank = _blank_mask(values, self.blank_value) & covered
            flags[~covered] = FLAG_OUTSIDE
            flags[blank] = FLAG_BLANK
            values[blank] = np.nan
            return values, flags
        index, weights = self._hp.bilinear_interpolation_weights(lon, lat, self.nside, order=self.order)
        values, covered = self.pixel_values(index)
        good = covered & ~_blank_mask(values, self.blank_value)
        return _finish_bilinear(values, good, covered, weights, flags)


def _finish_bilinear(values, good, covered, weights, flags):
    """Combine (4, n) neighbours into n values and set flags (shared by both map kinds)."""
    if good.all():  # the usual case, a map without holes here: weights already sum to one
        return np.einsum("ij,ij->j", values, weights), flags
    main = np.argmax(weights, axis=0)[None, :]
    main_covered = np.take_along_axis(covered, main, axis=0)[0]
    main_good = np.take_along_axis(good, main, axis=0)[0]
    out = _combine(values, good, weights)
    flags[~main_covered] = FLAG_OUTSIDE
    flags[main_covered & ~main_good] = FLAG_BLANK
    flags[main_good & np.any(~good & (weights > 0), axis=0)] = FLAG_PARTIAL
    out[~main_good] = np.nan
    return out, flags


class ImageTile:
    """One image of a map: a 2-d array and its celestial WCS.

    Parameters
    ----------
    data : array_like, 2-d
        Values, ``data[y, x]``; may be memory-mapped. Extra leading axes of
        length 1 are dropped.
    wcs : `~astropy.wcs.WCS`
        A WCS with celestial axes (any projection astropy.wcs supports);
        only its celestial part is used.
    lat_range : tuple of float, optional
        Latitude range (degrees, in the image's frame) this image answers
        for, e.g. ``(0, 90)`` for the northern image of a hemisphere pair.
    blank_value : float, optional
        A value marking pixels without data (NaN always does).
    name : str
        Label (usually the file name).
    """

    def __init__(self, data, wcs, lat_range=None, blank_value=None, name=""):
        from astropy.wcs.utils import wcs_to_celestial_frame  # noqa: PLC0415

        self.name = str(name)
        if not wcs.has_celestial:
            raise InputError(f"image {self.name!r}: its WCS has no celestial axes (CTYPE {list(wcs.wcs.ctype)})")
        data = np.asarray(data)
        while data.ndim > 2 and data.shape[0] == 1:
            data = data[0]
        if data.ndim != 2:
            raise InputError(f"image {self.name!r} has shape {data.shape}; a 2-d image is needed")
        self.data = data
        self.wcs = wcs.celestial
        try:
            self.frame = wcs_to_celestial_frame(self.wcs)
        except ValueError as exc:
            raise InputError(f"image {self.name!r}: celestial frame not understood: {exc}") from None
        if lat_range is not None:
            lo, hi = (check_finite("lat_range", v) for v in lat_range)
            lat_range = (lo, hi)
        self.lat_range = lat_range
        self.blank_value = blank_value
        self.wraps = self._spans_all_longitudes()

    def _spans_all_longitudes(self):
        """True for an unrotated cylindrical image whose x axis covers exactly 360° of longitude.

        Bilinear interpolation then takes neighbours across the seam (x wraps
        modulo the image width) instead of flagging the last half pixel.
        """
        cel = self.wcs.wcs
        if cel.lng != 0 or cel.ctype[0][5:8] not in ("CAR", "CEA", "MER", "CYP"):
            return False
        matrix = cel.get_pc() * cel.get_cdelt()[:, None]
        if abs(matrix[0, 1]) > 0 or abs(matrix[1, 0]) > 0:
            return False
        return bool(abs(abs(matrix[0, 0]) * self.data.shape[1] - 360.0) < 1e-6)

    def sample(self, lon_deg, lat_deg, method):
        """Values and flags at positions given in this tile's frame (degrees)."""
        world = (lon_deg, lat_deg) if self.wcs.wcs.lng == 0 else (lat_deg, lon_deg)
        if self.wcs.has_distortion:  # iterative inverse; positions far off the image give NaN
            x, y = self.wcs.all_world2pix(*world, 0, quiet=True)
        else:  # NaN where the projection has no image of the position
            x, y = self.wcs.wcs_world2pix(*world, 0)
        x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
        ny, nx = self.data.shape
        if self.wraps:
            x = np.mod(x + 0.5, nx) - 0.5
        flags = np.zeros(x.shape, dtype=np.uint8)
        inside = (x >= -0.5) & (x < nx - 0.5) & (y >= -0.5) & (y < ny - 0.5)
        if self.lat_range is not None:
            inside &= (lat_deg >= self.lat_range[0]) & (lat_deg <= self.lat_range[1])
        if method == "nearest":
            values = np.full(x.shape, np.nan)
            ix = np.floor(x[inside] + 0.5).astype(np.intp) % nx
            iy = np.floor(y[inside] + 0.5).astype(np.intp)
            values[inside] = self.data[iy, ix]
            blank = inside & _blank_mask(values, self.blank_value)
            flags[~inside] = FLAG_OUTSIDE
            flags[blank] = FLAG_BLANK
            values[blank] = np.nan
            return values, flags
        x = np.where(inside, x, 0.0)
        y = np.where(inside, y, 0.0)
        x0, y0 = np.floor(x), np.floor(y)
        fx, fy = x - x0, y - y0
        x0, y0 = x0.astype(np.intp), y0.astype(np.intp)
        xs = np.stack([x0, x0 + 1, x0, x0 + 1])
        if self.wraps:
            xs %= nx
        ys = np.stack([y0, y0, y0 + 1, y0 + 1])
        weights = np.stack([(1 - fx) * (1 - fy), fx * (1 - fy), (1 - fx) * fy, fx * fy])
        covered = (xs >= 0) & (xs < nx) & (ys >= 0) & (ys < ny) & inside[None, :]
        values = np.full(xs.shape, np.nan)
        values[covered] = self.data[ys[covered], xs[covered]]
        good = covered & ~_blank_mask(values, self.blank_value)
        return _finish_bilinear(values, good, covered, weights, flags)


class ImageReddeningMap(ReddeningMap):
    """A map made of one or more images with celestial WCS (e.g. a hemisphere pair).

    For each position the images are tried in order; the first one giving a
    value (flag without `FLAG_OUTSIDE`/`FLAG_BLANK`) answers. A position
    inside some image but blank in all is flagged `FLAG_BLANK`.

    Parameters
    ----------
    tiles : sequence of `ImageTile`
    **kwargs
        ``unit``, ``scale``, ``interpolation``, ``r_v``, ``name``, ``sources``
        as in `ReddeningMap`.
    """

    kind = "image"

    def __init__(self, tiles, **kwargs):
        super().__init__(**kwargs)
        self.tiles = list(tiles)
        if not self.tiles:
            raise InputError("tiles is empty; an image map needs at least one image")

    def describe(self):
        info = super().describe()
        info["images"] = [
            {
                "name": t.name,
                "shape": list(t.data.shape),
                "projection": t.wcs.wcs.ctype[0][5:] or "linear",
                "frame": t.frame.name,
                "lat_range": list(t.lat_range) if t.lat_range else None,
            }
            for t in self.tiles
        ]
        return info

    def _sample(self, lon_deg, lat_deg, frame, method):
        values = np.full(lon_deg.shape, np.nan)
        flags = np.full(lon_deg.shape, FLAG_OUTSIDE, dtype=np.uint8)
        converted = {}
        for tile in self.tiles:
            todo = np.nonzero(flags & _NO_VALUE)[0]
            if todo.size == 0:
                break
            key = repr(tile.frame)
            if key not in converted:
                converted[key] = transform_lonlat(lon_deg, lat_deg, frame, tile.frame)
            lon_t, lat_t = converted[key]
            v, f = tile.sample(lon_t[todo], lat_t[todo], method)
            took = (f & _NO_VALUE) == 0
            values[todo[took]] = v[took]
            flags[todo[took]] = f[took]
            now_blank = (f == FLAG_BLANK) & (flags[todo] == FLAG_OUTSIDE)
            flags[todo[now_blank]] = FLAG_BLANK
        return values, flags

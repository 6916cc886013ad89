"""The map interface: validated, chunked lookup in any frame, flag bits, and how neighbours combine.

See :mod:`redcorr.maps` for the conventions (frames, units, the flag table).
"""

import abc
import concurrent.futures
import os

import numpy as np
from astropy import units as u
from astropy.coordinates import UnitSphericalRepresentation

from redcorr._constants import INTERPOLATIONS, MAP_FLAGS, MAP_UNITS
from redcorr._validate import as_float_array, check_choice, check_positive
from redcorr.exceptions import InputError
from redcorr.maps.frames import parse_frame

__all__ = [
    "ReddeningMap",
    "FLAG_OUTSIDE",
    "FLAG_BLANK",
    "FLAG_PARTIAL",
    "FLAG_NO_POSITION",
    "MAP_FLAGS",
    "describe_flags",
]

FLAG_OUTSIDE = np.uint8(MAP_FLAGS["outside"])
FLAG_BLANK = np.uint8(MAP_FLAGS["blank"])
FLAG_PARTIAL = np.uint8(MAP_FLAGS["partial"])
FLAG_NO_POSITION = np.uint8(MAP_FLAGS["no-position"])

_NO_VALUE = FLAG_OUTSIDE | FLAG_BLANK | FLAG_NO_POSITION

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
    names = [name for name, bit in MAP_FLAGS.items() if flag & bit]
    return "+".join(names) if names else "ok"


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
            Bit set, see :mod:`redcorr.maps`; 0 means a full-quality value.

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

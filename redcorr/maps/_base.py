"""The map interface: validated, chunked lookup in any frame, flag bits, and how neighbours combine.

See :mod:`redcorr.maps` for the conventions (frames, units, distances, the flag table).
"""

import abc
import concurrent.futures
import os
import warnings
from typing import NamedTuple

import numpy as np
from astropy import units as u
from astropy.coordinates import UnitSphericalRepresentation

from redcorr._constants import INTERPOLATIONS, MAP_FLAGS, MAP_UNITS
from redcorr._validate import as_float_array, check_choice, check_positive, shown
from redcorr.exceptions import DistanceIgnoredWarning, InputError
from redcorr.maps.distance import DistanceSamples
from redcorr.maps.frames import parse_frame

__all__ = [
    "ReddeningMap",
    "FLAG_OUTSIDE",
    "FLAG_BLANK",
    "FLAG_PARTIAL",
    "FLAG_NO_POSITION",
    "FLAG_BEYOND",
    "FLAG_NO_DISTANCE",
    "MAP_FLAGS",
    "BEYOND_WEIGHT",
    "check_distances",
    "describe_flags",
]

FLAG_OUTSIDE = np.uint8(MAP_FLAGS["outside"])
FLAG_BLANK = np.uint8(MAP_FLAGS["blank"])
FLAG_PARTIAL = np.uint8(MAP_FLAGS["partial"])
FLAG_NO_POSITION = np.uint8(MAP_FLAGS["no-position"])
FLAG_BEYOND = np.uint8(MAP_FLAGS["beyond"])
FLAG_NO_DISTANCE = np.uint8(MAP_FLAGS["no-distance"])

_NO_VALUE = FLAG_OUTSIDE | FLAG_BLANK | FLAG_NO_POSITION
"""Bits of the sky lookup that leave no value (a position without a usable distance is not looked up)."""

BEYOND_WEIGHT = 0.05
"""A distance distribution with more than this fraction of its weight beyond a map's last
distance is flagged `FLAG_BEYOND` (our choice: the mean then leans on the map's last value)."""

_CHUNK = 1 << 20
"""Positions processed per step, to keep temporary arrays of bounded size."""

_MAX_THREADS = 4
"""Chunks of a HEALPix lookup sampled at once, at most (and no more than the usable CPUs)."""


class _Distances(NamedTuple):
    """Distances of the positions being sampled: ``nodes`` (n, m) in pc with ``weights`` (n, m)
    (any positive total per row), or ``weights=None`` for one exact distance (m = 1). Only the rows
    found usable are ever sampled."""

    nodes: np.ndarray
    weights: np.ndarray | None

    def take(self, index):
        """The same for the positions ``index`` (a slice or integer array)."""
        return _Distances(self.nodes[index], None if self.weights is None else self.weights[index])


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


def check_distances(distances_pc, name="distances_pc"):
    """A map's distances as a float64 array in pc: 1-d, finite, > 0 and strictly increasing.

    Parameters
    ----------
    distances_pc : array_like or `~astropy.units.Quantity` ['length']
        Plain numbers are pc.
    name : str
        Argument name for error messages.
    """
    d = as_float_array(name, distances_pc, u.pc, "a length (plain numbers are pc)")
    if d.ndim != 1 or d.size == 0:
        raise InputError(f"{name} has shape {d.shape}; a 1-d list of one or more distances is needed")
    bad = ~np.isfinite(d) | (d <= 0)
    if np.any(bad):
        raise InputError(f"{name} holds {shown(d[bad][0])}; every distance must be a finite number of pc > 0")
    down = np.flatnonzero(d[1:] <= d[:-1])
    if down.size:
        i = int(down[0])
        raise InputError(
            f"{name} is not strictly increasing: {shown(d[i + 1])} follows {shown(d[i])} (position {i + 1})"
        )
    return d


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


def _row_sum(terms):
    """Sum over axis 0 of a (k, n) array, added row after row.

    Each of the n results depends only on its own column, whatever n is, so
    a position's value does not change with the batch it is looked up in
    (``np.einsum`` and reductions may order or fuse the additions
    differently for different n; measured on the demo map: 1 ulp).
    """
    total = terms[0].copy()
    for row in terms[1:]:
        total += row
    return total


def _finish_bilinear(values, good, covered, weights, flags):
    """Combine (4, n) neighbours into n values and set flags (shared by both map kinds).

    A position whose neighbours all have data gets Σ w·v (the weights sum to
    one); one with some missing gets the weighted mean of the others,
    Σ w·v / Σ w over them, and NaN without any. Each position's value
    depends only on its own neighbours, never on the others looked up with it.
    """
    if good.all():  # the usual case, a map without holes here
        return _row_sum(values * weights), flags
    w = np.where(good, weights, 0.0)
    out = _row_sum(np.where(good, values, 0.0) * w)
    some_bad = ~good.all(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        out[some_bad] /= _row_sum(w[:, some_bad])
    main = np.argmax(weights, axis=0)[None, :]
    main_covered = np.take_along_axis(covered, main, axis=0)[0]
    main_good = np.take_along_axis(good, main, axis=0)[0]
    flags[~main_covered] = FLAG_OUTSIDE
    flags[main_covered & ~main_good] = FLAG_BLANK
    flags[main_good & np.any(~good & (weights > 0), axis=0)] = FLAG_PARTIAL
    out[~main_good] = np.nan
    return out, flags


def _spatial(values, blank, covered, weights):
    """Values and flags at n positions from their (k, n) neighbours' ``values``.

    ``blank`` marks neighbours whose value is blank, ``covered`` those the map
    has; ``weights`` is None for nearest-pixel lookup (k = 1).
    """
    flags = np.zeros(values.shape[1], dtype=np.uint8)
    if weights is None:
        values, covered, blank = values[0], covered[0], blank[0] & covered[0]
        flags[~covered] = FLAG_OUTSIDE
        flags[blank] = FLAG_BLANK
        values[blank | ~covered] = np.nan
        return values, flags
    return _finish_bilinear(values, covered & ~blank, covered, weights, flags)


def _flat_view(array):
    """A 1-d view of ``array``'s memory in elements, and each axis's step in it; None if impossible.

    Gathering with one computed index from a 1-d view is several times
    faster than numpy's indexing with one index array per axis (measured by
    benchmarks/bench_maps.py). It needs every stride to be a non-negative
    multiple of the item size, true of FITS images and of tables whose
    columns are aligned; the view may span other columns' bytes, which the
    computed indices never reach.
    """
    size = array.itemsize
    if array.size == 0 or any(s < 0 or s % size for s in array.strides):
        return None, None
    steps = tuple(s // size for s in array.strides)
    length = sum((n - 1) * step for n, step in zip(array.shape, steps, strict=True)) + 1
    flat = np.lib.stride_tricks.as_strided(array, shape=(length,), strides=(size,), writeable=False)
    return flat, steps


def _brackets(distances, d):
    """Map slices around distances ``d`` (pc, finite, >= 0) and their linear interpolation weights.

    Returns ``lo, hi, w_lo, w_hi``: the value at ``d`` is
    ``w_lo·E[lo] + w_hi·E[hi]``, with E = 0 at distance 0 before the first
    slice (``w_lo = 0`` there) and E[-1] beyond the last (``w_hi = 1``).
    """
    hi = np.searchsorted(distances, d, side="right")
    np.minimum(hi, distances.size - 1, out=hi)
    lo = hi - 1
    first = lo < 0
    np.maximum(lo, 0, out=lo)
    d_lo = np.where(first, 0.0, distances[lo])
    w_hi = np.clip((d - d_lo) / (distances[hi] - d_lo), 0.0, 1.0)
    w_lo = np.where(first, 0.0, 1.0 - w_hi)
    return lo, hi, w_lo, w_hi


def _evaluate(gather, covered, weights, blank_value, dist=None, distances=None):
    """Values (errors) and flags at n positions from k interpolation neighbours (both map kinds).

    Parameters
    ----------
    gather : callable
        ``gather(k)`` gives the neighbours' values, float64 (k, n), NaN where
        not covered: at distance slice ``k`` (an int array (n,), or None for
        a map without distances).
    covered : ndarray of bool, shape (k, n)
        Neighbours the map has.
    weights : ndarray, shape (k, n), or None
        Bilinear weights; None for nearest-pixel lookup (k = 1).
    blank_value : float or None
        A stored value meaning "no data" (besides NaN).
    dist : _Distances, optional
        Where to evaluate a map with ``distances``; None gives the map's last
        distance (or the values of a map without distances).
    distances : ndarray, optional
        The map's distances (pc).

    Returns
    -------
    values, errors, flags : ndarray (n,)
        ``errors`` is None when ``dist`` is None (no distance, no spread).

    Notes
    -----
    At each node the two bracketing slices are interpolated linearly in
    distance per neighbour, then the neighbours combine as in 2D (both
    steps are linear, so the order does not matter where all neighbours have
    data). A neighbour is blank when either bracketing value is. Over the m
    nodes of a distance distribution the weighted mean and variance are
    accumulated one node at a time with West's (1979) update (which also
    normalises the weights), so memory stays (k, n) whatever m is.

    References
    ----------
    .. [1] West, D. H. D. 1979, Commun. ACM 22, 532 (weighted mean and variance, updated).
    """
    if dist is None:
        k = None if distances is None else np.full(covered.shape[1], distances.size - 1, dtype=np.intp)
        values = gather(k)
        out, flags = _spatial(values, _blank_mask(values, blank_value), covered, weights)
        return out, None, flags
    n, m = dist.nodes.shape
    flags = np.zeros(n, dtype=np.uint8)
    mean = np.zeros(n)
    spread = np.zeros(n)  # sum of w·(E - mean)², West (1979)
    total = np.zeros(n)
    beyond = np.zeros(n)
    for j in range(m):
        d = dist.nodes[:, j]
        lo, hi, w_lo, w_hi = _brackets(distances, d)
        v_lo, v_hi = gather(lo), gather(hi)
        blank = _blank_mask(v_lo, blank_value) | _blank_mask(v_hi, blank_value)
        v_lo *= w_lo  # in place: gather gives fresh arrays; w_lo·E[lo] + w_hi·E[hi]
        v_hi *= w_hi
        v_lo += v_hi
        value, f = _spatial(v_lo, blank, covered, weights)
        flags |= f
        if dist.weights is None:  # one exact distance
            mean, beyond = value, (d > distances[-1]).astype(float)
            break
        w = dist.weights[:, j]
        use = w > 0
        new_total = total + w
        with np.errstate(invalid="ignore", divide="ignore"):
            delta = value - mean
            new_mean = mean + np.where(use, w / new_total, 0.0) * delta
            spread = np.where(use, spread + w * delta * (value - new_mean), spread)
        mean, total = np.where(use, new_mean, mean), new_total
        beyond += np.where(d > distances[-1], w, 0.0)
    if dist.weights is None:
        errors = np.where(np.isnan(mean), np.nan, 0.0)
    else:
        with np.errstate(invalid="ignore", divide="ignore"):
            errors = np.sqrt(np.maximum(spread / total, 0.0))
            beyond /= total
    flags[beyond > BEYOND_WEIGHT] |= FLAG_BEYOND
    return mean, errors, flags


def _prepare_distance(distance, n):
    """Distances of n positions (flattened) and which of them are usable.

    Returns ``(dist, usable)``: a `_Distances` (the caller's arrays, not
    copied) and a bool (n,) array: exact distances finite and >= 0; a
    distribution's nodes finite and >= 0 with finite weights >= 0 of positive
    sum. Rows are checked in chunks, so temporaries stay bounded.
    """
    if not isinstance(distance, DistanceSamples):
        d = distance.reshape(-1, 1)
        return _Distances(d, None), np.isfinite(d[:, 0]) & (d[:, 0] >= 0)
    if distance.size != n:
        raise InputError(
            f"distance holds {distance.size} distance distributions for {n} positions; one per position is needed"
        )
    nodes, weights = distance.nodes_pc, distance.weights
    usable = np.empty(n, dtype=bool)
    step = max(1, _CHUNK // max(1, nodes.shape[1]))
    for start in range(0, n, step):
        part = slice(start, start + step)
        x, w = nodes[part], weights[part]
        usable[part] = (
            np.all(np.isfinite(x) & (x >= 0), axis=1)
            & np.all(np.isfinite(w) & (w >= 0), axis=1)
            & (w.sum(axis=1) > 0)
        )
    return _Distances(nodes, weights), usable


class ReddeningMap(abc.ABC):
    """A reddening map: values on the sky in magnitudes of E(B-V) or A_V, possibly distance-resolved.

    Subclasses implement ``_sample(lon_deg, lat_deg, frame, method, dist)``
    for finite positions given in ``frame`` (usually through `_evaluate`);
    this class validates input, works in chunks of bounded size and applies
    the scale factor. A subclass whose ``_sample`` may run in several threads
    at once sets ``_threaded = True``; large lookups then sample a few chunks
    in parallel.

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
    distances_pc : array_like or `~astropy.units.Quantity` ['length'], optional
        For a distance-resolved map: the distances (pc when plain numbers,
        strictly increasing, > 0) at which it holds the cumulative value from
        the Sun. None (default) for a map of whole sight lines.
    """

    kind = "map"
    _threaded = False

    def __init__(
        self, *, unit="E(B-V)", scale=1.0, interpolation="bilinear", r_v=None, name="", sources=(), distances_pc=None
    ):
        self.unit = check_choice("unit", unit, MAP_UNITS)
        self.scale = check_positive("scale", scale)
        self.interpolation = check_choice("interpolation", interpolation, INTERPOLATIONS)
        self.r_v = None if r_v is None else check_positive("r_v", r_v)
        self.name = str(name)
        self.sources = tuple(str(s) for s in sources)
        self.distances_pc = None if distances_pc is None else check_distances(distances_pc)

    @property
    def has_distance(self):
        """True for a distance-resolved (3D) map, one with ``distances_pc``."""
        return self.distances_pc is not None

    def lookup(self, lon_deg, lat_deg, frame="icrs", interpolation=None, *, distance=None, return_error=False):
        """Map values at positions (and distances), with flags.

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
        distance : float, array_like, Quantity ['length'] or `DistanceSamples`, optional, keyword-only
            Distance of each object from the Sun (plain numbers are pc; it
            broadcasts with the positions), or a distance distribution per
            position (``DistanceSamples`` of size = number of positions after
            broadcasting, in flattened C order). NaN, infinite or negative
            distances give NaN with `FLAG_NO_DISTANCE`. For a map without
            distances it is ignored, with a `DistanceIgnoredWarning`; a
            distance-resolved map without it gives its last distance's value
            with `FLAG_BEYOND`.
        return_error : bool, keyword-only
            Also return the standard deviation of the value over the
            distance distribution (0 for exact distances and for maps
            without distances; NaN where the value is NaN).

        Returns
        -------
        values : ndarray or float
            E(B-V) or A_V (see ``unit``) in magnitudes, times ``scale``; NaN
            where the map has no data or the distance is not usable. For a
            distribution, the weighted mean over its nodes.
        errors : ndarray or float
            Only with ``return_error=True``: the weighted standard deviation
            over the nodes, times ``scale``.
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

        A distance-resolved map holds the cumulative value E(d_k) at its
        distances d_1 < ... < d_K. At a distance d each neighbour's value is
        ``E(d) = E(d_k) + (d − d_k)/(d_{k+1} − d_k)·(E(d_{k+1}) − E(d_k))``
        with d_0 = 0, E(0) = 0 (dust begins at the Sun) and E(d) = E(d_K)
        for d ≥ d_K (flag `FLAG_BEYOND` when d > d_K); the neighbours then
        combine as in 2D. For a distribution with nodes d_j and weights w_j
        (Σ w_j = 1): ``mean = Σ w_j E(d_j)``, ``error² = Σ w_j (E(d_j) −
        mean)²``; `FLAG_BEYOND` when more than `BEYOND_WEIGHT` of the weight
        lies beyond d_K.

        References
        ----------
        .. [1] Górski, K. M. et al. 2005, ApJ 622, 759 (HEALPix).
        .. [2] Calabretta, M. R. & Greisen, E. W. 2002, A&A 395, 1077 (celestial WCS).
        """
        return self._lookup(lon_deg, lat_deg, frame, interpolation, distance, return_error)

    def _lookup(self, lon_deg, lat_deg, frame, interpolation, distance, return_error, stacklevel=3):
        lon = _angle_array(lon_deg, "lon_deg")
        lat = _angle_array(lat_deg, "lat_deg")
        exact = None
        if distance is not None and not isinstance(distance, DistanceSamples):
            exact = as_float_array("distance", distance, u.pc, "a length (plain numbers are pc)")
        try:
            if exact is None:
                lon, lat = np.broadcast_arrays(lon, lat)
            else:
                lon, lat, exact = np.broadcast_arrays(lon, lat, exact)
        except ValueError:
            shapes = f"lon_deg shape {lon.shape}, lat_deg shape {lat.shape}"
            if exact is not None:
                shapes += f" and distance shape {exact.shape}"
            raise InputError(f"{shapes} do not broadcast") from None
        method = check_choice("interpolation", interpolation or self.interpolation, INTERPOLATIONS)
        in_frame = parse_frame(frame)
        shape = lon.shape
        lon, lat = lon.ravel(), lat.ravel()
        finite = np.isfinite(lon) & np.isfinite(lat)
        off_sphere = finite & (np.abs(lat) > 90.0)
        if np.any(off_sphere):
            first = float(lat[off_sphere][0])
            raise InputError(f"lat_deg={first!r} is outside the allowed range [-90, 90] (latitude in {frame!s})")
        dist = usable = None
        if distance is not None:
            dist, usable = _prepare_distance(distance if exact is None else exact, lon.size)
            if not self.has_distance:
                warnings.warn(
                    f"map {self.name or self.kind!r} has no distances (it holds whole sight lines); "
                    "the distance given is ignored",
                    DistanceIgnoredWarning,
                    stacklevel=stacklevel,
                )
                dist = usable = None
        values = np.full(lon.size, np.nan)
        errors = np.zeros(lon.size) if return_error else None
        flags = np.zeros(lon.size, dtype=np.uint8)
        flags[~finite] = FLAG_NO_POSITION
        todo = finite if usable is None else finite & usable
        every = bool(todo.all())

        def sample_chunk(start):  # writes a disjoint part of values, errors and flags
            part = slice(start, start + _CHUNK)
            where = part if every else np.nonzero(todo[part])[0] + start
            if every or where.size:
                v, e, f = self._sample(
                    lon[where], lat[where], in_frame, method, None if dist is None else dist.take(where)
                )
                values[where], flags[where] = v, f
                if errors is not None and e is not None:
                    errors[where] = e

        starts = range(0, lon.size, _CHUNK)
        threads = min(len(starts), _MAX_THREADS, _usable_cpus()) if self._threaded else 1
        if threads > 1:  # the pixel maths runs outside the GIL
            with concurrent.futures.ThreadPoolExecutor(threads, thread_name_prefix="redcorr-map") as pool:
                for _ in pool.map(sample_chunk, starts):
                    pass
        else:
            for start in starts:
                sample_chunk(start)
        if usable is not None:
            flags[~usable] |= FLAG_NO_DISTANCE
        elif self.has_distance:
            flags |= FLAG_BEYOND  # no distance: the whole column the map knows
        if self.scale != 1.0:
            values *= self.scale
        if errors is None:
            return values.reshape(shape)[()], flags.reshape(shape)[()]
        errors[np.isnan(values)] = np.nan
        if self.scale != 1.0:
            errors *= self.scale
        return values.reshape(shape)[()], errors.reshape(shape)[()], flags.reshape(shape)[()]

    def lookup_coord(self, coord, interpolation=None, *, distance=None, return_error=False):
        """:meth:`lookup` at a `~astropy.coordinates.SkyCoord` (or frame with data), any frame."""
        sph = coord.represent_as(UnitSphericalRepresentation)
        frame = coord.frame if hasattr(coord, "frame") else coord
        return self._lookup(
            sph.lon, sph.lat, frame.replicate_without_data(), interpolation, distance, return_error
        )

    def reddening_at(
        self, lon_deg, lat_deg, *, frame="icrs", interpolation=None, r_v=None, distance=None, return_error=False
    ):
        """E(B-V) at positions (and distances): the map's values, divided by R_V for an A_V map.

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
        distance, return_error : keyword-only
            As in :meth:`lookup`.

        Returns
        -------
        ebv, [ebv_err,] flags : as :meth:`lookup`
            E(B-V) in magnitudes (NaN where the map has no data), its
            standard deviation over the distance distribution with
            ``return_error=True``, and flags.

        Notes
        -----
        E(B-V) = A_V / R_V (definition of R_V; common practice, no source).
        """
        if self.unit == "E(B-V)":
            r_v = None
        else:
            r_v = self.r_v if r_v is None else check_positive("r_v", r_v)
            if r_v is None:
                raise InputError(
                    f"map {self.name!r} holds A_V; give r_v (R_V = A_V/E(B-V)) to convert it to E(B-V)"
                )
        out = self._lookup(lon_deg, lat_deg, frame, interpolation, distance, return_error)
        if r_v is None:
            return out
        return (*(v / r_v for v in out[:-1]), out[-1])

    def describe(self):
        """A dict describing the map (kind, unit, scale, interpolation, sources, distances, ...)."""
        return {
            "name": self.name,
            "kind": self.kind,
            "unit": self.unit,
            "scale": self.scale,
            "interpolation": self.interpolation,
            "r_v": self.r_v,
            "sources": list(self.sources),
            "distances_pc": None if self.distances_pc is None else self.distances_pc.tolist(),
        }

    @abc.abstractmethod
    def _sample(self, lon_deg, lat_deg, frame, method, dist):
        """Values, errors (None without ``dist``) and flags at positions already validated by :meth:`lookup`."""

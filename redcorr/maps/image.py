"""Maps made of images with a celestial WCS (an all-sky image, a hemisphere pair, ...), or cubes over distance."""

import numpy as np

from redcorr._validate import check_finite
from redcorr.exceptions import InputError
from redcorr.maps._base import _NO_VALUE, FLAG_BLANK, FLAG_OUTSIDE, ReddeningMap, _evaluate, _flat_view, check_distances
from redcorr.maps.frames import transform_lonlat

__all__ = ["ImageReddeningMap", "ImageTile"]


class ImageTile:
    """One image of a map: a 2-d array (or a cube over distance) and its celestial WCS.

    Parameters
    ----------
    data : array_like, 2-d, or 3-d with ``distances_pc``
        Values, ``data[y, x]``, or ``data[k, y, x]`` at distance
        ``distances_pc[k]`` (the cumulative value from the Sun); may be
        memory-mapped. Extra leading axes of length 1 are dropped.
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
    distances_pc : array_like, optional
        The distances (pc, strictly increasing, > 0) of the cube's planes.
    """

    def __init__(self, data, wcs, lat_range=None, blank_value=None, name="", distances_pc=None):
        from astropy.wcs.utils import wcs_to_celestial_frame  # noqa: PLC0415

        self.name = str(name)
        if not wcs.has_celestial:
            raise InputError(f"image {self.name!r}: its WCS has no celestial axes (CTYPE {list(wcs.wcs.ctype)})")
        self.distances_pc = None if distances_pc is None else check_distances(distances_pc)
        data = np.asarray(data)
        axes = 2 if self.distances_pc is None else 3
        while data.ndim > axes and data.shape[0] == 1:
            data = data[0]
        if self.distances_pc is None and data.ndim != 2:
            raise InputError(f"image {self.name!r} has shape {data.shape}; a 2-d image is needed")
        if self.distances_pc is not None and (data.ndim != 3 or data.shape[0] != self.distances_pc.size):
            raise InputError(
                f"image {self.name!r} has shape {data.shape}; {self.distances_pc.size} distances need a cube "
                f"of shape ({self.distances_pc.size}, ny, nx)"
            )
        self.data = data
        self._flat, self._steps = (None, None) if self.distances_pc is None else _flat_view(data)
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

    @property
    def shape(self):
        """(ny, nx): the image's size on the sky."""
        return self.data.shape[-2:]

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
        return bool(abs(abs(matrix[0, 0]) * self.shape[1] - 360.0) < 1e-6)

    def sample(self, lon_deg, lat_deg, method, dist=None):
        """Values, errors (None without ``dist``) and flags at positions given in this tile's frame (degrees)."""
        world = (lon_deg, lat_deg) if self.wcs.wcs.lng == 0 else (lat_deg, lon_deg)
        if self.wcs.has_distortion:  # iterative inverse; positions far off the image give NaN
            x, y = self.wcs.all_world2pix(*world, 0, quiet=True)
        else:  # NaN where the projection has no image of the position
            x, y = self.wcs.wcs_world2pix(*world, 0)
        x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
        ny, nx = self.shape
        if self.wraps:
            x = np.mod(x + 0.5, nx) - 0.5
        inside = (x >= -0.5) & (x < nx - 0.5) & (y >= -0.5) & (y < ny - 0.5)
        if self.lat_range is not None:
            inside &= (lat_deg >= self.lat_range[0]) & (lat_deg <= self.lat_range[1])
        x = np.where(inside, x, 0.0)
        y = np.where(inside, y, 0.0)
        if method == "nearest":
            xs = (np.floor(x + 0.5).astype(np.intp) % nx)[None, :]
            ys = np.floor(y + 0.5).astype(np.intp)[None, :]
            weights, covered = None, inside[None, :]
        else:
            x0, y0 = np.floor(x), np.floor(y)
            fx, fy = x - x0, y - y0
            x0, y0 = x0.astype(np.intp), y0.astype(np.intp)
            xs = np.stack([x0, x0 + 1, x0, x0 + 1])
            if self.wraps:
                xs %= nx
            ys = np.stack([y0, y0, y0 + 1, y0 + 1])
            weights = np.stack([(1 - fx) * (1 - fy), fx * (1 - fy), (1 - fx) * fy, fx * fy])
            covered = (xs >= 0) & (xs < nx) & (ys >= 0) & (ys < ny) & inside[None, :]
            xs = np.where(covered, xs, 0)
            ys = np.where(covered, ys, 0)

        plane = ys * self._steps[1] + xs * self._steps[2] if self._flat is not None else None

        def gather(k):
            if k is None:
                values = self.data[ys, xs]
            elif self._flat is not None:
                values = self._flat[plane + k * self._steps[0]]
            else:
                values = self.data[k, ys, xs]
            values = np.asarray(values, dtype=float)
            values[~covered] = np.nan
            return values

        return _evaluate(gather, covered, weights, self.blank_value, dist, self.distances_pc)


class ImageReddeningMap(ReddeningMap):
    """A map made of one or more images with celestial WCS (e.g. a hemisphere pair).

    For each position the images are tried in order; the first one giving a
    value (flag without `FLAG_OUTSIDE`/`FLAG_BLANK`) answers. A position
    inside some image but blank in all is flagged `FLAG_BLANK`. Either every
    image is a cube over the same distances (a distance-resolved map) or none
    is.

    Parameters
    ----------
    tiles : sequence of `ImageTile`
    **kwargs
        ``unit``, ``scale``, ``interpolation``, ``r_v``, ``name``, ``sources``
        as in `ReddeningMap`.
    """

    kind = "image"

    def __init__(self, tiles, **kwargs):
        tiles = list(tiles)
        if not tiles:
            raise InputError("tiles is empty; an image map needs at least one image")
        first = tiles[0].distances_pc
        for tile in tiles[1:]:
            d = tile.distances_pc
            if (d is None) != (first is None) or (d is not None and not np.array_equal(d, first)):
                raise InputError(
                    f"image {tile.name!r} has {_distance_note(d)} but image {tiles[0].name!r} has "
                    f"{_distance_note(first)}; the images of one map share the same distances (or have none)"
                )
        super().__init__(distances_pc=first, **kwargs)
        self.tiles = tiles

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

    def _sample(self, lon_deg, lat_deg, frame, method, dist):
        values = np.full(lon_deg.shape, np.nan)
        errors = None if dist is None else np.zeros(lon_deg.shape)
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
            v, e, f = tile.sample(lon_t[todo], lat_t[todo], method, None if dist is None else dist.take(todo))
            took = (f & _NO_VALUE) == 0
            values[todo[took]] = v[took]
            flags[todo[took]] = f[took]
            if errors is not None:
                errors[todo[took]] = e[took]
            now_blank = ((f & _NO_VALUE) == FLAG_BLANK) & (flags[todo] == FLAG_OUTSIDE)
            flags[todo[now_blank]] = f[now_blank]
        return values, errors, flags


def _distance_note(distances):
    """How an image's distances read in a message."""
    if distances is None:
        return "no distances (a 2-d image)"
    return f"{distances.size} distances ({distances[0]:g}-{distances[-1]:g} pc)"

"""Maps made of images with a celestial WCS (one all-sky image, a hemisphere pair, ...)."""

import numpy as np

from redcorr._validate import check_finite
from redcorr.exceptions import InputError
from redcorr.maps._base import (
    _NO_VALUE,
    FLAG_BLANK,
    FLAG_OUTSIDE,
    ReddeningMap,
    _blank_mask,
    _finish_bilinear,
)
from redcorr.maps.frames import transform_lonlat

__all__ = ["ImageReddeningMap", "ImageTile"]


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

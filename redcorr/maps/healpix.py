"""HEALPix maps, full sky or partial, looked up with astropy-healpix."""

import numpy as np
from astropy import units as u

from redcorr._validate import check_choice
from redcorr.exceptions import InputError
from redcorr.maps._base import FLAG_BLANK, FLAG_OUTSIDE, ReddeningMap, _blank_mask, _finish_bilinear
from redcorr.maps.frames import parse_frame, transform_lonlat

__all__ = ["HEALPIX_UNSEEN", "HealpixReddeningMap"]

HEALPIX_UNSEEN = -1.6375e30
"""Value HEALPix software writes for pixels without data (Górski et al. 2005, the HEALPix
software conventions; from memory)."""


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

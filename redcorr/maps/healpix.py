"""HEALPix maps, full sky or partial, looked up with astropy-healpix."""

import numpy as np
from astropy import units as u

from redcorr._validate import check_choice
from redcorr.exceptions import InputError
from redcorr.maps._base import ReddeningMap, _evaluate, _flat_view
from redcorr.maps.frames import parse_frame, transform_lonlat

__all__ = ["HEALPIX_UNSEEN", "HealpixReddeningMap"]

HEALPIX_UNSEEN = -1.6375e30
"""Value HEALPix software writes for pixels without data (Górski et al. 2005, the HEALPix
software conventions; from memory)."""


class HealpixReddeningMap(ReddeningMap):
    """A HEALPix map, full sky or partial with explicit pixel indices.

    Parameters
    ----------
    values : array_like, shape (n,) or (n, n_dist)
        Map values, one per pixel; may be a memory-mapped array (read only
        where looked up). With ``distances_pc``: one row per pixel holding
        the cumulative value from the Sun out to each distance.
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
    distances_pc : array_like, optional
        The distances (pc, strictly increasing) of a distance-resolved map,
        n_dist of them.
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

    A distance-resolved map: E(B-V) 0.1 out to 100 pc and 0.3 out to 200 pc everywhere.

    >>> cube = HealpixReddeningMap(np.tile([0.1, 0.3], (12, 1)), nside=1, distances_pc=[100, 200])
    >>> ebv, flag = cube.lookup(101.25, -27.4, distance=150.0)
    >>> round(float(ebv), 6), int(flag)
    (0.2, 0)
    """

    kind = "healpix"
    _threaded = True  # astropy-healpix and numpy release the GIL; astropy.wcs is not shared safely

    def __init__(
        self,
        values,
        nside,
        order="ring",
        frame="galactic",
        pixels=None,
        blank_value=HEALPIX_UNSEEN,
        distances_pc=None,
        **kwargs,
    ):
        super().__init__(distances_pc=distances_pc, **kwargs)
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
        if self.distances_pc is None:
            values = values.reshape(-1)
        else:
            n_dist = self.distances_pc.size
            if values.ndim == 1 and n_dist == 1:
                values = values[:, None]
            if values.ndim != 2 or values.shape[1] != n_dist:
                raise InputError(
                    f"values has shape {values.shape}; a map of {n_dist} distances needs shape (pixels, {n_dist})"
                )
        if pixels is None:
            if len(values) != self.npix:
                raise InputError(
                    f"HEALPix map has {len(values)} values but NSIDE={self.nside} needs "
                    f"12·NSIDE² = {self.npix}; give pixel indices for a partial map"
                )
            self.pixels = None
        else:
            pixels = np.asarray(pixels).reshape(-1)
            if pixels.size != len(values):
                raise InputError(f"pixels has {pixels.size} entries but values has {len(values)}; they must match")
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
        self._flat, self._steps = (None, None) if self.distances_pc is None else _flat_view(values)

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
        values : ndarray of float64, shape ``index.shape`` (+ (n_dist,) for a distance-resolved map)
            NaN where not covered (blank pixels are returned as stored).
        covered : ndarray of bool, shape ``index.shape``
        """
        rows, covered = self._rows(np.asarray(index, dtype=np.int64))
        return self._gather(rows, covered), covered

    def _rows(self, index):
        """Rows of ``values`` holding HEALPix pixels ``index``, and whether the map has them."""
        if self.pixels is None:
            return index, np.ones(index.shape, dtype=bool)
        if self.pixels.size == 0:
            return np.zeros(index.shape, dtype=np.intp), np.zeros(index.shape, dtype=bool)
        rows = np.searchsorted(self.pixels, index)
        np.minimum(rows, self.pixels.size - 1, out=rows)
        return rows, self.pixels[rows] == index

    def _gather(self, rows, covered, k=None, start=None):
        """Float64 values at ``rows`` (and distance slice ``k``, broadcasting), NaN where not covered.

        ``start`` (``rows`` times the row step of the flat view) is computed
        once per chunk by the caller when it gathers several slices.
        """
        if len(self.values) == 0:  # a partial map without pixels
            return np.full(rows.shape + (self.values.shape[1:] if k is None else ()), np.nan)
        if k is None:
            values = self.values[rows]
        elif self._flat is not None:
            start = rows * self._steps[0] if start is None else start
            values = self._flat[start + (k if self._steps[1] == 1 else k * self._steps[1])]
        else:
            values = self.values[rows, k]
        values = np.asarray(values, dtype=float)
        if self.pixels is not None:
            values[~covered] = np.nan
        return values

    def _sample(self, lon_deg, lat_deg, frame, method, dist):
        lon_deg, lat_deg = transform_lonlat(lon_deg, lat_deg, frame, self.frame)
        lon = u.Quantity(lon_deg, u.deg, copy=False)
        lat = u.Quantity(lat_deg, u.deg, copy=False)
        if method == "nearest":
            index = self._hp.lonlat_to_healpix(lon, lat, self.nside, order=self.order)[None, :]
            weights = None
        else:
            index, weights = self._hp.bilinear_interpolation_weights(lon, lat, self.nside, order=self.order)
        rows, covered = self._rows(index)
        start = rows * self._steps[0] if self._flat is not None and dist is not None else None
        return _evaluate(
            lambda k: self._gather(rows, covered, k, start), covered, weights, self.blank_value, dist, self.distances_pc
        )

"""Synthetic dust maps for the map tests, written from a known analytic function of (l, b).

Test data, not demo data: the function is smooth on the whole sphere (a
polynomial in the galactic unit vector), so interpolation errors scale as
the pixel size (nearest) or its square (bilinear). Plain helper functions,
imported by the tests; fixtures live in tests/conftest.py.
"""

import astropy_healpix
import numpy as np
from astropy.io import fits
from astropy.wcs import WCS


def smooth(l_deg, b_deg):
    """f = 1 + 0.3 x + 0.2 y z + 0.5 z², with (x, y, z) the galactic unit vector."""
    lon, lat = np.radians(l_deg), np.radians(b_deg)
    x, y, z = np.cos(lat) * np.cos(lon), np.cos(lat) * np.sin(lon), np.sin(lat)
    return 1.0 + 0.3 * x + 0.2 * y * z + 0.5 * z * z


def healpix_values(nside, order, func=smooth):
    """Full-sky map of ``func`` at the pixel centres (astropy-healpix), float64."""
    lon, lat = astropy_healpix.healpix_to_lonlat(np.arange(12 * nside**2), nside, order=order)
    return func(lon.deg, lat.deg)


def write_healpix(path, values, nside, order="RING", coordsys="G", pixels=None, column="EBV", per_row=1, extra=None):
    """A HEALPix FITS binary table, the layout HEALPix software writes."""
    values = np.asarray(values, dtype=np.float32)
    fmt = "E" if per_row == 1 else f"{per_row}E"
    cols = []
    if pixels is not None:
        cols.append(fits.Column(name="PIXEL", format="K", array=np.asarray(pixels)))
    cols.append(fits.Column(name=column, format=fmt, array=values.reshape(-1, per_row) if per_row > 1 else values))
    table = fits.BinTableHDU.from_columns(cols)
    header = {"PIXTYPE": "HEALPIX", "ORDERING": order, "COORDSYS": coordsys, "NSIDE": nside,
              "INDXSCHM": "EXPLICIT" if pixels is not None else "IMPLICIT"}
    header.update(extra or {})
    for key, value in header.items():
        table.header[key] = value
    fits.HDUList([fits.PrimaryHDU(), table]).writeto(path)
    return path


def car_wcs(step=1.0, frame="galactic"):
    """Plate carrée all-sky WCS, pixel centres at (±step/2 + k·step)."""
    nx, ny = int(round(360 / step)), int(round(180 / step))
    wcs = WCS(naxis=2)
    wcs.wcs.ctype = ["GLON-CAR", "GLAT-CAR"] if frame == "galactic" else ["RA---CAR", "DEC--CAR"]
    wcs.wcs.crval = [0.0, 0.0]
    wcs.wcs.crpix = [(nx + 1) / 2, (ny + 1) / 2]
    wcs.wcs.cdelt = [-step, step]
    return wcs, (ny, nx)


def zea_pole_wcs(north, n=171, step=1.0):
    """Zenithal equal-area WCS centred on a galactic pole, n × n pixels."""
    wcs = WCS(naxis=2)
    wcs.wcs.ctype = ["GLON-ZEA", "GLAT-ZEA"]
    wcs.wcs.crval = [0.0, 90.0 if north else -90.0]
    wcs.wcs.crpix = [(n + 1) / 2, (n + 1) / 2]
    wcs.wcs.cdelt = [-step, step]
    return wcs, (n, n)


def image_values(wcs, shape, func=smooth):
    """``func`` at every pixel centre (world coordinates from astropy.wcs); NaN where not on the sky."""
    y, x = np.mgrid[0 : shape[0], 0 : shape[1]]
    lon, lat = wcs.pixel_to_world_values(x, y)
    return func(lon, lat)


def write_image(path, data, wcs):
    fits.PrimaryHDU(np.asarray(data, dtype=np.float32), header=wcs.to_header()).writeto(path)
    return path

"""Synthetic dust maps for the map tests, written from known analytic functions.

Test data, not demo data. 2D maps: a function smooth on the whole sphere (a
polynomial in the galactic unit vector), so interpolation errors scale as
the pixel size (nearest) or its square (bilinear). Distance-resolved maps:
the cumulative reddening of an exponential dust disk, whose line-of-sight
integral is closed-form (`disk_cumulative`). Plain helper functions,
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


DISK_E0 = 1e-3
"""Reddening per pc in the mid-plane of the synthetic disk (1 mag/kpc; invented)."""

DISK_H = 120.0
"""Scale height of the synthetic disk, pc (invented)."""


def disk_cumulative(b_deg, r_pc, e0=DISK_E0, h=DISK_H):
    """E(B-V) from the Sun to distance r toward latitude b through an exponential disk.

    ρ ∝ exp(−|z|/h) with z = r·sin b (the Sun in the mid-plane), so
    E(r) = e0·∫₀^r exp(−t·s/h) dt = e0·h/s·(1 − exp(−r·s/h)), s = |sin b|,
    and E(r) = e0·r in the plane (s = 0). Elementary integral (common
    practice, no source).
    """
    s = np.abs(np.sin(np.radians(b_deg)))
    r = np.asarray(r_pc, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        slanted = e0 * h / s * -np.expm1(-r * s / h)
    return np.where(s > 0, slanted, e0 * r)


def disk_second_derivative_bound(b_deg, d_lo_pc, e0=DISK_E0, h=DISK_H):
    """max |∂²E/∂r²| over r >= d_lo: E'' = −e0·(s/h)·exp(−r·s/h) is largest in size at r = d_lo."""
    s = np.abs(np.sin(np.radians(b_deg)))
    return e0 * s / h * np.exp(-np.asarray(d_lo_pc) * s / h)


def write_healpix(
    path,
    values,
    nside,
    order="RING",
    coordsys="G",
    pixels=None,
    column="EBV",
    per_row=1,
    extra=None,
    distances=None,
    distance_unit="pc",
    value_format="E",
):
    """A HEALPix FITS binary table, the layout HEALPix software writes.

    With ``distances``: ``values`` has one row of len(distances) values per
    pixel (a vector column), and a DISTANCES table follows (redcorr's
    distance-resolved format, README "Distance-resolved maps").
    """
    values = np.asarray(values, dtype=np.float32 if value_format == "E" else np.float64)
    if distances is not None:
        per_row = values.shape[1] if values.ndim == 2 else 1
    fmt = value_format if per_row == 1 else f"{per_row}{value_format}"
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
    hdus = [fits.PrimaryHDU(), table]
    if distances is not None:
        hdus.append(distance_table(distances, distance_unit))
    fits.HDUList(hdus).writeto(path)
    return path


def distance_table(distances, unit="pc", fmt="D"):
    """The DISTANCES binary table HDU (one column DISTANCE with TUNIT ``unit``; no unit if None)."""
    column = fits.Column(name="DISTANCE", format=fmt, unit=unit, array=np.asarray(distances))
    return fits.BinTableHDU.from_columns([column], name="DISTANCES")


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


def write_image(path, data, wcs, distances=None, distance_unit="pc"):
    """A FITS image (or cube) with ``wcs``; with ``distances`` a DISTANCES table follows."""
    hdus = [fits.PrimaryHDU(np.asarray(data, dtype=np.float32), header=wcs.to_header())]
    if distances is not None:
        hdus.append(distance_table(distances, distance_unit))
    fits.HDUList(hdus).writeto(path)
    return path


def car_cube_wcs(step, first_pc, step_pc, unit="pc"):
    """Plate carrée all-sky WCS (galactic) with a third, linear distance axis: d_k = first + k·step."""
    cel, shape = car_wcs(step)
    wcs = WCS(naxis=3)
    wcs.wcs.ctype = [*cel.wcs.ctype, "DISTANCE"]
    wcs.wcs.cunit = ["deg", "deg", unit]
    wcs.wcs.crval = [*cel.wcs.crval, first_pc]
    wcs.wcs.crpix = [*cel.wcs.crpix, 1.0]
    wcs.wcs.cdelt = [*cel.wcs.cdelt, step_pc]
    return wcs, shape


def disk_cube(wcs, shape, distances_pc):
    """``disk_cumulative`` at every pixel centre of a celestial WCS and every distance: (n_dist, ny, nx)."""
    _, lat = image_values(wcs.celestial, shape, func=lambda lon, b: (lon, b))
    return disk_cumulative(lat[None], np.asarray(distances_pc)[:, None, None])

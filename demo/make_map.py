"""Write the invented dust map of the Brume Field, in two formats.

Everything here is invented for the demo: the Brume Cloud does not exist.
Its A_V is an analytic pattern (a smooth background of ~2.5 mag, a filament
and a core peaking near 6 mag), with a small masked disc standing for a
bright-star artefact. The script is deterministic: running it again gives
byte-identical files.

Outputs (in the folder given, default: this folder)
---------------------------------------------------
brume_ebv_healpix.fits
    Partial-sky HEALPix table, NSIDE 4096, NESTED, galactic (COORDSYS G),
    explicit PIXEL column, values E(B-V) = A_V / R_V with R_V 4.3;
    masked pixels hold the HEALPix UNSEEN value.
brume_av_zea.fits
    A 121 x 121 image in the zenithal equal-area projection centred on the
    field (ICRS, 0.01 deg pixels), values A_V; masked pixels are NaN. The
    description brume_av_map.toml (kept by hand) declares it as A_V with
    R_V 4.3.

Usage: ``python demo/make_map.py [OUTDIR]``
"""

import sys
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.coordinates import SkyCoord
from astropy.io import fits
from astropy.wcs import WCS
from astropy_healpix import HEALPix

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))  # this checkout's redcorr
from redcorr.io import atomic_path  # noqa: E402
from redcorr.maps import HEALPIX_UNSEEN  # noqa: E402

RA0, DEC0 = 101.25, -27.40  # field centre, demo/scenario.toml
R_V = 4.3  # the Brume Cloud, demo/scenario.toml
NSIDE = 4096
RADIUS_DEG = 0.75  # map radius: the field (0.5 deg) plus a margin
MASK = (101.55, -27.20, 0.03)  # RA, Dec, radius of the masked disc (deg)


def brume_av(ra_deg, dec_deg):
    """Invented A_V (mag) of the Brume Cloud at ICRS positions."""
    dx = (np.asarray(ra_deg) - RA0) * np.cos(np.radians(DEC0))
    dy = np.asarray(dec_deg) - DEC0
    background = 2.45 + 0.25 * dx + 0.1 * np.sin(9.0 * dx) * np.cos(7.0 * dy)
    filament = 0.7 * np.exp(-0.5 * ((dy - 0.4 * dx + 0.05) / 0.07) ** 2)
    core = 2.75 * np.exp(-0.5 * ((dx - 0.12) ** 2 + (dy + 0.02) ** 2) / 0.06**2)
    return background + filament + core


def _masked(ra_deg, dec_deg):
    ra_m, dec_m, r_m = MASK
    sep = SkyCoord(ra_deg * u.deg, dec_deg * u.deg).separation(SkyCoord(ra_m * u.deg, dec_m * u.deg))
    return sep.deg < r_m


def healpix_table():
    hp = HEALPix(nside=NSIDE, order="nested", frame="galactic")
    centre = SkyCoord(RA0 * u.deg, DEC0 * u.deg, frame="icrs").galactic
    pixels = np.sort(hp.cone_search_lonlat(centre.l, centre.b, RADIUS_DEG * u.deg))
    sky = hp.healpix_to_skycoord(pixels).icrs
    ra, dec = sky.ra.deg, sky.dec.deg
    ebv = (brume_av(ra, dec) / R_V).astype(np.float32)
    ebv[_masked(ra, dec)] = HEALPIX_UNSEEN
    table = fits.BinTableHDU.from_columns(
        [
            fits.Column(name="PIXEL", format="K", array=pixels),
            fits.Column(name="EBV", format="E", unit="mag", array=ebv),
        ]
    )
    for key, value, comment in [
        ("PIXTYPE", "HEALPIX", "HEALPix pixelisation"),
        ("ORDERING", "NESTED", "pixel ordering scheme"),
        ("COORDSYS", "G", "galactic coordinates"),
        ("NSIDE", NSIDE, "HEALPix resolution parameter"),
        ("INDXSCHM", "EXPLICIT", "pixel indices in column PIXEL"),
        ("OBJECT", "PARTIAL", "partial sky"),
        ("COMMENT", "Invented E(B-V) of the Brume Field (redcorr demo); not real data.", None),
    ]:
        table.header[key] = value if comment is None else (value, comment)
    return fits.HDUList([fits.PrimaryHDU(), table])


def zea_image():
    n, step = 121, 0.01
    wcs = WCS(naxis=2)
    wcs.wcs.ctype = ["RA---ZEA", "DEC--ZEA"]
    wcs.wcs.crval = [RA0, DEC0]
    wcs.wcs.crpix = [(n + 1) / 2, (n + 1) / 2]
    wcs.wcs.cdelt = [-step, step]
    wcs.wcs.radesys = "ICRS"
    y, x = np.mgrid[0:n, 0:n]
    ra, dec = wcs.pixel_to_world_values(x, y)
    av = brume_av(ra, dec).astype(np.float32)
    av[_masked(ra, dec)] = np.nan
    header = wcs.to_header()
    header["BUNIT"] = "mag"
    header["COMMENT"] = "Invented A_V of the Brume Field (redcorr demo); not real data."
    return fits.HDUList([fits.PrimaryHDU(av, header=header)])


def main(out_dir):
    out_dir = Path(out_dir)
    for name, hdul in [("brume_ebv_healpix.fits", healpix_table()), ("brume_av_zea.fits", zea_image())]:
        with atomic_path(out_dir / name) as tmp:
            hdul.writeto(tmp, overwrite=True)
        print(f"wrote {out_dir / name}")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else Path(__file__).resolve().parent)

"""Write the invented distance-resolved (3D) dust map of the Brume Field.

Everything here is invented for the demo: neither the dust disk below nor
the Brume Cloud exists. Along each sight line the cumulative E(B-V) out to a
distance d is the sum of two parts:

* a thin diffuse disk, dust density falling exponentially with height above
  the Galactic plane, n(z) = n0 exp(-|z|/h) in E(B-V) per pc, with
  n0 = 0.2 mag/kpc and h = 125 pc. At galactic latitude b its integral along
  the line of sight, z = d sin b, is
  E_disk(d) = n0 h / |sin b| (1 - exp(-d |sin b| / h));
* the Brume Cloud, a sheet at 400 pc (Gaussian depth, sigma 20 pc) holding
  the rest of the whole column of the 2D map (demo/make_map.py):
  E_cloud = A_V / R_V - E_disk(infinity), times its cumulative profile
  (1 + erf((d - 400 pc) / (sqrt(2) 20 pc))) / 2.

So a star in front of the cloud sees only the disk, and far beyond it the
map holds the 2D map's whole column (less the disk beyond the last
distance, under 0.001 mag). The bright-star mask of the 2D map is an
artefact of that map's invented data and is not copied here.

Output (in the folder given, default: this folder)
--------------------------------------------------
brume_ebv_3d.fits
    Partial-sky HEALPix table, NSIDE 1024, NESTED, galactic (COORDSYS G),
    explicit PIXEL column, and one vector column EBV (float32) of the
    cumulative E(B-V) at the 30 distances of the second table, DISTANCES
    (column DISTANCE, pc; logarithmically spaced, 50-4000 pc, rounded to
    whole pc). Deterministic: running the script again gives a
    byte-identical file.

Usage: ``python demo/make_map3d.py [OUTDIR]``
"""

import sys
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.coordinates import SkyCoord
from astropy.io import fits
from astropy_healpix import HEALPix
from scipy.special import erf

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))  # this checkout's redcorr
from make_map import DEC0, R_V, RA0, RADIUS_DEG, brume_av  # noqa: E402  (the same invented sky)

from redcorr.io import atomic_path  # noqa: E402

NSIDE = 1024
DISTANCES_PC = np.round(np.geomspace(50.0, 4000.0, 30))
DISK_DENSITY = 0.2e-3  # n0, E(B-V) mag per pc in the plane
DISK_HEIGHT_PC = 125.0  # h, the disk's scale height
CLOUD_PC = 400.0  # the Brume Cloud's distance
CLOUD_DEPTH_PC = 20.0  # its Gaussian sigma along the line of sight


def disk_ebv(distance_pc, b_deg):
    """Cumulative E(B-V) of the thin exponential disk out to ``distance_pc`` at latitude ``b_deg``."""
    sin_b = np.abs(np.sin(np.radians(b_deg)))
    return DISK_DENSITY * DISK_HEIGHT_PC / sin_b * -np.expm1(-np.asarray(distance_pc) * sin_b / DISK_HEIGHT_PC)


def cloud_fraction(distance_pc):
    """Share of the Brume Cloud's column in front of ``distance_pc``."""
    return 0.5 * (1.0 + erf((np.asarray(distance_pc) - CLOUD_PC) / (np.sqrt(2.0) * CLOUD_DEPTH_PC)))


def cumulative_ebv(ra_deg, dec_deg, b_deg, distance_pc):
    """Invented cumulative E(B-V) at ICRS positions (n,) and distances (m,): shape (n, m)."""
    column = brume_av(ra_deg, dec_deg) / R_V  # the 2D map's whole column
    disk_total = DISK_DENSITY * DISK_HEIGHT_PC / np.abs(np.sin(np.radians(b_deg)))
    cloud = column - disk_total
    d = np.asarray(distance_pc)[None, :]
    return disk_ebv(d, np.asarray(b_deg)[:, None]) + cloud[:, None] * cloud_fraction(d)


def healpix_3d_table():
    hp = HEALPix(nside=NSIDE, order="nested", frame="galactic")
    centre = SkyCoord(RA0 * u.deg, DEC0 * u.deg, frame="icrs").galactic
    pixels = np.sort(hp.cone_search_lonlat(centre.l, centre.b, RADIUS_DEG * u.deg))
    gal = hp.healpix_to_skycoord(pixels)
    icrs = gal.icrs
    ebv = cumulative_ebv(icrs.ra.deg, icrs.dec.deg, gal.b.deg, DISTANCES_PC).astype(np.float32)
    n = DISTANCES_PC.size
    table = fits.BinTableHDU.from_columns(
        [
            fits.Column(name="PIXEL", format="K", array=pixels),
            fits.Column(name="EBV", format=f"{n}E", unit="mag", array=ebv),
        ]
    )
    for key, value, comment in [
        ("PIXTYPE", "HEALPIX", "HEALPix pixelisation"),
        ("ORDERING", "NESTED", "pixel ordering scheme"),
        ("COORDSYS", "G", "galactic coordinates"),
        ("NSIDE", NSIDE, "HEALPix resolution parameter"),
        ("INDXSCHM", "EXPLICIT", "pixel indices in column PIXEL"),
        ("OBJECT", "PARTIAL", "partial sky"),
        ("COMMENT", "Invented 3D E(B-V) of the Brume Field (redcorr demo); not real data.", None),
        ("COMMENT", "EBV: cumulative E(B-V) from the Sun to each distance of HDU DISTANCES.", None),
        ("COMMENT", f"A thin disk (n0 {DISK_DENSITY * 1e3:g} mag/kpc, h {DISK_HEIGHT_PC:g} pc) and a cloud at", None),
        ("COMMENT", f"{CLOUD_PC:g} pc (depth sigma {CLOUD_DEPTH_PC:g} pc), by demo/make_map3d.py.", None),
    ]:
        table.header[key] = value if comment is None else (value, comment)
    distances = fits.BinTableHDU.from_columns(
        [fits.Column(name="DISTANCE", format="D", unit="pc", array=DISTANCES_PC)], name="DISTANCES"
    )
    return fits.HDUList([fits.PrimaryHDU(), table, distances])


def main(out_dir):
    path = Path(out_dir) / "brume_ebv_3d.fits"
    with atomic_path(path) as tmp:
        healpix_3d_table().writeto(tmp, overwrite=True)
    print(f"wrote {path}")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else Path(__file__).resolve().parent)

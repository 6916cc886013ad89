"""Demo section: E(B-V) across the Brume Field from the invented map, in both formats."""

import numpy as np

from redcorr.cli._common import print_table
from redcorr.io.maps import open_map
from redcorr.maps import describe_flags

# Positions to show (RA, Dec in degrees, ICRS); chosen by hand inside and around the field.
_PLACES = [
    ("field centre", 101.25, -27.40),
    ("cloud core", 101.385, -27.42),
    ("north-east", 101.60, -27.05),
    ("south-west", 100.90, -27.75),
    ("masked star", 101.55, -27.20),
    ("beyond the map", 102.40, -27.40),
]


def section(scn, demo_dir):
    field, cloud = scn["field"], scn["cloud"]
    healpix = open_map(demo_dir / "brume_ebv_healpix.fits")
    image = open_map(demo_dir / "brume_av_map.toml")
    print(f"## E(B-V) from local dust maps of the {field['name']} (invented)")
    print(
        f"HEALPix table: NSIDE {healpix.nside} {healpix.order}, {healpix.frame.name}, partial sky, E(B-V). "
        f"WCS image: {image.tiles[0].wcs.wcs.ctype[0][5:]} projection, A_V, E(B-V) = A_V / R_V "
        f"with R_V = {image.r_v:g} ({cloud['name']})."
    )
    ra = np.array([p[1] for p in _PLACES])
    dec = np.array([p[2] for p in _PLACES])
    ebv_hp, flag_hp = healpix.reddening_at(ra, dec)
    ebv_im, flag_im = image.reddening_at(ra, dec)
    a_v, _ = image.lookup(ra, dec)
    rows = [
        {
            "position": name,
            "ra_deg": float(r),
            "dec_deg": float(d),
            "ebv_healpix": float(e1),
            "ebv_image": float(e2),
            "A_V_image": float(av),
            "flag": describe_flags(f1 | f2),
        }
        for (name, r, d), e1, e2, av, f1, f2 in zip(_PLACES, ebv_hp, ebv_im, a_v, flag_hp, flag_im, strict=True)
    ]
    print_table(rows, list(rows[0]), formats={"ra_deg": ".3f", "dec_deg": ".3f", "A_V_image": ".2f"})
    print(
        "Both formats agree to the pixel scale; the masked star and positions beyond the map come "
        "back as NaN with a flag, never as a guess. The same from the shell:"
    )
    print("  redcorr ebv --map demo/brume_ebv_healpix.fits --ra 101.25 101.385 --dec -27.40 -27.42 --json")

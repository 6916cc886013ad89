"""Demo section: E(B-V) out to a star's distance, from the invented distance-resolved map of the field."""

import numpy as np

from redcorr.cli._common import print_table
from redcorr.io.maps import open_map
from redcorr.maps import DistanceSamples, describe_flags, edsd_mode

# Invented stars (RA, Dec in degrees, ICRS; distance in pc), chosen by hand around the field centre:
# the invented 3D map puts the Brume Cloud at 400 pc (demo/make_map3d.py).
_STARS = [
    ("in front of the cloud", 101.30, -27.35, 250.0),
    ("behind the cloud", 101.20, -27.45, 800.0),
    ("beyond the map", 101.25, -27.40, 6000.0),
]
# An invented star with a parallax and its error (mas) near the cloud's distance, on the cloud core.
_PARALLAX_STAR = (101.385, -27.42, 2.4, 0.2)


def section(scn, demo_dir):
    field, cloud = scn["field"], scn["cloud"]
    cube = open_map(demo_dir / "brume_ebv_3d.fits")
    flat = open_map(demo_dir / "brume_ebv_healpix.fits")
    d = cube.distances_pc
    print(f"## E(B-V) out to a star's distance: a 3D dust map of the {field['name']} (invented)")
    print(
        f"HEALPix table: NSIDE {cube.nside} {cube.order}, {cube.frame.name}, cumulative E(B-V) at {d.size} "
        f"distances, {d[0]:g}-{d[-1]:g} pc: a thin dust disk and the {cloud['name']} at 400 pc. A star in "
        "front of the cloud is reddened by far less than the 2D map's whole column; one behind it by nearly all."
    )
    ra = np.array([s[1] for s in _STARS])
    dec = np.array([s[2] for s in _STARS])
    dist = np.array([s[3] for s in _STARS])
    ebv_3d, flag_3d = cube.reddening_at(ra, dec, distance=dist)
    ebv_2d, flag_2d = flat.reddening_at(ra, dec)
    rows = [
        {
            "star": name,
            "ra_deg": float(r),
            "dec_deg": float(dc),
            "distance_pc": float(ds),
            "ebv_3d": float(e3),
            "ebv_2d_column": float(e2),
            "flag": describe_flags(f3 | f2),
        }
        for (name, r, dc, ds), e3, e2, f3, f2 in zip(_STARS, ebv_3d, ebv_2d, flag_3d, flag_2d, strict=True)
    ]
    print_table(rows, list(rows[0]), formats={"ra_deg": ".3f", "dec_deg": ".3f", "distance_pc": ".0f"})
    print(
        f"Beyond the map's last distance ({d[-1]:g} pc) the value is the map's last one, flagged "
        "'beyond': a lower limit, since dust farther out is not in the map."
    )
    ra_p, dec_p, plx, plx_err = _PARALLAX_STAR
    samples = DistanceSamples.from_parallax([plx], [plx_err])
    length = samples.length_scale_pc
    mode = float(edsd_mode(plx, plx_err, length))
    ebv, ebv_err, flag = cube.reddening_at([ra_p], [dec_p], distance=samples, return_error=True)
    column, _ = flat.reddening_at([ra_p], [dec_p])
    print(
        f"A star on the cloud core with parallax {plx:g} ± {plx_err:g} mas: distance posterior "
        f"(EDSD prior, Bailer-Jones 2015, length scale {length:g} pc) peaking at {mode:.0f} pc, at the cloud: "
        f"E(B-V) = {float(ebv[0]):.3f} ± {float(ebv_err[0]):.3f} (flag {describe_flags(flag[0])}), the star "
        f"may lie in front of the cloud or behind it; the 2D column there is {float(column[0]):.3f}. "
        "The same from the shell:"
    )
    print("  redcorr ebv --map demo/brume_ebv_3d.fits --ra 101.30 101.20 --dec=-27.35,-27.45 --distance 250 800")
    print("  redcorr ebv --map demo/brume_ebv_3d.fits --ra 101.385 --dec=-27.42 --parallax 2.4 --parallax-err 0.2")

"""Demo section: the cloud's extinction curve against the diffuse one."""

import numpy as np

from redcorr.cli._common import print_table
from redcorr.curves import get_curve


def section(scn, demo_dir):
    cloud, inst = scn["cloud"], scn["instrument"]
    inside = get_curve(cloud["law"], r_v=cloud["r_v"])
    diffuse = get_curve(cloud["diffuse_law"], r_v=cloud["diffuse_r_v"])
    a_v = float(cloud["a_v_typical"])
    centres = np.asarray(inst["band_centre_um"], dtype=float)
    r_in, r_diff = inside(centres), diffuse(centres)
    print(f"## Extinction curves at the {inst['name']} band centres, A_V = {a_v:g} mag")
    print(
        f"Inside the {cloud['name']}: {inside.name} R_V={inside.r_v:g}; "
        f"diffuse foreground: {diffuse.name} R_V={diffuse.r_v:g}."
    )
    rows = [
        {
            "band": band,
            "centre_um": float(c),
            "A/A_V_cloud": float(ri),
            "A/A_V_diffuse": float(rd),
            "A_cloud_mag": float(a_v * ri),
            "A_diffuse_mag": float(a_v * rd),
            "diff_mag": float(a_v * (ri - rd)),
        }
        for band, c, ri, rd in zip(inst["bands"], centres, r_in, r_diff, strict=True)
    ]
    print_table(rows, list(rows[0]), formats={"centre_um": ".3f"})
    worst = max(rows, key=lambda r: abs(r["diff_mag"]))
    print(
        f"Assuming the diffuse R_V inside the cloud would misjudge {worst['band']} by "
        f"{worst['diff_mag']:+.3f} mag at A_V = {a_v:g}."
    )
    print("(Monochromatic values at the band centres; band-integrated values need the filter curves.)")

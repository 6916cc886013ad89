"""Demo section: a grain model of the cloud's grown dust, computed with Mie theory."""

import numpy as np

from redcorr.cli._common import print_table
from redcorr.cli.grain import grain_rows
from redcorr.curves import get_curve
from redcorr.io.grains import default_cache, get_grain_model, read_grain_model


def section(scn, demo_dir):
    cloud, inst = scn["cloud"], scn["instrument"]
    grown = read_grain_model(demo_dir / "brume_grains.toml")
    diffuse = get_grain_model("wd01-rv3.1")
    law = get_curve(cloud["law"], r_v=cloud["r_v"])
    centres = np.asarray(inst["band_centre_um"], dtype=float)
    r_v_grown, rows_grown = grain_rows(grown, centres, cache=default_cache())
    r_v_diffuse, rows_diffuse = grain_rows(diffuse, centres, cache=default_cache())
    print(f"## Grain models for the {cloud['name']} (Mie theory, demo/brume_grains.toml)")
    print(
        f"{grown.name}: R_V = {r_v_grown:.2f} (monochromatic); diffuse {diffuse.name}: "
        f"R_V = {r_v_diffuse:.2f}; the cloud's law {law.name} R_V = {law.r_v:g}."
    )
    rows = [
        {
            "band": band,
            "centre_um": float(c),
            "A/A_V_grown": g["A_over_AV"],
            "A/A_V_diffuse": d["A_over_AV"],
            f"A/A_V_{law.name}": float(law(c)),
            "albedo_grown": g["albedo"],
            "g_grown": g["g"],
        }
        for band, c, g, d in zip(inst["bands"], centres, rows_grown, rows_diffuse, strict=True)
    ]
    print_table(rows, list(rows[0]), formats={"centre_um": ".3f"})
    print(
        "Grown grains flatten the curve: less extra extinction in the blue per magnitude of A_V, "
        "and more forward scattering."
    )

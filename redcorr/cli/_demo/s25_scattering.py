"""Demo section: how the cloud's grains scatter, exact Mie against Henyey–Greenstein."""

import numpy as np

from redcorr.cli._common import print_table
from redcorr.io.grains import default_cache, get_grain_model, read_grain_model
from redcorr.phase import henyey_greenstein

ANGLES_DEG = (0, 10, 30, 60, 90, 135, 180)


def section(scn, demo_dir):
    cloud, inst = scn["cloud"], scn["instrument"]
    band = inst["bands"][1]
    wave = float(inst["band_centre_um"][1])
    theta = np.radians(ANGLES_DEG)
    models = [read_grain_model(demo_dir / "brume_grains.toml"), get_grain_model("wd01-rv3.1")]
    print(f"## Scattering by the {cloud['name']}'s grains at {band} ({wave:g} µm): Mie phase function")
    columns = {"theta_deg": [float(t) for t in ANGLES_DEG]}
    for model in models:
        g = float(model.optics([wave], cache=default_cache()).g[0])
        columns[f"p_{model.name}"] = model.phase_function(wave, theta)
        columns[f"p_HG(g={g:.2f})"] = henyey_greenstein(theta, g)
    rows = [{k: float(v[i]) for k, v in columns.items()} for i in range(len(ANGLES_DEG))]
    print_table(rows, list(columns), formats={"theta_deg": ".0f"})
    print(
        "p in sr⁻¹ (∫ p dΩ = 1). Henyey–Greenstein with the same g matches the exact "
        "population only roughly: check the forward peak and the backscatter before using it."
    )

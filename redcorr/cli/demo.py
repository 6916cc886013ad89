"""``redcorr demo``: the invented Brume Field scenario, end to end.

The demo is a sequence of sections; each takes the parsed scenario and
prints one part of the story. Later capabilities add a section here.
"""

import numpy as np

from redcorr._paths import project_dir
from redcorr.cli._common import print_table
from redcorr.curves import get_curve
from redcorr.io._toml import load_toml

__all__ = ["add_parser", "run", "SECTIONS"]


def add_parser(sub):
    p = sub.add_parser(
        "demo",
        help="run the bundled, invented Brume Field scenario",
        description="Show what redcorr does on the invented Brume Field scenario in demo/.",
    )
    p.set_defaults(func=run)


def _curves_section(scn):
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
        for band, c, ri, rd in zip(inst["bands"], centres, r_in, r_diff)
    ]
    print_table(rows, list(rows[0]), formats={"centre_um": ".3f"})
    worst = max(rows, key=lambda r: abs(r["diff_mag"]))
    print(
        f"Assuming the diffuse R_V inside the cloud would misjudge {worst['band']} by "
        f"{worst['diff_mag']:+.3f} mag at A_V = {a_v:g}."
    )
    print("(Monochromatic values at the band centres; band-integrated values need the filter curves.)")


SECTIONS = [_curves_section]
"""Demo sections, in order; each is ``f(scenario: dict) -> None``."""


def run(args):
    scn = load_toml(project_dir("demo") / "scenario.toml", what="demo scenario")
    print(f"# redcorr demo: the {scn['field']['name']} behind the {scn['cloud']['name']} (invented)\n")
    for section in SECTIONS:
        section(scn)
        print()
    return 0

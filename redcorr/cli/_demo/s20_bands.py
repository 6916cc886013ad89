"""Demo section: the KW-CAM band coefficients toward the Brume Field."""

from redcorr.cli._common import print_table
from redcorr.extinction import band_extinction, band_ratio, effective_wavelength
from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.sed import blackbody

_TEMPERATURES = (4000.0, 6000.0, 15000.0)  # a cool, a Sun-like and a hot star


def section(scn, demo_dir):
    cloud, inst = scn["cloud"], scn["instrument"]
    curve = load_curve(cloud["law"], r_v=cloud["r_v"])
    bands = [load_band(name) for name in inst["bands"]]
    a_typ, a_max = float(cloud["a_v_typical"]), float(cloud["a_v_max"])
    cool, mid, hot = (blackbody(t) for t in _TEMPERATURES)
    print(f"## {inst['name']} band coefficients behind the {cloud['name']} ({curve.name}, R_V = {curve.r_v:g})")
    print("Band-integrated through the (invented) KW-CAM curves in filters/, for blackbody stars.")
    rows = []
    for band in bands:
        rows.append(
            {
                "band": band.name,
                "pivot_um": band.pivot_um,
                "A/A_V(0)": band_ratio(curve, band, mid),
                f"A@{a_typ:g}_4000K": float(band_extinction(curve, band, cool, a_typ)),
                f"A@{a_typ:g}_6000K": float(band_extinction(curve, band, mid, a_typ)),
                f"A@{a_typ:g}_15000K": float(band_extinction(curve, band, hot, a_typ)),
                f"A@{a_max:g}_6000K": float(band_extinction(curve, band, mid, a_max)),
                f"l_eff@{a_max:g}": float(effective_wavelength(curve, band, mid, a_max)),
            }
        )
    print_table(rows, list(rows[0]), formats={"pivot_um": ".3f", f"l_eff@{a_max:g}": ".3f"})
    first = rows[0]
    spread = first[f"A@{a_typ:g}_15000K"] - first[f"A@{a_typ:g}_4000K"]
    linear = first["A/A_V(0)"] * a_max
    print(
        f"At A_V = {a_typ:g} a 15000 K star suffers {spread:.3f} mag more {first['band']} extinction than a "
        f"4000 K star; "
        f"in the cloud's core (A_V = {a_max:g}) a 6000 K star's {first['band']} extinction is "
        f"{first[f'A@{a_max:g}_6000K']:.3f} mag, not the {linear:.3f} mag a single coefficient predicts."
    )
    print("(redcorr coeffs --grid tabulates this over 3000-50000 K and A_V 0-20 for whole catalogs.)")

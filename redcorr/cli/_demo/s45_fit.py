"""Demo section: each star's E(B-V) fitted from its own colours, against the maps of the field."""

import warnings

import numpy as np

from redcorr.cli._common import print_table
from redcorr.io.catalogs import read_catalog
from redcorr.io.correction import fit_dataframe
from redcorr.io.maps import open_map

_BANDS = ["bessell-B", "bessell-V", "bessell-R", "bessell-I", "twomass-J", "twomass-H", "twomass-Ks"]
_SHOW_BEHIND = 2
_SHOW_FRONT = 3


def _fit(stars, cloud, **prior):
    """The fit of every star, and the text of the warning it gave (None if none)."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        out, summary = fit_dataframe(stars, _BANDS, law=cloud["law"], r_v=cloud["r_v"], **prior)
    return out, summary, (str(caught[-1].message) if caught else None)


def section(scn, demo_dir):
    field, cloud = scn["field"], scn["cloud"]
    path = demo_dir / "brume_photometry.csv"
    stars = read_catalog(path)
    print(f"## Each star's reddening from its own photometry ({len(stars)} invented {field['name']} stars)")
    print(
        "BVRI and 2MASS JHKs magnitudes of the same stars (demo/brume_photometry.csv). Their colours are a "
        "dwarf's intrinsic colours (Pecaut & Mamajek 2013 table, packaged) reddened through the bands by the "
        f"law ({cloud['law']}, R_V = {cloud['r_v']:g}): the fit finds E(B-V) and T_eff with the distance "
        "modulus free, star by star, and no map at all."
    )
    out, summary, warned = _fit(stars, cloud)
    flat = open_map(demo_dir / "brume_ebv_healpix.fits")
    column, _ = flat.reddening_at(stars["ra"].to_numpy(), stars["dec"].to_numpy())
    pull = (out["ebv_fit"] - out["ebv_true"]) / out["ebv_fit_err"]
    front = np.flatnonzero((out["distance_true"] < 400.0) & (column > 0.8))[:_SHOW_FRONT]
    behind = np.flatnonzero(out["distance_true"] > 400.0)[:_SHOW_BEHIND]
    rows = [
        {
            "star": s["star"],
            "where": "in front" if s["distance_true"] < 400.0 else "behind",
            "E(B-V)_fit": f"{s['ebv_fit']:.3f} ± {s['ebv_fit_err']:.3f}",
            "T_eff_fit": f"{s['teff_fit']:.0f} ± {s['teff_fit_err']:.0f}",
            "E(B-V)_true": s["ebv_true"],
            "2D_map": float(column[i]),
        }
        for i, s in ((i, out.iloc[i]) for i in np.concatenate([front, behind]))
    ]
    print_table(rows, list(rows[0]), formats={"E(B-V)_true": ".3f", "2D_map": ".3f"})
    print(
        f"Stars in front of the {cloud['name']} (400 pc) keep their small reddening although the 2D map's "
        "whole column there is large: corrected with the map they would be over-corrected by most of it. Over "
        f"all {summary['rows']} stars, (fit - truth) / error has mean {pull.mean():+.2f} and standard deviation "
        f"{pull.std():.2f} (the truth is the invented one in the file)."
    )
    if warned:
        print(f"The fit says: {warned}. Hot stars' colours trade temperature against reddening, so their "
              "posteriors are wide or split; the flags say which.")
    cube = open_map(demo_dir / "brume_ebv_3d.fits")
    prior = dict(prior_map=cube, parallax_column="parallax", parallax_error_column="e_parallax")
    with_prior, _, _ = _fit(stars, cloud, **prior)
    narrower = float(np.median(with_prior["ebv_fit_err"] / out["ebv_fit_err"]))
    print(
        "With the 3D map at each star's parallax distance as a Gaussian prior, the median error of E(B-V) "
        f"shrinks to {narrower:.2f} of the photometry's alone. From the shell (then correct with the fit):"
    )
    bands = " ".join(f"--band {b}" for b in _BANDS)
    print(f"  redcorr fit demo/{path.name} brume_fit.csv --law {cloud['law']} --rv {cloud['r_v']:g} \\")
    print(f"      {bands}")
    print("  redcorr fit ... --prior-map demo/brume_ebv_3d.fits --parallax-col parallax --parallax-err-col e_parallax")
    print("  redcorr correct brume_fit.csv brume_dered.csv --band bessell-V --ebv-col ebv_fit \\")
    print("      --red-err-col ebv_fit_err")

"""Make demo/brume_catalog.csv: an invented catalog of stars in the Brume Field.

Everything here is invented for the demo. 300 stars are scattered within
0.5° of the field centre (demo/scenario.toml); each gets a blackbody
temperature and an intrinsic kw-v magnitude, intrinsic kw-b/kw-r/kw-i from
the blackbody AB colours through the KW-CAM filters, and an E(B-V) from the
invented HEALPix map of the field (demo/brume_ebv_healpix.fits) where it has
a value (0.55 elsewhere). The magnitudes are reddened with redcorr's own
model — the Brume Cloud's law and R_V through the filters, integrated over
the reddened blackbody (:func:`redcorr.extinction.band_extinction`) — and
given Gaussian noise of their quoted errors. The catalog's E(B-V) column
carries noise of its quoted error, 0.03 mag.

Run from the repository root (deterministic; the output is committed)::

    python demo/make_catalog.py
"""

from pathlib import Path

import numpy as np
import pandas as pd

from redcorr.correction import intrinsic_colour
from redcorr.curves import get_curve
from redcorr.extinction import band_extinction
from redcorr.io._toml import load_toml
from redcorr.io.filters import load_band
from redcorr.io.maps import open_map
from redcorr.sed import blackbody

HERE = Path(__file__).resolve().parent
BANDS = ["kw-b", "kw-v", "kw-r", "kw-i"]
N_STARS = 300
EBV_ERROR = 0.03


def make(seed=20261202):
    scn = load_toml(HERE / "scenario.toml", what="demo scenario")
    field, cloud = scn["field"], scn["cloud"]
    rng = np.random.default_rng(seed)
    # positions uniform on the sky within the field radius
    radius = field["radius_deg"] * np.sqrt(rng.uniform(0.0, 1.0, N_STARS))
    angle = rng.uniform(0.0, 2 * np.pi, N_STARS)
    dec = field["dec_deg"] + radius * np.sin(angle)
    ra = field["ra_deg"] + radius * np.cos(angle) / np.cos(np.radians(dec))
    teff = np.exp(rng.uniform(np.log(4000.0), np.log(15000.0), N_STARS))
    v0 = rng.uniform(13.0, 19.0, N_STARS)
    mags0 = {"kw-v": v0}
    for band in ("kw-b", "kw-r", "kw-i"):
        mags0[band] = v0 + intrinsic_colour(load_band(band), load_band("kw-v"), teff)
    ebv, flags = open_map(HERE / "brume_ebv_healpix.fits").lookup(ra, dec)
    ebv = np.where(flags == 0, ebv, 0.55)
    curve = get_curve(cloud["law"], r_v=cloud["r_v"])
    frame = pd.DataFrame({"star": [f"BF-{i + 1:04d}" for i in range(N_STARS)],
                          "ra": np.round(ra, 6), "dec": np.round(dec, 6)})
    for band in BANDS:
        a_band = np.array([band_extinction(curve, load_band(band), blackbody(t), e * cloud["r_v"])
                           for t, e in zip(teff, ebv, strict=True)])
        err = 0.004 + 0.002 * np.exp(0.6 * (mags0[band] - 14.0))
        err = np.minimum(err, 0.2)
        col = band.replace("-", "_")
        frame[col] = np.round(mags0[band] + a_band + rng.normal(0.0, err), 4)
        frame["e_" + col] = np.round(err, 4)
    frame["ebv"] = np.round(ebv + rng.normal(0.0, EBV_ERROR, N_STARS), 4)
    frame["e_ebv"] = EBV_ERROR
    return frame


if __name__ == "__main__":
    out = HERE / "brume_catalog.csv"
    with out.open("w") as fh:
        fh.write("# Brume Field stars observed with Kittiwake 1.3 m / KW-CAM (invented demo data)\n")
        fh.write("# AB magnitudes; E(B-V) from the invented Brume Field map, noise 0.03 mag\n")
        make().to_csv(fh, index=False)
    print(f"wrote {out}")

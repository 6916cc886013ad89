"""Write invented multi-band photometry of Brume Field stars, for the per-star reddening fit.

Everything here is invented for the demo: the stars, their temperatures,
distances, parallaxes and magnitudes, and the dust they lie behind. The
catalog gives the first 200 stars of demo/brume_catalog.csv (the same ids
and positions) a second, independent set of observations.

How the numbers are made (seed 20261203; every draw from one generator)
------------------------------------------------------------------------
1. Sides of the cloud. 50 stars (25 %) lie in front of the Brume Cloud
   (400 pc, depth sigma 20 pc, demo/make_map3d.py), the rest behind. The
   six stars of the largest whole column (the 3D map at its last distance,
   4000 pc: the cloud's core and filament) alternate, the 1st, 3rd and 5th
   in front and the 2nd, 4th and 6th behind, so that the densest part of
   the cloud has stars on both sides: some on the cloud whose own E(B-V)
   is small, some behind its largest column. 47 more front stars are
   picked at random from the other 194.
2. True values, drawn per star: T_eff uniform in ln T over 4000-12000 K
   (dwarfs); a distance d uniform over 80-340 pc in front (3 sigma short of
   the sheet) or uniform in ln d over 460-3000 pc behind. T_eff is rounded
   to 1 K, d to 0.1 pc; the true E(B-V) is the 3D map's cumulative value
   (demo/brume_ebv_3d.fits through redcorr.io.maps.open_map, its default
   interpolation) at the star's RA, Dec and rounded d, rounded to 4 decimals.
   The file's ``teff_true``, ``distance_true`` and ``ebv_true`` are these
   rounded values, and all below is computed from them.
3. Noise-free magnitudes with the per-star fit's own model
   (redcorr.photometric_reddening), for band b in bessell-B, -V, -R, -I and
   twomass-J, -H, -Ks (Vega):

       m_b = M_b(T) + 5 log10(d / 10 pc) + A_b(A_V, T; R_V),

   M_b(T) = ColourLocus.magnitude(T, b) + ColourLocus.absolute_magnitude(T, V)
   of the packaged ``dwarfs`` locus, and A_b = ratio * A_V from
   redcorr.coefficients.coefficient_grid for the cloud's law, f99 at
   R_V = 4.3 (demo/scenario.toml), A_V = R_V E(B-V). The grid's axes are
   the stars' own T_eff and A_V (plus 4000 K, 12000 K and A_V = 0, so that
   each axis has at least the two nodes it needs), and each star takes its
   own node: no interpolation.
4. Magnitude limit. A star whose noise-free V is fainter than 20 is drawn
   again (step 2 on its side of the cloud) until it is brighter, so all 200
   stars are kept and none is fainter than V = 20; this favours hot and
   near stars behind the cloud's core, as a magnitude limit does.
5. Noise. Each magnitude gets two Gaussian errors: an intrinsic scatter of
   0.015 mag (stars about the mean locus; not in the error column) and a
   photometric error growing with the band's own noise-free magnitude,

       e_b = max(0.005, 0.01 * 5 ** ((m_b - 14) / 5))  mag,

   0.01 mag at 14, 0.05 at 19, 0.11 at 21.5, rounded to 4 decimals. The
   ``e_*mag`` columns give e_b alone. The parallax's error is uniform over
   0.02-0.1 mas (rounded to 3 decimals); the parallax is 1000 / d (mas, d
   in pc) plus Gaussian noise of that error, rounded to 4 decimals.
   Magnitudes are rounded to 4 decimals.

Output (in the folder given, default: this folder)
--------------------------------------------------
brume_photometry.csv
    ``#`` comment lines, then the columns star, ra, dec (from
    demo/brume_catalog.csv), parallax, e_parallax (mas), Bmag, e_Bmag,
    Vmag, e_Vmag, Rmag, e_Rmag, Imag, e_Imag, Jmag, e_Jmag, Hmag, e_Hmag,
    Kmag, e_Kmag (mag; names as in VizieR, so redcorr guesses the bands),
    and the invented truth teff_true (K), distance_true (pc), ebv_true
    (mag). Deterministic: running the script again gives a byte-identical
    file.

Usage: ``python demo/make_photometry.py [OUTDIR]``
"""

import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))  # this checkout's redcorr
from redcorr.coefficients import coefficient_grid  # noqa: E402
from redcorr.io import atomic_path  # noqa: E402
from redcorr.io._toml import load_toml  # noqa: E402
from redcorr.io.curves import load_curve  # noqa: E402
from redcorr.io.filters import load_band  # noqa: E402
from redcorr.io.intrinsic import load_intrinsic_colours  # noqa: E402
from redcorr.io.maps import open_map  # noqa: E402

HERE = Path(__file__).resolve().parent
SEED = 20261203
N_STARS = 200
N_FRONT = 50  # 25 % in front of the cloud
N_ON_CORE = 3  # of them, the 1st, 3rd, 5th of largest whole column (2nd, 4th, 6th behind)
BANDS = {"B": "bessell-B", "V": "bessell-V", "R": "bessell-R", "I": "bessell-I",
         "J": "twomass-J", "H": "twomass-H", "K": "twomass-Ks"}  # column letter -> project band
TEFF_K = (4000.0, 12000.0)
FRONT_PC = (80.0, 340.0)
BEHIND_PC = (460.0, 3000.0)
V_LIMIT = 20.0
SCATTER = 0.015  # intrinsic scatter about the locus, mag
PARALLAX_ERROR_MAS = (0.02, 0.1)
HEADER = (
    "# Brume Field stars: invented multi-band photometry (redcorr demo; not real data), "
    "made by demo/make_photometry.py\n"
    "# Vega mag: Bmag..Imag bessell-B/V/R/I, Jmag/Hmag/Kmag twomass-J/H/Ks; e_*: photometric error only "
    "(a further 0.015 mag scatter is in the magnitudes); parallax in mas\n"
    "# teff_true (K), distance_true (pc), ebv_true (mag): the invented truth; dust f99, R_V 4.3\n"
)


def photometric_error(mag):
    """The invented photometric error (mag) of a magnitude: 0.01 at 14, 0.05 at 19, at least 0.005."""
    return np.maximum(0.005, 0.01 * 5.0 ** ((np.asarray(mag) - 14.0) / 5.0))


def model_magnitudes(locus, curve, bands, teff, distance_pc, ebv):
    """Noise-free magnitudes (n, n_band) of the per-star fit's model at true T_eff, distance and E(B-V)."""
    names = [b.name for b in bands]
    intrinsic = locus.magnitude(teff, names) + locus.absolute_magnitude(teff, "bessell-V")[:, None]
    a_v = curve.r_v * ebv
    temps, it = np.unique(np.r_[teff, TEFF_K], return_inverse=True)
    avs, ia = np.unique(np.r_[a_v, 0.0], return_inverse=True)
    grid = coefficient_grid(curve, bands, temps, avs)
    a_b = grid.ratio[:, it[: teff.size], ia[: teff.size]].T * a_v[:, None]  # each star's own node
    return intrinsic + 5.0 * np.log10(distance_pc / 10.0)[:, None] + a_b


def make(seed=SEED):
    scn = load_toml(HERE / "scenario.toml", what="demo scenario")
    curve = load_curve(scn["cloud"]["law"], r_v=scn["cloud"]["r_v"])
    bands = [load_band(b) for b in BANDS.values()]
    locus = load_intrinsic_colours("dwarfs")
    cube = open_map(HERE / "brume_ebv_3d.fits")
    stars = pd.read_csv(HERE / "brume_catalog.csv", comment="#").iloc[:N_STARS]
    ra, dec = stars["ra"].to_numpy(), stars["dec"].to_numpy()
    rng = np.random.default_rng(seed)

    column, flags = cube.reddening_at(ra, dec, distance=cube.distances_pc[-1])
    assert np.all(flags == 0)
    densest = np.argsort(-column, kind="stable")[: 2 * N_ON_CORE]
    others = rng.permutation(np.setdiff1d(np.arange(N_STARS), densest))
    front = np.zeros(N_STARS, bool)
    front[np.r_[densest[::2], others[: N_FRONT - N_ON_CORE]]] = True

    teff, dist, ebv = np.empty(N_STARS), np.empty(N_STARS), np.empty(N_STARS)
    mags = np.empty((N_STARS, len(bands)))
    todo = np.arange(N_STARS)
    while todo.size:  # step 4: draw again where V comes out fainter than the limit
        n = todo.size
        teff[todo] = np.round(np.exp(rng.uniform(*np.log(TEFF_K), n)))
        near = rng.uniform(*FRONT_PC, n)
        far = np.exp(rng.uniform(*np.log(BEHIND_PC), n))
        dist[todo] = np.round(np.where(front[todo], near, far), 1)
        e, flags = cube.reddening_at(ra[todo], dec[todo], distance=dist[todo])
        assert np.all(flags == 0)
        ebv[todo] = np.round(e, 4)
        mags[todo] = model_magnitudes(locus, curve, bands, teff[todo], dist[todo], ebv[todo])
        todo = todo[mags[todo, list(BANDS).index("V")] > V_LIMIT]

    err = np.round(photometric_error(mags), 4)
    observed = mags + rng.normal(0.0, SCATTER, mags.shape) + rng.normal(0.0, err)
    e_plx = np.round(rng.uniform(*PARALLAX_ERROR_MAS, N_STARS), 3)
    plx = np.round(1000.0 / dist + rng.normal(0.0, e_plx), 4)

    frame = pd.DataFrame({"star": stars["star"], "ra": ra, "dec": dec, "parallax": plx, "e_parallax": e_plx})
    for k, letter in enumerate(BANDS):
        frame[f"{letter}mag"] = np.round(observed[:, k], 4)
        frame[f"e_{letter}mag"] = err[:, k]
    frame["teff_true"] = teff.astype(int)
    frame["distance_true"] = dist
    frame["ebv_true"] = ebv
    return frame


def main(out_dir):
    path = Path(out_dir) / "brume_photometry.csv"
    frame = make()
    with atomic_path(path) as tmp, open(tmp, "w", newline="") as fh:
        fh.write(HEADER)
        frame.to_csv(fh, index=False, lineterminator="\n")
    print(f"wrote {path}")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else HERE)

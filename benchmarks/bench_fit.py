"""Benchmark: fitting each star's reddening against correcting the same stars, both through the file.

Targets: N stars x 6 bands, R_V fixed, the fit <= 20x the time of `redcorr correct` on the same
file (CSV -> CSV, stream engine, redcorr.io.batch.correct_file), measured in the same run; R_V free
(2.3-5.5, f99's observed span) <= 3x R_V fixed. Each run is what the command does: options built
from names (the packaged "dwarfs" table, f99), the fit's grid built once per run (timed with the
run; also printed apart), the file read, fitted or corrected in chunks and written with its
summary. Times are the best of --repeat rounds, the cases taking turns in each round.

Threads: the fit's kernel runs its stars on numba's threads (all cores unless --threads or
NUMBA_NUM_THREADS says otherwise); the correction computes in one thread (numpy), only pyarrow's
CSV reading may use more. --threads 1 compares one with one.

    python benchmarks/bench_fit.py [--rows 20000] [--repeat 3] [--threads N] [--locus dwarfs|blackbody]

The stars are invented: dwarfs of the packaged intrinsic-colour table (Pecaut & Mamajek 2013),
T_eff uniform in ln T over 3000-30000 K, behind E(B-V) uniform in 0-1.5 (f99, R_V 3.1; extinction
of a blackbody at T_eff, as the fit's model), at distance moduli 8-13, errors uniform 0.01-0.05 mag
and scattered by them and a 0.02-mag floor, in B, V, Rc, Ic, J and Ks. ``--locus blackbody`` fits
blackbody colours instead: in these bands a blackbody's colours change with T_eff almost along the
reddening vector, so the posteriors span much of the grid (a worst case for the fit's pruning).
"""

import argparse
import json
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.csv as pacsv

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

BANDS = ["bessell-B", "bessell-V", "bessell-R", "bessell-I", "twomass-J", "twomass-Ks"]


def blackbody_locus(bands, teff):
    """A ColourLocus of blackbodies (AB magnitudes relative to the second band) at ``teff``."""
    from redcorr.intrinsic import ColourLocus
    from redcorr.photometry import synthetic_ab
    from redcorr.sed import blackbody

    mags = np.array([[synthetic_ab(blackbody(t), b) for b in bands] for t in teff])
    return ColourLocus(teff, mags, [b.name for b in bands], reference=bands[1].name, name="blackbodies")


def make_stars(n, locus, seed=0):
    """Magnitudes, errors and true E(B-V) of n invented stars on ``locus`` (a ColourLocus of BANDS)."""
    from redcorr.coefficients import coefficient_grid
    from redcorr.curves import get_curve
    from redcorr.io.filters import load_band

    bands = [load_band(b) for b in BANDS]
    rng = np.random.default_rng(seed)
    teff = np.exp(rng.uniform(np.log(3000.0), np.log(30000.0), n))
    ebv = rng.uniform(0.0, 1.5, n)
    truth = coefficient_grid(get_curve("f99", r_v=3.1), bands, np.geomspace(3000.0, 30000.0, 100),
                             np.linspace(0.0, 5.0, 51))
    intrinsic = np.stack([locus.magnitude(teff, b) for b in BANDS], axis=1)
    err = rng.uniform(0.01, 0.05, (n, len(bands)))
    noise = rng.normal(size=err.shape) * np.hypot(err, 0.02)
    mags = rng.uniform(8.0, 13.0, (n, 1)) + intrinsic + truth.a_band(3.1 * ebv, teff) + noise
    return mags, err, ebv


def best_of(cases, repeat):
    """Fastest of ``repeat`` timings of each case, the cases taking turns within each round."""
    best = dict.fromkeys(cases, float("inf"))
    for _ in range(repeat):
        for name, fn in cases.items():
            t0 = time.perf_counter()
            fn()
            best[name] = min(best[name], time.perf_counter() - t0)
    return best


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=20000)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--threads", type=int, default=None, help="numba threads of the fit (default: numba's)")
    parser.add_argument("--locus", choices=("dwarfs", "blackbody"), default="dwarfs")
    args = parser.parse_args()
    import numba

    if args.threads:
        numba.set_num_threads(args.threads)
    from redcorr.correction import CatalogFit, Correction
    from redcorr.io.batch import correct_file
    from redcorr.io.correction import correction_options, fit_options
    from redcorr.io.filters import load_band
    from redcorr.io.intrinsic import load_intrinsic_colours

    dwarfs = load_intrinsic_colours("dwarfs").subset(BANDS)
    locus = dwarfs if args.locus == "dwarfs" else blackbody_locus([load_band(b) for b in BANDS],
                                                                   np.geomspace(3000.0, 30000.0, 40))
    mags, err, ebv = make_stars(args.rows, locus)
    cols = {"id": np.arange(args.rows)}
    columns = {}
    for k, band in enumerate(BANDS):
        col = band.replace("-", "_")
        cols[col], cols["e_" + col] = mags[:, k], err[:, k]
        columns[band] = col
    cols["ebv"], cols["e_ebv"] = ebv, np.full(args.rows, 0.02)
    errors = {b: "e_" + c for b, c in columns.items()}
    warnings.simplefilter("ignore")
    fixed = fit_options(BANDS, law="f99", r_v=3.1, colours=locus, mag_columns=columns, err_columns=errors)
    free = fit_options(BANDS, law="f99", r_v_range=(2.3, 5.5), colours=locus, mag_columns=columns,
                       err_columns=errors)
    correction = correction_options(BANDS, law="f99", r_v=3.1, mag_columns=columns, err_columns=errors)
    with tempfile.TemporaryDirectory() as tmpdir:
        src = Path(tmpdir) / "in.csv"
        pacsv.write_csv(pa.table(cols), src)
        grid_s = {}

        def run(make_job, name):
            def go():
                dst = Path(tmpdir) / f"{name}.csv"
                correct_file(src, dst, make_job, overwrite=True)
            return go

        def timed_fit(options, name):
            def make(columns):
                t0 = time.perf_counter()
                job = CatalogFit(columns, options)
                grid_s[name] = time.perf_counter() - t0
                return job
            return make

        run(lambda c: Correction(c, correction), "correct")()  # warm the caches and the numba kernels,
        run(timed_fit(fixed, "fixed"), "fixed")()  # as a long run would
        res = best_of({"correct_s": run(lambda c: Correction(c, correction), "correct"),
                       "fit_fixed_s": run(timed_fit(fixed, "fixed"), "fixed"),
                       "fit_free_s": run(timed_fit(free, "free"), "free")}, args.repeat)
    res.update(rows=args.rows, locus=args.locus, fit_threads=numba.get_num_threads(),
               grid_fixed_s=grid_s["fixed"], grid_free_s=grid_s["free"],
               fixed_over_correct=res["fit_fixed_s"] / res["correct_s"],
               free_over_fixed=res["fit_free_s"] / res["fit_fixed_s"])
    print(f"{args.rows:,} stars x {len(BANDS)} bands ({args.locus} locus); best of {args.repeat}; "
          f"CSV -> CSV through the stream engine, {res['fit_threads']} numba thread(s) for the fit")
    print(f"redcorr correct: {res['correct_s']:.2f} s")
    print(f"redcorr fit, R_V fixed: {res['fit_fixed_s']:.2f} s, ratio to correct {res['fixed_over_correct']:.1f}"
          " (target <= 20)")
    print(f"redcorr fit, R_V free:  {res['fit_free_s']:.2f} s, ratio to fixed {res['free_over_fixed']:.2f}"
          " (target <= 3)")
    print(f"of which the grid (once per run): fixed {grid_s['fixed']:.2f} s, free {grid_s['free']:.2f} s")
    print(json.dumps(res))


if __name__ == "__main__":
    main()

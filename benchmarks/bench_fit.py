"""Benchmark: fitting each star's reddening against correcting the same stars (stream engine).

Targets (issue 16): N stars x 6 bands, R_V fixed, fit <= 20x the time of `redcorr correct` on the
same N stars (CSV -> CSV through redcorr.io.batch.correct_file, the stream engine, measured in the
same run); R_V free (2.3-5.5, f99's observed span) <= 3x R_V fixed. Times are the best of
--repeat rounds, the cases taking turns in each round. The grid (built once per call, as a run would) is timed apart.

What is timed: the fit is ReddeningFitGrid.fit on the stars' arrays in memory (no file reading or
writing; `redcorr fit`, redcorr.correction.fit, calls the same method on each chunk of a file); the
correction is correct_file, CSV in and out. Threads: the fit's kernel runs its stars on numba's
threads (all cores unless --threads or NUMBA_NUM_THREADS says otherwise); the correction computes
in one thread (numpy), only pyarrow's CSV reading may use more. --threads 1 compares one with one.

    python benchmarks/bench_fit.py [--rows 20000] [--repeat 3] [--threads N]

The stars are invented: blackbody locus stars (3000-30000 K, uniform in ln T) behind E(B-V) uniform
in 0-1.5 (f99, R_V = 3.1), errors uniform 0.01-0.05 mag, in the kw-b/v/r/i/z bands and twomass-J.
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

BANDS = ["kw-b", "kw-v", "kw-r", "kw-i", "kw-z", "twomass-J"]


def make_stars(n, seed=0):
    """Magnitudes, errors and the grid inputs of n invented locus stars."""
    from redcorr.coefficients import coefficient_grid
    from redcorr.curves import get_curve
    from redcorr.io.filters import load_band
    from redcorr.photometry import synthetic_ab
    from redcorr.sed import blackbody

    bands = [load_band(b) for b in BANDS]
    locus_t = np.geomspace(3000.0, 30000.0, 40)
    locus = np.array([[synthetic_ab(blackbody(t), b) for b in bands] for t in locus_t])
    rng = np.random.default_rng(seed)
    teff = np.exp(rng.uniform(np.log(3000.0), np.log(30000.0), n))
    ebv = rng.uniform(0.0, 1.5, n)
    truth = coefficient_grid(get_curve("f99", r_v=3.1), bands, np.geomspace(3000.0, 30000.0, 100),
                             np.linspace(0.0, 5.0, 51))
    intrinsic = np.array([np.interp(np.log(teff), np.log(locus_t), locus[:, b]) for b in range(len(bands))]).T
    err = rng.uniform(0.01, 0.05, (n, len(bands)))
    mags = 15.0 + intrinsic + truth.a_band(3.1 * ebv, teff) + rng.normal(size=err.shape) * np.hypot(err, 0.02)
    return bands, locus_t, locus, mags, err, ebv


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
    args = parser.parse_args()
    import numba

    if args.threads:
        numba.set_num_threads(args.threads)
    from redcorr.correction import Correction
    from redcorr.curves import get_curve
    from redcorr.io.batch import correct_file
    from redcorr.io.correction import correction_options
    from redcorr.photometric_reddening import ReddeningFitGrid

    bands, locus_t, locus, mags, err, ebv = make_stars(args.rows)
    cols = {"id": np.arange(args.rows)}
    for k, band in enumerate(BANDS):
        col = band.replace("-", "_")
        cols[col], cols["e_" + col] = mags[:, k], err[:, k]
    cols["ebv"], cols["e_ebv"] = ebv, np.full(args.rows, 0.02)
    warnings.simplefilter("ignore")
    t0 = time.perf_counter()
    fixed = ReddeningFitGrid(bands, locus_t, locus, get_curve("f99", r_v=3.1))
    grid_fixed_s = time.perf_counter() - t0
    t0 = time.perf_counter()
    free = ReddeningFitGrid(bands, locus_t, locus, lambda r: get_curve("f99", r_v=r), r_v_range=(2.3, 5.5))
    grid_free_s = time.perf_counter() - t0
    fixed.fit(mags[:10], err[:10])  # compile or load the numba kernels once
    with tempfile.TemporaryDirectory() as tmpdir:
        src, dst = Path(tmpdir) / "in.csv", Path(tmpdir) / "out.csv"
        pacsv.write_csv(pa.table(cols), src)

        def correct():
            if dst.exists():
                dst.unlink()
                Path(str(dst) + ".summary.json").unlink()
            correct_file(src, dst, lambda c: Correction(c, correction_options(BANDS)))

        correct()  # warm the filter and coefficient caches, as a long run would
        res = best_of({"correct_s": correct, "fit_fixed_s": lambda: fixed.fit(mags, err),
                       "fit_free_s": lambda: free.fit(mags, err)}, args.repeat)
    res.update(rows=args.rows, fit_threads=numba.get_num_threads(), grid_fixed_s=grid_fixed_s, grid_free_s=grid_free_s,
               fixed_over_correct=res["fit_fixed_s"] / res["correct_s"],
               free_over_fixed=res["fit_free_s"] / res["fit_fixed_s"])
    print(f"{args.rows:,} stars x {len(BANDS)} bands; best of {args.repeat}")
    print(f"redcorr correct (correct_file, CSV -> CSV, one compute thread): {res['correct_s']:.2f} s")
    print(f"fit: ReddeningFitGrid.fit on arrays in memory, {res['fit_threads']} numba thread(s), grid built before")
    print(f"fit, R_V fixed: {res['fit_fixed_s']:.2f} s, ratio to correct {res['fixed_over_correct']:.1f}"
          " (target <= 20)")
    print(f"fit, R_V free:  {res['fit_free_s']:.2f} s, ratio to fixed {res['free_over_fixed']:.1f} (target <= 3)")
    print(f"grids (once per run): fixed {grid_fixed_s:.2f} s, free {grid_free_s:.2f} s")
    print(json.dumps(res))


if __name__ == "__main__":
    main()

"""Time the exposure planner's time-vs-A_V table against the band extinction it rests on.

Baseline, measured in the same run: ``band_extinction`` for the same five demo
bands on the same A_V grid (the part the planner cannot avoid). The ratio
printed is planner time / baseline time (best of several runs each); a ratio
near 1 means the CCD-equation layer adds little.

Run: ``python benchmarks/bench_plan.py [N_AV]``
"""

import sys
import timeit

import numpy as np

from redcorr.exposure import time_vs_av
from redcorr.extinction import band_extinction
from redcorr.io import load_curve
from redcorr.io.instrument import load_instrument
from redcorr.io.spectra import load_sed


def best(fn, repeat=5):
    return min(timeit.repeat(fn, number=1, repeat=repeat))


def main(n_av=10_000):
    inst = load_instrument("demo")
    curve, sed = load_curve("f99", r_v=4.3), load_sed("blackbody:5800")
    grid = np.linspace(0.0, 10.0, n_av)
    bands = inst.band_names
    base = best(lambda: [band_extinction(curve, inst.channel(b).band, sed, grid) for b in bands])
    plan = best(lambda: time_vs_av(inst, bands, 19.0, curve=curve, sed=sed, a_v=grid, snr=50.0))
    print(f"baseline: band_extinction, {len(bands)} bands x {n_av:,} A_V values: {base * 1e3:.1f} ms")
    print(f"time_vs_av, same grid: {plan * 1e3:.1f} ms, ratio {plan / base:.2f}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 10_000)

"""Time the exposure planner against the band extinction it rests on.

Two measurements, each against a baseline measured in the same run (best of
several runs each):

* the time-vs-A_V table (``time_vs_av``) against ``band_extinction`` for the
  same five demo bands on the same A_V grid (the part the planner cannot
  avoid); a ratio near 1 means the CCD-equation layer adds little;
* a target list (``plan_targets``): N targets (default 100,000) with invented
  spectral types of the dwarfs table, magnitudes in random demo bands and
  random A_V, planned in all five bands, against ``band_extinction`` for one
  spectrum on an A_V grid of the same size in the same bands. The target is a
  ratio of at most 10: the list adds the colours and the band extinction per
  distinct spectrum, and the CCD equation.

Run: ``python benchmarks/bench_plan.py [N_AV [N_TARGETS]]``
"""

import sys
import timeit

import numpy as np

from redcorr.exposure import time_vs_av
from redcorr.extinction import band_extinction
from redcorr.io import load_curve, load_intrinsic_colours
from redcorr.io.instrument import load_instrument
from redcorr.io.spectra import load_sed
from redcorr.sed import blackbody
from redcorr.target_plan import plan_targets


def best(fn, repeat=5):
    return min(timeit.repeat(fn, number=1, repeat=repeat))


def main(n_av=10_000, n_targets=100_000):
    inst = load_instrument("demo")
    curve, sed = load_curve("f99", r_v=4.3), load_sed("blackbody:5800")
    grid = np.linspace(0.0, 10.0, n_av)
    bands = inst.band_names
    base = best(lambda: [band_extinction(curve, inst.channel(b).band, sed, grid) for b in bands])
    plan = best(lambda: time_vs_av(inst, bands, 19.0, curve=curve, sed=sed, a_v=grid, snr=50.0))
    print(f"baseline: band_extinction, {len(bands)} bands x {n_av:,} A_V values: {base * 1e3:.1f} ms")
    print(f"time_vs_av, same grid: {plan * 1e3:.1f} ms, ratio {plan / base:.2f}")

    rng = np.random.default_rng(7)
    dwarfs = load_intrinsic_colours("dwarfs")
    types = [s for s, t in zip(dwarfs.labels, dwarfs.teff, strict=True) if 2500.0 <= t <= 30000.0]
    spectra = {s: blackbody(dwarfs.teff_of(s)) for s in types}  # one object per type, as the io edge makes
    sed_of = [spectra[s] for s in rng.choice(types, n_targets)]
    band_of = [inst.channel(b).band for b in rng.choice(bands, n_targets)]
    mags = rng.uniform(14.0, 22.0, n_targets)
    a_v = rng.uniform(0.0, 6.0, n_targets)
    av_grid = np.linspace(0.0, 6.0, n_targets)

    def targets():
        plan_targets(inst, bands, mags, mag_band=band_of, sed=sed_of, a_v=a_v, curve=curve, snr=50.0,
                     max_time=3600.0)

    base = best(lambda: [band_extinction(curve, inst.channel(b).band, sed, av_grid) for b in bands], repeat=3)
    many = best(targets, repeat=3)
    print(f"baseline: band_extinction, {len(bands)} bands x {n_targets:,} A_V values: {base * 1e3:.1f} ms")
    print(f"plan_targets, {n_targets:,} targets ({len(types)} spectral types) x {len(bands)} bands: "
          f"{many * 1e3:.1f} ms, ratio {many / base:.2f} (target <= 10)")


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:3]))

"""Benchmark: building a WD01 grain-model curve, cold and cached.

Targets (issue 3): a WD01 curve on 200 wavelengths with ~150 sizes per
component in <= 5 s cold (empty cache) and <= 50 ms cached. The baseline,
measured in the same run, is one redcorr.mie.sphere() call of the same total size
(every wavelength x size x optical-constant table the model evaluates), with
the same size parameters and refractive indices.

Run from the repository root:  python benchmarks/bench_grain.py [MODEL]
"""

import math
import os
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import numpy as np  # noqa: E402

from redcorr.grains import DEFAULT_WAVE_UM  # noqa: E402
from redcorr.io.grains import CACHE_ENV, default_cache, get_grain_model  # noqa: E402
from redcorr.mie import sphere  # noqa: E402


def best(fn, repeat):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def baseline_inputs(model, wave_um):
    """The (m, x) pairs the model's Mie calls evaluate, flattened into one call."""
    ms, xs = [], []
    for comp in model.components:
        a, _ = comp.radii()
        for mask, parts in comp.material.pieces(a):
            x = 2 * math.pi * a[mask][None, :] / wave_um[:, None]
            for _, table in parts:
                m = np.broadcast_to(table(wave_um)[:, None], x.shape)
                ms.append(m.ravel())
                xs.append(x.ravel())
    return np.concatenate(ms), np.concatenate(xs)


def main(name="wd01-rv3.1"):
    wave = DEFAULT_WAVE_UM
    model = get_grain_model(name)
    sphere(1.5 + 0.01j, [0.1, 1.0])  # compile / warm the kernel outside the timings
    with tempfile.TemporaryDirectory() as tmp:
        os.environ[CACHE_ENV] = tmp
        m, x = baseline_inputs(model, np.union1d(wave, [0.44, 0.55]))
        t_mie = best(lambda: sphere(m, x), 3)

        def cold():
            for f in Path(tmp).rglob("*.npz"):
                f.unlink()
            get_grain_model(name).curve(cache=default_cache())

        t_cold = best(cold, 3)
        get_grain_model(name).curve(cache=default_cache())
        t_hot = best(lambda: get_grain_model(name).curve(cache=default_cache()), 10)
    sizes = [c.n_sizes for c in model.components]
    print(f"model {name}: {wave.size + 2} wavelengths, sizes per component {sizes}, {m.size} Mie evaluations")
    print(f"baseline: one sphere() call of {m.size} (m, x) pairs   {t_mie * 1e3:9.1f} ms")
    print(f"cold build (empty cache)                       {t_cold * 1e3:9.1f} ms  "
          f"= {t_cold / t_mie:5.2f} x baseline   (target <= 5000 ms)")
    print(f"cached build (model + curve from disk cache)   {t_hot * 1e3:9.1f} ms  "
          f"= {t_hot / t_mie:5.3f} x baseline   (target <= 50 ms)")
    print(f"targets met: cold {'yes' if t_cold <= 5 else 'NO'}, cached {'yes' if t_hot <= 0.05 else 'NO'}")


if __name__ == "__main__":
    main(*sys.argv[1:])

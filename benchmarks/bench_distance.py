"""Time the distance distributions of redcorr.maps.distance for many stars.

Target (issue 15): 10⁶ parallaxes turned into distance posteriors (EDSD prior) in a few seconds.
Baseline, measured in the same run: what any builder of n × m weighted nodes must at least do —
fill the (n, m) nodes and weights arrays and evaluate one ``numpy.exp`` per node, i.e.
``w = np.exp(a[:, None] * t)`` then ``w / w.sum(axis=1)`` over arrays of the same shape. The ratios
printed are (redcorr's time) / (baseline time), best of ``--repeat`` runs each. ``edsd_mode``
alone (the closed-form cubic, one value per star) is timed too.

Memory: nodes and weights take 16·m bytes per star (1 GB for 10⁶ stars at m = 64), so the default
is 2·10⁵ stars; callers correct catalogs in chunks of rows.

Run: ``python benchmarks/bench_distance.py [--rows N] [--nodes M] [--repeat K]``
"""

import argparse
import timeit

import numpy as np

from redcorr.maps.distance import DistanceSamples, edsd_mode


def best(fn, repeat):
    return min(timeit.repeat(fn, number=1, repeat=repeat))


def baseline(a, m):
    w = np.exp(a[:, None] * np.linspace(0.0, 1.0, m))
    return a[:, None] * np.linspace(0.0, 1.0, m), w / w.sum(axis=1, keepdims=True)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=200_000)
    parser.add_argument("--nodes", type=int, default=64)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args(argv)
    n, m = args.rows, args.nodes
    rng = np.random.default_rng(15)
    plx = rng.uniform(-1.0, 10.0, n)  # mas: negative to nearby stars
    err = rng.uniform(0.01, 1.0, n)  # mas: fractional errors from 0.1 % to beyond 100 %
    dist = rng.uniform(10.0, 5000.0, n)
    dist_err = 0.2 * dist
    t_base = best(lambda: baseline(-np.abs(plx), m), args.repeat)
    t_edsd = best(lambda: DistanceSamples.from_parallax(plx, err, n_nodes=m), args.repeat)
    t_gauss = best(lambda: DistanceSamples.gaussian(dist, dist_err, n_nodes=m), args.repeat)
    t_mode = best(lambda: edsd_mode(plx, err), args.repeat)
    print(f"{n:,} stars, {m} nodes each")
    print(f"baseline (exp + normalise on ({n}, {m})): {t_base * 1e3:8.1f} ms")
    print(f"from_parallax (EDSD):                  {t_edsd * 1e3:8.1f} ms  ratio {t_edsd / t_base:6.1f}  "
          f"-> {t_edsd * 1e6 / n:.1f} s per 10^6 stars")
    print(f"gaussian:                              {t_gauss * 1e3:8.1f} ms  ratio {t_gauss / t_base:6.1f}")
    print(f"edsd_mode (one value per star):        {t_mode * 1e3:8.1f} ms")


if __name__ == "__main__":
    main()

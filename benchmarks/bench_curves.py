"""Time evaluating every registered law on 10⁶ wavelengths.

Baseline, measured in the same run: a plain numpy evaluation of a
degree-7 polynomial (the CCM89 optical polynomial's size) on the same
10⁶ values with ``numpy.polynomial.polynomial.polyval``. The ratio printed
is law time / baseline time (best of several runs each).

Run: ``python benchmarks/bench_curves.py [N]``
"""

import sys
import timeit

import numpy as np
from numpy.polynomial import polynomial as P

from redcorr.curves import LAWS, get_curve


def best(fn, repeat=7):
    return min(timeit.repeat(fn, number=1, repeat=repeat))


def main(n=1_000_000):
    rng = np.random.default_rng(1)
    coeffs = np.arange(1.0, 9.0)
    x_opt = rng.uniform(1.1, 3.3, n)
    base = best(lambda: P.polyval(x_opt - 1.82, coeffs))
    print(f"baseline: numpy polyval, degree 7, {n:,} values: {base * 1e3:.1f} ms")
    print(f"{'law':<20} {'ms':>8} {'ratio':>7}")
    for name in sorted(LAWS):
        curve = get_curve(name)
        lo, hi = curve.wavenumber_limits
        wave = 1.0 / rng.uniform(lo, hi, n)
        t = best(lambda curve=curve, wave=wave: curve(wave))
        print(f"{name:<20} {t * 1e3:8.1f} {t / base:7.2f}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000)

"""Time the coefficient grid: 50 bands × 30 temperatures × 40 A_V.

Target (issue 4): at most 1 s on a laptop core. Baseline, measured in the
same run: one ``numpy.trapezoid`` over an array of the same total size,
n_band × n_T × n_AV × n_wave, with n_wave the padded number of wavelength
nodes per band the grid uses (i.e. what a single fused integration of the
whole cube would cost, without evaluating anything). The ratio printed is
grid time / baseline time (best of several runs each). A single-band
``band_extinction`` on a catalog-sized A_V array and a grid lookup for
10⁶ stars are timed too.

Run: ``python benchmarks/bench_coeffs.py``
"""

import timeit

import numpy as np

from redcorr.bandpass import gaussian, tophat
from redcorr.coefficients import coefficient_grid
from redcorr.curves import get_curve
from redcorr.extinction import band_quadrature
from redcorr.io.filters import list_bands, load_band


def best(fn, repeat=5):
    return min(timeit.repeat(fn, number=1, repeat=repeat))


def fifty_bands(curve):
    lo, hi = curve.wave_range.value
    bands = []
    for name in list_bands():
        band = load_band(name)
        b_lo, b_hi = band.wave_range_um
        if lo <= b_lo and b_hi <= hi:
            bands.append(band)
        if len(bands) == 40:
            break
    bands += [tophat(c, 0.05 * c) for c in np.linspace(0.35, 2.0, 5)]
    bands += [gaussian(c, 0.1 * c) for c in np.linspace(0.4, 2.0, 5)]
    return bands


def main():
    curve = get_curve("f99", r_v=3.1)
    bands = fifty_bands(curve)
    temps = np.geomspace(3000.0, 50000.0, 30)
    a_v = np.linspace(0.0, 20.0, 40)
    n_wave = max(len(band_quadrature(b)[0]) for b in bands)
    t_grid = best(lambda: coefficient_grid(curve, bands, temps, a_v))

    size = len(bands) * temps.size * a_v.size * n_wave
    y = np.random.default_rng(1).random((len(bands) * temps.size * a_v.size, n_wave))
    x = np.linspace(0.3, 1.0, n_wave)
    t_base = best(lambda: np.trapezoid(y, x, axis=-1))
    print(f"grid: {len(bands)} bands x {temps.size} T x {a_v.size} A_V, {n_wave} nodes per band (padded)")
    print(f"baseline: one numpy.trapezoid over {size:,} values: {t_base * 1e3:.1f} ms")
    print(f"coefficient_grid: {t_grid * 1e3:.1f} ms  ratio {t_grid / t_base:.2f}  target <= 1000 ms: "
          f"{'met' if t_grid <= 1.0 else 'NOT met'}")

    grid = coefficient_grid(curve, bands[:5], temps, a_v)
    rng = np.random.default_rng(2)
    stars_av = rng.uniform(0, 20, 1_000_000)
    stars_t = np.exp(rng.uniform(np.log(3000), np.log(50000), 1_000_000))
    t_look = best(lambda: grid.a_band(stars_av, stars_t), repeat=3)
    print(f"grid lookup, 10^6 stars x 5 bands: {t_look * 1e3:.1f} ms")


if __name__ == "__main__":
    main()

"""Benchmark: Mie efficiencies of 20 000 sizes against miepython with its JIT.

Target (issue 3): throughput >= 1.0x the baseline at <= 1e-6 relative agreement
on Q_ext, Q_sca and g where |m|x >= 0.1 (below that the baseline switches to a
small-particle approximation). Baseline, measured in the same run: miepython
(PyPI, a general-purpose Mie code) with MIEPYTHON_USE_JIT=1, called on the same
arrays; miepython writes m = n - ik, so it gets the complex conjugates.

Sizes: x log-spaced from 0.01 to 316; one weakly absorbing index (1.5+0.01i)
and one strongly absorbing (2+1i), plus |m| = 10 (10+0.1i). Each case is
timed as the best of several runs that alternate between the two codes.
redcorr's numpy engine (engine="numpy") is timed once per case for reference.

Run from the repository root:  python benchmarks/bench_mie.py [REPEAT]
"""

import os
import sys
import time
from pathlib import Path

os.environ["MIEPYTHON_USE_JIT"] = "1"  # must be set before miepython is imported
sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import numpy as np  # noqa: E402

from redcorr.mie import sphere  # noqa: E402

try:
    import miepython  # noqa: E402
except ImportError:  # pragma: no cover - the baseline is a test/bench dependency
    sys.exit("bench_mie.py needs the baseline: python -m pip install miepython")

N_SIZES = 20_000
X = np.logspace(np.log10(0.01), np.log10(316.0), N_SIZES)
INDICES = [1.5 + 0.01j, 2.0 + 1.0j, 10.0 + 0.1j]


def timed(fn):
    t0 = time.perf_counter()
    out = fn()
    return time.perf_counter() - t0, out


def max_rel(a, b, mask):
    return float(np.max(np.abs(a[mask] - b[mask]) / np.abs(b[mask])))


def main(repeat=5):
    # compile / warm both codes outside the timings
    sphere(1.5 + 0.01j, X[:50], engine="numba")
    miepython.efficiencies_mx(np.full(50, 1.5 - 0.01j), X[:50])
    print(f"Mie efficiencies of {N_SIZES} sizes, x = 0.01-316 (log-spaced); best of {repeat} alternating runs")
    print(f"baseline: miepython {miepython.__version__} with MIEPYTHON_USE_JIT=1")
    header = f"{'m (n+ik)':>12} {'redcorr s':>10} {'baseline s':>10} {'ratio':>6} {'numpy s':>8}"
    header += f" {'dQext':>8} {'dQsca':>8} {'dg':>8}  target"
    print(header)
    ok = True
    for m in INDICES:
        m_peer = np.full(N_SIZES, np.conj(m))
        ours, peer = [], []
        for _ in range(repeat):
            t, res = timed(lambda m=m: sphere(m, X, engine="numba"))
            ours.append(t)
            t, ref = timed(lambda m_peer=m_peer: miepython.efficiencies_mx(m_peer, X))
            peer.append(t)
        t_numpy, res_numpy = timed(lambda m=m: sphere(m, X, engine="numpy"))
        assert np.allclose(res_numpy.q_ext, res.q_ext, rtol=1e-10)
        mask = np.abs(m) * X >= 0.1
        d = [max_rel(res.q_ext, ref[0], mask), max_rel(res.q_sca, ref[1], mask), max_rel(res.g, ref[3], mask)]
        ratio = min(peer) / min(ours)
        met = ratio >= 1.0 and max(d) <= 1e-6
        ok &= met
        print(
            f"{m.real:>7g}{m.imag:+g}i {min(ours):>10.4f} {min(peer):>10.4f} {ratio:>5.2f}x {t_numpy:>8.3f}"
            f" {d[0]:>8.1e} {d[1]:>8.1e} {d[2]:>8.1e}  {'met' if met else 'NOT met'}"
        )
    print("ratio = baseline time / redcorr time (higher is faster); target >= 1.0x at <= 1e-6")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main(int(sys.argv[1]) if len(sys.argv) > 1 else 5))

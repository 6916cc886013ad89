"""Random synthetic catalogs for the catalog-correction tests (uniform random draws, no real data).

Plain helper functions, imported by the tests; fixtures live in tests/conftest.py.
"""

import numpy as np
import pandas as pd

from redcorr.curves import get_curve
from redcorr.extinction import band_extinction
from redcorr.io.filters import load_band
from redcorr.sed import blackbody

KW = ["kw-b", "kw-v", "kw-r", "kw-i"]


def intrinsic(n, seed=0):
    """Random intrinsic magnitudes, errors and reddening for ``n`` stars (seeded)."""
    rng = np.random.default_rng(seed)
    frame = pd.DataFrame({"id": np.arange(n)})
    for band in KW:
        col = band.replace("-", "_")
        frame[col] = rng.uniform(12.0, 19.0, n)
        frame["e_" + col] = rng.uniform(0.005, 0.05, n)
    frame["ebv"] = rng.uniform(0.0, 1.5, n)
    frame["e_ebv"] = rng.uniform(0.0, 0.05, n)
    return frame


def redden_fixed(frame, law="f99", r_v=3.1, temperature=7000.0):
    """Add the band extinction from redcorr.extinction.band_extinction (direct integration, no
    table; checked against independent quadrature in test_extinction) to each magnitude."""
    curve = get_curve(law, r_v=r_v)
    out = frame.copy()
    a_v = frame["ebv"].to_numpy() * r_v
    for band in KW:
        col = band.replace("-", "_")
        out[col] = frame[col] + band_extinction(curve, load_band(band), blackbody(temperature), a_v)
    return out

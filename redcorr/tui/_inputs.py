"""Turn the UI's remembered inputs into core objects and results, through the core only."""

import math

from redcorr._validate import check_range
from redcorr.band_table import band_table
from redcorr.io import load_curve
from redcorr.tui import _cache

__all__ = ["dust_state", "band_rows"]


def dust_state(law, r_v_text, amount_text, amount_kind):
    """``(curve, a_v, ebv)`` from the Dust inputs; `InputError` with the core's message if refused.

    ``r_v_text`` empty means the law's default. ``amount_kind`` is ``"A_V"``
    or ``"E(B-V)"``; E(B-V) ≡ A_V/R_V with the curve's R_V.
    """
    r_v = r_v_text.strip() or None
    curve = load_curve(law, r_v=r_v)
    amount = check_range(amount_kind, amount_text, 0.0, math.inf)
    if amount_kind == "A_V":
        return curve, amount, amount / curve.r_v
    return curve, amount * curve.r_v, amount


def band_rows(curve, band_specs, sed_spec, a_v):
    """`redcorr.band_table.band_table` for band and source specs (loaded once, then cached)."""
    bands = [_cache.band(spec) for spec in band_specs]
    return band_table(curve, bands, _cache.sed(sed_spec), a_v)

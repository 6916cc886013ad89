"""Turn the UI's remembered inputs into core objects and results, through the core only."""

import math

import numpy as np

from redcorr._validate import check_finite, check_range
from redcorr.band_table import band_table
from redcorr.exposure import plan_exposure, snr_vs_time
from redcorr.io import load_curve
from redcorr.tui import _cache

__all__ = ["dust_state", "band_rows", "plan_state", "GOALS"]

GOALS = ("S/N", "time [s]")
"""What the Plan screen aims at: a target S/N, or a fixed exposure time."""


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


def plan_state(curve, a_v, instrument_spec, mag_text, mag_band_spec, sed_spec, goal, goal_text, limit_text):
    """Plan exposures as ``redcorr plan`` does; return ``(instrument, plans, t, snr_by_band)``.

    ``mag_band_spec`` empty means the magnitude holds in every band; an
    instrument band name uses that band's system response, anything else
    is a band spec. ``t`` spans the times plotted (up to 4x the longest
    planned exposure, as the CLI's plot) and ``snr_by_band`` is
    `redcorr.exposure.snr_vs_time` over it.
    """
    instrument = _cache.instrument(instrument_spec.strip())
    mag = check_finite("mag", mag_text)
    mag_band = None
    if mag_band_spec.strip():
        name = mag_band_spec.strip()
        mag_band = instrument.channels[name].band if name in instrument.channels else _cache.band(name)
    target = check_finite("snr" if goal == GOALS[0] else "time", goal_text)
    plans = plan_exposure(
        instrument,
        instrument.band_names,
        mag,
        curve=curve,
        sed=_cache.sed(sed_spec),
        a_v=a_v,
        snr=target if goal == GOALS[0] else None,
        time=None if goal == GOALS[0] else target,
        mag_band=mag_band,
        limit_snr=check_finite("limit_snr", limit_text),
    )
    finite = [p.t_dust_s for p in plans if np.isfinite(p.t_dust_s)]
    t_hi = max(max(finite, default=1.0) * 4.0, 1.0)
    t = np.geomspace(t_hi * 1e-4, t_hi, 200)
    return instrument, plans, t, snr_vs_time(instrument, plans, t)

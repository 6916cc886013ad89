"""Planning a whole target list behind dust: every target in every band at once.

Pure array code (no files, no UI). A target list gives, per target, a
dust-free magnitude in some band, a source spectrum and a dust column
(A_V). :func:`plan_targets` answers, for each target and each band of an
instrument, what :func:`redcorr.exposure.plan_exposure` answers for one
source: the band extinction, the times without and with the dust, their
ratio, the S/N and the depth. It goes the same way, vectorised:

* the magnitude is carried to each band with the spectrum's synthetic AB
  colour (:func:`redcorr.photometry.synthetic_colour`), once per distinct
  (spectrum, band) pair;
* ``A_band`` is :func:`redcorr.extinction.band_extinction` for the target's
  spectrum, called once per distinct spectrum and band with the A_V of all
  the targets sharing that spectrum;
* the CCD equation runs for all targets of a band at once
  (:func:`redcorr.exposure.plan_channel`, the function behind every
  :class:`~redcorr.exposure.BandPlan`).

So a row equals the single-target plan of the same inputs (to rounding in
the order of the vectorised sums), and the cost grows with the number of
targets and, by about 2 ms for five bands, with the number of *distinct*
spectra: a list of spectral types or a few blackbody temperatures plans as
fast as one spectrum; 100,000 distinct temperatures would take minutes.

:func:`target_reddening` reads each target's dust from a constant, a column
or a dust map (2D, or to each target's distance), exactly as a catalog
correction reads a row's (:class:`redcorr.correction.rows.TableJob`).

Flags
-----
The ``flags`` of each (target, band) are bits of :data:`TARGET_FLAGS`:

================  ===  =====================================================================
name              bit  meaning
================  ===  =====================================================================
no_magnitude        1  the target's magnitude is missing or not a number: no plan
no_reddening        2  no usable reddening (outside a partial map, a blank pixel, a missing
                       or negative value): no plan
beyond_map          4  the distance reaches beyond the distance-resolved map's last distance
                       (or none was given): the dust beyond it is missing, A_V a lower limit
no_distance         8  a distance-resolved map without a usable distance (e.g. parallax <= 0)
prior_distance     16  the distance comes mostly from the parallax prior (fractional error > 0.2)
unreachable        32  the target S/N is not reached in any finite time (``t_dust_s`` = inf)
over_time          64  ``t_dust_s`` exceeds the time limit (``max_time``)
non_numeric       128  a number cell of the target held text (read as missing)
================  ===  =====================================================================

References
----------
.. [1] Howell, S. B. 2006, *Handbook of CCD Astronomy*, 2nd ed., Cambridge
       University Press, §4.4 (the CCD equation).
"""

import dataclasses
import math
import types
import warnings

import numpy as np

from redcorr._constants import TARGET_FLAGS
from redcorr.correction.columns import ColumnPlan, reddening_columns
from redcorr.correction.flags import CORRECTION_FLAGS
from redcorr.correction.rows import TableJob
from redcorr.exceptions import InputError, OutOfRangeWarning
from redcorr.exposure import BRIGHTEST_MAG, PLAUSIBLE_MAGS, check_exposure_snr, check_exposure_time, plan_channel
from redcorr.extinction import band_extinction
from redcorr.photometry import synthetic_colour

__all__ = ["TARGET_FLAGS", "TargetPlan", "plan_targets", "target_reddening"]

_FROM_CORRECTION = {
    "map_coverage": "no_reddening",
    "beyond_map": "beyond_map",
    "no_distance": "no_distance",
    "prior_distance": "prior_distance",
    "non_numeric": "non_numeric",
}
"""Correction flags a row's reddening may set → the target flag that says the same."""

_NO_PLAN = TARGET_FLAGS["no_magnitude"] | TARGET_FLAGS["no_reddening"]


class _TargetRows(TableJob):
    """A table job that only reads each target's reddening (the catalog jobs' :meth:`_reddening`)."""

    def __init__(self, columns, source, describe_row=None):
        self.plan = ColumnPlan(mag_cols=(), err_cols=(), err_kinds=(), **reddening_columns(list(columns), source))
        self.source = source
        self.strict = False
        self.summary = types.SimpleNamespace(rows=0)
        self.describe_row = describe_row


def target_reddening(table, source, r_v):
    """Each target's A_V and its flags, from a constant, a column or a dust map.

    Parameters
    ----------
    table : pandas.DataFrame
        The target list.
    source : redcorr.correction.ReddeningSource
        Where the dust comes from, as for a catalog correction: ``ebv`` or
        ``av`` (one value), ``ebv_column`` or ``av_column``, or ``dust_map``
        with position columns and, for a distance-resolved map, a distance
        or parallax column (and its error).
    r_v : float
        R_V of the dust (the curve's): A_V = R_V E(B-V).

    Returns
    -------
    a_v : ndarray
        A_V in mag per target; NaN where there is no usable value (also a
        negative one).
    flags : ndarray of int64
        Bits of :data:`TARGET_FLAGS` (``no_reddening``, ``beyond_map``,
        ``no_distance``, ``prior_distance``, ``non_numeric``).

    Notes
    -----
    The rows are read by the code that reads a catalog's reddening
    (:class:`redcorr.correction.rows.TableJob`), so a target gets the value
    ``redcorr correct`` would give the same row. E(B-V) is converted with
    the curve's R_V (definition of R_V; common practice, no source).
    """
    job = _TargetRows(table.columns, source)
    raw = np.zeros(len(table), dtype=np.int64)
    red, _ = job.reddening(table, raw)
    red = np.asarray(red, dtype=float)
    a_v = red if job.plan.red_quantity == "av" else red * float(r_v)
    flags = np.zeros(len(table), dtype=np.int64)
    for bit, name in _FROM_CORRECTION.items():
        flags[(raw & CORRECTION_FLAGS[bit]) != 0] |= TARGET_FLAGS[name]
    bad = ~(a_v >= 0)  # NaN or negative: no plan behind it
    flags[bad] |= TARGET_FLAGS["no_reddening"]
    return np.where(bad, np.nan, a_v), flags


def _groups(objects):
    """Distinct objects (by identity) of a sequence and each element's index among them."""
    first, index = {}, np.empty(len(objects), dtype=np.intp)
    for i, obj in enumerate(objects):
        index[i] = first.setdefault(id(obj), len(first))
    distinct = [None] * len(first)
    for obj in objects:
        distinct[first[id(obj)]] = obj
    return distinct, index


def _per_target(name, value, n):
    """A sequence of ``n`` objects: ``value`` itself if it is one, else ``[value] * n``."""
    if isinstance(value, (list, tuple)):
        if len(value) != n:
            raise InputError(f"{name} has {len(value)} entries for {n} targets")
        return list(value)
    return [value] * n


@dataclasses.dataclass(frozen=True)
class TargetPlan:
    """The plan of a target list: arrays of shape (targets, bands) unless said otherwise.

    Attributes
    ----------
    names : ndarray of str, (n,)
    bands : tuple of str, (nb,)
    mag : ndarray
        Dust-free AB magnitude of each target in each band.
    a_v : ndarray, (n,)
    A_band, t_clear_s, t_dust_s, time_factor, snr, limiting_mag : ndarray
        As the fields of :class:`redcorr.exposure.BandPlan` (NaN where the
        target has no plan).
    noise : ndarray of str
        Dominant noise term at ``t_dust_s`` (``""`` without a plan).
    flags : ndarray of int64
        Bits of :data:`TARGET_FLAGS`.
    best : ndarray of int, (n,)
        Index of each target's cheapest band: the shortest ``t_dust_s``
        (for a target S/N) or the highest S/N (for an exposure time) among
        the bands with a plan within the time limit; −1 if none.
    goal : {"snr", "time"}
    max_time : float or None
        The time limit, s.
    """

    names: np.ndarray
    bands: tuple
    mag: np.ndarray
    a_v: np.ndarray
    A_band: np.ndarray
    t_clear_s: np.ndarray
    t_dust_s: np.ndarray
    time_factor: np.ndarray
    snr: np.ndarray
    limiting_mag: np.ndarray
    noise: np.ndarray
    flags: np.ndarray
    best: np.ndarray
    goal: str
    max_time: float = None

    COLUMNS = ("name", "band", "mag", "A_V", "A_band", "t_clear_s", "t_dust_s", "time_factor", "snr",
               "limiting_mag", "noise", "flags", "best_band")
    """The columns of :meth:`rows`, in order."""

    def rows(self):
        """One row per target and band (targets in order, bands in the instrument's order).

        Returns
        -------
        dict
            Column name (:attr:`COLUMNS`) → 1-d array of length n × nb;
            ``best_band`` repeats the target's cheapest band on each of its
            rows (``""`` if none).
        """
        n, nb = self.t_dust_s.shape
        bands = np.array(self.bands, dtype=object)
        best = np.where(self.best >= 0, bands[np.maximum(self.best, 0)], "")
        return {
            "name": np.repeat(np.asarray(self.names, dtype=object), nb),
            "band": np.tile(bands, n),
            "mag": self.mag.ravel(),
            "A_V": np.repeat(self.a_v, nb),
            "A_band": self.A_band.ravel(),
            "t_clear_s": self.t_clear_s.ravel(),
            "t_dust_s": self.t_dust_s.ravel(),
            "time_factor": self.time_factor.ravel(),
            "snr": self.snr.ravel(),
            "limiting_mag": self.limiting_mag.ravel(),
            "noise": self.noise.astype(object).ravel(),
            "flags": self.flags.ravel(),
            "best_band": np.repeat(best.astype(object), nb),
        }

    def summary(self):
        """Totals per band and the targets that miss the goal.

        Returns
        -------
        dict
            ``bands``: band → ``{"targets": number planned within the limit, "total_s": their summed
            t_dust_s}``; ``best_total_s``: the summed ``t_dust_s`` of each target in its cheapest band;
            ``best_counts``: band → targets for which it is the cheapest; ``missed``: names of the
            targets with no band reaching the goal within ``max_time`` (or at all); ``no_plan``:
            names of the targets without a magnitude or a reddening; ``goal``, ``max_time``.
        """
        usable = self._usable()
        per_band = {}
        for j, band in enumerate(self.bands):
            ok = usable[:, j]
            per_band[band] = {"targets": int(ok.sum()), "total_s": float(self.t_dust_s[ok, j].sum())}
        has = self.best >= 0
        rows = np.flatnonzero(has)
        best_t = self.t_dust_s[rows, self.best[rows]]
        counts = {band: int(np.sum(self.best == j)) for j, band in enumerate(self.bands)}
        no_plan = np.all((self.flags & _NO_PLAN) != 0, axis=1)
        return {
            "goal": self.goal,
            "max_time": self.max_time,
            "bands": per_band,
            "best_total_s": float(best_t.sum()),
            "best_counts": counts,
            "missed": [str(s) for s in np.asarray(self.names)[~has & ~no_plan]],
            "no_plan": [str(s) for s in np.asarray(self.names)[no_plan]],
        }

    def _usable(self):
        return np.isfinite(self.t_dust_s) & ((self.flags & (TARGET_FLAGS["over_time"] | _NO_PLAN)) == 0)


def plan_targets(instrument, bands, mag, *, mag_band, sed, a_v, curve, snr=None, time=None, limit_snr=5.0,
                 max_time=None, flags=None, names=None, extrapolate=False):
    """Plan every target of a list in every band: the vectorised :func:`redcorr.exposure.plan_exposure`.

    Parameters
    ----------
    instrument : Instrument
    bands : sequence of str
        Band names of the instrument.
    mag : array_like, (n,)
        Each target's dust-free AB magnitude in its ``mag_band``; NaN for
        none (flagged ``no_magnitude``). None brighter than
        :data:`redcorr.exposure.BRIGHTEST_MAG`.
    mag_band : Band or sequence of Band
        The band of each target's magnitude (one for all, or one per
        target); carried to each band with the spectrum's AB colour.
    sed : SED or sequence of SED
        Each target's spectrum (one for all, or one per target). Targets
        sharing a spectrum should share the object: the work is done once
        per distinct object.
    a_v : array_like, (n,)
        A_V of each target, mag (≥ 0; NaN for none, flagged ``no_reddening``).
    curve : DustCurve
    snr, time : float, optional
        Exactly one: a target S/N or an exposure time, as in
        :func:`~redcorr.exposure.plan_exposure`.
    limit_snr : float
        S/N defining ``limiting_mag``.
    max_time : float, optional
        Time limit, s (> 0): a ``t_dust_s`` above it is flagged
        ``over_time`` and left out of the totals and of the cheapest band.
    flags : array_like of int, (n,), optional
        Flags the target already has (from :func:`target_reddening`).
    names : sequence of str, optional
        Target names (default ``"1"``, ``"2"``, ...).
    extrapolate : bool
        Passed to the band extinction.

    Returns
    -------
    TargetPlan

    Notes
    -----
    For a target S/N the time factor lies between 10^(0.4 A_band)
    (source- or read-noise-limited) and 10^(0.8 A_band) (sky-limited), as in
    :func:`~redcorr.exposure.plan_exposure` (Howell 2006 §4.4). A target S/N
    that no finite time reaches is flagged ``unreachable`` rather than
    refused, so that one faint target does not stop a list.
    """
    if (snr is None) == (time is None):
        raise InputError("give exactly one of snr (a target S/N) or time (an exposure time in s)")
    limit_snr = check_exposure_snr("limit_snr", limit_snr)
    if snr is not None:
        snr = check_exposure_snr("snr", snr)
    else:
        time = check_exposure_time("time", time)
    if max_time is not None:
        max_time = float(max_time)
        if not (math.isfinite(max_time) and max_time > 0):
            raise InputError(f"max_time={max_time:g} is not allowed; it must be a time in s, finite and > 0")
    m0 = np.atleast_1d(np.asarray(mag, dtype=float))
    n = m0.size
    a_v = np.broadcast_to(np.asarray(a_v, dtype=float), (n,))
    names = np.array([str(i + 1) for i in range(n)] if names is None else [str(s) for s in names], dtype=object)
    if m0.ndim != 1 or names.size != n:
        raise InputError(f"mag and names must be 1-d lists of one entry per target; got {m0.shape}, {names.size}")
    too_bright = m0 < BRIGHTEST_MAG
    if np.any(too_bright):
        raise InputError(f"target {names[too_bright][0]!r}: mag={m0[too_bright][0]:g} is not allowed; a point "
                         f"source to plan must be no brighter than AB {BRIGHTEST_MAG:g} (the Sun is about -26.7)")
    if np.any(a_v < 0):
        raise InputError(f"a_v={a_v[a_v < 0][0]:g} is not allowed; A_V must be >= 0 (NaN for none)")
    channels = [instrument.channel(b) for b in bands]
    if not channels:
        raise InputError("bands is empty; give at least one band of the instrument")
    seds, sed_of = _groups(_per_target("sed", sed, n))
    mag_bands, band_of = _groups(_per_target("mag_band", mag_band, n))
    nb = len(channels)

    mags = np.empty((n, nb))
    pairs, pair_of = np.unique(np.stack([sed_of, band_of]), axis=1, return_inverse=True)
    pair_of = pair_of.ravel()
    for k, (s, b) in enumerate(pairs.T):
        rows = pair_of == k
        for j, ch in enumerate(channels):
            mags[rows, j] = m0[rows] + synthetic_colour(seds[s], ch.band, mag_bands[b])

    a_band = np.full((n, nb), np.nan)
    has_av = np.isfinite(a_v)
    for s, spectrum in enumerate(seds):
        rows = (sed_of == s) & has_av
        if np.any(rows):
            for j, ch in enumerate(channels):
                a_band[rows, j] = band_extinction(curve, ch.band, spectrum, a_v[rows], extrapolate=extrapolate)

    out = {}
    for j, ch in enumerate(channels):
        for key, value in plan_channel(ch, mags[:, j], a_band[:, j], snr=snr, time=time,
                                       limit_snr=limit_snr).items():
            out.setdefault(key, []).append(value)
    out = {key: np.stack(value, axis=1) for key, value in out.items()}

    given = np.zeros(n, dtype=np.int64) if flags is None else np.broadcast_to(np.asarray(flags, np.int64), (n,))
    all_flags = np.repeat(given[:, None], nb, axis=1)
    all_flags[~np.isfinite(mags)] |= TARGET_FLAGS["no_magnitude"]
    all_flags[~has_av] |= TARGET_FLAGS["no_reddening"]
    all_flags[np.isinf(out["t_dust_s"])] |= TARGET_FLAGS["unreachable"]
    if max_time is not None:
        all_flags[out["t_dust_s"] > max_time] |= TARGET_FLAGS["over_time"]
    _warn_implausible(names, m0)

    plan = TargetPlan(names=names, bands=tuple(ch.name for ch in channels), mag=mags, a_v=np.array(a_v),
                      A_band=a_band, flags=all_flags, best=np.full(n, -1), goal="snr" if snr is not None else "time",
                      max_time=max_time, **out)
    usable = plan._usable()
    key = np.where(usable, out["t_dust_s"] if snr is not None else -out["snr"], np.inf)
    best = np.where(usable.any(axis=1), np.argmin(key, axis=1), -1)
    return dataclasses.replace(plan, best=best)


def _warn_implausible(names, mags):
    """Warn once for targets whose magnitude lies outside :data:`redcorr.exposure.PLAUSIBLE_MAGS`."""
    lo, hi = PLAUSIBLE_MAGS
    odd = np.flatnonzero(np.isfinite(mags) & ~((mags >= lo) & (mags <= hi)))
    if odd.size:
        shown = ", ".join(f"{names[i]} {mags[i]:.3g}" for i in odd[:5]) + (", ..." if odd.size > 5 else "")
        warnings.warn(
            f"{odd.size} target magnitude(s) outside AB {lo:g}..{hi:g}, implausible for a point source ({shown}): "
            "the times planned for them mean little; check the magnitude column and its system",
            OutOfRangeWarning,
            stacklevel=3,
        )

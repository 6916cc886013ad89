"""The flag column of a correction, and the summary of a run.

Flags (``dered_flags``, a bit mask)
-----------------------------------
===  =====  ====================  =============================================
bit  value  name                  meaning
===  =====  ====================  =============================================
0    1      non_numeric           an input cell was text, not a number (now NaN)
1    2      missing               a magnitude or the reddening is NaN/empty
2    4      negative_reddening    E(B-V) < 0; corrected as given (odd extension)
3    8      outside_grid          A_V or temperature outside the coefficient
                                  grid; the nearest grid edge was used
4    16     outside_curve         R_V outside the law's range or missing (outputs
                                  NaN), or a band beyond the law's wavelengths
5    32     map_coverage          the dust map has no value here (outputs NaN)
6    64     not_converged         the colour–temperature iteration did not
                                  converge within ``max_iterations``
7    128    beyond_map            a distance-resolved map: the row lies beyond
                                  the map's last distance, or no distance column
                                  was named; E(B-V) is the map's value at its
                                  last distance (a lower limit for a star beyond)
8    256    no_distance           a distance-resolved map: the row's distance or
                                  parallax is missing or gives no distance (a
                                  parallax <= 0 without an error; outputs NaN)
9    512    prior_distance        a parallax with an error, but one that says
                                  little (σ/ϖ > 0.2 or ϖ <= 0): the distance, and
                                  so E(B-V), comes mostly from the prior's
                                  length scale (``--prior-length``)
===  =====  ====================  =============================================

The values are :data:`CORRECTION_FLAGS` (kept in :mod:`redcorr._constants`
so that ``redcorr correct --help`` lists them without importing numpy).
They are not the bits of a dust map's lookup flags
(:data:`redcorr._constants.MAP_FLAGS`): a row whose map value is missing
gets ``map_coverage`` whatever the map's own reason, except the two about
the distance, which are ``beyond_map`` and ``no_distance``.
"""

import time
import warnings

import numpy as np

from redcorr._constants import CORRECTION_FLAGS
from redcorr.exceptions import OutOfRangeWarning

__all__ = ["CORRECTION_FLAGS", "FLAG_COLUMN", "RunSummary"]

FLAG_COLUMN = "dered_flags"
"""str: name of the output column holding the flag bits of each row."""


class RunSummary:
    """Counts and ranges gathered over every table a :class:`~redcorr.correction.Correction` has processed.

    A subclass sets the class attributes :attr:`FLAG_BITS`, :attr:`FLAG_COLUMN`
    and :attr:`EBV_COLUMN` for another kind of table job (the per-star fit's
    :class:`redcorr.correction.fit.FitSummary`) and overrides :meth:`warn`.

    Parameters
    ----------
    setup : dict, optional
        The correction's :meth:`~redcorr.correction.Correction.setup`, echoed in :meth:`to_dict`.

    Attributes
    ----------
    rows : int
    flagged : dict
        Rows with each flag bit set, by name (see :data:`CORRECTION_FLAGS`),
        plus ``"any"``.
    ebv_min, ebv_max : float
        Range of the E(B-V) applied (NaN before any finite value).
    iterations_max, iterations_sum : int
        Of the colour–temperature solver.
    """

    FLAG_BITS = CORRECTION_FLAGS
    """dict: flag name → bit of the rows' flag column."""
    FLAG_COLUMN = FLAG_COLUMN
    """str: the output column of the flags."""
    EBV_COLUMN = "ebv_used"
    """str: the output column whose range is reported as E(B-V)."""

    def __init__(self, setup=None):
        self.setup = dict(setup or {})
        self.rows = 0
        self.flagged = {name: 0 for name in self.FLAG_BITS} | {"any": 0}
        self.ebv_min = np.nan
        self.ebv_max = np.nan
        self.iterations_max = 0
        self.iterations_sum = 0
        self.started = time.perf_counter()
        self.elapsed = None

    def add(self, out):
        """Fold the counts of one corrected table (a DataFrame or a dict of arrays) into the summary."""
        flags = np.asarray(out[self.FLAG_COLUMN])
        self.rows += len(flags)
        for name, bit in self.FLAG_BITS.items():
            self.flagged[name] += int(np.count_nonzero(flags & bit))
        self.flagged["any"] += int(np.count_nonzero(flags))
        ebv = np.asarray(out[self.EBV_COLUMN], dtype=float)
        ebv = ebv[np.isfinite(ebv)]
        if ebv.size:
            self.ebv_min = float(np.fmin(self.ebv_min, ebv.min()))
            self.ebv_max = float(np.fmax(self.ebv_max, ebv.max()))
        if "teff_iterations" in out:
            it = np.asarray(out["teff_iterations"])
            if it.size:
                self.iterations_max = max(self.iterations_max, int(it.max()))
                self.iterations_sum += int(it.sum())

    def finish(self):
        """Stop the clock."""
        self.elapsed = time.perf_counter() - self.started
        return self

    def to_dict(self):
        """JSON-ready dict: rows, flagged counts, E(B-V) range, timing, setup."""
        elapsed = self.elapsed if self.elapsed is not None else time.perf_counter() - self.started
        out = {
            "rows": self.rows,
            "flagged": dict(self.flagged),
            "flag_bits": dict(self.FLAG_BITS),
            "ebv_min": self.ebv_min,
            "ebv_max": self.ebv_max,
            "seconds": round(elapsed, 3),
            "rows_per_second": round(self.rows / elapsed, 1) if elapsed > 0 else None,
            "setup": self.setup,
        }
        if self.setup.get("spectrum") == "colour":
            out["iterations_max"] = self.iterations_max
            out["iterations_mean"] = self.iterations_sum / self.rows if self.rows else 0.0
        return out

    def lines(self):
        """Human-readable lines."""
        d = self.to_dict()
        text = [
            f"rows: {d['rows']}  flagged: {d['flagged']['any']}  "
            f"E(B-V): {d['ebv_min']:.4g} .. {d['ebv_max']:.4g}  "
            f"time: {d['seconds']:.2f} s ({d['rows_per_second'] or 0:,.0f} rows/s)"
        ]
        reasons = ", ".join(f"{k} {v}" for k, v in d["flagged"].items() if v and k != "any")
        if reasons:
            text.append(f"flags: {reasons}")
        if "iterations_max" in d:
            text.append(f"temperature iterations: mean {d['iterations_mean']:.2f}, max {d['iterations_max']}")
        return text

    def warn(self):
        """Warn (`OutOfRangeWarning`) about rows corrected with clamped coefficients or beyond a map's reach."""
        beyond = self.flagged["beyond_map"]
        if beyond:
            warnings.warn(
                f"{beyond} row(s) lie beyond the reach of the distance-resolved map or have no distance named: "
                "their E(B-V) is the map's value at its last distance, a lower limit for a star beyond it and too "
                f"much for one in front of it (flag bit {CORRECTION_FLAGS['beyond_map']})",
                OutOfRangeWarning,
                stacklevel=3,
            )
        prior = self.flagged["prior_distance"]
        if prior:
            warnings.warn(
                f"{prior} row(s) have a parallax that says little about their distance (error above "
                "0.2 of the parallax, or a parallax <= 0): their distance, and so their E(B-V), comes mostly "
                f"from the prior and its length scale (flag bit {CORRECTION_FLAGS['prior_distance']})",
                OutOfRangeWarning,
                stacklevel=3,
            )
        outside = self.flagged["outside_grid"]
        if outside:
            warnings.warn(
                f"{outside} row(s) lie outside the coefficient grid (A_V or temperature); the grid edge "
                f"was used for them (flag bit {CORRECTION_FLAGS['outside_grid']})",
                OutOfRangeWarning,
                stacklevel=3,
            )

"""The row-by-row correction: :class:`Correction`, set up once and applied to any number of tables."""

import warnings

import numpy as np

from redcorr.correction.columns import (
    band_label,
    magnitude_error,
    plan_columns,
)
from redcorr.correction.flags import CORRECTION_FLAGS, FLAG_COLUMN, RunSummary
from redcorr.correction.options import CorrectionOptions, bands_beyond_curve
from redcorr.correction.providers import NodeProviders, make_provider
from redcorr.correction.rows import TableJob
from redcorr.correction.temperature import ColourTable
from redcorr.exceptions import DistanceIgnoredWarning, InputError, OutOfRangeWarning

__all__ = ["Correction"]

_RV_HALF_STEP = 0.05
"""Half step of the central difference dA_b/dR_V at a constant R_V."""


class Correction(TableJob):
    """A reddening correction set up once, applied to any number of tables.

    Parameters
    ----------
    columns : list of str
        The columns of the tables to come; named columns are checked and
        the others guessed (see :mod:`redcorr.correction.columns`).
    options : CorrectionOptions
        Bands, dust, reddening source, source spectrum and output; build it
        from names with :func:`redcorr.io.correction.correction_options`.

    Attributes
    ----------
    mag_cols, err_cols : list
        The magnitude and error column of each band (an error may be None).
    red_col : str or None
        The column of reddening read (given or guessed).
    red_quantity : {"ebv", "av"}
        What the reddening source gives.
    suffix : str
        Suffix of the corrected columns.
    output_columns : list of str
        The columns :meth:`correct` adds, in order.
    summary : RunSummary
        Counts of the rows corrected so far.
    describe_row : callable or None
        How messages name a row of the input: ``describe_row(n)`` for row
        ``n`` (from 0, over every table corrected so far) returns a text
        such as ``"row 12 (line 15 of the file)"``. Set by the caller that
        reads the file, which alone knows where a row is (see
        :meth:`redcorr.io.catalogs.CatalogReader.describe_row`). None (the
        default): ``"row N"``, counted from 1.

    Examples
    --------
    >>> import pandas as pd
    >>> from redcorr.bandpass import tophat
    >>> from redcorr.correction import BandSelection, CorrectionOptions, DustOptions
    >>> from redcorr.curves import get_curve
    >>> options = CorrectionOptions(BandSelection([tophat(0.55, 0.1)], labels=["v"]),
    ...                             DustOptions(get_curve("f99")))
    >>> corr = Correction(["v", "ebv"], options)
    >>> corr.output_columns
    ['v_dered', 'A_v', 'ebv_used', 'av_used', 'dered_flags']
    >>> out = corr.correct(pd.DataFrame({"v": [15.0], "ebv": [0.0]}))
    >>> float(out["v_dered"].iloc[0])
    15.0
    """

    def __init__(self, columns, options):
        if not isinstance(options, CorrectionOptions):
            raise InputError(f"options={options!r} is not a CorrectionOptions")
        self.columns = [str(c) for c in columns]
        self.options = options
        self.source, self.strict = options.reddening, options.output.strict
        self.plan = plan_columns(self.columns, options)
        self.bands = list(options.bands.bands)
        self.labels = list(options.bands.labels)
        self.mag_cols, self.err_cols = list(self.plan.mag_cols), list(self.plan.err_cols)
        self.red_col, self.red_quantity = self.plan.red_col, self.plan.red_quantity
        self.suffix = options.output.suffix
        self.curve = options.dust.curve
        self.r_v = float(self.curve.r_v)
        self.colours = [options.bands.pair(p, "colours") for p in options.bands.colours]
        spectrum = options.spectrum
        self.temperature = spectrum.temperature
        self._colour_table = None
        if spectrum.spectrum == "colour":
            self.solve = options.bands.pair(spectrum.solve_colour, "solve_colour")
            self._colour_table = ColourTable.default(self.bands[self.solve[0]], self.bands[self.solve[1]])
        self._outside_curve_all = bool(bands_beyond_curve(self.curve, self.bands))
        self._providers = {}
        self._node_stack = (None, None)  # (node keys, NodeProviders) of the last per-row R_V table
        self.output_columns = self._out_names()
        self.summary = RunSummary(self.setup())
        self.describe_row = None
        self._warn_distance()

    # -- set-up -------------------------------------------------------------------------------
    def _has_errors(self, err_col):
        dust = self.options.dust
        return (err_col is not None or self.plan.red_err_col is not None or self.options.reddening.reddening_error > 0
                or self.plan.dist_err_col is not None or dust.rv_error_column is not None or dust.rv_error > 0)

    def _out_names(self, suffix=None):
        """The output column names, with ``suffix`` (default: :attr:`suffix`) on the corrected ones."""
        suffix = self.suffix if suffix is None else suffix
        names = []
        for mag, label, err in zip(self.mag_cols, self.labels, self.err_cols, strict=True):
            names.append(mag + suffix)
            if self._has_errors(err):
                names.append(mag + suffix + "_err")
            names.append("A_" + band_label(label))
        for i, j in self.colours:
            base = f"{self.mag_cols[i]}-{self.mag_cols[j]}{suffix}"
            names.append(base)
            if self._has_errors(self.err_cols[i]) or self._has_errors(self.err_cols[j]):
                names.append(base + "_err")
        names += ["ebv_used", "av_used"]
        if self.plan.rv_col is not None:
            names.append("rv_used")
        if self.options.spectrum.spectrum != "fixed":
            names.append("teff_used")
        if self.options.spectrum.spectrum == "colour":
            names.append("teff_iterations")
        names.append(FLAG_COLUMN)
        return names

    def _warn_distance(self):
        """Warn once, at set-up, when a map and the distance columns do not go together."""
        source = self.options.reddening
        if self.plan.red_kind != "map":
            return
        named = source.distance_column or source.parallax_column
        distances = getattr(source.dust_map, "distances_pc", None)
        if named is not None and distances is None:
            warnings.warn(
                f"map {source.dust_map.name!r} has no distances: the column {named!r} is not used and each row "
                "gets the reddening of its whole sight line",
                DistanceIgnoredWarning,
                stacklevel=3,
            )
        elif named is None and distances is not None:
            warnings.warn(
                f"map {source.dust_map.name!r} is distance-resolved but no distance or parallax column was "
                f"named: every row gets the map's value at its last distance, {float(distances[-1]):g} pc "
                f"(flag bit {CORRECTION_FLAGS['beyond_map']}), which over-corrects nearer stars; name a distance "
                "column (pc) or a parallax column (mas)",
                OutOfRangeWarning,
                stacklevel=3,
            )

    def setup(self):
        """A JSON-ready description of this correction (for summaries and file metadata)."""
        source = self.options.reddening
        spectrum = self.options.spectrum.spectrum
        distance = None
        if self.plan.dist_kind is not None:
            distance = {"kind": self.plan.dist_kind, "column": self.plan.dist_col,
                        "error_column": self.plan.dist_err_col}
            if self.plan.dist_kind == "parallax" and self.plan.dist_err_col is not None:
                distance["prior_length_pc"] = self._prior_length()
        return {
            "law": self.options.dust.law,
            "curve": self.curve.name,
            "citation": getattr(self.curve, "citation", ""),
            "r_v": self.plan.rv_col or self.r_v,
            "bands": {
                lab: {"magnitude": m, "error": e}
                for lab, m, e in zip(self.labels, self.mag_cols, self.err_cols, strict=True)
            },
            "reddening": {
                "source": self.plan.red_kind,
                "quantity": self.red_quantity,
                "column": self.red_col,
                "constant": source.ebv if source.ebv is not None else source.av,
                "error_column": self.plan.red_err_col,
                "distance": distance,
            },
            "mode": "nonlinear" if self.options.dust.nonlinear else "linear",
            "spectrum": spectrum,
            "temperature_K": self.temperature if spectrum == "fixed" else self.plan.t_col,
            "flag_column": FLAG_COLUMN,
            "suffix": self.suffix,
        }

    def numeric_columns(self):
        """Input columns that must hold numbers (readers may parse them as float64 up front)."""
        return list(dict.fromkeys(self.plan.used()))

    # -- coefficients -------------------------------------------------------------------------
    def _provider(self, rv):
        """The A_b provider at R_V = rv (cached; ``None`` means the set-up curve)."""
        key = None if rv is None else round(float(rv), 6)
        if key not in self._providers:
            dust = self.options.dust
            fixed = self.options.spectrum.spectrum == "fixed"
            self._providers[key] = make_provider(
                self.curve if key is None else dust.curve_at(key),
                self.bands,
                nonlinear=dust.nonlinear,
                temperature=self.temperature if fixed else None,
                extrapolate=dust.extrapolate,
            )
        return self._providers[key]

    def _a_fixed_input(self, rv_node, red, temperature):
        """A_b at R_V = rv_node with the reddening held fixed in its own quantity."""
        a_v = red * rv_node if self.red_quantity == "ebv" else red
        return self._provider(rv_node).a_band(a_v, temperature)

    def _rv_nodes(self, rv):
        """The R_V nodes around each row, for a per-row R_V (see :mod:`redcorr.correction`, Notes).

        Returns
        -------
        rv_ok : ndarray of bool
            Rows whose R_V is finite and inside the law's range.
        nodes : tuple or None
            ``(stack, which_lo, which_hi, node_lo, node_hi, weight)``: the
            providers of the nodes (:class:`~redcorr.correction.providers.NodeProviders`),
            each row's index in it of the node below and above, those nodes'
            R_V and the interpolation weight of the upper node, (R_V −
            node_lo)/(node_hi − node_lo). Rows outside ``rv_ok`` get the
            nodes of the first row inside it; None when there is none.
        """
        dust = self.options.dust
        lo, hi = dust.r_v_limits
        step = dust.rv_step
        rv_ok = np.isfinite(rv) & (rv >= lo) & (rv <= hi)
        if not np.any(rv_ok):
            return rv_ok, None
        if not np.all(rv_ok):
            rv = np.where(rv_ok, rv, rv[np.argmax(rv_ok)])
        k = np.floor((rv - lo) / step).astype(np.intp)
        # node R_V of each k present: lo + step·k, none above hi − step (the floats the rows had one by one)
        lo_nodes = np.minimum(lo + step * np.arange(k.max() + 1, dtype=float), hi - step)
        hi_nodes = np.minimum(lo_nodes + step, hi)
        used = np.flatnonzero(np.bincount(k))
        keys = tuple(sorted({round(float(r), 6) for r in np.concatenate([lo_nodes[used], hi_nodes[used]])}))
        if self._node_stack[0] != keys:
            self._node_stack = (keys, NodeProviders([self._provider(key) for key in keys]))
        stack = self._node_stack[1]
        slot = {key: i for i, key in enumerate(keys)}  # a k no row has gets any index: it is never used
        which_lo, which_hi = (np.array([slot.get(round(float(r), 6), 0) for r in nodes], np.intp)[k]
                              for nodes in (lo_nodes, hi_nodes))
        node_lo, node_hi = lo_nodes[k], hi_nodes[k]
        weight = (rv - node_lo) / (node_hi - node_lo)
        return rv_ok, (stack, which_lo, which_hi, node_lo, node_hi, weight)

    def _reddening_slope(self, red, rv, temperature):
        """dA_b/d(reddening) (n, n_band) in the reddening's own quantity (E(B-V) or A_V).

        With R_V per row, the derivative of the interpolation between the two
        nodes: (1 − w)·dA_lo/dE + w·dA_hi/dE, w not depending on the reddening.
        """
        ebv = self.red_quantity == "ebv"
        if self.plan.rv_col is None:
            a_v = red * self.r_v if ebv else red
            per_av = self._provider(None).slope(a_v, temperature)
            return per_av * self.r_v if ebv else per_av
        rv_ok, nodes = self._rv_nodes(rv)
        if nodes is None:
            return np.full((red.size, len(self.bands)), np.nan)
        stack, which_lo, which_hi, node_lo, node_hi, weight = nodes
        if ebv:
            d_lo = stack.slope(which_lo, red * node_lo, temperature) * node_lo[:, None]
            d_hi = stack.slope(which_hi, red * node_hi, temperature) * node_hi[:, None]
        else:
            d_lo, d_hi = stack.slope(which_lo, red, temperature), stack.slope(which_hi, red, temperature)
        out = (1 - weight)[:, None] * d_lo + weight[:, None] * d_hi
        out[~rv_ok] = np.nan
        return out

    def _extinction(self, red, rv, temperature):
        """A_b (n, n_band), dA_b/dR_V (n, n_band) or None, inside-grid mask, R_V-ok mask."""
        n = red.size
        dust = self.options.dust
        need_slope = dust.rv_error_column is not None or dust.rv_error > 0
        if self.plan.rv_col is None:
            a_v = red * self.r_v if self.red_quantity == "ebv" else red
            a_band, inside = self._provider(None).a_band(a_v, temperature)
            slope = None
            if need_slope:
                lo_rv = max(self.r_v - _RV_HALF_STEP, dust.r_v_limits[0])
                hi_rv = min(self.r_v + _RV_HALF_STEP, dust.r_v_limits[1])
                a_lo, _ = self._a_fixed_input(lo_rv, red, temperature)
                a_hi, _ = self._a_fixed_input(hi_rv, red, temperature)
                slope = (a_hi - a_lo) / (hi_rv - lo_rv)
            return a_band, slope, inside, np.ones(n, bool)
        rv_ok, nodes = self._rv_nodes(rv)
        if nodes is None:
            nan = np.full((n, len(self.bands)), np.nan)
            return nan, (nan.copy() if need_slope else None), np.ones(n, bool), rv_ok
        stack, which_lo, which_hi, node_lo, node_hi, weight = nodes
        ebv = self.red_quantity == "ebv"
        a_lo, in_lo = stack.a_band(which_lo, red * node_lo if ebv else red, temperature)
        a_hi, in_hi = stack.a_band(which_hi, red * node_hi if ebv else red, temperature)
        w = weight[:, None]
        a_band = (1 - w) * a_lo + w * a_hi
        inside = in_lo & in_hi
        slope = None
        if need_slope:
            slope = (a_hi - a_lo) / (node_hi - node_lo)[:, None]
        if not np.all(rv_ok):
            a_band[~rv_ok] = np.nan
            inside[~rv_ok] = True
            if slope is not None:
                slope[~rv_ok] = np.nan
        return a_band, slope, inside, rv_ok

    # -- applying -----------------------------------------------------------------------------
    def written_columns(self, keep):
        """The columns of a result: the input columns ``keep`` followed by :attr:`output_columns`.

        Parameters
        ----------
        keep : list of str
            Input columns copied to the result.

        Raises
        ------
        InputError
            If a copied column has the name of an output column (the input
            was corrected before, say): the message says which to leave out
            of ``keep`` and which another suffix would rename.
        """
        keep = [str(c) for c in keep]
        clash = [c for c in self.output_columns if c in keep]
        if clash:
            other = self._out_names(self.suffix + "_2")
            fixed = [c for c in clash if c in other]  # the same whatever the suffix
            renamed = [c for c in clash if c not in other]
            advice = []
            if fixed:
                advice.append(f"leave {fixed} out of the copied columns (keep_columns; --keep on the command line)")
            if renamed:
                advice.append(f"choose another suffix than {self.suffix!r} (suffix; --suffix) for {renamed}, "
                              "or leave them out too")
            raise InputError(f"output columns {clash} already exist in the input (is it already corrected?); "
                             + "; ".join(advice))
        return keep + self.output_columns

    def _arrays(self, table):
        self._check_columns(table)
        plan, dust, spectrum = self.plan, self.options.dust, self.options.spectrum.spectrum
        n = len(table)
        nb = len(self.bands)
        flags = np.zeros(n, np.int64)
        mags = np.stack([self._numeric(table, c, flags) for c in self.mag_cols], axis=-1).reshape(n, nb)
        mags[np.isinf(mags)] = np.nan  # an infinite magnitude is a missing one
        errs = np.stack(
            [magnitude_error(self._numeric(table, c, flags), kind) if c is not None else np.zeros(n)
             for c, kind in zip(self.err_cols, self.plan.err_kinds, strict=True)], axis=-1
        ).reshape(n, nb)
        red, red_err = self.reddening(table, flags)
        if plan.rv_col is not None:
            rv = self._numeric(table, plan.rv_col, flags)
            flags[~np.isfinite(rv)] |= CORRECTION_FLAGS["missing"]
        else:
            rv = np.full(n, self.r_v)
        rv_err = self._numeric(table, plan.rv_err_col, flags) if plan.rv_err_col else np.full(n, dust.rv_error)
        flags[~np.isfinite(red)] |= CORRECTION_FLAGS["missing"]
        flags[np.any(~np.isfinite(mags), axis=1)] |= CORRECTION_FLAGS["missing"]
        ebv = red if self.red_quantity == "ebv" else red / rv
        flags[ebv < 0] |= CORRECTION_FLAGS["negative_reddening"]
        red_safe = np.where(np.isfinite(red), red, 0.0)

        if spectrum == "column":
            temperature = self._numeric(table, plan.t_col, flags)
            flags[~np.isfinite(temperature)] |= CORRECTION_FLAGS["missing"]
            t_safe = np.where(np.isfinite(temperature), temperature, self.temperature)
            a_band, slope, inside, rv_ok = self._extinction(red_safe, rv, t_safe)
            iterations = None
        elif spectrum == "colour":
            a_band, slope, inside, rv_ok, temperature, iterations, converged = self._solve(mags, red_safe, rv)
            flags[~converged] |= CORRECTION_FLAGS["not_converged"]
        else:
            temperature = np.full(n, self.temperature)
            a_band, slope, inside, rv_ok = self._extinction(red_safe, rv, temperature)
            iterations = None
        flags[~inside] |= CORRECTION_FLAGS["outside_grid"]
        flags[~rv_ok] |= CORRECTION_FLAGS["outside_curve"]
        if self._outside_curve_all:
            flags |= CORRECTION_FLAGS["outside_curve"]
        a_band[~np.isfinite(red) | ~rv_ok] = np.nan

        # R_b = dA_b/dE (or dA_b/dA_V) and the R_V effect, for the uncertainties (None: no such term)
        red_term = rv_term = None
        if np.any(red_err != 0):
            t_used = np.where(np.isfinite(temperature), temperature, self.temperature)
            red_term = self._reddening_slope(red_safe, rv, t_used) * red_err[:, None]
        if slope is not None:
            rv_term = slope * rv_err[:, None]
        variance = errs**2
        for term in (red_term, rv_term):
            if term is not None:
                variance += term**2

        result = {}
        dered = mags - a_band
        mag_err = np.sqrt(variance)
        mag_err[np.isnan(mags)] = np.nan  # no magnitude, no error
        for b, (mag, label, err_col) in enumerate(zip(self.mag_cols, self.labels, self.err_cols, strict=True)):
            result[mag + self.suffix] = dered[:, b]
            if self._has_errors(err_col):
                result[mag + self.suffix + "_err"] = mag_err[:, b]
            result["A_" + band_label(label)] = a_band[:, b]
        for i, j in self.colours:
            base = f"{self.mag_cols[i]}-{self.mag_cols[j]}{self.suffix}"
            result[base] = dered[:, i] - dered[:, j]
            if self._has_errors(self.err_cols[i]) or self._has_errors(self.err_cols[j]):
                colour_var = errs[:, i] ** 2 + errs[:, j] ** 2
                for term in (red_term, rv_term):
                    if term is not None:
                        colour_var += (term[:, i] - term[:, j]) ** 2
                colour_var[np.isnan(mags[:, i]) | np.isnan(mags[:, j])] = np.nan
                result[base + "_err"] = np.sqrt(colour_var)
        valid = np.isfinite(red) & rv_ok
        result["ebv_used"] = np.where(valid, ebv, np.nan)
        result["av_used"] = np.where(valid, red * rv if self.red_quantity == "ebv" else red, np.nan)
        if plan.rv_col is not None:
            result["rv_used"] = np.where(rv_ok, rv, np.nan)
        if spectrum != "fixed":
            result["teff_used"] = temperature
        if spectrum == "colour":
            result["teff_iterations"] = iterations
        result[FLAG_COLUMN] = flags
        return result

    def _solve(self, mags, red, rv):
        """Iterate temperature ↔ extinction until A_b settles (see :mod:`redcorr.correction`, Notes)."""
        spectrum = self.options.spectrum
        n = red.size
        i, j = self.solve
        temperature = np.full(n, self.temperature)
        a_band, slope, inside, rv_ok = self._extinction(red, rv, temperature)
        iterations = np.zeros(n, np.int64)
        active = np.isfinite(mags[:, i]) & np.isfinite(mags[:, j]) & rv_ok
        colour_ok = np.ones(n, bool)
        converged = ~active
        for _ in range(spectrum.max_iterations):
            if not np.any(active):
                break
            idx = np.flatnonzero(active)
            colour = (mags[idx, i] - a_band[idx, i]) - (mags[idx, j] - a_band[idx, j]) - spectrum.colour_offset
            t_new, c_in = self._colour_table.temperature_at(colour)
            a_new, s_new, in_new, _ = self._extinction(red[idx], rv[idx], t_new)
            change = np.max(np.abs(a_new - a_band[idx]), axis=1)
            temperature[idx] = t_new
            a_band[idx] = a_new
            if slope is not None:
                slope[idx] = s_new
            inside[idx] = in_new
            colour_ok[idx] = c_in
            iterations[idx] += 1
            done = change <= spectrum.tolerance
            converged[idx[done]] = True
            active[idx[done]] = False
        inside &= colour_ok
        return a_band, slope, inside, rv_ok, temperature, iterations, converged

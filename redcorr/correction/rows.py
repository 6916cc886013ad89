"""What every table job shares: reading rows, and the interface the engines drive.

A table job is set up once from the columns of the tables to come and
then applied to any number of them, row by row: a
:class:`~redcorr.correction.Correction` (dereddened magnitudes) or a
:class:`~redcorr.correction.fit.CatalogFit` (each star's reddening fitted
from its photometry). :class:`TableJob` is their common base: both read
magnitudes, errors and the reddening of each row (for the fit, a prior)
the same way, flag the same faults, name a row in messages the same way,
and offer :meth:`~TableJob.correct`, :meth:`~TableJob.apply` and
:meth:`~TableJob.correct_arrays`, through which the stream engine
(:mod:`redcorr.io.batch`) and the Dask engine (:mod:`redcorr.io.dask_engine`)
run either.
"""

import numpy as np
import pandas as pd

from redcorr._constants import MAP_FLAGS
from redcorr.correction.columns import column_names, float_column, text_column
from redcorr.correction.flags import CORRECTION_FLAGS
from redcorr.exceptions import InputError
from redcorr.maps.distance import EDSD_LENGTH_SCALE_PC, DistanceSamples, prior_dominated

__all__ = ["TableJob"]

_MAP_DISTANCE_BITS = np.uint8(MAP_FLAGS["beyond"] | MAP_FLAGS["no-distance"])
"""Map flags about the distance, which have correction flags of their own (not ``map_coverage``)."""


class TableJob:
    """The base of the table jobs: row reading and the engines' interface (it holds no state of its own).

    A subclass sets these attributes at set-up:

    ``plan`` (:class:`~redcorr.correction.columns.ColumnPlan`), ``source``
    (:class:`~redcorr.correction.ReddeningSource`, the reddening read),
    ``strict`` (bool: text in a number column raises instead of being
    flagged), ``summary`` (its ``rows``: rows read before this table) and
    ``describe_row`` (callable or None, see
    :attr:`redcorr.correction.Correction.describe_row`).

    Flags are set with the bits of :data:`~redcorr.correction.CORRECTION_FLAGS`.

    It also defines ``output_columns`` (the columns a job adds, in order),
    ``setup()`` (a JSON-ready description), ``numeric_columns()`` (input
    columns read as numbers), ``written_columns(keep)`` (refusing a kept
    column named like an output) and ``_arrays(table)`` (the output columns
    of one table as a dict of arrays), on which the methods here build.
    """

    def _numeric(self, table, col, flags):
        """Column as float64; text cells become NaN and set the non_numeric flag (or raise)."""
        values = float_column(table, col)
        if values is not None:
            return values
        series = text_column(table, col)
        values = pd.to_numeric(series, errors="coerce")
        blank = series.isna().to_numpy() | series.astype(str).str.strip().eq("").to_numpy()
        bad = values.isna().to_numpy() & ~blank
        if np.any(bad):
            if self.strict:
                first = int(np.flatnonzero(bad)[0])
                raise InputError(
                    f"column {col!r} has text {series.iloc[first]!r} in {self._where(first)}, "
                    "where a number is needed (strict mode)"
                )
            flags[bad] |= CORRECTION_FLAGS["non_numeric"]
        return values.to_numpy(dtype=float, na_value=np.nan)

    def reddening(self, table, flags):
        """Each row's E(B-V) or A_V (as the source gives it) and its 1-sigma error, from the job's source.

        Parameters
        ----------
        table : pandas.DataFrame
            Rows with the columns the source names.
        flags : ndarray of int64, shape (n,)
            Receives, in place, the bits of
            :data:`~redcorr.correction.CORRECTION_FLAGS` for text where a
            number is needed, rows a map does not cover, beyond its last
            distance or without a distance.

        Returns
        -------
        red, err : ndarray, shape (n,)
            The quantity is ``self.plan.red_quantity`` (``"ebv"`` or
            ``"av"``); with a distance error, ``err`` adds the map's spread
            over the row's distances in quadrature.
        """
        n = len(table)
        source, plan = self.source, self.plan
        spread = np.zeros(n) if plan.dist_err_col is not None else None  # σ over each row's distances
        if plan.red_kind == "constant":
            red = np.full(n, source.ebv if source.ebv is not None else source.av)
        elif plan.red_kind == "column":
            red = self._numeric(table, plan.red_col, flags)
        else:
            lon = self._numeric(table, plan.lon_col, flags)
            lat = self._numeric(table, plan.lat_col, flags)
            red = np.full(n, np.nan)
            good = np.isfinite(lon) & np.isfinite(lat)
            off_sky = good & (np.abs(lat) > 90.0)
            if np.any(off_sky) and self.strict:
                first = int(np.flatnonzero(off_sky)[0])
                raise InputError(f"column {plan.lat_col!r} has latitude {float(lat[first])!r} in {self._where(first)}, "
                                 "outside [-90, 90] (strict mode)")
            good &= ~off_sky  # a position off the sphere is no position: the row is flagged missing
            distance = self._distances(table, flags)
            map_flags = np.zeros(n, np.uint8)
            if np.any(good):
                extra = {}
                if distance is not None:
                    extra["distance"] = DistanceSamples(distance.nodes_pc[good], distance.weights[good],
                                                        distance.method)
                    extra["return_error"] = spread is not None
                found = source.dust_map.lookup(lon[good], lat[good], frame=plan.frame, **extra)
                red[good] = np.asarray(found[0], float) * source.map_scale
                if spread is not None:
                    spread[good] = np.asarray(found[1], float) * source.map_scale
                map_flags[good] = np.asarray(found[-1], np.uint8)
            no_distance = (map_flags & MAP_FLAGS["no-distance"]) != 0
            no_value = ((map_flags & ~_MAP_DISTANCE_BITS) != 0) | (~np.isfinite(red) & ~no_distance)
            flags[good & no_value] |= CORRECTION_FLAGS["map_coverage"]
            flags[(map_flags & MAP_FLAGS["beyond"]) != 0] |= CORRECTION_FLAGS["beyond_map"]
            flags[no_distance] |= CORRECTION_FLAGS["no_distance"]
        if plan.red_err_col is not None:
            err = self._numeric(table, plan.red_err_col, flags)
        else:
            err = np.full(n, source.reddening_error)
        if spread is not None:  # the map's σ over the distance, independent of the reddening's own
            err = np.hypot(err, spread)
        return red, err

    def _distances(self, table, flags):
        """Each row's distance for a distance-resolved map, as `DistanceSamples` (None: none named).

        A value that gives no distance (a negative distance or error, a
        parallax <= 0 without an error, a parallax error <= 0) makes the row
        unusable, so the map flags it; in strict mode it raises instead.
        """
        plan = self.plan
        if plan.dist_kind is None:
            return None
        value = self._numeric(table, plan.dist_col, flags)
        error = self._numeric(table, plan.dist_err_col, flags) if plan.dist_err_col else None
        if plan.dist_kind == "distance":
            self._refuse(value < 0, plan.dist_col, value, "a distance >= 0 pc is needed")
            if error is None:
                return DistanceSamples.point(value)
            self._refuse(error < 0, plan.dist_err_col, error, "a distance error >= 0 pc is needed")
            return DistanceSamples.gaussian(value, error)
        if error is None:
            self._refuse(value <= 0, plan.dist_col, value,
                         "a parallax > 0 mas is needed (or a parallax error column, for the prior)")
            with np.errstate(divide="ignore"):
                return DistanceSamples.point(1000.0 / value)  # pc from mas; a parallax <= 0 gives no distance
        self._refuse(error <= 0, plan.dist_err_col, error, "a parallax error > 0 mas is needed")
        flags[prior_dominated(value, error) & (error > 0)] |= CORRECTION_FLAGS["prior_distance"]
        return DistanceSamples.from_parallax(value, error, length_scale_pc=self._prior_length())

    def _prior_length(self):
        """pc: the length scale of the distance prior for parallaxes (the option, else the default)."""
        length = self.source.prior_length
        return EDSD_LENGTH_SCALE_PC if length is None else length

    def _refuse(self, bad, col, values, allowed):
        """In strict mode, raise for the first row of ``bad`` (rows whose ``values`` give no distance)."""
        if self.strict and np.any(bad):
            first = int(np.flatnonzero(bad)[0])
            raise InputError(f"column {col!r} has {float(values[first])!r} in {self._where(first)}, where "
                             f"{allowed} (strict mode)")

    def _check_columns(self, table):
        """Refuse a table that lacks a column the job reads (one line listing what is missing)."""
        names = column_names(table)
        missing = [c for c in self.plan.used() if c not in names]
        if missing:
            raise InputError(f"columns {missing} are missing; the columns are {names}")

    def _where(self, i):
        """Row ``i`` of the table being corrected, for messages (see :attr:`describe_row`)."""
        row = self.summary.rows + i
        return f"row {row + 1}" if self.describe_row is None else self.describe_row(row)

    def correct(self, frame, keep=None):
        """Run the job on one DataFrame; return the kept input columns followed by the output columns.

        The counts of the rows processed are added to :attr:`summary`.

        Parameters
        ----------
        frame : pandas.DataFrame
            With the columns given at set-up.
        keep : list of str, optional
            Input columns to copy to the result (default all); see
            :meth:`written_columns` for a name shared with an output column.

        Returns
        -------
        pandas.DataFrame
            Same index as ``frame``.
        """
        out = self.apply(frame, keep)
        self.summary.add(out)
        return out

    def apply(self, frame, keep=None):
        """The same table as :meth:`correct`, without counting it in :attr:`summary`.

        For tables corrected elsewhere (the partitions of a Dask DataFrame,
        :mod:`redcorr.io.dask_engine`), whose counts are gathered afterwards.
        """
        self.written_columns(frame.columns if keep is None else keep)
        added = pd.DataFrame(self._arrays(frame), index=frame.index)
        return pd.concat([frame if keep is None else frame[list(keep)], added], axis=1)

    def correct_arrays(self, table):
        """Run the job on one table; return only the output columns, as a dict of numpy arrays.

        The same numbers as :meth:`correct` without building a DataFrame: the
        streaming path (:mod:`redcorr.io.batch`) passes the Arrow tables it
        reads and joins the result to the input columns itself. The counts
        are added to :attr:`summary`.

        Parameters
        ----------
        table : pandas.DataFrame or pyarrow.Table
            With the columns given at set-up.

        Returns
        -------
        dict
            Output column name → 1-d array, in :attr:`output_columns` order.
        """
        out = self._arrays(table)
        self.summary.add(out)
        return out

"""Correct a Dask DataFrame partition by partition, and summarise the result in one pass.

The correction itself is :class:`redcorr.correction.Correction`, sent to the
workers; this module only maps it over the partitions and gathers the
counts a :class:`~redcorr.correction.RunSummary` holds. Dask is optional
and imported only when a summary is computed.
"""

import copy
import warnings

__all__ = ["correct_dask", "summarise_dask"]


def correct_dask(ddf, correction, keep=None):
    """Correct a Dask DataFrame partition by partition; returns a lazy Dask DataFrame.

    Parameters
    ----------
    ddf : dask.dataframe.DataFrame
    correction : redcorr.correction.Correction
        Set up with ``list(ddf.columns)``; it is sent to the workers. Its
        :attr:`~redcorr.correction.Correction.summary` is not updated (the
        partitions run elsewhere); summarise the result with
        :func:`summarise_dask`.
    keep : list of str, optional
        Input columns to copy to the result (default all).

    Returns
    -------
    dask.dataframe.DataFrame
        The same rows and columns as :meth:`~redcorr.correction.Correction.correct` gives.

    Notes
    -----
    A worker knows its partition, not the rows before it: a message about
    a row (strict mode) names the partition and the row counted from the
    partition's start.
    """
    meta = correction.apply(ddf._meta, keep)
    return ddf.map_partitions(_correct_partition, correction, keep, meta=meta)


def _correct_partition(frame, correction, keep, partition_info=None):
    """``correction.apply`` on one partition, its messages naming the partition (``partition_info``: from Dask)."""
    if partition_info is not None:
        number = partition_info["number"] + 1
        correction = copy.copy(correction)  # shared by the threads of other partitions: a copy for this one
        correction.describe_row = lambda row: f"row {row + 1} of Dask partition {number} (counted from its start)"
    return correction.apply(frame, keep)


def summarise_dask(result, correction, also=(), **compute_options):
    """A :class:`~redcorr.correction.RunSummary` of a corrected Dask DataFrame.

    Parameters
    ----------
    result : dask.dataframe.DataFrame
        From :func:`correct_dask`.
    correction : redcorr.correction.Correction
    also : list of dask collections
        Computed in the same pass (e.g. the delayed write of ``result``), so
        the partitions are corrected only once.
    **compute_options
        Passed to :func:`dask.compute` (e.g. ``scheduler=client``).
    """
    import dask  # noqa: PLC0415 - optional dependency

    kind = type(correction.summary)  # RunSummary, or a subclass naming other flags and columns
    flags = result[kind.FLAG_COLUMN]
    ebv = result[kind.EBV_COLUMN]
    counts = {name: (flags & bit).astype(bool).sum() for name, bit in kind.FLAG_BITS.items()}
    counts["any"] = (flags != 0).sum()
    extra = {"rows": flags.count(), "ebv_min": ebv.min(), "ebv_max": ebv.max()}
    if "teff_iterations" in result.columns:
        extra["it_max"] = result["teff_iterations"].max()
        extra["it_sum"] = result["teff_iterations"].sum()
    with warnings.catch_warnings():  # a delayed CSV write mixes graph types; harmless here
        warnings.filterwarnings("ignore", message="Computing mixed collections", category=UserWarning)
        counts, extra, *_ = dask.compute(counts, extra, *also, **compute_options)
    summary = kind(correction.setup())
    summary.started = correction.summary.started  # timed from the set-up, as the stream engine's run
    summary.rows = int(extra["rows"])
    summary.flagged = {k: int(v) for k, v in counts.items()}
    summary.ebv_min, summary.ebv_max = float(extra["ebv_min"]), float(extra["ebv_max"])
    if "it_max" in extra:
        summary.iterations_max, summary.iterations_sum = int(extra["it_max"]), int(extra["it_sum"])
    return summary

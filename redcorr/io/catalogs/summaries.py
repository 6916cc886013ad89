"""The JSON summary written beside the output of a catalog run."""

import json
from pathlib import Path

import numpy as np

from redcorr.io._atomic import atomic_path

__all__ = ["summary_path", "write_summary"]


def summary_path(output):
    """Where the JSON summary of a run writing ``output`` goes: ``OUTPUT.summary.json``."""
    output = Path(output)
    return output.with_name(output.name + ".summary.json")


def write_summary(summary, output, *, overwrite=True, group=None):
    """Write a run summary (a JSON-ready dict) beside ``output``, atomically; return its path.

    Parameters
    ----------
    summary : dict
    output : path-like
        The output the summary describes.
    overwrite : bool
        Replace an existing summary.
    group : object from :func:`redcorr.io.output_group`, optional
        Place the summary together with the output.
    """
    target = summary_path(output)
    with atomic_path(target, overwrite=overwrite, group=group) as tmp:
        Path(tmp).write_text(json.dumps(_json_clean(summary), indent=2, allow_nan=False) + "\n")
    return target


def _json_clean(value):
    if isinstance(value, float) and not np.isfinite(value):
        return None
    if isinstance(value, dict):
        return {str(k): _json_clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_clean(v) for v in value]
    if isinstance(value, np.generic):
        return _json_clean(value.item())
    return value


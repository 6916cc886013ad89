"""Text forms of numbers shared by the shells (command line, terminal UI, demo): standard library only."""

import math

__all__ = ["human_time", "time_cell"]

_TIME_UNITS = (("yr", 365.25 * 86400.0), ("d", 86400.0), ("h", 3600.0), ("min", 60.0))
"""Units of :func:`human_time`, longest first (a Julian year of 365.25 d)."""


def human_time(seconds):
    """A time in s in the largest unit that keeps it at least 1, to 3 significant digits.

    Examples
    --------
    >>> human_time(1.658e7)
    '192 d'
    >>> human_time(884.4)
    '14.7 min'
    >>> human_time(42.0)
    '42 s'
    """
    if not math.isfinite(seconds):
        return f"{seconds:g} s"
    for unit, size in _TIME_UNITS:
        if abs(seconds) >= size:
            return f"{seconds / size:.3g} {unit}"
    return f"{seconds:.3g} s"


def time_cell(seconds):
    """A time in s for a table: ``.4g``, and its human form (:func:`human_time`) from a minute up.

    Examples
    --------
    >>> time_cell(1.658e7)
    '1.658e+07 (192 d)'
    >>> time_cell(50.33)
    '50.33'
    """
    text = format(seconds, ".4g")
    return f"{text} ({human_time(seconds)})" if math.isfinite(seconds) and abs(seconds) >= 60.0 else text

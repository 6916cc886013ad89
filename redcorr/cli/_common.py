"""Helpers shared by the subcommands: argument types and output formatting."""

import argparse
import json
import math
import os
import sys

from redcorr.exceptions import InputError

__all__ = [
    "WAVE_UNITS",
    "UNIT_HELP",
    "wavelengths",
    "print_json",
    "print_table",
    "finite_float",
    "positive_float",
    "positive_seconds",
    "check_outputs",
]

WAVE_UNITS = {"um": "um", "nm": "nm", "AA": "AA", "1/um": "1 / um", "um-1": "1 / um"}
"""Choices of ``--unit`` (micron, nanometre, ångström, inverse micron twice) → astropy unit string."""

UNIT_HELP = "unit of --wave: um, nm, AA, or 1/um (also written um-1) for wavenumbers; default um"
"""Help text of ``--unit``; it names every token of :data:`WAVE_UNITS`."""


def wavelengths(values, unit):
    """Numbers given in ``--unit`` as a Quantity, and the same wavelengths in µm.

    Parameters
    ----------
    values : list of float
    unit : str
        A key of :data:`WAVE_UNITS`.

    Returns
    -------
    wave : `~astropy.units.Quantity`
    wave_um : ndarray
    """
    import numpy as np  # heavy: loaded on use, so that the parser builds without numpy or astropy
    from astropy import units as u

    for value in values:
        if not value > 0:
            raise InputError(f"--wave={value:g} {unit} is not a positive wavelength; wavelengths must be > 0")
    wave = np.asarray(values) * u.Unit(WAVE_UNITS[unit])
    return wave, wave.to_value(u.um, equivalencies=u.spectral())


def finite_float(text):
    """argparse type: a finite float, with a message that quotes the value."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a number") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"{text!r} is not a finite number")
    return value


def _positive(text, unit):
    value = finite_float(text)
    if not value > 0:
        raise argparse.ArgumentTypeError(f"{text!r} is not allowed; it must be a number > 0{unit}")
    return value


def positive_float(text):
    """argparse type: a finite float > 0, with a message that quotes the value."""
    return _positive(text, "")


def positive_seconds(text):
    """argparse type: a time in s, finite and > 0, with a message that quotes the value."""
    return _positive(text, " s")


def check_outputs(args, *options):
    """Refuse unusable output paths of ``args`` before any work is done.

    Parameters
    ----------
    args : argparse.Namespace
    *options : str
        Option names such as ``"--plot"``; an option left out (None) is skipped.

    Raises
    ------
    InputError
        Naming the option and the path: empty, a folder, or in a folder that
        does not exist.
    """
    from redcorr.io import check_output_path  # noqa: PLC0415 - loads pathlib-only io helpers

    for option in options:
        path = getattr(args, option.lstrip("-").replace("-", "_"))
        if path is None:
            continue
        if not path.strip():
            raise InputError(f"{option}={path!r} is empty; give a file name")
        if os.path.isdir(path):
            raise InputError(f"{option}={path!r} is a folder; give a file name")
        check_output_path(path, name=option)


def _clean(value):
    """JSON has no NaN: write it as null."""
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    return value


def print_json(obj, file=None):
    """Print ``obj`` as indented, standard JSON (NaN becomes null)."""
    json.dump(_clean(obj), file or sys.stdout, indent=2, allow_nan=False)
    print(file=file or sys.stdout)


def print_table(rows, columns, formats=None, file=None, wrap=None):
    """Print dict rows as an aligned text table.

    Parameters
    ----------
    rows : list of dict
    columns : list of str
        Keys to show, in order; also the header.
    formats : dict, optional
        Key → format spec for values (default ``.4f`` for floats), or a function float → str.
        Columns of numbers are aligned right either way.
    wrap : dict, optional
        Key → width: text in that column is wrapped at word boundaries to lines of at
        most that width, a row then taking several lines.

    Examples
    --------
    >>> print_table([{"key": "F4", "what": "open a catalog, check its columns, run"}], ["key", "what"],
    ...             wrap={"what": 20})
    key  what
    ---  ------------------
    F4   open a catalog,
         check its columns,
         run
    """
    import textwrap

    wrap = wrap or {}
    formats = formats or {}
    cells = [list(columns)]
    numeric = [all(isinstance(row[c], (int, float)) for row in rows) for c in columns]
    for row in rows:
        line = []
        for col in columns:
            value = row[col]
            if isinstance(value, float):
                spec = formats.get(col, ".4f")
                line.append("nan" if math.isnan(value) else spec(value) if callable(spec) else format(value, spec))
            else:
                line.append(str(value))
        cells.append(line)
    cells = [[textwrap.wrap(c, wrap[col]) or [""] if col in wrap and j else [c]  # the header (j = 0) as it is
              for c, col in zip(line, columns, strict=True)] for j, line in enumerate(cells)]
    widths = [max(max(len(part) for part in r[i]) for r in cells) for i in range(len(columns))]
    out = file or sys.stdout
    for i, line in enumerate(cells):
        for k in range(max(len(parts) for parts in line)):
            text = ((parts[k] if k < len(parts) else "").rjust(w) if num else
                    (parts[k] if k < len(parts) else "").ljust(w)
                    for parts, w, num in zip(line, widths, numeric, strict=True))
            print("  ".join(text).rstrip(), file=out)
        if i == 0:
            print("  ".join("-" * w for w in widths), file=out)

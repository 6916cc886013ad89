"""Read tabulated extinction curves from user files (ECSV or CSV)."""


import numpy as np
from astropy import units as u

from redcorr._validate import check_choice
from redcorr.curves import LAWS, TabulatedCurve, get_curve
from redcorr.exceptions import InputError
from redcorr.io._files import input_file

__all__ = ["read_curve_table", "load_curve"]

_FILE_PREFIX = "file:"
_GRAIN_PREFIX = "grain:"


def read_curve_table(path):
    """Read a tabulated A(λ)/A(V) curve.

    Parameters
    ----------
    path : path-like
        ECSV (``.ecsv``) with a ``wavelength`` column carrying a unit of length,
        frequency or wavenumber (or a unitless ``wavelength_um`` column) and an
        ``A_over_AV`` column; or CSV with columns ``wavelength_um`` and
        ``A_over_AV``. An ``R_V`` key in the ECSV meta sets R_V; a ``citation``
        key names the source.

    Returns
    -------
    TabulatedCurve
    """
    from astropy.table import Table  # heavy: loaded only to read a file

    path = input_file(path, "curve file")
    fmt = "ascii.ecsv" if path.suffix.lower() == ".ecsv" else "ascii.csv"
    try:
        table = Table.read(path, format=fmt)
    except Exception as exc:  # astropy raises many types for malformed text
        raise InputError(f"curve file {str(path)!r} could not be read as {fmt[6:].upper()}: {exc}") from None
    names = table.colnames
    if "A_over_AV" not in names:
        raise InputError(f"curve file {str(path)!r} has no 'A_over_AV' column; columns are {names}")
    if "wavelength" in names and table["wavelength"].unit is not None:
        wave = u.Quantity(table["wavelength"])
    elif "wavelength_um" in names:
        try:
            wave = np.asarray(table["wavelength_um"], dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"curve file {str(path)!r}: column 'wavelength_um' is not numeric") from None
    else:
        raise InputError(
            f"curve file {str(path)!r} needs a 'wavelength_um' column or a 'wavelength' column "
            f"with a unit; columns are {names}"
        )
    try:
        a_over_av = np.asarray(table["A_over_AV"], dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"curve file {str(path)!r}: column 'A_over_AV' is not numeric") from None
    meta = table.meta or {}
    try:
        return TabulatedCurve(
            wave,
            a_over_av,
            r_v=meta.get("R_V"),
            name=f"file:{path.name}",
            citation=str(meta.get("citation", f"user table {path.name}")),
        )
    except InputError as exc:
        raise InputError(f"curve file {str(path)!r}: {exc}") from None


def _grain_curve(spec, r_v):
    """The extinction curve of a named grain model or of ``grain:PATH.toml``, through the disk cache."""
    from redcorr.io.grains import default_cache, get_grain_model  # noqa: PLC0415 - grain models load on demand

    curve = get_grain_model(spec).curve(cache=default_cache())
    if r_v is not None and not abs(float(r_v) - curve.r_v) <= 0.005:
        raise InputError(
            f"r_v={r_v!r} cannot be set for grain model {spec!r}: its R_V ({curve.r_v:.3f}) "
            "follows from its grains; leave R_V unset"
        )
    return curve


def load_curve(spec, r_v=None):
    """A curve from a law name, ``file:PATH``, a grain-model name or ``grain:PATH.toml``.

    Parameters
    ----------
    spec : str
        Registry name (see :func:`redcorr.curves.list_curves`),
        ``file:PATH`` for a table read by :func:`read_curve_table`, a named
        grain model (see :func:`redcorr.io.grains.list_grain_models`, e.g.
        ``wd01-rv3.1``) or ``grain:PATH.toml`` for a grain model described in
        TOML (:func:`redcorr.io.grains.read_grain_model`). Grain models are
        computed with Mie theory on 0.1-100 µm (cached on disk).
    r_v : float, optional
        R_V for laws; for a file, overrides the file's own R_V. A grain
        model's R_V follows from its grains and cannot be changed.
    """
    if isinstance(spec, str) and spec.startswith(_GRAIN_PREFIX):
        return _grain_curve(spec, r_v)
    if isinstance(spec, str) and spec.startswith(_FILE_PREFIX):
        curve = read_curve_table(spec[len(_FILE_PREFIX):])
        if r_v is not None:
            curve = TabulatedCurve(*curve.table, r_v=r_v, name=curve.name, citation=curve.citation)
        return curve
    if str(spec).strip().lower() in LAWS:  # a law by its name: the grain models (scipy) need not load
        return get_curve(spec, r_v=r_v)
    from redcorr.io.grains import GRAIN_MODELS  # noqa: PLC0415

    # One namespace for laws and grain models, so a typo gets suggestions from both.
    key = check_choice("law", spec, sorted(LAWS) + sorted(GRAIN_MODELS))
    if key in GRAIN_MODELS:
        return _grain_curve(key, r_v)
    return get_curve(key, r_v=r_v)

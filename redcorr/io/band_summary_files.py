"""Write a band summary (the rows of `redcorr.band_summary.band_summary`) to ECSV or CSV."""

from pathlib import Path

from astropy.table import Table

from redcorr.exceptions import InputError
from redcorr.io._atomic import atomic_path, check_output_path

__all__ = ["write_band_summary"]

_UNITS = {"lambda_eff_um": "um", "A_band": "mag"}
_FORMATS = {".ecsv": "ascii.ecsv", ".csv": "ascii.csv"}


def write_band_summary(rows, path, meta=None):
    """Write band rows atomically; the format follows the suffix (``.ecsv`` or ``.csv``).

    Parameters
    ----------
    rows : list of dict
        Rows with the keys of `redcorr.band_summary.BAND_SUMMARY_COLUMNS`.
    path : path-like
        Output file; its folder must exist.
    meta : dict, optional
        Provenance (curve, R_V, A_V, source spectrum); kept in the ECSV
        header, dropped in CSV.

    Returns
    -------
    pathlib.Path
    """
    path = Path(path)
    fmt = _FORMATS.get(path.suffix.lower())
    if fmt is None:
        raise InputError(f"output={str(path)!r} must end in .ecsv or .csv")
    if not rows:
        raise InputError("the band table is empty; choose at least one band")
    check_output_path(path)
    table = Table(rows=rows, names=list(rows[0]), meta=dict(meta or {}))
    for name, unit in _UNITS.items():
        if name in table.colnames:
            table[name].unit = unit
    with atomic_path(path, named=True) as tmp:  # astropy writes to a file name
        table.write(tmp, format=fmt, overwrite=True)
    return path

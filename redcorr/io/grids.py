"""Coefficient grids to and from ECSV files (written atomically)."""


from astropy.table import Table

from redcorr import __version__
from redcorr.coefficients import CoefficientGrid
from redcorr.exceptions import InputError
from redcorr.io._atomic import atomic_path, check_output_path
from redcorr.io._files import input_file

__all__ = ["write_coefficient_grid", "read_coefficient_grid"]


def write_coefficient_grid(grid, path, polynomial=None):
    """Write a :class:`~redcorr.coefficients.CoefficientGrid` as ECSV, atomically.

    The header holds the provenance (law, citation, R_V, every band's
    source, convention and pivot wavelength), the E(B−V) definition, the
    formula, the redcorr version and the polynomial fit with its residuals.
    """
    out = check_output_path(path)
    table = grid.to_table(polynomial)
    table.meta["written_by"] = f"redcorr {__version__}"
    with atomic_path(out, suffix=".ecsv", named=True) as tmp:  # astropy writes to a file name
        table.write(tmp, format="ascii.ecsv", overwrite=True)
    return out


def read_coefficient_grid(path):
    """Read a grid written by :func:`write_coefficient_grid`."""
    path = input_file(path, "grid file")
    try:
        table = Table.read(path, format="ascii.ecsv")
    except Exception as exc:  # astropy raises many types for malformed text
        raise InputError(f"grid file {str(path)!r} could not be read as ECSV: {exc}") from None
    try:
        return CoefficientGrid.from_table(table)
    except InputError as exc:
        raise InputError(f"grid file {str(path)!r}: {exc}") from None

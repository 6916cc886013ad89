"""The edge of redcorr that touches files; the physics modules never do."""

from redcorr.io._atomic import atomic_path, check_output_path
from redcorr.io.curves import load_curve, read_curve_table
from redcorr.io.filters import list_bands, load_band
from redcorr.io.grains import read_grain_model, read_optical_constants, read_size_table
from redcorr.io.grids import read_coefficient_grid, write_coefficient_grid
from redcorr.io.instrument import load_instrument
from redcorr.io.maps import open_map
from redcorr.io.spectra import load_sed

__all__ = [
    "atomic_path",
    "check_output_path",
    "load_curve",
    "read_curve_table",
    "load_band",
    "list_bands",
    "load_sed",
    "read_coefficient_grid",
    "write_coefficient_grid",
    "load_instrument",
    "open_map",
    "read_grain_model",
    "read_optical_constants",
    "read_size_table",
]

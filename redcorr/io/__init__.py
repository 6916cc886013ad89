"""The edge of redcorr that touches files; the physics modules never do.

The names below are loaded from their submodules on first use, so that
``from redcorr.io import load_curve`` does not also import the catalog,
map and grain readers (pandas, astropy.table, astropy.coordinates).
"""

import importlib

_LAZY = {
    "atomic_folder": "redcorr.io._atomic",
    "atomic_path": "redcorr.io._atomic",
    "check_output_path": "redcorr.io._atomic",
    "output_group": "redcorr.io._atomic",
    "load_curve": "redcorr.io.curves",
    "read_curve_table": "redcorr.io.curves",
    "load_band": "redcorr.io.filters",
    "list_bands": "redcorr.io.filters",
    "load_sed": "redcorr.io.spectra",
    "read_coefficient_grid": "redcorr.io.grids",
    "write_coefficient_grid": "redcorr.io.grids",
    "load_instrument": "redcorr.io.instrument",
    "open_map": "redcorr.io.maps",
    "correction_options": "redcorr.io.correction",
    "correct_dataframe": "redcorr.io.correction",
    "fit_options": "redcorr.io.correction",
    "fit_dataframe": "redcorr.io.correction",
    "get_grain_model": "redcorr.io.grains",
    "list_grain_models": "redcorr.io.grains",
    "read_grain_model": "redcorr.io.grains",
    "read_optical_constants": "redcorr.io.grains",
    "read_size_table": "redcorr.io.grains",
    "load_intrinsic_colours": "redcorr.io.intrinsic",
    "read_intrinsic_colours": "redcorr.io.intrinsic",
    "write_intrinsic_colours": "redcorr.io.intrinsic",
}

__all__ = list(_LAZY)


def __getattr__(name):
    if name in _LAZY:
        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'redcorr.io' has no attribute {name!r}")

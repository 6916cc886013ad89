"""Constants the command line needs to build its parser, free of any import.

They live here so that ``redcorr --help`` loads neither pandas nor astropy.
Each is re-exported by the module it belongs to (named below), which is
where to import it from.
"""

__all__ = ["CORRECTION_FLAG_BITS", "DEFAULT_TEMPERATURE", "DEFAULT_CHUNK_ROWS", "MAP_FLAG_NAMES",
           "INTERPOLATIONS", "MAP_UNITS"]

CORRECTION_FLAG_BITS = {
    "non_numeric": 1,
    "missing": 2,
    "negative_reddening": 4,
    "outside_grid": 8,
    "outside_curve": 16,
    "map_coverage": 32,
    "not_converged": 64,
}
"""dict: name → value of each bit of the ``dered_flags`` column (``redcorr.correct.FLAG_BITS``)."""

DEFAULT_TEMPERATURE = 7000.0
"""K: default blackbody source, a mid-F star, typical of field stars (common practice, no source)."""

DEFAULT_CHUNK_ROWS = 65_536
"""Rows per chunk unless asked otherwise: half a MB per float column, so that the few chunks in
flight (read ahead, being corrected, being written) stay small beside the program itself
(``redcorr.io.catalogs``)."""

MAP_FLAG_NAMES = {1: "outside", 2: "blank", 4: "partial", 8: "no-position"}
"""Dust-map flag bit → short name, for printing (``redcorr.maps.FLAG_NAMES``)."""

INTERPOLATIONS = ("bilinear", "nearest")
"""Ways of sampling a dust map between pixels (``redcorr.maps``)."""

MAP_UNITS = ("E(B-V)", "A_V")
"""What a dust map may hold (``redcorr.maps``)."""

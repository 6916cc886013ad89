"""Constants the command line needs to build its parser, free of any import.

They live here so that ``redcorr --help`` loads neither pandas nor astropy.
Each is re-exported by the module it belongs to (named below), which is
where to import it from.
"""

__all__ = ["CORRECTION_FLAGS", "DEFAULT_TEMPERATURE", "DEFAULT_CHUNK_ROWS", "MAP_FLAGS",
           "INTERPOLATIONS", "MAP_UNITS", "PLAN_CAUTION"]

CORRECTION_FLAGS = {
    "non_numeric": 1,
    "missing": 2,
    "negative_reddening": 4,
    "outside_grid": 8,
    "outside_curve": 16,
    "map_coverage": 32,
    "not_converged": 64,
    "beyond_map": 128,
    "no_distance": 256,
    "prior_distance": 512,
}
"""dict: name → value of each bit of a correction's ``dered_flags`` column (``redcorr.correction.flags``)."""

FIT_FLAGS = {
    "no_fit": 1,
    "few_bands": 2,
    "teff_edge": 4,
    "bimodal": 8,
    "poor_fit": 16,
    "ebv_edge": 32,
    "underdetermined": 64,
    "unresolved": 128,
}
"""dict: name → bit of one star's fit (meanings: ``redcorr.photometric_reddening``, "Flags")."""

CATALOG_FIT_FLAGS = FIT_FLAGS | {"non_numeric": 256, "no_prior": 512}
"""dict: the bits of a catalog fit's ``fit_flags`` column: :data:`FIT_FLAGS`, then ``non_numeric`` (an
input cell was text, now NaN) and ``no_prior`` (a prior map has no usable value for the row)."""

DEFAULT_TEMPERATURE = 7000.0
"""K: default blackbody source, a mid-F star, typical of field stars (common practice, no source)."""

DEFAULT_CHUNK_ROWS = 65_536
"""Rows per chunk unless asked otherwise: half a MB per float column, so that the few chunks in
flight (read ahead, being corrected, being written) stay small beside the program itself
(``redcorr.io.catalogs``)."""

MAP_FLAGS = {"outside": 1, "blank": 2, "partial": 4, "no-position": 8, "beyond": 16, "no-distance": 32}
"""dict: name → value of each bit of a dust map's lookup flags (``redcorr.maps``); not the bits of
``CORRECTION_FLAGS``."""

INTERPOLATIONS = ("bilinear", "nearest")
"""Ways of sampling a dust map between pixels (``redcorr.maps``)."""

MAP_UNITS = ("E(B-V)", "A_V")
"""What a dust map may hold (``redcorr.maps``)."""

PLAN_CAUTION = (
    "Caution: these are estimates; confirm with the observatory's own tools before committing telescope time."
)
"""The caution shown with every exposure plan (``redcorr.exposure.CAUTION``)."""

TARGET_FLAGS = {
    "no_magnitude": 1,
    "no_reddening": 2,
    "beyond_map": 4,
    "no_distance": 8,
    "prior_distance": 16,
    "unreachable": 32,
    "over_time": 64,
    "non_numeric": 128,
}
"""dict: name → bit of the ``flags`` column of a target-list plan (meanings: ``redcorr.target_plan``)."""

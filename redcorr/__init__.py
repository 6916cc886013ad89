"""redcorr: interstellar extinction through real filters, and reddening correction.

The core is pure array code: extinction curves (:mod:`redcorr.curves`),
Mie theory and grain models (:mod:`redcorr.mie`, :mod:`redcorr.grains`),
band integration (:mod:`redcorr.bandpass`, :mod:`redcorr.sed`,
:mod:`redcorr.extinction`, :mod:`redcorr.coefficients`), synthetic
photometry (:mod:`redcorr.photometry`), map lookup (:mod:`redcorr.maps`), catalog
correction (:mod:`redcorr.correction`) and exposure planning
(:mod:`redcorr.ccd`, :mod:`redcorr.exposure`). Files are read and written only in
:mod:`redcorr.io`; the command line (:mod:`redcorr.cli`) and the terminal UI
(:mod:`redcorr.tui`) are thin shells over both.

The names below are importable from ``redcorr`` directly. Each is loaded on
first use, so ``import redcorr`` (which every ``redcorr.*`` import runs first)
imports neither numpy nor astropy and the command line starts quickly.
"""

import importlib

_LAZY = {
    "DustCurve": "redcorr.curves",
    "TabulatedCurve": "redcorr.curves",
    "get_curve": "redcorr.curves",
    "list_curves": "redcorr.curves",
    "get_grain_model": "redcorr.io.grains",
    "list_grain_models": "redcorr.io.grains",
    "Band": "redcorr.bandpass",
    "blackbody": "redcorr.sed",
    "band_extinction": "redcorr.extinction",
    "band_ratio": "redcorr.extinction",
    "coefficient_grid": "redcorr.coefficients",
    "correct_dataframe": "redcorr.io",
    "plan_exposure": "redcorr.exposure",
    "load_curve": "redcorr.io",
    "load_band": "redcorr.io",
    "open_map": "redcorr.io",
}

__all__ = list(_LAZY)
__version__ = "0.1.0"


def __getattr__(name):
    if name in _LAZY:
        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'redcorr' has no attribute {name!r}")

"""redcorr: interstellar extinction through real filters, and reddening correction.

The core (curves, and later grains, bands and correction) is pure array
code; files are read and written only in :mod:`redcorr.io`; the command
line (:mod:`redcorr.cli`) and the terminal UI are thin shells over both.
"""

from redcorr import mie  # a callable module: redcorr.mie(m, x) is redcorr.mie.mie(m, x)
from redcorr.curves import ExtinctionCurve, TabulatedCurve, get_curve, list_curves

__all__ = ["ExtinctionCurve", "TabulatedCurve", "get_curve", "list_curves", "mie"]
__version__ = "0.1.0"

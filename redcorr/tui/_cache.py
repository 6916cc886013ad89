"""Bands and source spectra loaded once per spec, so redrawing does not re-read files."""

import functools

from redcorr.io.filters import load_band
from redcorr.io.spectra import load_sed

__all__ = ["band", "sed"]


@functools.lru_cache(maxsize=128)
def band(spec):
    """`redcorr.io.filters.load_band`, remembered by spec (errors are not remembered)."""
    return load_band(spec)


@functools.lru_cache(maxsize=32)
def sed(spec):
    """`redcorr.io.spectra.load_sed`, remembered by spec (errors are not remembered)."""
    return load_sed(spec)

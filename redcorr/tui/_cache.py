"""Bands and source spectra loaded once per spec, so redrawing does not re-read files."""

import functools

from redcorr.io.filters import load_band
from redcorr.io.instrument import load_instrument
from redcorr.io.maps import open_map
from redcorr.io.spectra import load_sed

__all__ = ["band", "dust_map", "instrument", "sed"]


@functools.lru_cache(maxsize=128)
def band(spec):
    """`redcorr.io.filters.load_band`, remembered by spec (errors are not remembered)."""
    return load_band(spec)


@functools.lru_cache(maxsize=32)
def sed(spec):
    """`redcorr.io.spectra.load_sed`, remembered by spec (errors are not remembered)."""
    return load_sed(spec)


@functools.lru_cache(maxsize=8)
def instrument(spec):
    """`redcorr.io.instrument.load_instrument`, remembered by spec (errors are not remembered)."""
    return load_instrument(spec)


@functools.lru_cache(maxsize=4)
def dust_map(spec):
    """`redcorr.io.maps.open_map`, remembered by spec (errors are not remembered)."""
    return open_map(spec)

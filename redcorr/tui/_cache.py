"""Bands, spectra, instruments, maps and grain models loaded once per spec, so redrawing is quick."""

import functools
import threading

from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.io.instrument import load_instrument
from redcorr.io.maps import open_map
from redcorr.io.spectra import load_sed

__all__ = ["band", "dust_map", "grain_curve", "grain_ready", "instrument", "sed"]

_grains = {}
_grains_lock = threading.Lock()
_computing = {}


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


def grain_curve(spec):
    """`redcorr.io.load_curve` for a grain model, computed once (Mie theory is slow the first time).

    Two threads asking for the same model at once compute it once: the
    second waits for the first.
    """
    with _grains_lock:
        if spec in _grains:
            return _grains[spec]
        lock = _computing.setdefault(spec, threading.Lock())
    with lock:
        with _grains_lock:
            if spec in _grains:
                return _grains[spec]
        curve = load_curve(spec)
        with _grains_lock:
            return _grains.setdefault(spec, curve)


def grain_ready(spec):
    """True when :func:`grain_curve` has the model already."""
    with _grains_lock:
        return spec in _grains

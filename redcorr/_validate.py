"""Shared input checks, so that every error message is worded the same way.

Each check raises :class:`~redcorr.exceptions.InputError` with the name of
the argument, the offending value and what is allowed.
"""

import difflib
import math

import numpy as np
from astropy import units as u

from redcorr.exceptions import InputError, UnknownNameError

__all__ = [
    "as_a_v",
    "as_float_array",
    "as_seconds",
    "check_choice",
    "check_finite",
    "check_positive",
    "check_range",
    "check_sampled_curve",
    "check_snr",
    "inverse_micron",
    "shown",
]


def shown(value):
    """``value`` as an error message writes it: numbers plainly, strings quoted.

    A numpy scalar or array is shown through its Python value, so that a
    message never reads ``array(-0.1)`` or ``np.float64(2.0)``.
    """
    if isinstance(value, (np.ndarray, np.generic)):
        value = value.tolist()
    return repr(value)


def check_finite(name, value):
    """Return ``float(value)`` or raise if it is not a finite number."""
    try:
        out = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name}={shown(value)} is not a number") from None
    if not math.isfinite(out):
        raise InputError(f"{name}={shown(value)} must be a finite number")
    return out


def check_positive(name, value):
    """Return ``float(value)`` or raise if it is not a finite number > 0."""
    out = check_finite(name, value)
    if out <= 0:
        raise InputError(f"{name}={shown(value)} must be > 0")
    return out


def check_range(name, value, lo, hi):
    """Return ``float(value)`` or raise if it is not finite within ``[lo, hi]``."""
    out = check_finite(name, value)
    if not lo <= out <= hi:
        raise InputError(f"{name}={shown(value)} is outside the allowed range [{lo:g}, {hi:g}]")
    return out


def check_choice(name, value, choices, listed_by="--list"):
    """Return the canonical choice matching ``value`` case-insensitively.

    ``listed_by`` names the option that lists the choices when they are too
    many to quote; with None they are quoted however many there are.

    Raises
    ------
    UnknownNameError
        With up to three close matches, or the full list when few exist.
    """
    lookup = {str(c).lower(): c for c in choices}
    key = str(value).strip().lower()
    if key in lookup:
        return lookup[key]
    close = difflib.get_close_matches(key, list(lookup), n=3, cutoff=0.5)
    if close:
        hint = "did you mean " + ", ".join(repr(lookup[c]) for c in close) + "?"
    elif len(lookup) <= 12 or listed_by is None:
        hint = "choose from " + ", ".join(repr(c) for c in choices)
    else:
        hint = f"{len(lookup)} names are known; list them with {listed_by}"
    raise UnknownNameError(f"{name}={value!r} is not known; {hint}")


def as_float_array(name, value, unit=None, what="a number"):
    """``value`` as a float64 array, converting a Quantity to ``unit`` first.

    Parameters
    ----------
    name : str
        Argument name used in error messages.
    value : float, array_like or `~astropy.units.Quantity`
        Plain numbers are taken to be in ``unit`` already.
    unit : `~astropy.units.Unit`, optional
        Unit of the returned numbers; a Quantity in another unit of the same
        physical type is converted, any other unit is refused.
    what : str
        What the value is, for the unit error ("a length", "an angle", ...).
    """
    if isinstance(value, u.Quantity):
        if unit is None:
            unit = u.dimensionless_unscaled
        try:
            value = value.to_value(unit)
        except u.UnitConversionError:
            raise InputError(f"{name} has unit {value.unit!s}; {what} is needed") from None
    try:
        return np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name}={shown(value)} is not numeric") from None


def as_a_v(a_v):
    """A_V as a float64 array (mag); a Quantity in mag accepted; NaN passes through, infinities do not."""
    if isinstance(a_v, u.Quantity):
        a_v = a_v.to_value(u.mag)
    try:
        arr = np.asarray(a_v, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"a_v={shown(a_v)} is not numeric") from None
    if np.any(np.isinf(arr)):
        raise InputError("a_v must be finite (NaN is passed through)")
    return arr


def as_seconds(name, t, positive=False):
    """Exposure times as a float64 array in s (a Quantity of time accepted); NaN passed.

    Each must be finite and >= 0, or > 0 with ``positive`` (a time to plan,
    where nothing is detected in 0 s).
    """
    arr = as_float_array(name, t, u.s, "a unit of time")
    bad = ~np.isnan(arr) & ~((arr > 0) if positive else (arr >= 0))
    bad |= np.isinf(arr)
    if np.any(bad):
        limit = "> 0 s" if positive else ">= 0 s"
        raise InputError(f"{name}={arr[bad].flat[0]:g} s is not allowed; exposure times must be finite and {limit}")
    return arr


def check_snr(name, snr):
    """Signal-to-noise ratios as a float64 array; each finite and > 0, NaN passed."""
    arr = np.asarray(snr, dtype=float)
    bad = ~np.isnan(arr) & ~(arr > 0)
    bad |= np.isinf(arr)
    if np.any(bad):
        raise InputError(f"{name}={arr[bad].flat[0]:g} is not allowed; a signal-to-noise ratio must be finite and > 0")
    return arr


def inverse_micron(wave, name="wave"):
    """Convert wavelengths to wavenumbers x = 1/λ in µm⁻¹ as a float64 array.

    Parameters
    ----------
    wave : float, array_like or `~astropy.units.Quantity`
        Plain numbers are wavelengths in µm. A Quantity may carry any unit
        of length, frequency, energy or wavenumber (``u.spectral()``).
    name : str
        Argument name used in error messages.

    Returns
    -------
    x : ndarray
        Wavenumber in µm⁻¹, same shape as ``wave``. NaN stays NaN.
    """
    if isinstance(wave, u.Quantity):
        try:
            with np.errstate(divide="ignore", invalid="ignore"):  # 0 becomes inf, refused below
                x = wave.to_value(u.um**-1, equivalencies=u.spectral())
        except u.UnitConversionError:
            raise InputError(
                f"{name} has unit {wave.unit!s}; a length, frequency, energy "
                "or wavenumber unit is needed"
            ) from None
        x = np.asarray(x, dtype=float)
    else:
        try:
            lam = np.asarray(wave, dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"{name}={shown(wave)} is not numeric") from None
        with np.errstate(divide="ignore", invalid="ignore"):
            x = 1.0 / lam
    bad = np.isfinite(x) & (x <= 0)
    bad |= np.isinf(x)
    if np.any(bad):
        first = np.asarray(wave)[bad].flat[0] if not isinstance(wave, u.Quantity) else wave[bad].flat[0]
        raise InputError(f"{name}={first} is not a positive wavelength")
    return x


def check_sampled_curve(wave_um, values, name="throughput"):
    """Float64 ``(wave_um, values)`` of a sampled curve whose last axis runs along ``wave_um``.

    ``wave_um`` must be 1-d, finite, positive and strictly increasing, with
    at least two samples; ``values`` must end in an axis of the same length.
    """
    lam = np.asarray(wave_um, dtype=float)
    val = np.asarray(values, dtype=float)
    if lam.ndim != 1 or lam.size < 2 or val.shape[-1:] != lam.shape:
        raise InputError(
            f"wave_um (shape {lam.shape}) and {name} (shape {val.shape}) must share their last axis, "
            "with at least two wavelengths"
        )
    if not (np.all(np.isfinite(lam)) and np.all(lam > 0) and np.all(np.diff(lam) > 0)):
        raise InputError("wave_um must be finite, positive and strictly increasing")
    return lam, val

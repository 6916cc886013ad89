"""Read and validate an instrument description (TOML) for exposure planning.

The file describes a telescope and imager in our own keys::

    name = "Kittiwake 1.3 m / KW-CAM"

    [telescope]
    aperture_m = 1.3            # clear aperture diameter
    obstruction_m = 0.46        # diameter of the central obstruction (0 if none)
    optics_efficiency = 0.80    # mirrors, windows, correctors: one number, 0..1 (default 1)

    [camera]
    pixel_scale_arcsec = 0.42
    read_noise_e = 4.5          # e- rms per pixel
    dark_e_per_s = 0.002        # e- per second per pixel
    gain_e_per_adu = 1.4
    qe_wave_um = [0.35, 0.45, ...]   # optional quantum-efficiency table,
    qe = [0.55, 0.85, ...]           # interpolated linearly, 0..1

    [site]
    seeing_fwhm_arcsec = 1.3
    airmass = 1.2

    [photometry]
    aperture_radius_arcsec = 2.0
    sky_pixels = 2000           # optional: pixels of the sky annulus (n_B)

    [bands.kw-v]                # one table per band, in the order wanted
    filter = "kw-v"             # any band spec load_band accepts, products too:
                                # "myfilter*file:window.ecsv"
    peak_throughput = 0.62      # optional: rescale the curve to this peak (for
                                # curves normalised to a peak of 1)
    sky_mag_arcsec2 = 21.6      # AB mag/arcsec² at the site
    extinction_mag_per_airmass = 0.14

A band table may also override any key of ``[camera]``, ``[site]`` or
``[photometry]`` (e.g. a band's own ``seeing_fwhm_arcsec``). ``file:`` paths
are taken relative to the description's folder. Unknown keys are refused, so
that a misspelt key is never silently ignored.

The system throughput of a band is
``filter(λ) × QE(λ) × optics_efficiency``, rescaled to ``peak_throughput``
when that is given: a photon-counting fraction of the photons arriving at
the telescope, on the filter's wavelength grid. When the filter curve is
already a whole-system response (as the demo's ``kw-*`` curves are), give no
QE table and set ``peak_throughput``.
"""

import math
import warnings
from pathlib import Path

import numpy as np

from redcorr._paths import project_dir
from redcorr.bandpass import Band
from redcorr.exceptions import InputError, ThroughputWarning
from redcorr.exposure import Channel, Instrument
from redcorr.io._toml import load_toml
from redcorr.io.filters import load_band

__all__ = ["load_instrument", "instrument_from_dict", "DEMO_INSTRUMENT"]

DEMO_INSTRUMENT = "demo"
"""Name that :func:`load_instrument` resolves to ``demo/instrument.toml``."""

_TOP = {"name", "telescope", "camera", "site", "photometry", "bands"}
_TELESCOPE = {"aperture_m": None, "obstruction_m": 0.0, "optics_efficiency": 1.0}
_CAMERA = {"pixel_scale_arcsec": None, "read_noise_e": None, "dark_e_per_s": None, "gain_e_per_adu": None}
_QE = ("qe_wave_um", "qe")
_SITE = {"seeing_fwhm_arcsec": None, "airmass": 1.0}
_PHOT = {"aperture_radius_arcsec": None, "sky_pixels": math.inf}
_BAND_OWN = {"filter": None, "peak_throughput": None, "sky_mag_arcsec2": None, "extinction_mag_per_airmass": None}
_OVERRIDABLE = {**_CAMERA, **_SITE, **_PHOT}

_HINTS = {
    "aperture_m": "the telescope's clear aperture diameter in m",
    "pixel_scale_arcsec": "the pixel scale in arcsec per pixel",
    "read_noise_e": "the read noise in e- rms per pixel",
    "dark_e_per_s": "the dark current in e- per second per pixel",
    "gain_e_per_adu": "the gain in e- per ADU",
    "seeing_fwhm_arcsec": "the seeing FWHM in arcsec",
    "aperture_radius_arcsec": "the photometric aperture radius in arcsec",
    "filter": "a band spec (a filters/ name, speclite name, file:PATH, tophat:C:W or gauss:C:FWHM)",
    "sky_mag_arcsec2": "the sky brightness in AB mag/arcsec²",
    "extinction_mag_per_airmass": "the atmospheric extinction in mag per airmass",
}


def _where(source, section):
    return f"instrument {source}, [{section}]"


def _check_keys(table, allowed, source, section):
    if not isinstance(table, dict):
        raise InputError(f"{_where(source, section)} must be a table of keys, not {type(table).__name__}")
    unknown = sorted(set(table) - set(allowed))
    if unknown:
        raise InputError(
            f"{_where(source, section)}: unknown key {unknown[0]!r}; allowed keys are {', '.join(sorted(allowed))}"
        )


def _get(table, key, default, source, section):
    if key in table:
        return table[key]
    if default is None:
        raise InputError(f"{_where(source, section)}: {key} is missing; give {_HINTS.get(key, key)}")
    return default


def _number(value, key, source, section, lo=-math.inf, hi=math.inf, lo_open=False, allowed=None):
    ok_type = isinstance(value, (int, float)) and not isinstance(value, bool)
    bad = not ok_type or math.isnan(value) or not (lo < value if lo_open else lo <= value) or not value <= hi
    if bad:
        if allowed is None:
            lo_txt = f"> {lo:g}" if lo_open else f">= {lo:g}"
            allowed = lo_txt if hi == math.inf else f"{lo_txt} and <= {hi:g}"
        raise InputError(f"{_where(source, section)}: {key}={value!r} is not allowed; it must be a number {allowed}")
    return float(value)


def _spec(spec, base, key, source, section):
    """The band spec with each relative ``file:`` part taken from the description's folder."""
    if not isinstance(spec, str) or not spec.strip():
        raise InputError(f"{_where(source, section)}: {key}={spec!r} must be a band spec string")
    parts = []
    for part in spec.split("*"):
        part = part.strip()
        if part.startswith("file:") and base is not None:
            path = Path(part[5:]).expanduser()
            if not path.is_absolute():
                part = "file:" + str(base / path)
        parts.append(part)
    return "*".join(parts)


def _on_grid(lam, wave, values, what, filt, source):
    """Interpolate a multiplying curve onto the filter grid, refusing gaps where the filter transmits."""
    lo, hi = float(wave[0]), float(wave[-1])
    response = np.asarray(filt.response, dtype=float)
    transmits = lam[response > 1e-3 * response.max()]
    if transmits.min() < lo - 1e-9 or transmits.max() > hi + 1e-9:
        raise InputError(
            f"instrument {source}, band {filt.name!r}: {what} covers {lo:g}-{hi:g} µm but the filter "
            f"transmits from {transmits.min():g} to {transmits.max():g} µm; extend the {what}"
        )
    return np.interp(lam, wave, values, left=0.0, right=0.0)


def _qe_table(camera, source):
    if not any(k in camera for k in _QE):
        return None
    if not all(k in camera for k in _QE):
        raise InputError(f"{_where(source, 'camera')}: give both qe_wave_um and qe, or neither")
    try:
        wave = np.asarray(camera["qe_wave_um"], dtype=float)
        qe = np.asarray(camera["qe"], dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{_where(source, 'camera')}: qe_wave_um and qe must be lists of numbers") from None
    if wave.ndim != 1 or wave.shape != qe.shape or wave.size < 2:
        raise InputError(
            f"{_where(source, 'camera')}: qe_wave_um ({wave.size} values) and qe ({qe.size} values) "
            "must be lists of the same length, at least 2"
        )
    if not (np.all(np.isfinite(wave)) and np.all(wave > 0) and np.all(np.diff(wave) > 0)):
        raise InputError(f"{_where(source, 'camera')}: qe_wave_um must be positive and strictly increasing (µm)")
    if not (np.all(np.isfinite(qe)) and qe.min() >= 0 and qe.max() <= 1):
        raise InputError(
            f"{_where(source, 'camera')}: qe values must lie in [0, 1] (found {qe.min():g} to {qe.max():g})"
        )
    return wave, qe


def _system_band(name, table, base, qe, optics, source):
    section = f"bands.{name}"
    spec = _spec(_get(table, "filter", None, source, section), base, "filter", source, section)
    try:
        filt = load_band(spec)
    except InputError as exc:
        raise InputError(f"{_where(source, section)}: filter={spec!r}: {exc}") from None
    lam = np.asarray(filt.wave_um, dtype=float)
    response = np.asarray(filt.response, dtype=float).copy()
    if filt.convention != "photon":
        raise InputError(
            f"{_where(source, section)}: filter={spec!r} has convention {filt.convention!r}; a system "
            "throughput must be a photon-counting curve"
        )
    parts = [f"filter {spec}"]
    if qe is not None:
        response *= _on_grid(lam, qe[0], qe[1], "QE table", filt, source)
        parts.append("camera QE")
    response *= optics
    if optics != 1.0:
        parts.append(f"optics {optics:g}")
    peak = table.get("peak_throughput")
    if peak is not None:
        peak = _number(peak, "peak_throughput", source, section, lo=0.0, lo_open=True, hi=1.0)
        response *= peak / response.max()
        parts.append(f"rescaled to a peak of {peak:g}")
    elif response.max() > 0.98:
        warnings.warn(
            f"{_where(source, section)}: the system throughput peaks at {response.max():.3g}, which looks like a "
            "curve normalised to 1 rather than the fraction of photons detected; set peak_throughput (or a QE "
            "table and optics_efficiency), or the times will be too short",
            ThroughputWarning,
            stacklevel=3,
        )
    return Band(lam, response, name=name, convention="photon", provenance=" × ".join(parts))


def instrument_from_dict(data, source="<dict>", base=None):
    """Build and validate an :class:`~redcorr.exposure.Instrument` from parsed TOML.

    Parameters
    ----------
    data : dict
        The parsed description (see the module docstring for the keys).
    source : str
        Name used in error messages (the file path).
    base : pathlib.Path, optional
        Folder against which relative ``file:`` paths are resolved.
    """
    if not isinstance(data, dict):
        raise InputError(f"instrument {source} must be a TOML table")
    _check_keys(data, _TOP, source, "top level")
    name = data.get("name", Path(str(source)).stem)
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"instrument {source}: name={name!r} must be a non-empty string")

    sections = {}
    for section, allowed in (("telescope", _TELESCOPE), ("camera", {**_CAMERA, **dict.fromkeys(_QE)}),
                             ("site", _SITE), ("photometry", _PHOT)):
        table = data.get(section, {})
        _check_keys(table, allowed, source, section)
        sections[section] = table

    tel = sections["telescope"]
    diameter = _number(_get(tel, "aperture_m", None, source, "telescope"), "aperture_m", source, "telescope",
                       lo=0.0, lo_open=True, hi=100.0)
    obstruction = _number(_get(tel, "obstruction_m", 0.0, source, "telescope"), "obstruction_m", source,
                          "telescope", lo=0.0, hi=diameter, allowed=f">= 0 and < aperture_m={diameter:g}")
    if obstruction >= diameter:
        raise InputError(
            f"{_where(source, 'telescope')}: obstruction_m={obstruction:g} is not allowed; it must be a number "
            f">= 0 and < aperture_m={diameter:g}"
        )
    optics = _number(_get(tel, "optics_efficiency", 1.0, source, "telescope"), "optics_efficiency", source,
                     "telescope", lo=0.0, lo_open=True, hi=1.0)
    area = math.pi / 4.0 * (diameter**2 - obstruction**2)
    qe = _qe_table(sections["camera"], source)

    bands = data.get("bands")
    if not isinstance(bands, dict) or not bands:
        raise InputError(f"instrument {source}: no [bands.NAME] tables; describe at least one band")
    allowed_band = {**_BAND_OWN, **_OVERRIDABLE}
    channels = {}
    for band_name, table in bands.items():
        section = f"bands.{band_name}"
        _check_keys(table, allowed_band, source, section)
        settings = {}
        for key, default in _OVERRIDABLE.items():
            home = "camera" if key in _CAMERA else "site" if key in _SITE else "photometry"
            if key in table:
                settings[key], where = table[key], section
            else:
                settings[key], where = _get(sections[home], key, default, source, home), home
            positive = key not in ("read_noise_e", "dark_e_per_s", "airmass")
            lo = 1.0 if key == "airmass" else 0.0
            hi = 10.0 if key == "airmass" else math.inf
            if key == "sky_pixels" and settings[key] == math.inf:
                continue
            settings[key] = _number(settings[key], key, source, where, lo=lo, lo_open=positive, hi=hi)
        sky = _number(_get(table, "sky_mag_arcsec2", None, source, section), "sky_mag_arcsec2", source, section,
                      lo=5.0, hi=35.0)
        k_atm = _number(_get(table, "extinction_mag_per_airmass", None, source, section),
                        "extinction_mag_per_airmass", source, section, lo=0.0, hi=5.0)
        band = _system_band(band_name, table, base, qe, optics, source)
        try:
            channels[band_name] = Channel(
                name=band_name,
                band=band,
                area_m2=area,
                sky_mag_arcsec2=sky,
                extinction_mag_per_airmass=k_atm,
                **settings,
            )
        except InputError as exc:
            raise InputError(f"instrument {source}, [{section}]: {exc}") from None
    return Instrument(name=name.strip(), channels=channels)


def load_instrument(spec):
    """Read an instrument description: a TOML path, or ``"demo"`` for the bundled demo instrument.

    Raises
    ------
    InputError
        For a missing or malformed file or any invalid field; the message
        names the file, the section, the key, the value and what is allowed.
    """
    if str(spec).strip().lower() == DEMO_INSTRUMENT:
        path = project_dir("demo") / "instrument.toml"
    elif not str(spec).strip():
        raise InputError(f"instrument description '' is empty; give a TOML file or {DEMO_INSTRUMENT!r}")
    else:
        path = Path(spec).expanduser()
    data = load_toml(path, what="instrument description")
    return instrument_from_dict(data, source=repr(str(path)), base=path.parent)

"""Exposure planning behind dust: time, S/N and depth of a point source, band by band.

This module is pure array code (no files, no UI). It answers the observer's
questions for a point source seen through an imaging instrument: how long to
reach a signal-to-noise ratio, what S/N a given time gives, how deep an
exposure goes, and how much of that the dust costs, band by band. It builds
on :mod:`redcorr.photometry` (AB magnitudes and photon rates),
:mod:`redcorr.ccd` (the CCD equation) and :mod:`redcorr.extinction` (the
band extinction), and re-derives none of them.

Conventions
-----------
* Magnitudes are AB (Oke & Gunn 1983) with the photon-counting band mean
  of :mod:`redcorr.photometry`; a source of AB magnitude ``m`` in a band
  gives ``N = (A_tel / h) · 3631 Jy · 10^(−0.4 m) ∫ T dλ/λ`` photons per
  second whatever its spectrum (:func:`~redcorr.photometry.ab_photon_rate`).
* A *system throughput* ``T(λ)`` is the fraction of photons arriving at the
  top of the telescope that become detected electrons (filter × optics × QE);
  it is a photon-counting curve between 0 and 1.
* The magnitude the user gives is the source's dust-free magnitude. Dust
  dims it by ``A_band``, the band-integrated extinction computed by
  :func:`redcorr.extinction.band_extinction` for the source's spectrum
  through this band. The atmosphere dims it by ``k X`` (mag per airmass ×
  airmass). The sky brightness is as measured at the site and is not
  dimmed again.
* Times are in seconds, rates in electrons per second. One exposure, one
  read-out.
* Limits on what is planned (:data:`MAX_EXPOSURE_S`, :data:`MAX_SNR`,
  :data:`BRIGHTEST_MAG`) keep the answers within what one exposure of a
  point source can mean; beyond them the numbers would be meaningless (and,
  far beyond, overflow floating point).

References
----------
.. [1] Howell, S. B. 2006, *Handbook of CCD Astronomy*, 2nd ed., Cambridge
       University Press, §4.4 (the CCD equation).
.. [2] Oke, J. B. & Gunn, J. E. 1983, ApJ 266, 713 (AB magnitudes).
"""

import dataclasses
import math
import warnings

import numpy as np

from redcorr._constants import PLAN_CAUTION
from redcorr._validate import (
    as_seconds,
    check_choice,
    check_finite,
    check_positive,
    check_range,
    check_sampled_curve,
    check_snr,
)
from redcorr.ccd import (
    DIGITISATION_SIGMA_ADU,
    ccd_snr,
    ccd_source_rate,
    ccd_time,
    dominant_noise,
    gaussian_aperture_fraction,
)
from redcorr.exceptions import InputError, OutOfRangeWarning, UnknownNameError
from redcorr.extinction import band_extinction
from redcorr.photometry import ab_photon_rate, synthetic_colour

__all__ = [
    "BRIGHTEST_MAG",
    "CAUTION",
    "MAX_EXPOSURE_S",
    "MAX_SNR",
    "PLAUSIBLE_MAGS",
    "Channel",
    "Instrument",
    "BandPlan",
    "plan_channel",
    "plan_exposure",
    "snr_vs_time",
    "time_vs_av",
]

CAUTION = PLAN_CAUTION
"""The caution every shell shows next to a plan: the numbers are estimates, not commitments."""

MAX_EXPOSURE_S = 1.0e6
"""Longest exposure time planned, s (about 11.6 days). The plan is one exposure with one read-out,
and no single CCD exposure lasts days: dark current and cosmic-ray hits fill the pixels within hours
(common practice, no source)."""

MAX_SNR = 1.0e6
"""Highest signal-to-noise ratio planned. S/N 10⁶ needs at least 10¹² detected electrons (S/N ≤ √N
for N source electrons, Howell 2006 §4.4), some thousand times the full wells (~10⁵ e⁻ per pixel,
from memory) of the tens of pixels of an aperture: no single exposure reaches it."""

BRIGHTEST_MAG = -30.0
"""Brightest dust-free AB magnitude planned: brighter than the Sun (V ≈ −26.7, from memory), which is
no point source for an imager."""


PLAUSIBLE_MAGS = (-5.0, 40.0)
"""Dust-free AB magnitudes of a point source worth planning for without a warning: no star of the
night sky is brighter than about −1.5 (Sirius, from memory) and no exposure reaches 40 (the deepest
reach about 30, from memory). Outside this span a magnitude is more likely a flux in the wrong unit
or scale (an unnormalised spectrum given with ``--calibrated``) than a real source."""


def _warn_implausible(names, mags):
    """Warn once for magnitudes outside :data:`PLAUSIBLE_MAGS`, naming the bands."""
    lo, hi = PLAUSIBLE_MAGS
    odd = [f"{name} {m:.3g}" for name, m in zip(names, mags, strict=True) if not lo <= m <= hi]
    if odd:
        warnings.warn(
            f"source AB magnitude outside {lo:g}..{hi:g}, implausible for a point source ({', '.join(odd)}): "
            "the times planned for it mean little; if it comes from a flux-calibrated spectrum, check the "
            "flux's unit and scale (F_lambda or F_nu of the source as it arrives, not normalised)",
            OutOfRangeWarning,
            stacklevel=3,
        )


def check_exposure_snr(name, snr):
    """A target S/N as a float: finite, > 0 and at most :data:`MAX_SNR`."""
    value = float(check_snr(name, snr))
    if value > MAX_SNR:
        raise InputError(f"{name}={value:g} is not allowed; a signal-to-noise ratio of one exposure "
                         f"must be at most {MAX_SNR:g}")
    return value


def check_exposure_time(name, time):
    """An exposure time as a float, s: finite, > 0 and at most :data:`MAX_EXPOSURE_S`."""
    value = float(as_seconds(name, time, positive=True))
    if value > MAX_EXPOSURE_S:
        raise InputError(f"{name}={value:g} s is not allowed; one exposure must be at most {MAX_EXPOSURE_S:g} s "
                         "(about 11.6 days)")
    return value


def _check_mag(name, mag):
    """A dust-free AB magnitude as a float: finite and not brighter than :data:`BRIGHTEST_MAG`."""
    value = check_finite(name, mag)
    if value < BRIGHTEST_MAG:
        raise InputError(f"{name}={value:g} is not allowed; a point source to plan must be no brighter than "
                         f"AB {BRIGHTEST_MAG:g} (the Sun is about -26.7)")
    return value

@dataclasses.dataclass(frozen=True)
class Channel:
    """One band of an imaging instrument: everything the CCD equation needs.

    Attributes
    ----------
    name : str
        Band name as the instrument calls it (e.g. ``"kw-v"``).
    band : Band
        System throughput (filter × optics × QE) with ``wave_um`` and
        ``response`` (photon-counting fraction, 0..1).
    area_m2 : float
        Unobstructed collecting area, m².
    pixel_scale_arcsec : float
        Arcsec per pixel.
    read_noise_e : float
        Read noise per pixel, e⁻ rms.
    dark_e_per_s : float
        Dark current per pixel, e⁻/s.
    gain_e_per_adu : float
        Gain; enters as the digitisation noise gain × 0.289 ADU.
    sky_mag_arcsec2 : float
        Sky brightness at the site, AB mag/arcsec².
    seeing_fwhm_arcsec : float
        FWHM of the (Gaussian) point-spread function.
    aperture_radius_arcsec : float
        Radius of the photometric aperture.
    airmass : float
        ≥ 1.
    extinction_mag_per_airmass : float
        Atmospheric extinction coefficient k, ≥ 0.
    sky_pixels : float
        Pixels used to estimate the background (n_B); ``inf`` means known exactly.
    """

    name: str
    band: object
    area_m2: float
    pixel_scale_arcsec: float
    read_noise_e: float
    dark_e_per_s: float
    gain_e_per_adu: float
    sky_mag_arcsec2: float
    seeing_fwhm_arcsec: float
    aperture_radius_arcsec: float
    airmass: float = 1.0
    extinction_mag_per_airmass: float = 0.0
    sky_pixels: float = math.inf

    def __post_init__(self):
        lam, thr = check_sampled_curve(self.band.wave_um, self.band.response)
        if thr.ndim != 1 or not (np.all(np.isfinite(thr)) and thr.min() >= 0 and thr.max() <= 1):
            raise InputError(
                f"band {self.name!r}: the system throughput must be a fraction of photons between 0 and 1 "
                f"(found values from {np.nanmin(thr):g} to {np.nanmax(thr):g})"
            )
        if not thr.max() > 0:
            raise InputError(f"band {self.name!r}: the system throughput is zero everywhere")
        if getattr(self.band, "convention", "photon") != "photon":
            raise InputError(
                f"band {self.name!r}: convention={self.band.convention!r}; a system throughput must be a "
                "photon-counting curve (convention 'photon')"
            )
        check_positive("area_m2", self.area_m2)
        check_positive("pixel_scale_arcsec", self.pixel_scale_arcsec)
        check_range("read_noise_e", self.read_noise_e, 0.0, math.inf)
        check_range("dark_e_per_s", self.dark_e_per_s, 0.0, math.inf)
        check_positive("gain_e_per_adu", self.gain_e_per_adu)
        check_range("sky_mag_arcsec2", self.sky_mag_arcsec2, 5.0, 35.0)
        check_positive("seeing_fwhm_arcsec", self.seeing_fwhm_arcsec)
        check_positive("aperture_radius_arcsec", self.aperture_radius_arcsec)
        check_range("airmass", self.airmass, 1.0, 10.0)
        check_range("extinction_mag_per_airmass", self.extinction_mag_per_airmass, 0.0, 5.0)
        if not (isinstance(self.sky_pixels, (int, float)) and self.sky_pixels > 0 and not math.isnan(self.sky_pixels)):
            raise InputError(f"sky_pixels={self.sky_pixels!r} must be > 0 (or inf for a known background)")

    # --- derived quantities -------------------------------------------------
    @property
    def zero_point_rate(self):
        """Electrons per second from an AB magnitude 0 source above the atmosphere (all its light)."""
        return float(ab_photon_rate(0.0, self.band.wave_um, self.band.response, self.area_m2))

    @property
    def n_pix(self):
        """Pixels in the photometric aperture, π r² / p²."""
        return math.pi * (self.aperture_radius_arcsec / self.pixel_scale_arcsec) ** 2

    @property
    def aperture_fraction(self):
        """Fraction of the source's light inside the aperture (Gaussian PSF)."""
        return float(gaussian_aperture_fraction(self.aperture_radius_arcsec, self.seeing_fwhm_arcsec))

    @property
    def sky_rate(self):
        """Sky electrons per second per pixel: ``N_0 · 10^(−0.4 μ) · p²``."""
        return self.zero_point_rate * 10.0 ** (-0.4 * self.sky_mag_arcsec2) * self.pixel_scale_arcsec**2

    @property
    def digitisation_e(self):
        """A/D noise in electrons, gain × 0.289 ADU."""
        return self.gain_e_per_adu * DIGITISATION_SIGMA_ADU

    def _ccd(self):
        return dict(
            sky_rate=self.sky_rate,
            dark_rate=self.dark_e_per_s,
            read_noise=self.read_noise_e,
            n_pix=self.n_pix,
            n_sky_pix=self.sky_pixels,
            digitisation_e=self.digitisation_e,
        )

    def source_rate(self, mag, a_band=0.0):
        """Source electrons per second inside the aperture.

        ``N_0 · 10^(−0.4 (m + A_band + k X)) · f_ap`` with ``m`` the dust-free AB
        magnitude in this band and ``A_band`` the dust's band extinction.
        """
        m = np.asarray(mag, dtype=float) + np.asarray(a_band, dtype=float)
        m = m + self.extinction_mag_per_airmass * self.airmass
        return self.zero_point_rate * 10.0 ** (-0.4 * m) * self.aperture_fraction

    def snr(self, mag, t, a_band=0.0):
        """S/N of a source of dust-free magnitude ``mag`` behind ``a_band`` after ``t`` seconds."""
        return ccd_snr(t, self.source_rate(mag, a_band), **self._ccd())

    def time_for_snr(self, mag, snr, a_band=0.0):
        """Seconds for a source of dust-free magnitude ``mag`` behind ``a_band`` to reach ``snr``."""
        return ccd_time(snr, self.source_rate(mag, a_band), **self._ccd())

    def limiting_mag(self, t, snr=5.0):
        """Faintest apparent AB magnitude (above the atmosphere) reaching ``snr`` in ``t`` seconds."""
        rate = ccd_source_rate(snr, t, **self._ccd())
        scale = self.zero_point_rate * self.aperture_fraction
        with np.errstate(divide="ignore"):
            m = -2.5 * np.log10(rate / scale) - self.extinction_mag_per_airmass * self.airmass
        return m[()]

    def dominant_noise(self, mag, t, a_band=0.0):
        """Largest noise term ("source", "sky", "dark", "read") for this source at time ``t``."""
        return dominant_noise(t, self.source_rate(mag, a_band), **self._ccd())


@dataclasses.dataclass(frozen=True)
class Instrument:
    """A telescope and imager: a name and its bands (:class:`Channel`), in order."""

    name: str
    channels: dict

    def __post_init__(self):
        if not self.channels:
            raise InputError(f"instrument {self.name!r} has no bands")

    @property
    def band_names(self):
        return list(self.channels)

    def channel(self, band):
        """The channel named ``band``; `UnknownNameError` naming the instrument's bands otherwise."""
        try:
            key = check_choice("band", band, list(self.channels))
        except UnknownNameError:
            known = ", ".join(repr(n) for n in self.channels)
            raise UnknownNameError(
                f"band={band!r} is not a band of instrument {self.name!r}; choose from {known}"
            ) from None
        return self.channels[key]


@dataclasses.dataclass(frozen=True)
class BandPlan:
    """The answer for one band.

    Attributes
    ----------
    band : str
    mag : float
        Dust-free AB magnitude of the source in this band.
    A_band : float
        Band-integrated dust extinction, mag.
    t_clear_s, t_dust_s : float
        Exposure time without and with the dust (see :func:`plan_exposure`).
    time_factor : float
        ``t_dust_s / t_clear_s``.
    snr : float
        S/N of the reddened source in ``t_dust_s``.
    limiting_mag : float
        Apparent AB magnitude of a point source reaching ``limit_snr`` in ``t_dust_s``.
    limit_snr : float
    noise : str
        Dominant noise term at ``t_dust_s``.
    """

    band: str
    mag: float
    A_band: float
    t_clear_s: float
    t_dust_s: float
    time_factor: float
    snr: float
    limiting_mag: float
    limit_snr: float
    noise: str

    def as_dict(self, keys=("band", "A_band", "t_clear_s", "t_dust_s", "time_factor", "snr", "limiting_mag")):
        """The chosen fields as plain Python values (the ``--json`` keys by default)."""
        return {k: getattr(self, k) for k in keys}


def _band_extinction(curve, band, sed, a_v, extrapolate):
    return np.asarray(band_extinction(curve, band, sed, a_v, extrapolate=extrapolate), dtype=float)


def _band_mags(instrument, bands, mag, sed, mag_band):
    if isinstance(mag, dict):
        if mag_band is not None:
            raise InputError("mag_band applies to a single magnitude; mag already gives one per band")
        missing = [b for b in bands if b not in mag]
        if missing:
            raise InputError(f"mag has no value for band {missing[0]!r}; it gives {', '.join(map(repr, mag))}")
        return [_check_mag(f"mag[{b!r}]", mag[b]) for b in bands]
    m0 = _check_mag("mag", mag)
    if mag_band is None:
        return [m0] * len(bands)
    return [_check_mag(f"mag in band {b!r} (mag {m0:g} in mag_band, with the SED's colour)",
                       m0 + synthetic_colour(sed, instrument.channel(b).band, mag_band)) for b in bands]


def plan_channel(channel, mag, a_band, *, snr=None, time=None, limit_snr=5.0):
    """The plan of one band for any number of sources: the arrays behind :class:`BandPlan`.

    :func:`plan_exposure` calls it for one source, :func:`redcorr.target_plan.plan_targets` for a
    whole target list, so both give the same numbers for the same source.

    Parameters
    ----------
    channel : Channel
    mag, a_band : array_like
        Dust-free AB magnitudes in this band and band extinctions, mag; they broadcast.
        Where either is NaN every result is NaN (``noise`` is ``""``).
    snr, time : float, optional
        Exactly one, already checked (see :func:`plan_exposure`).
    limit_snr : float
        S/N defining ``limiting_mag``.

    Returns
    -------
    dict
        ``t_clear_s``, ``t_dust_s``, ``time_factor``, ``snr``, ``limiting_mag`` (float arrays) and
        ``noise`` (str array), each of the broadcast shape. For a target S/N that no finite time
        reaches, ``t_dust_s`` is ``inf`` and ``limiting_mag`` NaN.

    Notes
    -----
    The fields are those of :class:`BandPlan`, computed with the channel's CCD equation
    (Howell 2006 §4.4): ``t_clear_s`` and ``t_dust_s`` from :meth:`Channel.time_for_snr` without
    and with ``a_band``; in time mode ``snr`` from :meth:`Channel.snr` and ``t_clear_s`` the time
    the dust-free source needs for it; ``time_factor = t_dust_s / t_clear_s``.
    """
    m, a = np.broadcast_arrays(np.asarray(mag, dtype=float), np.asarray(a_band, dtype=float))
    ok = np.isfinite(m) & np.isfinite(a)
    m, a = np.where(ok, m, 0.0), np.where(ok, a, 0.0)  # placeholders, masked below
    if snr is not None:
        t_clear = np.where(ok, channel.time_for_snr(m, snr), np.nan)
        t_dust = np.where(ok, channel.time_for_snr(m, snr, a), np.nan)
        reached = np.where(ok, snr, np.nan)
    else:
        t_dust = np.where(ok, time, np.nan)
        reached = np.where(ok, channel.snr(m, time, a), np.nan)
        seen = reached > 0
        t_clear = np.where(seen, channel.time_for_snr(m, np.where(seen, reached, 1.0)), np.where(ok, 0.0, np.nan))
    live = np.isfinite(t_dust) & (t_dust > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        factor = np.where((t_clear > 0) & (t_clear < np.inf), t_dust / t_clear, np.nan)
    t_live = np.where(live, t_dust, 1.0)
    return {
        "t_clear_s": t_clear,
        "t_dust_s": t_dust,
        "time_factor": factor,
        "snr": reached,
        "limiting_mag": np.where(live, channel.limiting_mag(t_live, limit_snr), np.nan),
        "noise": np.where(live, channel.dominant_noise(m, t_live, a), np.where(ok, "read", "")),
    }


def plan_exposure(
    instrument,
    bands,
    mag,
    *,
    curve,
    sed,
    a_v,
    snr=None,
    time=None,
    mag_band=None,
    limit_snr=5.0,
    extrapolate=False,
):
    """Plan exposures of a reddened point source in several bands, ranked by time needed.

    Parameters
    ----------
    instrument : Instrument
    bands : sequence of str
        Band names of the instrument.
    mag : float or dict
        Dust-free AB magnitude of the source: in each band if ``mag_band`` is
        None, else in ``mag_band`` and carried to each band with the SED's AB
        colour; or a dict band name → magnitude (e.g. from
        :func:`redcorr.photometry.synthetic_ab` for a flux-calibrated spectrum).
        Each no brighter than :data:`BRIGHTEST_MAG`.
    curve : DustCurve
        Law or grain model (from :func:`redcorr.io.load_curve`).
    sed : SED
        Source spectrum (for the band extinction and colours).
    a_v : float
        Dust column, A_V in mag (≥ 0).
    snr : float, optional
        Target S/N (> 0, at most :data:`MAX_SNR`): ``t_clear_s`` and ``t_dust_s`` are the times the source
        needs without and with the dust.
    time : float, optional
        Exposure time (> 0 s, at most :data:`MAX_EXPOSURE_S`): ``t_dust_s`` is this time, ``snr`` what the
        reddened source reaches in it, and ``t_clear_s`` the time the dust-free
        source would need for that same S/N. Give exactly one of ``snr``, ``time``.
    mag_band : Band, optional
        The band ``mag`` is measured in (any Band; an instrument band included).
    limit_snr : float
        S/N defining ``limiting_mag`` (5 by common practice; at most :data:`MAX_SNR`).
    extrapolate : bool
        Passed to the band extinction.

    Returns
    -------
    list of BandPlan
        Ranked: by ``t_dust_s`` (shortest first) for a target ``snr``, by the
        S/N reached (highest first) for a given ``time``.

    Notes
    -----
    ``A_band`` comes from :func:`redcorr.extinction.band_extinction` for the
    SED through the band's system throughput. Since the source rate scales as
    :math:`10^{-0.4 A_{band}}`, the time factor lies between
    :math:`10^{0.4 A_{band}}` (source- or read-noise-limited) and
    :math:`10^{0.8 A_{band}}` (sky-limited).
    """
    if (snr is None) == (time is None):
        raise InputError("give exactly one of snr (a target S/N) or time (an exposure time in s)")
    a_v = check_range("a_v", a_v, 0.0, math.inf)
    limit_snr = check_exposure_snr("limit_snr", limit_snr)
    if snr is not None:
        snr = check_exposure_snr("snr", snr)
    else:
        time = check_exposure_time("time", time)
    names = [instrument.channel(b).name for b in bands]
    if not names:
        raise InputError("bands is empty; give at least one band of the instrument")
    mags = _band_mags(instrument, names, mag, sed, mag_band)
    plans = []
    for name, m in zip(names, mags, strict=True):
        ch = instrument.channel(name)
        a_band = float(_band_extinction(curve, ch.band, sed, a_v, extrapolate))
        row = plan_channel(ch, m, a_band, snr=snr, time=time, limit_snr=limit_snr)
        if snr is not None and not math.isfinite(row["t_dust_s"]):
            raise InputError(
                f"snr={snr:g} is not reached in any finite time in band {name!r} (source AB {float(m):g}, "
                f"A_band {a_band:.3g} mag); ask for a lower S/N or a brighter source"
            )
        plans.append(
            BandPlan(
                band=name,
                mag=float(m),
                A_band=a_band,
                **{k: float(v) for k, v in row.items() if k != "noise"},
                limit_snr=limit_snr,
                noise=str(row["noise"]),
            )
        )
    _warn_implausible(names, mags)  # once the plan stands: a refused one is one message, not two
    if snr is not None:
        plans.sort(key=lambda p: p.t_dust_s)
    else:
        plans.sort(key=lambda p: -p.snr)
    return plans


def time_vs_av(instrument, bands, mag, *, curve, sed, a_v, snr, mag_band=None, extrapolate=False):
    """Exposure time to reach ``snr`` as a function of A_V, per band.

    Parameters
    ----------
    a_v : array_like
        A_V values (≥ 0), 1-d.
    (others as in :func:`plan_exposure`)

    Returns
    -------
    a_v : ndarray
    times : dict
        Band name → ndarray of seconds, same shape as ``a_v``.
    a_band : dict
        Band name → ndarray of A_band, mag.
    """
    s = check_exposure_snr("snr", snr)
    grid = np.atleast_1d(np.asarray(a_v, dtype=float))
    bad = ~(np.isfinite(grid) & (grid >= 0))
    if grid.ndim != 1 or np.any(bad):
        found = f"shape {grid.shape}" if grid.ndim != 1 else f"{grid[bad][0]:g}"
        raise InputError(f"a_v must be a 1-d list of finite values >= 0; found {found}")
    names = [instrument.channel(b).name for b in bands]
    mags = _band_mags(instrument, names, mag, sed, mag_band)
    times, a_bands = {}, {}
    for name, m in zip(names, mags, strict=True):
        ch = instrument.channel(name)
        a_b = np.broadcast_to(_band_extinction(curve, ch.band, sed, grid, extrapolate), grid.shape)
        a_bands[name] = np.array(a_b)
        times[name] = np.asarray(ch.time_for_snr(m, s, a_b))
    return grid, times, a_bands


def snr_vs_time(instrument, plans, t):
    """S/N against exposure time without and with the dust, for planned bands.

    Parameters
    ----------
    instrument : Instrument
    plans : sequence of BandPlan
        From :func:`plan_exposure` (gives each band's magnitude and A_band).
    t : array_like
        Exposure times, s (≥ 0).

    Returns
    -------
    dict
        Band name → ``(snr_clear, snr_dust)``, two ndarrays shaped like ``t``.
    """
    t = as_seconds("time", t)
    out = {}
    for p in plans:
        ch = instrument.channel(p.band)
        out[p.band] = (np.asarray(ch.snr(p.mag, t)), np.asarray(ch.snr(p.mag, t, p.A_band)))
    return out

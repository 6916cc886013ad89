"""Tests of redcorr.exposure: the instrument's channels, their noise regimes and bad input."""

import math
import types

import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from numpy.testing import assert_allclose
from published import AB_ZERO_POINT_JY

from redcorr.ccd import ccd_source_rate
from redcorr.curves import get_curve
from redcorr.exceptions import InputError, UnknownNameError
from redcorr.exposure import Channel, Instrument, plan_exposure
from redcorr.sed import flat_fnu


def _box(lo, hi, value=1.0, n=4001):
    """A top-hat sampled with its edges on the grid (plain arrays, no Band needed)."""
    lam = np.linspace(lo, hi, n)
    return types.SimpleNamespace(wave_um=lam, response=np.full(n, value), name="box", convention="photon")


def _channel(**kw):
    base = dict(
        name="box",
        band=_box(0.5, 0.6, 0.5),
        area_m2=1.0,
        pixel_scale_arcsec=0.4,
        read_noise_e=5.0,
        dark_e_per_s=0.01,
        gain_e_per_adu=1.5,
        sky_mag_arcsec2=21.0,
        seeing_fwhm_arcsec=1.2,
        aperture_radius_arcsec=1.5,
        airmass=1.0,
        extinction_mag_per_airmass=0.0,
    )
    base.update(kw)
    return Channel(**base)


# --- noise regimes of a channel --------------------------------------------------------

@pytest.mark.parametrize(
    ("regime", "settings", "mag", "slope"),
    [
        # Facts of the trade (common practice, no source), derived from the CCD equation:
        # source-limited t = S^2/R*, so t grows as 10^(0.4 A_b);
        ("source", dict(sky_mag_arcsec2=35.0, dark_e_per_s=0.0, read_noise_e=0.0, gain_e_per_adu=1e-6), 5.0, 0.4),
        # sky-limited t = S^2 n_pix R_sky / R*^2, so 10^(0.8 A_b);
        ("sky", dict(sky_mag_arcsec2=6.0, dark_e_per_s=0.0, read_noise_e=0.0, gain_e_per_adu=1e-6), 24.0, 0.8),
        # read-noise-limited t = S sqrt(n_pix) N_R / R*, so 10^(0.4 A_b).
        ("read", dict(sky_mag_arcsec2=35.0, dark_e_per_s=0.0, read_noise_e=1e5, gain_e_per_adu=1e-6), 5.0, 0.4),
    ],
)
def test_time_factor_in_each_noise_regime(regime, settings, mag, slope):
    ch = _channel(**settings)
    a_band = np.array([0.5, 1.0, 2.0, 3.0])
    t0 = ch.time_for_snr(mag, 20.0)
    assert ch.dominant_noise(mag, t0) == regime
    factor = ch.time_for_snr(mag, 20.0, a_band) / t0
    # the suppressed noise terms still add a little: measured departures from the pure power
    # law are below 1e-8, so 1e-6 tests the regime's exponent tightly
    assert_allclose(factor, 10 ** (slope * a_band), rtol=1e-6)


# --- the channel --------------------------------------------------------------------------

def test_channel_limiting_mag_is_the_inverse_of_the_time():
    ch = _channel(airmass=1.3, extinction_mag_per_airmass=0.2, sky_pixels=2000.0)
    t = ch.time_for_snr(20.5, 10.0, a_band=1.2)
    # A dust-free source of magnitude m behind A_band looks like an apparent m + A_band. Round
    # trips through the CCD equation's closed-form roots: rounding only, hence 1e-10.
    assert_allclose(ch.limiting_mag(t, 10.0), 21.7, rtol=1e-10)
    assert_allclose(ch.snr(20.5, t, 1.2), 10.0, rtol=1e-10)


def test_channel_sky_rate_from_surface_brightness():
    # Sky per pixel: a surface brightness mu (AB mag/arcsec^2) gives per arcsec^2 the photon
    # rate of an AB magnitude mu source, times the pixel area p^2 (common practice, no source).
    # For the channel's top-hat of transmission 0.5 on [0.5, 0.6] µm and 1 m^2, that rate is
    # A F_nu T0 / h * ln(0.6/0.5) with F_nu from the AB definition (Oke & Gunn 1983).
    # rtol 1e-6: the numerical integration over the box is good to ~1e-9 (measured 3.5e-10).
    ch = _channel()
    fnu_si = AB_ZERO_POINT_JY * 1e-26 * 10 ** (-0.4 * 21.0)  # W m^-2 Hz^-1
    expected = 1.0 * fnu_si * 0.5 / const.h.to_value(u.J * u.s) * math.log(0.6 / 0.5) * 0.4**2
    assert_allclose(ch.sky_rate, expected, rtol=1e-6)


# --- bad input ----------------------------------------------------------------------------

def test_negative_time_is_refused():
    with pytest.raises(InputError, match=r"time=-5 s .*>= 0"):
        _channel().snr(19.0, -5.0)
    with pytest.raises(InputError, match="time"):
        ccd_source_rate(5.0, [10.0, -1.0], 1.0, 0.0, 1.0, 10.0)


@pytest.mark.parametrize("time", [0.0, -1.0])
def test_a_planned_time_must_be_positive(time):
    """Nothing is detected in 0 s: planning for it would give a table of NaN."""
    inst = Instrument("test", {"box": _channel()})
    with pytest.raises(InputError, match=rf"time={time:g} s is not allowed; .*> 0 s"):
        plan_exposure(inst, ["box"], 19.0, a_v=1.0, time=time, curve=get_curve("ccm89"), sed=flat_fnu())


@pytest.mark.parametrize("snr", [0.0, -3.0, np.inf])
def test_nonpositive_snr_is_refused(snr):
    with pytest.raises(InputError, match=r"snr=.* signal-to-noise ratio must be finite and > 0"):
        _channel().time_for_snr(19.0, snr)


def test_unknown_band_is_refused_with_the_instrument_bands():
    inst = Instrument("test", {"box": _channel()})
    with pytest.raises(UnknownNameError, match=r"band='kw-q' is not a band of instrument 'test'; choose from 'box'"):
        inst.channel("kw-q")


@pytest.mark.parametrize(
    ("field", "value", "allowed"),
    [
        ("sky_mag_arcsec2", math.nan, "sky_mag_arcsec2"),
        ("airmass", 0.8, r"airmass=0.8 is outside the allowed range \[1, 10\]"),
        ("read_noise_e", -1.0, "read_noise_e"),
        ("pixel_scale_arcsec", 0.0, r"pixel_scale_arcsec=0.0 must be > 0"),
    ],
)
def test_channel_fields_are_validated(field, value, allowed):
    with pytest.raises(InputError, match=allowed):
        _channel(**{field: value})


def test_throughput_above_one_is_refused():
    with pytest.raises(InputError, match="between 0 and 1"):
        _channel(band=_box(0.5, 0.6, 1.5))

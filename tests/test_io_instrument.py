"""Tests of redcorr.io.instrument: reading and validating instrument descriptions."""

import math

import pytest
from numpy.testing import assert_allclose

from redcorr.exceptions import InputError, ThroughputWarning
from redcorr.io.instrument import load_instrument

GOOD = """
name = "Test 1 m"
[telescope]
aperture_m = 1.0
obstruction_m = 0.3
optics_efficiency = 0.8
[camera]
pixel_scale_arcsec = 0.5
read_noise_e = 5.0
dark_e_per_s = 0.01
gain_e_per_adu = 2.0
qe_wave_um = [0.3, 1.2]
qe = [0.9, 0.9]
[site]
seeing_fwhm_arcsec = 1.5
airmass = 1.1
[photometry]
aperture_radius_arcsec = 2.0
[bands.v]
filter = "tophat:0.55:0.09"
sky_mag_arcsec2 = 21.5
extinction_mag_per_airmass = 0.15
[bands.i]
filter = "tophat:0.80:0.15"
sky_mag_arcsec2 = 20.0
extinction_mag_per_airmass = 0.05
seeing_fwhm_arcsec = 1.2
"""


def _write(tmp_path, text):
    path = tmp_path / "inst.toml"
    path.write_text(text)
    return path


def test_good_description_builds_every_band(tmp_path):
    inst = load_instrument(_write(tmp_path, GOOD))
    assert inst.name == "Test 1 m"
    assert inst.band_names == ["v", "i"]
    v, i = inst.channel("v"), inst.channel("i")
    # annulus area π/4 (D² − d²) (geometry); rounding only
    assert_allclose(v.area_m2, math.pi / 4 * (1.0 - 0.09), rtol=1e-12)
    # System throughput = filter x QE x optics (module docstring); the top-hat peaks at 1, the QE
    # is flat: the product of the curves interpolated on a common grid, rounding only (1e-9)
    assert_allclose(v.band.response.max(), 0.9 * 0.8, rtol=1e-9)
    assert v.seeing_fwhm_arcsec == 1.5 and i.seeing_fwhm_arcsec == 1.2  # per-band override, as given
    assert v.sky_pixels == math.inf  # default: the sky level known exactly


def test_demo_instrument_loads_with_the_kw_bands():
    inst = load_instrument("demo")
    assert inst.band_names == ["kw-b", "kw-v", "kw-r", "kw-i", "kw-z"]
    for ch in inst.channels.values():
        assert 0 < ch.band.response.max() <= 1
        assert ch.band.convention == "photon"


@pytest.mark.parametrize(
    ("old", "new", "message"),
    [
        ("sky_mag_arcsec2 = 21.5\n", "", r"\[bands.v\]: sky_mag_arcsec2 is missing; give the sky brightness"),
        ("read_noise_e = 5.0", "read_noise_e = -5.0", r"read_noise_e=-5.0 is not allowed; it must be a number >= 0"),
        ("obstruction_m = 0.3", "obstruction_m = 1.0", r"obstruction_m=1 is not allowed; .*< aperture_m=1"),
        ("airmass = 1.1", "airmass = 0.5", r"airmass=0.5 is not allowed; it must be a number >= 1 and <= 10"),
        ("gain_e_per_adu = 2.0", 'gain_e_per_adu = "two"', r"gain_e_per_adu='two' is not allowed"),
        ("qe = [0.9, 0.9]", "qe = [0.9, 1.9]", r"qe values must lie in \[0, 1\]"),
        ("qe_wave_um = [0.3, 1.2]", "qe_wave_um = [0.3, 0.7]", r"QE table covers 0.3-0.7 .* extend the QE table"),
        ("seeing_fwhm_arcsec = 1.5", "seing_fwhm_arcsec = 1.5", r"\[site\]: unknown key 'seing_fwhm_arcsec'"),
        ("aperture_m = 1.0\n", "", r"\[telescope\]: aperture_m is missing"),
        ('filter = "tophat:0.55:0.09"\n', "", r"\[bands.v\]: filter is missing"),
        ("sky_mag_arcsec2 = 21.5", "sky_mag_arcsec2 = 99.0", r"sky_mag_arcsec2=99.0 is not allowed"),
        # an unknown band in the instrument: a filter name nobody knows
        ('filter = "tophat:0.55:0.09"', 'filter = "kw-nonesuch"', r"\[bands.v\]: filter='kw-nonesuch'"),
    ],
)
def test_bad_fields_are_refused_with_clear_messages(tmp_path, old, new, message):
    assert old in GOOD
    with pytest.raises(InputError, match=message):
        load_instrument(_write(tmp_path, GOOD.replace(old, new, 1)))


def test_no_bands_and_bad_files(tmp_path):
    with pytest.raises(InputError, match="no \\[bands.NAME\\] tables"):
        load_instrument(_write(tmp_path, GOOD.split("[bands.v]")[0]))
    with pytest.raises(InputError, match="does not exist"):
        load_instrument(tmp_path / "missing.toml")
    with pytest.raises(InputError, match="not valid TOML"):
        load_instrument(_write(tmp_path, "name = ["))


def test_input_file_is_not_modified(tmp_path):
    path = _write(tmp_path, GOOD)
    before = path.read_bytes()
    load_instrument(path)
    assert path.read_bytes() == before


def test_peak_throughput_and_relative_file_product(tmp_path):
    # A window curve beside the description, multiplied into the filter with load_band's '*'.
    (tmp_path / "win.csv").write_text("wavelength_nm,response\n400,0.5\n700,0.5\n1000,0.5\n")
    text = GOOD.replace('filter = "tophat:0.55:0.09"', 'filter = "tophat:0.55:0.09*file:win.csv"')
    inst = load_instrument(_write(tmp_path, text))
    # products of piecewise-linear curves on a common grid: rounding only (1e-9), and a peak
    # rescaled to the value given (1e-12)
    assert_allclose(inst.channel("v").band.response.max(), 0.5 * 0.9 * 0.8, rtol=1e-9)
    text = GOOD.replace('filter = "tophat:0.80:0.15"', 'filter = "tophat:0.80:0.15"\npeak_throughput = 0.4')
    inst = load_instrument(_write(tmp_path, text))
    assert_allclose(inst.channel("i").band.response.max(), 0.4, rtol=1e-12)
    with pytest.raises(InputError, match=r"peak_throughput=1.5 is not allowed"):
        load_instrument(_write(tmp_path, text.replace("peak_throughput = 0.4", "peak_throughput = 1.5")))


REGIME = """
[telescope]
aperture_m = 1.0
[camera]
pixel_scale_arcsec = 0.5
read_noise_e = {read}
dark_e_per_s = 0.0
gain_e_per_adu = 1e-6
[site]
seeing_fwhm_arcsec = 1.0
[photometry]
aperture_radius_arcsec = 1.5
[bands.b]
filter = "tophat:0.44:0.09"
peak_throughput = 0.5
sky_mag_arcsec2 = {sky}
extinction_mag_per_airmass = 0.0
"""


@pytest.mark.parametrize(
    ("read", "sky", "mag", "slope", "regime"),
    [
        # Facts of the trade (common practice, no source), which follow from the CCD equation
        # (Howell 2006 Sect. 4.4): source-limited time grows as 10^(0.4 A_b), sky-limited as
        # 10^(0.8 A_b), read-noise-limited as 10^(0.4 A_b).
        (0.0, 35.0, 8.0, 0.4, "source"),
        (0.0, 6.0, 24.0, 0.8, "sky"),
        (1e5, 35.0, 8.0, 0.4, "read"),
    ],
)
def test_regimes_through_the_planner(tmp_path, read, sky, mag, slope, regime):
    # An instrument forced into one regime, planned end to end with the band extinction.
    from redcorr.exposure import plan_exposure
    from redcorr.io import load_curve
    from redcorr.io.spectra import load_sed

    inst = load_instrument(_write(tmp_path, REGIME.format(read=read, sky=sky)))
    for a_v in (1.0, 3.0):
        (p,) = plan_exposure(inst, ["b"], mag, curve=load_curve("ccm89", r_v=3.1), sed=load_sed("flat"),
                             a_v=a_v, snr=20.0)
        assert p.noise == regime
        assert p.A_band > 1.0 * a_v  # B is more extinguished than V (any R_V law)
        # the suppressed noise terms move the factor by < 1e-8 here (measured), so 1e-6 pins
        # the regime's exponent
        assert_allclose(p.time_factor, 10 ** (slope * p.A_band), rtol=1e-6)


def test_a_throughput_normalised_to_one_is_flagged(tmp_path):
    # Fact of the trade (common practice, no source): no real telescope + filter + detector detects
    # every photon, so a system throughput peaking at 1 is a normalised curve, not an absolute one.
    text = GOOD.replace("qe_wave_um = [0.3, 1.2]\nqe = [0.9, 0.9]\n", "").replace("optics_efficiency = 0.8\n", "")
    with pytest.warns(ThroughputWarning, match=r"\[bands.[vi]\]: the system throughput peaks at 1") as record:
        load_instrument(_write(tmp_path, text))
    assert len(record) == 2

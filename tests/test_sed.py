"""Tests of redcorr.sed and redcorr.io.spectra: source spectra."""

import numpy as np
import pytest
from astropy import units as u
from astropy.modeling.models import BlackBody as AstropyBlackBody
from astropy.table import Table
from numpy.testing import assert_allclose

from redcorr.exceptions import InputError
from redcorr.io.spectra import load_sed
from redcorr.sed import TabulatedSED, blackbody, flat_fnu, planck_log_flam, power_law

FLAM = u.erg / u.s / u.cm**2 / u.AA / u.sr


@pytest.mark.parametrize("temperature", [3000.0, 5772.0, 10000.0, 50000.0])
def test_blackbody_matches_astropy(temperature):
    # Reference: astropy.modeling.models.BlackBody (general reference library). Both evaluate
    # Planck's law in double precision from CODATA constants: rounding and the evaluation order
    # of exp/log leave ~1e-13, hence 1e-10.
    wave = np.geomspace(0.09, 30.0, 200)
    ref = AstropyBlackBody(temperature=temperature * u.K, scale=1.0 * FLAM)(wave * u.um).to_value(FLAM)
    assert_allclose(blackbody(temperature).flam(wave), ref, rtol=1e-10)


def test_blackbody_in_logs_does_not_overflow():
    # Far Wien tail: hc/λkT ≈ 1400, where exp() would overflow; ln B_λ stays finite.
    value = planck_log_flam(0.01, 1000.0)
    assert np.isfinite(value) and value < -1000


def test_blackbody_wien_peak():
    # Wien's displacement law: λ_max T = 2897.77 µm K (CODATA 2018 constant b). rtol 1e-4: the
    # grid step (1e-6 µm, 2e-6 relative) and the constant quoted to six digits.
    lam = np.linspace(0.4, 0.6, 200001)
    peak = lam[np.argmax(blackbody(5800.0).flam(lam))]
    assert_allclose(peak * 5800.0, 2897.77, rtol=1e-4)


def test_quantities_at_the_boundary():
    # unit conversions multiply by powers of ten or invert: rounding only
    bb = blackbody(6000 * u.K)
    assert_allclose(bb.flam(5500 * u.AA), bb.flam(0.55), rtol=1e-12)
    assert_allclose(bb.flam(1 / (2.0 / u.um)), bb.flam(0.5), rtol=1e-12)


def test_power_law_and_flat_fnu_slopes():
    # F_ν ∝ ν^α ⇔ F_λ ∝ λ^(−2−α) (F_λ = F_ν c/λ²; common practice, no source); powers of two,
    # rounding only
    assert_allclose(power_law(1.0).flam(2.0) / power_law(1.0).flam(1.0), 2.0**-3, rtol=1e-14)
    assert_allclose(flat_fnu().flam([1.0, 2.0]), [1.0, 0.25], rtol=1e-14)
    assert flat_fnu().name == "flat"


def test_tabulated_sed_refuses_outside_its_range():
    sed = TabulatedSED([0.4, 0.5, 0.6], [1.0, 2.0, 1.0], name="t")
    assert_allclose(sed.flam(0.45), 1.5, rtol=1e-12)  # linear between samples: rounding only
    with pytest.raises(InputError, match="outside the source"):
        sed.flam(0.7)
    with pytest.raises(InputError, match="negative"):
        TabulatedSED([0.4, 0.5], [1.0, -1.0])


@pytest.mark.parametrize(
    "spec, cls_name, name",
    [
        ("blackbody:7000", "BlackBody", "blackbody:7000"),
        ("powerlaw:-1", "PowerLaw", "powerlaw:-1"),
        ("flat", "PowerLaw", "flat"),
    ],
)
def test_load_sed_specs(spec, cls_name, name):
    sed = load_sed(spec)
    assert type(sed).__name__ == cls_name and sed.name == name


@pytest.mark.parametrize("spec", ["blackbody:-5", "blackbody:hot", "powerlaw:", "vega:1", "sirius", "flat:1"])
def test_load_sed_bad_specs(spec):
    with pytest.raises(InputError):
        load_sed(spec)


def test_sed_file_in_fnu_is_converted_to_flam(tmp_path):
    # F_λ = F_ν c / λ² (astropy spectral_density equivalency).
    wave = np.array([0.4, 0.5, 0.6, 0.8]) * u.um
    fnu = np.array([1.0, 2.0, 3.0, 4.0]) * u.Jy
    path = tmp_path / "s.ecsv"
    Table({"wavelength": wave, "flux": fnu}).write(path)
    sed = load_sed(f"file:{path}")
    expect = fnu.to_value(u.erg / u.s / u.cm**2 / u.AA, equivalencies=u.spectral_density(wave))
    assert_allclose(sed.flam(wave.value), expect, rtol=1e-12)  # the same conversion: rounding only


def test_sed_csv_and_fits(tmp_path):
    csv = tmp_path / "s.csv"
    csv.write_text("wavelength_um,flam\n0.4,1\n0.5,2\n0.6,3\n")
    # linear between samples, Å → µm: rounding only
    assert_allclose(load_sed(f"file:{csv}").flam(0.55), 2.5, rtol=1e-12)
    fits = tmp_path / "s.fits"
    Table({"wavelength": [4000.0, 6000.0] * u.AA, "flux": [1.0, 3.0] * u.erg / u.s / u.cm**2 / u.AA}).write(fits)
    assert_allclose(load_sed(f"file:{fits}").flam(0.5), 2.0, rtol=1e-12)


@pytest.mark.parametrize(
    "name, text, match",
    [
        ("a.csv", "wavelength_um,f\n0.4,1\n0.5,2\n", "flam"),
        ("a.ecsv", "not an ecsv file\n", "could not be read"),
        ("a.txt", "0.4 1\n", "extension"),
    ],
)
def test_sed_file_errors(tmp_path, name, text, match):
    path = tmp_path / name
    path.write_text(text)
    with pytest.raises(InputError, match=match):
        load_sed(f"file:{path}")

"""The packaged reference spectra of Vega and the Sun, and Vega-system magnitudes.

The spectra are read from ``redcorr/data/spectrum_*.ecsv`` through
``load_sed`` (the files made by ``scripts/make_reference_spectra.py``), never
from the package they came from. Each check names its source; values "from
memory" were quoted without the paper at hand.
"""

import math

import pytest

from redcorr.cli import main
from redcorr.exceptions import InputError
from redcorr.io.filters import load_band
from redcorr.io.spectra import ab_vega_offsets, load_sed
from redcorr.photometry import ab_minus_vega, synthetic_vega
from redcorr.sed import TabulatedSED

JC = ["bessell-U", "bessell-B", "bessell-V", "bessell-R", "bessell-I"]
TWOMASS = ["twomass-J", "twomass-H", "twomass-Ks"]
AU_PC = 1.0 / 206264.806  # 1 AU in parsec (IAU 2012 au; common practice, no source)

# Johnson–Cousins convention: Vega at V = 0.03 and all colours 0 (Bessell & Murphy 2012, PASP 124,
# 140; from memory). 2MASS: Vega at about 0 (Cohen, Wheaton & Megeath 2003, AJ 126, 1090; from memory).
VEGA_V = 0.03


@pytest.fixture(scope="module")
def vega():
    return load_sed("vega")


@pytest.fixture(scope="module")
def sun():
    return load_sed("sun")


def test_named_spectra_are_tabulated_with_their_citations(vega, sun):
    assert isinstance(vega, TabulatedSED) and vega.name == "vega"
    assert isinstance(sun, TabulatedSED) and sun.name == "sun"
    assert "Bohlin, R. C. 2014, AJ, 147, 127" in vega.citation
    assert "PASP, 126, 711" in sun.citation
    assert load_sed(" Vega ") is vega  # read once, case and spaces as for the other specs


def test_vega_absolute_flux_at_5556_angstrom(vega):
    # Megessier 1995, A&A 296, 771: F_λ(5556 Å) = 3.46e-9 erg s⁻¹ cm⁻² Å⁻¹ ± 0.7 %; Hayes 1985
    # (IAU Symp. 111) 3.44e-9 (both from memory). 1.5 % spans the published calibrations.
    assert float(vega.flam(0.5556)) == pytest.approx(3.46e-9, rel=0.015)


@pytest.mark.parametrize("vega_mag", [0.0, VEGA_V])
def test_vega_colours_are_zero_in_the_vega_system(vega, vega_mag):
    # By construction (Bessell & Murphy 2012, Vega-based magnitudes): Vega has the magnitude
    # vega_mag in every band, so its colours vanish. Tolerance 1e-12 mag: float rounding only.
    mags = [synthetic_vega(vega, load_band(b), vega, vega_mag) for b in JC + TWOMASS]
    assert mags == pytest.approx([vega_mag] * len(mags), abs=1e-12)


# Blanton & Roweis 2007, AJ 133, 734, Table 1: m_AB − m_Vega for Bessell UBVRI and 2MASS JHKs
# (from memory). Tolerance: 0.04 mag in UBVRI, where their older Vega spectrum and the Bessell
# curves' treatment differ from ours around the Balmer lines and jump (published tables differ by
# 0.03–0.05 mag in U and B); 0.02 mag in JHKs, where Vega's spectrum is smooth.
BLANTON_ROWEIS_2007 = [
    ("bessell-U", 0.79, 0.04),
    ("bessell-B", -0.09, 0.04),
    ("bessell-V", 0.02, 0.04),
    ("bessell-R", 0.21, 0.04),
    ("bessell-I", 0.45, 0.04),
    ("twomass-J", 0.91, 0.02),
    ("twomass-H", 1.39, 0.02),
    ("twomass-Ks", 1.85, 0.02),
]


@pytest.mark.parametrize("band, published, tol", BLANTON_ROWEIS_2007)
def test_ab_minus_vega_offsets_against_blanton_roweis(band, published, tol):
    assert ab_vega_offsets([band])[band] == pytest.approx(published, abs=tol)


def test_offsets_follow_vega_own_magnitude(vega):
    # m_AB − m_Vega = m_AB(Vega) − vega_mag (definition, Bessell & Murphy 2012). Tolerance 1e-12.
    band = load_band("bessell-V")
    assert ab_minus_vega(vega, band, VEGA_V) == pytest.approx(ab_minus_vega(vega, band) - VEGA_V, abs=1e-12)
    assert ab_vega_offsets([band], VEGA_V)["bessell-V"] == pytest.approx(ab_minus_vega(vega, band) - VEGA_V,
                                                                          abs=1e-12)


def _sun_vega(sun, vega, band):
    zero = VEGA_V if band.startswith("bessell") else 0.0
    return synthetic_vega(sun, load_band(band), vega, zero)


def test_sun_b_minus_v(sun, vega):
    # Ramírez et al. 2012, ApJ 752, 5: (B−V)_sun = 0.653 ± 0.003 (from memory). Tolerance 0.03 mag:
    # the Bessell curves stand in for the Johnson system they define, to ~0.01–0.02 mag.
    bv = _sun_vega(sun, vega, "bessell-B") - _sun_vega(sun, vega, "bessell-V")
    assert bv == pytest.approx(0.653, abs=0.03)


def test_sun_v_minus_ks(sun, vega):
    # Casagrande et al. 2012, ApJ 761, 16: (V−Ks)_sun = 1.560 ± 0.008 (from memory). Tolerance
    # 0.04 mag: the 2MASS zero point of Vega is known to ~0.01–0.02 mag (Cohen et al. 2003) and V's
    # Vega convention adds its own 0.01–0.02 mag.
    vk = _sun_vega(sun, vega, "bessell-V") - _sun_vega(sun, vega, "twomass-Ks")
    assert vk == pytest.approx(1.560, abs=0.04)


def test_sun_absolute_v_magnitude(sun, vega):
    # The spectrum is the irradiance at 1 AU: M_V = V + 5 log10(10 pc / 1 AU). M_V,sun = 4.81
    # (Bessell, Castelli & Plez 1998, A&A 333, 231; Willmer 2018, ApJS 236, 47; from memory).
    # Tolerance 0.03 mag: the solar V itself (−26.76) is quoted to ±0.02 mag.
    v = _sun_vega(sun, vega, "bessell-V")
    assert v + 5.0 * math.log10(10.0 / AU_PC) == pytest.approx(4.81, abs=0.03)


def test_sun_is_not_extrapolated_beyond_its_table(sun, vega):
    # The solar table ends at 2.70 µm; a band at 3.4 µm must be refused, not extrapolated
    # (common practice, no source).
    with pytest.raises(InputError, match="outside the source 'sun'"):
        synthetic_vega(sun, load_band("tophat:3.4:0.5"), vega)


@pytest.mark.parametrize("spec", ["sun:xyz", "vega:1", "vega:"])
def test_reference_spectra_take_no_parameter(spec):
    with pytest.raises(InputError) as err:
        load_sed(spec)
    message = str(err.value)
    assert f"sed={spec!r}" in message and "\n" not in message
    for allowed in ("blackbody:T", "powerlaw:ALPHA", "flat", "vega", "sun", "file:PATH"):
        assert allowed in message


def test_cli_accepts_the_named_spectra_and_refuses_a_parameter(capsys):
    assert main(["coeffs", "--law", "ccm89", "--band", "bessell-V", "--sed", "vega", "--av", "1", "--json"]) == 0
    capsys.readouterr()
    assert main(["coeffs", "--law", "ccm89", "--band", "bessell-V", "--sed", "sun:xyz", "--av", "1"]) == 2
    err = capsys.readouterr().err
    assert "sed='sun:xyz'" in err and "vega, sun" in err
    # the named spectra are absolute: `plan --calibrated` takes them as it takes a file with units
    assert main(["plan", "--instrument", "demo", "--calibrated", "--sed", "sun", "--av", "1", "--snr", "10"]) == 0

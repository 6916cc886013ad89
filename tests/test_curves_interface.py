"""The shared curve interface: units, shapes, NaN, ranges and the registry."""

import numpy as np
import pytest
from astropy import units as u
from numpy.testing import assert_allclose

from redcorr.curves import LAWS, get_curve, list_curves
from redcorr.exceptions import ExtrapolationWarning, InputError, UnknownNameError

ALL = sorted(LAWS)
# One wavelength inside every law's range (FM90 is ultraviolet-only).
INSIDE = {name: (0.2 if name == "fm90" else 0.55) for name in ALL}


@pytest.mark.parametrize("name", ALL)
def test_units_agree(name):
    # 0.55 µm = 5500 Å = 550 nm = 1.818 µm⁻¹ = c/0.55 µm (astropy's spectral
    # equivalencies; definitions of the units). Conversions multiply by powers of ten or by c:
    # rounding only, hence 1e-12.
    curve = get_curve(name)
    lam = INSIDE[name]
    ref = curve(lam)
    for q in (lam * 1e4 * u.AA, lam * 1e3 * u.nm, (1 / lam) * u.um**-1, (lam * u.um).to(u.THz, u.spectral())):
        assert_allclose(curve(q), ref, rtol=1e-12)


def test_bad_unit():
    with pytest.raises(InputError, match="unit"):
        get_curve("ccm89")(3 * u.kg)


@pytest.mark.parametrize("name", ALL)
def test_shapes_and_scalars(name):
    curve = get_curve(name)
    lam = INSIDE[name]
    assert np.ndim(curve(lam)) == 0
    grid = np.full((3, 4), lam)
    grid[1, 2] = lam * 1.1
    out = curve(grid)
    assert out.shape == (3, 4)
    # the same formula element by element as for a scalar: rounding only
    assert_allclose(out[1, 2], curve(lam * 1.1), rtol=1e-14)


@pytest.mark.parametrize("name", ALL)
def test_nan_in_nan_out(name):
    out = get_curve(name)([INSIDE[name], np.nan])
    assert np.isfinite(out[0]) and np.isnan(out[1])


@pytest.mark.parametrize("name", ALL)
def test_outside_range_raises_or_warns(name):
    curve = get_curve(name)
    too_short = 0.5 * curve.wave_range[0].to_value(u.um)
    with pytest.raises(InputError, match=rf"{too_short:.6g} µm lies outside the {name} range"):
        curve(too_short)
    with pytest.warns(ExtrapolationWarning, match="extrapolation"):
        value = curve(too_short, extrapolate=True)
    assert np.isfinite(value)


def test_nonpositive_wavelength():
    with pytest.raises(InputError, match="not a positive wavelength"):
        get_curve("ccm89")([0.5, -1.0])


def test_a_over_ebv_is_r_v_times_ratio():
    # A(λ)/E(B-V) = R_V A(λ)/A(V) (definition of R_V, common practice, no source).
    curve = get_curve("f99", r_v=4.3)
    # one multiplication apart: rounding only
    assert_allclose(curve.a_over_ebv(0.7), 4.3 * curve(0.7), rtol=1e-14)


def test_registry_names_are_case_insensitive_and_suggest():
    assert get_curve("CCM89").name == "ccm89"
    with pytest.raises(UnknownNameError, match="did you mean 'ccm89'"):
        get_curve("cmm89")
    with pytest.raises(UnknownNameError, match="not known"):
        get_curve("zzzzzz")


def test_list_curves_describes_every_law():
    rows = list_curves()
    assert {r["name"] for r in rows} == set(LAWS)
    for row in rows:
        lo, hi = row["wave_range_um"]
        assert 0 < lo < hi
        assert row["citation"]

"""The top-level package exposes the main entry points."""

import importlib

import pytest

import redcorr

# Where each top-level name is documented to live (the package docstring and each module's
# __all__): ``redcorr.NAME`` must be that very object, not a copy or a wrapper.
HOME = {
    "DustCurve": "redcorr.curves",
    "TabulatedCurve": "redcorr.curves",
    "get_curve": "redcorr.curves",
    "list_curves": "redcorr.curves",
    "get_grain_model": "redcorr.io.grains",
    "list_grain_models": "redcorr.io.grains",
    "Band": "redcorr.bandpass",
    "blackbody": "redcorr.sed",
    "band_extinction": "redcorr.extinction",
    "band_ratio": "redcorr.extinction",
    "coefficient_grid": "redcorr.coefficients",
    "correct_dataframe": "redcorr.io",
    "plan_exposure": "redcorr.exposure",
    "load_curve": "redcorr.io",
    "load_band": "redcorr.io",
    "open_map": "redcorr.io",
}


def test_public_names_are_exactly_the_documented_ones():
    assert sorted(redcorr.__all__) == sorted(HOME)
    assert len(set(redcorr.__all__)) == len(redcorr.__all__)


@pytest.mark.parametrize("name", sorted(HOME))
def test_public_names_are_the_library_objects(name):
    home = importlib.import_module(HOME[name])
    assert name in home.__all__
    assert getattr(redcorr, name) is getattr(home, name)


def test_mie_is_a_plain_module():
    # redcorr.mie is an ordinary submodule: imported on its own, not callable
    mie = importlib.import_module("redcorr.mie")
    assert not callable(mie)
    assert "sphere" in mie.__all__


def test_unknown_attribute():
    with pytest.raises(AttributeError, match="no_such_thing"):
        _ = redcorr.no_such_thing

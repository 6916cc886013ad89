"""The top-level package exposes the main entry points."""

import importlib

import pytest

import redcorr


@pytest.mark.parametrize("name", redcorr.__all__)
def test_public_names_resolve(name):
    obj = getattr(redcorr, name)
    assert obj is not None


def test_lazy_names_are_the_library_objects():
    assert redcorr.band_extinction is importlib.import_module("redcorr.extinction").band_extinction
    assert redcorr.load_curve is importlib.import_module("redcorr.io").load_curve


def test_unknown_attribute():
    with pytest.raises(AttributeError, match="no_such_thing"):
        _ = redcorr.no_such_thing

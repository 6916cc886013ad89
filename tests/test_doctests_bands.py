"""Run the docstring examples of the band modules."""

import doctest
import importlib

import pytest


@pytest.mark.parametrize("name", ["redcorr.bandpass", "redcorr.extinction"])
def test_docstring_examples(name):
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0

"""Run the examples in the docstrings of the core modules."""

import doctest
import importlib

import pytest

MODULES = ["redcorr.curves", "redcorr.curves.ccm"]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0

"""Run the docstring examples of the exposure-planning core."""

import doctest
import importlib


def test_docstring_examples():
    result = doctest.testmod(importlib.import_module("redcorr.exposure"), optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0

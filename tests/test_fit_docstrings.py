"""Run the docstring examples of the measured-spectrum, envelope and fitting modules."""

from __future__ import annotations

import doctest
import importlib

import numpy as np
import pytest


@pytest.mark.parametrize("name", ["filmoptic.measured", "filmoptic.envelope", "filmoptic.fit"])
def test_docstring_examples(name):
    module = importlib.import_module(name)
    with np.printoptions(legacy=False):
        failures, attempted = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE | doctest.ELLIPSIS)
    assert attempted > 0
    assert failures == 0

"""Run the examples in the public modules' docstrings (they are part of the documentation).

The outputs printed in those examples pin what the documentation shows; they are not checks
against the outside world (those live in the other test files, with their sources).
"""

from __future__ import annotations

import doctest
import importlib

import numpy as np
import pytest

MODULES = [
    "filmoptic.units",
    "filmoptic.limits",
    "filmoptic.files",
    "filmoptic.materials",
    "filmoptic.materials.base",
    "filmoptic.materials.models",
    "filmoptic.materials.tables",
    "filmoptic.materials.mixing",
    "filmoptic.materials.library",
    "filmoptic.materials.expression",
    "filmoptic.materials.gaps",
    "filmoptic.materials.films",
    "filmoptic.stack",
    "filmoptic.engine",
    "filmoptic.inverse.measured",
    "filmoptic.inverse.envelope",
    "filmoptic.inverse.fit",
    "filmoptic.colorimetry",
    "filmoptic.numerics.roots",
    "filmoptic.inverse.readings",
    "filmoptic.inverse.solve",
    "filmoptic.inverse.choose",
    "filmoptic.colouring.oxide_film",
    "filmoptic.colouring.anodize",
    "filmoptic.colouring.heat_tint",
    "filmoptic.inverse.rate",
    "filmoptic.imaging.photo",
    "filmoptic.imaging.profile",
    "filmoptic.imaging.render",
    "filmoptic.imaging.maps",
    "filmoptic.imaging._search",
    "filmoptic.plots",
    "filmoptic.plots.chart",
    "filmoptic.plots.swatch",
    "filmoptic.describe.ladder",
    "filmoptic.describe.colour_words",
    "filmoptic.describe.views",
    "filmoptic.explore.grids",
    "filmoptic.explore.page",
    "filmoptic.plots.nk",
    "filmoptic.plots.spectrum",
    "filmoptic.monitor.signal",
    "filmoptic.monitor.rate",
    "filmoptic.monitor.rows",
    "filmoptic.monitor.sources",
    "filmoptic.monitor.session",
    "filmoptic.monitor.plan",
    "filmoptic.plots.monitor",
    "filmoptic.demo.monitor",
    "filmoptic.plots.design",
    "filmoptic.design.goals",
    "filmoptic.design.layout",
    "filmoptic.design.evaluate",
    "filmoptic.design.search",
    "filmoptic.design.needle",
    "filmoptic.design.refine",
    "filmoptic.design.designer",
    "filmoptic.design.tolerance",
    "filmoptic.plots.solve",
    "filmoptic.notes",
    "filmoptic.materials.common_names",
    "filmoptic.cli.spectrum",
    "filmoptic.cli.sweep",
    "filmoptic.numerics.interpolate",
    "filmoptic.numerics.sampling",
    "filmoptic.cie.tables",
    "filmoptic.cie.transforms",
    "filmoptic.describe.descriptions",
]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    module = importlib.import_module(name)
    # colour-science switches numpy to legacy array printing when any test imports it; the
    # examples are written for numpy's own printing, so run them with it whatever the test order.
    with np.printoptions(legacy=False):
        failures, attempted = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE | doctest.ELLIPSIS)
    assert attempted > 0, f"{name} has no docstring examples"
    assert failures == 0

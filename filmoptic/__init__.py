"""filmoptic — thin-film optics for the people who put coatings on things.

The package is layered so that data flows one way::

    materials  →  stack  →  engine  →  colour  →  solve / fit / rate  →  plots, demo  →  cli

Importing :mod:`filmoptic` itself is cheap: the sub-modules are imported on first use, so that
``filmoptic --help`` answers instantly.
"""

from importlib import import_module as _import_module

__all__ = ["__version__"]
__version__ = "0.1.0"

_SUBMODULES = {
    "errors", "units", "files", "materials", "stack", "engine", "colorimetry", "solve", "rate",
    "fit", "measured", "envelope", "choose", "roots", "readings", "plots", "demo",
}


def __getattr__(name):  # PEP 562: lazy sub-module access, e.g. ``filmoptic.engine``
    if name in _SUBMODULES:
        return _import_module(f"{__name__}.{name}")
    raise AttributeError(f"module 'filmoptic' has no attribute {name!r}")

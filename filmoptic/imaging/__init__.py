"""Thickness and uniformity maps from photographs of coated parts.

A photo of a coated part on a light box (transmission) or of an oxide-coloured part (reflection)
becomes a grid of film thicknesses with intervals, flags, uniformity figures and a fitted profile.

Modules, in the order data flows through them:

``photo``
    Reading image files (JPEG, PNG and TIFF at 8 or 16 bits through Pillow; camera RAW through
    the optional ``rawpy``), EXIF orientation, linearisation (sRGB decoding per IEC 61966-2-1),
    rectangles and cell grids, and the per-cell statistics of a photo (mean, pixel noise,
    saturated and dark pixels), computed in row bands so memory stays bounded.
``transmission``
    Luminance ratios to a bare-glass region or a flat-field photo, inverted for every cell at
    once through :func:`filmoptic.inverse.solve.solve_batch`.
``colour_map``
    CIELAB of every cell matched to the computed colours of the film, interference order chosen
    for spatial continuity.
``profile``
    Statistics, the uniformity figure and fitted thickness profiles (tilted plane, radial
    fall-off of a small source).
``maps``
    :func:`map_thickness`, the one entry point, and its result :class:`ThicknessMap`.
``render``
    Synthetic photos made by the forward model (for tests, benchmarks and the demo).

Nothing here imports Pillow, numpy or the engine at package import; the modules import them where
they are used.
"""

__all__ = ["map_thickness", "ThicknessMap"]


def __getattr__(name):
    # The entry point without importing numpy and Pillow at package import.
    if name in __all__:
        from . import maps

        return getattr(maps, name)
    raise AttributeError(name)

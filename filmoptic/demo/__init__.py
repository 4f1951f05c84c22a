"""The built-in worked example behind ``filmoptic demo``.

Everything here lives in one fictional scenario (see :mod:`filmoptic.demo.scenario`); its numbers
are invented for illustration and are not measurements.
"""

"""How a coating's colour is told to people: words, notations, views and the colour ladder.

Modules
-------
colour_words
    A plain colour word for a CIELAB colour.
descriptions
    Munsell notation and correlated colour temperature (through colour-science, on request).
views
    The coater's words for the three views: film side, glass side, through.
ladder
    The colour ladder: rungs at round thicknesses or volts, tolerance neighbours, orders.
"""

__all__: list = []

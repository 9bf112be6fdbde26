"""Colours of the dashboard: one per planet, the same planet always the same colour.

The nine planet colours were chosen for this project by maximising the
smallest pairwise distance in the CAM02-UCS colour space (Luo, Cui & Li
2006) under normal vision and under simulated protanopia, deuteranopia and
tritanopia (Machado, Oliveira & Fernandes 2009, full severity), with CIELAB
lightness kept at or below about 68 so each colour reads against a white
background. ``tests/test_views.py`` re-checks the distances with an
independent implementation of those models. A system with more than nine
planets reuses the colours in turn; names and tooltips still tell them apart.
"""

from __future__ import annotations

#: planet colours, in period order of the planets (inner first)
PLANET_COLOURS = (
    "#4400aa",  # indigo
    "#e08400",  # orange
    "#008e78",  # teal
    "#d42a4c",  # crimson
    "#7c5ea2",  # muted violet
    "#33a8ff",  # sky blue
    "#683c0a",  # brown
    "#a4a0b4",  # lavender grey
    "#48405a",  # slate
)
#: the star, wherever it is drawn as a body (not one of the planet colours)
STAR_COLOUR = "#f2b705"
#: outline of the selected planet and of highlighted cells
HIGHLIGHT_COLOUR = "#000000"
#: habitable-zone fills: conservative and optimistic
HZ_CONSERVATIVE_COLOUR = "#4c9a2a"
HZ_OPTIMISTIC_COLOUR = "#a9d18e"
#: orbits and other neutral lines
NEUTRAL_COLOUR = "#6b6b6b"
#: scale reference (a Solar System orbit)
REFERENCE_COLOUR = "#9a9a9a"
#: sequential colour map of the skies matrix (Bokeh's Cividis, made for colour-vision deficiency)
SKIES_PALETTE = "Cividis256"


def planet_colours(count: int) -> list[str]:
    """Colours of ``count`` planets in period order (cycling after nine)."""
    return [PLANET_COLOURS[i % len(PLANET_COLOURS)] for i in range(count)]


def body_colour(name: str, planet_names) -> str:
    """Colour of a body called ``name`` ("star" or a planet of ``planet_names``)."""
    if name == "star":
        return STAR_COLOUR
    return PLANET_COLOURS[list(planet_names).index(name) % len(PLANET_COLOURS)]

"""Colours of the dashboard: planets, the star, the habitable zone and the page.

The nine planet colours were chosen for this project by maximising the
smallest pairwise distance in the CAM02-UCS colour space (Luo, Cui & Li
2006) under normal vision and under simulated protanopia, deuteranopia and
tritanopia (Machado, Oliveira & Fernandes 2009, full severity), with CIELAB
lightness kept at or below about 68 so each colour reads against a white
background. ``tests/test_views.py`` re-checks the distances with an
independent implementation of those models.

A planet keeps its colour for the whole session: :class:`ColourBook` (one
per app) hands out colours in order of first appearance and never takes one
back, so adding a planet with a shorter period, or removing one, recolours
no other. More than nine planets reuse the colours in turn; names and
tooltips still tell them apart.

The habitable zone has a visual code of its own: a band graded from a warm
sand at its inner edge (recent Venus) to a cool grey-blue at its outer edge
(early Mars), evenly in the logarithm of the insolation, solid across the
conservative zone and hatched over the optimistic extensions.
"""

from __future__ import annotations

import numpy as np

#: planet colours, handed out in order of first appearance
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
STAR_OUTLINE = "#8a6500"
#: outline of the selected planet and of highlighted cells
HIGHLIGHT_COLOUR = "#000000"
#: scale reference (a Solar System orbit)
REFERENCE_COLOUR = "#9a9a9a"
#: sequential colour map of the skies matrix (made for colour-vision deficiency)
SKIES_CMAP = "cividis"

#: the habitable zone's grade, inner (warm) edge to outer (cool) edge, as (red, green, blue) anchors
HZ_WARM, HZ_MILD, HZ_COOL = (0.953, 0.847, 0.694), (0.902, 0.898, 0.820), (0.745, 0.835, 0.878)
#: steps of the graded band
HZ_STEPS = 24
#: hatching of the optimistic extensions (Bokeh pattern; the matplotlib backend draws its own "//")
HZ_HATCH = "/"
HZ_HATCH_COLOUR = "#8c7a5b"
#: lines at the four limits
HZ_LIMIT_COLOUR = "#6e5a3a"

#: the page
INK = "#1f2630"
PAPER = "#fbfaf7"
RULE = "#c9c2b3"
ACCENT = "#3d5a80"
MUTED_INK = "#5a6270"
WARNING_INK = "#6b4a00"


def _hex(rgb) -> str:
    return "#" + "".join(f"{int(round(255 * min(max(c, 0.0), 1.0))):02x}" for c in rgb)


def hz_grade(fractions) -> list[str]:
    """Colours of the habitable-zone band at ``fractions`` of its width (0 inner edge, 1 outer edge)."""
    t = np.clip(np.asarray(fractions, dtype=float), 0.0, 1.0)
    warm, mild, cool = (np.array(c) for c in (HZ_WARM, HZ_MILD, HZ_COOL))
    first = t[:, None] < 0.5
    u = np.where(first, 2.0 * t[:, None], 2.0 * t[:, None] - 1.0)
    rgb = np.where(first, warm + (mild - warm) * u, mild + (cool - mild) * u)
    return [_hex(c) for c in rgb]


class ColourBook:
    """Planet colours of one session, by name, in order of first appearance.

    A name seen once keeps its colour for the life of the book, even when
    the planet is removed and comes back, and a new name never takes a
    colour away from another planet.
    """

    def __init__(self, names=()):
        self._index: dict[str, int] = {}
        self.note(names)

    def note(self, names) -> None:
        """Give each name not seen before the next colour."""
        for name in names:
            if name not in self._index:
                self._index[name] = len(self._index)

    def colour(self, name: str) -> str:
        """The colour of planet ``name`` (given one now if it is new); the star's for "star"."""
        if name == "star":
            return STAR_COLOUR
        self.note([name])
        return PLANET_COLOURS[self._index[name] % len(PLANET_COLOURS)]

    def colours(self, names) -> list[str]:
        """The colours of ``names``, in their order."""
        return [self.colour(str(n)) for n in names]

    def copy(self) -> ColourBook:
        """A book giving the same colours, which notes new names without changing this one."""
        book = ColourBook()
        book._index = dict(self._index)
        return book

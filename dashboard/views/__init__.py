"""The views of the dashboard, one module each, with the shared pieces: plotting (HoloViews layers and their
looks per backend), tables (read from the registry), palette, habitable-zone code, page look, controls.

The app lists the tabs in ``orbitdeck.dashboard.app.VIEW_CLASSES``.
"""

from .flux import FluxView
from .ladder import LadderView
from .layout import LayoutView
from .observability import ObservabilityView
from .skies import SkiesView

__all__ = ["FluxView", "LadderView", "LayoutView", "ObservabilityView", "SkiesView"]

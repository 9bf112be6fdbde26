"""The five views of the dashboard, one module each, plus the palette and the controls."""

from .flux import FluxView
from .ladder import LadderView
from .layout import LayoutView
from .observability import ObservabilityView
from .skies import SkiesView

__all__ = ["FluxView", "LadderView", "LayoutView", "ObservabilityView", "SkiesView"]

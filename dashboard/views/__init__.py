"""The views of the dashboard, one module each, with the palette, the controls and the shared plotting pieces.

Import a view from its module (``from orbitdeck.dashboard.views.flux import FluxView``); the app lists
the tabs in ``orbitdeck.dashboard.app.VIEW_CLASSES``.
"""

"""The user interface of orbitdeck: command line, Panel dashboard, snapshots.

``build_app`` is imported lazily so that the command line does not load
Panel for commands that do not need it.
"""

__all__ = ["build_app"]


def __getattr__(name):
    if name == "build_app":
        from .app import build_app

        return build_app
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")

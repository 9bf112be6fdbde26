"""orbitdeck: linked, reactive views of compact exoplanet systems."""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("orbitdeck")
except PackageNotFoundError:  # running from a source tree that is not installed
    __version__ = "0.0.0+unknown"

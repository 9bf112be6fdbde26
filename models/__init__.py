"""The science of orbitdeck: inputs, system files and derived quantities.

Nothing here imports a user-interface library.
"""

from .engine.derive import Derived, derive
from .files import SystemFileError, dumps_system, load_system, loads_system, save_system
from .quantity import Uncertainty
from .sources import load_demo
from .system import Assumptions, Planet, Star, System

__all__ = [
    "Assumptions", "Derived", "Planet", "Star", "System", "SystemFileError", "Uncertainty",
    "derive", "dumps_system", "load_demo", "load_system", "loads_system", "save_system",
]

"""The science of orbitdeck: inputs, system files and derived quantities.

Nothing here imports a user-interface library.
"""

from .engine.derive import Derived, derive
from .files.system_file import SystemFileError, dumps_system, load_system, loads_system, save_system
from .files.quantity import Uncertainty
from .files.sources import load_demo
from .files.system import Assumptions, Planet, Star, System

__all__ = [
    "Assumptions", "Derived", "Planet", "Star", "System", "SystemFileError", "Uncertainty",
    "derive", "dumps_system", "load_demo", "load_system", "loads_system", "save_system",
]

"""N-body ensembles: the star and planets integrated over the Monte Carlo draws of a system.

Public entry points:

* :func:`run_ensemble` integrates the draws as dask tasks (on this machine or
  a dask.distributed cluster), with a progress callback and a
  ``threading.Event`` for cancellation, and returns an :class:`EnsembleResult`.
* :class:`Settings` holds the step and the stopping rules.

Results are model estimates (point masses, Newtonian gravity, fixed step).
"""

from .chunk import CLOSE_ENCOUNTER, EJECTION, ENERGY_ERROR, OUTCOME_NAMES, SURVIVED, EnsembleCancelled, Settings
from .ensemble import DEFAULT_SCHEDULER, LOCAL_SCHEDULERS, run_ensemble
from .results import EnsembleResult

__all__ = ["CLOSE_ENCOUNTER", "DEFAULT_SCHEDULER", "EJECTION", "ENERGY_ERROR", "LOCAL_SCHEDULERS", "OUTCOME_NAMES",
           "SURVIVED", "EnsembleCancelled", "EnsembleResult", "Settings", "run_ensemble"]

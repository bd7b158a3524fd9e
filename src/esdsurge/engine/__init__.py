"""The transient engine: method of characteristics on a series route, batched and compiled.

``simulate(route, fluid, case, ...)`` runs a case (and a batch of its variants) and returns a
:class:`Run`. The compiled kernel (numba) is imported only when a transient runs, so importing
this package compiles nothing.
"""

from .run import Envelope, Run, StopRule, Variant
from .simulate import default_duration, simulate

__all__ = ["Envelope", "Run", "StopRule", "Variant", "default_duration", "simulate"]

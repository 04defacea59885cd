"""The engine: from a :class:`~gwclock.physics.design.Design` to a strain sensitivity and its
noise budget.

Layers inside the package, each using only those above it: ``budget`` (the result type and the
grid checks), ``formula`` (one evaluation of the master formula), ``optimum`` (the continuous
interrogation optimum), ``search`` (the best sequence at each tuning), ``curves`` (envelope and
window), ``batch`` (many designs at once).
"""

from __future__ import annotations

from .batch import batch_budget
from .budget import Budget, frequency_grid
from .curves import envelope, window, window_psd
from .formula import evaluate, signal_response
from .search import best_sequence, optimise

__all__ = ["Budget", "envelope", "window", "window_psd", "evaluate", "optimise", "best_sequence",
           "frequency_grid", "signal_response", "batch_budget"]

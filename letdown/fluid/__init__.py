"""Thermodynamics only: component data, cubic equations of state, flash, reference model.

Knows nothing about flowsheets.
"""
from .fluid import Fluid, canonical_model  # noqa: F401
from .state import Phase, State, StateBatch  # noqa: F401


def __getattr__(name):
    # ``States``, the batch's name before it became ``StateBatch`` (one letter from ``State``), is
    # still served for scripts written against it, with a warning.
    if name == "States":
        import warnings
        warnings.warn("letdown: 'States' is now 'StateBatch'", DeprecationWarning, stacklevel=2)
        from .state import StateBatch
        return StateBatch
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")

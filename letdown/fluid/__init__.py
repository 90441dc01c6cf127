"""Thermodynamics only: component data, cubic equations of state, flash, reference model.

Knows nothing about flowsheets.
"""
from .fluid import Fluid, canonical_model  # noqa: F401
from .state import Phase, State, States  # noqa: F401

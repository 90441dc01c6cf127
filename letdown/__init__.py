"""letdown: steady-state flowsheets for natural-gas pressure let-down stations and chilling trains."""
from .errors import ConvergenceError, InputError, LetdownError, ModelError, TopologyError  # noqa: F401
from .fluid import Fluid, State, States  # noqa: F401

from ._version import __version__  # noqa: F401


def load(path):
    """Load a flowsheet file into a :class:`letdown.sheet.Sheet` (see docs/reference/file-format.md for the format)."""
    from .sheet.solve import load as _load
    return _load(path)

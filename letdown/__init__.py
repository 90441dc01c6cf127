"""letdown: steady-state flowsheets for natural-gas pressure let-down stations and chilling trains."""
from .errors import ConvergenceError, InputError, LetdownError, ModelError, TopologyError  # noqa: F401
from .fluid import Fluid, State, StateBatch  # noqa: F401

from ._version import __version__  # noqa: F401


def load(path):
    """Load a flowsheet file into a :class:`letdown.sheet.Sheet` (see docs/reference/file-format.md for the format)."""
    from .sheet.solve import load as _load
    return _load(path)


def __getattr__(name):
    # ``States``, the batch's name before it became ``StateBatch`` (one letter from ``State``), is
    # still served for scripts written against it, with a warning.
    if name == "States":
        import warnings
        warnings.warn("letdown: 'States' is now 'StateBatch'", DeprecationWarning, stacklevel=2)
        from .fluid import StateBatch
        return StateBatch
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")

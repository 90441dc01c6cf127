"""Every error letdown raises on purpose.

One module, named after what went wrong, so callers catch by meaning:

* :class:`LetdownError` -- base of them all.
* :class:`InputError` -- a flowsheet file, a composition or an argument is wrong. Carries the file,
  line and field so the command line can print one clear message.
* :class:`ConvergenceError` -- an iterative solve did not converge. Carries the solver result with the
  numbers (iterations, residual, message).
* :class:`TopologyError` -- the flowsheet graph is malformed (a stream with no producer, ...).
* :class:`ModelError` -- a request the chosen thermodynamic model cannot answer (for example phase
  equilibrium with a single-phase reference model).
"""
from __future__ import annotations


class LetdownError(Exception):
    """Base class of every error raised on purpose by letdown."""


class InputError(LetdownError, ValueError):
    """Bad input: names the file, line and field where known.

    Parameters
    ----------
    message : str
        What is wrong, in the user's words.
    file : str, optional
        The file the input came from.
    line : int, optional
        1-based line number in that file.
    field : str, optional
        Dotted path of the offending field (``equipment.regulator.P_out``).
    cases : array_like of bool, optional
        For a block run on a batch: which cases the refusal concerns (shape (n,)). A batch solve
        that is not strict records those cases as failed, with this message, and goes on with the
        others; None means the whole input is wrong.
    """

    def __init__(self, message: str, *, file: str | None = None, line: int | None = None,
                 field: str | None = None, cases=None):
        self.message = message
        self.file = file
        self.line = line
        self.field = field
        self.cases = cases
        super().__init__(self.__str__())

    def located(self, *, file: str | None = None, line: int | None = None,
                field: str | None = None) -> "InputError":
        """Return a copy with missing location parts filled in."""
        return type(self)(self.message, file=self.file or file,
                          line=self.line if self.line is not None else line,
                          field=self.field or field, cases=self.cases)

    def __str__(self) -> str:
        where = ""
        if self.file:
            where = self.file
            if self.line is not None:
                where += f":{self.line}"
            where += ": "
        elif self.line is not None:
            where = f"line {self.line}: "
        field = f"{self.field}: " if self.field else ""
        return f"{where}{field}{self.message}"


class TopologyError(InputError):
    """The flowsheet graph is malformed (a stream produced twice, never consumed, ...)."""


class ModelError(LetdownError, ValueError):
    """The chosen thermodynamic model cannot answer this request."""


class ConvergenceError(LetdownError, ArithmeticError):
    """An iterative solve did not converge.

    Parameters
    ----------
    message : str
        What failed.
    result : object, optional
        The solver's result object (see :class:`letdown.fluid.solvers.SolveReport`), with the
        iterations, residual and status.
    """

    def __init__(self, message: str, result: object | None = None):
        self.message = message
        self.result = result
        super().__init__(message)

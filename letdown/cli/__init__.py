"""The ``letdown`` command line. The only module that prints or sets exit codes.

Verbs::

    letdown solve FILE [--json] [--csv DIR] [--model M] [--units si|field] [--profile] [--debug]
                 [--html P] [--xlsx P]
    letdown check FILE [--debug]
    letdown new station|train [FILE]
    letdown crosscheck FILE [--models M,M] [--json] [--units si|field] [--html P]
    letdown compare FILE [--data CSV] [--fit block.parameter --within LO HI] [--models M,M] [--json]
                 [--html P]
    letdown envelope FILE --stream NAME [--lines 0.1,0.5] [--csv DIR] [--json] [--plot F.png|F.svg]
    letdown sweep FILE --vary PATH=VALUES [...] [--zip] [--out DIR] [--plot X:Y] [--workers N|--dask A]
                 [--units si|display|field] [--html P] [--xlsx P] [--quiet]
    letdown sweep FILE --sample N --vary PATH=DIST(ARGS) [...] [--sampler lhs|sobol|random] [--seed S]
    letdown year FILE --profile CSV [--efficiency E] [--calorific gross|net] [--out DIR]
                 [--workers N|--dask A] [--units display|si|field] [--html P] [--xlsx P] [--quiet]
    letdown size FILE [--efficiency E] [--model M] [--free-water always|by-dew-point]
                 [--calorific gross|net] [--json] [--units si|field] [--html P] [--xlsx P]
    letdown capacity FILE [--model M] [--json] [--units si|field] [--html P]
    letdown upsets FILE [--model M] [--json] [--units si|field] [--html P]
    letdown state --T 10degC --P 70barg --gas "methane=0.9,ethane=0.1" [--model M] [--json]

Exit codes: 0 success; 2 bad input (:class:`InputError`, :class:`TopologyError`,
:class:`ModelError`); 1 a failed solve (:class:`ConvergenceError`, or a result that did not
converge; ``year``: an hour that failed; ``size``: a case that failed or does not meet its limits,
with every other row written); 3 an internal error (a bug: please report it with the ``--debug``
traceback).
Errors are one line on stderr, ``letdown: FILE:LINE: field: message``; ``--debug`` adds the
traceback. With ``--json`` stdout holds only the JSON object; messages for people go to stderr.
``--csv DIR`` writes ``streams.csv`` and ``equipment.csv`` only after a successful solve (into a
temporary directory first, then moved into place), so a failure leaves nothing behind; ``--html``
and ``--xlsx`` files likewise go to a temporary file beside the target, then renamed."""
from .app import VERBS, main
from .common import EXIT_BAD_INPUT, EXIT_FAILED_SOLVE, EXIT_INTERNAL, EXIT_OK
from .parser import HELP_EPILOG, build_parser

__all__ = ["main", "VERBS", "HELP_EPILOG", "build_parser", "EXIT_OK", "EXIT_FAILED_SOLVE",
           "EXIT_BAD_INPUT", "EXIT_INTERNAL"]

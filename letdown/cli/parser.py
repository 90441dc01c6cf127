"""The argument parser of every verb, with the shared options and the help epilogue (models, unit
spellings)."""
from __future__ import annotations

import argparse


class ArgumentRefused(Exception):
    """argparse refused the command line (its message is already in the text)."""


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # noqa: D102 - argparse hook: raise instead of exiting
        raise ArgumentRefused(f"{self.prog}: {message}")


def build_parser() -> argparse.ArgumentParser:
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", help="show the traceback of an error")
    common.add_argument("--quiet", action="store_true",
                        help="no progress bar (sweep and year show one on a terminal, once a run takes a second)")
    p = _Parser(prog="letdown", description="Steady-state flowsheets for natural-gas let-down "
                "stations and gas chilling trains.", parents=[common], epilog=HELP_EPILOG,
                formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = p.add_subparsers(dest="verb", metavar="VERB", parser_class=_Parser)
    sub.required = True

    s = sub.add_parser("solve", parents=[common], help="solve a flowsheet file and report it")
    s.add_argument("file", metavar="FILE", help="the flowsheet file (YAML)")
    s.add_argument("--json", action="store_true", help="print only the JSON result on stdout")
    s.add_argument("--csv", metavar="DIR", help="also write streams.csv and equipment.csv to DIR")
    s.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    s.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    s.add_argument("--profile", action="store_true",
                   help="also give the temperature and pressure along each pipe (JSON and report)")
    s.add_argument("--dew-points", action="store_true",
                   help="also give each product gas's hydrocarbon dew point and cricondentherm")
    s.add_argument("--html", metavar="PATH",
                   help="also write the calculation record as one self-contained HTML file")
    _record_options(s, html=False)

    c = sub.add_parser("check", parents=[common], help="validate a flowsheet file without solving")
    c.add_argument("file", metavar="FILE", help="the flowsheet file (YAML)")

    nw = sub.add_parser("new", parents=[common],
                        help="write a commented starter file: a let-down station or a chilling "
                             "train")
    nw.add_argument("kind", choices=("station", "train"), help="which starter")
    nw.add_argument("file", metavar="FILE", nargs="?",
                    help="where to write it (default: print it); an existing file is kept")

    x = sub.add_parser("crosscheck", parents=[common],
                       help="solve a flowsheet with every applicable model and compare")
    x.add_argument("file", metavar="FILE", help="the flowsheet file (YAML)")
    x.add_argument("--models", metavar="M,M", help="comma-separated models (default: all that apply)")
    x.add_argument("--json", action="store_true", help="print only the JSON comparison on stdout")
    x.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    _record_options(x, xlsx=False)

    w = sub.add_parser("sweep", parents=[common],
                       help="solve a flowsheet over a list, range or grid of input values")
    w.add_argument("file", metavar="FILE", help="the flowsheet file (YAML)")
    w.add_argument("--vary", action="append", required=True, metavar="PATH=VALUES",
                   help="e.g. supply.T=0degC:20degC:5, supply.energy=200MW:300MW:3, "
                        "@goal1.at=2degC,5degC, @blend.hydrogen=0:0.3:7 (a component) or "
                        "@blend.biomethane=0:0.3:7 (a gas of the file's 'gases' section); the "
                        "study's own axes begin with '@' (blend.X and goalK.at without it are "
                        "deprecated); with --sample a distribution: supply.T=normal(5degC,2K), "
                        "supply.flow=uniform(60000Sm3/h,90000Sm3/h), supply.P=triangular(a,m,b), "
                        "supply.composition=dirichlet(500)")
    w.add_argument("--sample", type=int, metavar="N",
                   help="uncertainty study: N samples of the distributions given with --vary; "
                        "prints mean, std, P10/P50/P90, hydrate-margin probabilities and "
                        "first-order sensitivity indices")
    w.add_argument("--sampler", choices=("lhs", "sobol", "random"), default="lhs",
                   help="with --sample: Latin hypercube (default), scrambled Sobol (N a power "
                        "of 2) or plain random")
    w.add_argument("--seed", type=int, metavar="S",
                   help="with --sample: the random seed (default: a fresh one, recorded in "
                        "run.json and the report)")
    w.add_argument("--zip", action="store_true", help="take the variables together, not as a grid")
    w.add_argument("--outputs", metavar="A,B", help="output paths: any stream or block quantity of "
                   "the JSON result, e.g. network.T,network.hydrate_margin,network.gross_cv,"
                   "preheat.fuel; @goal1 the value the first goal finds")
    w.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    w.add_argument("--basis", choices=("volume", "energy"), default="volume",
                   help="what a blend keeps: the feeds' standard flow (volume) or the energy they "
                        "deliver, gross calorific value x standard flow (energy; a feed given "
                        "by its energy in the file always keeps it)")
    w.add_argument("--plot", metavar="X:Y[,Y]", help="plot outputs Y against input X into DIR")
    _study_options(w, "write sweep.csv, run.json (and plots) to DIR; with --sample samples.csv, "
                      "summary.csv, hydrate.csv, sensitivity.csv, run.json",
                   "units of the printed table, plots and HTML: si (K, Pa, W; stdout stays "
                   "CSV), display (degC, barg, kW) or field (degF, psig, MMBtu/h); "
                   "sweep.csv stays SI", default_units="si")

    y = sub.add_parser("year", parents=[common],
                       help="solve every hour of an operating profile with the goals held")
    y.add_argument("file", metavar="FILE", help="the flowsheet file (YAML)")
    y.add_argument("--profile", required=True, metavar="CSV",
                   help="hourly profile: time,flow [unit],T_in [unit],P_in [unit][,P_out][,ground_T]")
    y.add_argument("--efficiency", type=float, metavar="E",
                   help="efficiency 0..1 of heaters the file gives none (default 0.75, assumed)")
    y.add_argument("--calorific", choices=("gross", "net"), default="gross",
                   help="calorific value of the fuel gas volume (ISO 6976:2016; default gross)")
    y.add_argument("--feed", metavar="NAME", help="the feed the profile drives (default: the only one)")
    y.add_argument("--outlet", metavar="BLOCK", help="the throttle whose P_out the profile sets")
    y.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    _study_options(y, "write hourly.csv, summary.json, run.json, plots",
                   "units of the printed figures, plots and HTML: display (degC, kW, MWh; the "
                   "default), si (K, W) or field (degF, MMBtu/h, MMBtu); hourly.csv stays SI",
                   default_units="display")
    sz = sub.add_parser("size", parents=[common],
                        help="size the preheater over the file's operating cases")
    sz.add_argument("file", metavar="FILE", help="the flowsheet file (YAML)")
    sz.add_argument("--efficiency", type=float, metavar="E",
                    help="heater efficiency 0..1 when the file's heater has none (water-bath "
                         "heaters run about 0.5-0.8; default 0.75, stated as assumed)")
    sz.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    sz.add_argument("--free-water", choices=("always", "by-dew-point"), default="always",
                    help="assume free water in every stream (default), or only below its water "
                         "dew point (trust the water dew point)")
    sz.add_argument("--calorific", choices=("gross", "net"), default="gross",
                    help="calorific value of the fuel gas volume (ISO 6976:2016; default gross)")
    sz.add_argument("--json", action="store_true", help="print only the JSON sizing on stdout")
    sz.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    _record_options(sz)
    for verb, text in (("capacity", "the largest flow of each operating case before a valve, "
                                    "velocity or noise limit, the goals held"),
                       ("upsets", "loss of preheat, regulators failing wide open (alone and in "
                                  "series): coldest temperatures and protection loads")):
        up = sub.add_parser(verb, parents=[common], help=text)
        up.add_argument("file", metavar="FILE", help="the flowsheet file (YAML)")
        up.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
        up.add_argument("--json", action="store_true", help="print only the JSON result on stdout")
        up.add_argument("--units", choices=("si", "field"), default="si", help="display units")
        _record_options(up, xlsx=False)
    cm = sub.add_parser("compare", parents=[common],
                        help="compare a flowsheet with plant measurements, per model; fit one "
                             "parameter")
    cm.add_argument("file", metavar="FILE", help="the flowsheet file (YAML)")
    cm.add_argument("--data", metavar="CSV",
                    help="measurements (columns at,value,uncertainty[,note]) added to the file's")
    cm.add_argument("--fit", metavar="BLOCK.PARAMETER", help="fit one block parameter")
    cm.add_argument("--within", nargs=2, metavar=("LO", "HI"),
                    help="bracket of the fitted parameter, with units (e.g. 0.6 0.95, 900kW 1400kW)")
    cm.add_argument("--models", metavar="M,M", help="comma-separated models (default: all that apply)")
    cm.add_argument("--json", action="store_true", help="print only the JSON comparison on stdout")
    cm.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    _record_options(cm, xlsx=False)
    e = sub.add_parser("envelope", parents=[common],
                       help="phase envelope of one stream of a solved flowsheet")
    e.add_argument("file", metavar="FILE", help="the flowsheet file (YAML)")
    e.add_argument("--stream", required=True, metavar="NAME", help="the stream whose gas to use")
    e.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    e.add_argument("--lines", metavar="B,B", default="",
                   help="vapour fractions of extra lines, e.g. 0.1,0.5,0.9")
    e.add_argument("--csv", metavar="DIR", help="write envelope.csv and points.csv to DIR")
    e.add_argument("--json", action="store_true", help="print only the JSON envelope on stdout")
    e.add_argument("--plot", metavar="FILE", help="draw the envelope into FILE (.png or .svg)")
    e.add_argument("--units", choices=("si", "field"), default="si", help="display units")

    st = sub.add_parser("state", parents=[common], help="one fluid state from two of T, P, h, s")
    st.add_argument("--T", help="temperature, e.g. 10degC")
    st.add_argument("--P", help="pressure, e.g. 70barg")
    st.add_argument("--h", help="molar enthalpy, e.g. -1200 J/mol (plain number: J/mol)")
    st.add_argument("--s", help="molar entropy, e.g. -20 J/(mol*K) (plain number: J/(mol K))")
    st.add_argument("--gas", required=True, help='composition, e.g. "methane=0.9,ethane=0.1"')
    st.add_argument("--model", default="peng-robinson", help="thermodynamic model")
    st.add_argument("--normalise", action="store_true", help="scale fractions to sum to 1")
    st.add_argument("--atmosphere", default="101.325 kPa", help="atmosphere for gauge pressures")
    st.add_argument("--json", action="store_true", help="print the state as JSON")
    st.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    return p


#: The end of ``letdown --help``: the models and the unit spellings (tests/cli/test_new_and_help.py
#: checks the lists against the model table and the unit parser).
HELP_EPILOG = """\
models (gas.model or --model):
  peng-robinson (pr, pr76; the default), peng-robinson-1978 (pr78),
  soave-redlich-kwong (srk), gerg-2008 (gerg, gerg2008; single-phase mixtures)

unit spellings (a quantity is text with a unit, e.g. '6 degC', '64 barg'):
  temperature   degC, degF, K, degR
  difference    K, delta_degC, delta_degF (margins, approaches)
  pressure      bar, bara, mbar, Pa, kPa, MPa, psi, psia; gauge barg, psig, kPag, MPag
  pressure drop bar, psi, kPa (absolute units)
  flow          Sm3/h, Sm3/d (15 degC), Nm3/h (0 degC), MMscfd, Mscfd, scf/h (60 degF);
                mol/s, kmol/h, kmol/d, lbmol/h; kg/s, kg/h, t/h, t/d, lb/h
  power, duty   W, kW, MW, hp, MMBtu/h        UA  W/K, kW/K
  fractions     0.78 or 78 %

display units of reports (--units): si (degC, barg, kW), field (degF, psig, MMBtu/h);
sweep and year also take display, and their si is plain SI (K, Pa, W) as their CSV.
Start with: letdown new station my-station.yaml
"""


def _study_options(parser, out_help: str, units_help: str, default_units: str) -> None:
    """The options ``sweep`` and ``year`` share: ``--out DIR``, ``--workers N``, ``--dask
    ADDRESS``, ``--units`` (si, field, display) and the records (``--html``, ``--xlsx``)."""
    parser.add_argument("--out", metavar="DIR", help=out_help)
    parser.add_argument("--workers", type=int, metavar="N", help="solve on N local processes")
    parser.add_argument("--dask", metavar="ADDRESS", help="solve on an existing Dask cluster")
    parser.add_argument("--units", choices=("si", "field", "display"), default=default_units,
                        help=units_help)
    _record_options(parser)


def _record_options(parser, html: bool = True, xlsx: bool = True) -> None:
    """``--html PATH`` and ``--xlsx PATH``: the calculation record as a page and as a workbook."""
    if html:
        parser.add_argument("--html", metavar="PATH",
                            help="also write the calculation record as one self-contained HTML "
                                 "file")
    if xlsx:
        parser.add_argument("--xlsx", metavar="PATH",
                            help="also write a workbook (needs openpyxl: pip install "
                                 "'letdown[xlsx]'); numbers in SI with the unit in each header")

"""Phase envelopes of random compositions (not a test; issue 11): what raises, what stays open
without saying why, and whether the extrema agree with the dew-point solver.

Fixed seed; invented compositions in eight families (lean, rich, hydrogen, CO2-rich, sour, wet,
nearly pure, and gases given over a 15-component table with most fractions exactly zero), on
Peng-Robinson and Soave-Redlich-Kwong. Half the compositions of each family are given over the
15-component table (zeros included), half as a fluid of their own components. For each envelope
it counts

* the letdown errors raised, by type (allowed, but each is listed), and any other exception
  (must be 0: only letdown errors leave the fluid layer);
* **open without a reason**: the dew and bubble branches do not meet at a critical point and the
  ``critical`` report does not say why (its status must start with "none"), or a trace report
  that did not converge has no status;
* **extrema**: the cricondentherm below the largest traced temperature, or the cricondenbar below
  the largest traced pressure (more than 1e-6 relative);
* **dew solver agreement** (``Fluid.dew_temperature``, a different algorithm: stability bisection
  plus Newton on the boundary): at the cricondentherm's pressure the upper dew temperature must be
  the cricondentherm (within ``CT_TOL_K``); at 0.3 and 0.7 of the cricondenbar it must be finite
  and at most the cricondentherm; just above the cricondenbar (x ``ABOVE_CB``) it must be NaN.
  Done where the envelope converged with both extrema.

Run from the repository root: ``PYTHONPATH=. python bench/fuzz_envelope.py [--per-family N]
[--seed S] [--list]``. Prints the counts and every finding (family, model, composition, what).
A fixed-seed slice runs in ``tests/fluid/test_fuzz_envelope.py``.
"""
from __future__ import annotations

import argparse
import os
import sys
import time
import warnings
from collections import Counter

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

import letdown  # noqa: E402
from letdown.errors import LetdownError  # noqa: E402

NAMES = ("methane", "ethane", "propane", "isobutane", "n-butane", "isopentane", "n-pentane",
         "n-hexane", "n-heptane", "nitrogen", "carbon-dioxide", "hydrogen-sulfide", "hydrogen",
         "water", "helium")
FAMILIES = ("lean", "rich", "hydrogen", "co2-rich", "sour", "wet", "nearly-pure", "zero")
MODELS = ("peng-robinson", "soave-redlich-kwong")
SEED = 20261202
#: Compositions per family and model by default: 8 x 19 x 2 = 304 envelopes.
PER_FAMILY = 19
#: The upper dew temperature at the cricondentherm's pressure against the cricondentherm [K].
CT_TOL_K = 1e-3
#: Fractions of the cricondenbar at which a dew point must exist, and the factor above it at
#: which none may.
BELOW_CB = (0.3, 0.7)
ABOVE_CB = 1.01
EXTREMUM_REL = 1e-6


def composition(fam, rng):
    """An invented composition of family ``fam`` over NAMES (most fractions zero) [-]."""
    z = dict.fromkeys(NAMES, 0.0)
    u = rng.uniform
    if fam == "lean":
        z.update(methane=u(0.85, 0.97), ethane=u(0.01, 0.06), propane=u(0.002, 0.02),
                 nitrogen=u(0, 0.03), **{"carbon-dioxide": u(0, 0.03), "n-butane": u(0, 0.005)})
    elif fam == "rich":
        z.update(methane=u(0.6, 0.8), ethane=u(0.05, 0.15), propane=u(0.03, 0.08),
                 **{"n-butane": u(0.01, 0.03), "isobutane": u(0.0, 0.015),
                    "n-pentane": u(0.003, 0.01), "n-hexane": u(0.001, 0.005),
                    "n-heptane": u(0, 0.004)})
    elif fam == "hydrogen":
        z.update(methane=u(0.5, 0.9), hydrogen=u(0.02, 0.35), ethane=u(0.01, 0.05),
                 propane=u(0.0, 0.02), nitrogen=u(0, 0.02))
    elif fam == "co2-rich":
        z.update(**{"carbon-dioxide": u(0.3, 0.95)}, methane=u(0.03, 0.5), ethane=u(0, 0.05),
                 nitrogen=u(0, 0.05))
    elif fam == "sour":
        z.update(methane=u(0.55, 0.85), **{"hydrogen-sulfide": u(0.02, 0.3),
                                           "carbon-dioxide": u(0.0, 0.1)},
                 ethane=u(0.01, 0.05), propane=u(0.0, 0.02))
    elif fam == "wet":
        z.update(methane=u(0.8, 0.95), ethane=u(0.01, 0.06), propane=u(0.0, 0.02),
                 water=10 ** u(-4, -1.5), nitrogen=u(0, 0.02))
    elif fam == "nearly-pure":
        main = rng.choice(["methane", "ethane", "propane", "carbon-dioxide", "nitrogen"])
        z[main] = 1.0
        other = rng.choice([n for n in ("methane", "ethane", "propane", "n-butane", "nitrogen",
                                        "carbon-dioxide") if n != main])
        z[other] = 10 ** u(-4.5, -1.3)
    elif fam == "zero":
        z.update(methane=u(0.8, 0.95), ethane=u(0.01, 0.06), propane=u(0.005, 0.02),
                 **{"n-butane": u(0.001, 0.01)})
    v = np.array([z[n] for n in NAMES])
    return v / v.sum()


def cases(per_family=PER_FAMILY, seed=SEED, models=MODELS):
    """[(family, model, full_table, zs over NAMES)] in a fixed order."""
    rng = np.random.default_rng(seed)
    out = []
    for fam in FAMILIES:
        for k in range(per_family):
            z = composition(fam, rng)
            for model in models:
                # the 'zero' family always on the full table; the others alternate
                out.append((fam, model, fam == "zero" or k % 2 == 0, z))
    return out


def check_one(fam, model, full, z, fluids):
    """Findings for one composition: a list of (kind, detail). Kinds: 'letdown <Error>',
    'bare <Exception>', 'open without reason', 'report without status', 'extremum',
    'dew at cricondentherm', 'no dew below cricondenbar', 'dew above cricondentherm',
    'dew above cricondenbar'; and 'ok' / 'not converged' / 'open with reason' as tallies."""
    if full:
        fluid = fluids.setdefault((model, "full"), letdown.Fluid(
            {n: 1.0 / len(NAMES) for n in NAMES}, model=model))
        zs = z
    else:
        keep = z > 0
        fluid = letdown.Fluid(dict(zip(np.array(NAMES)[keep], z[keep])), model=model,
                              normalise=True)
        zs = fluid.zs
    found = []
    try:
        env = fluid.envelope(zs=zs)
    except LetdownError as exc:
        return [(f"letdown {type(exc).__name__}", str(exc)[:200])]
    except Exception as exc:  # noqa: BLE001  -- counted: must be none
        return [(f"bare {type(exc).__name__}", str(exc)[:200])]
    found.append(("ok" if env.converged else "not converged", ""))
    meet = (env.critical is not None and len(env.dew) > 0 and len(env.bubble) > 0
            and env.dew.T[-1] == env.critical.T and env.bubble.T[0] == env.critical.T)
    if not meet:
        st = env.reports.get("critical")
        if st is None or not st.status.startswith("none"):
            found.append(("open without reason", st.status if st else "no critical report"))
        else:
            found.append(("open with reason", st.status[:120]))
    for name, r in env.reports.items():
        if not r.converged and not r.status:
            found.append(("report without status", name))
    T_all, P_all = env.T, env.P
    ct, cb = env.cricondentherm, env.cricondenbar
    if ct is not None and ct.T < T_all.max() * (1 - EXTREMUM_REL):
        found.append(("extremum", f"cricondentherm {ct.T:.6g} K below traced {T_all.max():.6g} K"))
    if cb is not None and cb.P < P_all.max() * (1 - EXTREMUM_REL):
        found.append(("extremum", f"cricondenbar {cb.P:.6g} Pa below traced {P_all.max():.6g} Pa"))
    if not (env.converged and ct is not None and cb is not None):
        return found
    P = np.array([ct.P] + [f * cb.P for f in BELOW_CB] + [ABOVE_CB * cb.P])
    try:
        Td = fluid.dew_temperature(P, zs=zs)
    except LetdownError as exc:
        found.append((f"letdown {type(exc).__name__} (dew_temperature)", str(exc)[:200]))
        return found
    except Exception as exc:  # noqa: BLE001
        found.append((f"bare {type(exc).__name__} (dew_temperature)", str(exc)[:200]))
        return found
    if not abs(Td[0] - ct.T) <= CT_TOL_K:
        found.append(("dew at cricondentherm", f"dew_temperature({ct.P:.6g} Pa) = {Td[0]:.6g} K, "
                                                f"cricondentherm {ct.T:.6g} K"))
    for k, f in enumerate(BELOW_CB, start=1):
        if not np.isfinite(Td[k]):
            found.append(("no dew below cricondenbar", f"NaN at {f:g} x cricondenbar "
                                                       f"({P[k]:.6g} Pa)"))
        elif Td[k] > ct.T + CT_TOL_K:
            found.append(("dew above cricondentherm", f"{Td[k]:.6g} K at {P[k]:.6g} Pa, "
                                                      f"cricondentherm {ct.T:.6g} K"))
    if np.isfinite(Td[-1]):
        found.append(("dew above cricondenbar", f"{Td[-1]:.6g} K at {P[-1]:.6g} Pa, cricondenbar "
                                                f"{cb.P:.6g} Pa"))
    return found


def run(per_family=PER_FAMILY, seed=SEED, models=MODELS, verbose=True):
    """(Counter of kinds, list of findings (family, model, full, zs, kind, detail))."""
    tally = Counter()
    findings = []
    fluids = {}
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)    # a numpy warning is a finding too
        for fam, model, full, z in cases(per_family, seed, models):
            try:
                got = check_one(fam, model, full, z, fluids)
            except RuntimeWarning as exc:
                got = [("bare RuntimeWarning", str(exc)[:200])]
            for kind, detail in got:
                tally[kind] += 1
                tally[(fam, kind)] += 1
                if kind not in ("ok", "not converged", "open with reason"):
                    findings.append((fam, model, full, z, kind, detail))
    return tally, findings


BAD = ("bare", "open without reason", "report without status", "extremum", "dew at", "no dew",
       "dew above")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--per-family", type=int, default=PER_FAMILY)
    ap.add_argument("--seed", type=int, default=SEED)
    ap.add_argument("--list", action="store_true", help="print every finding's composition")
    a = ap.parse_args(argv)
    t0 = time.perf_counter()
    tally, findings = run(a.per_family, a.seed)
    n = a.per_family * len(FAMILIES) * len(MODELS)
    print(f"{n} envelopes ({a.per_family} per family and model, seed {a.seed}) in "
          f"{time.perf_counter() - t0:.1f} s")
    for k in sorted((k for k in tally if isinstance(k, str)), key=str):
        print(f"  {k:45s} {tally[k]}")
    print("per family:")
    for fam in FAMILIES:
        row = {k[1]: v for k, v in tally.items() if isinstance(k, tuple) and k[0] == fam}
        print(f"  {fam:12s} " + ", ".join(f"{k} {v}" for k, v in sorted(row.items())))
    bad = [f for f in findings if f[4].startswith(BAD)]
    print(f"findings that must be 0: {len(bad)}")
    for fam, model, full, z, kind, detail in findings:
        if a.list or kind.startswith(BAD):
            comp = ", ".join(f"{n}: {x:.4g}" for n, x in zip(NAMES, z) if x > 0)
            print(f"  [{fam}, {model}, {'table' if full else 'own'}] {kind}: {detail}\n"
                  f"      {{{comp}}}")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())

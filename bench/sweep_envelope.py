"""Envelope tracing over random compositions (not a test): 8 families (lean, rich, hydrogen,
CO2-rich, sour, wet, nearly pure, and gases with components at zero), 29 each by default, seed
20261202; every composition is given over 15 components, most at exactly zero. Prints the counts
per family (ok = every trace, the critical point and both extrema found) and each case that raised
or did not converge, with the reports' statuses. Run from the repository root:
``PYTHONPATH=. python bench/sweep_envelope.py [n_per_family]``.
"""
import collections
import sys

import numpy as np

import letdown
from letdown.errors import LetdownError

NAMES = ["methane", "ethane", "propane", "isobutane", "n-butane", "isopentane", "n-pentane",
         "n-hexane", "n-heptane", "nitrogen", "carbon-dioxide", "hydrogen-sulfide", "hydrogen",
         "water", "helium"]


def family_comp(rng, fam):
    z = dict.fromkeys(NAMES, 0.0)
    if fam == "lean":
        z.update(methane=rng.uniform(0.85, 0.97), ethane=rng.uniform(0.01, 0.06),
                 propane=rng.uniform(0.002, 0.02), nitrogen=rng.uniform(0, 0.03),
                 **{"carbon-dioxide": rng.uniform(0, 0.03), "n-butane": rng.uniform(0, 0.005)})
    elif fam == "rich":
        z.update(methane=rng.uniform(0.6, 0.8), ethane=rng.uniform(0.05, 0.15),
                 propane=rng.uniform(0.03, 0.08), **{"n-butane": rng.uniform(0.01, 0.03),
                 "n-pentane": rng.uniform(0.003, 0.01), "n-hexane": rng.uniform(0.001, 0.005),
                 "n-heptane": rng.uniform(0, 0.004)})
    elif fam == "hydrogen":
        z.update(methane=rng.uniform(0.5, 0.9), hydrogen=rng.uniform(0.05, 0.3),
                 ethane=rng.uniform(0.01, 0.05), propane=rng.uniform(0.0, 0.02),
                 nitrogen=rng.uniform(0, 0.02))
    elif fam == "co2":
        z.update(**{"carbon-dioxide": rng.uniform(0.3, 0.9)}, methane=rng.uniform(0.05, 0.5),
                 ethane=rng.uniform(0, 0.05), nitrogen=rng.uniform(0, 0.05))
    elif fam == "sour":
        z.update(methane=rng.uniform(0.6, 0.85), **{"hydrogen-sulfide": rng.uniform(0.02, 0.2),
                 "carbon-dioxide": rng.uniform(0.01, 0.1)}, ethane=rng.uniform(0.01, 0.05),
                 propane=rng.uniform(0.0, 0.02))
    elif fam == "wet":
        z.update(methane=rng.uniform(0.8, 0.95), ethane=rng.uniform(0.01, 0.06),
                 propane=rng.uniform(0.0, 0.02), water=10 ** rng.uniform(-4, -1.5),
                 nitrogen=rng.uniform(0, 0.02))
    elif fam == "nearly-pure":
        main = rng.choice(["methane", "ethane", "propane", "carbon-dioxide", "nitrogen"])
        z[main] = 1.0
        other = rng.choice([n for n in ["methane", "ethane", "propane", "n-butane", "nitrogen",
                                        "carbon-dioxide"] if n != main])
        z[other] = 10 ** rng.uniform(-4, -1.5)
    elif fam == "zero":
        z.update(methane=rng.uniform(0.8, 0.95), ethane=rng.uniform(0.01, 0.06),
                 propane=rng.uniform(0.005, 0.02), **{"n-butane": rng.uniform(0.001, 0.01)})
    v = np.array([z[n] for n in NAMES])
    return v / v.sum()


FAMILIES = ["lean", "rich", "hydrogen", "co2", "sour", "wet", "nearly-pure", "zero"]


def cases(seed=20261202, n_per=29):
    rng = np.random.default_rng(seed)
    out = []
    for fam in FAMILIES:
        for _ in range(n_per):
            out.append((fam, family_comp(rng, fam)))
    return out


def run(cs, betas=(0.5,), verbose=True):
    fluid = letdown.Fluid({n: 1.0 / len(NAMES) for n in NAMES})
    stats = collections.Counter()
    bad = []
    for k, (fam, z) in enumerate(cs):
        try:
            env = fluid.envelope(zs=z, betas=betas)
            key = "ok" if env.converged else "not converged"
            stats[(fam, key)] += 1
            b = env.reports.get("bubble")
            bubble_status = b.status if b else ""
            if env.critical is None:
                stats[(fam, "no critical")] += 1
            if not env.converged:
                bad.append((k, fam, "notconv", {kk: r.status for kk, r in env.reports.items() if not r.converged}))
        except LetdownError as e:
            stats[(fam, type(e).__name__)] += 1
            bad.append((k, fam, type(e).__name__, str(e)[:150]))
        except Exception as e:
            stats[(fam, "BARE " + type(e).__name__)] += 1
            bad.append((k, fam, "BARE " + type(e).__name__, str(e)[:150]))
    return stats, bad


if __name__ == "__main__":
    n_per = int(sys.argv[1]) if len(sys.argv) > 1 else 29
    stats, bad = run(cases(n_per=n_per))
    for k in sorted(stats):
        print(k, stats[k])
    for b in bad:
        print(b)

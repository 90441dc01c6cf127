"""Commented starter files for ``letdown new station|train`` (issue 15).

Each starter is a small, working flowsheet (it passes ``letdown check`` and ``letdown solve``) with
a comment on every line a new user is likely to change. The station, the company and the gases are
fictional and invented for the demonstration; the numbers are of the order met in practice, not
design values.
"""
from __future__ import annotations

STATION = """\
# A pressure let-down station: transmission gas is preheated so that, after the regulator, the
# gas leaves warm enough. Starter written by 'letdown new station' -- Brackenmoor offtake, a
# fictional station of an invented network company; the gas below is invented.
#
# Check it:  letdown check FILE      Solve it:  letdown solve FILE   (add --html r.html for a record)
# Quantities are text with a unit: degC degF K | barg bar psig kPa MPa | Sm3/h Sm3/d MMscfd
# kmol/h kg/h t/h | kW MW hp MMBtu/h.  Gauge pressures are taken from 'atmosphere' (101.325 kPa).
title: Brackenmoor offtake let-down (fictional starter)
gas:
  # peng-robinson (default), peng-robinson-1978, soave-redlich-kwong or gerg-2008
  model: peng-robinson
  # mole fractions, summing to 1 (invented lean transmission gas)
  composition: {methane: 0.92, ethane: 0.04, propane: 0.01, nitrogen: 0.02, carbon-dioxide: 0.01}
  # water in the gas; leave it out to take every feed as saturated (the cautious choice)
  water: 60 mg/Sm3
feeds:
  # the gas arriving at the station
  inlet: {T: 8 degC, P: 60 barg, flow: 40000 Sm3/h}
equipment:
  # a water-bath heater (T_out is a first guess: the goal below moves it)
  heater:    {kind: heater,   from: inlet,  to: heated, T_out: 30 degC, dP: 0.3 bar, efficiency: 0.75}
  # the pressure regulator, a throttle to the distribution pressure
  regulator: {kind: throttle, from: heated, to: outlet, P_out: 7 barg}
goals:
  # hold the outlet at 5 degC by moving the heater outlet temperature within the bracket
  - {hold: outlet.T, at: 5 degC, by: heater.T_out, within: [0 degC, 90 degC]}
limits:
  min_T: 0 degC          # the coldest metal temperature allowed anywhere (your pipe's rating)
  hydrate_margin: 3 K    # how far above the hydrate temperature every stream should stay
"""

TRAIN = """\
# A gas chilling train (dew-point control): the gas is cooled against the cold product gas,
# expanded through a Joule-Thomson valve and separated cold. Starter written by 'letdown new
# train' -- Wrenfold plant, a fictional plant; the gas below is invented.
#
# Check it:  letdown check FILE      Solve it:  letdown solve FILE   (add --html r.html for a record)
# The cold gas going back through the exchanger closes a loop; the solver tears and iterates it.
title: Wrenfold chilling train (fictional starter)
gas:
  # peng-robinson (default), peng-robinson-1978 or soave-redlich-kwong (two phases: not gerg-2008)
  model: peng-robinson
  # mole fractions, summing to 1 (invented rich gas)
  composition: {nitrogen: 0.01, carbon-dioxide: 0.015, methane: 0.82, ethane: 0.08,
                propane: 0.04, isobutane: 0.01, n-butane: 0.012, n-pentane: 0.008,
                n-hexane: 0.005}
feeds:
  raw-gas: {T: 30 degC, P: 70 barg, flow: 20 MMscfd}
equipment:
  # split off free liquid and water first (outlets: vapour, liquid, water)
  inlet-sep: {kind: separator, from: raw-gas, to: {vapour: sep-gas, liquid: sep-liquid, water: sep-water}}
  # MEG against hydrates in the cold section, sized by the hydrate model for 20 K of depression
  meg:       {kind: inject, from: sep-gas, to: dosed, inhibitor: MEG, depression: 20 K,
              sized_by: hydrate-model}
  # the gas/gas exchanger: the warm gas (hot side) gives its heat to the cold product (cold side)
  gas-gas:
    kind: exchanger
    hot:  {from: dosed, to: chilled}
    cold: {from: cold-gas, to: sales-gas}
    cold_T_out: 22 degC  # or 'min_approach: 5 K'
    hot_dP: 0.5 bar
    cold_dP: 0.5 bar
  # the Joule-Thomson valve: the drop in pressure does the chilling
  jt:        {kind: throttle,  from: chilled, to: cold-mix, P_out: 45 barg}
  # the cold separator takes out the condensed liquid (NGL) and the water with its MEG
  cold-sep:  {kind: separator, from: cold-mix, to: {vapour: cold-gas, liquid: ngl, water: cold-water}}
limits:
  min_T: -29 degC        # the lowest temperature the cold section's steel is rated for
solver:
  loop_tolerance: 1.0e-9
  loop_max_iterations: 60
"""

#: Starter text by kind.
STARTERS = {"station": STATION, "train": TRAIN}

"""Peng-Robinson and SRK (interaction parameters off) against CoolProp's cubic backends.

Reference (test-only): CoolProp 8.0.0, ``AbstractState("PR" | "SRK", "Methane&Ethane&...")``. Its
cubic backends have kij = 0 unless set, their own critical constants (EOS_DATA §1, "CoolProp 8.0.0
cubic backends": identical to ours for CH4, N2, CO2, C3, nC4, iC5; ethane omega 0.099 vs our 0.0995,
isobutane omega 0.183532 vs 0.184, n-hexane Pc 30.34 vs 30.441 bar) and their own ideal-gas heat
capacity (the ideal-gas part of the reference Helmholtz equations, e.g. Setzmann & Wagner 1991 for
methane, Span & Wagner 1996 for CO2), where letdown uses Perry's Table 2-156 DIPPR-107 fits.

Outlet temperatures of CoolProp are found here by bracketed root finding on its own h(T, P) with the
gas phase imposed (the state is first checked to be single-phase vapour by letdown) -- no CoolProp
flash routine is involved, and phase imposition is only used where the phase is certain (EOS_DATA
§7 #11: forcing the gas phase on liquid CO2 gives garbage).

Agreement seen when this file was written (letdown 0.1.0, CoolProp 8.0.0):
* Z: within 1.3e-5 relative everywhere (requirement: 0.2 %).
* Isenthalpic outlet temperature, 70 bar/10 degC -> 7 bar: methane -0.033 K, nitrogen +0.000 K,
  natural gases -0.036 ... -0.075 K (PR and SRK; Ekofisk, 8.5 % ethane, is the largest). These are
  the ideal-gas cp: our Perry cp0 of methane is 0.09 % below CoolProp's at 283 K (35.152 vs 35.184
  J/(mol K)), ethane's 0.2-0.5 % below between 250 and 290 K; a 0.1 % lower cp0 over a 36 K
  let-down moves the outlet by about 0.04 K.
* Pure CO2, 330 K/50 bar -> 10 bar: +0.167 K (PR), +0.165 K (SRK); 350 K/60 bar: +0.27 K. The Perry
  DIPPR-107 fit of CO2 (valid 50-5000 K) is 0.65 % above the Span-Wagner ideal-gas cp at 330 K
  (38.805 vs 38.555 J/(mol K)), 0.8 % above at 400 K and 0.6 % below at 250 K. This is a property of
  the cited cp data, not of the equation of state: with CoolProp's residual enthalpy plus letdown's
  ideal-gas enthalpy, the outlet temperatures agree to 0.001 K (test below).
* Residual part alone (CoolProp residual enthalpy + letdown ideal-gas enthalpy): within 0.0027 K for
  every gas and both models (Ekofisk SRK the largest); the rest is the rounded Omega_a, Omega_b
  (0.45724, 0.07780) and the ethane/isobutane/hexane constants above.
"""
import CoolProp
import numpy as np
import pytest
from CoolProp import AbstractState
from scipy.optimize import brentq

from tests.cases import (AMARILLO, BAR, EKOFISK, GULF_COAST, HIGH_CO2, HIGH_N2, LETDOWN_70_TO_7,
                         Gas)

#: letdown name -> CoolProp fluid name
COOLPROP_NAMES = {
    "methane": "Methane", "ethane": "Ethane", "propane": "Propane", "isobutane": "IsoButane",
    "n-butane": "n-Butane", "isopentane": "Isopentane", "n-pentane": "n-Pentane",
    "n-hexane": "n-Hexane", "nitrogen": "Nitrogen", "carbon-dioxide": "CarbonDioxide",
    "hydrogen": "Hydrogen",
}
BACKENDS = {"peng-robinson": "PR", "soave-redlich-kwong": "SRK"}

METHANE = Gas("methane", {"methane": 1.0}, "pure component")
NITROGEN = Gas("nitrogen", {"nitrogen": 1.0}, "pure component")
CO2 = Gas("carbon-dioxide", {"carbon-dioxide": 1.0}, "pure component")
NATURAL_GASES = (GULF_COAST, AMARILLO, EKOFISK, HIGH_N2, HIGH_CO2)

#: Tolerances of issue 2 ("What it must show").
#: Z: the issue asked for 0.2 %, but the same equation with the same constants agrees far closer
#: (max 1.33e-5 relative, PR Ekofisk, re-measured 2026-12-02; the rest is the rounded Omega_a,
#: Omega_b and the ethane/isobutane/hexane constants listed above). 3e-5 guards that agreement: a
#: wrong mixing rule, a kij of 0.01 left on or a volume shift applied would each move Z by 1e-4 or
#: more.
Z_REL_TOL = 3e-5
T_OUT_TOL = 0.1           # [K] isenthalpic outlet temperature
#: Residual part only (same ideal gas on both sides): what is left is the rounded Omega_a/Omega_b
#: and the few differing constants, 0.0027 K at most when written; 0.005 K leaves room for neither a
#: wrong departure function nor a wrong root (either shows up as tenths of a kelvin).
T_OUT_RESIDUAL_TOL = 0.005

#: (T [K], P [Pa]) gas states for Z; CO2 stays below its vapour pressure or above Tc.
Z_STATES = {"default": ((283.15, 70 * BAR), (250.0, 40 * BAR), (320.0, 100 * BAR),
                        (300.0, 10 * BAR)),
            "carbon-dioxide": ((330.0, 50 * BAR), (300.0, 30 * BAR), (283.15, 20 * BAR),
                               (400.0, 100 * BAR))}
#: (T_in [K], P_in [Pa], P_out [Pa]) let-downs; CO2 from a gas state (at 10 degC, 70 bar it is
#: liquid).
LETDOWNS = {"default": (LETDOWN_70_TO_7,),
            "carbon-dioxide": ((330.0, 50 * BAR, 10 * BAR),)}


class CoolPropGas:
    """CoolProp state for one composition, gas phase imposed."""

    def __init__(self, backend, composition):
        names = list(composition)
        self.zs = np.array([composition[n] for n in names])
        self.AS = AbstractState(backend, "&".join(COOLPROP_NAMES[n] for n in names))
        if len(names) > 1:
            self.AS.set_mole_fractions(list(self.zs))
        self.AS.specify_phase(CoolProp.iphase_gas)

    def update(self, T, P):
        self.AS.update(CoolProp.PT_INPUTS, P, T)
        return self.AS

    def Z(self, T, P):
        return self.update(T, P).compressibility_factor()

    def h(self, T, P):
        return self.update(T, P).hmolar()

    def h_residual(self, T, P):
        return self.update(T, P).hmolar_residual()


def outlet_T(h_of_TP, T_in, P_in, P_out):
    """Isenthalpic outlet temperature [K] by bracketed root finding on h(T, P_out)."""
    h_in = h_of_TP(T_in, P_in)
    return brentq(lambda T: h_of_TP(T, P_out) - h_in, T_in - 90.0, T_in + 5.0, xtol=1e-9)


def _cases(gases):
    return [pytest.param(model, gas, id=f"{BACKENDS[model]}-{gas.name}")
            for model in BACKENDS for gas in gases]


def _states(gas, table):
    return table.get(gas.name, table["default"])


def _assert_single_vapour(state):
    # guard for phase imposition in CoolProp: only compare states letdown finds single-phase gas
    # (n_phases 1 and a gas-like Z)
    assert state.n_phases == 1 and state.Z > 0.5, state


@pytest.mark.parametrize("model, gas", _cases((METHANE, NITROGEN, CO2) + NATURAL_GASES))
def test_Z_agrees_with_coolprop_cubic(model, gas):
    fluid = gas.fluid(model, kij="zero")
    ref = CoolPropGas(BACKENDS[model], gas.composition)
    for T, P in _states(gas, Z_STATES):
        st = fluid.flash(T=T, P=P)
        _assert_single_vapour(st)
        assert st.Z == pytest.approx(ref.Z(T, P), rel=Z_REL_TOL), (T, P)


@pytest.mark.parametrize("model, gas", _cases((METHANE, NITROGEN) + NATURAL_GASES))
def test_letdown_outlet_T_agrees_with_coolprop_cubic(model, gas):
    fluid = gas.fluid(model, kij="zero")
    ref = CoolPropGas(BACKENDS[model], gas.composition)
    for T_in, P_in, P_out in _states(gas, LETDOWNS):
        inlet = fluid.flash(T=T_in, P=P_in)
        out = fluid.flash(P=P_out, h=inlet.h)
        _assert_single_vapour(inlet)
        _assert_single_vapour(out)
        assert out.T == pytest.approx(outlet_T(ref.h, T_in, P_in, P_out), abs=T_OUT_TOL)


@pytest.mark.parametrize("model, gas", _cases((METHANE, NITROGEN, CO2) + NATURAL_GASES))
def test_letdown_outlet_T_residual_part_agrees_with_coolprop_cubic(model, gas):
    """Same ideal gas on both sides (letdown's), CoolProp's residual enthalpy: isolates the
    equation of state from the cp data."""
    fluid = gas.fluid(model, kij="zero")
    ref = CoolPropGas(BACKENDS[model], gas.composition)
    comps = fluid.engine.comps

    def h_hybrid(T, P):
        return ref.h_residual(T, P) + float(fluid.zs @ comps.h0(np.array(T)))

    for T_in, P_in, P_out in _states(gas, LETDOWNS):
        out = fluid.flash(P=P_out, h=fluid.flash(T=T_in, P=P_in).h)
        _assert_single_vapour(out)
        assert out.T == pytest.approx(outlet_T(h_hybrid, T_in, P_in, P_out),
                                      abs=T_OUT_RESIDUAL_TOL)


@pytest.mark.parametrize("model", BACKENDS)
def test_co2_letdown_difference_is_the_ideal_gas_cp_of_the_cited_data(model):
    """Pure CO2, 330 K/50 bar -> 10 bar: letdown is 0.17 K warmer than CoolProp end to end. The
    whole difference is the ideal-gas cp (Perry Table 2-156 DIPPR-107 for CO2 vs the Span & Wagner
    1996 ideal part): swapping in letdown's ideal-gas enthalpy on the CoolProp side closes it to
    within 0.005 K. If the cp data of CO2 change, this test says so (and the 0.1 K requirement can
    then be checked end to end)."""
    fluid = CO2.fluid(model, kij="zero")
    ref = CoolPropGas(BACKENDS[model], CO2.composition)
    comps = fluid.engine.comps
    T_in, P_in, P_out = LETDOWNS["carbon-dioxide"][0]
    out = fluid.flash(P=P_out, h=fluid.flash(T=T_in, P=P_in).h)
    T_full = outlet_T(ref.h, T_in, P_in, P_out)
    T_hybrid = outlet_T(lambda T, P: ref.h_residual(T, P) + float(comps.h0(np.array(T))[0]),
                        T_in, P_in, P_out)
    cp_effect = T_hybrid - T_full            # what the cp data alone move the outlet by [K]
    # the cp0 ratio that explains it, at the mean let-down temperature
    T_mid = 0.5 * (T_in + out.T)
    ref.update(T_mid, 1e3)
    cp0_ratio = float(comps.cp0(np.array(T_mid))[0]) / ref.AS.cp0molar()
    assert cp0_ratio > 1.0                   # Perry's CO2 cp0 is the higher one here ...
    assert cp_effect > 0.0                   # ... so letdown's gas cools less
    assert out.T - T_full == pytest.approx(cp_effect, abs=T_OUT_RESIDUAL_TOL)

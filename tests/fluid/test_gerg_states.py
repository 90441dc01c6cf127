"""GERG-2008 states at the edges (issue 11): the density root, pure-fluid saturation and two
phases, mixture two-phase states refused, batch equal to scalar, the propane loop on GERG-2008.

References (test-only):
* CoolProp 8.0.0 ``AbstractState("HEOS", ...)``: for pure fluids the reference equations
  (Lemmon et al. 2009 propane, Setzmann & Wagner 1991 methane, Buecker & Wagner 2006 ethane and
  butanes, Span & Wagner 1996 CO2), for mixtures the GERG-2008 mixing functions on those pure-fluid
  equations. GERG-2008's own pure-fluid equations are not the same equations, so the comparison
  is at 0.1 % in liquid density (the liquid-density uncertainty Kunz & Wagner 2012 give for the
  GERG-2008 pure-fluid equations is 0.1-0.5 %, from memory); measured when written: at most
  0.047 % over the 12 states below.
* pyaga8 0.1.18 (the NIST AGA8 code for GERG-2008) evaluated directly at the density letdown
  reports: the pressure there must be the requested one (the density is a root of the model's
  own equation, not a neighbour).
"""
from pathlib import Path

import numpy as np
import pyaga8
import pytest

import CoolProp
from CoolProp import AbstractState

import letdown
from letdown.errors import ModelError
from letdown.fluid.eos.gerg import GERG_NAMES
from letdown.sheet.loader import read_spec
from letdown.sheet.solve import solve
from tests.cases import BAR

R_GERG = 8.314472   # gas constant of GERG-2008 (Kunz & Wagner 2012) [J/(mol K)]

EXAMPLES = Path(__file__).resolve().parents[2] / "flowsheets"

CP_NAMES = {"methane": "Methane", "ethane": "Ethane", "propane": "Propane",
            "n-butane": "n-Butane", "isobutane": "IsoButane", "nitrogen": "Nitrogen",
            "carbon-dioxide": "CarbonDioxide"}

#: (composition, T [K], P [Pa]): liquids (compressed or subcooled; pure fluids below their
#: saturation temperature at P per CoolProp, mixtures below their bubble point).
LIQUID_STATES = [
    ({"propane": 1.0}, 313.15, 18 * BAR),      # issue 11: came out as a 47 kg/m3 vapour
    ({"propane": 1.0}, 313.15, 16 * BAR),      # the propane loop's condenser outlet
    ({"propane": 1.0}, 250.0, 10 * BAR),
    ({"n-butane": 1.0}, 300.0, 5 * BAR),
    ({"isobutane": 1.0}, 280.0, 10 * BAR),
    ({"ethane": 1.0}, 250.0, 50 * BAR),
    ({"methane": 1.0}, 150.0, 30 * BAR),
    ({"methane": 1.0}, 120.0, 10 * BAR),
    ({"carbon-dioxide": 1.0}, 260.0, 50 * BAR),
    ({"methane": 0.9, "ethane": 0.05, "propane": 0.03, "nitrogen": 0.02}, 115.0, 10 * BAR),
    ({"methane": 0.6, "ethane": 0.25, "propane": 0.15}, 200.0, 60 * BAR),
    ({"propane": 0.7, "n-butane": 0.3}, 300.0, 20 * BAR),
    ({"methane": 0.85, "ethane": 0.08, "propane": 0.04, "n-butane": 0.02, "nitrogen": 0.01},
     160.0, 50 * BAR),
]
LIQ_RHO_REL = 1e-3


def coolprop(comp):
    names = list(comp)
    AS = AbstractState("HEOS", "&".join(CP_NAMES[n] for n in names))
    AS.set_mole_fractions([comp[n] for n in names])
    return AS


def coolprop_liquid_density(comp, T, P):
    AS = coolprop(comp)
    AS.specify_phase(CoolProp.iphase_liquid)
    AS.update(CoolProp.PT_INPUTS, P, T)
    return AS.rhomass()


def gerg_pressure_at(comp, T, rho_molar):
    """Pressure [Pa] of GERG-2008 at (T, molar density [mol/m3]) from the NIST code directly."""
    g = pyaga8.Gerg2008()
    c = pyaga8.Composition()
    for n, x in comp.items():
        setattr(c, GERG_NAMES[n], x)
    g.set_composition(c)
    g.temperature = T
    g.d = rho_molar / 1000.0
    g.calc_properties()
    return g.z * g.d * R_GERG * T * 1000.0


@pytest.mark.parametrize("comp, T, P", LIQUID_STATES,
                         ids=[f"{'+'.join(c)}-{T:.0f}K-{P / BAR:.0f}bar"
                              for c, T, P in LIQUID_STATES])
def test_liquid_density_against_coolprop(comp, T, P):
    st = letdown.Fluid(comp, model="gerg-2008").flash(T=T, P=P)
    assert st.vapour_fraction == 0.0
    assert st.density == pytest.approx(coolprop_liquid_density(comp, T, P), rel=LIQ_RHO_REL)
    # the density is a root of GERG-2008 itself at the requested pressure
    assert gerg_pressure_at(comp, T, st.density / st.molar_mass) == pytest.approx(P, rel=1e-9)


def test_liquid_root_has_the_lower_gibbs_energy():
    """Both roots exist at propane 40 degC, 18 bar (saturation 13.7 bar): the state is the root
    of lower Gibbs energy, the liquid (issue 11: 47 kg/m3 vapour before)."""
    gas = letdown.Fluid({"propane": 1.0}, model="gerg-2008")
    eng = gas.engine
    eng._set(gas.zs)
    a, b = eng._roots(313.15, 18 * BAR)
    assert a is not None and b is not None and b.d > 5 * a.d
    assert b.g < a.g
    assert gas.flash(T=313.15, P=18 * BAR).density == pytest.approx(b.d * 1000 * gas.molar_mass,
                                                                    rel=1e-12)


# --------------------------------------------------------------------------- pure-fluid saturation
SAT_CASES = [("propane", 1.7 * BAR), ("propane", 16 * BAR), ("methane", 20 * BAR),
             ("ethane", 10 * BAR), ("carbon-dioxide", 30 * BAR), ("n-butane", 3 * BAR)]


@pytest.mark.parametrize("name, P", SAT_CASES, ids=[f"{n}-{P / BAR:g}bar" for n, P in SAT_CASES])
def test_pure_saturation_temperature_against_reference_equation(name, P):
    """Saturation temperature from GERG-2008 itself vs the reference equation (CoolProp): within
    0.1 K (the pure-fluid equations differ; measured when written: at most 0.03 K)."""
    T = letdown.Fluid({name: 1.0}, model="gerg-2008").dew_temperature(P=P)
    AS = coolprop({name: 1.0})
    AS.update(CoolProp.PQ_INPUTS, P, 1.0)
    assert T == pytest.approx(AS.T(), abs=0.1)


@pytest.mark.parametrize("quality", [0.0, 0.05, 0.3, 0.7, 1.0])
def test_pure_ph_inside_the_dome_sits_at_saturation(quality):
    """Propane at 1.7 bar: a P-h flash between saturated liquid and vapour returns the saturated
    state with the vapour fraction (lever rule), meeting the enthalpy; before, it returned a state
    3 kJ/mol off the requested enthalpy, marked converged."""
    gas = letdown.Fluid({"propane": 1.0}, model="gerg-2008")
    P = 1.7 * BAR
    Ts = gas.dew_temperature(P=P)
    hl = gas.flash(T=Ts - 1e-6, P=P).h
    hv = gas.flash(T=Ts + 1e-6, P=P).h
    h = hl + quality * (hv - hl)
    st = gas.flash(P=P, h=h)
    assert st.h == pytest.approx(h, abs=1e-6 * abs(hv - hl) + 1e-6)
    # (the end points were taken 1e-6 K off saturation, so they may land that far off Ts)
    assert st.T == pytest.approx(Ts, abs=2e-6)
    assert st.vapour_fraction == pytest.approx(quality, abs=1e-6)
    # vapour fraction on the mass basis equals the molar one for a pure fluid; against CoolProp
    AS = coolprop({"propane": 1.0})
    AS.update(CoolProp.PQ_INPUTS, P, 0.0)
    hl_cp = AS.hmolar()
    AS.update(CoolProp.PQ_INPUTS, P, 1.0)
    latent_cp = AS.hmolar() - hl_cp
    assert hv - hl == pytest.approx(latent_cp, rel=5e-3)


def test_pure_ps_inside_the_dome_and_round_trip():
    gas = letdown.Fluid({"propane": 1.0}, model="gerg-2008")
    P = 5 * BAR
    Ts = gas.dew_temperature(P=P)
    sl = gas.flash(T=Ts - 1e-6, P=P).s
    sv = gas.flash(T=Ts + 1e-6, P=P).s
    st = gas.flash(P=P, s=0.4 * sl + 0.6 * sv)
    assert st.vapour_fraction == pytest.approx(0.6, abs=1e-6)
    assert st.T == pytest.approx(Ts, abs=1e-6)
    for T in (200.0, Ts - 5.0, Ts + 5.0, 350.0):
        one = gas.flash(T=T, P=P)
        assert gas.flash(P=P, h=one.h).T == pytest.approx(T, abs=1e-6)
        assert gas.flash(P=P, s=one.s).T == pytest.approx(T, abs=1e-6)


def test_batch_equals_scalar():
    gas = letdown.Fluid({"propane": 1.0}, model="gerg-2008")
    P = np.array([1.7, 16.0, 18.0, 5.0, 50.0]) * BAR
    T = np.array([248.0, 313.15, 313.15, 260.0, 380.0])
    batch = gas.flash(T=T, P=P)
    hs = batch.h + np.array([0.0, 0.0, 0.0, 5000.0, 0.0])      # one of them inside the dome
    bph = gas.flash(P=P, h=hs)
    for k in range(T.size):
        one = gas.flash(T=T[k], P=P[k])
        two = gas.flash(P=P[k], h=hs[k])
        for a, b in ((batch, one), (bph, two)):
            for prop in ("T", "h", "s", "density", "Z", "vapour_fraction"):
                assert getattr(a, prop)[k] == pytest.approx(getattr(b, prop), rel=1e-10)


def test_mixture_ph_never_misses_its_enthalpy():
    """A lean-gas mixture P-h into the two-phase region is refused, never answered with a state
    whose enthalpy is not the requested one."""
    gas = letdown.Fluid({"methane": 0.85, "ethane": 0.08, "propane": 0.04, "n-butane": 0.02,
                         "nitrogen": 0.01}, model="gerg-2008")
    liquid = gas.flash(T=160.0, P=50 * BAR)
    vapour = gas.flash(T=300.0, P=20 * BAR)
    Ps = np.full(7, 20 * BAR)
    hs = liquid.h + np.linspace(0.0, 1.0, 7) * (vapour.h - liquid.h)
    st = gas.flash(P=Ps, h=hs)
    ok = st.converged
    assert ok[-1] and not ok.all()
    assert np.all(np.abs(st.h[ok] - hs[ok]) < 1e-3)
    with pytest.raises(ModelError, match="use a cubic model"):
        gas.flash(P=20 * BAR, h=hs[3])


def test_propane_loop_on_gerg_is_right():
    """flowsheets/propane-chiller.yaml on GERG-2008 (issue 11: condenser outlet 38 kg/m3, valve
    outlet +9.8 degC, chiller duty of the wrong sign). The valve outlet is saturated propane at
    1.7 bar (CoolProp reference equation: -29.6 degC) with the vapour fraction the lever rule gives,
    the condensed liquid is dense and the chiller takes heat in."""
    fs = read_spec(EXAMPLES / "propane-chiller.yaml")
    r = solve(fs, model="gerg-2008")
    AS = coolprop({"propane": 1.0})
    AS.update(CoolProp.PQ_INPUTS, 1.7 * BAR, 0.5)
    flashed, liquid = r.streams["flashed"], r.streams["liquid"]
    assert flashed.T == pytest.approx(AS.T(), abs=0.1)
    assert 0.1 < flashed.vapour_fraction < 0.6
    assert liquid.density == pytest.approx(coolprop_liquid_density({"propane": 1.0}, 313.15,
                                                                      16 * BAR), rel=1e-3)
    assert r.equipment["chiller"]["duty_W"] > 0
    pr = solve(fs)
    assert r.equipment["chiller"]["duty_W"] == pytest.approx(pr.equipment["chiller"]["duty_W"],
                                                             rel=0.1)


PSAT_CASES = [("propane", "Propane", 300.0), ("methane", "Methane", 150.0),
              ("carbon-dioxide", "CO2", 280.0), ("ethane", "Ethane", 250.0)]


@pytest.mark.parametrize("name, cp_name, T", PSAT_CASES, ids=[c[0] for c in PSAT_CASES])
def test_pure_saturation_pressure_against_reference_equation(name, cp_name, T):
    """Vapour pressure from GERG-2008 itself vs the reference equation (CoolProp) within 0.2 %
    (measured when written: at most 0.08 %), and consistent with the saturation temperature."""
    from CoolProp.CoolProp import PropsSI
    gas = letdown.Fluid({name: 1.0}, model="gerg-2008")
    P = gas.dew_pressure(T=T)
    assert P == pytest.approx(PropsSI("P", "T", T, "Q", 1.0, cp_name), rel=2e-3)
    assert gas.bubble_temperature(P=P) == pytest.approx(T, abs=1e-6)


def test_cold_liquid_ps_round_trip():
    """Regression (found by bench/fuzz_flash.py): an invented lean gas as a dense liquid at
    160.58 K, 57.2 bar. The P-s solve from 300 K stepped below the liquid branch to where no
    density root is found and then kept stepping down to 50 K instead of back up."""
    comp = {"methane": 0.9219, "ethane": 0.03006, "propane": 0.009154, "n-butane": 0.0002693,
            "isobutane": 0.001847, "n-pentane": 0.0009816, "nitrogen": 0.01862,
            "carbon-dioxide": 0.01715}
    gas = letdown.Fluid(comp, model="gerg-2008", normalise=True)
    st = gas.flash(T=160.5823, P=5.71977e6)
    assert st.vapour_fraction == 0.0
    assert gas.flash(P=5.71977e6, s=st.s).T == pytest.approx(160.5823, abs=1e-6)
    assert gas.flash(P=5.71977e6, h=st.h).T == pytest.approx(160.5823, abs=1e-6)

"""Pipe block: pressure drop, heat to ground and friction against published equations and the
fluids package; balances; refusals."""
import numpy as np
import pytest

from tests.blocks import assert_balanced, feed, fluid
from letdown.equipment import pipe
from letdown.errors import InputError

import letdown

R = 8.314462618


def _isothermal_P2(P1, T, G, D, L, f, M, Z_of_P):
    """Outlet pressure of a long isothermal gas pipe (Menon, Gas Pipeline Hydraulics, 2005,
    ch. 2, from memory: the general flow equation in its Darcy form with the kinetic term,
    ``P1^2 - P2^2 = G^2 Z R T / M (f L / D + 2 ln(P1 / P2))``, Z at Menon's average pressure
    ``2/3 (P1 + P2 - P1 P2 / (P1 + P2))``)."""
    P2 = 0.8 * P1
    for _ in range(200):
        Pavg = 2.0 / 3.0 * (P1 + P2 - P1 * P2 / (P1 + P2))
        Z = Z_of_P(Pavg)
        new = np.sqrt(P1 ** 2 - G ** 2 * Z * R * T / M * (f * L / D + 2.0 * np.log(P1 / P2)))
        if abs(new - P2) < 1e-6:
            break
        P2 = new
    return new


@pytest.mark.parametrize("roughness", [4.5e-5, 0.0])
def test_long_isothermal_pipe_against_the_general_flow_equation(roughness):
    # a 100 km, 0.5 m line held at its inlet temperature by a large U; reference: the isothermal
    # general flow equation (Menon 2005), friction factor from the fluids package's Colebrook at
    # the mean Reynolds number; tolerance 1 % on the pressure drop (the task's figure)
    from fluids.friction import friction_factor as fluids_f
    gas = fluid("lean")
    T, P1, F, D, L = 288.15, 70e5, 3000.0, 0.5, 100e3
    inlet = feed(gas, T, P1, F)
    out = pipe.run(gas, "line", {"in": inlet},
                   {"length": L, "diameter": D, "roughness": roughness, "steps": 50,
                    "surroundings": {"kind": "U", "U": 1e4, "T": T}})
    assert_balanced({"in": inlet}, out)
    M = float(inlet.molar_mass[0])
    G = F * M / (np.pi * D ** 2 / 4)
    P2_model = P1 - float(out.dP[0])
    mid = gas.flash(T=T, P=0.5 * (P1 + P2_model))
    Re = G * D / mid.viscosity
    f = fluids_f(Re=Re, eD=roughness / D, Method="Colebrook")
    P2 = _isothermal_P2(P1, T, G, D, L, f, M, lambda P: gas.flash(T=T, P=P).Z)
    assert float(out.dP[0]) == pytest.approx(P1 - P2, rel=0.01)
    assert 5e5 < P1 - P2 < 40e5          # a real test: a sizeable drop
    # held isothermal to within the JT cooling of one step
    assert np.max(np.abs(out.details["profile_T_K"][0] - T)) < 0.5


def test_buried_outlet_temperature_against_the_exponential_approach():
    # nitrogen at 2 bar: cp nearly constant (0.1 % over 280-320 K) and Joule-Thomson cooling of
    # the small pressure drop below 0.01 K. Reference: T_out = T_g + (T_in - T_g) exp(-U_L L /
    # (m cp)), U_L = 2 pi k / acosh(2 z / D) (Incropera & DeWitt, Table 4.1 case 1, from memory);
    # tolerance 0.1 K (the task's figure)
    gas = letdown.Fluid({"nitrogen": 1.0})
    T_in, T_g, P, F, D, L = 320.0, 280.0, 2e5, 100.0, 0.6, 1000.0
    z, k = 1.5, 1.5
    inlet = feed(gas, T_in, P, F)
    out = pipe.run(gas, "line", {"in": inlet},
                   {"length": L, "diameter": D,
                    "surroundings": {"kind": "buried", "depth": z, "soil_conductivity": k,
                                     "ground_T": T_g}})
    assert_balanced({"in": inlet}, out)
    U_L = 2 * np.pi * k / np.arccosh(2 * z / D)
    cp = gas.flash(T=0.5 * (T_in + float(out.outlets["out"].T[0])), P=P).cp
    T_ref = T_g + (T_in - T_g) * np.exp(-U_L * L / (F * cp))
    assert 5.0 < T_in - T_ref < 35.0     # a real approach, neither none nor complete
    assert float(out.outlets["out"].T[0]) == pytest.approx(T_ref, abs=0.1)
    assert float(out.duty[0]) == pytest.approx(F * cp * (T_ref - T_in), rel=0.01)
    np.testing.assert_allclose(out.details["UA_W_K"], U_L * L, rtol=1e-12)


@pytest.mark.filterwarnings("ignore:overflow encountered:RuntimeWarning")  # inside fluids, large Re
def test_friction_factor_against_fluids_colebrook():
    # fluids 1.3.1 friction_factor(Method="Colebrook"), the exact (Lambert W) solution;
    # 300 random (Re, eD) in the turbulent range; tolerance 1e-9 relative
    from fluids.friction import friction_factor as fluids_f
    rng = np.random.default_rng(13)
    Re = 10 ** rng.uniform(np.log10(2500), 8, 300)
    eD = np.where(rng.random(300) < 0.1, 0.0, 10 ** rng.uniform(-7, -1.3, 300))
    ours = pipe.friction_factor(Re, eD)
    ref = np.array([fluids_f(Re=r, eD=e, Method="Colebrook") for r, e in zip(Re, eD)])
    np.testing.assert_allclose(ours, ref, rtol=1e-9)


def test_friction_factor_laminar_and_no_flow():
    # Hagen-Poiseuille, f = 64 / Re
    np.testing.assert_allclose(pipe.friction_factor([100.0, 1999.0], [1e-3, 0.0]),
                               [0.64, 64 / 1999.0], rtol=1e-15)
    assert pipe.friction_factor([0.0], [1e-4])[0] == 0.0


def test_static_head_of_a_rising_pipe():
    # a slow flow up 200 m in a wide pipe: the drop is the hydrostatic head rho g dz (friction
    # about 0.01 % of it); reference rho from the same equation of state, tolerance 0.5 %
    gas = fluid("lean")
    inlet = feed(gas, 288.15, 60e5, 1.0)
    out = pipe.run(gas, "riser", {"in": inlet}, {"length": 400.0, "diameter": 0.5,
                                                "elevation_change": 200.0})
    assert_balanced({"in": inlet}, out)
    # the gas lifted 200 m cools (its enthalpy pays for the lift) and expands: the density at
    # the mean of the inlet and outlet pressure and temperature
    P2, T2 = 60e5 - float(out.dP[0]), float(out.outlets["out"].T[0])
    rho = gas.flash(T=0.5 * (288.15 + T2), P=0.5 * (60e5 + P2)).density
    assert float(out.dP[0]) == pytest.approx(rho * pipe.G_STANDARD * 200.0, rel=0.001)


def test_batch_of_cases_matches_one_by_one_and_balances():
    gas = fluid("lean")
    T = np.array([278.15, 288.15, 300.0, 288.15])
    P = np.array([70e5, 50e5, 30e5, 40e5])
    F = np.array([800.0, 400.0, 200.0, 0.0])
    inlet = feed(gas, T, P, F)
    params = {"length": 5000.0, "diameter": 0.3, "elevation_change": -20.0,
              "surroundings": {"kind": "air", "U": 5.0, "T": 263.15}}
    out = pipe.run(gas, "line", {"in": inlet}, params)
    assert_balanced({"in": inlet}, out)
    for i in range(3):
        one = pipe.run(gas, "line", {"in": feed(gas, T[i], P[i], F[i])}, params)
        assert float(one.dP[0]) == pytest.approx(float(out.dP[i]), rel=1e-9, abs=1e-6)
        assert float(one.outlets["out"].T[0]) == pytest.approx(float(out.outlets["out"].T[i]),
                                                               abs=1e-9)
    # cold air cools the gas and the heat is lost (negative duty); an empty stream takes none
    assert np.all(out.duty[:3] < 0) and out.duty[3] == 0.0
    assert out.details["profile_T_K"].shape == (4, pipe.STEPS + 1)


def test_steps_converge():
    # the trapezoid march: halving the step changes the drop by far less than the 1 % tolerance
    gas = fluid("lean")
    inlet = feed(gas, 288.15, 70e5, 3000.0)
    base = {"length": 100e3, "diameter": 0.5,
            "surroundings": {"kind": "buried", "depth": 1.5, "soil_conductivity": 1.2,
                             "ground_T": 281.15}}
    a = pipe.run(gas, "l", {"in": inlet}, {**base, "steps": 20})
    b = pipe.run(gas, "l", {"in": inlet}, {**base, "steps": 200})
    assert float(a.dP[0]) == pytest.approx(float(b.dP[0]), rel=2e-4)
    assert float(a.outlets["out"].T[0]) == pytest.approx(float(b.outlets["out"].T[0]), abs=0.02)


def test_velocity_limit_flag():
    gas = fluid("lean")
    inlet = feed(gas, 288.15, [20e5, 20e5], [400.0, 30.0])
    out = pipe.run(gas, "outlet", {"in": inlet}, {"length": 100.0, "diameter": 0.15,
                                                  "max_velocity": 20.0})
    v = out.details["velocity_max_m_s"]
    assert v[0] > 20.0 > v[1]
    np.testing.assert_array_equal(out.flags["velocity_high"], [True, False])


@pytest.mark.parametrize("params, field, match", [
    ({"length": -5.0, "diameter": 0.3}, "equipment.p.length", "must be positive"),
    ({"length": 10.0, "diameter": 0.0}, "equipment.p.diameter", "must be positive"),
    ({"length": 10.0, "diameter": 0.3, "elevation_change": 20.0}, "equipment.p.elevation_change",
     "cannot exceed"),
    ({"length": 1e5, "diameter": 0.3, "elevation_change": -2e4}, "equipment.p.elevation_change",
     "cannot exceed the length or 10000 m"),
    ({"length": 10.0, "diameter": 0.6, "surroundings": {"kind": "buried", "depth": 0.2,
                                                        "soil_conductivity": 1.0,
                                                        "ground_T": 280.0}},
     "equipment.p.surroundings.buried.depth", "half the diameter"),
    ({"length": 10.0, "diameter": 0.3, "surroundings": {"kind": "water", "T": 280.0}},
     "equipment.p.surroundings", "unknown surroundings"),
    ({"length": 10.0, "diameter": 0.3, "steps": 0}, "equipment.p.steps", "whole number"),
])
def test_bad_parameters_are_refused(params, field, match):
    gas = fluid("lean")
    with pytest.raises(InputError, match=match) as info:
        pipe.run(gas, "p", {"in": feed(gas, 288.15, 20e5, 100.0)}, params)
    assert info.value.field == field


def test_a_pipe_that_cannot_pass_the_flow_is_refused():
    gas = fluid("lean")
    inlet = feed(gas, 288.15, [20e5, 20e5], [50.0, 5000.0])
    with pytest.raises(InputError, match="cannot pass this flow") as info:
        pipe.run(gas, "p", {"in": inlet}, {"length": 5000.0, "diameter": 0.1})
    np.testing.assert_array_equal(info.value.cases, [False, True])


def test_fuzz_random_pipes_balance_and_stay_finite():
    # random lines, gases and surroundings: either a finite balanced answer or a refusal
    rng = np.random.default_rng(7)
    gas = fluid("lean")
    n = 40
    T = rng.uniform(260, 330, n)
    P = rng.uniform(5e5, 90e5, n)
    F = rng.uniform(0.0, 400.0, n)
    inlet = feed(gas, T, P, F)
    params = {"length": 2000.0, "diameter": 0.25, "roughness": 1e-4,
              "elevation_change": 30.0,
              "surroundings": {"kind": "buried", "depth": rng.uniform(0.5, 3.0, n),
                               "soil_conductivity": rng.uniform(0.3, 2.5, n),
                               "ground_T": rng.uniform(270, 295, n)}}
    try:
        out = pipe.run(gas, "p", {"in": inlet}, params)
    except InputError as exc:
        keep = ~np.asarray(exc.cases)
        inlet = inlet.take(keep)
        params["surroundings"] = {k: (v[keep] if isinstance(v, np.ndarray) else v)
                                  for k, v in params["surroundings"].items()}
        out = pipe.run(gas, "p", {"in": inlet}, params)
    assert_balanced({"in": inlet}, out)
    # the line rises 30 m: friction and head both lower the pressure
    assert np.all(np.isfinite(out.outlets["out"].T)) and np.all(out.dP > 0.0)
    T_out = out.outlets["out"].T
    lo = np.minimum(inlet.T, params["surroundings"]["ground_T"]) - 5.0
    hi = np.maximum(inlet.T, params["surroundings"]["ground_T"]) + 1.0
    assert np.all((T_out > lo) & (T_out < hi))


def test_a_wet_gas_line_is_flagged_and_balances():
    # a rich gas (tests.blocks RICH, invented) cooled by cold air condenses along the line: the
    # homogeneous-flow estimate is used and flagged; its mixture viscosity lies between the
    # phases' (McAdams), the numbers are finite and the balances close
    gas = fluid("rich")
    inlet = feed(gas, [300.0, 300.0], [60e5, 60e5], [200.0, 200.0])
    out = pipe.run(gas, "line", {"in": inlet},
                   {"length": 3000.0, "diameter": 0.2,
                    "surroundings": {"kind": "air", "T": np.array([290.0, 240.0]), "U": 20.0}})
    assert_balanced({"in": inlet}, out)
    np.testing.assert_array_equal(out.flags["two_phase_flow"], [False, True])
    beta = out.outlets["out"].vapour_fraction
    assert beta[0] == 1.0 and 0.0 < beta[1] < 1.0
    assert np.all(np.isfinite(out.dP)) and np.all(out.dP > 0)
    st = gas.flash(T=out.outlets["out"].T[1:], P=out.outlets["out"].P[1:])
    per = st.phase_transport()
    mu_v, mu_l = per["vapour"][0][0], per["liquid"][0][0]
    from letdown.fluid.transport import homogeneous_viscosity
    mu = homogeneous_viscosity(mu_v, mu_l, 0.5)
    assert mu_v < mu < mu_l

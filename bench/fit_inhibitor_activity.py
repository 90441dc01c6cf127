"""Fit of the water activity coefficient in methanol and MEG solutions
(letdown.fluid.aqueous.inhibitor.ACTIVITY). Not a test: run it to reproduce the constants.

    ln gamma_w = x_i^2 (A + B x_i) + x_i^2 (C + D x_i) (T0 / T - 1)   (x_i: inhibitor mole fraction)

Data:

* Freezing points of the aqueous solutions, Melinder, *Properties of Secondary Working Fluids for
  Indirect Systems*, 2nd ed., IIR (2010), as fitted in CoolProp's incompressible mixtures
  ``INCOMP::MMA`` (methanol, 2.5-40 wt %) and ``INCOMP::MEG`` (ethylene glycol, 2.5-50 wt %). At the
  freezing point ice and solution are in equilibrium, so
  ln a_w = -(dH_fus / R)(1/T_f - 1/T0) + (dcp / R)(ln(T_f/T0) + T0/T_f - 1),
  dH_fus = 6009.5 J/mol (as in letdown.fluid.aqueous.hydrate), dcp = cp(liquid) - cp(ice) = 38 J/(mol K)
  (common practice). This is the water activity at 218-272 K, where hydrates are inhibited.
* Methanol only, for the temperature dependence: NRTL with the DECHEMA water-methanol parameters
  (Gmehling & Onken, DECHEMA Chemistry Data Series Vol. I/1 (1977) p. 61: A12 = -189.0469,
  A21 = 792.8020 cal/mol, alpha 0.2999, 1 = methanol; VLE at 337-373 K) at 313-373 K,
  x_methanol 0.03-0.27 (the range of the freezing points). MEG has no verified VLE parameter set
  here: C = D = 0 for it.
"""
import numpy as np
import CoolProp.CoolProp as CP

R = 8.314462618
T0 = 273.15
H_FUS = 6009.5
DCP = 38.0
M_W = 18.01528
M = {"methanol": 32.04186, "ethylene-glycol": 62.06784}
FLUID = {"methanol": ("MMA", 0.40), "ethylene-glycol": ("MEG", 0.50)}
#: The NRTL points reach the same methanol mole fraction as the freezing points (40 wt %): beyond
#: it the model holds gamma_w (letdown.fluid.aqueous.inhibitor.ACTIVITY_X_MAX).
X_MAX = 0.27264


def ln_aw_at_freezing(T):
    return -H_FUS / R * (1.0 / T - 1.0 / T0) + DCP / R * (np.log(T / T0) + T0 / T - 1.0)


def nrtl_ln_gamma_water(x_w, T):
    R_cal = R / 4.184          # cal/(mol K), thermochemical calorie
    t12 = -189.0469 / (R_cal * T)
    t21 = 792.8020 / (R_cal * T)
    a = 0.2999
    x1, x2 = 1.0 - x_w, x_w
    G12, G21 = np.exp(-a * t12), np.exp(-a * t21)
    return x1 ** 2 * (t12 * (G12 / (x2 + x1 * G12)) ** 2 + t21 * G21 / (x1 + x2 * G21) ** 2)


def freezing_points(name):
    code, wmax = FLUID[name]
    w = np.arange(0.025, wmax + 1e-9, 0.025)
    Tf = np.array([CP.PropsSI("T_freeze", "T", 280.0, "P", 1e5, f"INCOMP::{code}[{v}]") for v in w])
    nw, ni = (1.0 - w) / M_W, w / M[name]
    x_i = ni / (nw + ni)
    return w, Tf, x_i, ln_aw_at_freezing(Tf) - np.log(1.0 - x_i)


def main():
    out = {}
    for name in M:
        w, Tf, xi, lng = freezing_points(name)
        X, T, y, wt = xi, Tf, lng, np.full(xi.size, 3.0)
        if name == "methanol":
            xs, Ts = np.meshgrid(np.linspace(0.03, X_MAX, 9), [313.15, 333.15, 353.15, 373.15])
            X = np.r_[X, xs.ravel()]
            T = np.r_[T, Ts.ravel()]
            y = np.r_[y, nrtl_ln_gamma_water(1.0 - xs.ravel(), Ts.ravel())]
            wt = np.r_[wt, np.ones(xs.size)]
            A = np.vstack([X ** 2, X ** 3, X ** 2 * (T0 / T - 1), X ** 3 * (T0 / T - 1)]).T
        else:
            A = np.vstack([X ** 2, X ** 3]).T
        c, *_ = np.linalg.lstsq(A * wt[:, None], y * wt, rcond=None)
        c = np.r_[c, np.zeros(4 - c.size)]
        fit = (A @ c[:A.shape[1]])
        n = xi.size
        dT = (fit[:n] - lng) / (H_FUS / (R * Tf ** 2))
        print(f"{name}: wt % {np.round(100 * w, 1)}")
        print(f"  freezing T [K] {np.round(Tf, 2)}")
        print(f"  gamma_w at freezing {np.round(np.exp(lng), 4)}")
        print(f"  fit miss as a freezing-temperature error [K]: max {np.max(np.abs(dT)):.3f}")
        if name == "methanol":
            print(f"  fit miss against the DECHEMA NRTL at 313-373 K: max |d ln gamma| "
                  f"{np.max(np.abs(fit[n:] - y[n:])):.4f}")
        out[name] = tuple(float(v) for v in np.round(c, 5))
    print("ACTIVITY =", out)


if __name__ == "__main__":
    main()

"""Fit of the water activity coefficient in methanol and MEG solutions
(letdown.fluid.aqueous.inhibitor.ACTIVITY). Not a test: run it to reproduce the constants.

    ln gamma_w = x_i^2 (A + B x_i) + x_i^2 (C + D x_i) (T0 / T - 1)   (x_i: inhibitor mole fraction)

Data:

* Freezing points of the aqueous solutions, Melinder, *Properties of Secondary Working Fluids for
  Indirect Systems*, 2nd ed., IIR (2010), as fitted in CoolProp's incompressible mixtures
  ``INCOMP::MMA`` (methanol, 2.5-40 wt %) and ``INCOMP::MEG`` (ethylene glycol, 2.5-60 wt %). At the
  freezing point ice and solution are in equilibrium, so
  ln a_w = -(dH_fus / R)(1/T_f - 1/T0) + (dcp / R)(ln(T_f/T0) + T0/T_f - 1),
  dH_fus = 6009.5 J/mol (as in letdown.fluid.aqueous.hydrate), dcp = cp(liquid) - cp(ice) = 38 J/(mol K)
  (common practice). This is the water activity at 218-272 K, where hydrates are inhibited.
* Methanol only, for the temperature dependence: NRTL with the DECHEMA water-methanol parameters
  (Gmehling & Onken, DECHEMA Chemistry Data Series Vol. I/1 (1977) p. 61: A12 = -189.0469,
  A21 = 792.8020 cal/mol, alpha 0.2999, 1 = methanol; VLE at 337-373 K) at 313-373 K,
  x_methanol 0.03-0.27 (the range of the freezing points).
* MEG only, for the temperature dependence: the water activity of the universal correlation of
  inhibited hydrate suppression temperatures of Hu, Sa, Lee & Sum, AIChE J. (2018),
  doi:10.1002/aic.16369 (fitted by its authors to published inhibited hydrate equilibria):
  ln a_w = B1 x + B2 x^2, MEG B1 = -0.99971, B2 = -2.21514, constants as transcribed in
  p2f_HydrateCalcLib 0.1.0.9 ``Organic Inhibitor Data.csv`` (pypi-data/pypi-mirror-396, commit
  4dd9672c70c286ab19b40fd75da34bd6e155ccda; the paper not read here), taken at 253-293 K (where MEG
  solutions of 5-60 wt % form hydrate with natural gas at 3-20 MPa) over the x of the freezing
  points. MEG has no verified VLE set here. Without this term (C = D = 0, the freezing points
  alone) the hydrate model with 40-50 wt % MEG was 0.7-1.3 K below that correlation
  (non-conservative; tests/fluid/test_hydrate_inhibited.py).
"""
import numpy as np
import CoolProp.CoolProp as CP

R = 8.314462618
T0 = 273.15
H_FUS = 6009.5
DCP = 38.0
M_W = 18.01528
M = {"methanol": 32.04186, "ethylene-glycol": 62.06784}
FLUID = {"methanol": ("MMA", 0.40), "ethylene-glycol": ("MEG", 0.60)}
#: The NRTL points reach the same methanol mole fraction as the freezing points (40 wt %): beyond
#: it the model holds gamma_w (letdown.fluid.aqueous.inhibitor.ACTIVITY_X_MAX).
X_MAX = 0.27264


#: Hu, Sa, Lee & Sum (2018) for MEG: ln a_w = B1 x + B2 x^2 (module docstring)
HU_MEG = (-0.99971, -2.21514)
#: Temperatures at which the correlation's a_w is taken [K] (module docstring).
HU_T = (253.15, 263.15, 273.15, 283.15, 293.15)


def hu_lee_sum_ln_aw(x):
    return HU_MEG[0] * x + HU_MEG[1] * x * x


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
            xs, Ts = np.meshgrid(xi[xi >= 0.015], HU_T)
            X = np.r_[X, xs.ravel()]
            T = np.r_[T, Ts.ravel()]
            y = np.r_[y, hu_lee_sum_ln_aw(xs.ravel()) - np.log(1.0 - xs.ravel())]
            wt = np.r_[wt, np.ones(xs.size)]
            A = np.vstack([X ** 2, X ** 3, X ** 2 * (T0 / T - 1), X ** 3 * (T0 / T - 1)]).T
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
        else:
            print(f"  fit miss against the Hu-Lee-Sum a_w at 253-293 K: max |d ln a_w| "
                  f"{np.max(np.abs(fit[n:] - y[n:])):.4f}")
        out[name] = tuple(float(v) for v in np.round(c, 5))
    print("ACTIVITY =", out)


if __name__ == "__main__":
    main()

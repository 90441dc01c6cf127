"""Transport properties: viscosity and thermal conductivity of natural gases and their liquids.

Method
------
Chung, Ajlan, Lee & Starling, "Generalized multiparameter correlation for nonpolar and polar fluid
transport properties", Ind. Eng. Chem. Res. 27 (1988) 671-679, doi:10.1021/ie00076a024, in the form
given by Poling, Prausnitz & O'Connell, *The Properties of Gases and Liquids*, 5th ed. (2001),
sections 9-4 (eqs. 9-4.10 to 9-4.11, dilute gas), 9-5 (mixing rules, eqs. 9-5.24 to 9-5.44),
9-6 (dense fluid, eqs. 9-6.18 to 9-6.20, Table 9-6) for viscosity and 10-3, 10-5 (eqs. 10-3.14,
10-5.5 to 10-5.7, Table 10-4) for thermal conductivity. One corresponding-states model covers the
dilute gas, the dense (high-pressure) gas and, roughly, the liquid, from the temperature, the molar
density the equation of state gives and the phase composition:

* dilute-gas viscosity ``eta0 = 40.785 Fc sqrt(M T) / (Vc^(2/3) Omega_v)`` [micropoise] with the
  Neufeld et al. (1972) collision integral ``Omega_v(T*)``, ``T* = 1.2593 T / Tc``;
* dense fluid: ``eta = 36.344 eta* sqrt(M Tc) / Vc^(2/3)``,
  ``eta* = sqrt(T*) / Omega_v Fc (1/G2 + E6 y) + eta**``, ``y = rho Vc / 6``;
* conductivity ``lambda = 31.2 eta0 Psi / M' (1/G2 + B6 y) + q B7 y^2 sqrt(Tr) G2``, with ``Psi``
  from the ideal-gas ``Cv`` (this module takes ``Cv = cp0 - R`` from the ideal-gas heat capacity of
  :mod:`letdown.fluid.components`);
* mixtures by Chung's one-fluid rules (``sigma_i = 0.809 Vc_i^(1/3)``, ``eps_i/k = Tc_i / 1.2593``,
  binary parameters ``xi_ij = zeta_ij = 1``).

Data
----
* **Vc** [m3/mol]: the critical molar volumes of the reference-equation fluid files (the same
  source as the Tc and Pc of :mod:`letdown.fluid.components`: Huber, Lemmon, Bell & McLinden, Ind.
  Eng. Chem. Res. 61 (2022) 15449), as distributed in ``chemicals`` 1.5.2 (``Vc``, method
  ``HEOS``).
* **Dipole moments** [debye]: ``chemicals`` 1.5.2 ``dipole_moment`` (its default source, CCCBDB;
  ethylene glycol from Muller's compilation in the same package).
* **Association factor kappa** [-]: water 0.075908 and methanol 0.215175 (Poling 5th ed. Table 9-1
  after Chung et al. 1988; values from memory); every other component 0 (not associating).

Range and accuracy
------------------
Chung et al. report about 5-10 % for dense gases and nonpolar liquids. Measured here against
CoolProp 8.0.0 (``tests/fluid/test_transport.py``, docs/models.md, "Transport properties"): methane,
ethane, nitrogen and a natural gas at 250-350 K and 1-100 bar (80 states). At the reference
density, viscosity within 2.9 % and conductivity within 12 % (the largest near ethane's critical
point, where Chung's method has no critical enhancement); through letdown's own Peng-Robinson
density (``State.viscosity``), the gas viscosity within 5.7 %. Stated range: gas and dense gas
(vapour-like phases) of natural-gas components, 200-450 K up to 200 bar, away from the critical
point (there the conductivity runs up to 25 % low, methane at 200 K and 50 bar). Liquids
(condensate, LNG-like liquids) are estimates only: the cubic equation's liquid density is itself
some per cent off and a liquid's viscosity follows the density steeply, so a liquid figure is good
to some tens of per cent (+32 % measured, liquid ethane at 250 K and 100 bar). Polar components
(water, methanol, glycol) at more than a few per cent of a phase are outside the tested range.

All functions take batches: ``T`` (n,), molar density (n,), compositions (n, nc).
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np

from .components import R, ComponentSet

#: Critical molar volume [m3/mol] (reference fluid files via chemicals 1.5.2, method HEOS).
VC = {
    "methane": 9.86278109912e-05, "ethane": 1.45838781642e-04, "propane": 2.0e-04,
    "isobutane": 2.57748115318e-04, "n-butane": 2.54921929824e-04,
    "isopentane": 3.05716906145e-04, "n-pentane": 3.11526479751e-04,
    "neopentane": 3.05810397554e-04, "n-hexane": 3.69549150037e-04,
    "n-heptane": 4.29184549356e-04, "n-octane": 4.92368291482e-04,
    "n-nonane": 5.52486187845e-04, "n-decane": 6.09756097561e-04,
    "nitrogen": 8.94142472662e-05, "carbon-dioxide": 9.41184770731e-05,
    "hydrogen-sulfide": 9.81354268891e-05, "hydrogen": 6.44828475625e-05,
    "helium": 5.75251528731e-05, "argon": 7.45855116234e-05, "oxygen": 7.33675715334e-05,
    "carbon-monoxide": 9.21658986175e-05, "water": 5.59480372671e-05,
    "methanol": 1.13828190007e-04, "ethylene-glycol": 1.70068027211e-04,
}
#: Dipole moment [debye] (chemicals 1.5.2 ``dipole_moment``); absent means 0.
DIPOLE = {"propane": 0.08, "isobutane": 0.13, "isopentane": 0.13, "hydrogen-sulfide": 0.97,
          "carbon-monoxide": 0.11, "water": 1.85, "methanol": 1.7, "ethylene-glycol": 2.3084}
#: Association factor kappa [-] (Poling 5th ed. Table 9-1, from memory); absent means 0.
ASSOCIATION = {"water": 0.075908, "methanol": 0.215175}

# Chung et al. (1988) dense-fluid viscosity coefficients E_i = a + b omega + c mu_r^4 + d kappa
# (Poling 5th ed. Table 9-6), rows i = 1..10, columns a, b, c, d. Written from memory: no copy was
# at hand to check them against; the CoolProp comparison (viscosity within 2.9 % at the reference
# density to 100 bar, tests/fluid/test_transport.py) is their check.
_E = np.array([
    [6.324, 50.412, -51.680, 1189.0],
    [1.210e-3, -1.154e-3, -6.257e-3, 0.03728],
    [5.283, 254.209, -168.48, 3898.0],
    [6.623, 38.096, -8.464, 31.42],
    [19.745, 7.630, -14.354, 31.53],
    [-1.900, -12.537, 4.985, -18.15],
    [24.275, 3.450, -11.291, 69.35],
    [0.7972, 1.117, 0.01235, -4.117],
    [-0.2382, 0.06770, -0.8163, 4.025],
    [0.06863, 0.3479, 0.5926, -0.727],
])
# Chung et al. (1988) dense-fluid conductivity coefficients B_i (Poling 5th ed. Table 10-4; the
# same as the copy in chemicals 1.5.2 ``Chung_dense``, which tests/fluid/test_transport.py matches).
_B = np.array([
    [2.4166, 0.74824, -0.91858, 121.72],
    [-0.50924, -1.5094, -49.991, 69.983],
    [6.6107, 5.6207, 64.760, 27.039],
    [14.543, -8.9139, -5.6379, 74.344],
    [0.79274, 0.82019, -0.69369, 6.3173],
    [-5.8634, 12.801, 9.5893, 65.529],
    [91.089, 128.11, -54.217, 523.81],
])


@lru_cache(maxsize=64)
def _constants(names: tuple):
    comps = ComponentSet(names)
    Vc = np.array([VC[n] for n in comps.names]) * 1e6           # [cm3/mol]
    mu = np.array([DIPOLE.get(n, 0.0) for n in comps.names])     # [debye]
    kappa = np.array([ASSOCIATION.get(n, 0.0) for n in comps.names])
    sigma = 0.809 * Vc ** (1.0 / 3.0)                            # [angstrom]
    eps = comps.Tcs / 1.2593                                     # eps/k [K]
    M = comps.Ms * 1e3                                           # [g/mol]
    s_ij = np.sqrt(np.outer(sigma, sigma))
    e_ij = np.sqrt(np.outer(eps, eps))
    w_ij = 0.5 * (comps.omegas[:, None] + comps.omegas[None, :])
    M_ij = 2.0 * np.outer(M, M) / (M[:, None] + M[None, :])
    k_ij = np.sqrt(np.outer(kappa, kappa))
    mu2 = np.outer(mu ** 2, mu ** 2)
    return comps, s_ij, e_ij, w_ij, M_ij, k_ij, mu2


def _mixture(names, xs):
    """Chung's one-fluid parameters of compositions xs (n, nc)."""
    comps, s_ij, e_ij, w_ij, M_ij, k_ij, mu2 = _constants(tuple(names))
    xx = xs[:, :, None] * xs[:, None, :]
    s3 = s_ij ** 3
    sigma3 = np.einsum("nij,ij->n", xx, s3)
    eps = np.einsum("nij,ij->n", xx, e_ij * s3) / sigma3
    omega = np.einsum("nij,ij->n", xx, w_ij * s3) / sigma3
    sigma2 = sigma3 ** (2.0 / 3.0)
    M = (np.einsum("nij,ij->n", xx, e_ij * s_ij ** 2 * np.sqrt(M_ij)) / (eps * sigma2)) ** 2
    # mu_m^4 / (sigma_m^3 eps_m) = sum_ij x_i x_j mu_i^2 mu_j^2 / (eps_ij sigma_ij^3): the reduced
    # dipole mixed (Chung et al. 1988; this form from memory -- it gives mu for a pure fluid; the
    # natural-gas dipoles are so small that dropping them all moves a gas with 2 % H2S by 4e-5)
    mu4 = sigma3 * eps * np.einsum("nij,ij->n", xx, mu2 / (e_ij * s3))
    kappa = np.einsum("nij,ij->n", xx, k_ij)
    Vc = sigma3 / 0.809 ** 3                                     # [cm3/mol]
    Tc = 1.2593 * eps                                            # [K]
    mu_r = 131.3 * mu4 ** 0.25 / np.sqrt(Vc * Tc)
    return comps, Vc, Tc, omega, M, mu_r, kappa


def _neufeld(Ts):
    """Neufeld, Janzen & Aziz (1972) collision integral of viscosity (Poling eq. 9-4.3)."""
    return (1.16145 * Ts ** -0.14874 + 0.52487 * np.exp(-0.77320 * Ts)
            + 2.16178 * np.exp(-2.43787 * Ts))


def _G(coef, omega, mu_r4, kappa, y):
    """Chung's coefficients (n, k) and the packing functions G1, G2 at reduced density y."""
    C = (coef[None, :, 0] + coef[None, :, 1] * omega[:, None] + coef[None, :, 2] * mu_r4[:, None]
         + coef[None, :, 3] * kappa[:, None])
    G1 = (1.0 - 0.5 * y) / (1.0 - y) ** 3
    c1, c2, c3, c4, c5 = (C[:, j] for j in range(5))
    # (1 - exp(-c4 y)) / y -> c4 as y -> 0 (the dilute gas)
    lead = np.where(y > 1e-12, -np.expm1(-c4 * y) / np.where(y > 1e-12, y, 1.0), c4)
    G2 = (c1 * lead + c2 * G1 * np.exp(c5 * y) + c3 * G1) / (c1 * c4 + c2 + c3)
    return C, G2


def transport(T, rho_molar, xs, names):
    """Viscosity and thermal conductivity of one phase over a batch (Chung et al. 1988).

    Parameters
    ----------
    T : array_like (n,)
        Temperature [K].
    rho_molar : array_like (n,)
        Molar density of the phase [mol/m3] (0 for the dilute-gas limit).
    xs : array_like (n, nc)
        Phase composition [-].
    names : sequence of str
        Component names, in the order of ``xs``.

    Returns
    -------
    viscosity : ndarray (n,)
        Dynamic viscosity [Pa s].
    conductivity : ndarray (n,)
        Thermal conductivity [W/(m K)].

    Examples
    --------
    Methane at 300 K and 1 bar (CoolProp's reference correlations: 11.26 uPa s, 0.0344 W/(m K)):

    >>> mu, k = transport([300.0], [40.2], [[1.0]], ["methane"])
    >>> round(float(mu[0]) * 1e6, 2), round(float(k[0]), 4)
    (11.21, 0.0339)
    """
    T = np.atleast_1d(np.asarray(T, dtype=float))
    rho = np.broadcast_to(np.asarray(rho_molar, dtype=float), T.shape)
    xs = np.atleast_2d(np.asarray(xs, dtype=float))
    comps, Vc, Tc, omega, M, mu_r, kappa = _mixture(names, xs)
    mu_r4 = mu_r ** 4
    Ts = 1.2593 * T / Tc
    Omega = _neufeld(Ts)
    Fc = 1.0 - 0.2756 * omega + 0.059035 * mu_r4 + kappa
    y = rho * 1e-6 * Vc / 6.0                                    # rho in mol/cm3
    # viscosity (Poling eqs. 9-4.10, 9-6.18 to 9-6.20)
    E, G2 = _G(_E, omega, mu_r4, kappa, y)
    eta2 = E[:, 6] * y ** 2 * G2 * np.exp(E[:, 7] + E[:, 8] / Ts + E[:, 9] / Ts ** 2)
    eta_star = np.sqrt(Ts) / Omega * Fc * (1.0 / G2 + E[:, 5] * y) + eta2
    eta = eta_star * 36.344 * np.sqrt(M * Tc) / Vc ** (2.0 / 3.0) * 1e-7    # uP -> Pa s
    eta0 = 40.785 * Fc * np.sqrt(M * T) / (Vc ** (2.0 / 3.0) * Omega) * 1e-7  # [Pa s]
    # conductivity (Poling eqs. 10-3.14, 10-5.5 to 10-5.7); eta0 in Pa s, M' in kg/mol
    cv = np.einsum("ni,ni->n", comps.cp0(T), xs) - R
    alpha = cv / R - 1.5
    beta = 0.7862 - 0.7109 * omega + 1.3168 * omega ** 2
    Tr = T / Tc
    Zr = 2.0 + 10.5 * Tr ** 2
    psi = 1.0 + alpha * ((0.215 + 0.28288 * alpha - 1.061 * beta + 0.26665 * Zr)
                         / (0.6366 + beta * Zr + 1.061 * alpha * beta))
    B, H2 = _G(_B, omega, mu_r4, kappa, y)
    M_kg = M * 1e-3
    q = 3.586e-3 * np.sqrt(Tc / M_kg) / Vc ** (2.0 / 3.0)
    lam = (31.2 * eta0 * psi / M_kg * (1.0 / H2 + B[:, 5] * y)
           + q * B[:, 6] * y ** 2 * np.sqrt(Tr) * H2)
    return eta, lam


def homogeneous_viscosity(mu_vapour, mu_liquid, x_mass):
    """Viscosity of a two-phase mixture as one homogeneous fluid: ``1/mu = x/mu_v + (1-x)/mu_l``
    with ``x`` the vapour mass fraction (McAdams, Woods & Heroman, Trans. ASME 64 (1942) 193;
    citation from memory). A model choice for the friction of a wet gas line, not a property.

    Parameters
    ----------
    mu_vapour, mu_liquid : array_like (n,)
        Phase viscosities [Pa s] (NaN where a phase is absent).
    x_mass : array_like (n,)
        Vapour mass fraction [-].

    Returns
    -------
    ndarray (n,)
        [Pa s]
    """
    x = np.asarray(x_mass, dtype=float)
    mu_v = np.asarray(mu_vapour, dtype=float)
    mu_l = np.asarray(mu_liquid, dtype=float)
    # a phase that is absent (NaN) takes the whole flow's mass (rounding of x near 0 or 1)
    x = np.where(np.isnan(mu_l), 1.0, np.where(np.isnan(mu_v), 0.0, x))
    inv = (np.where(x > 0.0, x / np.where(x > 0.0, mu_v, 1.0), 0.0)
           + np.where(x < 1.0, (1.0 - x) / np.where(x < 1.0, mu_l, 1.0), 0.0))
    return 1.0 / inv


def phase_transport(states):
    """Per-phase viscosity and conductivity of a batch of :class:`letdown.fluid.state.StateBatch`.

    Returns
    -------
    dict
        ``{"vapour": (mu, k), "liquid": (mu, k)}``, each an (n,) pair [Pa s], [W/(m K)], NaN where
        the phase is absent.
    """
    out = {}
    for phase, xs in (("vapour", states.ys), ("liquid", states.xs)):
        d = states.__getattribute__(phase)
        rho = np.asarray(d["density"], dtype=float) / np.asarray(d["molar_mass"], dtype=float)
        present = np.isfinite(rho) & (rho > 0.0)
        mu, k = transport(states.T, np.where(present, rho, 0.0), xs, states.components)
        out[phase] = (np.where(present, mu, np.nan), np.where(present, k, np.nan))
    return out


def lee_gonzalez_eakin(T, density, molar_mass):
    """Gas viscosity by Lee, Gonzalez & Eakin (1966): a second, independent estimate for gases.

    Lee, Gonzalez & Eakin, "The viscosity of natural gases", J. Pet. Technol. 18 (1966) 997-1000
    (coefficients from memory, checked against CoolProp in ``tests/fluid/test_transport.py``: within
    5.1 % for methane and 2.7 % for a natural gas at 250-350 K and 1-100 bar)::

        mu [cP] = 1e-4 K exp(X rho^Y),  rho in g/cm3
        K = (9.4 + 0.02 M) T^1.5 / (209 + 19 M + T),  T in degR, M in g/mol
        X = 3.5 + 986 / T + 0.01 M,  Y = 2.4 - 0.2 X

    Fitted to natural gases at 100-340 degF and 100-8000 psia (the paper's data); a gas-phase
    correlation only.

    Parameters
    ----------
    T : array_like (n,)
        Temperature [K].
    density : array_like (n,)
        Mass density of the gas [kg/m3].
    molar_mass : array_like (n,)
        [kg/mol].

    Returns
    -------
    ndarray (n,)
        Viscosity [Pa s].

    Examples
    --------
    >>> round(float(lee_gonzalez_eakin([300.0], [0.65], [0.01604])[0]) * 1e6, 2)
    11.58
    """
    T_R = np.asarray(T, dtype=float) * 1.8
    M = np.asarray(molar_mass, dtype=float) * 1e3
    rho = np.asarray(density, dtype=float) * 1e-3
    K = (9.4 + 0.02 * M) * T_R ** 1.5 / (209.0 + 19.0 * M + T_R)
    X = 3.5 + 986.0 / T_R + 0.01 * M
    Y = 2.4 - 0.2 * X
    return np.atleast_1d(1e-4 * K * np.exp(X * rho ** Y) * 1e-3)

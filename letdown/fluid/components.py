"""Pure-component data: critical constants, acentric factors, molar masses, ideal-gas heat capacity.

Sources (one primary source per constant; choices where sources disagree are documented here):

* **Tc, Pc, acentric factor** -- the reference-equation fluid-file constants collected by
  Huber, Lemmon, Bell & McLinden, Ind. Eng. Chem. Res. 61 (2022) 15449, as distributed in the
  ``chemicals`` package 1.5.2 (its default ``Tc``/``Pc``/``omega`` for each CAS number).
* **Molar mass** -- ``chemicals`` 1.5.2 ``MW`` (IUPAC atomic weights), to full precision: the same
  values GERG-2008 and ISO 6976 use (methane 16.04246 g/mol).
  Exception: **ethylene glycol** takes Perry's Chemical Engineers' Handbook, 8th ed. (Green & Perry
  2008), Table 2-141 (DIPPR-based: 720 K, 82.0 bar, omega 0.5068), because the reference fluid file's
  Pc = 105.1 bar and omega = 0.619 are 28 % and 0.11 away from every experimental compilation.
* **Ideal-gas heat capacity** -- the Aly-Lee form (DIPPR equation 107; Aly & Lee, Fluid Phase Equilib.
  6 (1981) 169) with the coefficients of Perry's Handbook 8th ed., Table 2-156 (valid 50-1500 K for
  the light gases, 200-1500 K for C2+; below 200 K the C2+ curves are smooth extrapolations and these
  components are liquids there anyway). Exceptions: helium and argon are monatomic, cp = 5/2 R
  (Perry Table 2-155); **hydrogen** uses the polynomial of Poling, Prausnitz & O'Connell, The
  Properties of Gases and Liquids, 5th ed. (2001), Appendix A (valid 50-1000 K, where Perry's
  Aly-Lee fit is only valid above 250 K); **neopentane** is not in Perry Table 2-156 and uses the
  Poling polynomial (200-1000 K).
* **Rackett compressibility Z_RA** for the Peneloux volume shift -- COSTALD parameter file of the
  ``chemicals`` package (it cites Hankinson & Thomson, AIChE J. 25 (1979) 653); where it has none,
  the Yamada & Gunn (1973) estimate Z_RA = 0.29056 - 0.08775 omega.

The values of the reference fluid files differ from Poling's and Perry's by up to 0.9 K in Tc (methanol)
and 0.6-1.6 % in Pc (n-hexane, argon, methanol, hydrogen); see docs/models.md.
"""
from __future__ import annotations

import difflib
from dataclasses import dataclass

import numpy as np

from ..constants import REFERENCE_P, REFERENCE_T, R  # noqa: F401  (R: molar gas constant, re-exported)
from ..errors import InputError


@dataclass(frozen=True)
class Component:
    """Constants of one pure component.

    Attributes
    ----------
    name : str
        Canonical name (lower case, hyphens).
    cas : str
        CAS registry number.
    Tc : float
        Critical temperature [K].
    Pc : float
        Critical pressure [Pa].
    omega : float
        Acentric factor [-].
    M : float
        Molar mass [kg/mol].
    cp_aly_lee : tuple
        (C1, C2, C3, C4, C5) of the Aly-Lee form, C1, C2, C4 in [J/(mol K)], C3, C5 in [K]; zeros if
        the polynomial is used.
    cp_poly : tuple
        (a0, a1, a2, a3, a4) of cp/R = a0 + a1 T + ... + a4 T^4 [-, 1/K, ...]; zeros if Aly-Lee is used.
    Z_RA : float
        Rackett compressibility [-].
    """

    name: str
    cas: str
    Tc: float
    Pc: float
    omega: float
    M: float
    cp_aly_lee: tuple
    cp_poly: tuple
    Z_RA: float


def _c(name, cas, Tc, Pc_bar, omega, M_g, aly=None, poly=None, Z_RA=None):
    aly = tuple(a for a in aly) if aly else (0.0, 0.0, 1.0, 0.0, 1.0)
    if aly[1] or aly[3] or aly[0]:
        # Perry tabulates J/(kmol K): convert to J/(mol K)
        aly = (aly[0] / 1000.0, aly[1] / 1000.0, aly[2], aly[3] / 1000.0, aly[4])
    poly = tuple(poly) if poly else (0.0, 0.0, 0.0, 0.0, 0.0)
    if Z_RA is None:
        Z_RA = 0.29056 - 0.08775 * omega  # Yamada & Gunn, J. Chem. Eng. Data 18 (1973) 234
    return Component(name, cas, float(Tc), float(Pc_bar) * 1e5, float(omega), M_g / 1000.0,
                     aly, poly, float(Z_RA))


_MONATOMIC = (2.5, 0.0, 0.0, 0.0, 0.0)  # cp/R = 5/2 (Perry Table 2-155: 20786 J/(kmol K))

#: The component table. Columns: name, CAS, Tc [K], Pc [bar], omega, M [g/mol], Aly-Lee (Perry 2-156,
#: J/(kmol K) and K) or Poling polynomial (cp/R), Z_RA (COSTALD file; None = Yamada-Gunn).
COMPONENTS: dict[str, Component] = {c.name: c for c in (
    _c("methane", "74-82-8", 190.564, 45.992, 0.01142, 16.04246,
       aly=(33298, 79933, 2086.9, 41602, 991.96), Z_RA=0.2892),
    _c("ethane", "74-84-0", 305.322, 48.722, 0.0995, 30.06904,
       aly=(40326, 134220, 1655.5, 73223, 752.87), Z_RA=0.2808),
    _c("propane", "74-98-6", 369.89, 42.512, 0.1521, 44.09562,
       aly=(51920, 192450, 1626.5, 116800, 723.6), Z_RA=0.2766),
    _c("isobutane", "75-28-5", 407.81, 36.29, 0.184, 58.1222,
       aly=(65490, 247760, 1587, 157500, 706.99), Z_RA=0.2754),
    _c("n-butane", "106-97-8", 425.125, 37.96, 0.201, 58.1222,
       aly=(71340, 243000, 1630, 150330, 730.42), Z_RA=0.273),
    _c("isopentane", "78-78-4", 460.35, 33.78, 0.2274, 72.14878,
       aly=(74600, 326500, 1545, 192300, 666.7), Z_RA=0.2717),
    _c("n-pentane", "109-66-0", 469.7, 33.675, 0.251, 72.14878,
       aly=(88050, 301100, 1650.2, 189200, 747.6), Z_RA=0.2684),
    _c("neopentane", "463-82-1", 433.74, 31.96, 0.1961, 72.14878,
       poly=(-11.428, 0.156037, -0.00033383, 4.0127e-7, -1.7806e-10), Z_RA=0.2756),
    _c("n-hexane", "110-54-3", 507.82, 30.441, 0.3, 86.17536,
       aly=(104400, 352300, 1694.6, 236900, 761.6), Z_RA=0.2635),
    _c("n-heptane", "142-82-5", 540.2, 27.357, 0.349, 100.20194,
       aly=(120150, 400100, 1676.6, 274000, 756.4), Z_RA=0.2604),
    _c("n-octane", "111-65-9", 568.74, 24.836, 0.398, 114.22852,
       aly=(135540, 443100, 1635.6, 305400, 746.4), Z_RA=0.2571),
    _c("n-nonane", "111-84-2", 594.55, 22.81, 0.4433, 128.2551,
       aly=(151750, 491500, 1644.8, 347000, 749.6), Z_RA=0.2543),
    _c("n-decane", "124-18-5", 617.7, 21.03, 0.4884, 142.28168,
       aly=(167200, 535300, 1614.1, 378200, 742), Z_RA=0.2501),
    _c("nitrogen", "7727-37-9", 126.192, 33.958, 0.0372, 28.0134,
       aly=(29105, 8614.9, 1701.6, 103.47, 909.79), Z_RA=0.29),
    _c("carbon-dioxide", "124-38-9", 304.128, 73.773, 0.2239, 44.0095,
       aly=(29370, 34540, 1428, 26400, 588), Z_RA=0.2722),
    _c("hydrogen-sulfide", "7783-06-4", 373.1, 90.0, 0.1005, 34.08088,
       aly=(33288, 26086, 913.4, -17979, 949.4)),
    _c("hydrogen", "1333-74-0", 33.145, 12.964, -0.219, 2.01588,
       poly=(2.883, 0.003681, -7.72e-06, 6.92e-09, -2.13e-12), Z_RA=0.306),
    _c("helium", "7440-59-7", 5.1953, 2.2832, -0.3836, 4.002602, poly=_MONATOMIC, Z_RA=0.2981),
    _c("argon", "7440-37-1", 150.687, 48.63, -0.0022, 39.948, poly=_MONATOMIC),
    _c("oxygen", "7782-44-7", 154.581, 50.43, 0.0222, 31.9988,
       aly=(29103, 10040, 2526.5, 9356, 1153.8), Z_RA=0.2905),
    _c("carbon-monoxide", "630-08-0", 132.86, 34.94, 0.0497, 28.0101,
       aly=(29108, 8773, 3085.1, 8455.3, 1538.2), Z_RA=0.2896),
    _c("water", "7732-18-5", 647.096, 220.64, 0.3443, 18.01528,
       aly=(33363, 26790, 2610.5, 8896, 1169), Z_RA=0.2338),
    _c("methanol", "67-56-1", 513.38, 82.159, 0.5625, 32.04186,
       aly=(39252, 87900, 1916.5, 53654, 896.7), Z_RA=0.2334),
    _c("ethylene-glycol", "107-21-1", 720.0, 82.0, 0.5068, 62.06784,
       aly=(63012, 145840, 1673, 97296, 773.65), Z_RA=0.2488),
)}

#: Usual names and formulas engineers write, mapped to the canonical names.
ALIASES: dict[str, str] = {
    "c1": "methane", "ch4": "methane",
    "c2": "ethane", "c2h6": "ethane",
    "c3": "propane", "c3h8": "propane",
    "ic4": "isobutane", "i-butane": "isobutane", "i-c4": "isobutane",
    "nc4": "n-butane", "butane": "n-butane", "n-c4": "n-butane",
    "ic5": "isopentane", "i-pentane": "isopentane", "i-c5": "isopentane",
    "nc5": "n-pentane", "pentane": "n-pentane", "n-c5": "n-pentane",
    "neoc5": "neopentane", "neo-c5": "neopentane", "2,2-dimethylpropane": "neopentane",
    "nc6": "n-hexane", "hexane": "n-hexane", "c6": "n-hexane",
    "nc7": "n-heptane", "heptane": "n-heptane", "c7": "n-heptane",
    "nc8": "n-octane", "octane": "n-octane", "c8": "n-octane",
    "nc9": "n-nonane", "nonane": "n-nonane", "c9": "n-nonane",
    "nc10": "n-decane", "decane": "n-decane", "c10": "n-decane",
    "n2": "nitrogen", "co2": "carbon-dioxide", "h2s": "hydrogen-sulfide",
    "h2": "hydrogen", "he": "helium", "ar": "argon", "o2": "oxygen", "co": "carbon-monoxide",
    "h2o": "water", "meoh": "methanol", "ch3oh": "methanol",
    "meg": "ethylene-glycol", "glycol": "ethylene-glycol", "monoethylene-glycol": "ethylene-glycol",
}


def canonical_name(name: str) -> str:
    """Return the canonical component name for ``name`` (case, spaces and aliases folded).

    Raises
    ------
    InputError
        If the name is unknown; the message suggests the nearest known names.
    """
    key = str(name).strip().lower().replace("_", "-").replace(" ", "-")
    if key in COMPONENTS:
        return key
    if key in ALIASES:
        return ALIASES[key]
    compact = key.replace("-", "")
    for cand in list(COMPONENTS) + list(ALIASES):
        if cand.replace("-", "") == compact:
            return ALIASES.get(cand, cand)
    known = sorted(set(COMPONENTS) | set(ALIASES))
    near = difflib.get_close_matches(key, known, n=3, cutoff=0.5)
    hint = f"; did you mean {', '.join(near)}?" if near else ""
    raise InputError(f"unknown component '{name}'{hint} (known: {', '.join(sorted(COMPONENTS))})")


class ComponentSet:
    """Arrays of the constants of an ordered set of components, for the vectorised models.

    Parameters
    ----------
    names : sequence of str
        Component names (aliases allowed).
    """

    def __init__(self, names):
        self.names = tuple(canonical_name(n) for n in names)
        if len(set(self.names)) != len(self.names):
            raise InputError(f"a component is listed twice: {list(names)}")
        comps = [COMPONENTS[n] for n in self.names]
        self.Tcs = np.array([c.Tc for c in comps])            # [K]
        self.Pcs = np.array([c.Pc for c in comps])            # [Pa]
        self.omegas = np.array([c.omega for c in comps])      # [-]
        self.Ms = np.array([c.M for c in comps])              # [kg/mol]
        self.Z_RAs = np.array([c.Z_RA for c in comps])        # [-]
        aly = np.array([c.cp_aly_lee for c in comps])
        self._C1, self._C2, self._C3, self._C4, self._C5 = aly.T
        self._poly = np.array([c.cp_poly for c in comps])     # cp/R coefficients
        self.n = len(comps)

    # --- ideal-gas properties -------------------------------------------------------------
    # Aly-Lee: cp = C1 + C2 (x/sinh x)^2 + C4 (y/cosh y)^2, x = C3/T, y = C5/T. Integrals:
    #   int cp dT   = C1 T + C2 C3 coth(x) - C4 C5 tanh(y)
    #   int cp/T dT = C1 ln T + C2 (x coth x - ln sinh x) - C4 (y tanh y - ln cosh y)
    def cp0(self, T):
        """Ideal-gas heat capacity of each component, shape ``T.shape + (n,)`` [J/(mol K)]."""
        T = np.asarray(T, dtype=float)[..., None]
        x = self._C3 / T
        y = self._C5 / T
        cp = self._C1 + self._C2 * (x / np.sinh(x)) ** 2 + self._C4 * (y / np.cosh(y)) ** 2
        a = self._poly
        cp = cp + R * (a[:, 0] + T * (a[:, 1] + T * (a[:, 2] + T * (a[:, 3] + T * a[:, 4]))))
        return cp

    def _H(self, T):
        T = np.asarray(T, dtype=float)[..., None]
        x = self._C3 / T
        y = self._C5 / T
        h = self._C1 * T + self._C2 * self._C3 / np.tanh(x) - self._C4 * self._C5 * np.tanh(y)
        a = self._poly
        h = h + R * T * (a[:, 0] + T * (a[:, 1] / 2 + T * (a[:, 2] / 3 + T * (a[:, 3] / 4
                                                                          + T * a[:, 4] / 5))))
        return h

    def _S(self, T):
        T = np.asarray(T, dtype=float)[..., None]
        x = self._C3 / T
        y = self._C5 / T
        s = (self._C1 * np.log(T) + self._C2 * (x / np.tanh(x) - _log_sinh(x))
             - self._C4 * (y * np.tanh(y) - _log_cosh(y)))
        a = self._poly
        s = s + R * (a[:, 0] * np.log(T) + T * (a[:, 1] + T * (a[:, 2] / 2 + T * (a[:, 3] / 3
                                                                               + T * a[:, 4] / 4))))
        return s

    def h0(self, T):
        """Ideal-gas enthalpy of each component relative to 298.15 K, shape ``T.shape + (n,)`` [J/mol]."""
        return self._H(T) - self._H0

    def s0(self, T):
        """Ideal-gas entropy of each component at 1 atm relative to 298.15 K [J/(mol K)]."""
        return self._S(T) - self._S0

    @property
    def _H0(self):
        return self._H(T_REF)

    @property
    def _S0(self):
        return self._S(T_REF)


def _log_sinh(x):
    # ln sinh x without overflow for large x
    return np.where(x > 20.0, x - np.log(2.0), np.log(np.sinh(np.minimum(x, 20.0))))


def _log_cosh(y):
    return np.where(y > 20.0, y - np.log(2.0), np.log(np.cosh(np.minimum(y, 20.0))))


#: Reference state of enthalpy and entropy: ideal gas at 298.15 K and 101325 Pa has h = 0, s = 0.
T_REF = REFERENCE_T   # [K]
P_REF = REFERENCE_P   # [Pa]


#: Components that get a nearly pure trial phase of their own in the stability test below
#: flash.COLD_TRIAL_T: their liquids separate from methane-rich liquids at low temperature (a
#: CO2-rich second liquid). Here, below the fluid layer's flash and compiled kernels, so both take
#: the flags from one place.
COLD_TRIAL_COMPONENTS = ("carbon-dioxide", "hydrogen-sulfide")


def cold_trial_flags(comps):
    """1.0 for the components of ``comps`` that get a cold trial phase, else 0.0 (one per
    component, in order)."""
    return np.array([1.0 if c in COLD_TRIAL_COMPONENTS else 0.0 for c in comps.names])


def critical_temperature_estimate(comps: ComponentSet, zs) -> np.ndarray:
    """Estimated true critical temperature of mixtures [K], shape (n,).

    Li's rule (Li, Can. J. Chem. Eng. 49 (1971) 709): T_c = sum_i phi_i T_c,i with volume fractions
    phi_i = x_i V_c,i / sum_j x_j V_c,j, here with the critical volumes taken in proportion to
    R T_c,i / P_c,i (a common critical compressibility; the cubic equations' co-volumes b_i are in
    that proportion), so it needs no data beyond T_c and P_c. Against the critical points of
    letdown's own envelope (Peng-Robinson; measured when the rule was written, the first six in
    tests/fluid/test_phase_naming.py) it is within 2 % for six natural gases of tests/cases.py
    (gulf-coast, amarillo, ekofisk, high-N2, high-CO2, the demo station gas) and within 4 % for
    methane + CO2, propane or n-hexane; it overstates the ISO 20765 test gases 1 and 3 (216
    against 205 K, 285 against 247 K) and methane + 10 % n-decane (379 against 330 K), which
    leaves more states to the phase identification parameter, and understates a 20 % hydrogen
    blend (177 against 192 K). Kay's mole-fraction average understates all of them (by 121 K for
    methane + 30 % n-hexane). The flash names a single phase at or above it vapour
    (:func:`letdown.fluid.flash.twophase.is_vapour_like`; GERG-2008 likewise)."""
    zs = np.atleast_2d(np.asarray(zs, dtype=float))
    w = zs * (comps.Tcs / comps.Pcs)
    return (w @ comps.Tcs) / np.sum(w, axis=1)

"""Two-parameter cubic equations of state, vectorised over cases.

The generic cubic (Michelsen & Mollerup, *Thermodynamic Models: Fundamentals and Computational
Aspects*, 2nd ed., 2007, ch. 3):

    P = R T / (v - b) - a(T) / ((v + delta1 b)(v + delta2 b))

* Peng & Robinson, Ind. Eng. Chem. Fundam. 15 (1976) 59: delta1,2 = 1 +- sqrt(2),
  Omega_a = 0.45724, Omega_b = 0.07780, m = 0.37464 + 1.54226 w - 0.26992 w^2.
* Peng-Robinson 1978 (Robinson & Peng, GPA Research Report RR-28, 1978 -- reference from memory; the
  form is as coded in the thermo package's PPR78 module): for w > 0.491,
  m = 0.379642 + 1.48503 w - 0.164423 w^2 + 0.016666 w^3.
* Soave, Chem. Eng. Sci. 27 (1972) 1197: delta1 = 1, delta2 = 0, Omega_a = 0.42748,
  Omega_b = 0.08664, m = 0.480 + 1.574 w - 0.176 w^2.

alpha(T) = (1 + m (1 - sqrt(T/Tc)))^2 (Soave), except **water in the Peng-Robinson forms**, which
takes the alpha of Twu, Bluck, Cunningham & Coon, Fluid Phase Equilib. 69 (1991) 33:

    alpha(T) = Tr^(N (M - 1)) exp(L (1 - Tr^(M N))),  Tr = T / Tc,

with L = 0.3865, M = 0.8720, N = 1.9693 for water (Le Guennec, Privat & Jaubert, Fluid Phase
Equilib. 429 (2016) 301, fitted to water's vapour pressure, enthalpy of vaporisation and liquid
heat capacity; values from memory, checked in tests/fluid/test_water_alpha.py: the vapour pressure of
water from this equation is within 1.5 % of IAPWS-95 from 250 to 550 K, where the Soave alpha is
15-27 % low below 300 K). Without it the three-phase flash puts 20-25 % too little water in a cold
gas. SRK keeps the Soave alpha for water (no Twu set for it here). Van der Waals one-fluid mixing:
a = sum_i sum_j x_i x_j sqrt(a_i a_j) (1 - k_ij), b = sum_i x_i b_i.

In Z form, with A = a P / (R T)^2 and B = b P / (R T):

    Z^3 - (1 + B - u B) Z^2 + (A + w B^2 - u B - u B^2) Z - (A B + w B^2 + w B^3) = 0,
    u = delta1 + delta2, w = delta1 delta2.

Residual (departure) functions at the same T and P, with L = ln((Z + delta1 B)/(Z + delta2 B)):

    h_res = R T (Z - 1) + (T a' - a) / (b (delta1 - delta2)) L
    s_res = R ln(Z - B) + a' / (b (delta1 - delta2)) L
    ln phi_i = b_i/b (Z - 1) - ln(Z - B) - A / (B (delta1 - delta2)) (2 psi_i / a - b_i / b) L,
    psi_i = sum_j x_j a_ij

Peneloux volume translation (Peneloux, Rauzy & Freze, Fluid Phase Equilib. 8 (1982) 7): v = v_eos - c,
c = sum x_i c_i, with c_i = 0.40768 (R Tc/Pc)(0.29441 - Z_RA) for SRK and the analogous
0.50033 (R Tc/Pc)(0.25969 - Z_RA) for PR (both as quoted in secondary sources; primary PR form not
read). It leaves phase equilibrium unchanged; letdown applies it to volumes and densities only.

All arrays: cases on axis 0, components on axis 1. Temperatures [K], pressures [Pa], molar volumes
[m3/mol], energies [J/mol].
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..kernels import native
from ..components import R, ComponentSet

SQRT2 = np.sqrt(2.0)

#: Newton polishing steps applied to the analytic cubic roots (each squares the relative error: one
#: takes the closed-form error of ~1e-12 to machine precision).
ROOT_POLISH_STEPS = 1


@dataclass(frozen=True)
class CubicKind:
    """Constants that define one cubic family."""

    name: str
    delta1: float
    delta2: float
    Omega_a: float
    Omega_b: float
    title: str


PR = CubicKind("peng-robinson", 1.0 + SQRT2, 1.0 - SQRT2, 0.45724, 0.07780,
               "Peng-Robinson (1976)")
PR78 = CubicKind("peng-robinson-1978", 1.0 + SQRT2, 1.0 - SQRT2, 0.45724, 0.07780,
                 "Peng-Robinson with the 1978 alpha for heavy components")
SRK = CubicKind("soave-redlich-kwong", 1.0, 0.0, 0.42748, 0.08664, "Soave-Redlich-Kwong (1972)")

KINDS = {k.name: k for k in (PR, PR78, SRK)}


#: Twu (1991) alpha parameters (L, M, N) for the Peng-Robinson forms, by component name (see the
#: module docstring for the source).
TWU_PR = {"water": (0.3865, 0.8720, 1.9693)}


def twu_parameters(kind: CubicKind, names) -> np.ndarray:
    """Twu alpha parameters (L, M, N) per component, rows of zeros for Soave-alpha components.

    Parameters
    ----------
    kind : CubicKind
    names : sequence of str
        Component names, in order.

    Returns
    -------
    ndarray (nc, 3)
        L, M, N [-]; M = 0 marks a component on the Soave alpha.
    """
    out = np.zeros((len(names), 3))
    if kind.name == "soave-redlich-kwong":
        return out
    for i, name in enumerate(names):
        if name in TWU_PR:
            out[i] = TWU_PR[name]
    return out


def sqrt_alpha(T, Tc, ms, twu, derivatives=False):
    """sqrt(alpha_i(T)) and, on request, its first and second temperature derivatives.

    Parameters
    ----------
    T : ndarray (n,)
        Temperature [K].
    Tc, ms : ndarray (nc,)
        Critical temperature [K] and Soave slope [-].
    twu : ndarray (nc, 3)
        Twu L, M, N (M = 0: Soave), from :func:`twu_parameters`.

    Returns
    -------
    g (n, nc) [-], and if ``derivatives`` dg/dT [1/K] and d2g/dT2 [1/K2].
    """
    T = np.asarray(T, dtype=float)[:, None]
    sT = np.sqrt(T)
    sTc = np.sqrt(Tc)
    g = 1.0 + ms * (1.0 - sT / sTc)
    L, M, N = twu[:, 0], twu[:, 1], twu[:, 2]
    is_twu = M != 0.0
    if is_twu.any():
        Tr = T / Tc
        k = M * N
        c1 = 0.5 * N * (M - 1.0)
        c2 = 0.5 * L * k
        Trk = Tr ** k
        gt = Tr ** c1 * np.exp(0.5 * L * (1.0 - Trk))
        g = np.where(is_twu, gt, g)
    if not derivatives:
        return g
    gp = -ms / (2.0 * sT * sTc)
    gpp = ms / (4.0 * sT ** 3 * sTc)
    if is_twu.any():
        # ln g = c1 ln Tr + (L/2)(1 - Tr^k): g' = g q / T with q = c1 - c2 Tr^k
        q = c1 - c2 * Trk
        gp = np.where(is_twu, gt * q / T, gp)
        gpp = np.where(is_twu, gt / (T * T) * (q * q - q - c2 * k * Trk), gpp)
    return g, gp, gpp


def m_of_omega(kind: CubicKind, omegas: np.ndarray) -> np.ndarray:
    """Slope m of the Soave alpha function for each component [-]."""
    w = np.asarray(omegas, dtype=float)
    if kind.name == "soave-redlich-kwong":
        return 0.480 + 1.574 * w - 0.176 * w * w
    m76 = 0.37464 + 1.54226 * w - 0.26992 * w * w
    if kind.name == "peng-robinson-1978":
        m78 = 0.379642 + 1.48503 * w - 0.164423 * w * w + 0.016666 * w ** 3
        return np.where(w > 0.491, m78, m76)
    return m76


class CubicEOS:
    """A cubic equation of state for one component set, vectorised over cases.

    Parameters
    ----------
    comps : ComponentSet
        The components (order defines every array axis 1).
    kind : CubicKind
        PR, PR78 or SRK.
    kijs : ndarray, shape (nc, nc)
        Symmetric binary interaction parameters [-].
    """

    #: Newton polishing steps of every density root (:data:`ROOT_POLISH_STEPS`); the compiled
    #: kernels read it from here, so the kernel driver needs no import of this module.
    root_polish_steps = ROOT_POLISH_STEPS

    def __init__(self, comps: ComponentSet, kind: CubicKind, kijs: np.ndarray):
        self.comps = comps
        self.kind = kind
        self.d1 = kind.delta1
        self.d2 = kind.delta2
        self.u = kind.delta1 + kind.delta2
        self.w = kind.delta1 * kind.delta2
        self.dd = kind.delta1 - kind.delta2
        kijs = np.asarray(kijs, dtype=float)
        if not np.allclose(kijs, kijs.T):
            raise ValueError("interaction parameters must be symmetric")
        self.kijs = kijs
        self.omk = 1.0 - kijs
        Tc, Pc = comps.Tcs, comps.Pcs
        self.ac = kind.Omega_a * (R * Tc) ** 2 / Pc          # [Pa m6/mol2]
        self.sqrt_ac = np.sqrt(self.ac)
        self.bs = kind.Omega_b * R * Tc / Pc                  # [m3/mol]
        self.ms = m_of_omega(kind, comps.omegas)
        self.twu = twu_parameters(kind, comps.names)
        self.sqrt_Tc = np.sqrt(Tc)
        if kind.name == "soave-redlich-kwong":
            self.cs = 0.40768 * (R * Tc / Pc) * (0.29441 - comps.Z_RAs)
        else:
            self.cs = 0.50033 * (R * Tc / Pc) * (0.25969 - comps.Z_RAs)

    # ------------------------------------------------------------------ mixture parameters
    def mix(self, T, xs, derivatives=False):
        """Mixture a, b and psi_i = sum_j x_j a_ij (and a', a'' on request).

        Parameters
        ----------
        T : ndarray (n,)
            Temperature [K].
        xs : ndarray (n, nc)
            Mole fractions [-].

        Returns
        -------
        a [Pa m6/mol2], b [m3/mol], psi (n, nc) [Pa m6/mol2], and if ``derivatives``
        da/dT [Pa m6/(mol2 K)], d2a/dT2 [Pa m6/(mol2 K2)].
        """
        if derivatives:
            g, gp, gpp = sqrt_alpha(T, self.comps.Tcs, self.ms, self.twu, derivatives=True)
        else:
            g = sqrt_alpha(T, self.comps.Tcs, self.ms, self.twu)
        r = self.sqrt_ac * g                                              # sqrt(a_i)
        xr = xs * r
        S = xr @ self.omk
        psi = r * S
        a = np.einsum("ij,ij->i", xs, psi)
        b = xs @ self.bs
        if not derivatives:
            return a, b, psi
        rp = self.sqrt_ac * gp
        rpp = self.sqrt_ac * gpp
        xrp = xs * rp
        da = 2.0 * np.einsum("ij,ij->i", xrp, S)
        d2a = 2.0 * (np.einsum("ij,ij->i", xs * rpp, S) + np.einsum("ij,ij->i", xrp, xrp @ self.omk))
        return a, b, psi, da, d2a

    # ------------------------------------------------------------------ roots
    def Z_roots(self, A, B):
        """Smallest and largest real roots of the cubic in Z (equal where only one is real).

        Roots are found in closed form (Cardano / trigonometric) and polished by Newton steps.
        """
        u, w = self.u, self.w
        c2 = -(1.0 + B - u * B)
        c1 = A + w * B * B - u * B - u * B * B
        c0 = -(A * B + w * B * B + w * B ** 3)
        p = c1 - c2 * c2 / 3.0
        q = 2.0 * c2 ** 3 / 27.0 - c2 * c1 / 3.0 + c0
        disc = (q / 2.0) ** 2 + (p / 3.0) ** 3
        shift = -c2 / 3.0
        one = disc > 0.0
        sq = np.sqrt(np.where(one, disc, 0.0))
        t1 = np.cbrt(-q / 2.0 + sq) + np.cbrt(-q / 2.0 - sq)
        pn = np.where(one, -1.0, p)  # p < 0 where three real roots
        rad = 2.0 * np.sqrt(-pn / 3.0)
        arg = np.clip(3.0 * q / (2.0 * pn) * np.sqrt(-3.0 / pn), -1.0, 1.0)
        phi = np.arccos(arg) / 3.0
        tmax = rad * np.cos(phi)
        tmin = rad * np.cos(phi + 2.0 * np.pi / 3.0)   # k = 2: the smallest of the three
        Zmax = np.where(one, t1, tmax) + shift
        Zmin = np.where(one, t1, tmin) + shift
        # only roots above B are physical (v > b)
        Zmin = np.where(Zmin > B, Zmin, Zmax)
        for _ in range(ROOT_POLISH_STEPS):
            Zmax = _newton_cubic(Zmax, c2, c1, c0)
            Zmin = _newton_cubic(Zmin, c2, c1, c0)
        return Zmin, Zmax

    def g_res_RT(self, Z, A, B):
        """Residual Gibbs energy over RT of a root [-]."""
        L = np.log((Z + self.d1 * B) / (Z + self.d2 * B))
        return Z - 1.0 - np.log(Z - B) - A / (B * self.dd) * L

    def choose_root(self, A, B, phase):
        """Pick Z by phase: 'vapour' (largest), 'liquid' (smallest), 'stable' (lowest Gibbs energy).

        ``phase`` may also be an int array: +1 vapour, -1 liquid, 0 stable.
        """
        Zmin, Zmax = self.Z_roots(A, B)
        if isinstance(phase, str):
            if phase == "vapour":
                return Zmax
            if phase == "liquid":
                return Zmin
            code = np.zeros(A.shape, dtype=int)
        else:
            code = np.broadcast_to(np.asarray(phase), A.shape)
        differ = Zmax - Zmin > 1e-12 * Zmax
        gmin = self.g_res_RT(Zmin, A, B)
        gmax = self.g_res_RT(Zmax, A, B)
        stable = np.where(differ & (gmin < gmax), Zmin, Zmax)
        return np.where(code > 0, Zmax, np.where(code < 0, Zmin, stable))

    # ------------------------------------------------------------------ fugacity
    def lnphi(self, T, P, xs, phase="stable"):
        """Natural log of the fugacity coefficients and Z.

        Parameters
        ----------
        T, P : ndarray (n,)
            [K], [Pa].
        xs : ndarray (n, nc)
            Phase composition [-].
        phase : str or int array
            Root choice, see :meth:`choose_root`.

        Returns
        -------
        lnphis : ndarray (n, nc) [-]
        Z : ndarray (n,) [-]
        """
        if native.AVAILABLE:
            # the same formulae in compiled code (letdown/fluid/_flashkernels.c)
            return native.lnphi(self, T, P, xs, phase)
        a, b, psi = self.mix(T, xs)
        RT = R * T
        A = a * P / (RT * RT)
        B = b * P / RT
        Z = self.choose_root(A, B, phase)
        L = np.log((Z + self.d1 * B) / (Z + self.d2 * B))
        bib = self.bs / b[:, None]
        lnphis = (bib * (Z - 1.0)[:, None] - np.log(Z - B)[:, None]
                  - (A / (B * self.dd) * L)[:, None] * (2.0 * psi / a[:, None] - bib))
        return lnphis, Z

    # ------------------------------------------------------------------ properties
    def properties(self, T, P, xs, phase="stable"):
        """Residual and derivative properties of one phase.

        Returns
        -------
        dict of ndarrays (n,): Z, v [m3/mol] (untranslated), h_res [J/mol], s_res [J/(mol K)],
        cv_res [J/(mol K)], dPdT [Pa/K] (at constant v), dPdv [Pa mol/m3] (at constant T),
        g_res_RT [-], c_shift [m3/mol] (Peneloux shift of this composition).
        """
        if native.AVAILABLE:
            return native.properties(self, T, P, xs, phase)
        a, b, psi, da, d2a = self.mix(T, xs, derivatives=True)
        RT = R * T
        A = a * P / (RT * RT)
        B = b * P / RT
        Z = self.choose_root(A, B, phase)
        v = Z * RT / P
        L = np.log((Z + self.d1 * B) / (Z + self.d2 * B))
        bdd = b * self.dd
        h_res = RT * (Z - 1.0) + (T * da - a) / bdd * L
        s_res = R * np.log(Z - B) + da / bdd * L
        cv_res = T * d2a / bdd * L
        v1 = v + self.d1 * b
        v2 = v + self.d2 * b
        dPdT = R / (v - b) - da / (v1 * v2)
        dPdv = -RT / (v - b) ** 2 + a * (2.0 * v + self.u * b) / (v1 * v2) ** 2
        return {
            "Z": Z, "v": v, "h_res": h_res, "s_res": s_res, "cv_res": cv_res,
            "dPdT": dPdT, "dPdv": dPdv, "g_res_RT": Z - 1.0 - np.log(Z - B) - A / (B * self.dd) * L,
            "c_shift": xs @ self.cs,
        }


def phase_identification(eos: "CubicEOS", T, P, xs):
    """Phase identification parameter of a single phase on its lowest-Gibbs root.

    Pi = v [ (d2P/dT dv) / (dP/dT)_v - (d2P/dv2)_T / (dP/dv)_T ]; Pi > 1 names a liquid (or a
    liquid-like dense fluid), Pi <= 1 a vapour (Venkatarathnam & Oellrich, Fluid Phase Equilib. 301
    (2011) 225). The ideal gas has Pi = 1.

    Returns
    -------
    Pi : ndarray (n,) [-]
    """
    a, b, psi, da, d2a = eos.mix(T, xs, derivatives=True)
    RT = R * T
    A = a * P / (RT * RT)
    B = b * P / RT
    Z = eos.choose_root(A, B, "stable")
    v = Z * RT / P
    D = (v + eos.d1 * b) * (v + eos.d2 * b)
    dD = 2.0 * v + eos.u * b
    P_v = -RT / (v - b) ** 2 + a * dD / D ** 2
    P_vv = 2.0 * RT / (v - b) ** 3 + a * (2.0 / D ** 2 - 2.0 * dD ** 2 / D ** 3)
    P_T = R / (v - b) - da / D
    P_Tv = -R / (v - b) ** 2 + da * dD / D ** 2
    return v * (P_Tv / P_T - P_vv / P_v)


def _newton_cubic(Z, c2, c1, c0):
    f = ((Z + c2) * Z + c1) * Z + c0
    df = (3.0 * Z + 2.0 * c2) * Z + c1
    step = np.where(df != 0.0, f / np.where(df != 0.0, df, 1.0), 0.0)
    return Z - step

"""Gas quality by ISO 6976:2016: calorific value, Wobbe index, relative density, density.

Method (ISO 6976:2016, clauses 5-7, as in letdown's reference data; the standard itself was read in an
open-source transcription of its tables and Annex D):

* compression factor at the metering conditions: Z = 1 - (sum_i x_i s_i)^2, s_i the summation
  factors at the metering temperature;
* ideal molar gross calorific value: sum_i x_i Hc_i at the combustion temperature;
* real volumetric value: molar value / (Z R T / p), R = 8.3144621 J/(mol K), p = 101.325 kPa;
* relative density: G = (M / M_air) (Z_air / Z), M_air = 28.96546 kg/kmol, Z_air = 0.999595 at 15 degC;
* Wobbe index: volumetric gross value / sqrt(G).

* net values: gross minus the enthalpy of vaporization of the water formed,
  Hn_i = Hc_i - (n_H,i / 2) L_water(T_combustion).

Data: ISO 6976:2016 Tables A.1-A.4 (see ``ISO6976`` below). A component the tables here do not hold
is refused with a clear message rather than guessed.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError

#: Molar gas constant used by ISO 6976:2016 [J/(mol K)].
R_ISO = 8.3144621
#: Reference pressure of ISO 6976 metering and combustion [Pa].
P_ISO = 101325.0
#: Molar mass of dry air (ISO 6976:2016 Table A.1) [kg/mol].
M_AIR = 28.96546e-3

#: Temperatures of the tables [K]: combustion (gross values) and metering (summation factors).
COMBUSTION_TS = (273.15, 288.15, 288.70, 293.15, 298.15)
METERING_TS = (273.15, 288.15, 288.70, 293.15)
#: Compression factor of dry air at the metering temperatures (ISO 6976:2016 Table A.1).
Z_AIRS = (0.999419, 0.999595, 0.999601, 0.999645)
#: Enthalpy of vaporization of water at the combustion temperatures [kJ/mol] (ISO 6976:2016, the
#: water row of Table A.4), for net calorific values.
L_WATER = (45.064, 44.431, 44.408, 44.222, 44.013)

#: component: (M [kg/kmol], hydrogen atoms per molecule, summation factors s at 0 / 15 / 15.55 /
#: 20 degC, ideal gross calorific values at 0 / 15 / 15.55 / 20 / 25 degC [kJ/mol]) -- ISO 6976:2016
#: Tables A.2-A.4 as transcribed in an open-source implementation of the standard (R. Forster,
#: ISO6976.2016, 2026); the 15 and 25 degC values of the 11 common components agree with the
#: project's reference data. Water's "calorific value" is zero; its row of Table A.4 is L_WATER.
ISO6976 = {
    "methane": (16.04246, 4, (0.04886, 0.04452, 0.04437, 0.04317),
                (892.92, 891.51, 891.46, 891.05, 890.58)),
    "ethane": (30.06904, 6, (0.0997, 0.0919, 0.0916, 0.0895),
               (1564.35, 1562.14, 1562.06, 1561.42, 1560.69)),
    "propane": (44.09562, 8, (0.1465, 0.1344, 0.1340, 0.1308),
                (2224.03, 2221.10, 2220.99, 2220.13, 2219.17)),
    "n-butane": (58.12220, 10, (0.2022, 0.1840, 0.1834, 0.1785),
                 (2883.35, 2879.76, 2879.63, 2878.58, 2877.40)),
    "isobutane": (58.12220, 10, (0.1885, 0.1722, 0.1717, 0.1673),
                  (2874.21, 2870.58, 2870.45, 2869.39, 2868.20)),
    "n-pentane": (72.14878, 12, (0.2586, 0.2361, 0.2354, 0.2295),
                  (3542.91, 3538.60, 3538.45, 3537.19, 3535.77)),
    "isopentane": (72.14878, 12, (0.2458, 0.2251, 0.2244, 0.2189),
                   (3536.01, 3531.68, 3531.52, 3530.25, 3528.83)),
    "neopentane": (72.14878, 12, (0.2245, 0.2040, 0.2033, 0.1979),
                   (3521.75, 3517.44, 3517.28, 3516.02, 3514.61)),
    "n-hexane": (86.17536, 14, (0.3319, 0.3001, 0.2990, 0.2907),
                 (4203.24, 4198.24, 4198.06, 4196.60, 4194.95)),
    "n-heptane": (100.20194, 16, (0.4076, 0.3668, 0.3654, 0.3547),
                  (4862.88, 4857.18, 4856.98, 4855.31, 4853.43)),
    "n-octane": (114.22852, 18, (0.4845, 0.4346, 0.4329, 0.4198),
                 (5522.41, 5516.01, 5515.78, 5513.90, 5511.80)),
    "n-nonane": (128.25510, 20, (0.5617, 0.5030, 0.5010, 0.4856),
                 (6182.92, 6175.82, 6175.56, 6173.48, 6171.15)),
    "n-decane": (142.28168, 22, (0.6713, 0.5991, 0.5967, 0.5778),
                 (6842.69, 6834.90, 6834.62, 6832.33, 6829.77)),
    "methanol": (32.04186, 4, (0.5806, 0.4464, 0.4423, 0.4117),
                 (766.60, 765.09, 765.03, 764.59, 764.09)),
    "hydrogen": (2.01588, 2, (-0.01, -0.01, -0.01, -0.01),
                 (286.64, 286.15, 286.13, 285.99, 285.83)),
    "water": (18.01528, 2, (0.3093, 0.2562, 0.2546, 0.2419), (0.0, 0.0, 0.0, 0.0, 0.0)),
    "hydrogen-sulfide": (34.08088, 2, (0.1006, 0.0923, 0.0920, 0.0898),
                         (562.93, 562.38, 562.36, 562.19, 562.01)),
    "carbon-monoxide": (28.0101, 0, (0.0258, 0.0217, 0.0215, 0.0203),
                        (282.80, 282.91, 282.91, 282.95, 282.98)),
    "helium": (4.002602, 0, (-0.01, -0.01, -0.01, -0.01), (0.0, 0.0, 0.0, 0.0, 0.0)),
    "argon": (39.948, 0, (-0.01, -0.01, -0.01, -0.01), (0.0, 0.0, 0.0, 0.0, 0.0)),
    "nitrogen": (28.0134, 0, (0.0214, 0.0170, 0.0169, 0.0156), (0.0, 0.0, 0.0, 0.0, 0.0)),
    "oxygen": (31.9988, 0, (0.0311, 0.0276, 0.0275, 0.0265), (0.0, 0.0, 0.0, 0.0, 0.0)),
    "carbon-dioxide": (44.0095, 0, (0.0821, 0.0752, 0.0749, 0.0730), (0.0, 0.0, 0.0, 0.0, 0.0)),
}


@dataclass(frozen=True)
class GasQuality:
    """ISO 6976 properties of a gas (arrays for a batch of compositions).

    Attributes
    ----------
    gross_molar, net_molar : ideal calorific values [J/mol]
    gross_volumetric, net_volumetric : real calorific values per volume at the metering
        conditions [J/m3]
    wobbe_gross, wobbe_net : Wobbe indices [J/m3]
    relative_density : real relative density to dry air [-]
    density : real density at the metering conditions [kg/m3]
    Z : compression factor at the metering conditions [-]
    molar_mass : [kg/mol]
    gross_mass, net_mass : calorific values per mass [J/kg]
    combustion_T, metering_T : [K]
    """

    gross_molar: np.ndarray
    net_molar: np.ndarray
    gross_volumetric: np.ndarray
    net_volumetric: np.ndarray
    wobbe_gross: np.ndarray
    wobbe_net: np.ndarray
    relative_density: np.ndarray
    density: np.ndarray
    Z: np.ndarray
    molar_mass: np.ndarray
    gross_mass: np.ndarray
    net_mass: np.ndarray
    combustion_T: float
    metering_T: float


def _index(T, table, what):
    for i, t in enumerate(table):
        if abs(float(T) - t) < 0.01:
            return i
    raise InputError(f"{what} reference temperature {float(T) - 273.15:.2f} degC is not one of "
                     f"ISO 6976's ({', '.join(f'{t - 273.15:g}' for t in table)} degC)")


def quality(components, zs, combustion_T: float = 288.15, metering_T: float = 288.15) -> GasQuality:
    """ISO 6976:2016 gas quality of compositions ``zs`` over ``components``.

    Parameters
    ----------
    components : sequence of str
        Canonical component names.
    zs : ndarray (nc,) or (n, nc)
        Mole fractions [-].
    combustion_T : float
        Combustion reference temperature [K]: 0, 15, 15.55, 20 or 25 degC.
    metering_T : float
        Metering reference temperature [K]: 0, 15, 15.55 or 20 degC (at 101.325 kPa).

    Raises
    ------
    InputError
        A component without ISO 6976 data, or reference temperatures the standard does not tabulate.
    """
    zs = np.atleast_2d(np.asarray(zs, dtype=float))
    present = np.any(zs > 0, axis=0)
    missing = [c for c, p in zip(components, present) if p and c not in ISO6976]
    if missing:
        raise InputError(f"no ISO 6976 data for {', '.join(missing)}")
    ic = _index(combustion_T, COMBUSTION_TS, "combustion")
    im = _index(metering_T, METERING_TS, "metering")
    zero = (0.0, 0, (0.0,) * 4, (0.0,) * 5)
    rows = [ISO6976.get(c, zero) for c in components]
    Mi = np.array([r[0] for r in rows]) * 1e-3
    nH = np.array([r[1] for r in rows], dtype=float)
    si = np.array([r[2][im] for r in rows])
    Hci = np.array([r[3][ic] for r in rows]) * 1e3
    Hni = Hci - 0.5 * nH * L_WATER[ic] * 1e3
    Hni = np.where(np.array(components) == "water", 0.0, Hni)   # water is not a fuel
    M = zs @ Mi
    Hc = zs @ Hci
    Hn = zs @ Hni
    Z = 1.0 - (zs @ si) ** 2
    v = Z * R_ISO * METERING_TS[im] / P_ISO
    G = (M / M_AIR) * (Z_AIRS[im] / Z)
    sq = (lambda a: a) if zs.shape[0] > 1 else (lambda a: float(a[0]))
    return GasQuality(gross_molar=sq(Hc), net_molar=sq(Hn), gross_volumetric=sq(Hc / v),
                      net_volumetric=sq(Hn / v), wobbe_gross=sq(Hc / v / np.sqrt(G)),
                      wobbe_net=sq(Hn / v / np.sqrt(G)), relative_density=sq(G),
                      density=sq(M / v), Z=sq(Z), molar_mass=sq(M), gross_mass=sq(Hc / M),
                      net_mass=sq(Hn / M), combustion_T=float(combustion_T),
                      metering_T=float(METERING_TS[im]))

"""Physical and unit constants, in one leaf module (it imports nothing; every layer may use it).

Each value is exact by definition unless its comment says otherwise. Constants that belong to one
standard or one model and differ from these on purpose stay with it: ISO 6976's gas constant
(``letdown.fluid.quality.R_ISO``, 8.3144621) and GERG-2008's (``letdown.fluid.eos.gerg.R_GERG``,
8.314472) are part of those methods.
"""

#: Molar gas constant [J/(mol K)] (CODATA 2018; exact since the 2019 SI redefinition).
R = 8.314462618

#: Temperature of 0 degC [K] (definition of the Celsius scale). Also the ice point used throughout
#: (pure water under one atmosphere melts at 273.1526 K; the 2.6 mK is below every tolerance here).
ZERO_CELSIUS = 273.15

#: Standard atmosphere [Pa] (ISO 2533; exact).
STANDARD_ATMOSPHERE = 101325.0

#: Standard reference conditions of gas volumes, Sm3: 15 degC and 101.325 kPa (ISO 13443).
STANDARD_T = 288.15
STANDARD_P = STANDARD_ATMOSPHERE

#: Reference state of enthalpy and entropy: the ideal gas at 298.15 K and 101325 Pa has h = 0, s = 0.
REFERENCE_T = 298.15
REFERENCE_P = STANDARD_ATMOSPHERE

#: Standard acceleration of gravity [m/s2] (3rd CGPM, 1901; exact).
G_STANDARD = 9.80665

#: Units of the US customary and imperial systems in SI (exact from the international yard and
#: pound of 1959; NIST SP 811 (2008) appendix B.8).
FOOT = 0.3048                       # [m]
INCH = 0.0254                       # [m]
POUND = 0.45359237                  # [kg]
PSI = 6894.757293168361             # [Pa] one pound-force per square inch
CUBIC_FOOT = FOOT ** 3              # [m3]

#: Standard conditions of US gas volumes, scf: 60 degF and 14.696 psia (common practice in North
#: America).
SCF_T = (60.0 + 459.67) / 1.8       # [K]
SCF_P = 14.696 * PSI                # [Pa]

#: Moles of ideal gas in one standard cubic metre (ISO 13443) and in one scf [mol].
MOL_PER_SM3 = STANDARD_P / (R * STANDARD_T)
MOL_PER_SCF = SCF_P * CUBIC_FOOT / (R * SCF_T)

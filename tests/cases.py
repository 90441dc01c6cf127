"""Shared, cited test compositions, conditions and reference values for the fluid-core tests.

Every composition and every reference number here names its source beside it. Sources are quoted as
transcribed in the project's data notes, ``/work/shared/EOS_DATA.md`` (cited as "EOS_DATA §n") and
``/work/shared/REFERENCE_DATA.md`` ("REFERENCE_DATA §n"), which record how each was read:

* AGA8-2 -- AGA Report No. 8 (2017) Part 2 (GERG-2008), Appendix B test gases and tables, as
  transcribed by NIST (E. W. Lemmon, I. H. Bell) in ``usnistgov/AGA8`` ``TESTDATA/Tables.xls``
  (EOS_DATA §6.3, §6.4).
* ISO-20765-2 -- ISO 20765-2 (GERG-2008) printed check values, as transcribed by NIST in the same
  ``Tables.xls`` ("Values from ISO 20765"; the standard itself was not seen) (EOS_DATA §6.2).
* NIST-AGA8-TEST -- the reference test point hard-coded in NIST's ``GERG2008_test_01.cpp``
  (EOS_DATA §6.1).

Printed reference numbers are kept as **strings** so that the number of printed digits (and with it
the tolerance "to the printed digits") is not lost: see :func:`printed_tolerance`.

Compositions are dicts {canonical component name: mole fraction}; :func:`normalised` scales a
transcribed composition that sums to 1 only to its printed rounding. Invented compositions (for
demos only) carry ``demo=True`` and say so in their source.
"""
from __future__ import annotations

from dataclasses import dataclass

import letdown

ATM = 101325.0   # [Pa] standard atmosphere (definition)
BAR = 1e5        # [Pa]


@dataclass(frozen=True)
class Gas:
    """A named test composition.

    Attributes
    ----------
    name : str
        Short identifier used in test ids.
    composition : dict
        {canonical component name: mole fraction} [-], sums to 1.
    source : str
        Where the composition comes from.
    demo : bool
        True for an invented demonstration composition (not a reference).
    """

    name: str
    composition: dict
    source: str
    demo: bool = False

    def fluid(self, model="peng-robinson", **kwargs) -> letdown.Fluid:
        """A :class:`letdown.Fluid` of this composition on ``model``."""
        return letdown.Fluid(self.composition, model=model, **kwargs)


def normalised(composition: dict) -> dict:
    """Drop zero entries and scale the fractions to sum to exactly 1 [-]."""
    comp = {k: float(v) for k, v in composition.items() if v > 0}
    total = sum(comp.values())
    return {k: v / total for k, v in comp.items()}


def printed_tolerance(printed: str) -> float:
    """Half a unit in the last printed digit of a reference value given as a string.

    >>> printed_tolerance("389.18")
    0.005
    >>> printed_tolerance("0.0080269")
    5e-08
    """
    text = printed.strip().lstrip("+-").lower()
    mantissa, _, exponent = text.partition("e")
    decimals = len(mantissa.split(".")[1]) if "." in mantissa else 0
    return round(0.5 * 10.0 ** (-decimals + (int(exponent) if exponent else 0)), 15)


def agrees_to_printed_digits(value: float, printed: str) -> bool:
    """True if ``value`` rounds to the printed reference value (half a unit of its last digit,
    plus 1e-12 relative for binary floating point)."""
    ref = float(printed)
    return abs(value - ref) <= printed_tolerance(printed) + 1e-12 * abs(ref)


# ---------------------------------------------------------------------------------------------
# AGA Report No. 8 (2017) Part 2, Appendix B test gases -- EOS_DATA §6.3 (mol %, NIST transcription)
# ---------------------------------------------------------------------------------------------
_AGA8_ORDER = ("methane", "nitrogen", "carbon-dioxide", "ethane", "propane", "isobutane",
               "n-butane", "isopentane", "n-pentane", "n-hexane")
_AGA8_SOURCE = ("AGA Report No. 8 (2017) Part 2, Appendix B, as transcribed by NIST usnistgov/AGA8 "
                "TESTDATA/Tables.xls (EOS_DATA §6.3)")


def _aga8(name, percents):
    return Gas(name, normalised({c: p / 100.0 for c, p in zip(_AGA8_ORDER, percents)}),
               _AGA8_SOURCE)


GULF_COAST = _aga8("gulf-coast", (96.5222, 0.2595, 0.5956, 1.8186, 0.4596, 0.0977, 0.1007, 0.0473,
                                  0.0324, 0.0664))
AMARILLO = _aga8("amarillo", (90.6724, 3.1284, 0.4676, 4.5279, 0.828, 0.1037, 0.1563, 0.0321,
                              0.0443, 0.0393))
EKOFISK = _aga8("ekofisk", (85.9063, 1.0068, 1.4954, 8.4919, 2.3015, 0.3486, 0.3506, 0.0509,
                            0.048, 0.0))
HIGH_N2 = _aga8("high-n2", (81.441, 13.465, 0.985, 3.3, 0.605, 0.1, 0.104))
HIGH_CO2 = _aga8("high-co2", (81.212, 5.702, 7.585, 4.303, 0.895, 0.151, 0.152))

AGA8_GASES = {g.name: g for g in (GULF_COAST, AMARILLO, EKOFISK, HIGH_N2, HIGH_CO2)}

#: Lean natural gases (methane above 80 %, no C7+).
LEAN_GASES = (GULF_COAST, AMARILLO, HIGH_N2)

#: 20 % hydrogen blend: Gulf Coast gas (AGA8 Part 2) with 20 mol % hydrogen added, i.e. 0.8 x Gulf
#: Coast + 0.2 H2. The base gas is cited above; the blend level is the one named in issue 2 of this
#: project (a level commonly studied for hydrogen injection into gas grids -- common practice).
H2_BLEND_20 = Gas("h2-blend-20",
                  normalised({**{c: 0.8 * x for c, x in GULF_COAST.composition.items()},
                              "hydrogen": 0.2}),
                  "0.8 x Gulf Coast (AGA Report No. 8 Part 2 App. B, EOS_DATA §6.3) + 0.2 hydrogen")

# ---------------------------------------------------------------------------------------------
# ISO 20765-2 check gases -- EOS_DATA §6.2 (mole fractions, NIST transcription of the ISO values)
# ---------------------------------------------------------------------------------------------
_ISO_SOURCE = ("ISO 20765-2 check gas {n}, as transcribed by NIST usnistgov/AGA8 "
               "TESTDATA/Tables.xls (EOS_DATA §6.2)")
ISO_GASES = {
    1: Gas("iso-gas-1", normalised({
        "methane": .796, "nitrogen": .1, "carbon-dioxide": .01, "ethane": .057, "propane": .02,
        "n-butane": .005, "isobutane": .005, "n-pentane": .002, "isopentane": .002,
        "n-hexane": .001, "n-heptane": .001, "n-octane": .001}), _ISO_SOURCE.format(n=1)),
    2: Gas("iso-gas-2", normalised({
        "methane": .65, "nitrogen": .065, "carbon-dioxide": .19, "ethane": .01, "propane": .01,
        "n-butane": .01, "isobutane": .01, "n-pentane": .01, "isopentane": .01, "n-hexane": .01,
        "n-heptane": .02, "helium": .005}), _ISO_SOURCE.format(n=2)),
    3: Gas("iso-gas-3", normalised({
        "methane": .72, "nitrogen": .01, "carbon-dioxide": .01, "ethane": .15, "propane": .01,
        "n-butane": .01, "isobutane": .01, "n-pentane": .01, "isopentane": .01, "n-hexane": .02,
        "n-heptane": .01, "n-octane": .01, "oxygen": .01, "carbon-monoxide": .01}),
        _ISO_SOURCE.format(n=3)),
    4: Gas("iso-gas-4", normalised({
        "methane": .55, "propane": .1, "hydrogen": .2, "oxygen": .04999, "carbon-monoxide": .1,
        "water": .00001}), _ISO_SOURCE.format(n=4)),
    5: Gas("iso-gas-5", normalised({
        "nitrogen": .25, "carbon-dioxide": .15, "hydrogen": .1, "oxygen": .1,
        "carbon-monoxide": .1, "hydrogen-sulfide": .1, "helium": .1, "argon": .1}),
        _ISO_SOURCE.format(n=5)),
    6: Gas("iso-gas-6", normalised({
        "propane": .1, "n-butane": .1, "isobutane": .1, "n-pentane": .1, "isopentane": .1,
        "n-hexane": .1, "n-heptane": .1, "n-octane": .1, "n-nonane": .1, "n-decane": .05,
        "water": .05}), _ISO_SOURCE.format(n=6)),
}

#: Rich gas with C7+ (15 % ethane, 2 % n-hexane, 1 % n-heptane, 1 % n-octane): ISO 20765-2 gas 3.
RICH_GAS_C7PLUS = ISO_GASES[3]
#: Lean gas with traces of C7+ (0.1 % each of C6, C7, C8): ISO 20765-2 gas 1.
LEAN_GAS_C7PLUS_TRACES = ISO_GASES[1]
#: CO2-rich gases: AGA8 "High CO2" (7.6 % CO2) and ISO 20765-2 gas 2 (19 % CO2).
CO2_RICH_GASES = (HIGH_CO2, ISO_GASES[2])

#: ISO 20765-2 printed values (EOS_DATA §6.2): gas, T [K], P [MPa], rho [kg/m3], Z [-],
#: cv [kJ/(kg K)], cp [kJ/(kg K)], w [m/s], Joule-Thomson coefficient [K/MPa]; strings as printed.
ISO_20765_2_ROWS = tuple(tuple(line.split()) for line in """\
1 180 10 389.18 0.33956 1.6233 3.3622 796.8 0.0080269
1 220 10 267.65 0.40397 1.6813 5.056 427.36 1.8447
1 200 20 380.27 0.62552 1.6149 3.1519 826.44 -0.052376
1 250 20 283.04 0.67232 1.6215 3.4875 568.65 0.7714
1 305 3 24.835 0.94211 1.5553 2.1284 394.93 4.5112
1 350 10 74.667 0.91021 1.7043 2.5065 430.98 2.6236
2 180 13 548.61 0.42502 1.3262 2.4027 945.53 -0.28327
2 220 11 452.06 0.35708 1.3851 2.8949 615.88 0.26965
2 250 20 425.35 0.60721 1.4023 2.7341 615.09 0.26645
2 350 20 226.57 0.81426 1.5242 2.6216 414.6 1.617
2 355 3 28.743 0.94921 1.4383 1.8513 357.41 4.0492
2 400 10 88.041 0.91676 1.5813 2.1613 383.33 2.4644
3 150 10 504.68 0.386 1.6072 2.6157 1267.9 -0.46108
3 200 10 431.6 0.33852 1.6072 2.9153 889.61 -0.17932
3 250 20 376.46 0.62095 1.6569 3.0291 731.32 0.072674
3 300 20 289.77 0.67228 1.7557 3.329 523.24 0.83762
3 380 5 41.741 0.92111 1.8869 2.4301 378.29 3.5788
3 400 10 82.02 0.89066 1.9839 2.6995 392.34 2.6674
4 180 25 378.94 0.79511 1.668 3.1029 849.33 -0.15641
4 220 25 307.84 0.8008 1.6573 3.2832 660.81 0.27097
4 240 1.7 16.192 0.94898 1.507 2.093 371.93 5.5555
4 260 25 242.33 0.86077 1.678 3.1985 564.7 0.69308
4 300 10 80.581 0.89738 1.6729 2.5985 425.19 2.6008
4 400 10 54.906 0.98774 1.8988 2.5469 495.53 1.359
5 150 30 704.83 0.94229 0.89982 1.7205 713.43 -0.26388
5 200 25 502.27 0.82643 0.84707 1.8818 485.49 0.41958
5 250 20 299.16 0.88802 0.81223 1.6418 391.32 1.3328
5 300 15 172.8 0.96087 0.7921 1.3398 387.22 1.561
5 350 10 95.443 0.99409 0.78914 1.1995 401.08 1.4409
5 400 5 41.38 1.0031 0.79493 1.1359 416.75 1.2625
6 180 10 758.08 0.71716 1.4744 1.93 1603.4 -0.5438
6 250 10 699.02 0.55998 1.6214 2.0839 1283.4 -0.48029
6 300 25 671.21 1.215 1.787 2.2353 1184.5 -0.43573
6 400 5 549.38 0.22266 2.1625 2.7652 645.44 -0.091974
6 450 0.5 11.811 0.92057 2.2505 2.403 203.37 11.662
6 500 2 52.175 0.75024 2.5111 2.8942 176.26 11.031""".splitlines())
ISO_20765_2_COLUMNS = ("gas", "T", "P_MPa", "rho", "Z", "cv", "cp", "w", "jt")

#: AGA Report No. 8 (2017) appendix compressibility-factor table, SI (EOS_DATA §6.4, NIST
#: transcription): T [K], P [MPa], gas, Z DETAIL, Z GERG-2008 -- strings as printed.
AGA8_Z_ROWS = tuple(tuple(line.split()) for line in """\
273.15 6.0 gulf-coast 0.847589 0.847953
273.15 6.0 amarillo 0.840933 0.841063
273.15 6.0 ekofisk 0.803397 0.803646
273.15 6.0 high-n2 0.866943 0.86677
273.15 6.0 high-co2 0.834033 0.834221
273.15 12.0 gulf-coast 0.734037 0.734146
273.15 12.0 amarillo 0.723739 0.723348
273.15 12.0 ekofisk 0.657514 0.657292
273.15 12.0 high-n2 0.77426 0.773582
273.15 12.0 high-co2 0.709585 0.70943
293.15 6.0 gulf-coast 0.885078 0.885386
293.15 6.0 amarillo 0.880119 0.880267
293.15 6.0 ekofisk 0.85205 0.85228
293.15 6.0 high-n2 0.900309 0.900248
293.15 6.0 high-co2 0.875026 0.87526
313.15 6.0 gulf-coast 0.91238 0.912631
313.15 6.0 amarillo 0.908558 0.908703
313.15 6.0 ekofisk 0.886634 0.886855
313.15 6.0 high-n2 0.924793 0.924798
313.15 6.0 high-co2 0.904631 0.904868
313.15 12.0 gulf-coast 0.851843 0.852125
313.15 12.0 amarillo 0.84567 0.845679
313.15 12.0 ekofisk 0.805678 0.805632
313.15 12.0 high-n2 0.876739 0.876661
313.15 12.0 high-co2 0.837684 0.837966""".splitlines())

#: NIST reference test point for GERG-2008 (GERG2008_test_01.cpp; EOS_DATA §6.1): 21-component gas
#: at 400 K and 50 000 kPa. Mole fractions in AGA8 order.
NIST_AGA8_TEST_GAS = Gas("nist-aga8-21", normalised(dict(zip(
    ("methane", "nitrogen", "carbon-dioxide", "ethane", "propane", "isobutane", "n-butane",
     "isopentane", "n-pentane", "n-hexane", "n-heptane", "n-octane", "n-nonane", "n-decane",
     "hydrogen", "oxygen", "carbon-monoxide", "water", "hydrogen-sulfide", "helium", "argon"),
    (0.77824, 0.02, 0.06, 0.08, 0.03, 0.0015, 0.003, 0.0005, 0.00165, 0.00215, 0.00088, 0.00024,
     0.00015, 0.00009, 0.004, 0.005, 0.002, 0.0001, 0.0025, 0.007, 0.001)))),
    "NIST usnistgov/AGA8 GERG2008_test_01.cpp (EOS_DATA §6.1)")
NIST_AGA8_TEST_T = 400.0        # [K]
NIST_AGA8_TEST_P = 50000e3      # [Pa] (50 000 kPa)
#: GERG-2008 reference values at that point (NIST, EOS_DATA §6.1), converted to SI only where noted.
NIST_AGA8_GERG = {
    "D_mol_per_l": 12.79828626082062,   # [mol/dm3]
    "Z": 1.174690666383717,
    "h": 1160.280160510973,             # [J/mol], ideal gas at 298.15 K and 101.325 kPa is zero
    "s": -38.57590392409089,            # [J/(mol K)], same reference state
    "cv": 39.02948218156372,            # [J/(mol K)]
    "cp": 58.45522051000366,            # [J/(mol K)]
    "w": 714.4248840596024,             # [m/s]
    "jt": 7.155629581480913e-05 / 1e3,  # [K/Pa] from 7.155...e-05 K/kPa
}

# ---------------------------------------------------------------------------------------------
# Other compositions
# ---------------------------------------------------------------------------------------------
#: Dry air as a three-component mixture: N2 0.7812, O2 0.2096, Ar 0.0092 -- the composition of the
#: air pseudo-pure fluid of Lemmon, Jacobsen, Penoncello & Friend, J. Phys. Chem. Ref. Data 29
#: (2000) 331 (value from memory, not verified against the paper).
AIR = Gas("air", normalised({"nitrogen": 0.7812, "oxygen": 0.2096, "argon": 0.0092}),
          "Lemmon et al., JPCRD 29 (2000) 331, air composition (from memory)")

#: The fictional gate station gas of the project's design sketch (/work/shared/DESIGN.md). Invented
#: for demonstrations; not a reference composition.
DEMO_STATION_GAS = Gas("demo-station", normalised({
    "methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
    "carbon-dioxide": 0.0115}), "invented demo composition (DESIGN.md sketch)", demo=True)

# ---------------------------------------------------------------------------------------------
# Let-down conditions
# ---------------------------------------------------------------------------------------------
#: (T_in [K], P_in [Pa], P_out [Pa]): the let-down of issue 2 ("from ~70 to 7 bar", throttled
#: from 10 degC -- typical gate-station conditions, common practice) and the issue's 15 degC,
#: 68 bar case.
LETDOWN_70_TO_7 = (283.15, 70 * BAR, 7 * BAR)
LETDOWN_68_TO_7 = (288.15, 68 * BAR, 7 * BAR)
LETDOWNS = (LETDOWN_70_TO_7, LETDOWN_68_TO_7)

# ---------------------------------------------------------------------------------------------
# Joule-Thomson reference values -- REFERENCE_DATA §5
# ---------------------------------------------------------------------------------------------
#: Experimental Joule-Thomson coefficients at 1 atm [K/atm], "a physical chemistry textbook table"
#: (REFERENCE_DATA §5, status V; the textbook is not named there): (gas, T [K], mu_JT as printed).
JT_EXPERIMENTAL_1ATM = (
    ("air", 273.15, "0.2745"),
    ("air", 323.15, "0.1956"),
    ("air", 373.15, "0.1355"),
    ("argon", 273.15, "0.4307"),
)
#: Reference-EOS values (REFERENCE_DATA §5, status C: computed from a reference-quality EOS, not
#: published numbers) [K/bar]: (gas, T [K], P [Pa], mu_JT).
JT_REFERENCE_EOS = (
    ("methane", 300.0, 1 * BAR, "0.432"),
    ("methane", 283.15, 70 * BAR, "0.418"),
    ("hydrogen", 300.0, 1 * BAR, "-0.030"),
)
#: Rule of thumb (REFERENCE_DATA §5, common practice): lean natural gas cools about 0.5 K per bar of
#: let-down (about 7 degF per 100 psi).
JT_RULE_OF_THUMB_K_PER_BAR = 0.5

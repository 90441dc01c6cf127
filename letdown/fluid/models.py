"""What each thermodynamic model assumes, and the range in which letdown has tested it.

One statement per model, for reports and for the second-opinion study (``letdown crosscheck``). The
ranges are where letdown's own tests compare the model with published data or a reference library
(see docs/models.md); :func:`out_of_range` says where a state leaves them.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class ModelInfo:
    """Assumptions and tested range of one model.

    Attributes
    ----------
    name : str
    assumptions : str
        One or two sentences an engineer can read.
    T_range : tuple of float
        Tested temperature range [K].
    P_max : float
        Tested pressure up to [Pa].
    max_fraction : dict
        Largest mole fraction of a component within the tested range [-].
    two_phase : bool
        Whether the model is used for phase equilibrium here.
    """

    name: str
    assumptions: str
    T_range: tuple
    P_max: float
    max_fraction: dict
    two_phase: bool


_CUBIC_LIMITS = {"hydrogen": 0.10}

MODELS = {
    "peng-robinson": ModelInfo(
        "peng-robinson",
        "Cubic equation of state (Peng & Robinson 1976) with van der Waals mixing and fixed binary "
        "interaction parameters; vapour-liquid equilibrium. About 3 K colder than GERG-2008 after a "
        "large lean-gas let-down (3.1-3.4 K measured for five natural gases, 70 -> 7 bar); gets "
        "hydrogen's Joule-Thomson sign wrong at ambient temperature. Water takes the Twu alpha "
        "(vapour pressure within 1.5 % of IAPWS-95 at 250-600 K).",
        (150.0, 500.0), 200e5, _CUBIC_LIMITS, True),
    "peng-robinson-1978": ModelInfo(
        "peng-robinson-1978",
        "Peng-Robinson with the 1978 alpha function for components with acentric factor above "
        "0.491 (methanol, ethylene glycol here); otherwise identical to peng-robinson.",
        (150.0, 500.0), 200e5, _CUBIC_LIMITS, True),
    "soave-redlich-kwong": ModelInfo(
        "soave-redlich-kwong",
        "Cubic equation of state (Soave 1972) with the Peng-Robinson interaction parameters; "
        "vapour-liquid equilibrium. About 1 K colder than GERG-2008 after a large lean-gas "
        "let-down (0.8-1.1 K measured); liquid densities poor without the volume shift. Water "
        "keeps the Soave alpha: its vapour pressure is 25-42 % low at 250-300 K, so free water "
        "and the water in a cold gas come out too low (use Peng-Robinson for water).",
        (150.0, 500.0), 200e5, _CUBIC_LIMITS, True),
    "gerg-2008": ModelInfo(
        "gerg-2008",
        "Multi-parameter reference equation for natural gases (Kunz & Wagner 2012, ISO 20765-2), "
        "21 components including hydrogen; the density root of lowest Gibbs energy; pure fluids in "
        "both phases (saturation from the model itself); mixtures in one phase only (a state that "
        "would split, by a stability test on GERG-2008 or Peng-Robinson, is refused).",
        (90.0, 450.0), 35e6, {}, False),
}


#: What the water and hydrate figures assume (one statement each, for reports; the details and the
#: measured accuracy are in :mod:`letdown.fluid.aqueous.water` and :mod:`letdown.fluid.aqueous.hydrate`).
WATER_AND_HYDRATE = {
    "water content": (
        "Bukacek (1955) for sweet gas over liquid water (composition ignored: no CO2/H2S "
        "correction), or a fugacity balance on the cubic equation of state; over supercooled "
        "liquid below 0 degC (less water over ice); water carried beside a water-free "
        "hydrocarbon flash, none condensed out."),
    "hydrate": (
        "van der Waals-Platteeuw with the Munck et al. (1988) parameters, structures I and II, "
        "free water assumed, gas fugacities from the cubic equation of state for the dry gas "
        "(Peng-Robinson under GERG-2008), water activity lowered by dissolved gas (Henry's law); "
        "no structure H, hexane and heavier are not formers; inhibitors only through a water "
        "activity."),
}


#: The bias of each cubic model's hydrocarbon dew points against GERG-2008, one line for every
#: dew-point output (measured in tests/study/test_dew_bias.py against CoolProp's multi-fluid model with the
#: GERG-2008 mixture parameters, on three invented test gases at 10-50 bar: a lean gas without
#: butanes and two gases with butanes and heavier).
DEW_POINT_BIAS = {
    "peng-robinson": (
        "Peng-Robinson dew points run low against GERG-2008 once butanes and heavier are present: "
        "0.3-3.6 K low at 10-50 bar and the cricondentherm 2.6-4.2 K low on two test gases (within "
        "0.3 K on a lean gas without butanes), i.e. optimistic against a sales-gas dew point "
        "specification: keep a margin."),
    "peng-robinson-1978": (
        "Peng-Robinson (1978) dew points run low against GERG-2008 once butanes and heavier are "
        "present (measured for the 1976 form, which gives the same values for these gases: "
        "0.3-3.6 K low, cricondentherm 2.6-4.2 K low), i.e. optimistic against a sales-gas dew "
        "point specification: keep a margin."),
    "soave-redlich-kwong": (
        "Soave-Redlich-Kwong dew points differ from GERG-2008 by -2.1 to +1.0 K at 10-50 bar and "
        "the cricondentherm by -2.4 to +0.7 K on three test gases (low for the richer gases, "
        "optimistic against a sales-gas dew point specification): keep a margin."),
}

#: Models whose water vapour pressure is poor below ``T`` [K], and by how much (measured in
#: tests/fluid/test_water_alpha.py): a state with water below that temperature is flagged.
WATER_WEAK = {"soave-redlich-kwong": (400.0, "5-42 % low below 400 K (Soave alpha)")}


def out_of_range(model: str, T, P, zs, components) -> list:
    """Reasons a batch of states leaves the model's tested range.

    Parameters
    ----------
    model : str
        Canonical model name.
    T, P : ndarray (n,)
        [K], [Pa].
    zs : ndarray (n, nc)
        Compositions in ``components`` order [-].
    components : sequence of str

    Returns
    -------
    list of (str, ndarray of bool)
        (reason, cases concerned) for each reason that applies to at least one case.
    """
    info = MODELS[model]
    T = np.asarray(T, dtype=float)
    P = np.asarray(P, dtype=float)
    out = []
    lo, hi = info.T_range
    off_T = (T < lo) | (T > hi)
    if off_T.any():
        out.append((f"temperature outside the tested {lo:.0f}-{hi:.0f} K of {model}", off_T))
    off_P = P > info.P_max
    if off_P.any():
        out.append((f"pressure above the tested {info.P_max / 1e5:.0f} bar of {model}", off_P))
    if model in WATER_WEAK and "water" in components:
        T_weak, how = WATER_WEAK[model]
        wet = (np.asarray(zs)[:, list(components).index("water")] > 0.0) & (T < T_weak)
        if wet.any():
            out.append((f"water with {model}: its water vapour pressure is {how}; use "
                        f"peng-robinson for free water and water content", wet))
    for comp, limit in info.max_fraction.items():
        if comp in components:
            x = np.asarray(zs)[:, list(components).index(comp)]
            rich = x > limit
            if rich.any():
                out.append((f"{comp} fraction above {limit:.0%}: {model} is not validated for "
                            f"{comp}-rich gas", rich))
    return out

"""Quantities with units at the boundary: parse "64 barg", "6 degC", "85000 Sm3/h" into SI floats.

Everything inside letdown is SI (K, Pa, mol/s, J/mol, W). This module is the one place (with the
flowsheet loader and the report) that knows about units. It keeps one shared pint registry,
:func:`registry`, and adds what pint does not have:

* **Gauge pressures** ``barg``, ``psig``, ``kPag``, ``MPag``: absolute = gauge + atmosphere. The
  atmosphere is stated (default :data:`STANDARD_ATMOSPHERE` = 101.325 kPa) and may be overridden by a
  flowsheet file (``atmosphere: 95 kPa`` for a station at altitude). ``bara``/``psia`` are absolute.
* **Standard-volume flows**, converted to a molar flow with the *ideal-gas* molar volume
  ``V_m = R T_ref / P_ref`` at the stated reference conditions (:data:`STANDARD_CONDITIONS`):

  ======================  ==========================  =====================================
  unit                    reference conditions        source
  ======================  ==========================  =====================================
  ``Sm3`` (standard m3)   15 degC, 101.325 kPa        ISO 13443:1996, clause 3 (standard
                                                      reference conditions)
  ``Nm3`` (normal m3)     0 degC, 101.325 kPa         common practice (DIN 1343 normal state)
  ``scf``, ``Mscf`` (1e3  60 degF, 14.696 psia        common practice in North America
  scf), ``MMscf`` (1e6)                               (value from memory; GPA 2172 uses it)
  ======================  ==========================  =====================================

  with a time unit: ``Sm3/h``, ``Sm3/d``, ``Nm3/h``, ``MMscfd`` (= ``MMscf/d``), ``Mscfd``, ``scf/h``.
  A real gas at standard conditions has Z of about 0.998 (natural gas), so a real-gas conversion
  would give about 0.2 % more moles per standard cubic metre; letdown uses the ideal-gas molar volume
  on purpose (it is the definition most contracts use) and the report states it.
* **Molar flows** (``kmol/h``, ``mol/s``, ``lbmol/h``) convert directly. **Mass flows** (``t/h``,
  ``kg/s``, ``lb/h``) need the molar mass of the stream: they are returned as a tagged
  :class:`MassFlow` that the loader converts once the composition is known.
* **Temperatures vs temperature differences**: an absolute temperature takes ``degC``, ``degF``,
  ``K`` or ``degR``; a difference (a margin, an approach) takes ``K``, ``delta_degC`` or ``delta_degF``
  and refuses ``degC`` (which names a temperature, not a difference).

Conversion factors are pint's (its definitions follow NIST SP 811, Thompson & Taylor 2008, e.g.
1 psi = 6894.757 Pa, 1 lb = 0.45359237 kg exactly) except the units defined here.

Unknown units raise :class:`letdown.errors.InputError` naming the unit. So do a number that is not
finite (``nan``, ``inf``) and a magnitude outside :data:`PLAUSIBLE` (``1e30 degC``, ``2000 barg``):
such a number is a slip of unit or digits, refused where it was written before any solver sees it.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass

from .constants import CUBIC_FOOT, PSI, R, SCF_P, SCF_T, STANDARD_ATMOSPHERE  # noqa: F401  (re-exported)
from .errors import InputError


_REGISTRY = None


def registry():
    """The shared pint unit registry (made on first use: building it takes about 0.3 s, and the
    common units of flowsheet files are converted without it, see :data:`FAST_UNITS`). Use it;
    never create another one (quantities from two registries do not mix)."""
    global _REGISTRY
    if _REGISTRY is None:
        import pint
        reg = pint.UnitRegistry()
        reg.define("lbmol = 453.59237 * mol = lb_mol")  # 1 lb = 0.45359237 kg exactly (NIST SP 811)
        reg.define("MMBtu = 1e6 * Btu")                  # million British thermal units (IT)
        _REGISTRY = reg
    return _REGISTRY


def __getattr__(name):
    # ``letdown.quantities.ureg`` stays available, built lazily
    if name == "ureg":
        return registry()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


#: Units converted without pint: text -> (quantity kind, scale, offset), SI = value * scale +
#: offset. The same factors as pint's definitions (NIST SP 811); ``test_quantities`` checks every
#: entry against pint. Anything not listed goes through the pint registry.
FAST_UNITS: dict[str, tuple[str, float, float]] = {
    "degC": ("temperature", 1.0, 273.15), "K": ("temperature", 1.0, 0.0),
    "degF": ("temperature", 1.0 / 1.8, 459.67 / 1.8), "degR": ("temperature", 1.0 / 1.8, 0.0),
    "Pa": ("pressure", 1.0, 0.0), "kPa": ("pressure", 1e3, 0.0), "MPa": ("pressure", 1e6, 0.0),
    "bar": ("pressure", 1e5, 0.0), "mbar": ("pressure", 100.0, 0.0), "psi": ("pressure", PSI, 0.0),
    "delta_degC": ("temperature_difference", 1.0, 0.0),
    "delta_degF": ("temperature_difference", 1.0 / 1.8, 0.0),
    "W": ("power", 1.0, 0.0), "kW": ("power", 1e3, 0.0), "MW": ("power", 1e6, 0.0),
    "mol/s": ("molar_flow", 1.0, 0.0), "kmol/s": ("molar_flow", 1e3, 0.0),
    "mol/h": ("molar_flow", 1.0 / 3600.0, 0.0), "kmol/h": ("molar_flow", 1e3 / 3600.0, 0.0),
    "kmol/d": ("molar_flow", 1e3 / 86400.0, 0.0),
    "lbmol/h": ("molar_flow", 453.59237 / 3600.0, 0.0),
    "kg/s": ("mass_flow", 1.0, 0.0), "kg/h": ("mass_flow", 1.0 / 3600.0, 0.0),
    "t/h": ("mass_flow", 1e3 / 3600.0, 0.0), "t/d": ("mass_flow", 1e3 / 86400.0, 0.0),
    "lb/h": ("mass_flow", 0.45359237 / 3600.0, 0.0),
    "W/K": ("ua", 1.0, 0.0), "kW/K": ("ua", 1e3, 0.0),
    "J/mol": ("molar_enthalpy", 1.0, 0.0), "kJ/mol": ("molar_enthalpy", 1e3, 0.0),
    "kJ/kmol": ("molar_enthalpy", 1.0, 0.0),
    "J/(mol*K)": ("molar_entropy", 1.0, 0.0), "J/(mol K)": ("molar_entropy", 1.0, 0.0),
    "percent": ("fraction", 0.01, 0.0),
    "m": ("length", 1.0, 0.0), "mm": ("length", 1e-3, 0.0), "cm": ("length", 1e-2, 0.0),
    "in": ("length", 0.0254, 0.0), "m/s": ("velocity", 1.0, 0.0),
    "ft/s": ("velocity", 0.3048, 0.0),
}

#: Which FAST_UNITS kinds each quantity kind accepts (a plain ``K`` is also a difference).
_FAST_ACCEPTS = {
    "temperature": ("temperature",), "temperature_difference": ("temperature_difference",),
    "pressure": ("pressure",), "pressure_difference": ("pressure",),
    "power": ("power",), "ua": ("ua",), "molar_enthalpy": ("molar_enthalpy",),
    "molar_entropy": ("molar_entropy",), "fraction": ("fraction",),
    "length": ("length",), "velocity": ("velocity",),
}


@dataclass(frozen=True)
class StandardConditions:
    """Reference conditions of a standard-volume unit.

    Attributes
    ----------
    name : str
        The unit's volume symbol (``Sm3``).
    T : float
        Reference temperature [K].
    P : float
        Reference pressure [Pa].
    volume : float
        One unit of this volume in cubic metres [m3].
    source : str
        Where the reference conditions come from.
    """

    name: str
    T: float
    P: float
    volume: float
    source: str

    @property
    def molar_volume(self) -> float:
        """Ideal-gas molar volume R T / P at the reference conditions [m3/mol]."""
        return R * self.T / self.P

    @property
    def mol_per_unit(self) -> float:
        """Moles of ideal gas in one unit of this volume [mol]."""
        return self.volume / self.molar_volume


_FT3 = CUBIC_FOOT            # cubic foot [m3]; 1 ft = 0.3048 m exactly (NIST SP 811)
_SCF_T = SCF_T               # 60 degF [K]
_SCF_P = SCF_P               # 14.696 psia [Pa]

#: Standard-volume units, keyed by lower-case symbol.
STANDARD_CONDITIONS: dict[str, StandardConditions] = {
    "sm3": StandardConditions("Sm3", 288.15, STANDARD_ATMOSPHERE, 1.0,
                              "ISO 13443:1996 standard reference conditions (15 degC, 101.325 kPa)"),
    "nm3": StandardConditions("Nm3", 273.15, STANDARD_ATMOSPHERE, 1.0,
                              "normal conditions 0 degC, 101.325 kPa (common practice, DIN 1343)"),
    "scf": StandardConditions("scf", _SCF_T, _SCF_P, _FT3,
                              "60 degF, 14.696 psia (common practice in North America)"),
    "mscf": StandardConditions("Mscf", _SCF_T, _SCF_P, 1e3 * _FT3,
                               "1000 scf at 60 degF, 14.696 psia (common practice)"),
    "mmscf": StandardConditions("MMscf", _SCF_T, _SCF_P, 1e6 * _FT3,
                                "1e6 scf at 60 degF, 14.696 psia (common practice)"),
}

#: Gauge-pressure suffixes and the absolute unit each one stands for.
_GAUGE = {"barg": "bar", "psig": "psi", "kpag": "kPa", "mpag": "MPa"}
#: Explicitly absolute suffixes.
_ABSOLUTE = {"bara": "bar", "psia": "psi", "kpaa": "kPa", "mpaa": "MPa"}

_NUMBER = r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?"
_QUANTITY_RE = re.compile(rf"^\s*(?P<num>{_NUMBER})\s*(?P<unit>.*?)\s*$")
_STDVOL_RE = re.compile(r"^(?P<vol>mmscf|mscf|scf|sm3|nm3)\s*(?:/\s*(?P<per>.+)|(?P<d>d))$",
                        re.IGNORECASE)

#: Plausibility bounds of each quantity kind in SI, (low, high), both inclusive: a value outside is
#: refused as a slip (of unit or digits) before any solver sees it. They are our own choice (common
#: practice), far wider than any natural-gas let-down station or chilling train: temperatures from
#: 50 K (below liquid nitrogen, 77 K at 1 atm) to 1500 K (above any fired-heater outlet); absolute
#: pressures above 0 and up to 1000 bar; flows up to 1e6 mol/s (about 85 million Sm3/h, some ten
#: times the largest pipeline) or 1e5 kg/s; duties and powers up to 10 GW; UA up to 10 GW/K;
#: temperature differences up to 1000 K and pressure differences up to 1000 bar in size. Signs are
#: the caller's to judge (a negative flow or dP gets its own message there). Fractions are checked by
#: their callers ([0, 1] for a split, (0, 1] for an efficiency).
PLAUSIBLE: dict[str, tuple[float, float]] = {
    "temperature": (50.0, 1500.0),
    "pressure": (0.0, 1e8),
    "pressure_difference": (-1e8, 1e8),
    "temperature_difference": (-1000.0, 1000.0),
    "flow": (-1e6, 1e6),
    "mass_flow": (-1e5, 1e5),
    "power": (-1e10, 1e10),
    "ua": (-1e10, 1e10),
    "molar_enthalpy": (-1e7, 1e7),
    "molar_entropy": (-1e5, 1e5),
    # pipes (letdown.equipment.pipe): lengths from a roughness to a long line, gas velocities, soil
    # conductivities and overall coefficients (common practice for the bounds)
    "length": (-1e6, 1e6),
    "velocity": (-1e4, 1e4),
    "thermal_conductivity": (-1e4, 1e4),
    "heat_transfer_coefficient": (-1e6, 1e6),
}
#: How each bound is shown in a message.
_PLAUSIBLE_TEXT = {
    "temperature": "50-1500 K", "pressure": "0-1000 bar absolute",
    "pressure_difference": "at most 1000 bar in size",
    "temperature_difference": "at most 1000 K in size",
    "flow": "at most 1e6 mol/s (about 85 million Sm3/h) in size",
    "mass_flow": "at most 1e5 kg/s in size", "power": "at most 10 GW in size",
    "ua": "at most 10 GW/K in size", "molar_enthalpy": "at most 1e7 J/mol in size",
    "molar_entropy": "at most 1e5 J/(mol K) in size",
    "length": "at most 1000 km in size", "velocity": "at most 10 km/s in size",
    "thermal_conductivity": "at most 1e4 W/(m K) in size",
    "heat_transfer_coefficient": "at most 1e6 W/(m2 K) in size",
}

#: Kinds of quantity this module parses, with the pint dimensionality expected.
KINDS = ("temperature", "temperature_difference", "pressure", "pressure_difference", "flow",
         "power", "fraction", "ua", "molar_enthalpy", "molar_entropy",
         "length", "velocity", "thermal_conductivity", "heat_transfer_coefficient")
#: The SI unit each quantity kind is converted to (labels for tables and column names).
SI_UNITS = {"temperature": "K", "temperature_difference": "K", "pressure": "Pa",
            "pressure_difference": "Pa", "flow": "mol/s", "power": "W", "fraction": "-",
            "ua": "W/K", "length": "m", "velocity": "m/s", "thermal_conductivity": "W/(m K)",
            "heat_transfer_coefficient": "W/(m2 K)"}

_DIMS = {
    "pressure": "[pressure]",
    "pressure_difference": "[pressure]",
    "power": "[power]",
    "ua": "[power] / [temperature]",
    "molar_enthalpy": "[energy] / [substance]",
    "molar_entropy": "[energy] / [substance] / [temperature]",
    "fraction": "[]",
    "length": "[length]",
    "velocity": "[length] / [time]",
    "thermal_conductivity": "[power] / [length] / [temperature]",
    "heat_transfer_coefficient": "[power] / [length] ** 2 / [temperature]",
}

_EXAMPLES = {
    "temperature": "'6 degC', '281.15 K', '43 degF'",
    "temperature_difference": "'3 K', '3 delta_degC', '5 delta_degF'",
    "pressure": "'64 barg', '65 bar', '900 psig', '6.5 MPa'",
    "pressure_difference": "'0.3 bar', '5 psi', '30 kPa'",
    "flow": "'85000 Sm3/h', '2.5 MMscfd', '1200 kmol/h', '30 t/h'",
    "power": "'500 kW', '1.2 MW', '800 hp'",
    "fraction": "'0.78', '78 %'",
    "ua": "'25 kW/K'",
    "molar_enthalpy": "'-1200 J/mol', '-1.2 kJ/mol'",
    "molar_entropy": "'-20 J/(mol*K)'",
    "length": "'12 km', '0.3 m', '300 mm', '12 in'",
    "velocity": "'20 m/s', '60 ft/s'",
    "thermal_conductivity": "'1.5 W/(m*K)', '0.9 Btu/(h*ft*degF)'",
    "heat_transfer_coefficient": "'5 W/(m2*K)', '1 Btu/(h*ft2*degF)'",
}


@dataclass(frozen=True)
class MassFlow:
    """A mass flow waiting for its stream's molar mass to become a molar flow.

    Attributes
    ----------
    kg_s : float
        Mass flow [kg/s].
    """

    kg_s: float

    def to_molar(self, molar_mass: float) -> float:
        """Molar flow [mol/s] for a stream of molar mass ``molar_mass`` [kg/mol]."""
        return self.kg_s / molar_mass


def _fail(message, field, file, line):
    return InputError(message, file=file, line=line, field=field)


def _split(text, kind, field, file, line):
    """Split "64 barg" into (64.0, "barg"); a bare number gives unit ""."""
    if isinstance(text, bool):
        raise _fail(f"expected a {kind.replace('_', ' ')} such as {_EXAMPLES[kind]}, got {text!r}",
                    field, file, line)
    if isinstance(text, (int, float)):
        try:
            return float(text), ""
        except OverflowError:       # an integer past the float range (YAML reads 1 followed by
            raise _fail(f"{text!r} is not a finite number", field, file, line) from None
    if not isinstance(text, str):
        raise _fail(f"expected a {kind.replace('_', ' ')} such as {_EXAMPLES[kind]}, got {text!r}",
                    field, file, line)
    m = _QUANTITY_RE.match(text)
    if not m:
        raise _fail(f"cannot read {text!r} as a number with a unit (for example {_EXAMPLES[kind]})",
                    field, file, line)
    unit = m.group("unit").replace("°C", "degC").replace("°F", "degF").replace("°", "deg")
    unit = unit.replace("%", "percent")
    return float(m.group("num")), unit


def _pint_units(unit, kind, field, file, line):
    """Parse a unit string with the shared registry; ``m3`` -> ``m**3``."""
    import pint
    spelled = re.sub(r"(?<=[A-Za-z])([23])(?!\d|\*\*)", r"**\1", unit)
    try:
        return registry().parse_units(spelled)
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError, AttributeError,
            TypeError, ValueError, SyntaxError) as exc:
        raise _fail(f"unknown unit '{unit}' (for a {kind.replace('_', ' ')} use for example "
                    f"{_EXAMPLES[kind]})", field, file, line) from exc


def _convert(value, unit, to, kind, field, file, line):
    fast = FAST_UNITS.get(unit)
    if fast is not None and fast[0] in _FAST_ACCEPTS.get(kind, ()):
        return value * fast[1] + fast[2]
    import pint
    units = _pint_units(unit, kind, field, file, line)
    try:
        return float(registry().Quantity(value, units).to(to).magnitude)
    except pint.errors.DimensionalityError as exc:
        raise _fail(f"'{unit}' is not a unit of {kind.replace('_', ' ')} "
                    f"(for example {_EXAMPLES[kind]})", field, file, line) from exc


def _finite(value, text, field, file, line):
    if not math.isfinite(value):
        raise _fail(f"{text!r} is not a finite number", field, file, line)
    return value


def plausible(value, kind: str, text, *, field=None, file=None, line=None):
    """Return ``value`` [SI] if it lies within :data:`PLAUSIBLE` for ``kind``, else raise.

    Parameters
    ----------
    value : float or MassFlow
        The value in SI (a :class:`MassFlow` is judged by its kg/s).
    kind : str
        A quantity kind of :data:`KINDS` (kinds without bounds, ``fraction``, pass as they are).
    text : object
        The value as written, for the message.
    field, file, line : optional
        Location, copied into the error.

    Raises
    ------
    InputError
        If the value is not finite or lies outside the bounds.

    Examples
    --------
    >>> plausible(279.15, "temperature", "6 degC")
    279.15
    """
    if isinstance(value, MassFlow):
        number, kind = value.kg_s, "mass_flow"
    else:
        number = float(value)
    _finite(number, text, field, file, line)
    bounds = PLAUSIBLE.get(kind)
    if bounds is not None and not bounds[0] <= number <= bounds[1]:
        if kind == "pressure" and number <= 0.0:
            raise _fail(f"pressure {text!r} is not above vacuum (absolute {number:g} Pa)",
                        field, file, line)
        name = "mass flow" if kind == "mass_flow" else kind.replace("_", " ")
        raise _fail(f"{text!r} is outside the plausible range of a {name} "
                    f"({_PLAUSIBLE_TEXT[kind]}); a slip of unit or digits?", field, file, line)
    return value


def parse_quantity(text, kind: str, *, atmosphere: float = STANDARD_ATMOSPHERE,
                   bare: str | None = None, field: str | None = None, file: str | None = None,
                   line: int | None = None):
    """Parse a quantity with its unit into SI.

    Parameters
    ----------
    text : str or float
        The quantity as written, e.g. ``"64 barg"``. A plain number is accepted only if ``bare``
        names the unit it is in (or the kind is ``fraction``, which is dimensionless).
    kind : str
        One of :data:`KINDS`: ``temperature`` [K], ``temperature_difference`` [K], ``pressure``
        (absolute; gauge units allowed) [Pa], ``pressure_difference`` [Pa], ``flow`` [mol/s] (or a
        :class:`MassFlow`), ``power`` [W], ``fraction`` [-], ``ua`` [W/K], ``molar_enthalpy`` [J/mol],
        ``molar_entropy`` [J/(mol K)].
    atmosphere : float, optional
        Atmospheric pressure for gauge units [Pa]; default 101325 Pa.
    bare : str, optional
        The unit a plain number is taken in (for fields whose documentation says so).
    field, file, line : optional
        Location, copied into the error.

    Returns
    -------
    float or MassFlow
        The value in SI; a flow given as mass flow is a :class:`MassFlow` [kg/s].

    Raises
    ------
    InputError
        If the unit is unknown or of the wrong kind, a plain number is given where a unit is
        required, or a gauge unit is used for a difference (``0.3 barg``) or ``degC`` for a
        temperature difference; if the number is not finite or the value lies outside
        :data:`PLAUSIBLE` (``1e30 degC``).

    Examples
    --------
    >>> parse_quantity("64 barg", "pressure")
    6501325.0
    >>> round(parse_quantity("6 degC", "temperature"), 2)
    279.15
    >>> round(parse_quantity("85000 Sm3/h", "flow"), 3)    # ideal gas at 15 degC, 101.325 kPa
    998.574
    >>> parse_quantity("30 t/h", "flow")
    MassFlow(kg_s=8.333333333333334)
    """
    if kind not in KINDS:
        raise ValueError(f"unknown quantity kind {kind!r}")
    value = _parse(text, kind, atmosphere, bare, field, file, line)
    return plausible(value, kind, text, field=field, file=file, line=line)


def _parse(text, kind, atmosphere, bare, field, file, line):
    value, unit = _split(text, kind, field, file, line)
    _finite(value, text, field, file, line)
    if not unit:
        if kind == "fraction":
            return value
        if bare is None:
            raise _fail(f"{text!r} needs a unit (for example {_EXAMPLES[kind]})", field, file, line)
        unit = bare
    if kind == "temperature":
        return _temperature(value, unit, field, file, line)
    if kind == "temperature_difference":
        return _temperature_difference(value, unit, field, file, line)
    if kind == "pressure":
        return _pressure(value, unit, atmosphere, field, file, line)
    if kind == "pressure_difference":
        low = unit.lower()
        if low in _GAUGE:
            raise _fail(f"a pressure difference takes an absolute unit, not '{unit}' "
                        f"(write '{value:g} {_GAUGE[low]}')", field, file, line)
        return _convert(value, _ABSOLUTE.get(low, unit), "Pa", kind, field, file, line)
    if kind == "flow":
        return _flow(value, unit, field, file, line)
    if kind == "fraction":
        return _convert(value, unit, "dimensionless", kind, field, file, line)
    to = {"power": "W", "ua": "W/K", "molar_enthalpy": "J/mol",
          "molar_entropy": "J/(mol*K)", "length": "m", "velocity": "m/s",
          "thermal_conductivity": "W/(m*K)", "heat_transfer_coefficient": "W/(m**2*K)"}[kind]
    return _convert(value, unit, to, kind, field, file, line)


def _temperature(value, unit, field, file, line):
    fast = FAST_UNITS.get(unit)
    if fast is not None and fast[0] == "temperature":
        T = value * fast[1] + fast[2]
        if T <= 0.0:
            raise _fail(f"temperature {value:g} {unit} is at or below absolute zero", field, file,
                        line)
        return T
    ureg = registry()
    units = _pint_units(unit, "temperature", field, file, line)
    if units.dimensionality != ureg.kelvin.dimensionality:
        raise _fail(f"'{unit}' is not a unit of temperature (for example "
                    f"{_EXAMPLES['temperature']})", field, file, line)
    if str(units).startswith("delta_"):
        raise _fail(f"'{unit}' is a temperature difference; an absolute temperature takes degC, "
                    f"degF, K or degR", field, file, line)
    T = float(ureg.Quantity(value, units).to("K").magnitude)
    if T <= 0.0:
        raise _fail(f"temperature {value:g} {unit} is at or below absolute zero", field, file, line)
    return T


def _temperature_difference(value, unit, field, file, line):
    if unit in ("K", "delta_degC", "delta_degF"):
        return value * (1.0 if unit != "delta_degF" else 1.0 / 1.8)
    ureg = registry()
    units = _pint_units(unit, "temperature_difference", field, file, line)
    if units.dimensionality != ureg.kelvin.dimensionality:
        raise _fail(f"'{unit}' is not a unit of temperature difference (for example "
                    f"{_EXAMPLES['temperature_difference']})", field, file, line)
    name = str(units)
    if name in ("degree_Celsius", "degree_Fahrenheit"):
        delta = "delta_degC" if name == "degree_Celsius" else "delta_degF"
        raise _fail(f"'{unit}' names a temperature, not a difference; write '{value:g} K' or "
                    f"'{value:g} {delta}'", field, file, line)
    return float(ureg.Quantity(value, units).to("delta_degC").magnitude)


def _pressure(value, unit, atmosphere, field, file, line):
    low = unit.lower()
    if low in _GAUGE:
        P = _convert(value, _GAUGE[low], "Pa", "pressure", field, file, line) + atmosphere
    else:
        P = _convert(value, _ABSOLUTE.get(low, unit), "Pa", "pressure", field, file, line)
    if P <= 0.0:
        raise _fail(f"pressure {value:g} {unit} is not above vacuum (absolute {P:g} Pa)",
                    field, file, line)
    return P


_SECONDS = {"s": 1.0, "min": 60.0, "h": 3600.0, "hr": 3600.0, "d": 86400.0, "day": 86400.0}


def standard_flow_unit(unit: str):
    """Split a standard-volume flow unit into (StandardConditions, seconds per time unit).

    Returns None if ``unit`` is not a standard-volume flow (``Sm3/h``, ``MMscfd``, ...).
    """
    m = _STDVOL_RE.match(unit.strip())
    if not m:
        return None
    cond = STANDARD_CONDITIONS[m.group("vol").lower()]
    per = "d" if m.group("d") else m.group("per").strip()
    seconds = _SECONDS.get(per)
    if seconds is not None:
        return cond, seconds
    import pint
    ureg = registry()
    try:
        seconds = float(ureg.Quantity(1.0, ureg.parse_units(per)).to("s").magnitude)
    except (pint.errors.UndefinedUnitError, pint.errors.DimensionalityError, AttributeError,
            TypeError, ValueError, SyntaxError):
        return None
    return cond, seconds


def _flow(value, unit, field, file, line):
    std = standard_flow_unit(unit)
    if std is not None:
        cond, seconds = std
        return value * cond.mol_per_unit / seconds
    fast = FAST_UNITS.get(unit)
    if fast is not None and fast[0] == "molar_flow":
        return value * fast[1]
    if fast is not None and fast[0] == "mass_flow":
        return MassFlow(value * fast[1])
    ureg = registry()
    units = _pint_units(unit, "flow", field, file, line)
    dim = units.dimensionality
    q = ureg.Quantity(value, units)
    if dim == ureg.parse_units("mol/s").dimensionality:
        return float(q.to("mol/s").magnitude)
    if dim == ureg.parse_units("kg/s").dimensionality:
        return MassFlow(float(q.to("kg/s").magnitude))
    if dim == ureg.parse_units("m**3/s").dimensionality:
        raise _fail(f"'{unit}' is an actual volume flow, which depends on the state; give a "
                    f"standard volume (Sm3/h, Nm3/h, MMscfd), molar or mass flow", field, file, line)
    raise _fail(f"'{unit}' is not a unit of flow (for example {_EXAMPLES['flow']})",
                field, file, line)


# ---------------------------------------------------------------------------------------------
# Formatting for the report side
# ---------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class DisplayUnit:
    """How one kind of quantity is shown: label, and the map from SI to the shown number."""

    label: str
    scale: float = 1.0      # shown = SI * scale + offset
    offset: float = 0.0

    def __call__(self, value_si):
        """Convert an SI value (float or array) to the shown unit."""
        return value_si * self.scale + self.offset


def unit_system(name: str, atmosphere: float = STANDARD_ATMOSPHERE) -> dict[str, DisplayUnit]:
    """The display units of a unit system for the report.

    Parameters
    ----------
    name : {"si", "field"}
        ``si``: degC, barg, kmol/h, kg/h, Sm3/h (ISO 13443), kg/m3, kJ/kmol, kW, bar.
        ``field``: degF, psig, lbmol/h, lb/h, MMscfd (60 degF, 14.696 psia), lb/ft3, Btu/lbmol, hp
        for shaft power and MMBtu/h for duty, psi.
    atmosphere : float
        Atmosphere for gauge pressures [Pa].

    Returns
    -------
    dict
        Keys ``T``, ``dT``, ``P``, ``dP``, ``flow``, ``mass_flow``, ``std_flow``, ``density``,
        ``h``, ``s``, ``duty``, ``power``, ``molar_mass``, ``ua``, each a :class:`DisplayUnit`.

    Raises
    ------
    InputError
        For an unknown system name.
    """
    if name == "si":
        sm3 = STANDARD_CONDITIONS["sm3"]
        return {
            "T": DisplayUnit("degC", 1.0, -273.15),
            "dT": DisplayUnit("K"),
            "P": DisplayUnit("barg", 1e-5, -atmosphere * 1e-5),
            "dP": DisplayUnit("bar", 1e-5),
            "flow": DisplayUnit("kmol/h", 3.6),
            "mass_flow": DisplayUnit("kg/h", 3600.0),
            "liquid_volume_flow": DisplayUnit("m3/d", 86400.0),
            "std_flow": DisplayUnit("Sm3/h", 3600.0 / sm3.mol_per_unit),
            "density": DisplayUnit("kg/m3"),
            "h": DisplayUnit("kJ/kmol"),
            "s": DisplayUnit("kJ/(kmol K)"),
            "duty": DisplayUnit("kW", 1e-3),
            "power": DisplayUnit("kW", 1e-3),
            "molar_mass": DisplayUnit("kg/kmol", 1e3),
            "ua": DisplayUnit("kW/K", 1e-3),
            "velocity": DisplayUnit("m/s"),
            "length": DisplayUnit("m"),
        }
    if name == "field":
        mmscf = STANDARD_CONDITIONS["mmscf"]
        lbmol = 453.59237  # mol per lbmol
        btu = 1055.05585262  # J per Btu (IT), NIST SP 811 appendix B.8
        return {
            "T": DisplayUnit("degF", 1.8, -459.67),
            "dT": DisplayUnit("delta_degF", 1.8),
            "P": DisplayUnit("psig", 1.0 / PSI, -atmosphere / PSI),
            "dP": DisplayUnit("psi", 1.0 / PSI),
            "flow": DisplayUnit("lbmol/h", 3600.0 / lbmol),
            "mass_flow": DisplayUnit("lb/h", 3600.0 / 0.45359237),
            # US oil barrel: 42 US gallons = 0.158987294928 m3 exactly (NIST SP 811, B.8)
            "liquid_volume_flow": DisplayUnit("bbl/d", 86400.0 / 0.158987294928),
            "std_flow": DisplayUnit("MMscfd", 86400.0 / mmscf.mol_per_unit),
            "density": DisplayUnit("lb/ft3", _FT3 / 0.45359237),
            "h": DisplayUnit("Btu/lbmol", lbmol / btu),
            "s": DisplayUnit("Btu/(lbmol F)", lbmol / btu / 1.8),
            "duty": DisplayUnit("MMBtu/h", 3600.0 / btu / 1e6),
            "power": DisplayUnit("hp", 1.0 / 745.6998715822702),  # mechanical hp, NIST SP 811
            "molar_mass": DisplayUnit("lb/lbmol", 1e3),
            "ua": DisplayUnit("Btu/(h F)", 3600.0 / btu / 1.8),
            "velocity": DisplayUnit("ft/s", 1.0 / 0.3048),   # international foot, NIST SP 811
            "length": DisplayUnit("ft", 1.0 / 0.3048),
        }
    raise InputError(f"unknown unit system '{name}' (use 'si' or 'field')", field="units")


def format_number(value, digits: int = 5) -> str:
    """Format a number for a table with ``digits`` significant figures; NaN/None as '-'.

    >>> format_number(1234.5678)
    '1234.6'
    >>> format_number(0.000123456)
    '0.00012346'
    """
    if value is None:
        return "-"
    try:
        v = float(value)
    except (TypeError, ValueError):
        return str(value)
    if not math.isfinite(v):
        return "-" if math.isnan(v) else ("inf" if v > 0 else "-inf")
    if v == 0.0:
        return "0"
    magnitude = math.floor(math.log10(abs(v)))
    if magnitude >= 9 or magnitude < -5:
        return f"{v:.{digits - 1}e}"
    decimals = max(digits - 1 - magnitude, 0)
    return f"{v:.{decimals}f}"

"""Named gases and feeds given by their energy: the loader's parsing of both (kept out of
``loader.py``, which calls in here).

**Named gases** (the file's ``gases`` section) are compositions with a name of their own, such as
the biomethane or the hydrogen-rich gas a station may be asked to take into its supply::

    gases:
      biomethane:
        composition: {methane: 0.965, carbon-dioxide: 0.025, nitrogen: 0.009, oxygen: 0.001}
        note: upgraded biogas of the fictional Harrowfield digester

A named gas is no stream: a sweep blends it into every feed (``--vary @blend.biomethane=0:0.3:7``,
:mod:`letdown.study.sweep`), z = (1 - x) z_feed + x z_gas. Its composition is validated as a
feed's is (known components, fractions in [0, 1] summing to 1 unless ``gas.normalise``), but its
components need not be listed under ``gas``: a blend adds them to the flowsheet's gas at zero, as
``@blend.<component>`` does. A name that is also a component (or a component's alias, such as
``H2``) is refused: ``@blend.<name>`` would not say which is meant.

**A feed's energy** (``energy: 250 MW`` in place of ``flow``): the feed delivers that energy as
gross calorific value times standard flow (ISO 6976:2016 at 15 degC / 15 degC,
:mod:`letdown.fluid.quality`). On a molar basis this is the ideal gross molar calorific value Hs
times the molar flow (the real volumetric value is Hs over the real molar volume at the metering
conditions, and the real standard volume is the molar flow times that same molar volume), so

    flow [mol/s] = energy [W] / Hs [J/mol].

A study that changes the feed's composition (a blend, a sampled composition) keeps the energy and
changes the flow (:func:`letdown.study.sweep.energy_basis`).
"""
from __future__ import annotations

from .spec import NamedGasSpec, Where

#: The feed key that gives a feed by the energy it delivers (in place of ``flow``).
ENERGY_KEY = "energy"


def named_gases(doc, normalise: bool, parse_composition) -> dict:
    """The ``gases`` section: {name: :class:`NamedGasSpec`}.

    ``parse_composition(doc, raw, path, normalise)`` is the loader's composition parser (passed in,
    so this module does not import the loader).

    Raises
    ------
    InputError
        (located at the name or the fraction) A name that is also a component, an unknown
        component, a negative fraction, fractions that do not sum to 1.
    """
    from ..errors import InputError
    from ..fluid.components import canonical_name
    out = {}
    for name, raw in (doc.data.get("gases") or {}).items():
        path = ("gases", name)
        try:
            canon = canonical_name(name)
        except InputError:
            canon = None
        if canon is not None:
            also = "" if canon == str(name).strip().lower() else f" ({canon})"
            raise doc.err(f"the named gas '{name}' has the name of a component{also}: "
                          f"'@blend.{name}' would not say which is meant; call the gas something "
                          f"else, such as '{name}-rich'", path)
        composition = parse_composition(doc, raw["composition"], path + ("composition",),
                                        normalise)
        out[name] = NamedGasSpec(name=name, composition=composition,
                                 where=Where(doc.file, doc.line(path)))
    return out


def feed_energy(doc, q, raw, path):
    """The energy a feed is given by [W], or None when it is given by its flow.

    Raises
    ------
    InputError
        Both ``flow`` and ``energy``, neither, an energy on a loop guess, an energy that is not a
        positive power.
    """
    has_flow, has_energy = "flow" in raw, ENERGY_KEY in raw
    if has_flow and has_energy:
        raise doc.err("give the feed's flow or its energy, not both", path + (ENERGY_KEY,))
    if not has_energy:
        if not has_flow:
            raise doc.err("the feed needs its flow ('85000 Sm3/h', '1200 kmol/h', '30 t/h') or "
                          "the energy it delivers ('250 MW')", path)
        return None
    if path[0] != "feeds":
        raise doc.err("a guess gives its flow (the energy is for feeds)", path + (ENERGY_KEY,))
    energy = q(raw[ENERGY_KEY], "power", path + (ENERGY_KEY,))
    if not energy > 0.0:
        raise doc.err(f"a feed's energy must be positive, got {raw[ENERGY_KEY]!r}",
                      path + (ENERGY_KEY,), key=False)
    return float(energy)


def energy_flow(doc, energy: float, composition, path) -> float:
    """Molar flow [mol/s] that delivers ``energy`` [W] with the gas ``composition`` (gross molar
    calorific value, ISO 6976:2016 at 15 degC).

    Raises
    ------
    InputError
        A component of the gas without ISO 6976 data (located at the feed's energy).
    """
    hs = gross_molar(doc, composition, path)
    if not hs > 0.0:
        raise doc.err("the feed's gas has no calorific value, so an energy gives no flow; give "
                      "its flow", path + (ENERGY_KEY,))
    return energy / hs


def gross_molar(doc, composition, path) -> float:
    """Ideal gross molar calorific value of ``composition`` [J/mol] (ISO 6976:2016, 15 degC)."""
    import numpy as np

    from ..errors import InputError
    from ..fluid.quality import quality
    names = list(composition)
    z = np.array([composition[c] for c in names], dtype=float)
    try:
        q = quality(names, z / z.sum())
    except InputError as exc:
        raise doc.err(f"the feed's energy needs the gas's calorific value: {exc.message}",
                      path + (ENERGY_KEY,)) from None
    return float(np.asarray(q.gross_molar, dtype=float).reshape(-1)[0])

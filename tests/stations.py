"""The gate station that many tests write as text: one copy, and a small edit helper for the
deliberate variants.

It is the shipped example ``flowsheets/gate-station.yaml`` (a fictional station, invented data)
without its comments, its regulator's valve rating and its water: lean gas at 6 degC and 64 barg,
a water-bath preheater and a regulator to 17 barg, the preheater's outlet temperature varied so that
the network gets 5 degC. Tests check file lines against this text, so its layout is part of it:
``title`` on line 1, ``gas`` on 2, the ``supply`` feed on 6 (7 with ``water``), and so on.

``tests/conftest.py`` offers it as fixtures (``gate_station_text``, ``gate_station_path``,
``gate_sheet``); a test module that needs the text at import time imports :func:`gate_station`.
"""
from __future__ import annotations

#: The gas composition of the gate station (invented for the demo).
COMPOSITION = ("{methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, "
               "carbon-dioxide: 0.0115}")

#: The goal of the gate station: the network held at 5 degC by the preheater's outlet.
GOAL = "goals:\n  - {hold: network.T, at: 5 degC, by: preheat.T_out, within: [0 degC, 90 degC]}\n"

#: The limits of the gate station.
LIMITS = "limits:\n  min_T: 0 degC\n  hydrate_margin: 3 K\n"


def gate_station(title: str = "test gate station (fictional)", *,
                 model: str | None = "peng-robinson", composition: str = COMPOSITION, water: str | None = None, goal: bool = True,
                 limits: bool = True, edits: dict | None = None) -> str:
    """The gate station's text.

    Parameters
    ----------
    title : str
        Its ``title`` line.
    model : str or None
        The ``gas.model`` line (None: no line, the solve chooses).
    composition : str
        The ``gas.composition`` flow mapping.
    water : str or None
        A ``gas.water`` line after the composition (such as ``"50 mg/Sm3"``).
    goal, limits : bool
        Keep the ``goals`` and ``limits`` sections.
    edits : dict, optional
        ``{old: new}`` text replacements made in order; each ``old`` must occur exactly once (a
        variant whose edit no longer applies fails loudly instead of testing the plain station).
    """
    text = f"title: {title}\ngas:\n"
    if model is not None:
        text += f"  model: {model}\n"
    text += f"  composition: {composition}\n"
    if water is not None:
        text += f"  water: {water}\n"
    text += ("feeds:\n"
             "  supply: {T: 6 degC, P: 64 barg, flow: 85000 Sm3/h}\n"
             "equipment:\n"
             "  preheat:   {kind: heater,   from: supply, to: warm,    T_out: 38 degC, dP: 0.3 bar}\n"
             "  regulator: {kind: throttle, from: warm,   to: network, P_out: 17 barg}\n")
    if goal:
        text += GOAL
    if limits:
        text += LIMITS
    for old, new in (edits or {}).items():
        count = text.count(old)
        if count != 1:
            raise ValueError(f"the edit {old!r} occurs {count} times in the gate station, not once")
        text = text.replace(old, new)
    return text

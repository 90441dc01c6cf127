"""The caution carried by every output that sizes equipment or judges freezing or hydrate risk.

A leaf module (it imports nothing from letdown), so every layer may use it, as it uses
:mod:`letdown.errors`.
"""

CAUTION = ("Engineering estimates; designs must follow local codes and be checked by qualified, "
           "licensed staff.")

#: The caution of every upset (loss of preheat, a regulator failing open): the load on a
#: protection device and the coldest temperatures are inputs to decisions this tool does not
#: make.
UPSET_CAUTION = ("Overpressure protection and material selection follow local codes and licensed "
                 "practice; these upset figures are inputs to that work, not its result. "
                 + CAUTION)

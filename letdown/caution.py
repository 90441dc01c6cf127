"""The caution carried by every output that sizes equipment or judges freezing or hydrate risk.

A leaf module (it imports nothing from letdown), so every layer may use it, as it uses
:mod:`letdown.errors`.
"""

CAUTION = ("Engineering estimates; designs must follow local codes and be checked by qualified, "
           "licensed staff.")

"""The vectorised bracketed root finder, for the blocks and the flowsheet goals.

It lives in :mod:`letdown.fluid.rootfind`: the three-phase P-h / P-s flash
(:func:`letdown.fluid.threephase.flash_PX_3`) uses it too, and ``fluid/`` is the bottom layer.
"""
from ..fluid.rootfind import XTOL_RELATIVE, RootReport, bracketed_root

__all__ = ["XTOL_RELATIVE", "RootReport", "bracketed_root"]

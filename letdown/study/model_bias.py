"""The known bias of the cubic models against GERG-2008 on a lean gate-station gas.

Measured on ``flowsheets/gate-station.yaml`` (a lean transmission gas, 91 % methane, let down
from 64 to 17 barg) by solving the same sizing and the same year of hourly operation
(``flowsheets/profiles/harrowfield-2026.csv``) once with each cubic model and once with
GERG-2008 (ISO 20765-2, the reference for natural-gas properties in the single-phase region):

* ``preheat_T_out_K``: the sized preheater's outlet temperature, cubic minus GERG-2008 [K];
* ``size_duty_pct``: the design heat, cubic over GERG-2008 minus one [%];
* ``year_heat_pct``: the year's heat, cubic over GERG-2008 minus one [%].

The figures are re-measured by ``tests/study/test_size.py`` and ``tests/study/test_year.py``. They hold for
this gas and these pressures; a richer gas or a larger pressure drop moves them.
"""
from __future__ import annotations

#: Model -> measured bias (see the module docstring); measured 2026-12-02 with the compiled kernels.
#: Sizing: GERG-2008 outlet 29.64 degC, design heat 1108.7 kW. Year: GERG-2008 4,980.6 MWh.
#: Peng-Robinson 1978 equals Peng-Robinson here (no component with omega above 0.49).
CUBIC_BIAS: dict = {
    "peng-robinson": {"preheat_T_out_K": 1.91, "size_duty_pct": 7.7, "year_heat_pct": 9.0},
    "peng-robinson-1978": {"preheat_T_out_K": 1.91, "size_duty_pct": 7.7, "year_heat_pct": 9.0},
    "soave-redlich-kwong": {"preheat_T_out_K": 0.66, "size_duty_pct": 2.9, "year_heat_pct": 2.9},
}


def bias_line(model: str) -> str | None:
    """One line stating the model's known bias against GERG-2008, or None (GERG-2008 itself, or a
    model without a measurement)."""
    b = CUBIC_BIAS.get(model)
    if b is None:
        return None
    return (f"Model bias: {model} against GERG-2008 on the lean gate-station gas "
            f"(flowsheets/gate-station.yaml): preheat outlet {b['preheat_T_out_K']:+.2f} K, "
            f"design heat {b['size_duty_pct']:+.1f} %, a year's heat {b['year_heat_pct']:+.1f} % "
            "(Harrowfield profile); correct for it or solve with --model gerg-2008.")

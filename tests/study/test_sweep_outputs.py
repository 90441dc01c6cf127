"""Sweep outputs by path (issue 14 parts 2 and 3): every stream and block quantity of the JSON
result can be a column, the default set carries every stream's hydrate margin and every heater's
duty and fuel, and each column equals the single-case JSON of the same case."""
import numpy as np
import pytest

from letdown.errors import InputError
from letdown.sheet.loader import read_spec
from letdown.sheet.solve import solve_cases
from letdown.study.sweep import parse_variable, split_unit, sweep

GATE = "flowsheets/gate-station.yaml"
FIRED = "flowsheets/fired-gate-station.yaml"
COLD = "flowsheets/cold-separation.yaml"


@pytest.fixture(scope="module")
def gate():
    return read_spec(GATE)


def _json_case(fs, variable, value, i):
    """The single solve of the same case, as the JSON contract gives it."""
    return solve_cases(fs, {variable: np.array([value])}, margins=True).case(0).to_dict()


def test_default_outputs_carry_every_stream_hydrate_margin_and_equal_the_json(gate):
    table = sweep(gate, [parse_variable(gate, "supply.T=0degC,15degC")])
    for s in ("supply", "warm", "network"):
        assert f"{s}.hydrate_margin [K]" in table.columns
    assert "preheat.duty [W]" in table.columns
    for i, T in enumerate(table.column("supply.T [K]")):
        js = _json_case(gate, "supply.T", T, i)
        for s in ("supply", "warm", "network"):
            want = js["streams"][s]["hydrate_margin_K"]
            got = table.column(f"{s}.hydrate_margin [K]")[i]
            assert got == pytest.approx(want, abs=1e-9)
        assert table.column("preheat.duty [W]")[i] == pytest.approx(
            js["equipment"]["preheat"]["duty_W"], rel=1e-9)
    # the network is held at 5 degC at 17 barg; the gas forms hydrate near 5 degC there: the
    # margin is small, and the same in both cases (same gas, same pressure, same held T)
    m = table.column("network.hydrate_margin [K]")
    assert abs(m[0] - m[1]) < 1e-6 and -5.0 < m[0] < 5.0


def test_fuel_of_a_heater_with_an_efficiency_is_in_the_default_set():
    fs = read_spec(FIRED)
    table = sweep(fs, [parse_variable(fs, "supply.T=2degC,8degC")])
    fuel = table.column("preheat.fuel [W]")
    duty = table.column("preheat.duty [W]")
    np.testing.assert_allclose(fuel, duty / 0.80, rtol=1e-12)   # fuel = duty / efficiency


def test_paths_with_and_without_unit_suffix_name_the_same_column(gate):
    table = sweep(gate, [parse_variable(gate, "supply.T=5degC")],
                  outputs=["network.gross_cv", "network.gross_cv_J_m3", "network.wobbe_gross",
                           "network.water_dew_T", "network.hydrate_T", "warm.density"])
    assert table.columns[1:5] == ("network.gross_cv [J/m3]", "network.wobbe_gross [J/m3]",
                                  "network.water_dew_T [K]", "network.hydrate_T [K]")
    js = _json_case(gate, "supply.T", 278.15, 0)["streams"]["network"]
    assert table.column("network.gross_cv [J/m3]")[0] == pytest.approx(js["gross_cv_J_m3"], rel=1e-12)
    assert table.column("network.hydrate_T [K]")[0] == pytest.approx(js["hydrate_T_K"], abs=1e-9)


def test_inhibitor_rate_of_an_inject_block_by_path():
    fs = read_spec(COLD)
    var = next(f"{n}.T" for n in fs.feeds)
    table = sweep(fs, [parse_variable(fs, f"{var}=25degC")],
                  outputs=["meg-spray.inhibitor_rate", "dosed-gas.inhibitor_wt_pct"])
    js = solve_cases(fs, None, margins=True).case(0).to_dict()
    want = js["equipment"]["meg-spray"]["inhibitor_rate_kg_s"]
    # the file's own feed temperature may differ from 25 degC: compare with the swept case
    js25 = solve_cases(fs, {var: np.array([298.15])}, margins=True).case(0).to_dict()
    assert table.column("meg-spray.inhibitor_rate [kg/s]")[0] == pytest.approx(
        js25["equipment"]["meg-spray"]["inhibitor_rate_kg_s"], rel=1e-9)
    assert want > 0.0
    assert table.column("dosed-gas.inhibitor [wt %]")[0] == pytest.approx(
        js25["streams"]["dosed-gas"]["inhibitor_wt_pct"], rel=1e-9)


def test_unknown_path_is_a_located_input_error_naming_the_known_ones(gate):
    with pytest.raises(InputError, match=r"unknown output 'network\.hydrate_margn'.*"
                                         r"network\.hydrate_margin") as exc:
        sweep(gate, [parse_variable(gate, "supply.T=5degC")], outputs=["network.hydrate_margn"])
    assert exc.value.field == "outputs"
    with pytest.raises(InputError, match="preheat.duty"):
        sweep(gate, [parse_variable(gate, "supply.T=5degC")], outputs=["preheat.fuel"])


def test_split_unit():
    assert split_unit("hydrate_margin_K") == ("hydrate_margin", "K")
    assert split_unit("s_J_molK") == ("s", "J/(mol K)")
    assert split_unit("vapour_fraction") == ("vapour_fraction", "-")

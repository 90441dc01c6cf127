"""NGL and condensate by volume per day (issue 15): the JSON carries each all-liquid stream's volume
flow at its own state, the report shows it per day (m3/d, or US oil barrels a day in field units),
and a sweep can take it as an output by path."""
import numpy as np
import pytest

from letdown.sheet.loader import read_spec
from letdown.sheet.solve import solve
from letdown.report.tables import stream_table
from letdown.report.sweep import column_unit

COLD = "flowsheets/cold-separation.yaml"
#: The US oil barrel, 42 US gallons = 0.158987294928 m3 exactly (NIST SP 811, appendix B.8).
BARREL_M3 = 0.158987294928


@pytest.fixture(scope="module")
def cold():
    return solve(read_spec(COLD))


def test_json_gives_the_liquid_volume_of_liquid_streams_only(cold):
    d = cold.to_dict()["streams"]
    liquid = d["cold-liquid"]
    assert liquid["vapour_fraction"] == 0.0
    assert liquid["liquid_volume_flow_m3_s"] == pytest.approx(
        liquid["mass_flow_kg_s"] / liquid["density_kg_m3"], rel=1e-12)
    # a gas, a two-phase stream and an empty line carry none
    assert d["export-gas"]["liquid_volume_flow_m3_s"] is None
    assert d["chilled-gas"]["liquid_volume_flow_m3_s"] is None


@pytest.mark.parametrize("units, per_day", [("si", 86400.0), ("field", 86400.0 / BARREL_M3)])
def test_report_shows_it_per_day_in_both_unit_systems(cold, units, per_day):
    table = stream_table(cold, units=units)
    header = [r for r in table.rows if str(r[0]).startswith("Liquid volume")]
    assert len(header) == 1
    label = header[0][0]
    assert label == ("Liquid volume [m3/d]" if units == "si" else "Liquid volume [bbl/d]")
    names = list(table.header[1:])
    d = cold.to_dict()["streams"]
    i = names.index("cold-liquid")
    assert header[0][1 + i] == pytest.approx(d["cold-liquid"]["liquid_volume_flow_m3_s"] * per_day,
                                             rel=1e-12)


def test_sweep_takes_it_by_path_and_shows_it_per_day():
    from letdown.study.sweep import parse_variable, sweep
    fs = read_spec(COLD)
    table = sweep(fs, [parse_variable(fs, "jt-valve.P_out=40barg,45barg")],
                  outputs=["cold-liquid.liquid_volume_flow", "cold-liquid.mass_flow",
                           "cold-liquid.density"])
    v = table.column("cold-liquid.liquid_volume_flow [m3/s]")
    m = table.column("cold-liquid.mass_flow [kg/s]")
    rho = table.column("cold-liquid.density [kg/m3]")
    np.testing.assert_allclose(v, m / rho, rtol=1e-12)
    head, fn = column_unit("cold-liquid.liquid_volume_flow [m3/s]", "field")
    assert head == "cold-liquid.liquid_volume_flow [bbl/d]"
    assert fn(1.0) == pytest.approx(86400.0 / BARREL_M3)


def test_one_function_gives_the_liquid_volume_to_the_json_the_report_and_the_sweep():
    # issue 12: the report kept a twin of the sheet's function (the layers keep report from
    # importing sheet); both now import the one in the leaf module letdown.derived
    import letdown.report.tables as tables
    import letdown.sheet.result as result
    import letdown.study.sweep as study_sweep
    from letdown.derived import liquid_volume_flow
    assert result.liquid_volume_flow is liquid_volume_flow
    assert tables.liquid_volume_flow is liquid_volume_flow
    assert study_sweep.liquid_volume_flow is liquid_volume_flow
    assert not hasattr(tables, "_liquid_volume")


def test_the_liquid_volume_of_random_states_scalar_and_batch_alike():
    # fuzz: a case by case call (the report's) and one batch call (the JSON's and the sweep's)
    # give the very same bits: m/rho for an all-liquid flowing stream with a density, NaN else
    from letdown.derived import liquid_volume_flow
    rng = np.random.default_rng(12)
    n = 400
    flow = rng.choice([0.0, -1.0, np.nan, 1.0], n) * rng.uniform(0, 50, n)
    mass = rng.uniform(0, 5, n)
    vf = rng.choice([0.0, 0.0, 1e-12, 0.5, 1.0, np.nan], n)
    rho = rng.choice([0.0, -3.0, np.nan, 1.0], n) * rng.uniform(1, 900, n)
    batch = liquid_volume_flow(flow, mass, vf, rho)
    one = np.array([liquid_volume_flow(*v) for v in zip(flow, mass, vf, rho)])
    assert isinstance(liquid_volume_flow(1.0, 0.5, 0.0, 500.0), float)
    np.testing.assert_array_equal(batch, one)
    ok = (vf == 0.0) & (flow > 0.0) & (rho > 0.0)
    assert ok.any() and (~ok).any()
    np.testing.assert_array_equal(batch[ok], mass[ok] / rho[ok])
    assert np.all(np.isnan(batch[~ok]))

"""Energy basis of a blend sweep (issue 14 part 3 of the issue, part 4 of the task): the flow rises
as the calorific value falls so that the energy delivered stays at the base case's."""
import subprocess
import sys

import numpy as np
import pytest

from letdown.errors import InputError
from letdown.fluid.quality import quality
from letdown.sheet.loader import read_spec
from letdown.study.sweep import parse_variable, sweep

GATE = "flowsheets/gate-station.yaml"


@pytest.fixture(scope="module")
def gate():
    return read_spec(GATE)


def _energy(fs, x_h2, flow):
    """Gross calorific value (ISO 6976:2016, 15 degC) times flow of the blend, computed here from
    the file's composition and the blend fraction [W]; as a molar product it equals the real
    volumetric value times the real standard volume flow."""
    names = list(fs.gas.composition) + ["hydrogen"]
    z = np.array([fs.gas.composition[c] for c in names[:-1]] + [0.0])
    z = z / z.sum()
    zs = (1.0 - x_h2)[:, None] * z[None, :] + np.outer(x_h2, np.eye(len(names))[-1])
    return np.asarray(quality(names, zs).gross_molar) * flow


def test_hydrogen_blend_on_the_energy_basis_delivers_the_base_energy(gate):
    var = [parse_variable(gate, "blend.hydrogen=0:0.3:7")]
    vol = sweep(gate, var, outputs=["supply.flow", "preheat.duty", "supply.gross_cv"])
    en = sweep(gate, var, basis="energy", outputs=["supply.flow", "preheat.duty"])
    x = en.column("blend.hydrogen [-]")
    flow_v, flow_e = vol.column("supply.flow [mol/s]"), en.column("supply.flow [mol/s]")
    np.testing.assert_array_equal(flow_v, flow_v[0])                  # volume basis: same flow
    e = _energy(gate, x, flow_e)
    np.testing.assert_allclose(e, e[0], rtol=1e-9)                    # the figure
    np.testing.assert_allclose(en.column("supply.energy [W]"), e[0], rtol=1e-9)
    np.testing.assert_array_equal(en.column("supply.flow_volume_basis [mol/s]"), flow_v)
    assert flow_e[0] == flow_v[0] and np.all(np.diff(flow_e) > 0)    # flow rises with hydrogen
    # hydrogen's gross value per volume is about a third of methane's: at 30 % the value per
    # standard volume falls by about a fifth (about 12.1 vs 37.7 MJ/m3 at 15 degC, from memory)
    cv = vol.column("supply.gross_cv [J/m3]")
    assert 0.75 < cv[-1] / cv[0] < 0.85
    # the preheat follows the flow: more duty than at the same standard volume
    assert np.all(en.column("preheat.duty [W]")[1:] > vol.column("preheat.duty [W]")[1:])


def test_default_table_on_the_energy_basis_shows_both_flows(gate):
    t = sweep(gate, [parse_variable(gate, "blend.hydrogen=0,0.2")], basis="energy")
    for col in ("supply.flow [mol/s]", "supply.flow_volume_basis [mol/s]", "supply.energy [W]",
                "supply.gross_cv [J/m3]", "network.hydrate_margin [K]"):
        assert col in t.columns


def test_unknown_basis_is_refused(gate):
    with pytest.raises(InputError, match="unknown basis 'mass'"):
        sweep(gate, [parse_variable(gate, "blend.hydrogen=0,0.1")], basis="mass")


def test_command_line_basis_energy():
    proc = subprocess.run([sys.executable, "-m", "letdown.cli", "sweep", GATE,
                           "--vary", "blend.hydrogen=0,0.2", "--basis", "energy",
                           "--outputs", "supply.flow,preheat.duty"],
                          capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr
    header = proc.stdout.splitlines()[0]
    assert "supply.flow_volume_basis [mol/s]" in header and "supply.energy [W]" in header

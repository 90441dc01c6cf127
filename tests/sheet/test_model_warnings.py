"""Warnings where the model's data or tested range does not cover a flowsheet."""
import letdown
from tests.stations import gate_station


def solve(tmp_path, composition, model="peng-robinson"):
    path = tmp_path / "station.yaml"
    # the gate station without its goal, limits and the preheater's pressure drop
    path.write_text(gate_station("warning check (demo)", model=model, composition=composition,
                                 goal=False, limits=False,
                                 edits={"T_out: 38 degC, dP: 0.3 bar}": "T_out: 40 degC}"}))
    return letdown.load(str(path)).solve()


def test_missing_interaction_parameters_are_reported(tmp_path):
    # helium has no pair in the packaged table (data/kij_pr.csv): say so, never silently zero
    res = solve(tmp_path, "{methane: 0.95, nitrogen: 0.04, helium: 0.01}")
    # (the note that the feeds are taken as water-saturated is also on "gas": kij only here)
    texts = [w["what"] for w in res.warnings if w["where"] == "gas" and w["kind"] == "kij_missing"]
    assert len(texts) == 1
    assert "methane-helium" in texts[0] and "nitrogen-helium" in texts[0]
    assert "methane-nitrogen" not in texts[0]


def test_hydrogen_rich_gas_warns_on_cubic_model_only(tmp_path):
    comp = "{methane: 0.78, ethane: 0.02, hydrogen: 0.20}"
    res = solve(tmp_path, comp)
    flagged = {w["where"] for w in res.warnings if "hydrogen fraction" in w["what"]}
    assert flagged == {"supply", "warm", "network"}
    res_gerg = solve(tmp_path, comp, model="gerg-2008")
    assert not [w for w in res_gerg.warnings if "hydrogen fraction" in w["what"]]


def test_lean_gas_has_no_model_warning(tmp_path):
    res = solve(tmp_path, "{methane: 0.92, ethane: 0.05, nitrogen: 0.02, carbon-dioxide: 0.01}")
    # the freezing checks run on every solve (their records have their own kinds): no model one
    model_kinds = {"kij_missing", "model_range", "flash_unconverged"}
    assert not [w for w in res.warnings if w["kind"] in model_kinds]
    assert all(w["kind"] in {"water_assumed", "hydrate", "hydrate_no_free_water", "ice"}
               for w in res.warnings), res.warnings

"""A P-h or P-s target that no state between the temperature bounds reaches is not an answer.

Regression (found by bench/fuzz_files.py, a compressor at efficiency 0.00075): the pure-fluid P-h
flash of propane at 16 bar and h = 1e6 J/mol ended pinned at the 2000 K bound, marked converged,
and a discharge of 2000 K went out with exit 0. Numbers from the same model are the only reference
needed: the answer must give back its own target, or say it is not converged.
"""
import numpy as np
import pytest

import letdown
from letdown.fluid.flash import twophase as fl


@pytest.mark.parametrize("zs", [{"propane": 1.0}, {"methane": 1.0},
                                {"methane": 0.9, "ethane": 0.1}])
def test_unreachable_enthalpy_is_not_converged(zs):
    gas = letdown.Fluid(zs, model="peng-robinson")
    P = np.full(3, 16e5)
    ok_h = gas.flash(T=np.array([300.0]), P=P[:1]).h[0]
    st = gas.flash(P=P, h=np.array([ok_h, 1e6, -1e6]))
    assert st.converged.tolist() == [True, False, False]
    assert st.T[0] == pytest.approx(300.0, abs=1e-6)
    assert np.isnan(st.h[1:]).all()            # no number of an unconverged state goes out
    # a converged answer always meets its target
    assert abs(st.h[0] - ok_h) < 1e-3


def test_reachable_targets_near_the_bounds_still_solve():
    gas = letdown.Fluid({"propane": 1.0}, model="peng-robinson")
    T = np.array([fl.T_HIGH - 50.0, 400.0])
    P = np.full(2, 16e5)
    st = gas.flash(P=P, h=gas.flash(T=T, P=P).h)
    assert st.converged.all()
    np.testing.assert_allclose(st.T, T, atol=1e-6)

"""Issue 12, names: the batch of states is ``StateBatch`` (beside ``StreamBatch``), not ``States``,
one letter from ``State``. The old name still works, with a DeprecationWarning."""
import numpy as np
import pytest

import letdown
import letdown.fluid


def test_a_batch_flash_returns_a_state_batch_and_indexes_to_a_state():
    gas = letdown.Fluid({"methane": 0.9, "ethane": 0.1})
    batch = gas.flash(T=np.array([280.0, 300.0]), P=np.array([50e5, 60e5]))
    assert type(batch) is letdown.StateBatch
    assert type(batch[0]) is letdown.State


@pytest.mark.parametrize("module", [letdown, letdown.fluid])
def test_the_old_name_warns_and_is_the_same_class(module):
    with pytest.warns(DeprecationWarning, match="StateBatch"):
        old = module.States
    assert old is letdown.StateBatch
    with pytest.raises(AttributeError):
        module.NoSuchThing  # noqa: B018

"""Contact matrices from mean contacts and assortativity."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from prepkit.errors import ModelError
from prepkit.plan import Contacts
from prepkit.simulation.contacts import preferential_mixing, setting_matrices, split_by_setting

C = (18.0, 12.0, 8.0)
N = (1e5, 3e5, 2e5)


@pytest.mark.parametrize("eps", [0.0, 0.35, 1.0])
def test_preferential_mixing_rows_and_reciprocity(eps: float) -> None:
    # Nold 1980, Math Biosci 52:227; Jacquez et al. 1988, Math Biosci 92:119 (from memory):
    # rows sum to c_i and contacts are mutual, C_ij N_i = C_ji N_j.
    m = preferential_mixing(C, N, eps)
    assert_allclose(m.sum(axis=1), C, rtol=1e-12)
    flows = m * np.array(N)[:, None]
    assert_allclose(flows, flows.T, rtol=1e-12)
    assert_allclose(np.diag(m) >= eps * np.array(C) - 1e-12, True)


def test_setting_split_sums_back_and_defaults_to_community() -> None:
    m = preferential_mixing(C, N, 0.5)
    shares = ({"home": 0.2, "school": 0.5}, {"work": 0.4}, {})
    split = split_by_setting(m, shares)  # type: ignore[arg-type]
    assert_allclose(split.sum(axis=0), m, rtol=1e-12)
    assert_allclose(split[1, 0], 0.5 * m[0])  # school row of band 0
    assert_allclose(split[3, 2], m[2])  # band 2: all community
    assert_allclose(split_by_setting(m, None)[3], m)


def test_given_matrices_are_used_as_is_and_checked() -> None:
    home = ((1.0, 2.0), (3.0, 4.0))
    out = setting_matrices(Contacts(matrices={"home": home}), (1.0, 1.0))
    assert_allclose(out[0], home)
    assert_allclose(out[1:], 0.0)
    with pytest.raises(ModelError):
        setting_matrices(Contacts(matrices={"home": ((1.0,),)}), (1.0, 1.0))
    with pytest.raises(ModelError):
        split_by_setting(np.ones((1, 1)), ({"home": 0.7, "work": 0.6},))

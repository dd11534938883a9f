"""Contact matrices by setting.

Equations in words
------------------
Entry ``[i][j]`` of a contact matrix is the mean number of people in band
``j`` that one person in band ``i`` meets per day.

When the plan gives only the mean daily contacts ``c_i`` of each band and an
assortativity ``eps``, contacts follow preferential mixing: a share ``eps``
of each person's contacts stay within their own band, the rest are spread
over all bands in proportion to the contacts those bands make,
``C_ij = eps delta_ij c_i + (1 - eps) c_i c_j N_j / sum_k c_k N_k``.
Each row is then split into settings by the band's setting shares (home,
school, work; community takes the remainder). A band without shares makes
all its contacts in the community.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.plan import SETTINGS, Contacts, Setting
from prepkit.simulation.layout import N_SETTINGS, SETTING_INDEX


def preferential_mixing(
    mean_daily: Sequence[float] | NDArray[np.float64],
    population: Sequence[float] | NDArray[np.float64],
    assortativity: float,
) -> NDArray[np.float64]:
    """Contact matrix of preferential (assortative) mixing.

    Parameters
    ----------
    mean_daily : sequence of float
        Mean daily contacts of a person in each band [contacts/person/day].
    population : sequence of float
        Band populations [persons].
    assortativity : float
        Share of contacts kept within one's own band [fraction].

    Returns
    -------
    ndarray, shape (B, B)
        ``C[i, j]`` mean daily contacts of a person in band ``i`` with
        people in band ``j`` [contacts/person/day]. Row sums equal
        ``mean_daily`` and ``C_ij N_i = C_ji N_j`` (contacts are mutual).

    References
    ----------
    Nold A. (1980). Heterogeneity in disease-transmission modeling.
    Mathematical Biosciences 52:227-240. doi:10.1016/0025-5564(80)90069-3

    Jacquez J.A., Simon C.P., Koopman J., Sattenspiel L., Perry T. (1988).
    Modeling and analyzing HIV transmission: the effect of contact patterns.
    Mathematical Biosciences 92:119-199. doi:10.1016/0025-5564(88)90031-4
    """
    c = np.asarray(mean_daily, dtype=np.float64)
    pop = np.asarray(population, dtype=np.float64)
    eps = float(assortativity)
    weight = c * pop
    total = weight.sum()
    mixed = np.zeros((c.size, c.size)) if total <= 0.0 else np.outer(c, weight) / total
    return np.asarray(eps * np.diag(c) + (1.0 - eps) * mixed, dtype=np.float64)


def split_by_setting(
    matrix: NDArray[np.float64], setting_shares: Sequence[Mapping[Setting, float]] | None
) -> NDArray[np.float64]:
    """Split each row of a contact matrix into settings.

    Parameters
    ----------
    matrix : ndarray, shape (B, B)
        All-settings contact matrix [contacts/person/day].
    setting_shares : sequence of dict or None
        Per band, share of contacts at home, school and work [fraction]; the
        community takes the rest. None puts everything in the community.

    Returns
    -------
    ndarray, shape (4, B, B)
        One matrix per setting in the order home, school, work, community.
    """
    bands = matrix.shape[0]
    shares = np.zeros((N_SETTINGS, bands))
    shares[SETTING_INDEX["community"], :] = 1.0
    if setting_shares is not None:
        for i, row in enumerate(setting_shares):
            listed = 0.0
            for name, value in row.items():
                if name == "community":
                    continue
                shares[SETTING_INDEX[name], i] = float(value)
                listed += float(value)
            if listed > 1.0 + 1e-12:
                raise ModelError(
                    f"setting shares of band {i + 1} add up to {listed:.4g}; expected at most 1"
                )
            shares[SETTING_INDEX["community"], i] = max(0.0, 1.0 - listed)
    return np.asarray(shares[:, :, None] * matrix[None, :, :], dtype=np.float64)


def setting_matrices(
    contacts: Contacts, population: Sequence[float] | NDArray[np.float64]
) -> NDArray[np.float64]:
    """Baseline contact matrices by setting from the plan.

    Parameters
    ----------
    contacts : Contacts
        The plan's contact inputs.
    population : sequence of float
        Band populations [persons].

    Returns
    -------
    ndarray, shape (4, B, B)
        Matrices in the order home, school, work, community
        [contacts/person/day]; settings the plan leaves out are zero.
    """
    bands = len(population)
    if contacts.matrices is not None:
        out = np.zeros((N_SETTINGS, bands, bands))
        for name, rows in contacts.matrices.items():
            array = np.asarray(rows, dtype=np.float64)
            if array.shape != (bands, bands):
                raise ModelError(
                    f"{name} contact matrix has shape {array.shape}; expected ({bands}, {bands})"
                )
            if np.any(array < 0.0):
                raise ModelError(f"{name} contact matrix has a negative entry")
            out[SETTINGS.index(name)] = array
        return out
    if contacts.mean_daily is None:
        raise ModelError("contacts: neither matrices nor mean daily contacts are given")
    if len(contacts.mean_daily) != bands:
        raise ModelError(
            f"mean daily contacts has {len(contacts.mean_daily)} values; expected {bands}"
        )
    mixed = preferential_mixing(contacts.mean_daily, population, contacts.assortativity)
    return split_by_setting(mixed, contacts.setting_shares)
